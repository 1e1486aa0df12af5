//! Weather and availability end to end: a link's gaseous loss and rain fade against the
//! `itur` package (PyPI) values of ITU-R P.676-12 and P.530-17, the availability layer against
//! the float64 probe, `--strict` on the availability target, and every bad weather input.

use crate::util::run::{run, stderr};
use crate::util::tol;
use geo::{Destination, Geodesic, Point};
use lobemap::engine::{Engine, LayerSet, Options};
use lobemap::jobs::probe::probe;
use lobemap::model::scenario::Scenario;
use lobemap::model::weather::rain::Bound;
use lobemap::model::weather::rain_path;
use rand::{RngExt, SeedableRng};

/// Latitude of the test link's southern end; the northern end is `LINK_M` north of it on
/// the WGS84 geodesic (the `geo` crate's Karney solver).
const LAT0: f64 = 44.9955;
const LINK_M: f64 = 1000.0;

/// Two dishes 1 km apart along a meridian at 28 GHz over flat ground, polarisation `pol`,
/// with `extra` appended to the scenario. The SINR is about 45 dB against a 30 dB threshold,
/// a fade margin inside the range P.530 covers at 42 mm/h.
fn two_dishes(pol: &str, extra: &str) -> (tempfile::TempDir, std::path::PathBuf) {
    let lat1 = Geodesic.destination(Point::new(7.0, LAT0), 0.0, LINK_M).y();
    let node = |id: &str, peer: &str, lat: f64, az: f64| {
        format!(
            r#"{{"type":"Feature","geometry":{{"type":"Point","coordinates":[7.0, {lat}]}},"properties":{{"id":"{id}","peer":"{peer}","azimuth_deg":{az},"polarisation":"{pol}"}}}}"#
        )
    };
    let nodes = format!(
        r#"{{"type":"FeatureCollection","features":[{},{}]}}"#,
        node("A", "B", LAT0, 0.0),
        node("B", "A", lat1, 180.0)
    );
    let toml = format!(
        "name = \"pair\"\nnodes = \"nodes.geojson\"\n[radio]\nfrequency_ghz = 28\nbandwidth_mhz = 400\nnoise_figure_db = 7\n[propagation]\nmodel = \"free-space\"\n[antenna]\npattern = \"parabolic\"\nbeamwidth_deg = 2\ngain_dbi = 38\nsidelobe_dbi = -10\npower_dbm = 10\nheight_m = 20\n[grid]\ncell_m = 20\n[thresholds]\nsinr_db = 30\n{extra}"
    );
    crate::util::site(&toml, &nodes)
}

