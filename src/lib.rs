//! lobemap: aggregate interference, SINR and coverage maps for directional wireless nodes.
//!
//! Data flows one way: a scenario file and its node layout are parsed and validated
//! ([`scenario`], [`nodes`]) into a [`scenario::Scenario`]; the [`engine`] computes raster
//! layers on a [`grid::Grid`]; writers ([`raster`], [`render`], [`hotspots`], [`summary`])
//! turn layers into files. The physics lives in small value types: [`pathloss::PathLoss`],
//! [`antenna::Pattern`] and [`noise`].
#![deny(missing_docs)]

pub mod config;
pub mod engine;
pub mod error;
pub mod geometry;
pub mod io;
pub mod jobs;
pub mod math;
pub mod model;
pub mod random;
pub mod run;

pub use error::{Error, Problem};

/// Value written to raster cells where a layer is undefined (GeoTIFF `GDAL_NODATA`).
pub const NODATA: f32 = -9999.0;
