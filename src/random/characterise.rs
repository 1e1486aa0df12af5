//! The aggregate-interference characterisation of a random field: cumulants, the
//! moment-matched gamma, the exact distribution by Laplace inversion, Monte Carlo with
//! Kolmogorov–Smirnov distances, and planning answers (highest density, smallest guard).

use crate::math::laplace::{DEFAULT_M, Euler};
use crate::model::units::{dbm_to_mw, mw_to_dbm};
use crate::random::field::{Field, Radial};
use crate::random::montecarlo::simulate;
use rayon::prelude::*;
use serde::Serialize;
use statrs::distribution::{ContinuousCDF, Gamma};
use std::time::Instant;

/// Largest CDF gap between the gamma fit and the exact law before a warning (common
/// practice: 0.05 is about the 95 % Kolmogorov–Smirnov band of 700 samples).
pub const GAMMA_WARN_KS: f64 = 0.05;
/// Largest gap of the 99th percentiles before a warning, dB.
pub const GAMMA_WARN_P99_DB: f64 = 1.0;

/// Probabilities at which quantiles are reported.
pub const QUANTILE_LEVELS: [f64; 3] = [0.90, 0.99, 0.999];

/// The moment-matched gamma law.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct GammaFit {
    /// Shape k = mean² / variance.
    pub shape: f64,
    /// Scale θ = variance / mean, mW.
    pub scale_mw: f64,
}

impl GammaFit {
    /// From the first two cumulants.
    pub fn from_cumulants(k1: f64, k2: f64) -> GammaFit {
        GammaFit { shape: k1 * k1 / k2, scale_mw: k2 / k1 }
    }
    fn dist(&self) -> Option<Gamma> {
        Gamma::new(self.shape, 1.0 / self.scale_mw).ok()
    }
    /// P(I ≤ x).
    pub fn cdf(&self, x_mw: f64) -> f64 {
        self.dist().map(|g| g.cdf(x_mw)).unwrap_or(f64::NAN)
    }
    /// P(I > x), computed without cancellation.
    pub fn sf(&self, x_mw: f64) -> f64 {
        self.dist().map(|g| g.sf(x_mw)).unwrap_or(f64::NAN)
    }
    /// The p-quantile, mW (0 when it lies below the smallest positive double). Solved by
    /// bisection on ln x of the regularised incomplete gamma function, through the lower
    /// tail P(k, x) for p ≤ ½ and the upper tail Q(k, x) = 1 − p above, so shapes down to
    /// 1e-4 keep full relative precision (statrs' `inverse_cdf` starts from a guess that
    /// fails there).
    pub fn quantile(&self, p: f64) -> f64 {
        use statrs::function::gamma::{gamma_lr, gamma_ur};
        let k = self.shape;
        if !(k > 0.0 && self.scale_mw > 0.0 && p > 0.0 && p < 1.0) {
            return f64::NAN;
        }
        // g(u) increases with u = ln(x / θ) and is 0 at the quantile.
        let g = |u: f64| {
            let x = u.exp();
            if p <= 0.5 { gamma_lr(k, x) - p } else { (1.0 - p) - gamma_ur(k, x) }
        };
        let (mut lo, mut hi) = (f64::MIN_POSITIVE.ln(), (k + 40.0 * k.sqrt() + 60.0).ln());
        if g(lo) >= 0.0 {
            return 0.0;
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if g(mid) < 0.0 {
                lo = mid
            } else {
                hi = mid
            }
            if hi - lo < 1e-14 * hi.abs().max(1.0) {
                break;
            }
        }
        (0.5 * (lo + hi)).exp() * self.scale_mw
    }
}

/// Quantiles in dBm at p90, p99, p99.9.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct Quantiles {
    /// 90th percentile.
    pub p90: f64,
    /// 99th percentile.
    pub p99: f64,
    /// 99.9th percentile.
    pub p999: f64,
}

impl Quantiles {
    fn from_fn(f: impl Fn(f64) -> f64) -> Quantiles {
        let q = QUANTILE_LEVELS.map(|p| round3(mw_to_dbm(f(p))));
        Quantiles { p90: q[0], p99: q[1], p999: q[2] }
    }
}

