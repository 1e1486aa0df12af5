//! The channel-plan search on 1000 links among 5000 nodes (the `links` bench's layout, every
//! node an interferer of every link) with 4 channels × 2 polarisations, from every node on
//! channel a, V. `cargo bench --bench assign`.

use lobemap::geometry::frame::LocalFrame;
use lobemap::model::antenna::Pattern;
use lobemap::model::scenario::Scenario;
use std::time::Instant;

#[path = "../tests/util/fixtures.rs"]
mod fixtures;

fn main() {
    let frame = LocalFrame::new(52.0, 5.0);
    let half = 3000.0;
    let pattern = Pattern::parabolic(3.0, 34.0, -5.0).unwrap();
    let nodes = fixtures::random_nodes(&frame, 5000, half, 3, "n", pattern, 10.0, 8.0, 0.5);
    let feats: Vec<String> = nodes
        .iter()
        .enumerate()
        .map(|(k, n)| {
            let peer = if k < 1000 { format!(r#","peer":"n{}""#, k + 1000) } else { String::new() };
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
    );
    std::fs::write(dir.path().join("s.toml"), toml).unwrap();
    let sc = Scenario::load(&dir.path().join("s.toml")).unwrap();
    let t0 = Instant::now();
    let plan = lobemap::jobs::assign::search(&sc, &vec![false; sc.nodes().len()], 1);
    println!(
        "assign: 1000 links among 5000 nodes, 4 channels x 2 polarisations: {:.2} s, {} plans evaluated; worst margin {:.2} -> {:.2} dB, failing {} -> {}",
        t0.elapsed().as_secs_f64(),
        plan.evaluated,
        plan.worst_margin_db_before,
        plan.worst_margin_db_after,
        plan.failing_before,
        plan.failing_after
    );
}
