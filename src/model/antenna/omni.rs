//! Omni: the same gain in every horizontal direction.

use super::{AntennaPattern, GainForm, GainLaw};

/// An omni pattern.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Omni {
    gain_dbi: f64,
}

impl Omni {
    /// An omni antenna of `gain_dbi` (range checks belong to the caller's table).
    pub fn new(gain_dbi: f64) -> Omni {
        Omni { gain_dbi }
    }
}

impl AntennaPattern for Omni {
    fn kind(&self) -> &'static str {
        "omni"
    }
    fn gain_folded_dbi(&self, _a: f64) -> f64 {
        self.gain_dbi
    }
    fn max_gain_dbi(&self) -> f64 {
        self.gain_dbi
    }
    fn beamwidth_deg(&self) -> f64 {
        360.0
    }
    fn floor_dbi(&self) -> f64 {
        self.gain_dbi
    }
    fn kernel(&self) -> GainForm {
        GainForm::Flat { main_dbi: self.gain_dbi, side_dbi: self.gain_dbi }
    }
    fn orientation_law(&self) -> GainLaw {
        GainLaw::two_level(1.0, self.gain_dbi, self.gain_dbi)
    }
}

fn build(k: &super::PatternKeys) -> Result<super::Pattern, Vec<crate::error::ModelError>> {
    use super::Pattern;
    Ok(Pattern::omni(k.gain_dbi.unwrap_or(f64::NAN)))
}

/// The registry entry.
pub(super) const ENTRY: super::Entry = super::Entry { name: "omni", needs: &["gain_dbi"], build };
