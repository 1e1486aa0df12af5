//! Antenna patterns in the horizontal plane: sector (flat-top), parabolic (3GPP element
//! cut) and omni.
//!
//! # Units
//! Gains in dBi, angles in degrees off boresight.
//!
//! # References
//! - Sector ("flat-top") model: T. Bai and R. W. Heath, "Coverage and rate analysis for
//!   millimeter-wave cellular networks", IEEE Trans. Wireless Commun. 14(2), 2015 (from memory).
//! - Parabolic cut: 3GPP TR 38.901, Table 7.3-1, A_H(φ) = −min(12 (φ/φ_3dB)², A_max).

use crate::model::units::db_to_lin;

/// A validated horizontal antenna pattern.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Pattern {
    /// Flat main lobe of `beamwidth_deg` at `gain_dbi`, flat `sidelobe_dbi` elsewhere.
    Sector {
        /// Full main-lobe width, degrees, in (0, 360].
        beamwidth_deg: f64,
        /// Main-lobe gain, dBi.
        gain_dbi: f64,
        /// Gain outside the main lobe, dBi.
        sidelobe_dbi: f64,
    },
    /// G(φ) = gain − min(12 (φ/HPBW)², gain − floor).
    Parabolic {
        /// Half-power (−3 dB) full beamwidth, degrees.
        beamwidth_deg: f64,
        /// Boresight gain, dBi.
        gain_dbi: f64,
        /// Floor of the pattern, dBi.
        floor_dbi: f64,
    },
    /// The same gain in every direction.
    Omni {
        /// Gain, dBi.
        gain_dbi: f64,
    },
}

/// Allowed gain range in dBi for any antenna.
pub const GAIN_RANGE_DBI: (f64, f64) = (-30.0, 60.0);

impl Pattern {
    /// Gain in dBi at `off_axis_deg` from boresight (any sign, any number of turns).
    pub fn gain_dbi(&self, off_axis_deg: f64) -> f64 {
        let mut a = off_axis_deg.abs() % 360.0;
        if a > 180.0 {
            a = 360.0 - a;
        }
        match *self {
            Pattern::Sector { beamwidth_deg, gain_dbi, sidelobe_dbi } => {
                if a <= beamwidth_deg / 2.0 {
                    gain_dbi
                } else {
                    sidelobe_dbi
                }
            }
            Pattern::Parabolic { beamwidth_deg, gain_dbi, floor_dbi } => {
                gain_dbi - (12.0 * (a / beamwidth_deg).powi(2)).min(gain_dbi - floor_dbi)
            }
            Pattern::Omni { gain_dbi } => gain_dbi,
        }
    }

    /// Largest gain of the pattern, dBi.
    pub fn max_gain_dbi(&self) -> f64 {
        match *self {
            Pattern::Sector { gain_dbi, .. } | Pattern::Parabolic { gain_dbi, .. } | Pattern::Omni { gain_dbi } => {
                gain_dbi
            }
        }
    }

    /// Main-lobe width in degrees (360 for omni).
    pub fn beamwidth_deg(&self) -> f64 {
        match *self {
            Pattern::Sector { beamwidth_deg, .. } | Pattern::Parabolic { beamwidth_deg, .. } => beamwidth_deg,
            Pattern::Omni { .. } => 360.0,
        }
    }

    /// Whether the pattern has no preferred direction.
    pub fn is_omni(&self) -> bool {
        matches!(self, Pattern::Omni { .. })
    }

