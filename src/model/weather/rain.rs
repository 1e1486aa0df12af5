//! Rain: the specific attenuation γ_R = k R^α of ITU-R P.838-3 and the attenuation exceeded
//! for p % of an average year on a terrestrial path after ITU-R P.530-17 §2.4.1, and its
//! inverse (the percentage of time a fade margin is exceeded).
//!
//! - P.838-3 eqs. 2 and 3: log₁₀ k = Σⱼ aⱼ exp(−((log₁₀ f − bⱼ)/cⱼ)²) + m_k log₁₀ f + c_k and
//!   α = Σⱼ aⱼ exp(−((log₁₀ f − bⱼ)/cⱼ)²) + m_α log₁₀ f + c_α, Tables 1 to 4 for k_H, k_V,
//!   α_H, α_V; eqs. 4 and 5 combine them for the path elevation θ and the polarisation tilt
//!   τ: k = [k_H + k_V + (k_H − k_V) cos²θ cos 2τ]/2,
//!   α = [k_H α_H + k_V α_V + (k_H α_H − k_V α_V) cos²θ cos 2τ]/(2k).
//! - P.530-17 §2.4.1: distance factor r = 1/(0.477 d^0.633 R^(0.073α) f^0.123 −
//!   10.579 (1 − exp(−0.024 d))) with at most 2.5 (r = 2.5 when the denominator is below 0.4,
//!   which also covers a negative one), A₀.₀₁ = γ_R d r (eqs. 32, 33);
//!   A_p = A₀.₀₁ C₁ p^−(C₂ + C₃ log₁₀ p) for 0.001 ≤ p ≤ 1 (eq. 34), with
//!   C₀ = 0.12 + 0.4 [log₁₀(f/10)]^0.8 for f ≥ 10 GHz and 0.12 below, C₁ = 0.07^C₀ 0.12^(1−C₀),
//!   C₂ = 0.855 C₀ + 0.546 (1 − C₀), C₃ = 0.139 C₀ + 0.043 (1 − C₀) (eq. 35).
//! - Editions up to P.530-16 scaled by latitude instead (from memory): at |latitude| ≥ 30°
//!   A_p/A₀.₀₁ = 0.12 p^−(0.546 + 0.043 log₁₀ p), below 30° 0.07 p^−(0.855 + 0.139 log₁₀ p),
//!   which are the two ends of the C₀ family (C₀ = 0 and C₀ = 1); [`Scaling::Latitude`]
//!   selects them.
//!
//! The inverse solves the quadratic in x = log₁₀ p on the branch where A_p falls with p.

use crate::error::ModelError;

/// Coefficients of one P.838-3 regression: (aⱼ, bⱼ, cⱼ) terms, then (m, c).
struct Regression {
    terms: &'static [(f64, f64, f64)],
    m: f64,
    c: f64,
}

impl Regression {
    fn eval(&self, f_ghz: f64) -> f64 {
        let x = f_ghz.log10();
        self.terms.iter().map(|&(a, b, c)| a * (-((x - b) / c).powi(2)).exp()).sum::<f64>() + self.m * x + self.c
    }
}

