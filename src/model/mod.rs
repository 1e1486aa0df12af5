//! The physics in double precision: units, noise, path loss, antennas, fading, coverage.

/// Antenna patterns.
pub mod antenna;
/// Coverage probability with fading.
pub mod coverage;
/// Fading laws and shadowing.
pub mod fading;
/// Thermal noise.
pub mod noise;
/// Path-loss models.
pub mod pathloss;
/// Decibel conversions.
pub mod units;
