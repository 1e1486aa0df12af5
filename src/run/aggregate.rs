//! The `aggregate` command's outputs: the JSON document, the CDF table and plots.

use crate::config::field::FieldSpec;
use crate::error::{Error, Problem};
use crate::io::staging::Staging;
use crate::random::characterise::{Report, Request, characterise};
use crate::random::planning::{PlanAnswer, max_density, min_guard};
use std::path::PathBuf;

/// What an `aggregate` run computes and where it writes.
#[derive(Debug, Clone)]
pub struct AggregateOptions {
    /// One curve set per value: `KEY=V1,V2,...`.
    pub sweep: Option<String>,
    /// Report P(I > x) at these levels, dBm.
    pub thresholds_dbm: Vec<f64>,
    /// Monte Carlo realisations (0: none).
    pub realizations: usize,
    /// Monte Carlo seed.
    pub seed: u64,
    /// Search the highest density meeting the outage at the budget.
    pub max_density: bool,
    /// Search the smallest guard radius meeting the outage at the budget.
    pub min_guard: bool,
    /// Interference budget, dBm.
    pub budget_dbm: Option<f64>,
    /// Allowed outage probability.
    pub outage: f64,
    /// Output folder for `cdf.csv`, `cdf.png`, `cdf.svg` and `aggregate.json`.
    pub out: Option<PathBuf>,
    /// Files the run read (the scenario's), which no output may overwrite.
    pub inputs: Vec<PathBuf>,
}

/// What an `aggregate` run produced.
pub struct AggregateResult {
    /// The resolved inputs (before any sweep), echoed in the outputs.
    pub spec: FieldSpec,
    /// One report per curve set, with its label (empty without a sweep).
    pub reports: Vec<(String, Report)>,
    /// Planning answers.
    pub plans: Vec<PlanAnswer>,
    /// Files written (empty without an output folder).
    pub files: Vec<PathBuf>,
}

impl AggregateResult {
    /// The JSON document printed by `--json`: the single report, or every set and plan, with
    /// the resolved inputs under `inputs`.
    pub fn json(&self) -> serde_json::Value {
        let mut v = if self.reports.len() == 1 && self.plans.is_empty() {
            serde_json::to_value(&self.reports[0].1).unwrap_or_default()
        } else {
            aggregate_json(&self.reports, &self.plans)
        };
        if let serde_json::Value::Object(m) = &mut v {
            m.insert("inputs".into(), serde_json::to_value(&self.spec).unwrap_or_default());
        }
        v
    }
}

