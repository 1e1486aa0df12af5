//! Antenna patterns in the horizontal plane, one file per pattern: sector (flat-top),
//! parabolic (3GPP element cut) and omni. Every pattern is built through a validating
//! constructor, gives its gain off boresight in double precision, lowers to the form the
//! engine evaluates ([`GainForm`]) and to its gain law under a uniformly random orientation
//! ([`GainLaw`], for the random field).
//!
//! # Units
//! Gains in dBi, angles in degrees off boresight.
//!
//! # References
//! - Sector ("flat-top") model: T. Bai and R. W. Heath, "Coverage and rate analysis for
//!   millimeter-wave cellular networks", IEEE Trans. Wireless Commun. 14(2), 2015 (from memory).
//! - Parabolic cut: 3GPP TR 38.901, Table 7.3-1, A_H(φ) = −min(12 (φ/φ_3dB)², A_max).

use crate::error::ModelError;
use crate::model::units::db_to_lin;

mod omni;
mod parabolic;
mod sector;

pub use omni::Omni;
pub use parabolic::Parabolic;
pub use sector::Sector;

/// Every pattern, by name: scenario files and node properties (`pattern = "…"`) look patterns
/// up here. A new pattern is a file with a type implementing [`AntennaPattern`] and an
/// [`Entry`], a variant of [`Pattern`] and its line in the dispatch below, and one line here.
pub const PATTERNS: &[Entry] = &[sector::ENTRY, parabolic::ENTRY, omni::ENTRY];

/// The keys a pattern is built from, as given (absent: `None`).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct PatternKeys {
    /// Main-lobe width or half-power beamwidth, degrees.
    pub beamwidth_deg: Option<f64>,
    /// Main-lobe gain, dBi.
    pub gain_dbi: Option<f64>,
    /// Side-lobe level or floor, dBi.
    pub sidelobe_dbi: Option<f64>,
}

impl PatternKeys {
    /// The value of key `key`.
    pub fn get(&self, key: &str) -> Option<f64> {
        match key {
            "beamwidth_deg" => self.beamwidth_deg,
            "gain_dbi" => self.gain_dbi,
            "sidelobe_dbi" => self.sidelobe_dbi,
            _ => None,
        }
    }
}

/// A pattern in the registry: its name, the keys it needs, and its validating builder (called
/// with every needed key present).
#[derive(Clone, Copy)]
pub struct Entry {
    /// Name in files.
    pub name: &'static str,
    /// Keys of [`PatternKeys`] the pattern needs.
    pub needs: &'static [&'static str],
    /// Builds the pattern, checking its values.
    pub build: fn(&PatternKeys) -> Result<Pattern, Vec<ModelError>>,
}

/// What every pattern provides.
pub trait AntennaPattern {
    /// Short name used in files: `sector`, `parabolic`, `omni`.
    fn kind(&self) -> &'static str;
    /// Gain at `off_axis_deg` in [0, 180] from boresight, dBi.
    fn gain_folded_dbi(&self, off_axis_deg: f64) -> f64;
    /// Largest gain, dBi.
    fn max_gain_dbi(&self) -> f64;
    /// Main-lobe width (sector) or half-power beamwidth, degrees (360 for omni).
    fn beamwidth_deg(&self) -> f64;
    /// Gain outside the main lobe (sector) or floor (parabolic), dBi; the gain for omni.
    fn floor_dbi(&self) -> f64;
    /// The form the engine evaluates.
    fn kernel(&self) -> GainForm;
    /// The gain law under a uniformly random orientation.
    fn orientation_law(&self) -> GainLaw;
}

/// How the engine evaluates a transmit pattern.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum GainForm {
    /// Two levels split by the main-lobe test t·|t| ≥ c·|c|·|w|² (see
    /// [`signed_cos_sq_half_beam`]).
    Flat {
        /// Main-lobe gain, dBi.
        main_dbi: f64,
        /// Gain elsewhere, dBi.
        side_dbi: f64,
    },
    /// A table over s = sin(φ/2) ([`Pattern::gain_table_over_half_angle_sine`]).
    Table,
    /// A parabolic main lobe G = gain − 12 (φ/HPBW)² down to a floor, evaluated in closed form
    /// from sin²(φ/2) (the engine's `Dish`; the table is still built for the far field).
    Parabolic {
        /// Half-power beamwidth, degrees.
        beamwidth_deg: f64,
        /// Boresight gain, dBi.
        gain_dbi: f64,
        /// Floor, dBi.
        floor_dbi: f64,
    },
}

/// A discrete gain law: (probability, linear gain) levels, probabilities summing to 1.
#[derive(Debug, Clone, PartialEq)]
pub struct GainLaw(Vec<(f64, f64)>);

