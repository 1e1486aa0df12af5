//! Build a scenario in code and run a map with the library: four 28 GHz sector nodes on an
//! invented campus quad, aimed at its centre, every default layer written to a temporary
//! folder, then the median SINR read back from the summary.
//!
//! Run with `cargo run --release --example campus_map`.

use lobemap::engine::LayerSet;
use lobemap::model::scenario::Scenario;
use lobemap::run::map::{MapOptions, run_map};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let dir = tempfile::tempdir()?;
    // The node layout: a GeoJSON FeatureCollection, as a GIS would export it.
    let corners = [(0.0, 0.0, 45.0), (0.004, 0.0, 315.0), (0.0, -0.003, 135.0), (0.004, -0.003, 225.0)];
    let features: Vec<String> = corners
        .iter()
        .enumerate()
        .map(|(i, (dlon, dlat, az))| {
            format!(
                r#"{{"type":"Feature","geometry":{{"type":"Point","coordinates":[{},{}]}},"properties":{{"id":"Q{}","azimuth_deg":{az},"height_m":8}}}}"#,
                11.200 + dlon,
                47.300 + dlat,
                i + 1
            )
        })
        .collect();
    let nodes = format!(r#"{{"type":"FeatureCollection","features":[{}]}}"#, features.join(","));
    std::fs::write(dir.path().join("nodes.geojson"), nodes)?;
    // The scenario: the same keys as a scenario file (README, "Scenario file").
    let toml = r#"
name = "campus-quad"
nodes = "nodes.geojson"
[radio]
frequency_ghz = 28
bandwidth_mhz = 400
noise_figure_db = 7
[propagation]
model = "free-space"
[antenna]
pattern = "sector"
beamwidth_deg = 65
gain_dbi = 18
sidelobe_dbi = -2
power_dbm = 20
[grid]
cell_m = 5
margin_m = 60
"#;
    let path = dir.path().join("scenario.toml");
    let sc = Scenario::from_toml(toml, &path)?;
    let out = dir.path().join("out");
    let opts = MapOptions {
        out: out.clone(),
        layers: LayerSet::ALL,
        cutoff_m: None,
        max_memory_mib: 1024,
        progress: false,
        realizations: 1,
        tile: None,
        far_field_db: None,
    };
    let res = run_map(&sc, &opts)?;
    let sinr = res.summary.sinr_db.as_ref().ok_or("no SINR layer")?;
    println!(
        "{} cells; median SINR {:.1} dB; {} files in {}",
        res.summary.cells,
        sinr.p50.unwrap_or(f64::NAN),
        res.files.len(),
        out.display()
    );
    Ok(())
}