/// Validates the options, builds every curve set of `spec`, characterises them, answers the
/// planning questions and writes the outputs (when asked).
pub fn run_aggregate(spec: &FieldSpec, o: &AggregateOptions) -> Result<AggregateResult, Error> {
    let bad = |flag: &str, msg: String| Error::input(Problem::flag(flag, msg));
    if o.realizations > 100_000_000 {
        return Err(bad("--realizations", format!("value {} is outside the allowed range [0, 1e8]", o.realizations)));
    }
    if !(o.outage > 0.0 && o.outage < 1.0) {
        return Err(bad("--outage", format!("value {} is outside the allowed range (0, 1)", o.outage)));
    }
    if o.thresholds_dbm.iter().any(|t| !t.is_finite()) {
        return Err(bad("--threshold-dbm", "every value must be a finite number in dBm".into()));
    }
    let sets: Vec<(String, FieldSpec)> = match &o.sweep {
        None => vec![(String::new(), spec.clone())],
        Some(sw) => {
            let (key, vals) =
                sw.split_once('=').ok_or_else(|| bad("--sweep", format!("value `{sw}` is not KEY=V1,V2,...")))?;
            let mut out = Vec::new();
            for v in vals.split(',') {
                let x: f64 = v.trim().parse().map_err(|_| bad("--sweep", format!("value `{v}` is not a number")))?;
                out.push((format!("{key} = {x}"), spec.with(key, x).map_err(|m| bad("--sweep", m))?));
            }
            if out.is_empty() || out.len() > 6 {
                return Err(bad("--sweep", "give between 1 and 6 values".into()));
            }
            out
        }
    };
    let mut fields = Vec::new();
    for (label, s) in &sets {
        fields.push((label.clone(), s.build()?));
    }
    // Opened before the computation, so an unwritable folder fails early.
    let stage = match &o.out {
        Some(dir) => {
            let owned = ["cdf.csv", "cdf.png", "cdf.svg", "aggregate.json"].map(String::from).to_vec();
            Some(Staging::folder(dir, &o.inputs.iter().map(PathBuf::as_path).collect::<Vec<_>>(), owned)?)
        }
        None => None,
    };
    let req = Request {
        thresholds_dbm: o.thresholds_dbm.clone(),
        realizations: o.realizations,
        seed: o.seed,
        table_points: 160,
    };
    let reports: Vec<(String, Report)> = fields.iter().map(|(l, f)| (l.clone(), characterise(f, &req))).collect();
    let mut plans = Vec::new();
    if o.max_density || o.min_guard {
        let budget = o
            .budget_dbm
            .ok_or_else(|| bad("--budget-dbm", "missing; --max-density and --min-guard need a budget in dBm".into()))?;
        if !budget.is_finite() {
            return Err(bad("--budget-dbm", format!("value {budget} is not a finite level in dBm")));
        }
        let f = &fields[0].1;
        if o.max_density {
            plans.push(max_density(f, budget, o.outage));
        }
        if o.min_guard {
            plans.push(min_guard(f, budget, o.outage));
        }
    }
    let files = match stage {
        Some(st) => write_aggregate(st, spec, &reports, &plans)?,
        None => Vec::new(),
    };
    Ok(AggregateResult { spec: spec.clone(), reports, plans, files })
}

/// The JSON document of an `aggregate` run: every curve set with its label, and the planning
/// answers.
pub fn aggregate_json(reports: &[(String, Report)], plans: &[PlanAnswer]) -> serde_json::Value {
    serde_json::json!({
        "sets": reports.iter().map(|(l, r)| serde_json::json!({"label": l, "report": r})).collect::<Vec<_>>(),
        "planning": plans,
    })
}

/// Writes `cdf.csv`, `cdf.png`, `cdf.svg` and `aggregate.json` of an `aggregate` run through
/// `st` (opened before the computation, so an unwritable folder fails early) and commits.
pub fn write_aggregate(
    st: Staging,
    spec: &FieldSpec,
    reports: &[(String, Report)],
    plans: &[PlanAnswer],
) -> Result<Vec<PathBuf>, Error> {
    let refs: Vec<(String, &Report)> = reports.iter().map(|(l, r)| (l.clone(), r)).collect();
    st.write("cdf.csv", crate::io::tables::cdf_csv(&refs).as_bytes())?;
    let curves: Vec<crate::io::cdfplot::CurveSet> =
        reports.iter().map(|(l, r)| crate::io::cdfplot::CurveSet { label: l.clone(), rows: &r.cdf }).collect();
    let title = "Aggregate interference: exact, gamma fit, Monte Carlo";
    let io = |name: &str| {
        let path = st.dir().join(name);
        move |e: String| Error::Output { path, source: std::io::Error::other(e) }
    };
    let png = crate::io::cdfplot::png(&curves, title).map_err(io("cdf.png"))?;
    let svg = crate::io::cdfplot::svg(&curves, title).map_err(io("cdf.svg"))?;
    st.write("cdf.png", &png)?;
    st.write("cdf.svg", svg.as_bytes())?;
    let mut doc = aggregate_json(reports, plans);
    if let serde_json::Value::Object(m) = &mut doc {
        m.insert("inputs".into(), serde_json::to_value(spec).unwrap_or_default());
    }
    let json = serde_json::to_string_pretty(&doc)
        .map_err(|e| Error::Output { path: st.dir().join("aggregate.json"), source: e.into() })?;
    st.write("aggregate.json", json.as_bytes())?;
    st.commit()
}