impl GainLaw {
    /// A two-level law: main lobe with probability `q`, side lobe otherwise (dBi in).
    pub fn two_level(q: f64, main_dbi: f64, side_dbi: f64) -> GainLaw {
        let q = q.clamp(0.0, 1.0);
        GainLaw(vec![(q, db_to_lin(main_dbi)), (1.0 - q, db_to_lin(side_dbi))])
    }
    /// The (probability, linear gain) levels.
    pub fn levels(&self) -> &[(f64, f64)] {
        &self.0
    }
    /// E\[Gⁿ\] (any real n).
    pub fn moment(&self, n: f64) -> f64 {
        self.0.iter().map(|&(p, g)| p * g.powf(n)).sum()
    }
}

/// A validated horizontal antenna pattern.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Pattern {
    /// Flat main lobe, flat side lobes.
    Sector(Sector),
    /// 3GPP parabolic cut with a floor.
    Parabolic(Parabolic),
    /// The same gain in every direction.
    Omni(Omni),
}

macro_rules! each {
    ($self:ident, $p:ident => $e:expr) => {
        match $self {
            Pattern::Sector($p) => $e,
            Pattern::Parabolic($p) => $e,
            Pattern::Omni($p) => $e,
        }
    };
}

impl Pattern {
    /// A sector of `beamwidth_deg` in (0, 360] at `gain_dbi` in [−30, 60], `sidelobe_dbi`
    /// in [−60, gain] elsewhere.
    ///
    /// ```
    /// use lobemap::model::antenna::Pattern;
    /// let p = Pattern::sector(30.0, 20.0, -5.0).unwrap();
    /// assert_eq!(p.gain_dbi(14.9), 20.0);
    /// assert!(Pattern::sector(30.0, 20.0, 25.0).is_err());
    /// ```
    pub fn sector(beamwidth_deg: f64, gain_dbi: f64, sidelobe_dbi: f64) -> Result<Pattern, Vec<ModelError>> {
        Sector::new(beamwidth_deg, gain_dbi, sidelobe_dbi).map(Pattern::Sector)
    }
    /// A parabolic cut of half-power beamwidth `beamwidth_deg`, boresight `gain_dbi` and
    /// `floor_dbi` (same ranges as [`Self::sector`]).
    pub fn parabolic(beamwidth_deg: f64, gain_dbi: f64, floor_dbi: f64) -> Result<Pattern, Vec<ModelError>> {
        Parabolic::new(beamwidth_deg, gain_dbi, floor_dbi).map(Pattern::Parabolic)
    }
    /// An omni antenna of `gain_dbi`.
    pub fn omni(gain_dbi: f64) -> Pattern {
        Pattern::Omni(Omni::new(gain_dbi))
    }

    fn inner(&self) -> &dyn AntennaPattern {
        each!(self, p => p)
    }

