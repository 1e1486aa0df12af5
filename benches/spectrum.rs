//! Maps with channels against one channel on the same layout: 1000 sector nodes over
//! 1 001 000 cells, aimed receiver, default layers (total, interference, sinr, server,
//! coverage), once with every node co-channel and once with the nodes spread over four
//! channels and both polarisations (seeded). Alternating, best of 5. `cargo bench --bench spectrum`.

use lobemap::engine::{Engine, LayerSet, Options};
use lobemap::geometry::frame::LocalFrame;
use lobemap::geometry::grid::Grid;
use lobemap::model::antenna::{Pattern, Sector};
use lobemap::model::pathloss::{FreeSpace, PathLoss};
use lobemap::model::scenario::{Radio, Receiver, ReceiverAntenna, Scenario, Thresholds};
use std::time::Instant;

#[path = "../tests/util/fixtures.rs"]
mod fixtures;

fn main() {
    let reps = if std::env::args().any(|a| a == "--quick") { 2 } else { 5 };
    let frame = LocalFrame::new(45.0, 7.0);
    let half = 2000.0;
    let nodes =
        fixtures::random_nodes(&frame, 1000, half, 1, "", Pattern::sector(30.0, 20.0, -5.0).unwrap(), 20.0, 6.0, 1.0);
    let dir = tempfile::tempdir().unwrap();
    // The channelised copy goes through the scenario file, as a user writes it.
    let feats: Vec<String> = nodes
        .iter()
        .enumerate()
        .map(|(k, n)| {
            format!(
                r#"{{"type":"Feature","geometry":{{"type":"Point","coordinates":[{}, {}]}},"properties":{{"id":"n{k}","azimuth_deg":{},"channel":"{}","polarisation":"{}"}}}}"#,
                n.lon,
                n.lat,
                n.azimuth_deg,
                ["a", "b", "c", "d"][(k * 7 + k / 3) % 4],
                if (k * 5 + 1) % 3 == 0 { "H" } else { "V" }
            )
        })
        .collect();
    std::fs::write(
        dir.path().join("nodes.geojson"),
        format!(r#"{{"type":"FeatureCollection","features":[{}]}}"#, feats.join(",")),
    )
    .unwrap();
    let b = fixtures::square(&frame, half);
    let toml = format!(
        "name = \"bench\"\nnodes = \"nodes.geojson\"\n[radio]\nfrequency_ghz = 28\nbandwidth_mhz = 400\nnoise_figure_db = 7\n[channels]\na = {{ centre_ghz = 27.6, bandwidth_mhz = 400 }}\nb = {{ centre_ghz = 28.0, bandwidth_mhz = 400 }}\nc = {{ centre_ghz = 28.4, bandwidth_mhz = 400 }}\nd = {{ centre_ghz = 28.8, bandwidth_mhz = 400 }}\n[propagation]\nmodel = \"free-space\"\n[antenna]\npattern = \"sector\"\nbeamwidth_deg = 30\ngain_dbi = 20\nsidelobe_dbi = -5\npower_dbm = 20\nheight_m = 6\n[receiver]\nheight_m = 1.5\nantenna = \"aimed\"\ngain_dbi = 15\nbeamwidth_deg = 30\nsidelobe_dbi = -5\n[grid]\ncell_m = 4\nbbox = [{}, {}, {}, {}]\n",
        b.west, b.south, b.east, b.north
    );
    std::fs::write(dir.path().join("s.toml"), toml).unwrap();
    let chan = Scenario::load(&dir.path().join("s.toml")).unwrap();
    let one = Scenario::from_parts(
        nodes,
        Radio { bandwidth_mhz: 400.0, noise_figure_db: 7.0 },
        PathLoss::new(FreeSpace, 28.0, 0.0, 1.0).unwrap(),
        Receiver { height_m: 1.5, antenna: ReceiverAntenna::Aimed(Sector::new(30.0, 15.0, -5.0).unwrap()) },
        Grid::new(b, 4.0).unwrap(),
        Thresholds { sinr_db: 5.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
    );
    let only_sinr = std::env::args().any(|a| a == "--sinr");
    let only_cov = std::env::args().any(|a| a == "--coverage");
    let layers = if only_sinr {
        LayerSet { sinr: true, total: false, ..LayerSet::TOTAL }
    } else if only_cov {
        LayerSet { coverage: true, total: false, ..LayerSet::TOTAL }
    } else {
        LayerSet::ALL
    };
    let opts = Options { layers, cutoff_m: None, progress: false };
    let (e1, e4) = (Engine::new(&one), Engine::new(&chan));
    let _ = e4.run(&opts);
    let (mut t1, mut t4, mut pairs) = (f64::MAX, f64::MAX, 0);
    for _ in 0..reps {
        let t = Instant::now();
        pairs = e1.run(&opts).pair_evaluations;
        t1 = t1.min(t.elapsed().as_secs_f64());
        let t = Instant::now();
        let _ = e4.run(&opts);
        t4 = t4.min(t.elapsed().as_secs_f64());
    }
    println!("lobemap spectrum benchmark, {} threads, best of {reps}", rayon::current_num_threads());
    println!(
        "map {}, 1000 sectors x {} cells: one channel {t1:.3} s ({:.3e} pairs/s), 4 channels x 2 polarisations {t4:.3} s: {:.2}x",
        if only_sinr {
            "sinr only"
        } else if only_cov {
            "coverage only"
        } else {
            "default layers"
        },
        one.grid().cells(),
        pairs as f64 / t1,
        t4 / t1
    );
}
