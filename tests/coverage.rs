//! Coverage probability checks against published results and Monte Carlo.

use lobemap::engine::{Engine, LayerSet, Options};
use lobemap::geometry::frame::LocalFrame;
use lobemap::geometry::grid::{BBox, Grid};
use lobemap::model::antenna::Pattern;
use lobemap::model::fading::Fading;
use lobemap::model::fading::FadingSpec;
use lobemap::model::node::Node;
use lobemap::model::pathloss::{PathLoss, PowerLaw};
use lobemap::model::scenario::{Radio, Receiver, ReceiverAntenna, Scenario, Thresholds};
use rand::{RngExt, SeedableRng};
use rand_distr::{Distribution, Poisson};

use crate::util::tol;

fn scenario(
    nodes: Vec<Node>,
    bbox: BBox,
    cell_m: f64,
    sinr_db: f64,
    bandwidth_mhz: f64,
    fading: FadingSpec,
) -> Scenario {
    Scenario::from_parts(
        nodes,
        Radio { bandwidth_mhz, noise_figure_db: 0.0 },
        PathLoss::new(PowerLaw::new(4.0, 0.0).unwrap(), 3.5, 0.0, 1.0).unwrap(),
        Receiver { height_m: 10.0, antenna: ReceiverAntenna::Omni { gain_dbi: 0.0 } },
        Grid::new(bbox, cell_m).unwrap(),
        Thresholds { sinr_db, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
    )
    .with_fading(fading)
}

/// Andrews, Baccelli and Ganti (IEEE Trans. Commun. 2011), Theorem 2 with α = 4 and no
/// noise: over a Poisson layout of omni stations with nearest-station service and Rayleigh
/// fading, P[SINR ≥ T] = 1 / (1 + √T (π/2 − arctan(1/√T))), independent of density; T = 0 dB
/// gives 0.56010 and T = 5 dB 0.34694 (docs/reference-values.md, numpy). With equal powers and omni
/// antennas the strongest mean server is the nearest. Eight seeded layouts (λ = 10 per km² on
/// a 5 km disc, cells within 1 km of the centre, noise at −264 dBm); the mean of the spatial
/// averages must be within 4 standard errors (their sample spread / √8) of the formula.
#[test]
fn andrews_baccelli_ganti_coverage() {
    let frame = LocalFrame::new(40.0, -3.0);
    let (w, s) = frame.to_geo(-1000.0, -1000.0);
    let (e, n) = frame.to_geo(1000.0, 1000.0);
    let bbox = BBox { west: w, south: s, east: e, north: n };
    let lambda = 1e-5;
    let radius: f64 = 5000.0;
    let omni = Pattern::omni(0.0);
    let fading = FadingSpec { signal: Fading::RAYLEIGH, interferer: Fading::RAYLEIGH, shadowing_db: 0.0 };
    let layers = LayerSet { coverage: true, total: false, ..LayerSet::TOTAL };
    for (t_db, want) in [(0.0, 0.56010), (5.0, 0.34694)] {
        let mut means = Vec::new();
        for seed in 0..8u64 {
            let mut rng = rand_pcg::Pcg64::seed_from_u64(100 + seed);
            let count =
                Poisson::new(lambda * std::f64::consts::PI * radius * radius).unwrap().sample(&mut rng) as usize;
            let nodes = (0..count)
                .map(|k| {
                    let r = radius * rng.random::<f64>().sqrt();
                    let th = rng.random::<f64>() * std::f64::consts::TAU;
                    let (lon, lat) = frame.to_geo(r * th.cos(), r * th.sin());
                    Node {
                        id: k.to_string(),
                        lon,
                        lat,
                        azimuth_deg: 0.0,
                        pattern: omni,
                        power_dbm: 30.0,
                        height_m: 10.0,
                        activity: 1.0,
                        peer: None,
                        name: None,
                        polarisation: Default::default(),
                        channel: 0,
                    }
                })
                .collect();
            let sc = scenario(nodes, bbox, 50.0, t_db, 1e-9, fading);
            let cov = Engine::new(&sc).run(&Options { layers, cutoff_m: None, progress: false }).coverage.unwrap();
            means.push(cov.iter().map(|v| *v as f64).sum::<f64>() / cov.len() as f64);
        }
        let m = means.iter().sum::<f64>() / 8.0;
        let sd = (means.iter().map(|x| (x - m).powi(2)).sum::<f64>() / 7.0).sqrt();
        assert!((m - want).abs() < tol::SIGMAS * sd / 8f64.sqrt(), "T {t_db} dB: {m} vs {want} (sd {sd})");
        assert!(sd / 8f64.sqrt() < 0.02, "tolerance too loose: {sd}");
    }
}

/// The engine's exact Rayleigh coverage layer against a seeded Monte Carlo of the same layout
/// (the probe's simulation of fading and activity) at demo cells with intermediate coverage:
/// 40 000 trials give a standard error below 0.0025; allowed 4 SE plus 0.003 for float32.
#[test]
fn exact_coverage_layer_matches_monte_carlo_on_demo() {
    let sc =
        Scenario::load(std::path::Path::new("sites/harbourlight/scenario.toml")).unwrap().with_fading(FadingSpec {
            signal: Fading::RAYLEIGH,
            interferer: Fading::rician_db(10.0 * 2f64.log10()).unwrap(),
            shadowing_db: 0.0,
        });
    let layers = LayerSet { coverage: true, total: false, ..LayerSet::TOTAL };
    let cov = Engine::new(&sc).run(&Options { layers, cutoff_m: None, progress: false }).coverage.unwrap();
    let g = &sc.grid();
    let mut checked = 0;
    for (k, v) in cov.iter().enumerate().step_by(97) {
        if *v < 0.15 || *v > 0.85 || checked >= 6 {
            continue;
        }
        let (r, c) = (k / g.cols(), k % g.cols());
        let p = lobemap::jobs::probe::probe_with(&sc, g.lat_of_row(r), g.lon_of_col(c), Some((40_000, k as u64)));
        let mc = p.monte_carlo.unwrap();
        let se = (mc.estimate * (1.0 - mc.estimate) / 40_000.0).sqrt();
        assert!((p.coverage - *v as f64).abs() < tol::ENGINE_F32_PROBABILITY, "engine {v} vs probe {}", p.coverage);
        assert!(
            (mc.estimate - p.coverage).abs() < tol::SIGMAS * se + tol::ENGINE_F32_PROBABILITY,
            "cell {r},{c}: MC {} vs {}",
            mc.estimate,
            p.coverage
        );
        checked += 1;
    }
    assert!(checked >= 3, "too few intermediate cells: {checked}");
}

/// Without fading or shadowing and with every node always on, the coverage layer is the SINR
/// indicator, taken from the SINR sums with no pass of its own (`Method::Indicator`). Checked
/// on the demo layout with activities set to 1 and an aimed receiver: every cell equals
/// 1{SINR layer ≥ T} (cells within 0.01 dB of T left out, where float32 rounding may decide),
/// and at 40 cells the probe's seeded Monte Carlo (the fading and activity simulation, 2 000
/// trials: with one outcome it must give exactly 0 or 1) agrees with the layer.
#[test]
fn unfaded_always_on_coverage_is_the_sinr_indicator() {
    let sc = Scenario::load(std::path::Path::new("sites/harbourlight/scenario.toml")).unwrap();
    let nodes: Vec<_> = sc
        .nodes()
        .iter()
        .cloned()
        .map(|mut n| {
            n.activity = 1.0;
            n
        })
        .collect();
    let sc = sc.with_nodes(nodes).with_fading(FadingSpec {
        signal: Fading::NONE,
        interferer: Fading::NONE,
        shadowing_db: 0.0,
    });
    let eng = Engine::new(&sc);
    assert_eq!(eng.coverage_method(), lobemap::model::coverage::Method::Indicator);
    let layers = LayerSet { coverage: true, sinr: true, total: false, ..LayerSet::TOTAL };
    let l = eng.run(&Options { layers, cutoff_m: None, progress: false });
    let (cov, sinr) = (l.coverage.unwrap(), l.sinr.unwrap());
    let t = sc.thresholds().sinr_db as f32;
    let (mut ones, mut zeros) = (0, 0);
    for (c, s) in cov.iter().zip(&sinr) {
        if *s == lobemap::NODATA || (*s - t).abs() < 0.01 {
            continue;
        }
        let want = if *s >= t { 1.0 } else { 0.0 };
        assert_eq!(*c, want, "SINR {s} dB, coverage {c}");
        if want == 1.0 { ones += 1 } else { zeros += 1 }
    }
    assert!(ones > 1000 && zeros > 1000, "{ones} covered, {zeros} not");
    let g = sc.grid();
    for k in (0..cov.len()).step_by(cov.len() / 40) {
        if sinr[k] == lobemap::NODATA || (sinr[k] - t).abs() < 0.01 {
            continue;
        }
        let (r, c) = (k / g.cols(), k % g.cols());
        let p = lobemap::jobs::probe::probe_with(&sc, g.lat_of_row(r), g.lon_of_col(c), Some((2_000, k as u64)));
        assert_eq!(p.monte_carlo.unwrap().estimate, cov[k] as f64, "cell {r},{c}");
    }
}
