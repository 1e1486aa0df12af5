//! Writers: staged output, rasters, heatmaps, polygons, tables, the report.

pub(crate) mod cdfplot;
pub(crate) mod colormap;
pub(crate) mod geotiff;
pub(crate) mod heatmap;
pub(crate) mod hotspots;
pub(crate) mod kmz;
pub(crate) mod layout;
pub(crate) mod pdf;
pub(crate) mod profile;
pub(crate) mod report;
pub(crate) mod staging;
pub(crate) mod summary;
pub mod tables;
pub(crate) mod vrt;
pub(crate) mod writer;
