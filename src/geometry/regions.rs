//! Regions of a raster layer above (or below) a level: marching squares (contour crate),
//! turned into RFC 7946 polygons (closed rings, exterior counter-clockwise, holes clockwise)
//! with their extreme cell and geodesic area.

use crate::NODATA;
use crate::geometry::grid::Grid;
use geo::orient::{Direction, Orient};
use geo::{Contains, Coord, GeodesicArea, LineString, Polygon};

/// One polygon where a layer is at or above a level.
#[derive(Debug, Clone)]
pub struct Region {
    /// The polygon in lon/lat, RFC 7946 winding.
    pub polygon: Polygon<f64>,
    /// The peak cell (row, col) inside it (for an upper-level region) or the lowest cell
    /// (for a lower-level region).
    pub peak_cell: (usize, usize),
    /// Layer value at the peak cell.
    pub peak_value: f32,
    /// Geodesic area, m².
    pub area_m2: f64,
}

impl Region {
    /// Every ring (the exterior, then the holes) as (lon, lat) pairs, for drawing outlines.
    pub fn rings_lon_lat(&self) -> Vec<Vec<(f64, f64)>> {
        std::iter::once(self.polygon.exterior())
            .chain(self.polygon.interiors())
            .map(|r| r.0.iter().map(|c| (c.x, c.y)).collect())
            .collect()
    }

    /// Whether the region is smaller than one grid cell (a contour around a single cell's
    /// centre): below the grid's resolution, reported but not counted as a zone.
    pub fn is_sub_cell(&self, grid: &Grid) -> bool {
        self.area_m2 < grid.cell_m() * grid.cell_m()
    }
}

/// Every ring of several regions, holes included (a zone with holes is drawn as such, not
/// as its outer frame).
pub fn outlines(regions: &[Region]) -> Vec<Vec<(f64, f64)>> {
    regions.iter().flat_map(Region::rings_lon_lat).collect()
}

/// Regions where `data >= level` (or, with `below`, where `data < level`). Cells with
/// [`NODATA`] count as outside.
pub fn regions(grid: &Grid, data: &[f32], level: f32, below: bool) -> Vec<Region> {
    let (rows, cols) = (grid.rows(), grid.cols());
    // Marching squares treats each value as a pixel [i, i+1]. Above a level the layer is
    // used as it is ([`NODATA`] lies below any level); below a level a field that is
    // positive inside is built (one extra float a cell).
    let (field, thr): (std::borrow::Cow<[f32]>, f32) = if below {
        let f = data.iter().map(|&v| if v == NODATA || !v.is_finite() { -1.0 } else { level - v }).collect();
        (std::borrow::Cow::Owned(f), f32::MIN_POSITIVE)
    } else {
        (std::borrow::Cow::Borrowed(data), level)
    };
    let Ok(contours) = contour::ContourBuilder::new(cols, rows, true).contours(&field, &[thr]) else {
        return Vec::new();
    };
    let b = grid.bbox();
    let to_geo = |c: &Coord<f32>| Coord { x: b.west + c.x as f64 * grid.dlon(), y: b.north - c.y as f64 * grid.dlat() };
    let mut out = Vec::new();
    for poly in contours.into_iter().flat_map(|c| c.into_inner().0.0) {
        // Peak: the extreme cell whose centre lies inside (grid coordinates).
        let (mut best, mut best_v) = (None, f32::MIN);
        let bbox = poly.exterior().0.iter().fold((f32::MAX, f32::MAX, f32::MIN, f32::MIN), |a, p| {
            (a.0.min(p.x), a.1.min(p.y), a.2.max(p.x), a.3.max(p.y))
        });
        let (c0, c1) = ((bbox.0.floor().max(0.0)) as usize, (bbox.2.ceil() as usize).min(cols));
        let (r0, r1) = ((bbox.1.floor().max(0.0)) as usize, (bbox.3.ceil() as usize).min(rows));
        for r in r0..r1 {
            for c in c0..c1 {
                let f = field[r * cols + c];
                if f >= thr && f > best_v && poly.contains(&Coord { x: c as f32 + 0.5, y: r as f32 + 0.5 }) {
                    best_v = f;
                    best = Some((r, c));
                }
            }
        }
        let Some(peak_cell) = best else { continue };
        let ext = LineString::new(poly.exterior().0.iter().map(to_geo).collect());
        let ints = poly.interiors().iter().map(|r| LineString::new(r.0.iter().map(to_geo).collect())).collect();
        let g = Polygon::new(ext, ints).orient(Direction::Default);
        let area_m2 = g.geodesic_area_unsigned();
        if area_m2 < 0.01 {
            continue; // a degenerate contour (a line or a point; below the 0.01 m² written)
        }
        out.push(Region { area_m2, polygon: g, peak_cell, peak_value: data[peak_cell.0 * cols + peak_cell.1] });
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::grid::BBox;
    use geo::{Centroid, Winding};

    #[test]
    fn single_hot_cell_is_a_small_closed_ccw_ring_around_the_cell() {
        let g = Grid::new(BBox { west: 10.0, south: 50.0, east: 10.01, north: 50.01 }, 50.0).unwrap();
        let mut d = vec![-100.0f32; g.cells()];
        let (r, c) = (5, 7);
        d[r * g.cols() + c] = -50.0;
        let reg = regions(&g, &d, -60.0, false);
        assert_eq!(reg.len(), 1);
        let p = &reg[0].polygon;
        // RFC 7946 §3.1.6: closed rings, exterior counter-clockwise.
        assert_eq!(p.exterior().0.first(), p.exterior().0.last());
        assert!(p.exterior().is_ccw());
        let cen = p.centroid().unwrap();
        assert!((cen.x() - g.lon_of_col(c)).abs() < 0.3 * g.dlon(), "{} vs {}", cen.x(), g.lon_of_col(c));
        assert!((cen.y() - g.lat_of_row(r)).abs() < 0.3 * g.dlat());
        assert_eq!(reg[0].peak_cell, (r, c));
        // Smaller than one 50 m cell (2500 m²) since the contour passes between centres.
        assert!(reg[0].area_m2 > 100.0 && reg[0].area_m2 < 2500.0, "{}", reg[0].area_m2);
    }

    /// Regression (outage outlines drew exterior rings only, so a zone with holes became a
    /// frame): a ring of low cells around a high centre below the level is one region with one
    /// hole, and its outlines are both rings (RFC 7946: holes are rings of the polygon).
    #[test]
    fn outlines_include_holes() {
        let g = Grid::new(BBox { west: 10.0, south: 50.0, east: 10.01, north: 50.01 }, 50.0).unwrap();
        let mut d = vec![1.0f32; g.cells()];
        for r in 3..10 {
            for c in 3..10 {
                d[r * g.cols() + c] = if (5..8).contains(&r) && (5..8).contains(&c) { 1.0 } else { 0.0 };
            }
        }
        let reg = regions(&g, &d, 0.5, true);
        assert_eq!(reg.len(), 1);
        assert_eq!(reg[0].polygon.interiors().len(), 1);
        assert_eq!(outlines(&reg).len(), 2);
        assert!(!reg[0].is_sub_cell(&g));
    }
}
