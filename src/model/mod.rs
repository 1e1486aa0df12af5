//! The physics in double precision: units, noise, path loss, antennas, fading, coverage.

pub mod antenna;
pub mod channel;
pub mod coverage;
pub mod draw;
pub mod fading;
pub mod link;
pub mod node;
pub mod noise;
pub mod obstruction;
pub mod pathloss;
pub mod scenario;
pub mod surface;
pub mod units;
pub mod weather;
