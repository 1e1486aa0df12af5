//! Small seeded layouts shared by the tests and the benchmarks (`#[path]`-included there).

use lobemap::geometry::frame::LocalFrame;
use lobemap::geometry::grid::BBox;
use lobemap::model::antenna::Pattern;
use lobemap::model::node::Node;
use rand::{RngExt, SeedableRng};

/// One node with activity 1 and no peer.
pub fn node(id: &str, lon: f64, lat: f64, azimuth_deg: f64, pattern: Pattern, power_dbm: f64, height_m: f64) -> Node {
    Node {
        id: id.into(),
        lon,
        lat,
        azimuth_deg,
        pattern,
        power_dbm,
        height_m,
        activity: 1.0,
        peer: None,
        name: None,
        polarisation: Default::default(),
        channel: 0,
    }
}

/// `count` nodes of `pattern` uniform over the square ±`half_m` around the frame's origin, with
/// uniform boresights, from a PCG64 seeded with `seed` (ids `0`, `1`, … with `prefix`).
#[allow(clippy::too_many_arguments)]
pub fn random_nodes(
    frame: &LocalFrame,
    count: usize,
    half_m: f64,
    seed: u64,
    prefix: &str,
    pattern: Pattern,
    power_dbm: f64,
    height_m: f64,
    activity: f64,
) -> Vec<Node> {
    let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
    (0..count)
        .map(|k| {
            let (lon, lat) = frame.to_geo(rng.random_range(-half_m..half_m), rng.random_range(-half_m..half_m));
            let azimuth_deg = rng.random_range(0.0..360.0);
            Node { activity, ..node(&format!("{prefix}{k}"), lon, lat, azimuth_deg, pattern, power_dbm, height_m) }
        })
        .collect()
}

/// The box of the square ±`half_m` around the frame's origin.
pub fn square(frame: &LocalFrame, half_m: f64) -> BBox {
    let (west, south) = frame.to_geo(-half_m, -half_m);
    let (east, north) = frame.to_geo(half_m, half_m);
    BBox { west, south, east, north }
}

/// The exact double-precision sums at cell (row, col) of a scenario without a surface, with
/// an omni receiver: (total, interference) in mW, with the model's link budget of every node
/// (the server is the strongest transmitting node, as in the probe). Lean enough for 1e6
/// nodes: endpoints are given precomputed.
#[allow(dead_code)] // used by tests/farfield.rs and benches/farfield.rs only
pub fn exact_sums(
    sc: &lobemap::model::scenario::Scenario,
    ends: &[lobemap::model::link::Endpoint],
    row: usize,
    col: usize,
) -> (f64, f64) {
    use lobemap::model::link::{Budget, Geometry};
    let g = sc.grid();
    let (lon, lat) = (g.lon_of_col(col), g.lat_of_row(row));
    let rx = sc.receiver_end(lon, lat);
    let g_omni = 10f64.powf(sc.receiver().omni_gain_dbi() / 10.0);
    let (mut total, mut best, mut best_w) = (0.0, f64::MIN, 0.0);
    for (n, e) in sc.nodes().iter().zip(ends) {
        if n.activity <= 0.0 {
            continue;
        }
        let b = Budget::new(sc.pathloss_of(n), n, Geometry::between(e, &rx));
        let p = 10f64.powf(b.isotropic_dbm() / 10.0);
        total += n.activity * p;
        if p > best {
            best = p;
            best_w = n.activity * p;
        }
    }
    let shadow = sc.fading().shadow_mean();
    (shadow * g_omni * total, shadow * g_omni * (total - best_w))
}
