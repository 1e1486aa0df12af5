//! A validated `[draw]` table: what random layout to draw around (or instead of) the fixed nodes.

use crate::model::antenna::Pattern;
use geo::Polygon;

/// How drawn nodes are pointed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Azimuth {
    /// Uniform on [0, 360).
    Uniform,
    /// At a given point (lon, lat).
    Toward(f64, f64),
    /// Like the nearest node of the fixed layout.
    Nearest,
}

/// Whether drawn nodes join the fixed layout or replace it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mode {
    /// Fixed nodes plus drawn nodes.
    Add,
    /// Drawn nodes only.
    Replace,
}

/// The `[draw]` table, validated.
#[derive(Debug, Clone, PartialEq)]
pub struct DrawSpec {
    /// Parent density, per km².
    pub density_per_km2: f64,
    /// Independent retention probability.
    pub keep: f64,
    /// Matérn II hard core, m (0: none).
    pub hard_core_m: f64,
    /// Orientation rule.
    pub azimuth: Azimuth,
    /// Seed.
    pub seed: u64,
    /// Add or replace.
    pub mode: Mode,
    /// Areas to draw in (lon/lat); empty: the grid box.
    pub include: Vec<Polygon<f64>>,
    /// The areas file, if any (an input no output may overwrite).
    pub areas_path: Option<std::path::PathBuf>,
    /// Areas cut out (features with `kind = "exclusion"`).
    pub exclude: Vec<Polygon<f64>>,
    /// Antenna of drawn nodes (the `[antenna]` defaults): pattern, power, height, activity.
    pub antenna: (Pattern, f64, f64, f64),
    /// Polarisation of drawn nodes (the `[antenna]` default).
    pub polarisation: crate::model::node::Polarisation,
}