// ITU-R P.838-3 Table 1 (k_H), Table 2 (k_V), Table 3 (α_H), Table 4 (α_V).
const K_H: Regression = Regression {
    terms: &[
        (-5.33980, -0.10008, 1.13098),
        (-0.35351, 1.26970, 0.45400),
        (-0.23789, 0.86036, 0.15354),
        (-0.94158, 0.64552, 0.16817),
    ],
    m: -0.18961,
    c: 0.71147,
};
const K_V: Regression = Regression {
    terms: &[
        (-3.80595, 0.56934, 0.81061),
        (-3.44965, -0.22911, 0.51059),
        (-0.39902, 0.73042, 0.11899),
        (0.50167, 1.07319, 0.27195),
    ],
    m: -0.16398,
    c: 0.63297,
};
const ALPHA_H: Regression = Regression {
    terms: &[
        (-0.14318, 1.82442, -0.55187),
        (0.29591, 0.77564, 0.19822),
        (0.32177, 0.63773, 0.13164),
        (-5.37610, -0.96230, 1.47828),
        (16.1721, -3.29980, 3.43990),
    ],
    m: 0.67849,
    c: -1.95537,
};
const ALPHA_V: Regression = Regression {
    terms: &[
        (-0.07771, 2.33840, -0.76284),
        (0.56727, 0.95545, 0.54039),
        (-0.20238, 1.14520, 0.26809),
        (-48.2991, 0.791669, 0.116226),
        (48.5833, 0.791459, 0.116479),
    ],
    m: -0.053739,
    c: 0.83433,
};

/// k and α for horizontal and vertical polarisation at one frequency (P.838-3).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RainCoefficients {
    /// k_H.
    pub k_h: f64,
    /// α_H.
    pub alpha_h: f64,
    /// k_V.
    pub k_v: f64,
    /// α_V.
    pub alpha_v: f64,
}

impl RainCoefficients {
    /// The regressions at `f_ghz` (valid 1 to 1000 GHz).
    pub fn at(f_ghz: f64) -> RainCoefficients {
        RainCoefficients {
            k_h: 10f64.powf(K_H.eval(f_ghz)),
            alpha_h: ALPHA_H.eval(f_ghz),
            k_v: 10f64.powf(K_V.eval(f_ghz)),
            alpha_v: ALPHA_V.eval(f_ghz),
        }
    }

    /// (k, α) for a path with cos²θ = `cos2_elev` and polarisation tilt τ from the horizontal
    /// given as cos 2τ = `cos_2tau` (1 horizontal, −1 vertical, 0 slant or circular)
    /// (P.838-3 eqs. 4, 5).
    pub fn combined(&self, cos2_elev: f64, cos_2tau: f64) -> (f64, f64) {
        let w = cos2_elev * cos_2tau;
        let k = (self.k_h + self.k_v + (self.k_h - self.k_v) * w) / 2.0;
        let ka = self.k_h * self.alpha_h + self.k_v * self.alpha_v;
        let kd = self.k_h * self.alpha_h - self.k_v * self.alpha_v;
        (k, (ka + kd * w) / (2.0 * k))
    }
}

/// How attenuation at 0.01 % scales to other percentages of time.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scaling {
    /// ITU-R P.530-17 eq. 35: coefficients from the frequency (the current edition).
    Frequency,
    /// Editions up to P.530-16: coefficients from the path's latitude (≥ 30° or below).
    Latitude,
}

/// Least percentage of time the P.530 scaling covers.
pub const P_MIN: f64 = 0.001;
/// Largest percentage of time the P.530 scaling covers.
pub const P_MAX: f64 = 1.0;
/// Minutes in an average year (365.25 days).
pub const MINUTES_PER_YEAR: f64 = 525_960.0;

/// The site's rain climate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rain {
    /// Rain rate exceeded for 0.01 % of an average year (1-minute integration), mm/h.
    pub rate_mm_h: f64,
    /// How A₀.₀₁ scales to other percentages.
    pub scaling: Scaling,
}

/// One path's rain figures: A₀.₀₁ and the scaling coefficients.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RainPath {
    /// Attenuation exceeded for 0.01 % of the time, dB.
    pub a001_db: f64,
    /// C₁.
    pub c1: f64,
    /// C₂.
    pub c2: f64,
    /// C₃.
    pub c3: f64,
}

/// How the availability relates to the range the method covers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Bound {
    /// Within 0.001 % to 1 % of the time.
    Within,
    /// The margin exceeds A at 0.001 %: at least 99.999 %.
    AtLeast,
    /// The margin is below A at 1 %: at most 99 %.
    AtMost,
    /// No margin without rain: the link is below its threshold.
    NoMargin,
}

