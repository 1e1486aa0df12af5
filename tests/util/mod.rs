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
