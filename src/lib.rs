//! lobemap: aggregate interference, SINR and coverage maps for directional wireless nodes.
//!
//! Data flows one way: a scenario file and its node layout are parsed and validated
//! ([`config`]) into a [`model::scenario::Scenario`]; the [`engine`] computes raster layers on
//! a [`geometry::grid::Grid`]; [`jobs`] compute link tables, probes and the installer sheet
//! with the one double-precision link budget ([`model::link`]); [`random`] characterises
//! random fields; the commands in [`run`] stage and write everything. The physics lives in
//! small value types, one law or pattern per file: [`model::pathloss`], [`model::antenna`],
//! [`model::fading`], [`model::noise`].
#![deny(missing_docs)]

pub mod config;
pub mod engine;
pub mod error;
pub mod geometry;
pub mod io;
pub mod jobs;
pub(crate) mod math;
pub mod model;
pub mod progress;
pub mod random;
pub mod run;

pub use error::{Error, Problem};

/// Value written to raster cells where a layer is undefined (GeoTIFF `GDAL_NODATA`).
pub const NODATA: f32 = -9999.0;