    /// Short name used in files: `sector`, `parabolic` or `omni`.
    pub fn kind(&self) -> &'static str {
        match self {
            Pattern::Sector { .. } => "sector",
            Pattern::Parabolic { .. } => "parabolic",
            Pattern::Omni { .. } => "omni",
        }
    }

    /// The value `c·|c|` with c = cos(HPBW/2), for the trigonometry-free main-lobe test
    /// `t·|t| ≥ c·|c|·|w|²` where t = b·w (b the unit boresight, w the offset vector).
    /// Because x ↦ x|x| is increasing, this is exactly `b·w ≥ |w| cos(HPBW/2)`.
    pub fn signed_cos_sq_half_beam(&self) -> f64 {
        let c = (self.beamwidth_deg() / 2.0).to_radians().cos();
        if self.beamwidth_deg() >= 360.0 { -1.0 } else { c * c.abs() }
    }

    /// Linear gain table over s = sin(φ/2) in [0, 1] (φ the off-axis angle), `len` entries,
    /// for trigonometry-free evaluation: s² = (|w| − b·w) / (2|w|). Uniform steps in s are
    /// nearly uniform in φ (2 asin s), so narrow beams keep their resolution.
    pub fn gain_table_over_half_angle_sine(&self, len: usize) -> Vec<f32> {
        (0..len)
            .map(|i| {
                let s = i as f64 / (len - 1) as f64;
                let phi = 2.0 * s.min(1.0).asin().to_degrees();
                db_to_lin(self.gain_dbi(phi)) as f32
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // 3GPP TR 38.901 Table 7.3-1 element: 65° HPBW, 8 dBi, A_max 30 dB (floor −22 dBi).
    // Reference values G(φ) = 8, 5, −4, −15.006, −22 dBi at φ = 0, 32.5, 65, 90, 180°
    // (shared model notes, computed independently with numpy).
    #[test]
    fn tr38901_element_cut() {
        let p = Pattern::Parabolic { beamwidth_deg: 65.0, gain_dbi: 8.0, floor_dbi: -22.0 };
        for (phi, want) in [(0.0, 8.0), (32.5, 5.0), (65.0, -4.0), (90.0, -15.006), (180.0, -22.0), (-90.0, -15.006)] {
            assert!((p.gain_dbi(phi) - want).abs() < 1e-3, "{phi}: {}", p.gain_dbi(phi));
        }
    }

    // Flat-top sector (Bai and Heath 2015): main gain within ±HPBW/2, side gain outside.
    #[test]
    fn sector_edges() {
        let p = Pattern::Sector { beamwidth_deg: 30.0, gain_dbi: 20.0, sidelobe_dbi: -5.0 };
        assert_eq!(p.gain_dbi(14.99), 20.0);
        assert_eq!(p.gain_dbi(15.01), -5.0);
        assert_eq!(p.gain_dbi(345.5), 20.0);
    }

    // The dot-product test agrees with the angle test on a sweep, for narrow, wide (> 180°)
    // and full beams (common practice: monotonic transform of cos).
    #[test]
    fn dot_product_test_matches_angle() {
        for bw in [2.0, 30.0, 120.0, 200.0, 300.0, 360.0] {
            let p = Pattern::Sector { beamwidth_deg: bw, gain_dbi: 10.0, sidelobe_dbi: -10.0 };
            let cc = p.signed_cos_sq_half_beam();
            for k in 0..3600 {
                let a = k as f64 * 0.1 + 0.05;
                let (wx, wy) = (a.to_radians().sin() * 7.0, a.to_radians().cos() * 7.0);
                let t = wy; // boresight north
                let inside = t * t.abs() >= cc * (wx * wx + wy * wy);
                assert_eq!(inside, p.gain_dbi(a) == 10.0, "bw {bw} angle {a}");
            }
        }
    }

    #[test]
    fn half_angle_table_reproduces_pattern() {
        let p = Pattern::Parabolic { beamwidth_deg: 2.0, gain_dbi: 38.0, floor_dbi: -2.0 };
        let t = p.gain_table_over_half_angle_sine(8192);
        // Entry i sits at s = i/(len-1); φ = 2 asin s.
        let i = 100;
        let phi = 2.0 * (i as f64 / 8191.0).asin().to_degrees();
        assert!((10.0 * (t[i] as f64).log10() - p.gain_dbi(phi)).abs() < 1e-4);
    }
}
