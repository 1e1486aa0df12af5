//! The channel-plan search against an exhaustive search through the link table itself, and
//! the plan it writes read back by `links`.

use crate::util::run::{run, stderr};
use lobemap::model::node::Polarisation;
use lobemap::model::scenario::Scenario;
use rand::{RngExt, SeedableRng};

/// A seeded instance: `pairs` mutual dish or sector links at random in a 600 m square on
/// 28 GHz channels a, b, c (the ends of each link facing each other), every node starting on
/// channel a, V.
fn instance(seed: u64, pairs: usize) -> (tempfile::TempDir, std::path::PathBuf) {
    let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
    let (lat0, lon0) = (45.0f64, 7.0f64);
    let (dlat, dlon) = (1.0 / 111_132.0, 1.0 / (111_320.0 * lat0.to_radians().cos()));
    let mut feats = Vec::new();
    for k in 0..pairs {
        let (x, y) = (rng.random_range(0.0..600.0), rng.random_range(0.0..600.0));
        let (len, th) = (rng.random_range(60.0..250.0), rng.random_range(0.0..std::f64::consts::TAU));
        let (x2, y2) = (x + len * th.sin(), y + len * th.cos());
        let az = th.to_degrees().rem_euclid(360.0);
        let dish = rng.random_range(0..2) == 0;
        let ant = if dish {
            r#""pattern":"parabolic","beamwidth_deg":6,"gain_dbi":30,"sidelobe_dbi":-8"#
        } else {
            r#""pattern":"sector","beamwidth_deg":60,"gain_dbi":14,"sidelobe_dbi":-6"#
        };
        for (id, peer, (px, py), a) in [
            (format!("P{k}a"), format!("P{k}b"), (x, y), az),
            (format!("P{k}b"), format!("P{k}a"), (x2, y2), (az + 180.0) % 360.0),
        ] {
            feats.push(format!(
                r#"{{"type":"Feature","geometry":{{"type":"Point","coordinates":[{}, {}]}},"properties":{{"id":"{id}","peer":"{peer}","azimuth_deg":{a},{ant},"channel":"a","polarisation":"V"}}}}"#,
                lon0 + px * dlon,
                lat0 + py * dlat
            ));
        }
    }
    let nodes = format!(r#"{{"type":"FeatureCollection","features":[{}]}}"#, feats.join(","));
    let toml = "name = \"inst\"\nnodes = \"nodes.geojson\"\n[radio]\nfrequency_ghz = 28\nbandwidth_mhz = 400\nnoise_figure_db = 7\n[channels]\na = { centre_ghz = 27.6, bandwidth_mhz = 400 }\nb = { centre_ghz = 28.0, bandwidth_mhz = 400 }\nc = { centre_ghz = 28.4, bandwidth_mhz = 400 }\n[spectrum]\nxpd_db = 20\naclr_db = 25\nacs_db = 25\n[propagation]\nmodel = \"free-space\"\n[antenna]\npower_dbm = 20\nheight_m = 8\n[thresholds]\nsinr_db = 20\n[grid]\ncell_m = 50\n";
    crate::util::site(toml, &nodes)
}

/// (worst margin, failing, shortfall) of the link table for a plan, with the search's order.
fn table_score(sc: &Scenario) -> (f64, usize, f64) {
    let rows = lobemap::jobs::links::links(sc, None);
    let worst = rows.iter().map(|r| r.margin_db).fold(f64::INFINITY, f64::min);
    let failing = rows.iter().filter(|r| r.margin_db < 0.0).count();
    let short = rows.iter().map(|r| (-r.margin_db).max(0.0)).sum();
    (worst, failing, short)
}

/// 50 seeded instances of 2 to 4 links with 3 channels × 2 polarisations: the search's plan
/// reaches the best worst margin found by enumerating every plan through `jobs::links` (the
/// link table, independent of the search's incremental sums), within the table's 0.01 dB
/// rounding, and among plans with that margin no fewer failing links. The seeded local search
/// that runs on larger layouts is checked on the same instances.
#[test]
fn plan_search_equals_exhaustive_search() {
    let classes: Vec<(usize, Polarisation)> =
        (1..=3).flat_map(|c| [(c, Polarisation::V), (c, Polarisation::H)]).collect();
    let (mut improved, mut local_hits) = (0, 0);
    for seed in 0..50u64 {
        let pairs = 2 + (seed % 3) as usize;
        let (_d, p) = instance(seed, pairs);
        let sc = Scenario::load(&p).unwrap();
        let plan = lobemap::jobs::assign::search(&sc, &vec![false; sc.nodes().len()], 1);
        assert!(plan.exhaustive);
        let mut best = (f64::NEG_INFINITY, usize::MAX, f64::INFINITY);
        let total = classes.len().pow(pairs as u32);
        for code in 0..total {
            let mut nodes = sc.nodes().to_vec();
            let mut c = code;
            for k in 0..pairs {
                let (ch, pol) = classes[c % classes.len()];
                c /= classes.len();
                for n in &mut nodes[2 * k..2 * k + 2] {
                    n.channel = ch;
                    n.polarisation = pol;
                }
            }
            let s = table_score(&sc.clone().with_nodes(nodes));
            if s.0 > best.0 + 1e-9 || ((s.0 - best.0).abs() <= 1e-9 && s.1 < best.1) {
                best = s;
            }
        }
        assert!(
            (plan.worst_margin_db_after - best.0).abs() <= 0.011,
            "seed {seed}: search {} vs exhaustive {}",
            plan.worst_margin_db_after,
            best.0
        );
        assert!(plan.failing_after <= best.1 || plan.worst_margin_db_after > best.0, "seed {seed}");
        assert!(plan.worst_margin_db_after >= plan.worst_margin_db_before - 1e-9);
        // The seeded local search (what runs beyond 2e6 plans) on the same instance.
        let local = lobemap::jobs::assign::search_with(&sc, &vec![false; sc.nodes().len()], 1, 0.0);
        assert!(!local.exhaustive);
        local_hits += ((local.worst_margin_db_after - plan.worst_margin_db_after).abs() <= 1e-6) as usize;
        improved += (plan.worst_margin_db_after > plan.worst_margin_db_before + 0.5) as usize;
    }
    // The instances are not trivial: on most, the all-on-one-channel start is far from best.
    eprintln!(
        "plan search: {improved} of 50 instances improved by more than 0.5 dB; the local search alone reached the optimum on {local_hits}"
    );
    assert!(improved >= 25, "{improved}");
    // Measured 49 of 50; the enumeration, not the local search, answers instances this small.
    assert!(local_hits >= 45, "{local_hits}");
}

/// `assign` on the demo: deterministic for a seed, the worst margin does not fall, and the
/// node file it writes reads back with the plan's figures (`links` worst margin within the
/// table's rounding); the input node file is left as it was.
#[test]
fn assign_writes_a_plan_every_command_reads() {
    let d = tempfile::tempdir().unwrap();
    let text = crate::util::demo_scenario();
    let s = d.path().join("s.toml");
    std::fs::write(&s, &text).unwrap();
    let before = std::fs::read(concat!(env!("CARGO_MANIFEST_DIR"), "/sites/harbourlight/nodes.geojson")).unwrap();
    let out = d.path().join("plan.geojson");
    let o = run(&["assign", s.to_str().unwrap(), "--out", out.to_str().unwrap(), "--json", "--seed", "4"]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let j: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    for k in ["worst_margin_db_before", "worst_margin_db_after", "failing_before", "failing_after"] {
        assert!(j[k].is_number(), "{k}: {j}");
    }
    let after = j["worst_margin_db_after"].as_f64().unwrap();
    assert!(after >= j["worst_margin_db_before"].as_f64().unwrap());
    let o2 = run(&[
        "assign",
        s.to_str().unwrap(),
        "--out",
        d.path().join("p2.geojson").to_str().unwrap(),
        "--json",
        "--seed",
        "4",
    ]);
    assert_eq!(std::fs::read(&out).unwrap(), std::fs::read(d.path().join("p2.geojson")).unwrap());
    assert_eq!(o.stdout, o2.stdout);
    assert_eq!(
        before,
        std::fs::read(concat!(env!("CARGO_MANIFEST_DIR"), "/sites/harbourlight/nodes.geojson")).unwrap()
    );
    let planned = text.replace(
        &format!("\"{}/sites/harbourlight/nodes.geojson\"", env!("CARGO_MANIFEST_DIR")),
        &format!("\"{}\"", out.display()),
    );
    let s2 = d.path().join("planned.toml");
    std::fs::write(&s2, planned).unwrap();
    let (worst, _, _) = table_score(&Scenario::load(&s2).unwrap());
    assert!((worst - after).abs() <= 0.011, "links {worst} vs plan {after}");
}
