//! Geometry: the local tangent plane and the map grid.

/// Local east-north tangent plane on WGS84, bearings.
pub mod frame;
/// The EPSG:4326 map grid.
pub mod grid;
