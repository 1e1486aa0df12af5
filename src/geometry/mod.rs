//! Geometry: the local tangent plane and the map grid.

pub mod frame;
pub mod grid;
pub mod regions;
