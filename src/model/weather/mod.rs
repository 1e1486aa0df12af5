//! Weather on a path: gaseous attenuation (ITU-R P.676-12 Annex 1), rain (ITU-R P.838-3
//! and P.530-17) and the availability of a fade margin.

pub mod gas;
mod p676_lines;
pub mod rain;

use crate::model::weather::gas::Atmosphere;
use crate::model::weather::rain::{Rain, RainCoefficients, RainPath};

/// Where the path's gaseous specific attenuation comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum GasSource {
    /// None given: no gaseous loss.
    None,
    /// The user's `[propagation] absorption_db_per_km`.
    User,
    /// ITU-R P.676-12 Annex 1 in this atmosphere.
    P676(Atmosphere),
}

/// How the fade margin treats interferers during rain.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum InterfererFade {
    /// Only the wanted path fades; interferers keep their clear-air levels (conservative).
    None,
    /// Every path fades by its own rain attenuation at the same percentage of time (fully
    /// correlated rain: optimistic for interference).
    Together,
}

/// The scenario's weather and availability settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Weather {
    /// Source of the gaseous loss.
    pub gas: GasSource,
    /// The site's rain climate; `None` without a `[rain]` table (no availability figures).
    pub rain: Option<Rain>,
    /// Availability a link must reach, percent of an average year.
    pub target_pct: f64,
    /// Whether interferers fade with the wanted path.
    pub interferers: InterfererFade,
}

impl Default for Weather {
    fn default() -> Self {
        Weather { gas: GasSource::None, rain: None, target_pct: DEFAULT_TARGET_PCT, interferers: InterfererFade::None }
    }
}

impl Weather {
    /// The gaseous loss in words, given the path loss's specific attenuation.
    pub fn gas_words(&self, absorption_db_per_km: f64) -> String {
        match self.gas {
            GasSource::None => "No gaseous loss (neither [atmosphere] nor an absorption value is given)".into(),
            GasSource::User => format!("Gaseous loss {absorption_db_per_km} dB/km as given in [propagation]"),
            GasSource::P676(a) => format!(
                "Gaseous loss {absorption_db_per_km:.3} dB/km after ITU-R P.676-12 Annex 1 at {} hPa, {} °C, {} g/m³",
                a.pressure_hpa, a.temperature_c, a.water_vapour_g_m3
            ),
        }
    }

    /// The rain settings in words (none without `[rain]`).
    pub fn rain_words(&self) -> Option<String> {
        self.rain.map(|r| {
            format!(
                "Rain {} mm/h exceeded 0.01 % of the year (ITU-R P.838-3, P.530: {}), availability target {} %",
                r.rate_mm_h,
                r.scaling_words(),
                self.target_pct
            )
        })
    }
}

/// Default availability target, percent (common practice for a backhaul link: "four nines").
pub const DEFAULT_TARGET_PCT: f64 = 99.99;

/// The P.530 figures of a path of `d_m` metres (3-D) and horizontal length `h_m` at `f_ghz`,
/// transmitted with polarisation tilt cos 2τ = `cos_2tau`, at latitude `lat_deg`.
pub fn rain_path(rain: &Rain, f_ghz: f64, d_m: f64, h_m: f64, cos_2tau: f64, lat_deg: f64) -> RainPath {
    rain_path_with(rain, &RainCoefficients::at(f_ghz), f_ghz, d_m, h_m, cos_2tau, lat_deg)
}

/// [`rain_path`] with the P.838 coefficients at `f_ghz` computed once by the caller.
pub fn rain_path_with(
    rain: &Rain,
    coefficients: &RainCoefficients,
    f_ghz: f64,
    d_m: f64,
    h_m: f64,
    cos_2tau: f64,
    lat_deg: f64,
) -> RainPath {
    let cos2 = if d_m > 0.0 { (h_m / d_m).powi(2).min(1.0) } else { 1.0 };
    let (k, alpha) = coefficients.combined(cos2, cos_2tau);
    rain.path(d_m / 1000.0, f_ghz, k, alpha, lat_deg)
}

/// Indices of the interferers that matter, in input order: the weakest ones whose clear-air
/// sum stays below 1e-3 of the noise `n_mw` are left out. Rain only lowers them, so at any
/// fade they move the SINR by less than 0.005 dB.
pub fn significant(powers_mw: &[f64], n_mw: f64) -> Vec<usize> {
    let mut order: Vec<usize> = (0..powers_mw.len()).collect();
    order.sort_by(|&a, &b| powers_mw[a].total_cmp(&powers_mw[b]).then(a.cmp(&b)));
    let mut dropped = 0.0;
    let keep = order
        .iter()
        .position(|&k| {
            dropped += powers_mw[k];
            dropped > 1e-3 * n_mw
        })
        .unwrap_or(order.len());
    let mut kept = order[keep..].to_vec();
    kept.sort_unstable();
    kept
}

