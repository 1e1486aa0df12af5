//! Dense layouts with far-field aggregation: 1e6 sector nodes over 1 km² at 1 m cells
//! (1e6 cells), layers total and interference, tolerance 0.5 dB; prints the time, the pair
//! evaluations, the reported bound and the worst error on 1,000 seeded cells against the
//! exact double-precision link budget of every node.
//!
//! `cargo bench --bench farfield` (`-- --nodes N` for another count; `-- --check K` for K
//! checked cells, 0 to skip).

use lobemap::engine::{Engine, LayerSet};
use lobemap::geometry::frame::LocalFrame;
use lobemap::geometry::grid::Grid;
use lobemap::model::antenna::Pattern;
use lobemap::model::link::Endpoint;
use lobemap::model::pathloss::{FreeSpace, PathLoss};
use lobemap::model::scenario::{Radio, Receiver, ReceiverAntenna, Scenario, Thresholds};
use rand::{RngExt, SeedableRng};
use rayon::prelude::*;
use std::time::Instant;

#[path = "../tests/util/fixtures.rs"]
mod fixtures;

fn arg(name: &str, default: usize) -> usize {
    let a: Vec<String> = std::env::args().collect();
    a.iter().position(|x| x == name).and_then(|i| a.get(i + 1)).and_then(|v| v.parse().ok()).unwrap_or(default)
}

fn main() {
    let nodes = arg("--nodes", 1_000_000);
    let check = arg("--check", 1000);
    let tol_db = 0.5;
    let frame = LocalFrame::new(47.0, 8.0);
    let half = 500.0;
    let sector = Pattern::sector(90.0, 9.0, -9.0).unwrap();
    let t0 = Instant::now();
    let list = fixtures::random_nodes(&frame, nodes, half, 3, "n", sector, 0.0, 3.0, 1.0);
    let sc = Scenario::from_parts(
        list,
        Radio { bandwidth_mhz: 20.0, noise_figure_db: 7.0 },
        PathLoss::new(FreeSpace, 5.8, 0.0, 1.0).unwrap(),
        Receiver { height_m: 1.5, antenna: ReceiverAntenna::Omni { gain_dbi: 0.0 } },
        Grid::new(fixtures::square(&frame, half), 1.0).unwrap(),
        Thresholds { sinr_db: 5.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
    );
    let g = *sc.grid();
    println!(
        "layout: {nodes} sector nodes (90°, 9/-9 dBi) over 1 km², {} cells of 1 m, built in {:.1} s",
        g.cells(),
        t0.elapsed().as_secs_f64()
    );
    let layers = LayerSet { total: true, interference: true, ..LayerSet::NONE };
    let t1 = Instant::now();
    let eng = Engine::new(&sc);
    let prep = t1.elapsed().as_secs_f64();
    let l = eng.run_far_field(layers, 0..g.rows(), tol_db);
    let secs = t1.elapsed().as_secs_f64();
    let bound = l.far_field_bound_db.unwrap();
    let exact_pairs = (g.cells() * nodes) as f64;
    println!(
        "far field: {secs:.1} s ({prep:.1} s preparing), {:.3e} pair evaluations ({:.1}% of the exact {exact_pairs:.1e}), equivalent {:.3e} exact pairs/s, bound {bound:.4} dB (tolerance {tol_db} dB)",
        l.pair_evaluations as f64,
        100.0 * l.pair_evaluations as f64 / exact_pairs,
        exact_pairs / secs
    );
    if check == 0 {
        return;
    }
    let ends: Vec<Endpoint> = sc.nodes().iter().map(|n| sc.node_end(n)).collect();
    let mut rng = rand_pcg::Pcg64::seed_from_u64(17);
    let cells: Vec<(usize, usize)> =
        (0..check).map(|_| (rng.random_range(0..g.rows()), rng.random_range(0..g.cols()))).collect();
    let t2 = Instant::now();
    let (t, i) = (l.total.as_ref().unwrap(), l.interference.as_ref().unwrap());
    let worst = cells
        .par_iter()
        .map(|&(r, c)| {
            let (tot, inter) = fixtures::exact_sums(&sc, &ends, r, c);
            let k = r * g.cols() + c;
            (t[k] as f64 - 10.0 * tot.log10()).abs().max((i[k] as f64 - 10.0 * inter.log10()).abs())
        })
        .reduce(|| 0.0, f64::max);
    println!(
        "check: worst error on {check} cells against the exact f64 sum over all {nodes} nodes: {worst:.4} dB (bound {bound:.4} dB; {:.1} s)",
        t2.elapsed().as_secs_f64()
    );
    assert!(worst <= bound, "worst error above the bound");
}
