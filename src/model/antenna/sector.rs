//! Flat-top sector: main-lobe gain within ±beamwidth/2 of boresight, a flat side-lobe level
//! elsewhere (Bai and Heath 2015).

use super::{AntennaPattern, GainForm, GainLaw, check_lobes};
use crate::error::ModelError;

/// A validated sector pattern.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sector {
    beamwidth_deg: f64,
    gain_dbi: f64,
    sidelobe_dbi: f64,
}

impl Sector {
    /// Checks beamwidth (0, 360] deg, gain [−30, 60] dBi, side lobe [−60, gain] dBi.
    pub fn new(beamwidth_deg: f64, gain_dbi: f64, sidelobe_dbi: f64) -> Result<Sector, Vec<ModelError>> {
        let e = check_lobes(beamwidth_deg, gain_dbi, sidelobe_dbi, "sidelobe_dbi");
        if e.is_empty() { Ok(Sector { beamwidth_deg, gain_dbi, sidelobe_dbi }) } else { Err(e) }
    }
}

impl AntennaPattern for Sector {
    fn kind(&self) -> &'static str {
        "sector"
    }
    fn gain_folded_dbi(&self, a: f64) -> f64 {
        if a <= self.beamwidth_deg / 2.0 { self.gain_dbi } else { self.sidelobe_dbi }
    }
    fn max_gain_dbi(&self) -> f64 {
        self.gain_dbi
    }
    fn beamwidth_deg(&self) -> f64 {
        self.beamwidth_deg
    }
    fn floor_dbi(&self) -> f64 {
        self.sidelobe_dbi
    }
    fn kernel(&self) -> GainForm {
        GainForm::Flat { main_dbi: self.gain_dbi, side_dbi: self.sidelobe_dbi }
    }
    /// Main lobe with probability beamwidth/360°.
    fn orientation_law(&self) -> GainLaw {
        GainLaw::two_level(self.beamwidth_deg / 360.0, self.gain_dbi, self.sidelobe_dbi)
    }
}

fn build(k: &super::PatternKeys) -> Result<super::Pattern, Vec<crate::error::ModelError>> {
    use super::Pattern;
    Pattern::sector(
        k.beamwidth_deg.unwrap_or(f64::NAN),
        k.gain_dbi.unwrap_or(f64::NAN),
        k.sidelobe_dbi.unwrap_or(f64::NAN),
    )
}

/// The registry entry.
pub(super) const ENTRY: super::Entry =
    super::Entry { name: "sector", needs: &["beamwidth_deg", "gain_dbi", "sidelobe_dbi"], build };
