//! Text tables and CSV: the aggregate report, and the one CSV writer every table uses.

use crate::config::field::FieldSpec;
use crate::random::characterise::Report;

/// One line echoing the resolved inputs of an `aggregate` run.
pub fn inputs_line(s: &FieldSpec) -> String {
    format!(
        "inputs: {} per km² (keep {}, hard core {} m) on {}–{} m; interferers {} {}° {}/{} dBi at {} dBm; receiver {}° {}/{} dBi; {} n = {} at {} GHz, absorption {} dB/km, clamp {} m; fading {}{}",
        s.density_per_km2,
        s.keep,
        s.hard_core_m,
        s.guard_m,
        s.radius_m,
        s.tx_pattern,
        s.tx.0,
        s.tx.1,
        s.tx.2,
        s.power_dbm,
        s.rx.0,
        s.rx.1,
        s.rx.2,
        s.model,
        s.exponent,
        s.frequency_ghz,
        s.absorption_db_per_km,
        s.min_distance_m,
        s.fading,
        match s.fading.as_str() {
            "rician" => format!(" K = {} dB", s.k_db),
            "nakagami" => format!(" m = {}", s.m),
            _ => String::new(),
        }
    ) + &match &s.blockage {
        None => String::new(),
        Some(b) => format!(
            "; blockage P(LOS) = exp(-{:.5} r) ({}), blocked links n = {}",
            b.beta_per_m, b.source, b.nlos_exponent
        ),
    }
}

/// A CSV table through the `csv` crate (RFC 4180: fields with commas, quotes or line breaks
/// quoted, quotes doubled): one header line, units in the header names (`_m`, `_dbm`, ...),
/// no comment lines, `\n` line ends.
pub fn csv_text<I>(header: &[&str], rows: I) -> String
where
    I: IntoIterator<Item = Vec<String>>,
{
    let mut w = csv::WriterBuilder::new().terminator(csv::Terminator::Any(b'\n')).from_writer(Vec::new());
    // Writing to memory cannot fail; a row of the wrong length is a programming error.
    w.write_record(header).expect("CSV header");
    for r in rows {
        assert_eq!(r.len(), header.len(), "CSV row length");
        w.write_record(&r).expect("CSV row");
    }
    String::from_utf8(w.into_inner().expect("CSV buffer")).expect("CSV is UTF-8")
}

/// CSV of the CDF tables (one block per curve set).
pub fn cdf_csv(sets: &[(String, &Report)]) -> String {
    let rows = sets.iter().flat_map(|(label, r)| {
        r.cdf.iter().map(move |row| {
            vec![
                label.clone(),
                format!("{:.3}", row.x_dbm),
                format!("{:.9}", row.gamma),
                format!("{:.9}", row.exact),
                row.mc.map(|m| format!("{m:.9}")).unwrap_or_default(),
            ]
        })
    });
    csv_text(&["set", "x_dbm", "cdf_gamma", "cdf_exact", "cdf_mc"], rows)
}

/// A plain-text summary of a report.
pub fn table(label: &str, r: &Report) -> String {
    let mut s = String::new();
    if !label.is_empty() {
        s += &format!("== {label}\n");
    }
    s += &format!(
        "interferers: {:.1} on average (density {:.1} per km²), P(none) {:.3e}\n",
        r.mean_interferers, r.effective_density_per_km2, r.p_no_interferer
    );
    s += &format!(
        "mean {:.2} dBm, variance {:.3e} mW², skewness {:.3}, excess kurtosis {:.3}\n",
        r.mean_dbm, r.variance_mw2, r.skewness, r.excess_kurtosis
    );
    s += &format!("gamma fit: shape {:.4}, scale {:.4e} mW\n", r.gamma.shape, r.gamma.scale_mw);
    s += &format!("{:<12} {:>10} {:>10} {:>10}\n", "quantile", "gamma", "exact", "MC");
    let q = &r.quantiles_dbm;
    for (name, g, e, m) in [
        ("p90 dBm", q.gamma.p90, q.exact.p90, q.mc.map(|x| x.p90)),
        ("p99 dBm", q.gamma.p99, q.exact.p99, q.mc.map(|x| x.p99)),
        ("p99.9 dBm", q.gamma.p999, q.exact.p999, q.mc.map(|x| x.p999)),
    ] {
        s += &format!("{name:<12} {g:>10.2} {e:>10.2} {:>10}\n", m.map(|x| format!("{x:.2}")).unwrap_or("-".into()));
    }
    for x in &r.exceedance {
        s += &format!(
            "P(I > {:.1} dBm): gamma {:.4e}, exact {:.4e}, MC {}\n",
            x.threshold_dbm,
            x.gamma,
            x.exact,
            x.mc.map(|m| format!("{m:.4e}")).unwrap_or("-".into())
        );
    }
    if let Some(k) = &r.ks {
        s += &format!(
            "KS distance to Monte Carlo: gamma {:.4}, exact {:.4} (95 % DKW band {:.4})\n",
            k.gamma_vs_mc, k.exact_vs_mc, k.dkw_95
        );
    }
    if let Some(m) = &r.monte_carlo {
        s += &format!(
            "Monte Carlo: {} realisations, seed {}, {:.3e} interferer draws in {:.2} s\n",
            m.realizations, m.seed, m.interferer_draws as f64, m.elapsed_s
        );
    }
    s += &format!(
        "exact CDF: {} M = {}, error estimate {:.1e}\n",
        r.inversion.method, r.inversion.m, r.inversion.error_estimate
    );
    for w in &r.warnings {
        s += &format!("WARNING: {w}\n");
    }
    for n in &r.notes {
        s += &format!("note: {n}\n");
    }
    s
}

#[cfg(test)]
mod tests {
    /// RFC 4180 section 2: a field with a comma or a quote is quoted, quotes doubled.
    #[test]
    fn awkward_fields_are_quoted() {
        let t = super::csv_text(&["id", "name_x"], [vec!["A,1".into(), "say \"hi\"".into()]]);
        assert_eq!(t, "id,name_x\n\"A,1\",\"say \"\"hi\"\"\"\n");
    }
}
