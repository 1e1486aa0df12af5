//! End-to-end tests of random layouts (`draw`, `[draw]`, `map --realizations`) and of
//! `aggregate` on the command line.

use crate::util::{run, stderr, tol};

const TOML: &str = r#"name = "estate"
nodes = "nodes.geojson"
[radio]
frequency_ghz = 28
bandwidth_mhz = 400
noise_figure_db = 7
[propagation]
model = "close-in"
exponent = 2.8
[antenna]
pattern = "sector"
beamwidth_deg = 65
gain_dbi = 14
sidelobe_dbi = -6
power_dbm = 20
[grid]
cell_m = 10
bbox = [11.990, 47.995, 12.010, 48.005]
[draw]
density_per_km2 = 300
areas = "areas.geojson"
hard_core_m = 25
azimuth = "toward"
toward = [12.0, 48.0]
seed = 4
mode = "replace"
"#;

// An invented industrial estate: one 1.2 km × 0.8 km yard with a 300 m × 300 m depot cut out.
const AREAS: &str = r#"{"type":"FeatureCollection","features":[
{"type":"Feature","properties":{"name":"yard"},"geometry":{"type":"Polygon","coordinates":[[[11.992,47.9964],[12.008,47.9964],[12.008,48.0036],[11.992,48.0036],[11.992,47.9964]]]}},
{"type":"Feature","properties":{"kind":"exclusion"},"geometry":{"type":"Polygon","coordinates":[[[11.998,47.9986],[12.002,47.9986],[12.002,48.0014],[11.998,48.0014],[11.998,47.9986]]]}}
]}"#;

const NODES: &str = r#"{"type":"FeatureCollection","features":[
{"type":"Feature","geometry":{"type":"Point","coordinates":[12.0,48.0]},"properties":{"id":"hub","pattern":"omni","gain_dbi":8}}]}"#;

fn site(toml: &str) -> (tempfile::TempDir, String) {
    let d = tempfile::tempdir().unwrap();
    std::fs::write(d.path().join("scenario.toml"), toml).unwrap();
    std::fs::write(d.path().join("areas.geojson"), AREAS).unwrap();
    std::fs::write(d.path().join("nodes.geojson"), NODES).unwrap();
    let p = d.path().join("scenario.toml").to_str().unwrap().to_string();
    (d, p)
}

fn drawn(path: &std::path::Path) -> Vec<(f64, f64, f64)> {
    let v: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap();
    v["features"]
        .as_array()
        .unwrap()
        .iter()
        .map(|f| {
            let c = &f["geometry"]["coordinates"];
            (c[0].as_f64().unwrap(), c[1].as_f64().unwrap(), f["properties"]["azimuth_deg"].as_f64().unwrap())
        })
        .collect()
}

