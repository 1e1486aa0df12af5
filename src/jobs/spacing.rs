//! Spacing of a layout: nodes far from all others, which are more often a typing slip (a
//! digit or swapped coordinates) than a plan.

use crate::model::scenario::Scenario;
use rstar::{RTree, primitives::GeomWithData};

/// A node whose nearest neighbour is unusually far.
#[derive(Debug, Clone, PartialEq)]
pub struct Isolated {
    /// Node id.
    pub id: String,
    /// Distance to its nearest neighbour, m.
    pub nearest_m: f64,
    /// Median nearest-neighbour distance of the layout, m.
    pub median_m: f64,
}

/// Nodes whose nearest neighbour is farther than 10 times the layout's median
/// nearest-neighbour distance and farther than 2 km (common practice for a plausibility
/// check; the thresholds are ours).
pub fn isolated_nodes(sc: &Scenario) -> Vec<Isolated> {
    if sc.nodes.len() < 3 {
        return Vec::new();
    }
    let pts: Vec<[f64; 2]> = sc.nodes.iter().map(|n| sc.frame.to_local(n.lon, n.lat).into()).collect();
    let tree = RTree::bulk_load(pts.iter().enumerate().map(|(i, p)| GeomWithData::new(*p, i)).collect());
    let nearest: Vec<f64> = pts
        .iter()
        .enumerate()
        .map(|(i, p)| {
            tree.nearest_neighbor_iter(*p)
                .find(|q| q.data != i)
                .map(|q| ((q.geom()[0] - p[0]).powi(2) + (q.geom()[1] - p[1]).powi(2)).sqrt())
                .unwrap_or(0.0)
        })
        .collect();
    let mut sorted = nearest.clone();
    sorted.sort_by(f64::total_cmp);
    let median_m = sorted[sorted.len() / 2];
    nearest
        .iter()
        .zip(&sc.nodes)
        .filter(|(d, _)| **d > 10.0 * median_m && **d > 2000.0)
        .map(|(d, n)| Isolated { id: n.id.clone(), nearest_m: *d, median_m })
        .collect()
}
