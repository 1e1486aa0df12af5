//! The surface: ground elevation and building tops on a lattice of cells aligned with the map
//! grid (same cell size, whole cells added where nodes lie outside the map), so the map's
//! sweep and the links' profiles see the same heights. Built by [`crate::config`] from a
//! GeoTIFF and building footprints.
//!
//! Each cell holds one ground height (the elevation model sampled bilinearly at the cell
//! centre) and one building top (the tallest footprint containing the centre), so a profile
//! sees the surface as flat-topped blocks at the map's resolution.

use crate::geometry::frame::LocalFrame;
use crate::geometry::grid::Grid;
use crate::model::obstruction::{Edges, Obstruction, Profile, ProfilePoint, analyse, wavelength_m};

/// One building footprint.
#[derive(Debug, Clone, PartialEq)]
pub struct Building {
    /// How the building is named in messages and tables: its `name`, or `building N` (its
    /// feature index in the file).
    pub label: String,
    /// Height above ground, m.
    pub height_m: f64,
}

/// The surface lattice.
#[derive(Debug, Clone, PartialEq)]
pub struct Surface {
    pub(crate) west: f64,
    pub(crate) north: f64,
    pub(crate) dlon: f64,
    pub(crate) dlat: f64,
    pub(crate) cell_m: f64,
    pub(crate) rows: usize,
    pub(crate) cols: usize,
    /// Map row r is surface row r + r0; map column c is surface column c + c0.
    pub(crate) r0: usize,
    pub(crate) c0: usize,
    /// Ground elevation per cell, m.
    pub(crate) ground: Vec<f32>,
    /// Ground plus building height per cell, m.
    pub(crate) top: Vec<f32>,
    /// Building index per cell (`u32::MAX` for none).
    pub(crate) building: Vec<u32>,
    pub(crate) buildings: Vec<Building>,
    /// Effective Earth radius factor.
    pub(crate) earth_k: f64,
    /// Largest obstruction loss counted on one path, dB.
    pub(crate) cap_db: f64,
    /// Receivers at cells inside footprints stand on the roof.
    pub(crate) rooftop: bool,
    /// The ground file and the building file, if any (inputs of the run).
    pub(crate) files: Vec<std::path::PathBuf>,
    /// Outer rings of the footprints (lon, lat), for pictures.
    pub(crate) outlines: Vec<Vec<(f64, f64)>>,
}

/// No building at a cell.
pub(crate) const NO_BUILDING: u32 = u32::MAX;

/// The lattice of a surface around `grid` grown by whole cells to contain every point of
/// `points` (lon, lat) with one cell to spare: (west, north, rows, cols, r0, c0).
pub(crate) fn lattice(grid: &Grid, points: impl Iterator<Item = (f64, f64)>) -> (f64, f64, usize, usize, usize, usize) {
    let b = grid.bbox();
    let (mut west, mut east, mut south, mut north) = (b.west, b.east, b.south, b.north);
    for (lon, lat) in points {
        west = west.min(lon);
        east = east.max(lon);
        south = south.min(lat);
        north = north.max(lat);
    }
    let grow = |extra: f64, step: f64| if extra > 0.0 { (extra / step).ceil() as usize + 1 } else { 0 };
    let c0 = grow(b.west - west, grid.dlon());
    let c1 = grow(east - b.east, grid.dlon());
    let r0 = grow(north - b.north, grid.dlat());
    let r1 = grow(b.south - south, grid.dlat());
    (
        b.west - c0 as f64 * grid.dlon(),
        b.north + r0 as f64 * grid.dlat(),
        grid.rows() + r0 + r1,
        grid.cols() + c0 + c1,
        r0,
        c0,
    )
}

