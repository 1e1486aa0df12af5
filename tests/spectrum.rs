//! Channels and polarisation: the coupling of an interferer into a link against the hand
//! values of XPD and ACIR, the map's channel layer, and every bad spectrum input.

use crate::util::run::{run, stderr};
use crate::util::tol;

/// A 28 GHz dish link A → B 500 m along a meridian and an omni interferer C 100 m east of B,
/// with C's channel and polarisation given, and `extra` appended to the scenario.
fn three(c_channel: &str, c_pol: &str, extra: &str) -> (tempfile::TempDir, std::path::PathBuf) {
    let feat = |id: &str, lat: f64, lon: f64, props: &str| {
        format!(
            r#"{{"type":"Feature","geometry":{{"type":"Point","coordinates":[{lon}, {lat}]}},"properties":{{"id":"{id}",{props}}}}}"#
        )
    };
    let dish =
        r#""pattern":"parabolic","beamwidth_deg":3,"gain_dbi":34,"sidelobe_dbi":-6,"channel":"a","polarisation":"V""#;
    let nodes = format!(
        r#"{{"type":"FeatureCollection","features":[{},{},{}]}}"#,
        feat("A", 45.0, 7.0, &format!(r#"{dish},"azimuth_deg":0,"peer":"B""#)),
        feat("B", 45.0045, 7.0, &format!(r#"{dish},"azimuth_deg":180,"peer":"A""#)),
        feat(
            "C",
            45.0045,
            7.00127,
            &format!(r#""pattern":"omni","gain_dbi":5,"channel":"{c_channel}","polarisation":"{c_pol}""#)
        )
    );
    let toml = format!(
        "name = \"three\"\nnodes = \"nodes.geojson\"\n[radio]\nfrequency_ghz = 28\nbandwidth_mhz = 400\nnoise_figure_db = 7\n[channels]\na = {{ centre_ghz = 28.0, bandwidth_mhz = 400 }}\nb = {{ centre_ghz = 28.4, bandwidth_mhz = 400 }}\nc = {{ centre_ghz = 28.8, bandwidth_mhz = 400 }}\nh = {{ centre_ghz = 28.2, bandwidth_mhz = 400 }}\n[propagation]\nmodel = \"free-space\"\n[antenna]\npower_dbm = 20\nheight_m = 10\n[grid]\ncell_m = 20\n{extra}"
    );
    crate::util::site(&toml, &nodes)
}

/// The interference at B on the link A → B, dBm (None: nothing couples).
fn interference_at_b(c_channel: &str, c_pol: &str, extra: &str) -> Option<f64> {
    let (d, p) = three(c_channel, c_pol, extra);
    let out = d.path().join("o");
    let o = run(&["links", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--no-maps", "--json"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let rows: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let r = rows.as_array().unwrap().iter().find(|r| r["to"] == "B").unwrap();
    r["interference_dbm"].as_f64()
}

/// Hand values of the coupling (ITU-R SM.337's frequency-dependent rejection in the
/// ACLR/ACS form of 3GPP TR 36.942 / TR 38.803, from memory): the orthogonal polarisation
/// lowers the interference by XPD = 25 dB; the first adjacent channel by ACIR with
/// 1/ACIR = 1/ACLR + 1/ACS = 2 × 10⁻³ (26.990 dB); half the interferer's bandwidth inside the
/// victim's by 3.010 dB; the second adjacent channel couples nothing unless aclr2/acs2 are
/// given (then 1/ACIR = 10⁻⁵ + 10⁻⁴·⁵ = 4.1623 × 10⁻⁵, 43.807 dB). Every difference is of two values printed to
/// 0.01 dB: tol::TWO_DECIMALS.
#[test]
fn coupling_matches_xpd_and_acir_by_hand() {
    let co = interference_at_b("a", "V", "").unwrap();
    // The interferer's path loss is at its own carrier: free space adds 20 log10(f/28 GHz)
    // (ITU-R P.525) on channels b (28.4), h (28.2) and c (28.8 GHz).
    let fs = |f: f64| 20.0 * (f / 28.0f64).log10();
    let cases = [
        ("a", "H", "", 25.0),
        ("b", "V", "", 26.98970004 + fs(28.4)),
        ("h", "V", "", 3.01029996 + fs(28.2)),
        ("b", "H", "", 25.0 + 26.98970004 + fs(28.4)),
        ("c", "V", "[spectrum]\naclr2_db = 50\nacs2_db = 45\n", 43.80669 + fs(28.8)),
        ("a", "H", "[spectrum]\nxpd_db = 31\n", 31.0),
        ("b", "V", "[spectrum]\naclr_db = 45\nacs_db = 33\n", 32.73428 + fs(28.4)),
    ];
    for (ch, pol, extra, want) in cases {
        let i = interference_at_b(ch, pol, extra).unwrap();
        assert!((co - i - want).abs() < tol::TWO_DECIMALS, "{ch}/{pol} {extra}: {co} - {i} vs {want}");
    }
    assert_eq!(interference_at_b("c", "V", ""), None, "second adjacent without aclr2/acs2");
}

/// The map's `channel` layer is the server's channel index (summary.json lists the names by
/// index), the default when nodes use several channels, and the map's interference with a
/// cross-polar interferer agrees with the probe's.
#[test]
fn channel_layer_and_map_coupling() {
    let (d, p) = three("a", "H", "");
    let out = d.path().join("m");
    let o = run(&["map", p.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let layers: Vec<&str> = summary["layers"].as_array().unwrap().iter().map(|v| v.as_str().unwrap()).collect();
    assert!(layers.contains(&"channel"), "{layers:?}");
    assert_eq!(summary["channels"], serde_json::json!(["radio", "a", "b", "c", "h"]));
    // Every node is on channel a (index 1) here, so every served cell reads 1.
    let sc = lobemap::model::scenario::Scenario::load(&p).unwrap();
    let l = lobemap::engine::Engine::new(&sc).run(&lobemap::engine::Options {
        layers: lobemap::engine::LayerSet { channel: true, interference: true, ..lobemap::engine::LayerSet::TOTAL },
        cutoff_m: None,
        progress: false,
    });
    assert!(l.channel.unwrap().iter().all(|v| *v == 1.0));
    // The engine's interference with the coupling table against the float64 probe, which
    // couples each contribution into the server's channel and polarisation (ENGINE_F32_DB).
    let ix = l.interference.unwrap();
    let g = sc.grid();
    let mut checked = 0;
    for r in 0..g.rows() {
        for c in 0..g.cols() {
            let pr = lobemap::jobs::probe::probe(&sc, g.lat_of_row(r), g.lon_of_col(c));
            if crate::util::server_tie(&pr) {
                continue;
            }
            let i = pr.interference_dbm.unwrap();
            assert!(
                (ix[r * g.cols() + c] as f64 - i).abs() < tol::ENGINE_F32_DB,
                "{r},{c}: {} vs {i}",
                ix[r * g.cols() + c]
            );
            checked += 1;
        }
    }
    assert!(checked > 500, "{checked}");
}

/// Every bad spectrum input is refused with exit 2, naming the file, the table or feature,
/// the field and the value, and nothing is written.
#[test]
fn bad_spectrum_inputs_are_refused() {
    let cases: &[(&str, &str, &str, &[&str])] = &[
        ("z", "V", "", &["nodes.geojson", "channel", "`z`", "`radio`, `a`"]),
        ("a", "X", "", &["nodes.geojson", "polarisation", "`X`"]),
        ("a", "V", "[spectrum]\nxpd_db = 90\n", &["[spectrum]", "xpd_db", "value 90", "[0, 80] dB"]),
        ("a", "V", "[spectrum]\naclr_db = -3\n", &["[spectrum]", "aclr_db", "value -3"]),
        ("a", "V", "[spectrum]\nacs_db = 100\n", &["[spectrum]", "acs_db", "value 100"]),
        ("a", "V", "[spectrum]\naclr2_db = 40\n", &["[spectrum]", "acs2_db", "together"]),
        ("a", "V", "[spectrum]\naclr2_db = 20\nacs2_db = 40\n", &["[spectrum]", "aclr2_db", "not below the first"]),
    ];
    for (ch, pol, extra, want) in cases {
        let (d, p) = three(ch, pol, extra);
        let out = d.path().join("o");
        let o = run(&["links", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--no-maps"]);
        assert_eq!(o.status.code(), Some(2), "{ch} {pol} {extra}");
        let e = stderr(&o);
        for w in *want {
            assert!(e.contains(w), "{ch} {pol} {extra}: `{w}` missing in {e}");
        }
        assert!(!out.exists());
    }
    // Scenario-side: a duplicate channel, a reserved name, a channel out of range.
    for (edit, want) in [
        ("h = { centre_ghz = 28.2, bandwidth_mhz = 400 }", "h = { centre_ghz = 28.4, bandwidth_mhz = 400 }"),
        ("h = { centre_ghz = 28.2, bandwidth_mhz = 400 }", "radio = { centre_ghz = 28.2, bandwidth_mhz = 400 }"),
        ("h = { centre_ghz = 28.2, bandwidth_mhz = 400 }", "h = { centre_ghz = 400, bandwidth_mhz = 400 }"),
    ] {
        let (d, p) = three("a", "V", "");
        let text = std::fs::read_to_string(&p).unwrap().replace(edit, want);
        std::fs::write(&p, text).unwrap();
        let o = run(&["check", p.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(2), "{want}");
        assert!(stderr(&o).contains("[channels]"), "{want}: {}", stderr(&o));
        drop(d);
    }
    // The two ends of a link on different channels or polarisations.
    let (d, p) = three("a", "V", "");
    let nodes = d.path().join("nodes.geojson");
    let text = std::fs::read_to_string(&nodes).unwrap();
    let bad = text.replacen(
        r#""channel":"a","polarisation":"V","azimuth_deg":180"#,
        r#""channel":"b","polarisation":"H","azimuth_deg":180"#,
        1,
    );
    assert_ne!(bad, text);
    std::fs::write(&nodes, bad).unwrap();
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("differs from its peer") && e.contains("channel") && e.contains("polarisation"), "{e}");
    assert_eq!(e.matches("differs from its peer").count(), 2, "one message a problem: {e}");
}
