//! What the weather model costs: the map with and without the `availability` layer (the
//! demo site over its surface, and a flat 1000-node sector layout with an aimed receiver),
//! and `links` on 1000 links among 5000 nodes without `[rain]`, with it, and with
//! interferers fading too. Cases run alternately, back to back, so the machine's drift falls
//! on both sides. `cargo bench --bench weather`.

use lobemap::engine::{Engine, LayerSet, Options};
use lobemap::geometry::frame::LocalFrame;
use lobemap::geometry::grid::Grid;
use lobemap::model::antenna::{Pattern, Sector};
use lobemap::model::pathloss::{CloseIn, PathLoss};
use lobemap::model::scenario::{Radio, Receiver, ReceiverAntenna, Scenario, Thresholds};
use lobemap::model::weather::rain::{Rain, Scaling};
use lobemap::model::weather::{InterfererFade, Weather};
use std::time::Instant;

#[path = "../tests/util/fixtures.rs"]
mod fixtures;

/// The map's default layers (as `lobemap map` picks them), with or without availability.
fn default_layers(sc: &Scenario, availability: bool) -> LayerSet {
    LayerSet { visible: sc.surface().is_some(), availability, ..LayerSet::ALL }
}

/// Best of `reps` runs of each case, alternating: (seconds without, seconds with).
fn map_pair(sc: &Scenario, reps: usize) -> (f64, f64, u64) {
    let eng = Engine::new(sc);
    let run = |a: bool| {
        let t0 = Instant::now();
        let l = eng.run(&Options { layers: default_layers(sc, a), cutoff_m: None, progress: false });
        (t0.elapsed().as_secs_f64(), l.pair_evaluations)
    };
    let _ = run(true);
    let (mut t0, mut t1, mut pairs) = (f64::MAX, f64::MAX, 0);
    for _ in 0..reps {
        let (t, p) = run(false);
        t0 = t0.min(t);
        pairs = p;
        t1 = t1.min(run(true).0);
    }
    (t0, t1, pairs)
}

fn rain() -> Rain {
    Rain::new(42.0, Scaling::Frequency).unwrap()
}

fn main() {
    let reps = if std::env::args().any(|a| a == "--quick") { 2 } else { 5 };
    println!("lobemap weather benchmark, {} threads, best of {reps}", rayon::current_num_threads());

    let demo = Scenario::load(std::path::Path::new("sites/harbourlight/scenario.toml")).unwrap();
    let frame = LocalFrame::new(45.0, 7.0);
    let half = 2000.0;
    let nodes =
        fixtures::random_nodes(&frame, 1000, half, 1, "", Pattern::sector(30.0, 20.0, -5.0).unwrap(), 20.0, 6.0, 1.0);
    let flat = Scenario::from_parts(
        nodes,
        Radio { bandwidth_mhz: 400.0, noise_figure_db: 7.0 },
        PathLoss::new(CloseIn::new(2.1).unwrap(), 28.0, 0.1, 1.0).unwrap(),
        Receiver { height_m: 1.5, antenna: ReceiverAntenna::Aimed(Sector::new(30.0, 15.0, -5.0).unwrap()) },
        Grid::new(fixtures::square(&frame, half), 4.0).unwrap(),
        Thresholds { sinr_db: 5.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
    )
    .with_weather(Weather { rain: Some(rain()), ..Weather::default() });
    for (label, sc) in [("demo site (surface, 46 nodes)", &demo), ("flat, 1000 sectors, aimed rx", &flat)] {
        let (t0, t1, pairs) = map_pair(sc, reps);
        println!(
            "map default layers, {label:<30} {:>8} cells: {t0:.3} s without availability, {t1:.3} s with (+{:.1} %), {:.3e} pairs/s with",
            sc.grid().cells(),
            (t1 / t0 - 1.0) * 100.0,
            pairs as f64 / t1
        );
    }

    // The per-cell step alone: 10 nodes, so the node passes are short beside it.
    let few = Scenario::from_parts(
        fixtures::random_nodes(&frame, 10, half, 1, "", Pattern::sector(30.0, 20.0, -5.0).unwrap(), 20.0, 6.0, 1.0),
        Radio { bandwidth_mhz: 400.0, noise_figure_db: 7.0 },
        PathLoss::new(CloseIn::new(2.1).unwrap(), 28.0, 0.1, 1.0).unwrap(),
        Receiver { height_m: 1.5, antenna: ReceiverAntenna::Aimed(Sector::new(30.0, 15.0, -5.0).unwrap()) },
        Grid::new(fixtures::square(&frame, half), 4.0).unwrap(),
        Thresholds { sinr_db: 5.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
    )
    .with_weather(Weather { rain: Some(rain()), ..Weather::default() });
    let (t0, t1, _) = map_pair(&few, reps);
    let cells = few.grid().cells() as f64;
    println!(
        "availability step alone (10 nodes, {} cells): {:.3} s more, {:.3e} cells/s ({:.1} ns a cell)",
        few.grid().cells(),
        t1 - t0,
        cells / (t1 - t0),
        (t1 - t0) / cells * 1e9
    );

    let frame = LocalFrame::new(52.0, 5.0);
    let half = 3000.0;
    let pattern = Pattern::parabolic(3.0, 34.0, -5.0).unwrap();
    let mut nodes = fixtures::random_nodes(&frame, 5000, half, 3, "n", pattern, 10.0, 8.0, 0.5);
    for (k, n) in nodes.iter_mut().take(1000).enumerate() {
        n.peer = Some(format!("n{}", k + 1000));
    }
    let base = Scenario::from_parts(
        nodes,
        Radio { bandwidth_mhz: 2160.0, noise_figure_db: 8.0 },
        PathLoss::new(CloseIn::new(2.1).unwrap(), 60.0, 15.0, 1.0).unwrap(),
        Receiver { height_m: 5.0, antenna: ReceiverAntenna::Omni { gain_dbi: 0.0 } },
        Grid::new(fixtures::square(&frame, half), 50.0).unwrap(),
        Thresholds { sinr_db: 6.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
    );
    let cases = [
        ("no [rain]", base.clone()),
        ("[rain], interferers held", base.clone().with_weather(Weather { rain: Some(rain()), ..Weather::default() })),
        (
            "[rain], interferers fade too",
            base.clone().with_weather(Weather {
                rain: Some(rain()),
                interferers: InterfererFade::Together,
                ..Weather::default()
            }),
        ),
    ];
    let mut best = [f64::MAX; 3];
    for _ in 0..reps {
        for (k, (_, sc)) in cases.iter().enumerate() {
            let t0 = Instant::now();
            let rows = lobemap::jobs::links::links(sc, None);
            best[k] = best[k].min(t0.elapsed().as_secs_f64());
            assert_eq!(rows.len(), 1000);
        }
    }
    for ((label, _), t) in cases.iter().zip(best) {
        println!("links, 1000 links among 5000 nodes, {label:<30} {t:.3} s");
    }
}
