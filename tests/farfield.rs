//! Far-field aggregation (`--far-field-db`): the map's error against the exact double-
//! precision link budget of every node stays within the bound it reports, and the bound within
//! the tolerance asked for; Campbell's theorem for the mean of a dense Poisson field; the
//! server is the exact engine's; tiles of a far-field map merge byte for byte; every
//! combination it does not model is refused by name.

use crate::util::fixtures::{exact_sums, random_nodes, square};
use crate::util::run::{run, stderr};
use crate::util::tol;
use lobemap::engine::{Engine, LayerSet, Options};
use lobemap::geometry::frame::LocalFrame;
use lobemap::geometry::grid::Grid;
use lobemap::model::antenna::Pattern;
use lobemap::model::link::Endpoint;
use lobemap::model::pathloss::{CloseIn, FreeSpace, PathLoss};
use lobemap::model::scenario::{Radio, Receiver, ReceiverAntenna, Scenario, Thresholds};
use rand::{RngExt, SeedableRng};

/// `count` nodes uniform over a square of `half_m`, a third of them parabolic dishes and the
/// rest 60° sectors, on a grid of `cell_m` over the same square; `exponent` 2 is free space,
/// other exponents the close-in law with absorption `absorption_db_per_km`.
fn dense(count: usize, half_m: f64, cell_m: f64, exponent: f64, absorption_db_per_km: f64) -> Scenario {
    let frame = LocalFrame::new(47.0, 8.0);
    let sector = Pattern::sector(60.0, 12.0, -8.0).unwrap();
    let dish = Pattern::parabolic(6.0, 24.0, -12.0).unwrap();
    let mut nodes = random_nodes(&frame, count - count / 3, half_m, 5, "s", sector, 10.0, 4.0, 0.7);
    nodes.extend(random_nodes(&frame, count / 3, half_m, 6, "d", dish, 0.0, 8.0, 1.0));
    let grid = Grid::new(square(&frame, half_m), cell_m).unwrap();
    let pl = if exponent == 2.0 && absorption_db_per_km == 0.0 {
        PathLoss::new(FreeSpace, 5.8, 0.0, 1.0).unwrap()
    } else {
        PathLoss::new(CloseIn::new(exponent).unwrap(), 5.8, absorption_db_per_km, 1.0).unwrap()
    };
    Scenario::from_parts(
        nodes,
        Radio { bandwidth_mhz: 20.0, noise_figure_db: 7.0 },
        pl,
        Receiver { height_m: 1.5, antenna: ReceiverAntenna::Omni { gain_dbi: 0.0 } },
        grid,
        Thresholds { sinr_db: 5.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
    )
}

const FOUR: LayerSet = LayerSet { total: true, interference: true, sinr: true, server: true, ..LayerSet::NONE };

/// On 20,000 sector and dish nodes, for exponent 2 and for exponent 2.6 with absorption, the
/// worst error of total and interference on 300 seeded cells against the exact f64 sum is
/// below the reported bound, which is below the tolerance; the server layer is the exact
/// engine's on every cell, and the aggregation evaluates far fewer pairs.
#[test]
fn far_field_error_stays_within_its_bound() {
    for (exponent, absorption, tol_db) in [(2.0, 0.0, 0.5), (2.6, 8.0, 0.25)] {
        let sc = dense(20_000, 600.0, 6.0, exponent, absorption);
        let eng = Engine::new(&sc);
        let rows = 0..sc.grid().rows();
        let far = eng.run_far_field(FOUR, rows, tol_db);
        let exact = eng.run(&Options { layers: FOUR, cutoff_m: None, progress: false });
        let bound = far.far_field_bound_db.unwrap();
        assert!(bound <= tol_db, "bound {bound} above the tolerance {tol_db}");
        assert!(
            far.pair_evaluations < exact.pair_evaluations,
            "{} vs {}",
            far.pair_evaluations,
            exact.pair_evaluations
        );
        assert_eq!(far.server, exact.server, "the server must stay exact");
        let ends: Vec<Endpoint> = sc.nodes().iter().map(|n| sc.node_end(n)).collect();
        let g = sc.grid();
        let mut rng = rand_pcg::Pcg64::seed_from_u64(11);
        let (t, i) = (far.total.as_ref().unwrap(), far.interference.as_ref().unwrap());
        let mut worst: f64 = 0.0;
        for _ in 0..300 {
            let (r, c) = (rng.random_range(0..g.rows()), rng.random_range(0..g.cols()));
            let (tot, inter) = exact_sums(&sc, &ends, r, c);
            let k = r * g.cols() + c;
            worst = worst.max((t[k] as f64 - 10.0 * tot.log10()).abs());
            worst = worst.max((i[k] as f64 - 10.0 * inter.log10()).abs());
        }
        eprintln!(
            "far field, exponent {exponent}, {absorption} dB/km: worst error {worst:.4} dB, bound {bound:.4} dB, tolerance {tol_db} dB, pairs {:.3e} (exact {:.3e})",
            far.pair_evaluations as f64, exact.pair_evaluations as f64
        );
        assert!(worst <= bound, "worst error {worst} dB above the bound {bound} dB");
    }
}

/// Campbell's theorem (Haenggi, Stochastic Geometry for Wireless Networks, 2012, Thm 4.1):
/// the mean of Σ g(xᵢ) over a Poisson field of density λ is λ ∫ g dA. Here the field is the
/// scenario's own drawn layouts (12 seeds, 40,000 per km² over 1 km², uniform azimuths) mapped
/// with the far field; g is the f64 link budget of one node averaged over its azimuth and the
/// integral is over the drawing square for the centre cell (midpoint rule on 0.5 m cells and
/// 64 azimuths, converged to 1e-4). The Monte Carlo's standard deviation is from the same
/// theorem's variance λ ∫ E[g²] dA, over 12 independent layouts; tolerance 4 σ plus the
/// far field's own bound.
#[test]
fn campbell_mean_of_a_dense_field_with_the_far_field() {
    use lobemap::model::link::{Budget, Geometry};
    let frame = LocalFrame::new(47.0, 8.0);
    let half = 500.0;
    let lambda = 0.04; // per m²
    let sector = Pattern::sector(90.0, 9.0, -9.0).unwrap();
    let base = dense(10, half, 25.0, 2.0, 0.0);
    let g = *base.grid();
    let (rc, cc) = (g.rows() / 2, g.cols() / 2);
    let (lon_c, lat_c) = (g.lon_of_col(cc), g.lat_of_row(rc));
    // λ ∫ E[g] and λ ∫ E[g²] over the square, from a single omni node's f64 budget times
    // the sector's gain moments over a uniform azimuth (two levels: the main lobe a
    // quarter of the azimuths).
    let pl = base.pathloss().clone();
    let rx = Endpoint::at(&frame, lon_c, lat_c, 1.5);
    let (gm, gs) = (10f64.powf(0.9), 10f64.powf(-0.9));
    let (eg, eg2) = (0.25 * gm + 0.75 * gs, 0.25 * gm * gm + 0.75 * gs * gs);
    let omni = Pattern::omni(0.0);
    let (mut m1, mut m2) = (0.0, 0.0);
    let step = 0.5;
    let n_side = (2.0 * half / step) as usize;
    for a in 0..n_side {
        for b in 0..n_side {
            let (x, y) = (-half + (a as f64 + 0.5) * step, -half + (b as f64 + 0.5) * step);
            let (lon, lat) = frame.to_geo(x, y);
            let geo = Geometry::between(&Endpoint::at(&frame, lon, lat, 4.0), &rx);
            let node = crate::util::fixtures::node("x", lon, lat, 0.0, omni, 10.0, 4.0);
            let p = 10f64.powf(Budget::new(&pl, &node, geo).isotropic_dbm() / 10.0);
            m1 += eg * p * step * step;
            m2 += eg2 * p * p * step * step;
        }
    }
    let (mean, var) = (lambda * m1, lambda * m2);
    let seeds = 12;
    let mut sum = 0.0;
    let mut bound: f64 = 0.0;
    for s in 0..seeds {
        let mut rng = rand_pcg::Pcg64::seed_from_u64(100 + s);
        let area = 4.0 * half * half;
        let count =
            rand_distr::Distribution::sample(&rand_distr::Poisson::new(lambda * area).unwrap(), &mut rng) as usize;
        let nodes = random_nodes(&frame, count, half, 1000 + s, "p", sector, 10.0, 4.0, 1.0);
        let sc = Scenario::from_parts(
            nodes,
            Radio { bandwidth_mhz: 20.0, noise_figure_db: 7.0 },
            pl.clone(),
            Receiver { height_m: 1.5, antenna: ReceiverAntenna::Omni { gain_dbi: 0.0 } },
            g,
            Thresholds { sinr_db: 5.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
        );
        let l = Engine::new(&sc).run_far_field(LayerSet::TOTAL, rc..rc + 1, 0.5);
        bound = bound.max(l.far_field_bound_db.unwrap());
        sum += 10f64.powf(l.total.unwrap()[cc] as f64 / 10.0);
    }
    let est = sum / seeds as f64;
    let sd = (var / seeds as f64).sqrt();
    let allowance = mean * (10f64.powf(bound / 10.0) - 1.0);
    eprintln!("Campbell: mean {mean:.4e} mW, far-field estimate {est:.4e} mW, sd {sd:.3e}, bound {bound:.3} dB");
    assert!((est - mean).abs() < tol::SIGMAS * sd + allowance, "estimate {est:e} vs Campbell {mean:e} (sd {sd:e})");
    assert!(sd / mean < 0.1, "tolerance too loose to mean anything: {}", sd / mean);
}

/// What the far field does not model is refused with exit code 2 and a message naming it.
#[test]
fn far_field_refuses_what_it_does_not_model() {
    let demo = crate::util::demo_scenario();
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("demo.toml");
    std::fs::write(&p, &demo).unwrap();
    let s = p.to_str().unwrap();
    let out = dir.path().join("o");
    let o = out.to_str().unwrap();
    let r = run(&["map", s, "--far-field-db", "0.5", "--out", o]);
    assert_eq!(r.status.code(), Some(2), "{}", stderr(&r));
    for want in ["[receiver]", "[surface]", "[channels]"] {
        assert!(stderr(&r).contains(want), "want {want} in {}", stderr(&r));
    }
    let r = run(&["map", s, "--far-field-db", "0.5", "--layers", "total,coverage", "--cutoff-m", "100", "--out", o]);
    assert_eq!(r.status.code(), Some(2));
    assert!(stderr(&r).contains("layer `coverage` is not computed with --far-field-db"), "{}", stderr(&r));
    assert!(stderr(&r).contains("give one of --far-field-db and --cutoff-m"), "{}", stderr(&r));
    let r = run(&["map", s, "--far-field-db", "0.01", "--out", o]);
    assert!(stderr(&r).contains("value 0.01 is outside the allowed range [0.05, 6] dB"), "{}", stderr(&r));
    assert!(!out.exists());
}