fn links_json(p: &std::path::Path, dir: &std::path::Path, extra: &[&str]) -> (Option<i32>, serde_json::Value) {
    let out = dir.join("out");
    let mut args = vec!["links", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--no-maps", "--json"];
    args.extend_from_slice(extra);
    let o = run(&args);
    (o.status.code(), serde_json::from_slice(&o.stdout).unwrap_or(serde_json::Value::Null))
}

/// ITU-R P.530-17 rain fade at the target and P.676-12 gaseous loss on a 1 km, 28 GHz link in
/// the reference atmosphere, against `itur` 0.4.0: rain_attenuation(lat, lon, d = 1 km,
/// f = 28 GHz, el = 0, p = 0.01, τ, R001 = 42) = 11.13075954325851 dB (τ = 0, horizontal) and
/// 9.312760231617352 dB (τ = 90°, vertical); γ_o + γ_w at 28 GHz (dry pressure
/// 1013.25 − e, 288.15 K, 7.5 g/m³) = 0.10084599092045805 dB/km. The link is 1000 m within
/// 0.5 m (plane against the meridian arc); A ∝ d^(about 0.4) there, so 0.5 m moves A by
/// 2e-4 relative; both figures are printed to 0.01 dB, hence tol::TWO_DECIMALS.
#[test]
fn link_rain_fade_and_gas_match_itur() {
    for (pol, want) in [("H", 11.13075954325851), ("V", 9.312760231617352)] {
        let extra = "[atmosphere]\n[rain]\nrate_mm_h = 42\n[links]\navailability_target_pct = 99.99\n";
        let (d, p) = two_dishes(pol, extra);
        let (code, rows) = links_json(&p, d.path(), &[]);
        assert_eq!(code, Some(0), "{rows}");
        let r = &rows[0];
        let len = r["length_m"].as_f64().unwrap();
        assert!((len - LINK_M).abs() < 0.5, "{len}");
        let fade = r["rain_fade_db"].as_f64().unwrap();
        assert!((fade - want).abs() < tol::TWO_DECIMALS, "{pol}: {fade} vs itur {want}");
        let gas = r["gas_db"].as_f64().unwrap();
        assert!((gas - 0.10084599092045805 * len / 1000.0).abs() < tol::TWO_DECIMALS, "{gas}");
        // The fade margin is the SINR above the threshold, and the availability inverts to it.
        let (sinr, fm) = (r["sinr_db"].as_f64().unwrap(), r["fade_margin_db"].as_f64().unwrap());
        assert!((fm - (sinr - 30.0)).abs() < tol::TWO_DECIMALS);
        let avail = r["availability_pct"].as_f64().unwrap();
        assert_eq!(r["availability_bound"], "within", "{r}");
        let sc = Scenario::load(&p).unwrap();
        let rain = sc.weather().rain.unwrap();
        let cos_2tau = if pol == "H" { 1.0 } else { -1.0 };
        let path = rain_path(&rain, 28.0, len, len, cos_2tau, LAT0);
        let back = path.exceeded_db(100.0 - avail);
        // The availability is printed to 1e-6 % (5e-4 of p near 0.002 %, under 0.005 dB of A)
        // and the margin to 0.01 dB: the round trip holds to tol::TWO_DECIMALS.
        assert!((back - fm).abs() < tol::TWO_DECIMALS, "{pol}: {avail} % -> {back} dB vs margin {fm}");
        let outage = r["outage_min_per_year"].as_f64().unwrap();
        assert!((outage - (100.0 - avail) / 100.0 * 525_960.0).abs() < 0.6, "{outage}");
    }
}

/// `--strict` exits 3 when a link that meets its SINR threshold and coverage target falls
/// short of the availability target, and 0 when the target is within reach.
#[test]
fn strict_fails_a_link_below_the_availability_target() {
    for (rate, target, want) in [(42.0, 99.99, 0), (150.0, 99.999, 3)] {
        let extra = format!("[rain]\nrate_mm_h = {rate}\n[links]\navailability_target_pct = {target}\n");
        let (d, p) = two_dishes("V", &extra);
        let (code, rows) = links_json(&p, d.path(), &["--strict"]);
        let r = &rows[0];
        assert_eq!(r["passes"], true, "{r}");
        assert_eq!(r["meets_target"], want == 0, "{r}");
        assert_eq!(code, Some(want), "{r}");
    }
}

/// The map's availability layer against the float64 probe at 1500 seeded cells of the demo
/// over flat ground (its servers on four channels and both polarisations): the engine's percentage, turned back into a margin by the float64 P.530
/// law on the probe's server path, equals the probe's fade margin within
/// tol::ENGINE_F32_DB + 0.01 dB (the engine's SINR error, plus float32 in the inversion, whose
/// 100 − p keeps about 1e-5 % near 99.99 %, 0.01 dB of A). Ties between servers are skipped.
#[test]
fn availability_layer_agrees_with_the_probe() {
    let sc = Scenario::load(std::path::Path::new("sites/harbourlight/scenario.toml")).unwrap().with_surface(None);
    let layers = LayerSet { availability: true, ..LayerSet::TOTAL };
    let l = Engine::new(&sc).run(&Options { layers, cutoff_m: None, progress: false });
    let a = l.availability.unwrap();
    let g = sc.grid();
    let rain = sc.weather().rain.unwrap();
    let mut rng = rand_pcg::Pcg64::seed_from_u64(11);
    let (mut within, mut bounds, mut worst) = (0, 0, 0.0f64);
    for _ in 0..1500 {
        let (r, c) = (rng.random_range(0..g.rows()), rng.random_range(0..g.cols()));
        let pr = probe(&sc, g.lat_of_row(r), g.lon_of_col(c));
        if crate::util::server_tie(&pr) {
            continue;
        }
        let k = r * g.cols() + c;
        let (ae, ap) = (a[k] as f64, pr.weather.availability_pct.unwrap());
        let fm = pr.weather.fade_margin_db.unwrap();
        match pr.weather.availability_bound.unwrap() {
            Bound::Within => {
                let srv = pr.contributions.iter().find(|x| x.id == pr.server).unwrap();
                let node = sc.nodes().iter().find(|n| n.id == pr.server).unwrap();
                let dz = node.height_m - 4.0; // the demo's receiver height
                let h = (srv.distance_m.powi(2) - dz * dz).sqrt();
                let lat = 0.5 * (node.lat + g.lat_of_row(r));
                let f = sc.spectrum().channels[node.channel].centre_ghz;
                let path = rain_path(&rain, f, srv.distance_m, h, node.polarisation.cos_2tau(), lat);
                if (fm - path.exceeded_db(0.001)).abs() < 0.05 || (fm - path.exceeded_db(1.0)).abs() < 0.05 {
                    continue; // at the clamp, the engine may fall on the other side
                }
                let back = path.exceeded_db(100.0 - ae);

                assert!(
                    (back - fm).abs() < tol::ENGINE_F32_DB + 0.01,
                    "cell {r},{c}: engine {ae} % -> {back} dB, probe {ap} % at {fm} dB"
                );
                within += 1;
                worst = worst.max((back - fm).abs());
            }
            b => {
                // Margins near 0 dB may fall either side of the threshold in float32.
                if fm.abs() > tol::ENGINE_F32_DB {
                    assert!((ae - ap).abs() < 1e-4, "cell {r},{c}: {b:?} engine {ae} probe {ap}");
                    bounds += 1;
                }
            }
        }
    }
    assert!(within > 100 && bounds > 100, "{within} within, {bounds} at a bound");
    eprintln!(
        "availability layer against the probe: {within} cells within the range, worst {worst:.4} dB of margin; {bounds} at a bound, all equal"
    );
}

/// Every out-of-range weather input is refused with exit 2, one message each naming the file,
/// the table, the field, the value and the allowed range, and nothing is written.
#[test]
fn bad_weather_inputs_are_refused() {
    let cases: &[(&str, &str, &[&str])] = &[
        ("[rain]\nrate_mm_h = 0\n", "", &["[rain]", "rate_mm_h", "value 0", "(0, 250] mm/h"]),
        ("[rain]\nrate_mm_h = 400\n", "", &["[rain]", "rate_mm_h", "value 400"]),
        ("[rain]\nrate_mm_h = 40\nscaling = \"tropical\"\n", "", &["[rain]", "scaling", "`tropical`"]),
        ("[atmosphere]\npressure_hpa = 2000\n", "", &["[atmosphere]", "pressure_hpa", "value 2000", "[300, 1100] hPa"]),
        ("[atmosphere]\ntemperature_c = -90\n", "", &["[atmosphere]", "temperature_c", "value -90"]),
        (
            "[atmosphere]\ntemperature_c = 10\nwater_vapour_g_m3 = 30\n",
            "",
            &["[atmosphere]", "water_vapour_g_m3", "value 30", "saturation at 10"],
        ),
        (
            "[rain]\nrate_mm_h = 40\n[links]\navailability_target_pct = 99.9999\n",
            "",
            &["[links]", "availability_target_pct", "value 99.9999", "[99, 99.999]"],
        ),
        ("[rain]\nrate_mm_h = 40\n", "frequency_ghz = 0.5", &["[radio]", "frequency_ghz", "below 1 GHz", "[rain]"]),
        ("[antenna]\npolarisation = \"X\"\n", "", &["[antenna]", "polarisation", "`X`"]),
    ];
    for (extra, radio, want) in cases {
        // The [antenna] case replaces the table the helper writes.
        let (d, p) = two_dishes("V", "");
        let mut text = std::fs::read_to_string(&p).unwrap();
        if extra.starts_with("[antenna]") {
            text = text.replace("[antenna]\n", extra);
        } else {
            text += extra;
        }
        if !radio.is_empty() {
            text = text.replace("frequency_ghz = 28", radio);
        }
        std::fs::write(&p, text).unwrap();
        let out = d.path().join("out");
        let o = run(&["links", p.to_str().unwrap(), "--out", out.to_str().unwrap(), "--no-maps"]);
        assert_eq!(o.status.code(), Some(2), "{extra}: {}", stderr(&o));
        let e = stderr(&o);
        assert!(e.contains(p.to_str().unwrap()), "{extra}: {e}");
        for w in *want {
            assert!(e.contains(w), "{extra}: `{w}` missing in {e}");
        }
        assert!(!out.exists(), "{extra}: output written");
    }
    // A node's polarisation is checked in the node file, and the availability layer needs
    // [rain].
    let (d, p) = two_dishes("vertical", "");
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    let e = stderr(&o);
    assert!(e.contains("nodes.geojson") && e.contains("polarisation") && e.contains("`vertical`"), "{e}");
    let (d2, p2) = two_dishes("V", "");
    let out = d2.path().join("m");
    let o = run(&["map", p2.to_str().unwrap(), "--layers", "sinr,availability", "--out", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("[rain]"), "{}", stderr(&o));
    assert!(!out.exists());
    drop(d);
}

/// `interferers_fade = true` (every path fades by its own P.530 attenuation at the same
/// percentage of time): on every link of the demo on one channel the fade margin and the availability are at least
/// the conservative ones (interferers held at their clear-air levels), and a link without a
/// clear-air margin keeps none.
#[test]
fn fading_interferers_only_raise_the_demo_margins() {
    // The demo on one channel and polarisation, so that interference matters.
    let root = env!("CARGO_MANIFEST_DIR");
    let mut nodes: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(format!("{root}/sites/harbourlight/nodes.geojson")).unwrap())
            .unwrap();
    for f in nodes["features"].as_array_mut().unwrap() {
        let p = f["properties"].as_object_mut().unwrap();
        p.remove("channel");
        p.remove("polarisation");
    }
    let d = tempfile::tempdir().unwrap();
    let one = d.path().join("one-channel.geojson");
    std::fs::write(&one, nodes.to_string()).unwrap();
    let text = crate::util::demo_scenario()
        .replace(&format!("\"{root}/sites/harbourlight/nodes.geojson\""), &format!("\"{}\"", one.display()));
    let held = d.path().join("held.toml");
    let together = d.path().join("together.toml");
    std::fs::write(&held, &text).unwrap();
    std::fs::write(&together, text.replace("rate_mm_h = 42.0", "rate_mm_h = 42.0\ninterferers_fade = true")).unwrap();
    let a = lobemap::jobs::links::links(&Scenario::load(&held).unwrap(), None);
    let b = lobemap::jobs::links::links(&Scenario::load(&together).unwrap(), None);
    let mut raised = 0;
    for (x, y) in a.iter().zip(&b) {
        assert_eq!((&x.from, &x.to), (&y.from, &y.to));
        match (x.weather.fade_margin_db, y.weather.fade_margin_db) {
            (Some(m0), Some(m1)) if m0 > 0.0 => {
                assert!(m1 >= m0 - 0.01, "{}-{}: {m1} < {m0}", x.from, x.to);
                raised += (m1 > m0 + 0.01) as usize;
            }
            (Some(m0), m1) => assert!(m0 <= 0.0 && m1.is_none(), "{}-{}: {m0} {m1:?}", x.from, x.to),
            other => panic!("{other:?}"),
        }
        assert!(y.weather.availability_pct.unwrap() >= x.weather.availability_pct.unwrap() - 1e-6);
    }
    assert!(raised > 0);
}