/// Availability of a path with a given fade margin.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Availability {
    /// Percentage of an average year the margin is not exceeded (clamped to the range).
    pub pct: f64,
    /// Minutes per average year the margin is exceeded.
    pub outage_min_per_year: f64,
    /// Whether `pct` is a bound.
    pub bound: Bound,
}

impl Bound {
    /// The name in link tables and GeoJSON (as serde writes it).
    pub fn name(self) -> &'static str {
        match self {
            Bound::Within => "within",
            Bound::AtLeast => "at_least",
            Bound::AtMost => "at_most",
            Bound::NoMargin => "no_margin",
        }
    }
}

impl Rain {
    /// Checks the rain rate: (0, 250] mm/h (ITU-R P.837's maps of R₀.₀₁ stay below this).
    pub fn new(rate_mm_h: f64, scaling: Scaling) -> Result<Rain, ModelError> {
        if !(rate_mm_h.is_finite() && rate_mm_h > 0.0 && rate_mm_h <= 250.0) {
            return Err(ModelError::out_of_range("rate_mm_h", rate_mm_h, "(0, 250] mm/h"));
        }
        Ok(Rain { rate_mm_h, scaling })
    }

    /// The scaling and its source, for reports.
    pub fn scaling_words(&self) -> &'static str {
        match self.scaling {
            Scaling::Frequency => "P.530-17 frequency scaling",
            Scaling::Latitude => "latitude scaling of editions up to P.530-16",
        }
    }

    /// Scaling coefficients (C₁, C₂, C₃) at `f_ghz` and |latitude| `lat_deg`.
    pub fn coefficients(&self, f_ghz: f64, lat_deg: f64) -> (f64, f64, f64) {
        let c0 = match self.scaling {
            Scaling::Frequency if f_ghz >= 10.0 => 0.12 + 0.4 * (f_ghz / 10.0).log10().powf(0.8),
            Scaling::Frequency => 0.12,
            Scaling::Latitude if lat_deg.abs() >= 30.0 => 0.0,
            Scaling::Latitude => 1.0,
        };
        (0.07f64.powf(c0) * 0.12f64.powf(1.0 - c0), 0.855 * c0 + 0.546 * (1.0 - c0), 0.139 * c0 + 0.043 * (1.0 - c0))
    }

    /// The path of `d_km` at `f_ghz` with P.838 coefficients (k, α), at latitude `lat_deg`.
    pub fn path(&self, d_km: f64, f_ghz: f64, k: f64, alpha: f64, lat_deg: f64) -> RainPath {
        let gamma = k * self.rate_mm_h.powf(alpha);
        let den = 0.477 * d_km.powf(0.633) * self.rate_mm_h.powf(0.073 * alpha) * f_ghz.powf(0.123)
            - 10.579 * (1.0 - (-0.024 * d_km).exp());
        let r = if den < 0.4 { 2.5 } else { 1.0 / den };
        let (c1, c2, c3) = self.coefficients(f_ghz, lat_deg);
        RainPath { a001_db: gamma * d_km * r, c1, c2, c3 }
    }
}

impl RainPath {
    /// Attenuation exceeded for `p_pct` % of an average year, dB (`p_pct` in [0.001, 1]).
    pub fn exceeded_db(&self, p_pct: f64) -> f64 {
        self.a001_db * self.c1 * p_pct.powf(-(self.c2 + self.c3 * p_pct.log10()))
    }

    /// Percentage of time `margin_db` is exceeded, solved on x = log₁₀ p:
    /// C₃ x² + C₂ x + log₁₀(M / (A₀.₀₁ C₁)) = 0, root on the falling branch. `None` when the
    /// margin is above the curve's maximum (beyond 0.001 % for every valid edition).
    pub fn percent_exceeded(&self, margin_db: f64) -> Option<f64> {
        let y = (margin_db / (self.a001_db * self.c1)).log10();
        let disc = self.c2 * self.c2 - 4.0 * self.c3 * y;
        (disc >= 0.0).then(|| 10f64.powf((-self.c2 + disc.sqrt()) / (2.0 * self.c3)))
    }