/// Quantiles by method.
#[derive(Debug, Clone, Serialize)]
pub struct QuantileSet {
    /// From the moment-matched gamma.
    pub gamma: Quantiles,
    /// From the exact (inverted) distribution.
    pub exact: Quantiles,
    /// From the Monte Carlo samples.
    pub mc: Option<Quantiles>,
}

/// P(I > x) by method.
#[derive(Debug, Clone, Serialize)]
pub struct Exceedance {
    /// Threshold, dBm.
    pub threshold_dbm: f64,
    /// Gamma approximation.
    pub gamma: f64,
    /// Exact.
    pub exact: f64,
    /// Monte Carlo fraction.
    pub mc: Option<f64>,
}

/// Kolmogorov–Smirnov distances.
#[derive(Debug, Clone, Serialize)]
pub struct Ks {
    /// sup |F_mc − F_gamma| over all samples.
    pub gamma_vs_mc: f64,
    /// max |F_mc − F_exact| over the CDF table's points.
    pub exact_vs_mc: f64,
    /// Dvoretzky–Kiefer–Wolfowitz 95 % bound for N samples: √(ln(2/0.05) / (2N)).
    pub dkw_95: f64,
}

/// Monte Carlo run facts.
#[derive(Debug, Clone, Serialize)]
pub struct McFacts {
    /// Realisations.
    pub realizations: usize,
    /// Seed.
    pub seed: u64,
    /// Interferers drawn in total.
    pub interferer_draws: u64,
    /// Wall-clock seconds (varies from run to run).
    pub elapsed_s: f64,
}

/// Inversion facts.
#[derive(Debug, Clone, Serialize)]
pub struct InversionFacts {
    /// Method name.
    pub method: &'static str,
    /// Euler parameter M.
    pub m: usize,
    /// Largest difference between M and M − 4 over the CDF table (an error estimate).
    pub error_estimate: f64,
}

/// One row of the CDF table.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct CdfRow {
    /// Aggregate power, dBm.
    pub x_dbm: f64,
    /// Gamma CDF.
    pub gamma: f64,
    /// Exact CDF.
    pub exact: f64,
    /// Empirical CDF of the Monte Carlo samples.
    pub mc: Option<f64>,
}

/// The full characterisation.
#[derive(Debug, Clone, Serialize)]
pub struct Report {
    /// Density of the analytic Poisson field (after thinning), per km².
    pub effective_density_per_km2: f64,
    /// Mean number of interferers in the region.
    pub mean_interferers: f64,
    /// P(no interferer at all) = exp(−λ|A|): the atom of I at 0.
    pub p_no_interferer: f64,
    /// First four cumulants, mWⁿ.
    pub cumulants: [f64; 4],
    /// Mean, dBm.
    pub mean_dbm: f64,
    /// Variance, mW².
    pub variance_mw2: f64,
    /// Skewness κ3/κ2^1.5.
    pub skewness: f64,
    /// Excess kurtosis κ4/κ2².
    pub excess_kurtosis: f64,
    /// Moment-matched gamma.
    pub gamma: GammaFit,
    /// Quantiles by method.
    pub quantiles_dbm: QuantileSet,
    /// Exceedance probabilities by method.
    pub exceedance: Vec<Exceedance>,
    /// KS distances (with Monte Carlo).
    pub ks: Option<Ks>,
    /// Inversion facts.
    pub inversion: InversionFacts,
    /// Monte Carlo facts.
    pub monte_carlo: Option<McFacts>,
    /// Notes on approximations in force.
    pub notes: Vec<String>,
    /// Largest |F_gamma − F_exact| over the CDF table.
    pub gamma_vs_exact: f64,
    /// Warnings a planner must read (the gamma fit far from the exact law).
    pub warnings: Vec<String>,
    /// The CDF table.
    #[serde(skip)]
    pub cdf: Vec<CdfRow>,
}

/// What to compute.
#[derive(Debug, Clone)]
pub struct Request {
    /// Thresholds for exceedance, dBm.
    pub thresholds_dbm: Vec<f64>,
    /// Monte Carlo realisations (0: none).
    pub realizations: usize,
    /// Seed.
    pub seed: u64,
    /// Points in the CDF table.
    pub table_points: usize,
}

fn round3(x: f64) -> f64 {
    (x * 1000.0).round() / 1000.0
}

/// An exact-CDF evaluator sharing the quadrature and Euler weights.
pub struct Exact<'a> {
    field: &'a Field,
    rad: Radial,
    euler: Euler,
}

