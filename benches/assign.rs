//! The channel-plan search on 1000 links among 5000 nodes with 4 channels × 2 polarisations,
//! from every node on channel a, V, every node an interferer of every link. Two layouts:
//! the `links` bench's (one-way links between random nodes, dishes aimed at random, so every
//! link fails whatever the plan), and a planned one (1000 mutual links of 60 to 250 m with
//! both dishes facing, 3000 other dishes aimed at random), which is what a planner runs.
//! The planned layout runs again with `[rain]`, where every link's outage minutes count.
//! `cargo bench --bench assign`.

use lobemap::geometry::frame::LocalFrame;
use lobemap::model::antenna::Pattern;
use lobemap::model::scenario::Scenario;
use rand::{RngExt, SeedableRng};
use std::time::Instant;

#[path = "../tests/util/fixtures.rs"]
mod fixtures;

fn main() {
    for (planned, rain) in [(false, false), (true, false), (true, true)] {
        bench(planned, rain);
    }
}

fn bench(planned: bool, rain: bool) {
    let frame = LocalFrame::new(52.0, 5.0);
    let half = 3000.0;
    let pattern = Pattern::parabolic(3.0, 34.0, -5.0).unwrap();
    let mut nodes = fixtures::random_nodes(&frame, 5000, half, 3, "n", pattern, 10.0, 8.0, 0.5);
    if planned {
        // Node k + 1000 stands 60 to 250 m from node k (a seeded hop), both dishes facing.
        let mut rng = rand_pcg::Pcg64::seed_from_u64(9);
        for k in 0..1000 {
            let (e, n) = frame.to_local(nodes[k].lon, nodes[k].lat);
            let (len, az) = (rng.random_range(60.0..250.0), rng.random_range(0.0..360.0f64));
            let (lon, lat) = frame.to_geo(e + len * az.to_radians().sin(), n + len * az.to_radians().cos());
            nodes[k].azimuth_deg = az;
            nodes[k + 1000].lon = lon;
            nodes[k + 1000].lat = lat;
            nodes[k + 1000].azimuth_deg = (az + 180.0) % 360.0;
        }
    }
    let feats: Vec<String> = nodes
        .iter()
        .enumerate()
        .map(|(k, n)| {
            let peer = match (k < 1000, planned && (1000..2000).contains(&k)) {
                (true, _) => format!(r#","peer":"n{}""#, k + 1000),
                (false, true) => format!(r#","peer":"n{}""#, k - 1000),
                _ => String::new(),
            };
            format!(
                r#"{{"type":"Feature","geometry":{{"type":"Point","coordinates":[{}, {}]}},"properties":{{"id":"n{k}","azimuth_deg":{},"channel":"a","polarisation":"V"{peer}}}}}"#,
                n.lon, n.lat, n.azimuth_deg
            )
        })
        .collect();
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("nodes.geojson"),
        format!(r#"{{"type":"FeatureCollection","features":[{}]}}"#, feats.join(",")),
    )
    .unwrap();
    let b = fixtures::square(&frame, half);
    let toml = format!(
        "name = \"bench\"\nnodes = \"nodes.geojson\"\n[radio]\nfrequency_ghz = 60.48\nbandwidth_mhz = 2160\nnoise_figure_db = 8\n[channels]\na = {{ centre_ghz = 58.32, bandwidth_mhz = 2160 }}\nb = {{ centre_ghz = 60.48, bandwidth_mhz = 2160 }}\nc = {{ centre_ghz = 62.64, bandwidth_mhz = 2160 }}\nd = {{ centre_ghz = 64.80, bandwidth_mhz = 2160 }}\n[propagation]\nmodel = \"close-in\"\nexponent = 2.1\nabsorption_db_per_km = 15\n[antenna]\npattern = \"parabolic\"\nbeamwidth_deg = 3\ngain_dbi = 34\nsidelobe_dbi = -5\npower_dbm = 10\nheight_m = 8\nactivity = 0.5\n[thresholds]\nsinr_db = 6\n[grid]\ncell_m = 50\nbbox = [{}, {}, {}, {}]\n",
        b.west, b.south, b.east, b.north
    ) + if rain { "[rain]\nrate_mm_h = 42.0\n" } else { "" };
    std::fs::write(dir.path().join("s.toml"), toml).unwrap();
    let sc = Scenario::load(&dir.path().join("s.toml")).unwrap();
    let t0 = Instant::now();
    let plan = lobemap::jobs::assign::search(&sc, &vec![false; sc.nodes().len()], 1);
    println!(
        "assign, {}: 1000 links among 5000 nodes, 4 channels x 2 polarisations: {:.2} s, {} plans evaluated; worst margin {:.2} -> {:.2} dB, failing {} -> {}, summed outage {} -> {} {}",
        match (planned, rain) {
            (false, _) => "links between random nodes",
            (true, false) => "planned mutual links",
            (true, true) => "planned mutual links with [rain] (outage minutes summed)",
        },
        t0.elapsed().as_secs_f64(),
        plan.evaluated,
        plan.worst_margin_db_before,
        plan.worst_margin_db_after,
        plan.failing_before,
        plan.failing_after,
        plan.outage_before,
        plan.outage_after,
        plan.outage_unit
    );
}
