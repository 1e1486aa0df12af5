//! Free space (ITU-R P.525): exponent 2 with the free-space loss at 1 m.
//!
//! # References
//! - ITU-R P.525-4, "Calculation of free-space attenuation": L = 20 log10(4π d / λ). We use the
//!   exact constant 20 log10(4π·10⁹/c) = 32.4478 dB (d in km, f in MHz) rather than the
//!   rounded 32.44 / 32.4; the difference to 32.44 is 0.008 dB.

use super::{Built, DistanceLaw, Entry, LawParams, fspl_1m_db};
use crate::error::ModelError;
use std::sync::Arc;

/// Free space.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FreeSpace;

impl DistanceLaw for FreeSpace {
    fn name(&self) -> &'static str {
        "free-space"
    }
    fn loss_at_1m_db(&self, frequency_ghz: f64) -> f64 {
        fspl_1m_db(frequency_ghz)
    }
    fn exponent(&self) -> f64 {
        2.0
    }
    fn params(&self) -> LawParams {
        LawParams::default()
    }
}

fn build(p: &LawParams) -> Built {
    let mut errs = Vec::new();
    if p.exponent.is_some_and(|n| n != 2.0) {
        errs.push(ModelError {
            key: "exponent",
            message: "free-space has exponent 2; use `close-in` for another exponent".into(),
        });
    }
    if p.loss_at_1m_db.is_some() {
        errs.push(super::loss_at_1m_not_used());
    }
    if errs.is_empty() { Ok(Arc::new(FreeSpace)) } else { Err(errs) }
}

/// The registry entry.
pub(super) const ENTRY: Entry = Entry { name: "free-space", takes: &[], build };
