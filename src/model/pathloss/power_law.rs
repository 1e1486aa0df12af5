//! Plain power law: L(1 m) + 10 n log10(d / 1 m) with a given loss at 1 m (common practice,
//! the log-distance model).

use super::{Built, DistanceLaw, Entry, LawParams, check_exponent};
use crate::error::ModelError;
use std::sync::Arc;

/// The power law with exponent n and loss at 1 m.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PowerLaw {
    exponent: f64,
    loss_at_1m_db: f64,
}

impl PowerLaw {
    /// Checks n in [1, 8] and the loss at 1 m in [0, 200] dB.
    ///
    /// ```
    /// use lobemap::model::pathloss::{DistanceLaw, PowerLaw};
    /// let l = PowerLaw::new(3.0, 40.0).unwrap();
    /// assert_eq!(l.loss_at_1m_db(28.0), 40.0);
    /// assert!(PowerLaw::new(3.0, -1.0).is_err());
    /// ```
    pub fn new(exponent: f64, loss_at_1m_db: f64) -> Result<PowerLaw, Vec<ModelError>> {
        let mut errs: Vec<ModelError> = check_exponent(exponent).err().into_iter().collect();
        if !(loss_at_1m_db.is_finite() && (0.0..=200.0).contains(&loss_at_1m_db)) {
            errs.push(ModelError::out_of_range("loss_at_1m_db", loss_at_1m_db, "[0, 200] dB"));
        }
        if errs.is_empty() { Ok(PowerLaw { exponent, loss_at_1m_db }) } else { Err(errs) }
    }
}

impl DistanceLaw for PowerLaw {
    fn name(&self) -> &'static str {
        "power-law"
    }
    fn loss_at_1m_db(&self, _frequency_ghz: f64) -> f64 {
        self.loss_at_1m_db
    }
    fn exponent(&self) -> f64 {
        self.exponent
    }
    fn params(&self) -> LawParams {
        LawParams { exponent: Some(self.exponent), loss_at_1m_db: Some(self.loss_at_1m_db) }
    }
}

fn build(p: &LawParams) -> Built {
    let l = PowerLaw::new(p.exponent.unwrap_or(f64::NAN), p.loss_at_1m_db.unwrap_or(f64::NAN))?;
    Ok(Arc::new(l))
}

/// The registry entry.
pub(super) const ENTRY: Entry = Entry { name: "power-law", takes: &["exponent", "loss_at_1m_db"], build };
