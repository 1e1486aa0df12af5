//! Parabolic cut: G(φ) = gain − min(12 (φ/HPBW)², gain − floor) (3GPP TR 38.901, Table 7.3-1).

use super::{AntennaPattern, GainForm, GainLaw, check_lobes};
use crate::error::ModelError;
use crate::model::units::db_to_lin;

/// A validated parabolic pattern.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Parabolic {
    beamwidth_deg: f64,
    gain_dbi: f64,
    floor_dbi: f64,
}

impl Parabolic {
    /// Checks HPBW (0, 360] deg, gain [−30, 60] dBi, floor [−60, gain] dBi (key
    /// `sidelobe_dbi`, the file key of the floor).
    pub fn new(beamwidth_deg: f64, gain_dbi: f64, floor_dbi: f64) -> Result<Parabolic, Vec<ModelError>> {
        let e = check_lobes(beamwidth_deg, gain_dbi, floor_dbi, "sidelobe_dbi");
        if e.is_empty() { Ok(Parabolic { beamwidth_deg, gain_dbi, floor_dbi }) } else { Err(e) }
    }

    /// Off-axis angle where the parabola meets the floor, degrees (at most 180).
    fn floor_angle_deg(&self) -> f64 {
        (self.beamwidth_deg * ((self.gain_dbi - self.floor_dbi) / 12.0).sqrt()).min(180.0)
    }
}

impl AntennaPattern for Parabolic {
    fn kind(&self) -> &'static str {
        "parabolic"
    }
    fn gain_folded_dbi(&self, a: f64) -> f64 {
        self.gain_dbi - (12.0 * (a / self.beamwidth_deg).powi(2)).min(self.gain_dbi - self.floor_dbi)
    }
    fn max_gain_dbi(&self) -> f64 {
        self.gain_dbi
    }
    fn beamwidth_deg(&self) -> f64 {
        self.beamwidth_deg
    }
    fn floor_dbi(&self) -> f64 {
        self.floor_dbi
    }
    /// The closed form where the lobe meets its floor within 60° of boresight (where the
    /// engine's series for φ² holds to 0.01 dB); the table beyond.
    fn kernel(&self) -> GainForm {
        if self.floor_angle_deg() <= 60.0 {
            GainForm::Parabolic {
                beamwidth_deg: self.beamwidth_deg,
                gain_dbi: self.gain_dbi,
                floor_dbi: self.floor_dbi,
            }
        } else {
            GainForm::Table
        }
    }
    /// The main lobe [0, φ_floor] by 32-point Gauss–Legendre in φ (each node a level of
    /// probability w/180°), the floor beyond as one level.
    fn orientation_law(&self) -> GainLaw {
        let a = self.floor_angle_deg();
        let mut levels: Vec<(f64, f64)> = crate::math::quadrature::gauss_legendre(32)
            .into_iter()
            .map(|(x, w)| {
                let phi = a / 2.0 * (x + 1.0);
                (w * a / 2.0 / 180.0, db_to_lin(self.gain_folded_dbi(phi)))
            })
            .collect();
        if a < 180.0 {
            levels.push(((180.0 - a) / 180.0, db_to_lin(self.floor_dbi)));
        }
        GainLaw(levels)
    }
}

fn build(k: &super::PatternKeys) -> Result<super::Pattern, Vec<crate::error::ModelError>> {
    use super::Pattern;
    Pattern::parabolic(
        k.beamwidth_deg.unwrap_or(f64::NAN),
        k.gain_dbi.unwrap_or(f64::NAN),
        k.sidelobe_dbi.unwrap_or(f64::NAN),
    )
}

/// The registry entry.
pub(super) const ENTRY: super::Entry =
    super::Entry { name: "parabolic", needs: &["beamwidth_deg", "gain_dbi", "sidelobe_dbi"], build };