    /// Gain in dBi at `off_axis_deg` from boresight (any sign, any number of turns).
    pub fn gain_dbi(&self, off_axis_deg: f64) -> f64 {
        let mut a = off_axis_deg.abs() % 360.0;
        if a > 180.0 {
            a = 360.0 - a;
        }
        self.inner().gain_folded_dbi(a)
    }
    /// Largest gain of the pattern, dBi.
    pub fn max_gain_dbi(&self) -> f64 {
        self.inner().max_gain_dbi()
    }
    /// Main-lobe width in degrees (360 for omni).
    pub fn beamwidth_deg(&self) -> f64 {
        self.inner().beamwidth_deg()
    }
    /// Side-lobe level (sector) or floor (parabolic), dBi; the gain for omni.
    pub fn floor_dbi(&self) -> f64 {
        self.inner().floor_dbi()
    }
    /// Whether the pattern has no preferred direction.
    pub fn is_omni(&self) -> bool {
        matches!(self, Pattern::Omni(_))
    }
    /// Short name used in files: `sector`, `parabolic` or `omni`.
    pub fn kind(&self) -> &'static str {
        self.inner().kind()
    }
    /// The form the engine evaluates.
    pub fn kernel(&self) -> GainForm {
        self.inner().kernel()
    }
    /// The gain law under a uniformly random orientation.
    pub fn orientation_law(&self) -> GainLaw {
        self.inner().orientation_law()
    }

    /// The value `c·|c|` with c = cos(HPBW/2), for the trigonometry-free main-lobe test
    /// `t·|t| ≥ c·|c|·|w|²` where t = b·w (b the unit boresight, w the offset vector).
    /// Because x ↦ x|x| is increasing, this is exactly `b·w ≥ |w| cos(HPBW/2)`.
    pub fn signed_cos_sq_half_beam(&self) -> f64 {
        signed_cos_sq_half_beam(self.beamwidth_deg())
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

/// `c·|c|` with c = cos(beamwidth/2); −1 for a full circle (every direction in the lobe).
pub fn signed_cos_sq_half_beam(beamwidth_deg: f64) -> f64 {
    let c = (beamwidth_deg / 2.0).to_radians().cos();
    if beamwidth_deg >= 360.0 { -1.0 } else { c * c.abs() }
}

/// Checks a beamwidth, a gain and a side-lobe level or floor not above the gain.
pub(crate) fn check_lobes(beamwidth_deg: f64, gain_dbi: f64, side_dbi: f64, side_key: &'static str) -> Vec<ModelError> {
    let mut e = Vec::new();
    if !(beamwidth_deg.is_finite() && beamwidth_deg > 0.0 && beamwidth_deg <= 360.0) {
        e.push(ModelError::out_of_range("beamwidth_deg", beamwidth_deg, "(0, 360] deg"));
    }
    if !(gain_dbi.is_finite() && (-30.0..=60.0).contains(&gain_dbi)) {
        e.push(ModelError::out_of_range("gain_dbi", gain_dbi, "[-30, 60] dBi"));
    }
    if !(side_dbi.is_finite() && (-60.0..=60.0).contains(&side_dbi)) {
        e.push(ModelError::out_of_range(side_key, side_dbi, "[-60, 60] dBi"));
    } else if side_dbi > gain_dbi {
        e.push(ModelError {
            key: side_key,
            message: format!("value {side_dbi} is above the main-lobe gain {gain_dbi} dBi; it must not exceed it"),
        });
    }
    e
}

#[cfg(test)]
mod tests {
    use super::*;

    // 3GPP TR 38.901 Table 7.3-1 element: 65° HPBW, 8 dBi, A_max 30 dB (floor −22 dBi).
    // Reference values G(φ) = 8, 5, −4, −15.006, −22 dBi at φ = 0, 32.5, 65, 90, 180°
    // (docs/reference-values.md, computed independently with numpy).
    #[test]
    fn tr38901_element_cut() {
        let p = Pattern::parabolic(65.0, 8.0, -22.0).unwrap();
        for (phi, want) in [(0.0, 8.0), (32.5, 5.0), (65.0, -4.0), (90.0, -15.006), (180.0, -22.0), (-90.0, -15.006)] {
            assert!((p.gain_dbi(phi) - want).abs() < 1e-3, "{phi}: {}", p.gain_dbi(phi));
        }
    }

    // Flat-top sector (Bai and Heath 2015): main gain within ±HPBW/2, side gain outside.
    #[test]
    fn sector_edges() {
        let p = Pattern::sector(30.0, 20.0, -5.0).unwrap();
        assert_eq!(p.gain_dbi(14.99), 20.0);
        assert_eq!(p.gain_dbi(15.01), -5.0);
        assert_eq!(p.gain_dbi(345.5), 20.0);
    }

    // The dot-product test agrees with the angle test on a sweep, for narrow, wide (> 180°)
    // and full beams (common practice: monotonic transform of cos).
    #[test]
    fn dot_product_test_matches_angle() {
        for bw in [2.0, 30.0, 120.0, 200.0, 300.0, 360.0] {
            let p = Pattern::sector(bw, 10.0, -10.0).unwrap();
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
        let p = Pattern::parabolic(2.0, 38.0, -2.0).unwrap();
        let t = p.gain_table_over_half_angle_sine(8192);
        // Entry i sits at s = i/(len-1); φ = 2 asin s.
        let i = 100;
        let phi = 2.0 * (i as f64 / 8191.0).asin().to_degrees();
        assert!((10.0 * (t[i] as f64).log10() - p.gain_dbi(phi)).abs() < 1e-4);
    }

    // Orientation law: the discrete gain law of a uniformly oriented antenna has total
    // probability 1, and its moments are those of the pattern averaged over the circle
    // (common practice: E[G^n] = (1/360°) ∫ G(φ)^n dφ), here against a fine midpoint rule.
    #[test]
    fn orientation_law_matches_circular_average() {
        for p in [
            Pattern::sector(30.0, 20.0, -5.0).unwrap(),
            Pattern::parabolic(2.5, 36.0, -4.0).unwrap(),
            Pattern::parabolic(65.0, 8.0, -22.0).unwrap(),
            Pattern::omni(3.0),
        ] {
            let law = p.orientation_law();
            let total: f64 = law.levels().iter().map(|l| l.0).sum();
            assert!((total - 1.0).abs() < 1e-12, "{p:?}");
            for n in [1.0, 2.0, 3.0] {
                let steps = 720_000;
                let avg = (0..steps)
                    .map(|i| db_to_lin(p.gain_dbi((i as f64 + 0.5) * 360.0 / steps as f64)).powf(n))
                    .sum::<f64>()
                    / steps as f64;
                // Sector edges fall between midpoints: 1e-5 relative; the parabolic main lobe
                // is integrated by 32-point Gauss–Legendre: 1e-6 relative.
                assert!((law.moment(n) - avg).abs() < 1e-5 * avg, "{p:?} n {n}: {} vs {avg}", law.moment(n));
            }
        }
    }
}
