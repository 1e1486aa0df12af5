//! lobemap: aggregate interference, SINR and coverage maps for directional wireless nodes.
//!
//! Data flows one way: a scenario file and its node layout are parsed and validated
//! ([`scenario`], [`nodes`]) into a [`scenario::Scenario`]; the [`engine`] computes raster
//! layers on a [`grid::Grid`]; writers ([`raster`], [`render`], [`hotspots`], [`summary`])
//! turn layers into files. The physics lives in small value types: [`pathloss::PathLoss`],
//! [`antenna::Pattern`] and [`noise`].
#![deny(missing_docs)]

pub mod aggregate;
pub mod antenna;
pub mod cdfplot;
pub mod colormap;
pub mod coverage;
pub mod draw;
pub mod engine;
pub mod error;
pub mod fading;
pub mod field;
pub mod geodesy;
pub mod grid;
pub mod hotspots;
pub mod install;
pub mod laplace;
pub mod links;
pub mod montecarlo;
pub mod nodes;
pub mod noise;
pub mod output;
pub mod pathloss;
pub mod probe;
pub mod quadrature;
pub mod raster;
pub mod render;
pub mod report;
pub mod run;
pub mod scenario;
pub mod simd;
pub mod stats;
pub mod summary;
pub mod units;

pub use error::{Error, Problem};

/// Value written to raster cells where a layer is undefined (GeoTIFF `GDAL_NODATA`).
pub const NODATA: f32 = -9999.0;
