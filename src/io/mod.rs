//! Writers: staged output, rasters, heatmaps, polygons, tables, the report.

/// CDF plots.
pub mod cdfplot;
/// The colour map.
pub mod colormap;
/// Float32 GeoTIFF.
pub mod geotiff;
/// PNG heatmaps.
pub mod heatmap;
/// Hot-spot polygons.
pub mod hotspots;
/// `layout.geojson`.
pub mod layout;
/// The HTML report.
pub mod report;
/// All-or-nothing output staging.
pub mod staging;
/// summary.json.
pub mod summary;
/// Text tables and CSV.
pub mod tables;