/// Outage under fully correlated rain: at any moment every path's attenuation is its own
/// A₀.₀₁ times one common factor h (under P.530 the attenuations at one frequency scale with
/// p alike, A_p = A₀.₀₁ C₁ p^−(C₂ + C₃ log₁₀ p)). The fade margin is the wanted path's
/// attenuation A₀.₀₁ h at the least h where the SINR falls below `threshold_db`; its
/// availability is that of the wanted path's fade margin. `s_mw` is the wanted power,
/// `interferers` the mean (activity-weighted) powers with their rain paths, `n_mw` the noise.
/// Returns `None` for the margin when the link is below its threshold without rain.
pub fn outage_together(
    wanted: &RainPath,
    s_mw: f64,
    interferers: &[(f64, RainPath)],
    n_mw: f64,
    threshold_db: f64,
) -> (Option<f64>, rain::Availability) {
    use crate::model::units::db_to_lin;
    let thr = db_to_lin(threshold_db);
    let ok = |h: f64| {
        let i: f64 = interferers.iter().map(|(m, p)| m * db_to_lin(-p.a001_db * h)).sum();
        s_mw * db_to_lin(-wanted.a001_db * h) / (i + n_mw) >= thr
    };
    if !ok(0.0) {
        return (None, wanted.availability(0.0));
    }
    // Scan the wanted fade in 0.5 dB steps up to MAX_FADE_DB for the first failure, then
    // bisect (the SINR need not fall monotonically when an interferer's path fades faster).
    const MAX_FADE_DB: f64 = 300.0;
    let step = 0.5 / wanted.a001_db.max(1e-9);
    let h_max = MAX_FADE_DB / wanted.a001_db.max(1e-9);
    let mut lo = 0.0;
    let mut fail = None;
    while lo < h_max {
        let h = (lo + step).min(h_max);
        if !ok(h) {
            fail = Some(h);
            break;
        }
        lo = h;
    }
    let margin = match fail {
        None => MAX_FADE_DB,
        Some(mut hi) => {
            for _ in 0..60 {
                let mid = 0.5 * (lo + hi);
                if ok(mid) { lo = mid } else { hi = mid }
            }
            wanted.a001_db * 0.5 * (lo + hi)
        }
    };
    (Some(margin), wanted.availability(margin))
}

#[cfg(test)]
mod tests {
    use super::rain::{Bound, Rain, RainCoefficients, Scaling};
    use super::*;
    use crate::model::units::db_to_lin;

    fn path(d_km: f64) -> RainPath {
        let (k, a) = RainCoefficients::at(28.0).combined(1.0, -1.0);
        Rain::new(42.0, Scaling::Frequency).unwrap().path(d_km, 28.0, k, a, 45.0)
    }

    // Without interferers both treatments are the same equation: the SINR falls with the
    // wanted fade alone, so the fade margin is SINR − T and the availability the direct
    // inversion (bisection to 2^-60 of a 0.5 dB step).
    #[test]
    fn together_without_interferers_is_the_direct_inversion() {
        let w = path(1.0);
        let (s, n, thr) = (db_to_lin(15.0), 1.0, 0.0);
        let (m, av) = outage_together(&w, s, &[], n, thr);
        assert!((m.unwrap() - 15.0).abs() < 1e-6, "{m:?}");
        let direct = w.availability(15.0);
        assert_eq!(av.bound, Bound::Within);
        assert!((av.pct - direct.pct).abs() < 1e-9, "{} vs {}", av.pct, direct.pct);
    }

    // An interferer whose path fades as much as the wanted one, and no noise: the SINR does
    // not change in rain, so the link never fails (at least 99.999 %); with the interferer
    // held (the conservative treatment) the same link has only its clear-air margin.
    #[test]
    fn an_interferer_fading_alike_keeps_the_sinr() {
        let w = path(1.0);
        let (m, av) = outage_together(&w, db_to_lin(10.0), &[(1.0, w)], 0.0, 3.0);
        assert_eq!(av.bound, Bound::AtLeast);
        assert!(m.unwrap() >= 299.9, "{m:?}");
        assert!(w.availability(7.0).pct < av.pct);
    }

    // The interferers left out sum to at most 1e-3 of the noise (the stated SINR bound,
    // 10 log10(1 + 1e-3) < 0.005 dB), and the kept ones keep their order.
    #[test]
    fn left_out_interferers_are_within_the_bound() {
        let p = [5e-4, 1.0, 2e-4, 3e-4, 0.2, 1e-5];
        let kept = significant(&p, 1.0);
        assert_eq!(kept, vec![0, 1, 4]);
        let dropped: f64 = (0..p.len()).filter(|k| !kept.contains(k)).map(|k| p[k]).sum();
        assert!(dropped <= 1e-3 && dropped + 5e-4 > 1e-3);
    }

    // Interferers that fade can only help: the fade margin with every path fading is at
    // least the conservative SINR − T, and the availability at least as high.
    #[test]
    fn fading_interferers_never_lower_the_margin() {
        let w = path(0.8);
        for (d_i, p_i) in [(0.3, 0.5), (2.0, 2.0), (5.0, 0.1)] {
            let s = db_to_lin(12.0);
            let intf = [(p_i, path(d_i))];
            let sinr_db = 10.0 * (s / (p_i + 1.0)).log10();
            let (m, av) = outage_together(&w, s, &intf, 1.0, 0.0);
            assert!(m.unwrap() >= sinr_db - 1e-6, "{d_i} km: {m:?} vs {sinr_db}");
            assert!(av.pct >= w.availability(sinr_db).pct - 1e-9);
        }
    }
}
