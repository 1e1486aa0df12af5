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
            GasSource::None => "no gaseous loss (neither [atmosphere] nor an absorption value is given)".into(),
            GasSource::User => format!("gaseous loss {absorption_db_per_km} dB/km as given in [propagation]"),
            GasSource::P676(a) => format!(
                "gaseous loss {absorption_db_per_km:.3} dB/km after ITU-R P.676-12 Annex 1 at {} hPa, {} °C, {} g/m³",
                a.pressure_hpa, a.temperature_c, a.water_vapour_g_m3
            ),
        }
    }

    /// The rain settings in words (none without `[rain]`).
    pub fn rain_words(&self) -> Option<String> {
        self.rain.map(|r| {
            format!(
                "rain {} mm/h exceeded 0.01 % of the year (ITU-R P.838-3, P.530: {}), availability target {} %",
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
    let cos2 = if d_m > 0.0 { (h_m / d_m).powi(2).min(1.0) } else { 1.0 };
    let (k, alpha) = RainCoefficients::at(f_ghz).combined(cos2, cos_2tau);
    rain.path(d_m / 1000.0, f_ghz, k, alpha, lat_deg)
}

/// Outage under fully correlated rain: every path's attenuation at the same percentage of
/// time p (all scale as A₀.₀₁ times one function of p at one frequency). Returns the fade
/// margin (the wanted path's attenuation at the largest p in [0.001, 1] % where the SINR
/// falls below `threshold_db`) and the availability, or `None` for the fade margin when the
/// link has no clear-air margin. `s_mw` is the wanted power, `interferers` the mean
/// (activity-weighted) powers with their rain paths, `n_mw` the noise.
pub fn outage_together(
    wanted: &RainPath,
    s_mw: f64,
    interferers: &[(f64, RainPath)],
    n_mw: f64,
    threshold_db: f64,
) -> (Option<f64>, rain::Availability) {
    use rain::{Availability, Bound, MINUTES_PER_YEAR, P_MAX, P_MIN};
    let thr = crate::model::units::db_to_lin(threshold_db);
    // SINR minus the threshold (linear ratio) at log10 p = x; x = None is clear air.
    let ok = |x: Option<f64>| {
        let fade = |p: &RainPath| x.map_or(1.0, |x| crate::model::units::db_to_lin(-p.exceeded_db(10f64.powf(x))));
        let i: f64 = interferers.iter().map(|(m, p)| m * fade(p)).sum();
        s_mw * fade(wanted) / (i + n_mw) >= thr
    };
    let avail =
        |p: f64, bound| Availability { pct: 100.0 - p, outage_min_per_year: p / 100.0 * MINUTES_PER_YEAR, bound };
    let (x_min, x_max) = (P_MIN.log10(), P_MAX.log10());
    if !ok(None) {
        return (None, avail(100.0, Bound::NoMargin));
    }
    if !ok(Some(x_max)) {
        return (Some(wanted.exceeded_db(P_MAX)), avail(P_MAX, Bound::AtMost));
    }
    // Scan from light rain to heavy for the first x where the link fails, then bisect.
    const STEPS: usize = 300;
    let mut hi = x_max;
    for k in 1..=STEPS {
        let x = x_max + (x_min - x_max) * k as f64 / STEPS as f64;
        if !ok(Some(x)) {
            let mut lo = x;
            for _ in 0..60 {
                let mid = 0.5 * (lo + hi);
                if ok(Some(mid)) { hi = mid } else { lo = mid }
            }
            let p = 10f64.powf(0.5 * (lo + hi));
            return (Some(wanted.exceeded_db(p)), avail(p, Bound::Within));
        }
        hi = x;
    }
    (Some(wanted.exceeded_db(P_MIN)), avail(P_MIN, Bound::AtLeast))
}
