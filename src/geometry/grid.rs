//! The map grid: EPSG:4326 cells that are square in metres at the centre latitude.
//!
//! Row 0 is the northern edge (the GeoTIFF convention); cell (r, c) covers
//! [west + c·Δlon, west + (c+1)·Δlon] × [north − (r+1)·Δlat, north − r·Δlat].

use crate::geometry::frame::{meridional_radius, prime_vertical_radius};

/// A longitude/latitude box in degrees.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BBox {
    /// Western edge, degrees.
    pub west: f64,
    /// Southern edge, degrees.
    pub south: f64,
    /// Eastern edge, degrees.
    pub east: f64,
    /// Northern edge, degrees.
    pub north: f64,
}

impl BBox {
    /// Checks ranges and order; the message names the allowed values.
    pub fn validate(&self) -> Result<(), String> {
        let v = [self.west, self.south, self.east, self.north];
        if v.iter().any(|x| !x.is_finite()) {
            return Err(format!("value {v:?} has a non-finite number"));
        }
        if !(-180.0..=180.0).contains(&self.west) || !(-180.0..=180.0).contains(&self.east) {
            return Err(format!("longitudes {} and {} must lie in [-180, 180]", self.west, self.east));
        }
        if !(-85.0..=85.0).contains(&self.south) || !(-85.0..=85.0).contains(&self.north) {
            return Err(format!("latitudes {} and {} must lie in [-85, 85]", self.south, self.north));
        }
        if self.west >= self.east || self.south >= self.north {
            return Err(format!("value {v:?} must be [west, south, east, north] with west < east and south < north"));
        }
        Ok(())
    }

    /// The box around `points` (lon, lat), grown by `margin_m` metres on every side.
    pub fn around(points: impl Iterator<Item = (f64, f64)>, margin_m: f64) -> BBox {
        let mut b = BBox { west: f64::MAX, south: f64::MAX, east: f64::MIN, north: f64::MIN };
        for (lon, lat) in points {
            b.west = b.west.min(lon);
            b.east = b.east.max(lon);
            b.south = b.south.min(lat);
            b.north = b.north.max(lat);
        }
        let lat_c = ((b.south + b.north) / 2.0).to_radians();
        let dlat = (margin_m / meridional_radius(lat_c)).to_degrees();
        let dlon = (margin_m / (prime_vertical_radius(lat_c) * lat_c.cos())).to_degrees();
        // A single node still gets a box with some extent.
        let (dlat, dlon) = (dlat.max(1e-6), dlon.max(1e-6));
        BBox { west: b.west - dlon, south: b.south - dlat, east: b.east + dlon, north: b.north + dlat }
    }

    /// Centre (lon, lat).
    pub fn centre(&self) -> (f64, f64) {
        ((self.west + self.east) / 2.0, (self.south + self.north) / 2.0)
    }
}

/// A regular lon/lat grid.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Grid {
    bbox: BBox,
    cell_m: f64,
    dlon: f64,
    dlat: f64,
    rows: usize,
    cols: usize,
}

/// Largest number of cells along one side (GeoTIFF and PNG limits stay far away).
pub const MAX_SIDE: usize = 200_000;

impl Grid {
    /// A grid covering `bbox` (grown to whole cells east and south) with cells `cell_m`
    /// metres on a side at the centre latitude.
    pub fn new(bbox: BBox, cell_m: f64) -> Result<Grid, String> {
        let lat_c = ((bbox.south + bbox.north) / 2.0).to_radians();
        let dlat = (cell_m / meridional_radius(lat_c)).to_degrees();
        let dlon = (cell_m / (prime_vertical_radius(lat_c) * lat_c.cos())).to_degrees();
        let cols = ((bbox.east - bbox.west) / dlon - 1e-9).ceil().max(1.0);
        let rows = ((bbox.north - bbox.south) / dlat - 1e-9).ceil().max(1.0);
        if cols > MAX_SIDE as f64 || rows > MAX_SIDE as f64 {
            return Err(format!(
                "value {cell_m} m gives {cols} x {rows} cells; at most {MAX_SIDE} per side are allowed: use a larger cell_m or a smaller area"
            ));
        }
        let (cols, rows) = (cols as usize, rows as usize);
        let bbox = BBox {
            west: bbox.west,
            north: bbox.north,
            east: bbox.west + cols as f64 * dlon,
            south: bbox.north - rows as f64 * dlat,
        };
        Ok(Grid { bbox, cell_m, dlon, dlat, rows, cols })
    }

