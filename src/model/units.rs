//! Decibel conversions. Convert once, at the edge: sums are done in linear units (mW).

/// Decibels to a linear power ratio.
#[inline]
pub fn db_to_lin(db: f64) -> f64 {
    10f64.powf(db / 10.0)
}

/// Linear power ratio to decibels.
#[inline]
pub fn lin_to_db(lin: f64) -> f64 {
    10.0 * lin.log10()
}

/// dBm to milliwatts.
#[inline]
pub fn dbm_to_mw(dbm: f64) -> f64 {
    db_to_lin(dbm)
}

/// Milliwatts to dBm.
#[inline]
pub fn mw_to_dbm(mw: f64) -> f64 {
    lin_to_db(mw)
}

/// `x` rounded to `decimals` decimal places (for written figures).
#[inline]
pub fn round_dp(x: f64, decimals: i32) -> f64 {
    let m = 10f64.powi(decimals);
    (x * m).round() / m
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trip() {
        // Definition of the decibel (common practice): 30 dBm = 1 W = 1000 mW.
        assert!((dbm_to_mw(30.0) - 1000.0).abs() < 1e-9);
        assert!((mw_to_dbm(1.0)).abs() < 1e-12);
        assert!((lin_to_db(db_to_lin(-37.25)) + 37.25).abs() < 1e-12);
    }
}
