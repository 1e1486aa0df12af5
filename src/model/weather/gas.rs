//! Specific attenuation by atmospheric gases after ITU-R P.676-12 Annex 1 (line-by-line
//! summation of the oxygen and water-vapour resonance lines, with the dry continuum).
//!
//! γ = γ_o + γ_w = 0.1820 f (N″_oxygen(f) + N″_water(f)) dB/km (eq. 1), with
//! N″_oxygen = Σ S_i F_i + N″_D (eq. 2a) and N″_water = Σ S_i F_i (eq. 2b);
//! line strengths S_i (eq. 3), line shapes F_i (eq. 5) with widths Δf (eq. 6a/6b) and the
//! oxygen interference factor δ (eq. 7), and the dry continuum N″_D (eq. 8).
//! θ = 300 / T, e = ρ T / 216.7 hPa (eq. 4), p the dry-air pressure.
//!
//! The input pressure is the total barometric pressure (what a barometer reads); the dry
//! pressure is that less the water-vapour partial pressure e. Valid 1 to 1000 GHz (the
//! Recommendation's range); lobemap's carriers stop at 300 GHz.
//!
//! # References
//! - ITU-R P.676-12 (08/2019), Annex 1 §1 and Tables 1 and 2 (in `p676_lines.rs`).
//! - ITU-R P.835-6, §1.1: the mean annual global reference atmosphere at sea level
//!   (1013.25 hPa, 288.15 K, 7.5 g/m³), lobemap's defaults.

use super::p676_lines::{OXYGEN, WATER_VAPOUR};
use crate::error::ModelError;

/// Total barometric pressure of the mean annual global reference atmosphere at sea level,
/// hPa (ITU-R P.835-6 §1.1).
pub const REFERENCE_PRESSURE_HPA: f64 = 1013.25;
/// Its temperature, °C (288.15 K, ITU-R P.835-6 §1.1).
pub const REFERENCE_TEMPERATURE_C: f64 = 15.0;
/// Its water-vapour density at the surface, g/m³ (ITU-R P.835-6 §1.1).
pub const REFERENCE_WATER_VAPOUR_G_M3: f64 = 7.5;

/// The atmosphere along a terrestrial path (uniform).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Atmosphere {
    /// Total barometric pressure, hPa.
    pub pressure_hpa: f64,
    /// Temperature, °C.
    pub temperature_c: f64,
    /// Water-vapour density, g/m³.
    pub water_vapour_g_m3: f64,
}

impl Default for Atmosphere {
    fn default() -> Self {
        Atmosphere {
            pressure_hpa: REFERENCE_PRESSURE_HPA,
            temperature_c: REFERENCE_TEMPERATURE_C,
            water_vapour_g_m3: REFERENCE_WATER_VAPOUR_G_M3,
        }
    }
}

/// Saturation water-vapour pressure over water, hPa, at `t_c` °C and `p_hpa` total pressure:
/// ITU-R P.453-14 eq. 9 with the enhancement factor of eq. 10 (coefficients a = 6.1121,
/// b = 18.678, c = 257.14, d = 234.5; from memory).
pub fn saturation_pressure_hpa(t_c: f64, p_hpa: f64) -> f64 {
    let ef = 1.0 + 1e-4 * (7.2 + p_hpa * (0.0320 + 5.9e-6 * t_c * t_c));
    ef * 6.1121 * ((18.678 - t_c / 234.5) * t_c / (t_c + 257.14)).exp()
}

impl Atmosphere {
    /// Checks the values: pressure [300, 1100] hPa, temperature [−60, 60] °C, water vapour
    /// from 0 up to saturation at that temperature (ITU-R P.453; 2 % slack).
    pub fn new(pressure_hpa: f64, temperature_c: f64, water_vapour_g_m3: f64) -> Result<Atmosphere, Vec<ModelError>> {
        let mut errs = Vec::new();
        if !(pressure_hpa.is_finite() && (300.0..=1100.0).contains(&pressure_hpa)) {
            errs.push(ModelError::out_of_range("pressure_hpa", pressure_hpa, "[300, 1100] hPa"));
        }
        if !(temperature_c.is_finite() && (-60.0..=60.0).contains(&temperature_c)) {
            errs.push(ModelError::out_of_range("temperature_c", temperature_c, "[-60, 60] °C"));
        }
        if errs.is_empty() {
            let t_k = temperature_c + 273.15;
            let rho_sat = 216.7 * saturation_pressure_hpa(temperature_c, pressure_hpa) / t_k;
            let max = (rho_sat * 1.02 * 100.0).floor() / 100.0;
            if !(water_vapour_g_m3.is_finite() && (0.0..=max).contains(&water_vapour_g_m3)) {
                errs.push(ModelError::out_of_range(
                    "water_vapour_g_m3",
                    water_vapour_g_m3,
                    format!("[0, {max}] g/m³ (saturation at {temperature_c} °C)"),
                ));
            }
        }
        if errs.is_empty() { Ok(Atmosphere { pressure_hpa, temperature_c, water_vapour_g_m3 }) } else { Err(errs) }
    }

