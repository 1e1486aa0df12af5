//! The `[antenna]` table and the per-node antenna keys: merged, then resolved into a pattern.

use crate::config::range::Range;
use crate::model::antenna::{PATTERNS, Pattern, PatternKeys};
use serde::Deserialize;

/// `[antenna]`: defaults for every node; each key may be overridden per node.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AntennaDefaults {
    /// `sector`, `parabolic` or `omni`.
    pub pattern: Option<String>,
    /// Main-lobe width (sector) or half-power beamwidth (parabolic), degrees.
    pub beamwidth_deg: Option<f64>,
    /// Main-lobe gain, dBi.
    pub gain_dbi: Option<f64>,
    /// Gain outside the main lobe (sector) or pattern floor (parabolic), dBi.
    pub sidelobe_dbi: Option<f64>,
    /// Conducted transmit power, dBm.
    pub power_dbm: Option<f64>,
    /// Antenna height, m (default 5).
    pub height_m: Option<f64>,
    /// Fraction of time transmitting (default 1).
    pub activity: Option<f64>,
    /// Polarisation, `V` or `H` (default `V`).
    pub polarisation: Option<String>,
}

/// Default antenna height when neither the node nor `[antenna]` gives one, m.
pub const DEFAULT_HEIGHT_M: f64 = 5.0;

impl AntennaDefaults {
    /// Turns merged values into (pattern, power_dbm, height_m, activity), reporting missing
    /// or inconsistent keys through `bad(field, message)`.
    pub fn resolve(&self, bad: &mut dyn FnMut(&str, String)) -> Option<(Pattern, f64, f64, f64)> {
        let need = |v: Option<f64>, field: &str, bad: &mut dyn FnMut(&str, String)| {
            if v.is_none() {
                bad(field, "missing; set it in the scenario's [antenna] table or in the node's properties".into());
            }
            v
        };
        let names = PATTERNS.iter().map(|e| format!("`{}`", e.name)).collect::<Vec<_>>().join(", ");
        let pattern = match self.pattern.as_deref().map(|n| (n, PATTERNS.iter().find(|e| e.name == n))) {
            None => {
                bad("pattern", format!("missing; one of {names} in [antenna] or the node"));
                None
            }
            Some((_, Some(entry))) => {
                let keys = PatternKeys {
                    beamwidth_deg: self.beamwidth_deg,
                    gain_dbi: self.gain_dbi,
                    sidelobe_dbi: self.sidelobe_dbi,
                };
                let mut complete = true;
                for key in entry.needs {
                    complete &= need(keys.get(key), key, bad).is_some();
                }
                // Values outside their ranges were reported where they were read.
                let in_range = entry.needs.iter().all(|key| {
                    let range = match *key {
                        "beamwidth_deg" => Range::BEAMWIDTH,
                        "gain_dbi" => Range::GAIN,
                        _ => Range::SIDELOBE,
                    };
                    keys.get(key).is_some_and(|v| range.contains(v))
                });
                if complete && in_range {
                    (entry.build)(&keys).map_err(|errs| errs.into_iter().for_each(|e| bad(e.key, e.message))).ok()
                } else {
                    None
                }
            }
            Some((other, None)) => {
                bad("pattern", format!("value `{other}` is not one of {names}"));
                None
            }
        };
        let power = need(self.power_dbm, "power_dbm", bad);
        Some((pattern?, power?, self.height_m.unwrap_or(DEFAULT_HEIGHT_M), self.activity.unwrap_or(1.0)))
    }
}
