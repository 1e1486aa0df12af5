//! One random layout for a scenario: Poisson points in the drawing region, thinned, oriented
//! and given the `[antenna]` defaults.

use crate::model::draw::{Azimuth, DrawSpec, Mode};
use crate::model::node::Node;
use crate::model::scenario::Scenario;
use crate::random::points::{Window, poisson, thin_matern_ii};
use geo::{BoundingRect, Contains, MultiPolygon, Point};
use rand::{RngExt, SeedableRng};
use rstar::primitives::GeomWithData;

/// Draws one random layout for the scenario with `seed` and returns the layout the map uses:
/// the fixed nodes plus the drawn ones (`add`) or the drawn ones alone (`replace`). Drawn
/// ids are `draw-1`, `draw-2`, …
pub fn layout(sc: &Scenario, spec: &DrawSpec, seed: u64) -> Vec<Node> {
    let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
    let b = sc.grid.bbox();
    let region_box = if spec.include.is_empty() {
        (b.west, b.south, b.east, b.north)
    } else {
        let r = MultiPolygon(spec.include.clone()).bounding_rect().expect("non-empty");
        (r.min().x, r.min().y, r.max().x, r.max().y)
    };
    let corners = [
        (region_box.0, region_box.1),
        (region_box.0, region_box.3),
        (region_box.2, region_box.1),
        (region_box.2, region_box.3),
    ];
    let local: Vec<(f64, f64)> = corners.iter().map(|&(lon, lat)| sc.frame.to_local(lon, lat)).collect();
    let w = Window {
        xmin: local.iter().map(|p| p.0).fold(f64::MAX, f64::min),
        xmax: local.iter().map(|p| p.0).fold(f64::MIN, f64::max),
        ymin: local.iter().map(|p| p.1).fold(f64::MAX, f64::min),
        ymax: local.iter().map(|p| p.1).fold(f64::MIN, f64::max),
    };
    let parent = poisson(&mut rng, spec.density_per_km2 / 1e6 * spec.keep, &w);
    // The process lives in the region: keep parent points inside it, then thin.
    let geo_pts: Vec<(f64, f64)> = parent.iter().map(|p| sc.frame.to_geo(p[0], p[1])).collect();
    let inside: Vec<[f64; 2]> = parent
        .iter()
        .zip(&geo_pts)
        .filter(|(_, g)| {
            let pt = Point::new(g.0, g.1);
            let inc = if spec.include.is_empty() {
                g.0 >= b.west && g.0 <= b.east && g.1 >= b.south && g.1 <= b.north
            } else {
                spec.include.iter().any(|p| p.contains(&pt))
            };
            inc && !spec.exclude.iter().any(|p| p.contains(&pt))
        })
        .map(|(p, _)| *p)
        .collect();
    let pts = if spec.hard_core_m > 0.0 { thin_matern_ii(&mut rng, inside, spec.hard_core_m, &w) } else { inside };
    let fixed_tree = rstar::RTree::bulk_load(
        sc.nodes
            .iter()
            .enumerate()
            .map(|(i, n)| {
                let (x, y) = sc.frame.to_local(n.lon, n.lat);
                GeomWithData::new([x, y], i)
            })
            .collect(),
    );
    let (pattern, power_dbm, height_m, activity) = spec.antenna;
    let drawn = pts.iter().enumerate().map(|(k, p)| {
        let (lon, lat) = sc.frame.to_geo(p[0], p[1]);
        let az = match spec.azimuth {
            Azimuth::Uniform => rng.random_range(0.0..360.0),
            Azimuth::Toward(tlon, tlat) => {
                // From true north at the drawn node.
                crate::geometry::frame::geodesic_azimuth_deg(lon, lat, tlon, tlat)
            }
            Azimuth::Nearest => fixed_tree.nearest_neighbor(*p).map(|g| sc.nodes[g.data].azimuth_deg).unwrap_or(0.0),
        };
        Node {
            id: format!("draw-{}", k + 1),
            lon,
            lat,
            azimuth_deg: az,
            pattern,
            power_dbm,
            // A node drawn inside a footprint is mounted on the roof, `height_m` above it.
            height_m: height_m + sc.surface().and_then(|s| s.roof_height_m(lon, lat)).unwrap_or(0.0),
            activity,
            peer: None,
            name: None,
            polarisation: spec.polarisation,
            channel: 0,
        }
    });
    match spec.mode {
        Mode::Add => sc.nodes.iter().cloned().chain(drawn).collect(),
        Mode::Replace => drawn.collect(),
    }
}