    /// Water-vapour partial pressure e, hPa (P.676-12 eq. 4).
    pub fn vapour_pressure_hpa(&self) -> f64 {
        self.water_vapour_g_m3 * (self.temperature_c + 273.15) / 216.7
    }

    /// Specific attenuation (oxygen, water vapour) at `f_ghz`, dB/km.
    pub fn specific_db_per_km(&self, f_ghz: f64) -> (f64, f64) {
        let t = self.temperature_c + 273.15;
        let theta = 300.0 / t;
        let e = self.vapour_pressure_hpa();
        let p = self.pressure_hpa - e;
        let f = f_ghz;
        // Oxygen lines: S = a1·1e-7·p·θ³·exp(a2(1−θ)); Δf = a3·1e-4(p θ^(0.8−a4) + 1.1 e θ),
        // Zeeman-widened √(Δf² + 2.25e-6); δ = (a5 + a6 θ)·1e-4 (p + e) θ^0.8.
        let mut n_ox = 0.0;
        for &[fi, a1, a2, a3, a4, a5, a6] in OXYGEN.iter() {
            let s = a1 * 1e-7 * p * theta.powi(3) * (a2 * (1.0 - theta)).exp();
            let df = a3 * 1e-4 * (p * theta.powf(0.8 - a4) + 1.1 * e * theta);
            let df = (df * df + 2.25e-6).sqrt();
            let delta = (a5 + a6 * theta) * 1e-4 * (p + e) * theta.powf(0.8);
            n_ox += s * shape(f, fi, df, delta);
        }
        // Dry continuum (Debye spectrum of oxygen below 10 GHz and nitrogen absorption).
        let d = 5.6e-4 * (p + e) * theta.powf(0.8);
        let n_d = f
            * p
            * theta
            * theta
            * (6.14e-5 / (d * (1.0 + (f / d) * (f / d)))
                + 1.4e-12 * p * theta.powf(1.5) / (1.0 + 1.9e-5 * f.powf(1.5)));
        // Water-vapour lines: S = b1·1e-1·e·θ^3.5·exp(b2(1−θ)); Δf = b3·1e-4(p θ^b4 + b5 e θ^b6),
        // Doppler-widened 0.535 Δf + √(0.217 Δf² + 2.1316e-12 f_i²/θ); δ = 0.
        let mut n_w = 0.0;
        for &[fi, b1, b2, b3, b4, b5, b6] in WATER_VAPOUR.iter() {
            let s = b1 * 1e-1 * e * theta.powf(3.5) * (b2 * (1.0 - theta)).exp();
            let df = b3 * 1e-4 * (p * theta.powf(b4) + b5 * e * theta.powf(b6));
            let df = 0.535 * df + (0.217 * df * df + 2.1316e-12 * fi * fi / theta).sqrt();
            n_w += s * shape(f, fi, df, 0.0);
        }
        (0.1820 * f * (n_ox + n_d), 0.1820 * f * n_w)
    }

    /// Total specific attenuation γ_o + γ_w at `f_ghz`, dB/km.
    pub fn gamma_db_per_km(&self, f_ghz: f64) -> f64 {
        let (o, w) = self.specific_db_per_km(f_ghz);
        o + w
    }
}

/// Line shape factor F_i (P.676-12 eq. 5).
fn shape(f: f64, fi: f64, df: f64, delta: f64) -> f64 {
    f / fi
        * ((df - delta * (fi - f)) / ((fi - f) * (fi - f) + df * df)
            + (df - delta * (fi + f)) / ((fi + f) * (fi + f) + df * df))
}

#[cfg(test)]
mod tests {
    use super::*;

