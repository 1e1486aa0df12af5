//! End-to-end tests of the `lobemap` binary: outputs, determinism and bad input.

use crate::util::{run, stderr, tol};

const GOOD_TOML: &str = r#"name = "tiny"
nodes = "nodes.geojson"
[radio]
frequency_ghz = 28
bandwidth_mhz = 100
noise_figure_db = 7
[propagation]
model = "close-in"
exponent = 2.5
[antenna]
pattern = "sector"
beamwidth_deg = 30
gain_dbi = 20
sidelobe_dbi = -5
power_dbm = 20
[grid]
cell_m = 10
margin_m = 200
"#;

const GOOD_NODES: &str = r#"{"type":"FeatureCollection","features":[
{"type":"Feature","geometry":{"type":"Point","coordinates":[8.000,50.000]},"properties":{"id":"A","azimuth_deg":90,"peer":"B"}},
{"type":"Feature","geometry":{"type":"Point","coordinates":[8.010,50.000]},"properties":{"id":"B","azimuth_deg":270,"peer":"A"}},
{"type":"Feature","geometry":{"type":"Point","coordinates":[8.005,50.004]},"properties":{"id":7,"pattern":"omni","gain_dbi":6}}
]}"#;

use crate::util::site;

#[test]
fn good_scenario_maps_and_checks() {
    let (d, p) = site(GOOD_TOML, GOOD_NODES);
    let out = d.path().join("out");
    let o = run(&["check", p.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let o = run(&["map", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    for f in [
        "total.tif",
        "interference.tif",
        "sinr.tif",
        "server.tif",
        "total.png",
        "total.pgw",
        "sinr.png",
        "interference.png",
        "hotspots.geojson",
        "layout.geojson",
        "summary.json",
    ] {
        assert!(out.join(f).is_file(), "{f} missing");
    }
    // No temporary files left behind.
    assert!(std::fs::read_dir(&out).unwrap().all(|e| !e.unwrap().file_name().to_string_lossy().starts_with('.')));
    let layout: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("layout.geojson")).unwrap()).unwrap();
    let f2 = &layout["features"][2]["properties"];
    assert_eq!(f2["id"], "7");
    assert_eq!(f2["pattern"], "omni");
    assert_eq!(f2["power_dbm"], 20.0);
    assert_eq!(f2["height_m"], 5.0);
}

/// GeoTIFF read back with the tiff crate: size, float samples and the georeferencing tags
/// (GeoTIFF 1.0 §2.6: ModelPixelScale, ModelTiepoint, GeoKeyDirectory with 4326).
#[test]
fn geotiff_reads_back_with_georeferencing() {
    use tiff::decoder::{Decoder, DecodingResult};
    use tiff::tags::Tag;
    let (d, p) = site(GOOD_TOML, GOOD_NODES);
    let out = d.path().join("out");
    assert!(
        run(&["map", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet", "--layers", "total,sinr"])
            .status
            .success()
    );
    assert!(!out.join("interference.tif").exists());
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let mut dec = Decoder::new(std::fs::File::open(out.join("total.tif")).unwrap()).unwrap();
    let (w, h) = dec.dimensions().unwrap();
    assert_eq!(w as u64, summary["cols"].as_u64().unwrap());
    assert_eq!(h as u64, summary["rows"].as_u64().unwrap());
    let scale = dec.get_tag_f64_vec(Tag::ModelPixelScaleTag).unwrap();
    let tie = dec.get_tag_f64_vec(Tag::ModelTiepointTag).unwrap();
    let keys = dec.get_tag_u16_vec(Tag::GeoKeyDirectoryTag).unwrap();
    let bbox: Vec<f64> = summary["bbox"].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect();
    assert!((tie[3] - bbox[0]).abs() < tol::EXACT && (tie[4] - bbox[3]).abs() < tol::EXACT);
    assert!((bbox[2] - (bbox[0] + w as f64 * scale[0])).abs() < tol::ROUNDING);
    assert!((bbox[1] - (bbox[3] - h as f64 * scale[1])).abs() < tol::ROUNDING);
    assert!(keys.windows(4).any(|k| k == [2048, 0, 1, 4326]));
    assert!(keys.windows(4).any(|k| k == [1024, 0, 1, 2]));
    let nodata = dec.get_tag_ascii_string(Tag::GdalNodata).unwrap();
    assert_eq!(nodata.trim_end_matches('\0'), "-9999");
    match dec.read_image().unwrap() {
        DecodingResult::F32(v) => {
            assert_eq!(v.len(), (w * h) as usize);
            assert!(v.iter().all(|x| x.is_finite()));
            let max = v.iter().cloned().fold(f32::MIN, f32::max);
            assert!(max > -60.0 && max < 20.0, "{max}");
        }
        _ => panic!("expected float32 samples"),
    }
}

#[test]
fn same_bytes_for_any_thread_count() {
    let (d, p) = site(GOOD_TOML, GOOD_NODES);
    let (a, b) = (d.path().join("a"), d.path().join("b"));
    assert!(
        run(&["map", p.to_str().unwrap(), "--out", a.to_str().unwrap(), "--quiet", "--threads", "1"]).status.success()
    );
    assert!(
        run(&["map", p.to_str().unwrap(), "--out", b.to_str().unwrap(), "--quiet", "--threads", "2"]).status.success()
    );
    for (out, t) in [(&a, "1"), (&b, "2")] {
        let o = run(&[
            "links",
            p.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--quiet",
            "--threads",
            t,
            "--monte-carlo",
            "3000",
        ]);
        assert!(o.status.success(), "{}", stderr(&o));
    }
    for f in [
        "total.tif",
        "interference.tif",
        "sinr.tif",
        "server.tif",
        "coverage.tif",
        "sinr.png",
        "hotspots.geojson",
        "layout.geojson",
        "links.csv",
        "install.csv",
        "report.html",
    ] {
        assert_eq!(std::fs::read(a.join(f)).unwrap(), std::fs::read(b.join(f)).unwrap(), "{f} differs");
    }
}

#[test]
fn probe_json_has_the_documented_keys() {
    let (_d, p) = site(GOOD_TOML, GOOD_NODES);
    let o = run(&["probe", p.to_str().unwrap(), "--at", "50.001,8.004", "--json"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    for k in ["total_dbm", "interference_dbm", "noise_dbm", "sinr_db", "server", "contributions"] {
        assert!(v.get(k).is_some(), "{k}");
    }
    let c = &v["contributions"][0];
    for k in ["id", "distance_m", "bearing_deg", "tx_gain_dbi", "rx_gain_dbi", "path_loss_db", "power_dbm"] {
        assert!(c.get(k).is_some(), "{k}");
    }
    let o = run(&["probe", p.to_str().unwrap(), "--at", "95,8"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--at"));
}

/// Runs `map` on a broken variant and checks: exit code 2, every expected fragment in the
/// message, and no output folder.
fn expect_bad(toml: &str, nodes: &str, fragments: &[&str]) {
    let (d, p) = site(toml, nodes);
    let out = d.path().join("out");
    let o = run(&["map", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"]);
    let e = stderr(&o);
    assert_eq!(o.status.code(), Some(2), "stderr: {e}");
    for f in fragments {
        assert!(e.contains(f), "`{f}` not in: {e}");
    }
    assert!(!out.exists(), "partial output written for: {e}");
    // The inputs are untouched.
    assert_eq!(std::fs::read_to_string(&p).unwrap(), toml);
    let c = run(&["check", p.to_str().unwrap()]);
    assert_eq!(c.status.code(), Some(2));
}

/// Regression (coverage could not keep its error bound): shadowing between 0 and 2 dB on a
/// wanted signal that does not fade is refused with the allowed values named; a fading
/// signal under the same shadowing maps.
#[test]
fn slight_shadowing_of_an_unfaded_signal_is_refused() {
    let toml = format!("{GOOD_TOML}[fading]\nmodel = \"none\"\ninterferer_model = \"rayleigh\"\nshadowing_db = 1\n");
    expect_bad(&toml, GOOD_NODES, &["scenario.toml", "[fading]", "shadowing_db", "value 1", "at least 2 dB"]);
    let (d, p) = site(&toml.replace("model = \"none\"", "model = \"rayleigh\""), GOOD_NODES);
    let out = d.path().join("out");
    let o = run(&["map", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
}

#[test]
fn bad_toml_syntax() {
    expect_bad("name = \"x\"\n[radio\n", GOOD_NODES, &["scenario.toml"]);
}

#[test]
fn unknown_key_in_scenario() {
    expect_bad(
        &GOOD_TOML.replace("cell_m = 10", "cell_m = 10\ncel_m = 5"),
        GOOD_NODES,
        &["scenario.toml", "cel_m", "unknown key", "did you mean `cell_m`"],
    );
}

#[test]
fn nan_and_out_of_range_in_scenario_are_listed_together() {
    let t = GOOD_TOML
        .replace("gain_dbi = 20", "gain_dbi = nan")
        .replace("beamwidth_deg = 30", "beamwidth_deg = 400")
        .replace("noise_figure_db = 7", "noise_figure_db = -3");
    expect_bad(
        &t,
        GOOD_NODES,
        &["[antenna]", "gain_dbi", "NaN", "beamwidth_deg", "400", "(0, 360]", "noise_figure_db", "[0, 30]"],
    );
}

#[test]
fn malformed_geojson() {
    expect_bad(GOOD_TOML, "{\"type\": \"FeatureCollection\", \"features\": [", &["nodes.geojson", "not valid GeoJSON"]);
}

#[test]
fn non_point_feature() {
    let n = GOOD_NODES.replace(
        r#"{"type":"Point","coordinates":[8.010,50.000]}"#,
        r#"{"type":"LineString","coordinates":[[8.0,50.0],[8.01,50.0]]}"#,
    );
    expect_bad(GOOD_TOML, &n, &["nodes.geojson", "feature 1 (id B)", "geometry", "LineString"]);
}

#[test]
fn missing_and_duplicate_ids() {
    let n = GOOD_NODES.replace(r#""id":"B","#, r#""id":"A","#);
    expect_bad(GOOD_TOML, &n, &["feature 1 (id A)", "duplicate id", "first used by feature 0"]);
    let n = GOOD_NODES.replace(r#""id":7,"#, "");
    expect_bad(GOOD_TOML, &n, &["feature 2", "`id`", "missing"]);
}

#[test]
fn node_values_out_of_range() {
    let n = GOOD_NODES
        .replace(r#""azimuth_deg":90,"#, r#""azimuth_deg":90,"activity":1.5,"beamwidth_deg":0,"#)
        .replace("[8.010,50.000]", "[200.0,50.000]");
    expect_bad(
        GOOD_TOML,
        &n,
        &["feature 0 (id A)", "activity", "[0, 1]", "beamwidth_deg", "(0, 360]", "feature 1 (id B)", "longitude 200"],
    );
}

#[test]
fn typo_in_node_property() {
    let n = GOOD_NODES.replace(r#""azimuth_deg":90"#, r#""azimuth_dg":90"#);
    expect_bad(GOOD_TOML, &n, &["feature 0 (id A)", "azimuth_dg", "unknown property", "azimuth_deg", "missing"]);
}

#[test]
fn peer_that_names_no_node() {
    let n = GOOD_NODES.replace(r#""peer":"A""#, r#""peer":"Q""#);
    expect_bad(GOOD_TOML, &n, &["feature 1 (id B)", "peer", "`Q` names no node"]);
}

#[test]
fn peers_at_the_same_spot() {
    let n = GOOD_NODES.replace("[8.010,50.000]", "[8.000,50.000]");
    expect_bad(GOOD_TOML, &n, &["feature 0 (id A)", "peer", "same spot"]);
}

#[test]
fn grid_too_large_for_memory() {
    let t = GOOD_TOML.replace("cell_m = 10", "cell_m = 0.1").replace("margin_m = 200", "margin_m = 2000");
    expect_bad(&t, GOOD_NODES, &["[grid]", "cell_m", "MiB", "larger cell_m"]);
}

#[test]
fn unwritable_output_folder() {
    let (d, p) = site(GOOD_TOML, GOOD_NODES);
    let file = d.path().join("plain-file");
    std::fs::write(&file, "x").unwrap();
    let out = file.join("out");
    let o = run(&["map", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("cannot write output") && stderr(&o).contains("plain-file"), "{}", stderr(&o));
}

#[test]
fn demo_runs_from_the_repository() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("demo");
    // `run` starts the binary in the repository folder, where the demo site lives.
    let o = run(&["demo", "--out", out.to_str().unwrap(), "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let s: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    assert_eq!(s["nodes"], 46);
    assert!(s["hotspots"].as_u64().unwrap() >= 1);
    let hs: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("hotspots.geojson")).unwrap()).unwrap();
    let f = &hs["features"][0];
    assert_eq!(f["properties"]["kind"], "interference");
    assert!(f["properties"]["dominant"].as_array().unwrap().len() <= 3);
    let ring = f["geometry"]["coordinates"][0].as_array().unwrap();
    assert_eq!(ring.first(), ring.last());
}

/// Regression (check sized 4 layers while map computes 5): at every memory limit, `check`
/// refuses exactly when `map` with its default layers does (the limits straddle the grid's
/// estimate, which `check` prints).
#[test]
fn check_sizes_memory_like_map() {
    let (d, p) = site(&GOOD_TOML.replace("cell_m = 10", "cell_m = 2"), GOOD_NODES);
    let c = run(&["check", p.to_str().unwrap()]);
    let text = String::from_utf8_lossy(&c.stdout).to_string();
    let est: u64 = text.split("needs about ").nth(1).unwrap().split(' ').next().unwrap().parse().unwrap();
    let mut verdicts = Vec::new();
    for mib in est - 6..=est + 6 {
        let limit = mib.to_string();
        let c = run(&["check", p.to_str().unwrap(), "--max-memory-mib", &limit]);
        let out = d.path().join(format!("out{mib}"));
        let m =
            run(&["map", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet", "--max-memory-mib", &limit]);
        assert_eq!(c.status.code(), m.status.code(), "limit {mib} MiB: check {} / map {}", stderr(&c), stderr(&m));
        verdicts.push(c.status.success());
    }
    // The limits straddle the grid's need: some refused, some accepted.
    assert!(verdicts.contains(&true) && verdicts.contains(&false), "{verdicts:?}");
}

/// Regression (summary.json `layers` omitted coverage, and listed server for ensembles): the
/// list names exactly the layers whose GeoTIFFs were written.
#[test]
fn summary_layers_name_every_layer_written() {
    let (d, p) = site(GOOD_TOML, GOOD_NODES);
    let out = d.path().join("out");
    let o = run(&["map", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let s: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let mut listed: Vec<String> =
        s["layers"].as_array().unwrap().iter().map(|v| v.as_str().unwrap().to_string()).collect();
    let mut tifs: Vec<String> = std::fs::read_dir(&out)
        .unwrap()
        .filter_map(|e| e.unwrap().file_name().into_string().ok())
        .filter_map(|n| n.strip_suffix(".tif").map(String::from))
        .collect();
    listed.sort();
    tifs.sort();
    assert_eq!(listed, tifs);
    assert!(listed.contains(&"coverage".to_string()));
}

/// Regression (a node that never transmits was computed): activity 0 on a node that names a
/// peer, or on every node, is refused with the node and field named, exit 2, no output.
#[test]
fn never_transmitting_nodes_are_refused() {
    let silent_peer = GOOD_NODES.replace(r#""id":"B","azimuth_deg":270"#, r#""id":"B","azimuth_deg":270,"activity":0"#);
    let (d, p) = site(GOOD_TOML, &silent_peer);
    let out = d.path().join("out");
    let o = run(&["map", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("feature 1 (id B)") && e.contains("`activity`") && e.contains("peer `A`"), "{e}");
    assert!(!out.exists());
    let all_silent = GOOD_TOML.replace("power_dbm = 20", "power_dbm = 20\nactivity = 0");
    let no_peers = GOOD_NODES.replace(r#","peer":"B""#, "").replace(r#","peer":"A""#, "");
    let (_d2, p2) = site(&all_silent, &no_peers);
    let o = run(&["check", p2.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("none transmits"), "{}", stderr(&o));
}

/// Regression (hot spots smaller than one cell, some of zero area, inflated the count): on the
/// demo every zone written has a positive area, zones below one cell are flagged `sub_cell`,
/// and the summary counts only the others (the rule documented in the README).
#[test]
fn sub_cell_zones_are_flagged_not_counted() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("demo");
    let o = run(&["map", "sites/harbourlight/scenario.toml", "--out", out.to_str().unwrap(), "--quiet"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let s: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let gj: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("hotspots.geojson")).unwrap()).unwrap();
    let cell = s["cell_m"].as_f64().unwrap().powi(2);
    let (mut hot, mut low, mut sub) = (0, 0, 0);
    for f in gj["features"].as_array().unwrap() {
        let p = &f["properties"];
        let area = p["area_m2"].as_f64().unwrap();
        assert!(area > 0.0, "zero-area zone written");
        let flagged = p["sub_cell"].as_bool().unwrap();
        assert_eq!(flagged, area < cell * (1.0 - 1e-9), "sub_cell flag at area {area}"); // rounded to 0.01 m²
        match (flagged, p["kind"].as_str().unwrap()) {
            (true, _) => sub += 1,
            (false, "interference") => hot += 1,
            (false, _) => low += 1,
        }
    }
    assert_eq!(s["hotspots"].as_u64().unwrap(), hot);
    assert_eq!(s["outage_zones"].as_u64().unwrap(), low);
    assert_eq!(s["sub_cell_zones"].as_u64().unwrap(), sub);
    assert!(sub > 0, "the demo has sub-cell spots to flag");
}

/// Regression (swapped or outlying coordinates passed silently): a node with longitude and
/// latitude swapped is refused by every command that loads the layout, naming the node and
/// the swap; a probe point outside the mapped area is refused naming `--at`; a node far from
/// all others but within reach is accepted by `check` with a warning naming it.
#[test]
fn swapped_and_outlying_coordinates_are_caught() {
    let swapped = GOOD_NODES.replace("[8.010,50.000]", "[50.000,8.010]");
    let (d, p) = site(GOOD_TOML, &swapped);
    for cmd in ["check", "map", "links"] {
        let out = d.path().join(format!("out-{cmd}"));
        let mut args = vec![cmd, p.to_str().unwrap()];
        if cmd != "check" {
            args.extend(["--out", out.to_str().unwrap(), "--quiet"]);
        }
        let o = run(&args);
        assert_eq!(o.status.code(), Some(2), "{cmd}: {}", stderr(&o));
        let e = stderr(&o);
        assert!(e.contains("feature 1 (id B)") && e.contains("swapped"), "{cmd}: {e}");
        assert!(!out.exists());
    }
    let (_d, p) = site(GOOD_TOML, GOOD_NODES);
    let o = run(&["probe", p.to_str().unwrap(), "--at", "8.005,50.002"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--at") && stderr(&o).contains("outside the mapped area"), "{}", stderr(&o));
    let far = GOOD_NODES.replace(
        "\n]}",
        r#",{"type":"Feature","geometry":{"type":"Point","coordinates":[8.110,50.000]},"properties":{"id":"D","azimuth_deg":90}}
]}"#,
    );
    let (_d, p) = site(GOOD_TOML, &far);
    let o = run(&["check", p.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stderr(&o).contains("warning: node `D`"), "{}", stderr(&o));
}

/// Regression (check stopped at the first unknown key, at a byte offset; feature indices went
/// wrong after a rejected feature; a peer that exists but was rejected was "unknown"): every
/// unknown key is listed with file:line:column and the nearest allowed key, and node problems
/// name the features as written.
#[test]
fn every_problem_at_once_with_place() {
    let toml = GOOD_TOML
        .replace("nodes = \"nodes.geojson\"", "nodes = \"nodes.geojson\"\nnotes = \"x\"")
        .replace("bandwidth_mhz = 100", "bandwith_mhz = 100")
        .replace("cell_m = 10", "cell_m = 10\nmargn_m = 5");
    let (_d, p) = site(&toml, GOOD_NODES);
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("3 problem(s)"), "{e}");
    assert!(e.contains("scenario.toml:3:1") && e.contains("`notes`") && e.contains("did you mean `nodes`"), "{e}");
    assert!(e.contains("[radio]: field `bandwith_mhz`") && e.contains("did you mean `bandwidth_mhz`"), "{e}");
    assert!(e.contains("[grid]: field `margn_m`") && e.contains("did you mean `margin_m`"), "{e}");
    let nodes = r#"{"type":"FeatureCollection","features":[
{"type":"Feature","geometry":{"type":"Point","coordinates":[8.000,50.000]},"properties":{"id":"a","azimuth_deg":90,"gain_dbi":99}},
{"type":"Feature","geometry":{"type":"Point","coordinates":[8.010,50.000]},"properties":{"id":"b","azimuth_deg":270}},
{"type":"Feature","geometry":{"type":"Point","coordinates":[8.005,50.004]},"properties":{"id":"b","azimuth_deg":10,"peer":"a"}}
]}"#;
    let (_d, p) = site(GOOD_TOML, nodes);
    let e = stderr(&run(&["check", p.to_str().unwrap()]));
    assert!(e.contains("feature 0 (id a): field `gain_dbi`"), "{e}");
    assert!(e.contains("feature 2 (id b): field `id`: duplicate id `b` (first used by feature 1)"), "{e}");
    assert!(e.contains("feature 2 (id b): field `peer`: value `a` names a node that has problems of its own"), "{e}");
}
