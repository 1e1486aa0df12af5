//! Per-cell engine throughput: node-cell pair evaluations per second.
//!
//! `cargo bench --bench engine` (add `-- --quick` for a short run). Seeded synthetic layout:
//! sector antennas (30°, 20/−5 dBi) with random boresights, uniform over a 4 km square,
//! close-in model with exponent 2 (free-space law), no cutoff: every node at every cell; one
//! case with parabolic dishes (3°, 34/−5 dBi), which the engine evaluates through its gain
//! table.

use lobemap::engine::{Engine, LayerSet, Options};
use lobemap::geometry::frame::LocalFrame;
use lobemap::geometry::grid::Grid;
use lobemap::model::antenna::{Pattern, Sector};
use lobemap::model::pathloss::{CloseIn, FreeSpace, PathLoss};
use lobemap::model::scenario::{Radio, Receiver, ReceiverAntenna, Scenario, Thresholds};
use std::time::Instant;

#[path = "../tests/util/fixtures.rs"]
mod fixtures;

fn layout(nodes: usize, cells_side: usize, exponent: f64, aimed: bool) -> Scenario {
    layout_with(Pattern::sector(30.0, 20.0, -5.0).unwrap(), nodes, cells_side, exponent, aimed)
}

fn layout_with(pattern: Pattern, nodes: usize, cells_side: usize, exponent: f64, aimed: bool) -> Scenario {
    let frame = LocalFrame::new(45.0, 7.0);
    let half = 2000.0;
    let nodes = fixtures::random_nodes(&frame, nodes, half, 1, "", pattern, 20.0, 6.0, 1.0);
    let grid = Grid::new(fixtures::square(&frame, half), 2.0 * half / cells_side as f64).unwrap();
    let rx = if aimed {
        ReceiverAntenna::Aimed(Sector::new(30.0, 15.0, -5.0).unwrap())
    } else {
        ReceiverAntenna::Omni { gain_dbi: 0.0 }
    };
    Scenario::from_parts(
        nodes,
        Radio { bandwidth_mhz: 400.0, noise_figure_db: 7.0 },
        if exponent == 2.0 {
            PathLoss::new(FreeSpace, 28.0, 0.0, 1.0).unwrap()
        } else {
            PathLoss::new(CloseIn::new(exponent).unwrap(), 28.0, 0.0, 1.0).unwrap()
        },
        Receiver { height_m: 1.5, antenna: rx },
        grid,
        Thresholds { sinr_db: 5.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
    )
}

fn measure(label: &str, sc: &Scenario, layers: LayerSet, reps: usize) {
    // `--only TEXT` runs only the cases whose label contains TEXT (for profiling one case).
    let args: Vec<String> = std::env::args().collect();
    if let Some(w) = args.iter().position(|a| a == "--only").and_then(|i| args.get(i + 1))
        && !label.contains(w.as_str())
    {
        return;
    }
    let eng = Engine::new(sc);
    let opts = Options { layers, cutoff_m: None, progress: false };
    let _ = eng.run(&opts); // warm-up
    let t0 = Instant::now();
    let mut pairs = 0;
    for _ in 0..reps {
        pairs += eng.run(&opts).pair_evaluations;
    }
    let dt = t0.elapsed().as_secs_f64();
    println!(
        "{label:<44} {:>6} nodes x {:>8} cells: {:>8.3} s/run, {:>8.3e} pair evaluations/s",
        sc.nodes().len(),
        sc.grid().cells(),
        dt / reps as f64,
        pairs as f64 / dt
    );
}

fn main() {
    let quick = std::env::args().any(|a| a == "--quick");
    let reps = if quick { 1 } else { 5 };
    let threads = rayon::current_num_threads();
    println!("lobemap engine benchmark, {threads} threads");
    let total = LayerSet::TOTAL;
    let sinr = LayerSet { sinr: true, total: false, ..LayerSet::TOTAL };
    let coverage = LayerSet { coverage: true, total: false, ..LayerSet::TOTAL };
    let sc = layout(1000, 1000, 2.0, false);
    measure("total, sector, exponent 2", &sc, total, reps);
    measure("sinr (server + interference), omni rx", &sc, sinr, reps);
    let sc_aim = layout(1000, 1000, 2.0, true);
    measure("sinr, aimed rx (two passes)", &sc_aim, sinr, reps);
    let sc_ray = layout(1000, 1000, 2.0, true).with_fading(lobemap::model::fading::FadingSpec {
        signal: lobemap::model::fading::Fading::RAYLEIGH,
        interferer: lobemap::model::fading::Fading::RAYLEIGH,
        shadowing_db: 0.0,
    });
    measure("coverage exact (Rayleigh), aimed rx", &sc_ray, coverage, reps);
    let sc_ric = layout(1000, 1000, 2.0, true).with_fading(lobemap::model::fading::FadingSpec {
        signal: lobemap::model::fading::Fading::rician_db(10.0 * 4f64.log10()).unwrap(),
        interferer: lobemap::model::fading::Fading::RAYLEIGH,
        shadowing_db: 0.0,
    });
    measure("coverage series (Rician K = 6 dB signal), aimed rx", &sc_ric, coverage, reps);
    let sc_sh = layout(1000, 1000, 2.0, true).with_fading(lobemap::model::fading::FadingSpec {
        signal: lobemap::model::fading::Fading::rician_db(9.0).unwrap(),
        interferer: lobemap::model::fading::Fading::RAYLEIGH,
        shadowing_db: 8.0,
    });
    measure("coverage mixture (Rician 9 dB signal, 8 dB shadowing), aimed rx", &sc_sh, coverage, reps);
    let sc3 = layout(1000, 1000, 3.0, false);
    measure("total, sector, exponent 3", &sc3, total, reps);
    let sc35 = layout(1000, 500, 3.5, false);
    measure("total, sector, exponent 3.5 (log2/exp2 path)", &sc35, total, reps);
    let dish = layout_with(Pattern::parabolic(3.0, 34.0, -5.0).unwrap(), 1000, 500, 2.0, false);
    measure("total, parabolic 3°, exponent 2 (closed form)", &dish, total, reps);
    let cells = sc.grid().cells() as f64;
    println!(
        "memory estimate for 4 layers: {:.1} bytes per cell (layers at 4 bytes each plus row buffers)",
        sc.grid().estimate_bytes(4, threads) as f64 / cells
    );
}