    /// The rows `rows` of this grid as a grid of their own (same cells, same degrees per
    /// cell: a tile of the map, georeferenced where it lies).
    ///
    /// # Panics
    /// If `rows` is empty or reaches past the last row.
    pub fn rows_span(&self, rows: std::ops::Range<usize>) -> Grid {
        assert!(rows.start < rows.end && rows.end <= self.rows, "rows {rows:?} outside the grid");
        let north = self.bbox.north - rows.start as f64 * self.dlat;
        let bbox = BBox { north, south: north - rows.len() as f64 * self.dlat, ..self.bbox };
        Grid { bbox, rows: rows.len(), ..*self }
    }

    /// The covered box (whole cells).
    pub fn bbox(&self) -> BBox {
        self.bbox
    }
    /// Cell size in metres.
    pub fn cell_m(&self) -> f64 {
        self.cell_m
    }
    /// Cell width in degrees of longitude.
    pub fn dlon(&self) -> f64 {
        self.dlon
    }
    /// Cell height in degrees of latitude.
    pub fn dlat(&self) -> f64 {
        self.dlat
    }
    /// Number of rows (north to south).
    pub fn rows(&self) -> usize {
        self.rows
    }
    /// Number of columns (west to east).
    pub fn cols(&self) -> usize {
        self.cols
    }
    /// Number of cells.
    pub fn cells(&self) -> usize {
        self.rows * self.cols
    }
    /// Longitude of the centre of column `c`.
    pub fn lon_of_col(&self, c: usize) -> f64 {
        self.bbox.west + (c as f64 + 0.5) * self.dlon
    }
    /// Latitude of the centre of row `r`.
    pub fn lat_of_row(&self, r: usize) -> f64 {
        self.bbox.north - (r as f64 + 0.5) * self.dlat
    }
    /// The cell (row, col) containing a point, if inside.
    pub fn cell_of(&self, lon: f64, lat: f64) -> Option<(usize, usize)> {
        let c = ((lon - self.bbox.west) / self.dlon).floor();
        let r = ((self.bbox.north - lat) / self.dlat).floor();
        (c >= 0.0 && r >= 0.0 && (c as usize) < self.cols && (r as usize) < self.rows)
            .then_some((r as usize, c as usize))
    }

    /// Estimated peak memory in bytes for computing and writing `layers` float32 layers: 4
    /// bytes a cell a layer, 4 more a cell for the zone contours (a below-level copy of the
    /// coverage layer), per-thread row buffers, 32 MiB for the heatmap image (at most
    /// about 2600 × 2400 RGB), the PNG encoder and the program itself, and 61 MiB for the
    /// pictures of the two layers written at once (each a print sheet's picture of 21 MiB,
    /// drawn after its screen picture is dropped; the second layer's screen picture). Measured
    /// peaks of the demo's map (surface, channels, rain, every default layer) at 4, 2 and 1 m
    /// cells were 65–76, 141 and 378 MiB against estimates of 127, 230 and 483 MiB
    /// (BENCHMARKS.md).
    pub fn estimate_bytes(&self, layers: usize, threads: usize) -> u64 {
        let cells = self.cells() as u64;
        // `engine::kernels::RowBufs`: 13 four-byte arrays a column, plus the strong set's 8
        // powers and 8 node indices.
        let row_scratch = (self.cols as u64).saturating_mul(4 * 29).saturating_mul(threads as u64);
        // The print sheet's picture: at most the A3 page's printable 15.7 × 10.9 in at 200 ppi
        // (`io::pdf`), 3150 × 2185 RGB pixels, 21 MiB; two layers are written at once
        // (`run::map::write_map`), so twice that and a second screen picture (19 MiB).
        let print_sheet = (2 * 21 + 19) << 20;
        cells
            .saturating_mul(4 * layers as u64 + 4)
            .saturating_add(row_scratch)
            .saturating_add(32 << 20)
            .saturating_add(print_sheet)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_are_square_in_metres_at_centre() {
        // At latitude 60° a degree of longitude is about half a degree of latitude in
        // length (common practice: cos 60° = 0.5, corrected here for the ellipsoid).
        let g = Grid::new(BBox { west: 10.0, south: 59.99, east: 10.02, north: 60.01 }, 10.0).unwrap();
        let lat = 60f64.to_radians();
        let ew = g.dlon().to_radians() * prime_vertical_radius(lat) * lat.cos();
        let ns = g.dlat().to_radians() * meridional_radius(lat);
        assert!((ew - 10.0).abs() < 1e-9 && (ns - 10.0).abs() < 1e-9);
        assert!((g.dlon() / g.dlat() - 2.0).abs() < 0.01);
        assert_eq!(g.cell_of(g.lon_of_col(3), g.lat_of_row(7)), Some((7, 3)));
    }
}
