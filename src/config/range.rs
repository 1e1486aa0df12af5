//! Allowed numeric intervals: every range a value is checked against is written once here.

use std::fmt;

/// An allowed numeric interval, printed like `(0, 360] deg`.
#[derive(Debug, Clone, Copy)]
pub struct Range {
    lo: f64,
    hi: f64,
    lo_open: bool,
    unit: &'static str,
}

impl Range {
    /// A closed interval [lo, hi].
    pub const fn closed(lo: f64, hi: f64, unit: &'static str) -> Self {
        Range { lo, hi, lo_open: false, unit }
    }
    /// A left-open interval (lo, hi].
    pub const fn left_open(lo: f64, hi: f64, unit: &'static str) -> Self {
        Range { lo, hi, lo_open: true, unit }
    }
    /// Whether `v` is finite and inside.
    pub fn contains(&self, v: f64) -> bool {
        v.is_finite() && v <= self.hi && if self.lo_open { v > self.lo } else { v >= self.lo }
    }
    /// Beamwidth: (0, 360] deg.
    pub const BEAMWIDTH: Range = Range::left_open(0.0, 360.0, "deg");
    /// Antenna gain: [-30, 60] dBi.
    pub const GAIN: Range = Range::closed(-30.0, 60.0, "dBi");
    /// Side-lobe level or floor: [-60, 60] dBi (and not above the main gain).
    pub const SIDELOBE: Range = Range::closed(-60.0, 60.0, "dBi");
    /// Transmit power: [-50, 80] dBm.
    pub const POWER: Range = Range::closed(-50.0, 80.0, "dBm");
    /// Antenna height: [0, 500] m.
    pub const HEIGHT: Range = Range::closed(0.0, 500.0, "m");
    /// Activity factor: [0, 1].
    pub const ACTIVITY: Range = Range::closed(0.0, 1.0, "");
}

impl fmt::Display for Range {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let l = if self.lo_open { "(" } else { "[" };
        write!(f, "{l}{}, {}]", self.lo, self.hi)?;
        if !self.unit.is_empty() {
            write!(f, " {}", self.unit)?;
        }
        Ok(())
    }
}
