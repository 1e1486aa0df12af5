//! Helpers shared by the integration tests (and, for the fixtures, by the benchmarks).
#![allow(dead_code)]

pub mod fixtures;
pub mod run;
pub mod tol;

pub use run::{run, stderr};

/// A scenario folder (temporary) holding `scenario.toml` and `nodes.geojson` with the given
/// texts; returns the folder and the scenario's path.
pub fn site(toml: &str, nodes: &str) -> (tempfile::TempDir, std::path::PathBuf) {
    let d = tempfile::tempdir().unwrap();
    std::fs::write(d.path().join("scenario.toml"), toml).unwrap();
    std::fs::write(d.path().join("nodes.geojson"), nodes).unwrap();
    let p = d.path().join("scenario.toml");
    (d, p)
}

/// The demo's scenario text with every input path (nodes, ground, buildings) made absolute,
/// so a test can write a changed copy anywhere.
pub fn demo_scenario() -> String {
    let root = env!("CARGO_MANIFEST_DIR");
    let text = std::fs::read_to_string(format!("{root}/sites/harbourlight/scenario.toml")).unwrap();
    ["nodes.geojson", "ground.tif", "buildings.geojson", "context.geojson"]
        .iter()
        .fold(text, |t, f| t.replace(&format!("\"{f}\""), &format!("\"{root}/sites/harbourlight/{f}\"")))
}

/// Whether the probe's two strongest transmitters (before the receiver's gain) are within
/// 0.05 dB: there the choice of server is a tie and float32 may pick the other one, so the
/// engine-against-probe checks skip such cells.
pub fn server_tie(pr: &lobemap::jobs::probe::Probe) -> bool {
    let mut tx: Vec<f64> = pr.contributions.iter().map(|c| c.power_dbm - c.rx_gain_dbi).collect();
    tx.sort_by(|a, b| b.total_cmp(a));
    tx.len() > 1 && tx[0] - tx[1] < 0.05
}
