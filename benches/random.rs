//! Random-field stages: Monte Carlo interferer draws per second, `aggregate` without Monte
//! Carlo (cumulants, gamma, exact CDF table and quantiles), and drawing a million points
//! with a hard core. `cargo bench --bench random`.

use lobemap::model::antenna::GainLaw;
use lobemap::model::fading::Fading;
use lobemap::model::pathloss::{PathLoss, PowerLaw};
use lobemap::random::characterise::{Request, characterise};
use lobemap::random::field::Field;
use lobemap::random::montecarlo::simulate;
use lobemap::random::points::{Window, poisson, thin_matern_ii};
use rand::SeedableRng;
use std::time::Instant;

fn main() {
    let threads = rayon::current_num_threads();
    println!("lobemap random-field benchmark, {threads} threads");
    let pl = PathLoss::new(PowerLaw::new(3.0, 40.0).unwrap(), 28.0, 0.0, 1.0).unwrap();
    let sector = GainLaw::two_level(30.0 / 360.0, 10.0, -10.0);
    let base = Field::new(1e-3, 10.0, 1000.0, pl).unwrap().with_antennas(sector.clone(), sector);
    for (name, fading) in [
        ("none", Fading::NONE),
        ("rayleigh", Fading::RAYLEIGH),
        ("rician 6 dB", Fading::rician_db(6.0).unwrap()),
        ("nakagami 2", Fading::nakagami(2.0).unwrap()),
    ] {
        let f = base.clone().with_fading(fading);
        let _ = simulate(&f, 2000, 1);
        let t0 = Instant::now();
        let (_, draws) = simulate(&f, 40_000, 2);
        let dt = t0.elapsed().as_secs_f64();
        println!(
            "monte carlo, fading {name:<12} {draws:>11} interferer draws in {dt:.3} s: {:.3e} draws/s",
            draws as f64 / dt
        );
    }
    let req = Request { thresholds_dbm: vec![-60.0, -50.0], realizations: 0, seed: 1, table_points: 160 };
    let _ = characterise(&base, &req);
    let t0 = Instant::now();
    let reps = 5;
    for _ in 0..reps {
        let _ = characterise(&base, &req);
    }
    println!(
        "aggregate without Monte Carlo (160-point exact CDF table, 3 exact quantiles): {:.3} s",
        t0.elapsed().as_secs_f64() / reps as f64
    );
    let w = Window { xmin: 0.0, ymin: 0.0, xmax: 10_000.0, ymax: 10_000.0 };
    let mut rng = rand_pcg::Pcg64::seed_from_u64(9);
    let t0 = Instant::now();
    let parent = poisson(&mut rng, 1e-2, &w);
    let n = parent.len();
    let kept = thin_matern_ii(&mut rng, parent, 5.0, &w);
    println!(
        "draw {n} Poisson points and Matérn II (5 m hard core) -> {} kept: {:.3} s",
        kept.len(),
        t0.elapsed().as_secs_f64()
    );
}
