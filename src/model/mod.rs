//! The physics in double precision: units, noise, path loss, antennas, fading, coverage.

/// Antenna patterns.
pub mod antenna;
/// Coverage probability with fading.
pub mod coverage;
/// A validated `[draw]` table.
pub mod draw;
/// Fading laws and shadowing.
pub mod fading;
/// The link budget.
pub mod link;
/// A node of the layout.
pub mod node;
/// Thermal noise.
pub mod noise;
/// Path-loss models.
pub mod pathloss;
/// A validated scenario.
pub mod scenario;
/// Decibel conversions.
pub mod units;