impl Surface {
    /// Number of cells.
    pub fn cells(&self) -> usize {
        self.rows * self.cols
    }
    /// Rows and columns.
    pub fn shape(&self) -> (usize, usize) {
        (self.rows, self.cols)
    }
    /// Effective Earth radius factor.
    pub fn earth_k(&self) -> f64 {
        self.earth_k
    }
    /// Outer rings of the footprints (lon, lat).
    pub fn outlines(&self) -> &[Vec<(f64, f64)>] {
        &self.outlines
    }
    /// The buildings.
    pub fn buildings(&self) -> &[Building] {
        &self.buildings
    }
    /// Longitude of the centre of surface column `c`.
    pub fn lon_of_col(&self, c: usize) -> f64 {
        self.west + (c as f64 + 0.5) * self.dlon
    }
    /// Latitude of the centre of surface row `r`.
    pub fn lat_of_row(&self, r: usize) -> f64 {
        self.north - (r as f64 + 0.5) * self.dlat
    }
    /// Fractional lattice position (column, row) of a point: cell (r, c) spans [c, c+1).
    pub(crate) fn position(&self, lon: f64, lat: f64) -> (f64, f64) {
        ((lon - self.west) / self.dlon, (self.north - lat) / self.dlat)
    }
    fn at(&self, lon: f64, lat: f64) -> usize {
        // Points outside take the nearest edge cell (the lattice contains every node).
        let (u, v) = self.position(lon, lat);
        let c = (u.max(0.0) as usize).min(self.cols - 1);
        let r = (v.max(0.0) as usize).min(self.rows - 1);
        r * self.cols + c
    }
    /// Height of the roof above the ground at a point inside a footprint (the highest where
    /// footprints overlap), m; `None` outside every footprint.
    pub fn roof_height_m(&self, lon: f64, lat: f64) -> Option<f64> {
        let k = self.at(lon, lat);
        (self.building[k] != NO_BUILDING).then(|| (self.top[k] - self.ground[k]) as f64)
    }

    /// Ground elevation at a point, m.
    pub fn ground_m(&self, lon: f64, lat: f64) -> f64 {
        self.ground[self.at(lon, lat)] as f64
    }
    /// Top of the surface (ground or roof) at a point, m.
    pub fn top_m(&self, lon: f64, lat: f64) -> f64 {
        self.top[self.at(lon, lat)] as f64
    }
    /// Altitude of an antenna `height_m` above the ground at a point (a node), m.
    pub fn antenna_alt_m(&self, lon: f64, lat: f64, height_m: f64) -> f64 {
        self.ground_m(lon, lat) + height_m
    }
    /// Altitude of the map's receiver `height_m` above the ground, or above the roof where
    /// the point lies in a footprint and receivers stand on roofs, m.
    pub fn receiver_alt_m(&self, lon: f64, lat: f64, height_m: f64) -> f64 {
        (if self.rooftop { self.top_m(lon, lat) } else { self.ground_m(lon, lat) }) + height_m
    }

    /// The map receiver's altitude (`height_m` above the roof or the ground, as
    /// [`Self::receiver_alt_m`]) at every cell of map rows `rows` (`map_cols` columns), row by
    /// row.
    pub(crate) fn receiver_alts(&self, rows: std::ops::Range<usize>, map_cols: usize, height_m: f32) -> Vec<f32> {
        let base = if self.rooftop { &self.top } else { &self.ground };
        rows.flat_map(|r| {
            let i = (r + self.r0) * self.cols + self.c0;
            base[i..i + map_cols].iter().map(move |z| z + height_m)
        })
        .collect()
    }

    /// The profile from (`a` lon, lat, altitude) to `b`, sampled every quarter cell; each
    /// sample takes the heights of the cell it falls in. The samples lie on the straight line
    /// in longitude and latitude, which at lobemap's extents is the plane's straight line to
    /// well under a centimetre per 100 m.
    pub fn profile(&self, frame: &LocalFrame, a: (f64, f64, f64), b: (f64, f64, f64)) -> Profile {
        let (xa, ya) = frame.to_local(a.0, a.1);
        let (xb, yb) = frame.to_local(b.0, b.1);
        let length_m = (xb - xa).hypot(yb - ya);
        let step = self.cell_m / 4.0;
        let n = (length_m / step).ceil() as usize;
        let points = (1..n)
            .map(|i| {
                let t = i as f64 / n as f64;
                let (lon, lat) = (a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1));
                let k = self.at(lon, lat);
                ProfilePoint {
                    distance_m: t * length_m,
                    ground_m: self.ground[k] as f64,
                    top_m: self.top[k] as f64,
                    building: (self.building[k] != NO_BUILDING).then_some(self.building[k]),
                }
            })
            .collect();
        Profile { length_m, tx_alt_m: a.2, rx_alt_m: b.2, points }
    }

    /// The obstruction of the path from `a` to `b` (lon, lat, altitude) at `frequency_ghz`.
    pub fn obstruction(
        &self,
        frame: &LocalFrame,
        a: (f64, f64, f64),
        b: (f64, f64, f64),
        frequency_ghz: f64,
        edges: Edges,
    ) -> Obstruction {
        analyse(&self.profile(frame, a, b), wavelength_m(frequency_ghz), self.earth_k, self.cap_db, edges)
    }

    /// How an obstacle is named: the building's label or "ground at N m".
    pub fn describe(&self, limit: &crate::model::obstruction::Limit) -> String {
        match limit.building {
            Some(b) => self.buildings[b as usize].label.clone(),
            None => format!("ground at {:.0} m", limit.distance_m),
        }
    }
}
