//! `links` throughput: 1000 planned links among 5000 nodes (every node counted as an
//! interferer of every link), with and without a Rician coverage model. `cargo bench --bench links`.

use lobemap::geometry::frame::LocalFrame;
use lobemap::geometry::grid::Grid;
use lobemap::model::antenna::Pattern;
use lobemap::model::fading::Fading;
use lobemap::model::fading::FadingSpec;
use lobemap::model::pathloss::{CloseIn, PathLoss};
use lobemap::model::scenario::{Radio, Receiver, ReceiverAntenna, Scenario, Thresholds};
use std::time::Instant;

#[path = "../tests/util/fixtures.rs"]
mod fixtures;

fn main() {
    let frame = LocalFrame::new(52.0, 5.0);
    let half = 3000.0;
    let pattern = Pattern::parabolic(3.0, 34.0, -5.0).unwrap();
    let mut nodes = fixtures::random_nodes(&frame, 5000, half, 3, "n", pattern, 10.0, 8.0, 0.5);
    for (k, n) in nodes.iter_mut().take(1000).enumerate() {
        n.peer = Some(format!("n{}", k + 1000));
    }
    let sc = Scenario::from_parts(
        nodes,
        Radio { bandwidth_mhz: 2160.0, noise_figure_db: 8.0 },
        PathLoss::new(CloseIn::new(2.1).unwrap(), 60.0, 15.0, 1.0).unwrap(),
        Receiver { height_m: 5.0, antenna: ReceiverAntenna::Omni { gain_dbi: 0.0 } },
        Grid::new(fixtures::square(&frame, half), 50.0).unwrap(),
        Thresholds { sinr_db: 6.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
    );
    for (label, f) in [
        ("no fading", FadingSpec::default()),
        (
            "Rician 9 dB signal, Rayleigh interferers",
            FadingSpec { signal: Fading::rician_db(9.0).unwrap(), interferer: Fading::RAYLEIGH, shadowing_db: 0.0 },
        ),
    ] {
        let sc = sc.clone().with_fading(f);
        let _ = lobemap::jobs::links::links(&sc, None);
        let t0 = Instant::now();
        let rows = lobemap::jobs::links::links(&sc, None);
        println!(
            "links, {label}: {} links among {} nodes in {:.3} s",
            rows.len(),
            sc.nodes().len(),
            t0.elapsed().as_secs_f64()
        );
    }
}
