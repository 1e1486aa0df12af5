//! The `assign` command: the channel-plan search, and the node file with the plan written in.

use crate::error::{Error, Problem};
use crate::io::staging::Staging;
use crate::jobs::assign::{EXHAUSTIVE_MAX, Limits, Plan, search_within, unplaceable};
use crate::model::node::Polarisation;
use crate::model::scenario::Scenario;
use std::path::{Path, PathBuf};

/// What an `assign` run produced.
pub struct AssignResult {
    /// The plan and its before/after figures.
    pub plan: Plan,
    /// The file written.
    pub files: Vec<PathBuf>,
}

/// Searches a plan with `seed` and writes the node file with each feature's `channel` and
/// `polarisation` set to `out` (every other property kept as written).
pub fn run_assign(sc: &Scenario, out: &Path, seed: u64) -> Result<AssignResult, Error> {
    let file = sc.nodes_path.display().to_string();
    let text = crate::config::read_input(&sc.nodes_path)
        .map_err(|e| Error::Read { path: sc.nodes_path.clone(), source: e })?;
    let mut fc: serde_json::Value = serde_json::from_str(&text)
        .map_err(|e| Error::input(Problem::new(&file, None, "(document)", format!("not valid JSON: {e}"))))?;
    let id_of = |f: &serde_json::Value| -> Option<String> {
        match f["properties"].get("id").or(f.get("id")) {
            Some(serde_json::Value::String(s)) => Some(s.clone()),
            Some(serde_json::Value::Number(n)) => Some(n.to_string()),
            _ => None,
        }
    };
    let features = fc["features"].as_array().cloned().unwrap_or_default();
    let locked_ids: std::collections::HashSet<String> = features
        .iter()
        .filter(|f| f["properties"]["locked"] == serde_json::Value::Bool(true))
        .filter_map(id_of)
        .collect();
    let locked: Vec<bool> = sc.nodes.iter().map(|n| locked_ids.contains(&n.id)).collect();
    // The allowed lists, by id (their names were checked when the node file was read).
    let props: std::collections::HashMap<String, serde_json::Value> =
        features.iter().filter_map(|f| Some((id_of(f)?, f["properties"].clone()))).collect();
    let names = |n: &crate::model::node::Node, key: &str| -> Option<Vec<String>> {
        let v = props.get(&n.id)?.get(key)?.as_array()?;
        Some(v.iter().filter_map(|x| x.as_str().map(String::from)).collect())
    };
    let chan_index = |name: &String| sc.spectrum.channels.iter().position(|c| c.name == *name);
    let limits = Limits {
        channels: sc
            .nodes
            .iter()
            .map(|n| names(n, "allowed_channels").map(|v| v.iter().filter_map(chan_index).collect()))
            .collect(),
        polarisations: sc
            .nodes
            .iter()
            .map(|n| {
                names(n, "allowed_polarisations").map(|v| v.iter().filter_map(|p| Polarisation::parse(p)).collect())
            })
            .collect(),
        locked,
    };
    let stuck = unplaceable(sc, &limits);
    if !stuck.is_empty() {
        let candidates: Vec<String> = sc.spectrum.channels.iter().skip(1).map(|c| format!("`{}`", c.name)).collect();
        return Err(Error::Input(
            stuck
                .iter()
                .map(|ids| {
                    // What each node of the group allows, as written.
                    let said: Vec<String> = ids
                        .iter()
                        .filter_map(|id| {
                            let p = props.get(id)?;
                            let part = |k: &str| p.get(k).map(|v| format!("{k} {v}"));
                            let both: Vec<String> =
                                [part("allowed_channels"), part("allowed_polarisations")].into_iter().flatten().collect();
                            (!both.is_empty()).then(|| format!("{id}: {}", both.join(", ")))
                        })
                        .collect();
                    Problem::new(
                        &file,
                        Some(format!("nodes {}", ids.join(", "))),
                        "allowed_channels",
                        format!(
                            "values {} leave no channel and polarisation that every node of this group allows (nodes joined by peers share one); candidates: {} on V or H; widen `allowed_channels` or `allowed_polarisations`, or lock the group",
                            said.join("; "),
                            if candidates.is_empty() { "`radio`".to_string() } else { candidates.join(", ") }
                        ),
                    )
                })
                .collect(),
        ));
    }
    let plan = search_within(sc, &limits, seed, EXHAUSTIVE_MAX);
    let by_id: std::collections::HashMap<&str, usize> =
        sc.nodes.iter().enumerate().map(|(i, n)| (n.id.as_str(), i)).collect();
    if let Some(fs) = fc["features"].as_array_mut() {
        for f in fs {
            let Some(i) = id_of(f).and_then(|id| by_id.get(id.as_str()).copied()) else { continue };
            let (c, pol) = plan.classes[i];
            if let Some(p) = f["properties"].as_object_mut() {
                p.insert("channel".into(), sc.spectrum.channels[c].name.clone().into());
                p.insert("polarisation".into(), pol.name().into());
            }
        }
    }
    let name = out
        .file_name()
        .and_then(|n| n.to_str())
        .ok_or_else(|| Error::input(Problem::flag("--out", "needs a file name")))?;
    let dir = out.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let st = Staging::shared(dir, &sc.input_files())?;
    st.write(name, serde_json::to_string_pretty(&fc).unwrap_or_default().as_bytes())?;
    let files = st.commit()?;
    Ok(AssignResult { plan, files })
}

/// The before/after table.
pub fn table(p: &Plan) -> String {
    let mut s =
        format!("{:<8} {:<8} {:>14} {:>10}   {:>14} {:>10}\n", "from", "to", "before", "margin", "after", "margin");
    for (b, a) in p.before.iter().zip(&p.after) {
        s += &format!(
            "{:<8} {:<8} {:>14} {:>10.2}   {:>14} {:>10.2}\n",
            b.from,
            b.to,
            format!("{}/{}", b.channel, b.polarisation),
            b.margin_db,
            format!("{}/{}", a.channel, a.polarisation),
            a.margin_db
        );
    }
    s += &format!(
        "worst margin before -> after: {:.2} -> {:.2} dB; failing links {} -> {}; summed outage {} -> {} {}; {} plans evaluated{}\n",
        p.worst_margin_db_before,
        p.worst_margin_db_after,
        p.failing_before,
        p.failing_after,
        p.outage_before,
        p.outage_after,
        p.outage_unit,
        p.evaluated,
        if p.exhaustive { " (every plan)" } else { " (seeded local search)" }
    );
    s
}