/// Points stay in the yard and out of the depot, respect the 25 m hard core, point at the
/// hub, and their count matches the Matérn II retained intensity (Matérn 1986) within 4 σ
/// of a Poisson count of that mean (hard-core counts are less variable than Poisson, so the
/// bound is conservative; from memory).
#[test]
fn draw_respects_areas_hard_core_and_orientation() {
    let (d, p) = site(TOML);
    let out = d.path().join("drawn.geojson");
    let o = run(&["draw", &p, "--out", out.to_str().unwrap(), "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let pts = drawn(&out);
    let frame = lobemap::geometry::frame::LocalFrame::new(48.0, 12.0);
    let local: Vec<(f64, f64)> = pts.iter().map(|p| frame.to_local(p.0, p.1)).collect();
    for (k, p) in pts.iter().enumerate() {
        assert!(p.0 > 11.992 && p.0 < 12.008 && p.1 > 47.9964 && p.1 < 48.0036, "outside the yard");
        assert!(!(p.0 > 11.998 && p.0 < 12.002 && p.1 > 47.9986 && p.1 < 48.0014), "inside the depot");
        let brg = lobemap::geometry::frame::bearing_deg(-local[k].0, -local[k].1);
        assert!(((p.2 - brg + 540.0) % 360.0 - 180.0).abs() < tol::BEARING_DEG, "not pointed at the hub");
    }
    for i in 0..local.len() {
        for j in 0..i {
            let d = ((local[i].0 - local[j].0).powi(2) + (local[i].1 - local[j].1).powi(2)).sqrt();
            assert!(d >= 25.0 - 1e-6, "hard core violated: {d}");
        }
    }
    let (w, s, e, n) = (
        frame.to_local(11.992, 47.9964),
        frame.to_local(11.998, 47.9986),
        frame.to_local(12.008, 48.0036),
        frame.to_local(12.002, 48.0014),
    );
    let area_km2 = ((e.0 - w.0) * (e.1 - w.1) - (n.0 - s.0) * (n.1 - s.1)) / 1e6;
    let expect = lobemap::random::points::matern_ii_density(300e-6, 25.0) * 1e6 * area_km2;
    assert!((pts.len() as f64 - expect).abs() < tol::SIGMAS * expect.sqrt(), "{} vs {expect}", pts.len());
    // Same seed, same bytes.
    let out2 = d.path().join("again.geojson");
    assert!(run(&["draw", &p, "--out", out2.to_str().unwrap(), "--quiet"]).status.success());
    assert_eq!(std::fs::read(&out).unwrap(), std::fs::read(&out2).unwrap());
}

#[test]
fn map_averages_realizations() {
    let (d, p) = site(TOML);
    let out = d.path().join("m");
    let o = run(&["map", &p, "--out", out.to_str().unwrap(), "--quiet", "--realizations", "4"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let s: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    assert_eq!(s["realizations"], 4);
    assert!(!out.join("server.tif").exists());
    // The ensemble coverage is a mean of probabilities: inside [0, 1], and near 1 somewhere
    // (next to a node every layout covers).
    let mut dec = tiff::decoder::Decoder::new(std::fs::File::open(out.join("coverage.tif")).unwrap()).unwrap();
    let tiff::decoder::DecodingResult::F32(cov) = dec.read_image().unwrap() else { panic!("float32 expected") };
    let defined: Vec<f32> = cov.into_iter().filter(|v| *v != lobemap::NODATA).collect();
    assert!(defined.iter().all(|v| (0.0..=1.0).contains(v)));
    assert!(defined.iter().cloned().fold(0.0, f32::max) > 0.9);
    assert!(out.join("interference.tif").exists());
}

#[test]
fn bad_draw_input() {
    let (d, p) =
        site(&TOML.replace("hard_core_m = 25", "hard_core_m = -5").replace("mode = \"replace\"", "mode = \"swap\""));
    let o = run(&["draw", &p, "--out", d.path().join("x.geojson").to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("[draw]") && e.contains("hard_core_m") && e.contains("mode") && e.contains("swap"), "{e}");
    assert!(!d.path().join("x.geojson").exists());
    let (_d2, p2) = site(&TOML.replace("density_per_km2 = 300", "density_per_km2 = 300\ndensty = 3"));
    let o = run(&["check", &p2]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("densty"));
    let (_d3, p3) = site(&TOML[..TOML.find("[draw]").unwrap()]);
    let o = run(&["map", &p3, "--realizations", "3", "--out", "/tmp/never-written-lobemap"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--realizations"));
}

#[test]
fn aggregate_json_and_files() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("agg");
    let o = run(&[
        "aggregate",
        "--density-per-km2",
        "500",
        "--beamwidth-deg",
        "30",
        "--gain-dbi",
        "10",
        "--sidelobe-dbi",
        "-10",
        "--fading",
        "nakagami",
        "--m",
        "2",
        "--threshold-dbm",
        "-60",
        "--threshold-dbm",
        "-50",
        "--realizations",
        "2000",
        "--json",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["cumulants"].as_array().unwrap().len(), 4);
    for k in ["mean_dbm", "gamma", "quantiles_dbm", "exceedance", "ks"] {
        assert!(v.get(k).is_some(), "{k}");
    }
    for m in ["gamma", "exact", "mc"] {
        assert!(v["quantiles_dbm"][m]["p999"].is_number(), "{m}");
    }
    assert_eq!(v["exceedance"].as_array().unwrap().len(), 2);
    assert!(v["ks"]["gamma_vs_mc"].is_number() && v["ks"]["exact_vs_mc"].is_number());
    for f in ["cdf.csv", "cdf.png", "cdf.svg", "aggregate.json"] {
        assert!(out.join(f).is_file(), "{f}");
    }
    let csv = std::fs::read_to_string(out.join("cdf.csv")).unwrap();
    assert!(csv.starts_with("set,x_dbm,cdf_gamma,cdf_exact,cdf_mc"));
    // Planning answers and a sweep.
    let o = run(&[
        "aggregate",
        "--density-per-km2",
        "500",
        "--sweep",
        "k_db=0,10",
        "--max-density",
        "--min-guard",
        "--budget-dbm",
        "-55",
        "--outage",
        "0.05",
        "--json",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["sets"].as_array().unwrap().len(), 2);
    assert_eq!(v["planning"][0]["quantity"], "max_density_per_km2");
}

#[test]
fn aggregate_bad_flags() {
    let o = run(&["aggregate", "--density-per-km2", "-3", "--keep", "1.5", "--guard-m", "2000"]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("--density-per-km2") && e.contains("--keep") && e.contains("--guard-m"), "{e}");
    let o = run(&["aggregate", "--density-per-km2", "100", "--sweep", "colour=1,2"]);
    assert_eq!(o.status.code(), Some(2));
    let o = run(&["aggregate", "--density-per-km2", "100", "--max-density"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--budget-dbm"));
}

/// Regression (a layout lobemap wrote was refused as a node file: `index`, `eirp_dbm`): a
/// drawn layout reads back as the node file of the same scenario without its `[draw]` table,
/// and mapping it gives the same layers byte for byte as the map of the drawn layout itself
/// (common practice: a round trip through a file changes nothing); probe and links accept it.
#[test]
fn drawn_layout_reads_back_unchanged() {
    let (d, p) = site(TOML);
    let layout = d.path().join("layout-in.geojson");
    let o = run(&["draw", &p, "--out", layout.to_str().unwrap(), "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let first = d.path().join("first");
    let o = run(&["map", &p, "--out", first.to_str().unwrap(), "--quiet", "--layers", "total,sinr"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let without_draw = TOML[..TOML.find("[draw]").unwrap()].replace("nodes.geojson", "layout-in.geojson");
    std::fs::write(d.path().join("again.toml"), without_draw).unwrap();
    let again_toml = d.path().join("again.toml");
    let again = d.path().join("again");
    let a = again_toml.to_str().unwrap();
    let o = run(&["map", a, "--out", again.to_str().unwrap(), "--quiet", "--layers", "total,sinr"]);
    assert!(o.status.success(), "{}", stderr(&o));
    for f in ["total.tif", "sinr.tif", "layout.geojson"] {
        let (x, y) = (std::fs::read(first.join(f)).unwrap(), std::fs::read(again.join(f)).unwrap());
        let at = x.iter().zip(&y).position(|(a, b)| a != b);
        assert!(x == y, "{f} differs (lengths {} and {}, first difference at byte {at:?})", x.len(), y.len());
    }
    let o = run(&["probe", a, "--at", "48.0005,12.0005", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let o = run(&["links", a, "--out", d.path().join("links").to_str().unwrap(), "--quiet", "--no-maps"]);
    assert!(o.status.success(), "{}", stderr(&o));
}

/// Regression (`aggregate --scenario` took the first node's antenna, a 2.5° dish, instead of
/// the `[antenna]` defaults that drawn nodes get): on the demo scenario the interferers are
/// its lamp-post sectors (60°, 15/−5 dBi, 16 dBm), and the resolved inputs are echoed in the
/// JSON (`inputs`) and the text output.
#[test]
fn aggregate_scenario_takes_the_antenna_defaults_and_echoes_them() {
    let o = run(&["aggregate", "--scenario", "sites/harbourlight/scenario.toml", "--density-per-km2", "100", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let i = &v["inputs"];
    assert_eq!(i["tx_pattern"], "sector");
    assert_eq!(i["tx"], serde_json::json!([60.0, 15.0, -5.0]));
    assert_eq!(i["power_dbm"], 16.0);
    assert_eq!(i["rx"], serde_json::json!([30.0, 20.0, -5.0]), "the scenario's aimed receiver");
    let o = run(&["aggregate", "--scenario", "sites/harbourlight/scenario.toml", "--density-per-km2", "100"]);
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(
        text.starts_with("inputs: 100 per km²") && text.contains("interferers sector 60° 15/-5 dBi at 16 dBm"),
        "{text}"
    );
}