impl<'a> Exact<'a> {
    /// Prepares the evaluator.
    pub fn new(field: &'a Field) -> Self {
        Exact { field, rad: field.radial(), euler: Euler::new(DEFAULT_M) }
    }
    /// P(I ≤ x).
    pub fn cdf(&self, x_mw: f64) -> f64 {
        self.field.cdf(x_mw, &self.euler, &self.rad)
    }
    /// P(I > x).
    pub fn sf(&self, x_mw: f64) -> f64 {
        1.0 - self.cdf(x_mw)
    }
    /// The p-quantile (mW) by the Illinois method on ln x, starting from a bracket.
    pub fn quantile(&self, p: f64, mut lo: f64, mut hi: f64) -> f64 {
        let mut flo = self.cdf(lo) - p;
        let mut fhi = self.cdf(hi) - p;
        let mut guard = 0;
        while flo > 0.0 && guard < 60 {
            lo /= 4.0;
            flo = self.cdf(lo) - p;
            guard += 1;
        }
        while fhi < 0.0 && guard < 120 {
            hi *= 4.0;
            fhi = self.cdf(hi) - p;
            guard += 1;
        }
        if flo > 0.0 {
            return 0.0; // the atom at zero already exceeds p
        }
        let (mut a, mut b) = (lo.ln(), hi.ln());
        let mut side = 0;
        for _ in 0..60 {
            let c = (a * fhi - b * flo) / (fhi - flo);
            let fc = self.cdf(c.exp()) - p;
            if fc.abs() < 1e-9 || (b - a).abs() < 1e-9 {
                return c.exp();
            }
            if (fc > 0.0) == (fhi > 0.0) {
                b = c;
                fhi = fc;
                if side == 1 {
                    flo /= 2.0;
                }
                side = 1;
            } else {
                a = c;
                flo = fc;
                if side == -1 {
                    fhi /= 2.0;
                }
                side = -1;
            }
        }
        ((a + b) / 2.0).exp()
    }
}

