//! The scenario file's tables as serde reads them: no I/O, no validation; unknown keys are
//! rejected here.

use crate::config::antenna::AntennaDefaults;
use serde::Deserialize;

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawScenario {
    pub(crate) name: String,
    pub(crate) nodes: String,
    pub(crate) radio: RawRadio,
    pub(crate) propagation: RawPropagation,
    #[serde(default)]
    pub(crate) antenna: AntennaDefaults,
    #[serde(default)]
    pub(crate) receiver: RawReceiver,
    pub(crate) grid: RawGrid,
    #[serde(default)]
    pub(crate) thresholds: RawThresholds,
    pub(crate) draw: Option<RawDraw>,
    #[serde(default)]
    pub(crate) fading: RawFading,
    #[serde(default)]
    pub(crate) links: RawLinks,
    #[serde(default)]
    pub(crate) install: RawInstall,
    pub(crate) surface: Option<crate::config::surface::RawSurface>,
    pub(crate) atmosphere: Option<RawAtmosphere>,
    pub(crate) rain: Option<RawRain>,
    pub(crate) channels: Option<std::collections::BTreeMap<String, RawChannel>>,
    pub(crate) spectrum: Option<RawSpectrum>,
    #[serde(default)]
    pub(crate) colour_scale: RawColourScale,
    #[serde(default)]
    pub(crate) context: RawContext,
}

/// `[context]`: GeoJSON files drawn beneath the sheets.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawContext {
    #[serde(default)]
    pub(crate) layers: Vec<String>,
}

/// `[colour_scale]`: fixed colour limits `[low, high]` per picture layer.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawColourScale {
    pub(crate) total: Option<[f64; 2]>,
    pub(crate) interference: Option<[f64; 2]>,
    pub(crate) sinr: Option<[f64; 2]>,
    pub(crate) visible: Option<[f64; 2]>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawChannel {
    pub(crate) centre_ghz: f64,
    pub(crate) bandwidth_mhz: f64,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawSpectrum {
    pub(crate) xpd_db: Option<f64>,
    pub(crate) aclr_db: Option<f64>,
    pub(crate) acs_db: Option<f64>,
    pub(crate) aclr2_db: Option<f64>,
    pub(crate) acs2_db: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawAtmosphere {
    pub(crate) pressure_hpa: Option<f64>,
    pub(crate) temperature_c: Option<f64>,
    pub(crate) water_vapour_g_m3: Option<f64>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawRain {
    pub(crate) rate_mm_h: f64,
    pub(crate) scaling: Option<String>,
    pub(crate) interferers_fade: Option<bool>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawFading {
    pub(crate) model: Option<String>,
    pub(crate) m: Option<f64>,
    pub(crate) k_db: Option<f64>,
    pub(crate) interferer_model: Option<String>,
    pub(crate) interferer_m: Option<f64>,
    pub(crate) interferer_k_db: Option<f64>,
    pub(crate) shadowing_db: Option<f64>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawLinks {
    pub(crate) capacity_gap_db: Option<f64>,
    pub(crate) max_spectral_efficiency: Option<f64>,
    pub(crate) availability_target_pct: Option<f64>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawInstall {
    pub(crate) declination_date: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawDraw {
    pub(crate) density_per_km2: f64,
    pub(crate) areas: Option<String>,
    pub(crate) keep: Option<f64>,
    pub(crate) hard_core_m: Option<f64>,
    pub(crate) azimuth: Option<String>,
    pub(crate) toward: Option<[f64; 2]>,
    pub(crate) seed: Option<u64>,
    pub(crate) mode: Option<String>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawRadio {
    pub(crate) frequency_ghz: f64,
    pub(crate) bandwidth_mhz: f64,
    pub(crate) noise_figure_db: f64,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawPropagation {
    pub(crate) model: String,
    pub(crate) exponent: Option<f64>,
    pub(crate) loss_at_1m_db: Option<f64>,
    pub(crate) absorption_db_per_km: Option<f64>,
    pub(crate) min_distance_m: Option<f64>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawReceiver {
    pub(crate) height_m: Option<f64>,
    pub(crate) antenna: Option<String>,
    pub(crate) gain_dbi: Option<f64>,
    pub(crate) beamwidth_deg: Option<f64>,
    pub(crate) sidelobe_dbi: Option<f64>,
    pub(crate) rooftop: Option<bool>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawGrid {
    pub(crate) cell_m: f64,
    pub(crate) margin_m: Option<f64>,
    pub(crate) bbox: Option<[f64; 4]>,
}

#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawThresholds {
    pub(crate) sinr_db: Option<f64>,
    pub(crate) hotspot_i_over_n_db: Option<f64>,
    pub(crate) coverage_target: Option<f64>,
}