    // ITU-R P.676-12 Annex 1 in the P.835 reference atmosphere (1013.25 hPa total, 15 °C,
    // 7.5 g/m³), against the `itur` package 0.4.0 (PyPI): itu676.gamma0_exact and
    // gammaw_exact at the dry pressure 1013.25 − e = 1003.277 hPa and T = 288.15 K, computed
    // once and embedded (CI needs no Python). Tolerance 1e-6 relative: the same equations in
    // double precision.
    #[test]
    fn p676_annex1_matches_itur_in_the_reference_atmosphere() {
        let a = Atmosphere::default();
        for &(f, o, w) in ITUR_0_4_0 {
            let (go, gw) = a.specific_db_per_km(f);
            assert!(((go - o) / o).abs() < 1e-6, "{f} GHz oxygen {go} vs {o}");
            assert!(((gw - w) / w).abs() < 1e-6, "{f} GHz water {gw} vs {w}");
        }
    }

    // Published magnitudes, from memory of ITU-R P.676 Figure 1 (sea level, 7.5 g/m³): about
    // 15 dB/km at the 60 GHz oxygen complex, about 0.2 dB/km at the 22.235 GHz water line and
    // about 30 dB/km at the 183 GHz water line. Tolerances are the reading of a log plot.
    #[test]
    fn p676_annex1_has_the_published_shape() {
        let a = Atmosphere::default();
        let g = |f| a.gamma_db_per_km(f);
        assert!((13.0..17.0).contains(&g(60.0)), "60 GHz {}", g(60.0));
        assert!((0.15..0.25).contains(&g(22.235)), "22 GHz {}", g(22.235));
        assert!((20.0..40.0).contains(&g(183.31)), "183 GHz {}", g(183.31));
        assert!(g(60.0) > g(50.0) && g(60.0) > g(70.0));
    }

    // Saturation: at 20 °C and 1013.25 hPa e_s ≈ 23.4 hPa (handbook steam tables, common
    // practice), so ρ_sat ≈ 17.3 g/m³.
    #[test]
    fn supersaturated_air_is_refused() {
        let es = saturation_pressure_hpa(20.0, 1013.25);
        assert!((es - 23.4).abs() < 0.2, "{es}");
        assert!(Atmosphere::new(1013.25, 20.0, 17.0).is_ok());
        assert!(Atmosphere::new(1013.25, 20.0, 19.0).is_err());
        assert!(Atmosphere::new(200.0, 20.0, 5.0).is_err());
    }

    /// (GHz, γ_o, γ_w) dB/km from itur 0.4.0 (see the test above).
    const ITUR_0_4_0: &[(f64, f64, f64)] = &[
        (1.0, 5.3102879309e-03, 5.0485836274e-05),
        (5.0, 7.2580528725e-03, 1.3026530319e-03),
        (10.0, 8.0645829596e-03, 5.9253419701e-03),
        (15.0, 9.4316476806e-03, 1.9295194642e-02),
        (22.235, 1.3033682110e-02, 1.8031100140e-01),
        (30.0, 2.1031599739e-02, 7.1825991300e-02),
        (38.0, 4.1357487174e-02, 7.3825907424e-02),
        (50.0, 2.7177931201e-01, 1.1025614474e-01),
        (55.0, 4.1447177224e+00, 1.3060822378e-01),
        (58.32, 1.2758544367e+01, 1.4556144879e-01),
        (60.0, 1.4502093274e+01, 1.5359070013e-01),
        (60.48, 1.4839626396e+01, 1.5594796938e-01),
        (62.0, 1.3884719955e+01, 1.6362494024e-01),
        (65.0, 3.7583352080e+00, 1.8008527301e-01),
        (70.0, 2.9798988243e-01, 2.0822267330e-01),
        (73.0, 1.6373296467e-01, 2.2436603793e-01),
        (80.0, 7.0888265953e-02, 2.6788319428e-01),
        (90.0, 3.8110438361e-02, 3.3921675271e-01),
        (100.0, 3.2971401459e-02, 4.2101018557e-01),
        (118.75, 1.3335309022e+00, 6.1005099033e-01),
        (150.0, 1.4067186535e-02, 1.1001093271e+00),
        (183.31, 1.2497458789e-02, 2.8247372243e+01),
        (300.0, 2.5255446590e-02, 5.1778679624e+00),
    ];
}
