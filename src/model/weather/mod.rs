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

/// Default availability target, percent (common practice for a backhaul link: "four nines").
pub const DEFAULT_TARGET_PCT: f64 = 99.99;

/// The P.530 figures of a path of `d_m` metres (3-D) and horizontal length `h_m` at `f_ghz`,
/// transmitted with polarisation tilt cos 2τ = `cos_2tau`, at latitude `lat_deg`.
pub fn rain_path(rain: &Rain, f_ghz: f64, d_m: f64, h_m: f64, cos_2tau: f64, lat_deg: f64) -> RainPath {
    let cos2 = if d_m > 0.0 { (h_m / d_m).powi(2).min(1.0) } else { 1.0 };
    let (k, alpha) = RainCoefficients::at(f_ghz).combined(cos2, cos_2tau);
    rain.path(d_m / 1000.0, f_ghz, k, alpha, lat_deg)
}
