//! Thermal noise kT₀B at T₀ = 290 K plus the receiver noise figure.
//!
//! # References
//! - Boltzmann constant k = 1.380649e-23 J/K (SI 2019 exact value); kT₀ = −173.975 dBm/Hz.
//! - ITU-R P.372 / IEEE Std 145 convention T₀ = 290 K (common practice).

/// Boltzmann constant, J/K.
pub const BOLTZMANN: f64 = 1.380_649e-23;
/// Reference temperature, K.
pub const T0_K: f64 = 290.0;

/// Noise power spectral density kT₀ in dBm/Hz.
pub fn kt0_dbm_per_hz() -> f64 {
    10.0 * (BOLTZMANN * T0_K * 1000.0).log10()
}

/// Receiver noise power in dBm for a bandwidth in MHz and a noise figure in dB.
pub fn noise_dbm(bandwidth_mhz: f64, noise_figure_db: f64) -> f64 {
    kt0_dbm_per_hz() + 10.0 * (bandwidth_mhz * 1e6).log10() + noise_figure_db
}

#[cfg(test)]
mod tests {
    use super::*;

    // kT₀ = −173.975 dBm/Hz with the exact SI Boltzmann constant; NF 7 dB gives −86.975 dBm
    // in 100 MHz and −80.955 dBm in 400 MHz (docs/reference-values.md, numpy).
    #[test]
    fn thermal_noise_reference_values() {
        assert!((kt0_dbm_per_hz() + 173.975).abs() < 1e-3);
        assert!((noise_dbm(100.0, 7.0) + 86.975).abs() < 1e-3);
        assert!((noise_dbm(400.0, 7.0) + 80.955).abs() < 1e-3);
    }
}
