//! Close-in free-space reference: FSPL(f, 1 m) + 10 n log10(d / 1 m).
//!
//! # References
//! - S. Sun et al., "Investigation of prediction accuracy, sensitivity, and parameter
//!   stability of large-scale propagation path loss models for 5G wireless communications",
//!   IEEE Trans. Veh. Technol. 65(5), 2016 (from memory).

use super::{Built, DistanceLaw, Entry, LawParams, check_exponent, fspl_1m_db};
use crate::error::ModelError;
use std::sync::Arc;

/// The close-in model with exponent n.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CloseIn {
    exponent: f64,
}

impl CloseIn {
    /// Checks n in [1, 8].
    ///
    /// ```
    /// use lobemap::model::pathloss::{CloseIn, DistanceLaw};
    /// assert_eq!(CloseIn::new(2.1).unwrap().exponent(), 2.1);
    /// assert!(CloseIn::new(0.5).is_err());
    /// ```
    pub fn new(exponent: f64) -> Result<CloseIn, ModelError> {
        check_exponent(exponent)?;
        Ok(CloseIn { exponent })
    }
}

impl DistanceLaw for CloseIn {
    fn name(&self) -> &'static str {
        "close-in"
    }
    fn loss_at_1m_db(&self, frequency_ghz: f64) -> f64 {
        fspl_1m_db(frequency_ghz)
    }
    fn exponent(&self) -> f64 {
        self.exponent
    }
    fn params(&self) -> LawParams {
        LawParams { exponent: Some(self.exponent), loss_at_1m_db: None }
    }
}

fn build(p: &LawParams) -> Built {
    let law = CloseIn::new(p.exponent.unwrap_or(f64::NAN));
    match (law, p.loss_at_1m_db.is_some()) {
        (Ok(l), false) => Ok(Arc::new(l)),
        (Ok(_), true) => Err(vec![super::loss_at_1m_not_used()]),
        (Err(e), false) => Err(vec![e]),
        (Err(e), true) => Err(vec![e, super::loss_at_1m_not_used()]),
    }
}

/// The registry entry.
pub(super) const ENTRY: Entry = Entry { name: "close-in", takes: &["exponent"], build };