/// Characterises the aggregate interference of `field`.
pub fn characterise(field: &Field, req: &Request) -> Report {
    let rad = field.radial();
    let k: [f64; 4] = [1, 2, 3, 4].map(|n| field.cumulant(n, &rad));
    let gamma = GammaFit::from_cumulants(k[0], k[1]);
    let exact = Exact::new(field);
    let lam_area = field.effective_density() * field.area_m2();
    let mut notes = Vec::new();
    if field.hard_core_m > 0.0 {
        notes.push("hard core: cumulants, gamma and exact use a Poisson field of the Matérn II retained density (pair correlation ignored); the Monte Carlo simulates the hard core".into());
    }
    // Monte Carlo.
    let (mc, facts) = if req.realizations > 0 {
        let t0 = Instant::now();
        let (mut v, draws) = simulate(field, req.realizations, req.seed);
        let elapsed_s = t0.elapsed().as_secs_f64();
        v.sort_by(f64::total_cmp);
        (Some(v), Some(McFacts { realizations: req.realizations, seed: req.seed, interferer_draws: draws, elapsed_s }))
    } else {
        (None, None)
    };
    // The CDF table on a dBm axis covering the gamma and Monte Carlo ranges.
    let mean_dbm = mw_to_dbm(k[0]);
    let mut lo = gamma.quantile(1e-3).max(k[0] * 1e-6);
    let mut hi = gamma.quantile(0.9999).max(k[0] * 10.0);
    if let Some(v) = &mc {
        let pos: Vec<&f64> = v.iter().filter(|x| **x > 0.0).collect();
        if let (Some(a), Some(b)) = (pos.first(), pos.last()) {
            lo = lo.min(**a);
            hi = hi.max(**b);
        }
    }
    let (lo_dbm, hi_dbm) = (mw_to_dbm(lo).max(mean_dbm - 60.0).floor(), mw_to_dbm(hi).min(mean_dbm + 40.0).ceil());
    let n = req.table_points.max(10);
    let xs: Vec<f64> = (0..n).map(|i| lo_dbm + (hi_dbm - lo_dbm) * i as f64 / (n - 1) as f64).collect();
    let euler_lo = Euler::new(DEFAULT_M - 4);
    let exact_vals: Vec<(f64, f64)> =
        xs.par_iter().map(|&x| (exact.cdf(dbm_to_mw(x)), field.cdf(dbm_to_mw(x), &euler_lo, &rad))).collect();
    let error_estimate = exact_vals.iter().map(|(a, b)| (a - b).abs()).fold(0.0, f64::max);
    let emp =
        |x_mw: f64| -> Option<f64> { mc.as_ref().map(|v| v.partition_point(|s| *s <= x_mw) as f64 / v.len() as f64) };
    let cdf: Vec<CdfRow> = xs
        .iter()
        .zip(&exact_vals)
        .map(|(&x, &(e, _))| CdfRow { x_dbm: x, gamma: gamma.cdf(dbm_to_mw(x)), exact: e, mc: emp(dbm_to_mw(x)) })
        .collect();
    // Exact quantiles, bracketed by the table.
    let bracket = |p: f64| -> (f64, f64) {
        let i = cdf.iter().position(|r| r.exact >= p).unwrap_or(cdf.len() - 1);
        (dbm_to_mw(cdf[i.saturating_sub(1)].x_dbm), dbm_to_mw(cdf[i].x_dbm))
    };
    let exact_q = Quantiles::from_fn(|p| {
        let (a, b) = bracket(p);
        exact.quantile(p, a, b)
    });
    let mc_q =
        mc.as_ref().map(|v| Quantiles::from_fn(|p| v[((p * v.len() as f64).ceil() as usize).clamp(1, v.len()) - 1]));
    let exceedance = req
        .thresholds_dbm
        .iter()
        .map(|&t| {
            let x = dbm_to_mw(t);
            Exceedance {
                threshold_dbm: t,
                gamma: gamma.sf(x),
                exact: exact.sf(x).max(0.0),
                mc: mc.as_ref().map(|v| (v.len() - v.partition_point(|s| *s <= x)) as f64 / v.len() as f64),
            }
        })
        .collect();
    let ks = mc.as_ref().map(|v| {
        let nn = v.len() as f64;
        let g = v
            .par_iter()
            .enumerate()
            .map(|(i, &x)| {
                let f = gamma.cdf(x);
                (f - i as f64 / nn).abs().max(((i + 1) as f64 / nn - f).abs())
            })
            .reduce(|| 0.0, f64::max);
        let e = cdf.iter().map(|r| (r.mc.unwrap_or(0.0) - r.exact).abs()).fold(0.0, f64::max);
        Ks { gamma_vs_mc: g, exact_vs_mc: e, dkw_95: ((2.0f64 / 0.05).ln() / (2.0 * nn)).sqrt() }
    });
    // How far the gamma fit is from the exact law: the largest CDF gap over the table and
    // the gap of the 99th percentiles; past GAMMA_WARN_KS or GAMMA_WARN_P99_DB, say so.
    let gamma_q = Quantiles::from_fn(|p| gamma.quantile(p));
    let gamma_vs_exact = cdf.iter().map(|r| (r.gamma - r.exact).abs()).fold(0.0, f64::max);
    let p99_gap_db = (gamma_q.p99 - exact_q.p99).abs();
    let mut warnings = Vec::new();
    if gamma_vs_exact > GAMMA_WARN_KS || p99_gap_db > GAMMA_WARN_P99_DB || p99_gap_db.is_nan() {
        warnings.push(format!(
            "the gamma fit is far from the exact law (largest CDF gap {gamma_vs_exact:.3}, p99 gap {p99_gap_db:.2} dB; limits {GAMMA_WARN_KS} and {GAMMA_WARN_P99_DB} dB): plan with the exact or Monte Carlo figures"
        ));
    }
    Report {
        effective_density_per_km2: field.effective_density() * 1e6,
        mean_interferers: lam_area,
        p_no_interferer: (-lam_area).exp(),
        cumulants: k,
        mean_dbm: round3(mean_dbm),
        variance_mw2: k[1],
        skewness: k[2] / k[1].powf(1.5),
        excess_kurtosis: k[3] / (k[1] * k[1]),
        gamma,
        quantiles_dbm: QuantileSet { gamma: gamma_q, exact: exact_q, mc: mc_q },
        gamma_vs_exact,
        warnings,
        exceedance,
        ks,
        inversion: InversionFacts { method: "Abate-Whitt Euler (2006)", m: DEFAULT_M, error_estimate },
        monte_carlo: facts,
        notes,
        cdf,
    }
}