    /// Attenuation exceeded for `100 − target_pct` % of the time, dB.
    pub fn fade_at_target_db(&self, target_pct: f64) -> f64 {
        self.exceeded_db(100.0 - target_pct)
    }

    /// Availability for a fade margin, clamped to the method's range [`P_MIN`, `P_MAX`].
    pub fn availability(&self, margin_db: f64) -> Availability {
        let (p, bound) = if margin_db.is_nan() || margin_db <= 0.0 {
            (100.0, Bound::NoMargin)
        } else if self.a001_db <= 0.0 {
            (P_MIN, Bound::AtLeast)
        } else {
            match self.percent_exceeded(margin_db) {
                None => (P_MIN, Bound::AtLeast),
                Some(p) if p < P_MIN => (P_MIN, Bound::AtLeast),
                Some(p) if p > P_MAX => (P_MAX, Bound::AtMost),
                Some(p) => (p, Bound::Within),
            }
        };
        Availability { pct: 100.0 - p, outage_min_per_year: p / 100.0 * MINUTES_PER_YEAR, bound }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // ITU-R P.838-3 regressions against the `itur` package 0.4.0 (PyPI),
    // itu838._ITU838_3_.rain_specific_attenuation_coefficients at el = 0 with τ = 0 (k_H,
    // α_H) and τ = 90° (k_V, α_V), computed once and embedded. Tolerance 1e-9 relative: the
    // same regressions in double precision.
    #[test]
    fn p838_coefficients_match_itur() {
        for &(f, kh, ah, kv, av) in P838_ITUR_0_4_0 {
            let c = RainCoefficients::at(f);
            for (got, want, what) in
                [(c.k_h, kh, "k_H"), (c.alpha_h, ah, "α_H"), (c.k_v, kv, "k_V"), (c.alpha_v, av, "α_V")]
            {
                assert!(((got - want) / want).abs() < 1e-9, "{f} GHz {what}: {got} vs {want}");
            }
        }
    }

    // P.838-3 Table 5 (the Recommendation's tabulated values, four significant figures):
    // its rows at 10, 20 and 30 GHz, from memory; the regression reproduces the table to
    // its rounding (half a unit in the fourth figure, 5e-4 relative with margin).
    #[test]
    fn p838_regression_reproduces_the_published_table() {
        for &(f, kh, ah, kv, av) in P838_TABLE5 {
            let c = RainCoefficients::at(f);
            for (got, want) in [(c.k_h, kh), (c.alpha_h, ah), (c.k_v, kv), (c.alpha_v, av)] {
                assert!(((got - want) / want).abs() < 5e-4, "{f} GHz: {got} vs {want}");
            }
        }
    }

    // P.838-3 eqs. 4, 5: horizontal path, τ = 0 gives the horizontal pair, τ = 90° the
    // vertical one, and at θ = 90° (cos²θ = 0) both give the mean k.
    #[test]
    fn p838_combination_limits() {
        let c = RainCoefficients::at(28.0);
        let (k, a) = c.combined(1.0, 1.0);
        assert!((k - c.k_h).abs() < 1e-15 && (a - c.alpha_h).abs() < 1e-12);
        let (k, a) = c.combined(1.0, -1.0);
        assert!((k - c.k_v).abs() < 1e-15 && (a - c.alpha_v).abs() < 1e-12);
        let (k, _) = c.combined(0.0, 1.0);
        assert!((k - (c.k_h + c.k_v) / 2.0).abs() < 1e-15);
    }

    // ITU-R P.530-17 §2.4.1 against `itur` 0.4.0, itu530.rain_attenuation(lat=51.5, lon=0,
    // d, f, el=0, p, tau, R001=42) (its latitude and longitude are unused when R001 is
    // given), computed once and embedded. Tolerance 1e-9 relative.
    #[test]
    fn p530_rain_attenuation_matches_itur() {
        let rain = Rain::new(42.0, Scaling::Frequency).unwrap();
        for &(f, d, tau, p, want) in P530_ITUR_0_4_0 {
            let (k, a) = RainCoefficients::at(f).combined(1.0, (2.0 * tau as f64).to_radians().cos());
            let got = rain.path(d, f, k, a, 51.5).exceeded_db(p);
            assert!(((got - want) / want).abs() < 1e-9, "{f} GHz {d} km τ {tau} p {p}: {got} vs {want}");
        }
    }

    // The inverse: the availability of a margin, turned back into a margin by the forward
    // law, gives the margin within 0.01 dB (the check), over the covered range and
    // for both scalings.
    #[test]
    fn availability_inverts_back_to_the_margin() {
        for scaling in [Scaling::Frequency, Scaling::Latitude] {
            for lat in [10.0, 45.0] {
                let rain = Rain::new(42.0, scaling).unwrap();
                for &(f, d) in &[(15.0, 8.0), (28.0, 2.0), (38.0, 1.0), (60.48, 0.3), (80.0, 0.8)] {
                    let (k, a) = RainCoefficients::at(f).combined(1.0, -1.0);
                    let path = rain.path(d, f, k, a, lat);
                    for p in [0.0012, 0.003, 0.01, 0.05, 0.3, 0.95] {
                        let m = path.exceeded_db(p);
                        let av = path.availability(m);
                        assert_eq!(av.bound, Bound::Within);
                        let back = path.exceeded_db(100.0 - av.pct);
                        assert!((back - m).abs() < 0.01, "{f} GHz {d} km p {p}: {m} dB -> {back} dB");
                        assert!((av.outage_min_per_year - p / 100.0 * MINUTES_PER_YEAR).abs() < 1e-6 * p * 1e4);
                    }
                    assert_eq!(path.availability(path.exceeded_db(0.001) * 1.01).bound, Bound::AtLeast);
                    assert_eq!(path.availability(path.exceeded_db(1.0) * 0.99).bound, Bound::AtMost);
                    assert_eq!(path.availability(-1.0).bound, Bound::NoMargin);
                }
            }
        }
    }

    // The latitude rule of editions up to P.530-16 (from memory): 0.12 p^−(0.546 + 0.043 log p)
    // at or above 30°, 0.07 p^−(0.855 + 0.139 log p) below; at 0.01 % both give 1 (the rule
    // is a scaling of A₀.₀₁).
    #[test]
    fn p530_latitude_scaling_is_the_earlier_rule() {
        let rain = Rain::new(42.0, Scaling::Latitude).unwrap();
        let path_n = rain.path(2.0, 28.0, 0.2, 0.95, 52.0);
        let path_s = rain.path(2.0, 28.0, 0.2, 0.95, 12.0);
        for p in [0.001, 0.1, 1.0f64] {
            let n = 0.12 * p.powf(-(0.546 + 0.043 * p.log10()));
            let s = 0.07 * p.powf(-(0.855 + 0.139 * p.log10()));
            assert!((path_n.exceeded_db(p) / path_n.a001_db - n).abs() < 1e-12);
            assert!((path_s.exceeded_db(p) / path_s.a001_db - s).abs() < 1e-12);
        }
        assert!((path_n.exceeded_db(0.01) / path_n.a001_db - 1.0).abs() < 0.01);
        assert!((path_s.exceeded_db(0.01) / path_s.a001_db - 1.0).abs() < 0.01);
    }

    /// (GHz, k_H, α_H, k_V, α_V) from itur 0.4.0.
    const P838_ITUR_0_4_0: &[(f64, f64, f64, f64, f64)] = &[
        (1.0, 2.589270527644e-05, 9.690744378841e-01, 3.079736065391e-05, 8.592205268700e-01),
        (4.0, 1.071345198073e-04, 1.600881601398e+00, 2.460771983720e-04, 1.247549172484e+00),
        (10.0, 1.216698798946e-02, 1.257096854842e+00, 1.129187030355e-02, 1.215645011686e+00),
        (20.0, 9.164266906625e-02, 1.056781102603e+00, 9.611120646702e-02, 9.846899278333e-01),
        (28.0, 2.050912538134e-01, 9.678759069332e-01, 1.964463181430e-01, 9.276691248304e-01),
        (30.0, 2.403081850205e-01, 9.484573169043e-01, 2.290903229162e-01, 9.129232276383e-01),
        (38.0, 4.001077230720e-01, 8.815574009733e-01, 3.844034555125e-01, 8.552190876015e-01),
        (60.0, 8.606130374907e-01, 7.656322814886e-01, 8.515200700237e-01, 7.485648155423e-01),
        (60.48, 8.695451615118e-01, 7.639037871945e-01, 8.606093175250e-01, 7.470412572484e-01),
        (80.0, 1.170445031967e+00, 7.114945627491e-01, 1.166831029626e+00, 7.020763950735e-01),
        (100.0, 1.367108269119e+00, 6.814500103329e-01, 1.368047306269e+00, 6.765405201985e-01),
        (300.0, 1.628575632460e+00, 6.296464838095e-01, 1.628594253125e+00, 6.262340039356e-01),
    ];
    /// (GHz, k_H, α_H, k_V, α_V): P.838-3 Table 5 rows, from memory.
    const P838_TABLE5: &[(f64, f64, f64, f64, f64)] = &[
        (10.0, 0.01217, 1.2571, 0.01129, 1.2156),
        (20.0, 0.09164, 1.0568, 0.09611, 0.9847),
        (30.0, 0.2403, 0.9485, 0.2291, 0.9129),
    ];
    /// (GHz, km, τ degrees, p %, A_p dB) from itur 0.4.0 with R₀.₀₁ = 42 mm/h.
    const P530_ITUR_0_4_0: &[(f64, f64, u32, f64, f64)] = &[
        (15.0, 0.3, 0, 0.001, 4.389682048676e+00),
        (15.0, 0.3, 0, 0.01, 2.233572228828e+00),
        (15.0, 0.3, 0, 0.1, 8.460314697512e-01),
        (15.0, 0.3, 0, 1.0, 2.385572471287e-01),
        (15.0, 0.3, 90, 0.001, 3.647556088065e+00),
        (15.0, 0.3, 90, 0.01, 1.855961295387e+00),
        (15.0, 0.3, 90, 0.1, 7.030001726701e-01),
        (15.0, 0.3, 90, 1.0, 1.982264158241e-01),
        (15.0, 1.0, 0, 0.001, 8.958112035729e+00),
        (15.0, 1.0, 0, 0.01, 4.558095562245e+00),
        (15.0, 1.0, 0, 0.1, 1.726513357401e+00),
        (15.0, 1.0, 0, 1.0, 4.868285499990e-01),
        (15.0, 1.0, 90, 0.001, 7.670829511922e+00),
        (15.0, 1.0, 90, 0.01, 3.903096301718e+00),
        (15.0, 1.0, 90, 0.1, 1.478413036347e+00),
        (15.0, 1.0, 90, 1.0, 4.168711882241e-01),
        (15.0, 5.0, 0, 0.001, 2.236860860112e+01),
        (15.0, 5.0, 0, 0.01, 1.138166783265e+01),
        (15.0, 5.0, 0, 0.1, 4.311142948680e+00),
        (15.0, 5.0, 0, 1.0, 1.215621913116e+00),
        (15.0, 5.0, 90, 0.001, 1.938093824396e+01),
        (15.0, 5.0, 90, 0.01, 9.861471730830e+00),
        (15.0, 5.0, 90, 0.1, 3.735323762832e+00),
        (15.0, 5.0, 90, 1.0, 1.053256983759e+00),
        (28.0, 0.3, 0, 0.001, 1.076016010276e+01),
        (28.0, 0.3, 0, 0.01, 5.718288494690e+00),
        (28.0, 0.3, 0, 0.1, 2.154437670557e+00),
        (28.0, 0.3, 0, 1.0, 5.754695505103e-01),
        (28.0, 0.3, 90, 0.001, 8.868493585514e+00),
        (28.0, 0.3, 90, 0.01, 4.712997237121e+00),
        (28.0, 0.3, 90, 0.1, 1.775681447047e+00),
        (28.0, 0.3, 90, 1.0, 4.743003792343e-01),
        (28.0, 1.0, 0, 0.001, 2.094486048788e+01),
        (28.0, 1.0, 0, 0.01, 1.113075954326e+01),
        (28.0, 1.0, 0, 0.1, 4.193654742004e+00),
        (28.0, 1.0, 0, 1.0, 1.120162649566e+00),
        (28.0, 1.0, 90, 0.001, 1.752391317504e+01),
        (28.0, 1.0, 90, 0.01, 9.312760231617e+00),
        (28.0, 1.0, 90, 0.1, 3.508700457924e+00),
        (28.0, 1.0, 90, 1.0, 9.372052406023e-01),
        (28.0, 5.0, 0, 0.001, 5.139064037951e+01),
        (28.0, 5.0, 0, 0.01, 2.731060735254e+01),
        (28.0, 5.0, 0, 0.1, 1.028961748620e+01),
        (28.0, 5.0, 0, 1.0, 2.748448762584e+00),
        (28.0, 5.0, 90, 0.001, 4.323193524401e+01),
        (28.0, 5.0, 90, 0.01, 2.297481408717e+01),
        (28.0, 5.0, 90, 0.1, 8.656052416628e+00),
        (28.0, 5.0, 90, 1.0, 2.312108937505e+00),
        (38.0, 0.3, 0, 0.001, 1.491524060858e+01),
        (38.0, 0.3, 0, 0.01, 8.079330338613e+00),
        (38.0, 0.3, 0, 0.1, 3.036856093192e+00),
        (38.0, 0.3, 0, 1.0, 7.920941487281e-01),
        (38.0, 0.3, 90, 0.001, 1.298634582102e+01),
        (38.0, 0.3, 90, 0.01, 7.034481074290e+00),
        (38.0, 0.3, 90, 0.1, 2.644118487247e+00),
        (38.0, 0.3, 90, 1.0, 6.896575662532e-01),
        (38.0, 1.0, 0, 0.001, 2.848375897162e+01),
        (38.0, 1.0, 0, 0.01, 1.542916430627e+01),
        (38.0, 1.0, 0, 0.1, 5.799509324728e+00),
        (38.0, 1.0, 0, 1.0, 1.512668780029e+00),
        (38.0, 1.0, 90, 0.001, 2.504390032367e+01),
        (38.0, 1.0, 90, 0.01, 1.356585180167e+01),
        (38.0, 1.0, 90, 0.1, 5.099128018860e+00),
        (38.0, 1.0, 90, 1.0, 1.329990405673e+00),
        (38.0, 5.0, 0, 0.001, 6.941665418131e+01),
        (38.0, 5.0, 0, 0.01, 3.760181245816e+01),
        (38.0, 5.0, 0, 0.1, 1.413375719184e+01),
        (38.0, 5.0, 0, 1.0, 3.686465880388e+00),
        (38.0, 5.0, 90, 0.001, 6.124422475838e+01),
        (38.0, 5.0, 90, 0.01, 3.317494743402e+01),
        (38.0, 5.0, 90, 0.1, 1.246978858815e+01),
        (38.0, 5.0, 90, 1.0, 3.252457895088e+00),
        (60.48, 0.3, 0, 0.001, 2.031518541927e+01),
        (60.48, 0.3, 0, 0.01, 1.131106817658e+01),
        (60.48, 0.3, 0, 0.1, 4.237272851230e+00),
        (60.48, 0.3, 0, 1.0, 1.067995005640e+00),
        (60.48, 0.3, 90, 0.001, 1.887828775733e+01),
        (60.48, 0.3, 90, 0.01, 1.051103376481e+01),
        (60.48, 0.3, 90, 0.1, 3.937569583587e+00),
        (60.48, 0.3, 90, 1.0, 9.924554772084e-01),
        (60.48, 1.0, 0, 0.001, 3.750245220416e+01),
        (60.48, 1.0, 0, 0.01, 2.088057701250e+01),
        (60.48, 1.0, 0, 0.1, 7.822134984233e+00),
        (60.48, 1.0, 0, 1.0, 1.971551370400e+00),
        (60.48, 1.0, 90, 0.001, 3.506677595535e+01),
        (60.48, 1.0, 90, 0.01, 1.952444367984e+01),
        (60.48, 1.0, 90, 0.1, 7.314109847840e+00),
        (60.48, 1.0, 90, 1.0, 1.843504787738e+00),
        (60.48, 5.0, 0, 0.001, 9.034133160315e+01),
        (60.48, 5.0, 0, 0.01, 5.030015428545e+01),
        (60.48, 5.0, 0, 0.1, 1.884309022269e+01),
        (60.48, 5.0, 0, 1.0, 4.749358126138e+00),
        (60.48, 5.0, 90, 0.001, 8.465011515831e+01),
        (60.48, 5.0, 90, 0.01, 4.713140460944e+01),
        (60.48, 5.0, 90, 0.1, 1.765603549321e+01),
        (60.48, 5.0, 90, 1.0, 4.450163675600e+00),
        (80.0, 0.3, 0, 0.001, 2.212698936756e+01),
        (80.0, 0.3, 0, 0.01, 1.251658679667e+01),
        (80.0, 0.3, 0, 0.1, 4.679761501133e+00),
        (80.0, 0.3, 0, 1.0, 1.156473650365e+00),
        (80.0, 0.3, 90, 0.001, 2.129566667094e+01),
        (80.0, 0.3, 90, 0.01, 1.204633200894e+01),
        (80.0, 0.3, 90, 0.1, 4.503940385749e+00),
        (80.0, 0.3, 90, 1.0, 1.113024323498e+00),
        (80.0, 1.0, 0, 0.001, 3.975919243592e+01),
        (80.0, 1.0, 0, 0.01, 2.249060524336e+01),
        (80.0, 1.0, 0, 0.1, 8.408895353407e+00),
        (80.0, 1.0, 0, 1.0, 2.078025964044e+00),
        (80.0, 1.0, 90, 0.001, 3.839727997937e+01),
        (80.0, 1.0, 90, 0.01, 2.172021144108e+01),
        (80.0, 1.0, 90, 0.1, 8.120856823799e+00),
        (80.0, 1.0, 90, 1.0, 2.006845206285e+00),
        (80.0, 5.0, 0, 0.001, 9.493205688860e+01),
        (80.0, 5.0, 0, 0.01, 5.370027119799e+01),
        (80.0, 5.0, 0, 0.1, 2.007771494218e+01),
        (80.0, 5.0, 0, 1.0, 4.961652059522e+00),
        (80.0, 5.0, 90, 0.001, 9.178230714312e+01),
        (80.0, 5.0, 90, 0.01, 5.191855044862e+01),
        (80.0, 5.0, 90, 0.1, 1.941155664327e+01),
        (80.0, 5.0, 90, 1.0, 4.797029456538e+00),
    ];
}
