//! The keys each table of the scenario file accepts, and a first pass over the file that
//! reports every unknown key at once, each with its line and column and the nearest allowed
//! key (serde's `deny_unknown_fields` stops at the first). A unit test keeps the lists equal
//! to the fields of the raw tables in `config::raw`.

use crate::error::Problem;

/// (table, keys): `""` is the top level.
pub(crate) const KEYS: &[(&str, &[&str])] = &[
    (
        "",
        &[
            "name",
            "nodes",
            "radio",
            "propagation",
            "antenna",
            "receiver",
            "grid",
            "thresholds",
            "draw",
            "fading",
            "links",
            "install",
            "surface",
            "atmosphere",
            "rain",
            "channels",
            "spectrum",
            "colour_scale",
            "context",
        ],
    ),
    ("radio", &["frequency_ghz", "bandwidth_mhz", "noise_figure_db"]),
    ("propagation", &["model", "exponent", "loss_at_1m_db", "absorption_db_per_km", "min_distance_m"]),
    (
        "antenna",
        &["pattern", "beamwidth_deg", "gain_dbi", "sidelobe_dbi", "power_dbm", "height_m", "activity", "polarisation"],
    ),
    ("receiver", &["height_m", "antenna", "gain_dbi", "beamwidth_deg", "sidelobe_dbi", "rooftop"]),
    ("grid", &["cell_m", "margin_m", "bbox"]),
    ("thresholds", &["sinr_db", "hotspot_i_over_n_db", "coverage_target"]),
    ("draw", &["density_per_km2", "areas", "keep", "hard_core_m", "azimuth", "toward", "seed", "mode"]),
    ("fading", &["model", "m", "k_db", "interferer_model", "interferer_m", "interferer_k_db", "shadowing_db"]),
    ("links", &["capacity_gap_db", "max_spectral_efficiency", "availability_target_pct"]),
    ("install", &["declination_date"]),
    ("surface", &["ground", "buildings", "earth_k", "obstruction_cap_db", "nodata_fill_m"]),
    ("atmosphere", &["pressure_hpa", "temperature_c", "water_vapour_g_m3"]),
    ("rain", &["rate_mm_h", "scaling", "interferers_fade"]),
    ("spectrum", &["xpd_db", "aclr_db", "acs_db", "aclr2_db", "acs2_db"]),
    ("colour_scale", &["total", "interference", "sinr", "visible"]),
    ("context", &["layers"]),
];

/// 1-based line and column of byte `offset` in `text`.
pub(crate) fn line_col(text: &str, offset: usize) -> (usize, usize) {
    let before = &text[..offset.min(text.len())];
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
    (line, col)
}

/// Where `key` is written in `table` (its first `key =` line inside the table's section).
fn locate(text: &str, table: &str, key: &str) -> (usize, usize) {
    let mut in_table = table.is_empty();
    let mut offset = 0;
    for line in text.split_inclusive('\n') {
        let t = line.trim_start();
        if t.starts_with('[') {
            in_table = t.trim_start_matches('[').split(']').next().map(str::trim) == Some(table);
        } else if in_table {
            let k = t.split('=').next().unwrap_or("").trim().trim_matches('"');
            if k == key && t.contains('=') {
                return line_col(text, offset + (line.len() - t.len()));
            }
        }
        offset += line.len();
    }
    // A table written as `[key]` at the top level.
    let header = format!("[{key}]");
    text.find(&header).map_or((1, 1), |o| line_col(text, o))
}

/// The allowed key nearest to `key`, when it is close enough to be a probable typo.
fn nearest<'a>(key: &str, allowed: &[&'a str]) -> Option<&'a str> {
    allowed
        .iter()
        .map(|a| (strsim::damerau_levenshtein(key, a), *a))
        .filter(|(d, a)| *d <= 2.max(a.len() / 4))
        .min()
        .map(|(_, a)| a)
}

/// Every unknown key of the scenario `doc` (parsed from `text`), each as one problem.
pub(crate) fn unknown_keys(doc: &toml::Table, text: &str, file: &str) -> Vec<Problem> {
    let allowed = |t: &str| KEYS.iter().find(|(name, _)| *name == t).map(|(_, k)| *k);
    let mut probs = Vec::new();
    let mut check = |table: &str, keys: &mut dyn Iterator<Item = &String>| {
        let Some(ok) = allowed(table) else { return };
        for k in keys {
            if !ok.contains(&k.as_str()) {
                let (line, col) = locate(text, table, k);
                let hint = nearest(k, ok).map(|n| format!("; did you mean `{n}`?")).unwrap_or_default();
                let place = if table.is_empty() { None } else { Some(format!("[{table}]")) };
                probs.push(Problem::new(
                    format!("{file}:{line}:{col}"),
                    place,
                    k.as_str(),
                    format!("unknown key{hint} (allowed: {})", ok.join(", ")),
                ));
            }
        }
    };
    check("", &mut doc.keys());
    for (name, v) in doc {
        if let Some(t) = v.as_table() {
            check(name, &mut t.keys());
        }
    }
    probs
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The lists match the raw tables: serde's own message for an unknown key names the
    /// expected fields, which must be exactly the list's.
    #[test]
    fn key_lists_match_the_raw_tables() {
        for (table, keys) in KEYS.iter() {
            let text = if table.is_empty() {
                "zzz_unknown = 1\n".to_string()
            } else {
                format!("name = \"x\"\nnodes = \"n\"\n[{table}]\nzzz_unknown = 1\n")
            };
            let e = toml::from_str::<crate::config::raw::RawScenario>(&text).unwrap_err().to_string();
            assert!(e.contains("unknown field `zzz_unknown`"), "[{table}]: {e}");
            let tail = e.split("expected").nth(1).unwrap_or("");
            let got: std::collections::BTreeSet<&str> = tail.split('`').skip(1).step_by(2).collect();
            let want: std::collections::BTreeSet<&str> = keys.iter().copied().collect();
            assert_eq!(got, want, "[{table}]: {e}");
        }
    }

    #[test]
    fn every_unknown_key_with_place_and_hint() {
        let text = "name = \"x\"\nnodse = \"n\"\n[radio]\nfrequncy_ghz = 28\nbandwidth_mhz = 100\n[grid]\ncell = 4\nzebra = 1\n";
        let doc: toml::Table = text.parse().unwrap();
        let p = unknown_keys(&doc, text, "s.toml");
        assert_eq!(p.len(), 4, "{p:?}");
        assert!(
            p.iter()
                .any(|q| q.file == "s.toml:2:1" && q.field == "nodse" && q.message.contains("did you mean `nodes`"))
        );
        assert!(p.iter().any(|q| q.file == "s.toml:4:1" && q.message.contains("did you mean `frequency_ghz`")));
        assert!(p.iter().any(|q| q.field == "cell" && q.message.contains("`cell_m`")));
        assert!(p.iter().any(|q| q.field == "zebra" && !q.message.contains("did you mean")));
    }
}
