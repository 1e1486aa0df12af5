//! Coverage probability P[SINR ≥ T] for a receiver served by a given signal, with fading and
//! shadowing: exact when the wanted signal is Rayleigh without shadowing, otherwise by
//! matching the aggregate interference to a gamma law. Also a seeded Monte Carlo of the same
//! model, for cross-checks.
//!
//! Model: S = S̄ h₀ X₀, I = Σ B_i P̄_i h_i X_i, with B_i ~ Bernoulli(a_i) (activity), h the
//! normalised fading powers (E[h] = 1) and X = 10^(σZ/10) log-normal shadowing (Z standard
//! normal; E[X] = exp((σ ln10/10)²/2), so shadowing raises the mean power).
//!
//! - Exact (Rayleigh S, σ = 0): P = exp(−T N / S̄) Π_i (1 − a_i + a_i L_h(T P̄_i / S̄)), with the
//!   interferers' Laplace transform L_h(t) = E[e^{−t h}]: (1 + t/m)^{−m} (Nakagami, m = 1 for
//!   Rayleigh), (1+K)/(1+K+t)·exp(−Kt/(1+K+t)) (Rician), e^{−t} (none).
//! - Moment matching: μ = E[X] Σ a_i P̄_i, σ² = Σ (a_i E[h²]E[X²] − a_i² E[X]²) P̄_i²; I ≈ Gamma(μ²/σ²,
//!   σ²/μ). The signal's fading is put in gamma form with shape 1/(E[h₀²] − 1) (for Rician h₀
//!   this is (K+1)²/(2K+1), Nakagami 1960; shapes above 50 are taken as 50) and
//!   P = E_{h₀,X₀}[F_I(S̄h₀X₀/T − N)]. Below s* = T·N the integrand is zero, so the signal
//!   integral starts at s*: with s = s* + θ_s x, ∫ f_S(s) F_I(s/T − N) ds = ∫ e^{−x} g(x) dx with a
//!   smooth g, done by 32-point Gauss–Laguerre; the shadowing by 6-point Gauss–Hermite.
//!
//! # References
//! - J. G. Andrews, F. Baccelli and R. K. Ganti, "A tractable approach to coverage and rate in
//!   cellular networks", IEEE Trans. Commun. 59(11), 2011 (Rayleigh coverage via the Laplace
//!   transform of the interference).
//! - M. Haenggi, Stochastic Geometry for Wireless Networks, 2012, ch. 5.

use crate::fading::{Fading, lognormal_moment};
use crate::quadrature::gamma_expectation_rule;

use crate::scenario::FadingSpec;
use crate::units::{db_to_lin, dbm_to_mw};
use rand::{RngExt, SeedableRng};
use rand_distr::{Distribution, Exp1, Gamma, StandardNormal};
use rayon::prelude::*;
use statrs::function::gamma::gamma_lr;

/// Largest gamma shape used for the signal (Rician K above about 20 dB is treated as 50).
pub const MAX_SIGNAL_SHAPE: f64 = 50.0;

/// How coverage is computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Method {
    /// Closed form (Rayleigh signal, no shadowing).
    Exact,
    /// Gamma moment matching of the interference.
    MomentGamma,
}

impl Method {
    /// Name used in summaries.
    pub fn name(&self) -> &'static str {
        match self {
            Method::Exact => "exact (Rayleigh signal, Laplace transform of the interference)",
            Method::MomentGamma => "gamma moment matching of the interference, signal in gamma form",
        }
    }
}

/// The coverage model of a scenario.
#[derive(Debug, Clone)]
pub struct CoverageModel {
    /// Method in force.
    pub method: Method,
    /// SINR threshold, linear.
    pub t_lin: f64,
    /// Noise, mW.
    pub noise_mw: f64,
    /// Fading and shadowing.
    pub spec: FadingSpec,
    /// E[X] of shadowing.
    pub e1: f64,
    /// E[h²]·E[X²] of an interferer.
    pub e2: f64,
    /// Gamma shape of the signal's fading (∞: none).
    pub signal_shape: f64,
    rule: Vec<(f64, f64)>,
    /// (shadowing factor X₀, weight) nodes.
    shadow_rule: Vec<(f64, f64)>,
}

impl CoverageModel {
    /// The model for a threshold (dB), noise (dBm) and fading.
    pub fn new(spec: FadingSpec, sinr_db: f64, noise_dbm: f64) -> CoverageModel {
        let e1 = lognormal_moment(spec.shadowing_db, 1);
        let ex2 = lognormal_moment(spec.shadowing_db, 2);
        let method = if spec.signal == Fading::Rayleigh && spec.shadowing_db == 0.0 {
            Method::Exact
        } else {
            Method::MomentGamma
        };
        let signal_shape = spec.signal.gamma_shape().min(MAX_SIGNAL_SHAPE);
        let rule = gamma_expectation_rule(32, 1.0);
        let s_ln = spec.shadowing_db * std::f64::consts::LN_10 / 10.0;
        let shadow_rule = if spec.shadowing_db > 0.0 {
            crate::quadrature::normal_expectation_rule(6).into_iter().map(|(z, w)| ((s_ln * z).exp(), w)).collect()
        } else {
            vec![(1.0, 1.0)]
        };
        CoverageModel {
            method,
            t_lin: db_to_lin(sinr_db),
            noise_mw: dbm_to_mw(noise_dbm),
            spec,
            e1,
            e2: spec.interferer.moment(2) * ex2,
            signal_shape,
            rule,
            shadow_rule,
        }
    }

    /// The interferers' Laplace transform E[e^{−t h}].
    pub fn lt(&self, t: f64) -> f64 {
        match self.spec.interferer {
            Fading::None => (-t).exp(),
            Fading::Rayleigh => 1.0 / (1.0 + t),
            Fading::Nakagami { m } => (1.0 + t / m).powf(-m),
            Fading::Rician { k } => (1.0 + k) / (1.0 + k + t) * (-k * t / (1.0 + k + t)).exp(),
        }
    }

    /// Exact form from Σ log2(1 − a + a L(T p / S)) over interferers.
    pub fn from_log2_product(&self, s_mw: f64, sum_log2: f64) -> f64 {
        if s_mw <= 0.0 {
            return 0.0;
        }
        (-self.t_lin * self.noise_mw / s_mw).exp() * sum_log2.exp2()
    }

    /// Moment form from Σ a p and Σ (a e2 − a² e1²) p² (p the unshadowed mean powers).
    pub fn from_moments(&self, s_mw: f64, sum_ap: f64, sum_var: f64) -> f64 {
        if s_mw <= 0.0 {
            return 0.0;
        }
        let mu = self.e1 * sum_ap;
        let var = sum_var.max(0.0);
        let f_i = |z: f64| -> f64 {
            if z < 0.0 {
                0.0
            } else if mu <= 0.0 {
                1.0
            } else if var <= mu * mu * 1e-12 {
                if z >= mu { 1.0 } else { 0.0 }
            } else {
                let (k, theta) = (mu * mu / var, var / mu);
                gamma_lr(k, z / theta)
            }
        };
        let mut total = 0.0;
        let m = self.signal_shape;
        let s_star = self.t_lin * self.noise_mw;
        let lg = statrs::function::gamma::ln_gamma(m);
        for &(x0, wx) in &self.shadow_rule {
            let s = s_mw * x0;
            total += wx
                * if m.is_finite() {
                    // s = s* + θ x, θ = s̄/m; f_S(s) ds = e^{−x} · e^{−y*} (y* + x)^{m−1} / Γ(m) dx.
                    let theta = s / m;
                    let ystar = s_star / theta;
                    // F_I ≤ 1, so P ≤ Q(m, y*): when that bound is negligible, skip the sum.
                    if statrs::function::gamma::gamma_ur(m, ystar) < 1e-9 {
                        0.0
                    } else {
                        self.rule
                            .iter()
                            .map(|&(x, w)| {
                                let y = ystar + x;
                                let lnf = -ystar + (m - 1.0) * y.ln() - lg;
                                w * lnf.exp() * f_i(theta * y / self.t_lin - self.noise_mw)
                            })
                            .sum::<f64>()
                    }
                } else {
                    f_i(s / self.t_lin - self.noise_mw)
                };
        }
        total.clamp(0.0, 1.0)
    }

    /// P[SINR ≥ T] for mean signal `s_mw` and interferers (activity, mean power mW).
    pub fn probability(&self, s_mw: f64, interferers: &[(f64, f64)]) -> f64 {
        match self.method {
            Method::Exact => {
                let l: f64 =
                    interferers.iter().map(|&(a, p)| (1.0 - a + a * self.lt(self.t_lin * p / s_mw)).log2()).sum();
                self.from_log2_product(s_mw, l)
            }
            Method::MomentGamma => {
                let e1sq = self.e1 * self.e1;
                let (ap, v) = interferers
                    .iter()
                    .fold((0.0, 0.0), |acc, &(a, p)| (acc.0 + a * p, acc.1 + (a * self.e2 - a * a * e1sq) * p * p));
                self.from_moments(s_mw, ap, v)
            }
        }
    }

    /// Seeded Monte Carlo of P[SINR ≥ T]: (estimate, 95 % Wilson interval low, high).
    pub fn monte_carlo(&self, s_mw: f64, interferers: &[(f64, f64)], trials: usize, seed: u64) -> (f64, f64, f64) {
        const CHUNK: usize = 4096;
        let chunks = trials.div_ceil(CHUNK);
        let sigma_ln = self.spec.shadowing_db * std::f64::consts::LN_10 / 10.0;
        let hits: usize = (0..chunks)
            .into_par_iter()
            .map(|c| {
                let mut rng = rand_pcg::Pcg64Mcg::seed_from_u64(seed.wrapping_mul(0x9E37_79B9_7F4A_7C15) ^ c as u64);
                let n = CHUNK.min(trials - c * CHUNK);
                let sig = sampler(self.spec.signal);
                let intf = sampler(self.spec.interferer);
                let shadow = |rng: &mut rand_pcg::Pcg64Mcg| -> f64 {
                    if sigma_ln > 0.0 {
                        let z: f64 = StandardNormal.sample(rng);
                        (sigma_ln * z).exp()
                    } else {
                        1.0
                    }
                };
                let mut hits = 0;
                for _ in 0..n {
                    let s = s_mw * sig(&mut rng) * shadow(&mut rng);
                    let mut i = 0.0;
                    for &(a, p) in interferers {
                        if rng.random::<f64>() < a {
                            i += p * intf(&mut rng) * shadow(&mut rng);
                        }
                    }
                    if s >= self.t_lin * (i + self.noise_mw) {
                        hits += 1;
                    }
                }
                hits
            })
            .sum();
        wilson(hits, trials)
    }
}

type Sampler = Box<dyn Fn(&mut rand_pcg::Pcg64Mcg) -> f64 + Sync>;

fn sampler(f: Fading) -> Sampler {
    match f {
        Fading::None => Box::new(|_| 1.0),
        Fading::Rayleigh => Box::new(|r| Exp1.sample(r)),
        Fading::Nakagami { m } => {
            let g = Gamma::new(m, 1.0 / m).expect("validated m");
            Box::new(move |r| g.sample(r))
        }
        Fading::Rician { k } => {
            let (a, s) = ((k / (k + 1.0)).sqrt(), (0.5 / (k + 1.0)).sqrt());
            Box::new(move |r| {
                let x: f64 = StandardNormal.sample(r);
                let y: f64 = StandardNormal.sample(r);
                (a + s * x).powi(2) + (s * y).powi(2)
            })
        }
    }
}

/// Wilson score interval at 95 % (z = 1.959964) for `hits` successes in `n` trials:
/// (estimate, low, high).
pub fn wilson(hits: usize, n: usize) -> (f64, f64, f64) {
    if n == 0 {
        return (f64::NAN, 0.0, 1.0);
    }
    let (p, nf, z) = (hits as f64 / n as f64, n as f64, 1.959_964);
    let d = 1.0 + z * z / nf;
    let c = (p + z * z / (2.0 * nf)) / d;
    let h = z * (p * (1.0 - p) / nf + z * z / (4.0 * nf * nf)).sqrt() / d;
    (p, (c - h).max(0.0), (c + h).min(1.0))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn model(signal: Fading, interferer: Fading, sh: f64) -> CoverageModel {
        CoverageModel::new(FadingSpec { signal, interferer, shadowing_db: sh }, 3.0, -90.0)
    }

    // The exact Rayleigh formula against its own Monte Carlo (same model, seeded): with
    // 200 000 trials the binomial standard error is below 0.0012; the Wilson interval must
    // contain the formula, and the estimate lie within 4 standard errors.
    #[test]
    fn exact_rayleigh_matches_monte_carlo() {
        let m = model(Fading::Rayleigh, Fading::Rician { k: 4.0 }, 0.0);
        assert_eq!(m.method, Method::Exact);
        let s = dbm_to_mw(-70.0);
        let intf = [(1.0, dbm_to_mw(-80.0)), (0.5, dbm_to_mw(-76.0)), (0.2, dbm_to_mw(-72.0))];
        let p = m.probability(s, &intf);
        let (est, lo, hi) = m.monte_carlo(s, &intf, 200_000, 5);
        let se = (p * (1.0 - p) / 200_000.0).sqrt();
        assert!((est - p).abs() < 4.0 * se, "{est} vs {p}");
        assert!(lo < p + 4.0 * se && hi > p - 4.0 * se);
    }

    // Noise only (no interferer): P = Q(m, m T N / S̄), the gamma survival function (statrs
    // reference), for a Rician K = 9 dB signal in gamma form.
    #[test]
    fn noise_limited_matches_gamma_survival() {
        use statrs::distribution::{ContinuousCDF, Gamma};
        let m = model(Fading::Rician { k: 10f64.powf(0.9) }, Fading::Rayleigh, 0.0);
        let shape = m.signal_shape;
        for s_dbm in [-88.0, -86.0, -84.0, -80.0] {
            let s = dbm_to_mw(s_dbm);
            let want = Gamma::new(shape, shape / s).unwrap().sf(m.t_lin * m.noise_mw);
            let got = m.probability(s, &[]);
            assert!((got - want).abs() < 2e-3, "{s_dbm}: {got} vs {want}");
        }
    }

    // Moment matching is an approximation: for a Nakagami-2 signal, Rayleigh interferers and
    // 4 dB shadowing it stays within 0.03 of the Monte Carlo here (a tolerance of the method,
    // not of sampling: the sampling error is 0.002).
    #[test]
    fn moment_matching_is_close_to_monte_carlo() {
        let m = model(Fading::Nakagami { m: 2.0 }, Fading::Rayleigh, 4.0);
        assert_eq!(m.method, Method::MomentGamma);
        let r = model(Fading::Rician { k: 10f64.powf(0.9) }, Fading::Rayleigh, 0.0);
        let s = dbm_to_mw(-78.0);
        let intf: Vec<(f64, f64)> = (0..8).map(|i| (0.5, dbm_to_mw(-88.0 - 2.0 * i as f64))).collect();
        let (p, (est, _, _)) = (r.probability(s, &intf), r.monte_carlo(s, &intf, 100_000, 3));
        assert!((est - p).abs() < 0.03, "rician: {est} vs {p}");
        let s = dbm_to_mw(-70.0);
        let intf: Vec<(f64, f64)> = (0..12).map(|i| (0.6, dbm_to_mw(-84.0 - i as f64))).collect();
        let p = m.probability(s, &intf);
        let (est, _, _) = m.monte_carlo(s, &intf, 100_000, 9);
        assert!((est - p).abs() < 0.03, "{est} vs {p}");
    }

    // Wilson interval (Wilson 1927; e.g. Agresti and Coull 1998): 8 of 10 gives
    // [0.4902, 0.9433] at 95 % (from memory; recomputed by hand from the formula).
    #[test]
    fn wilson_interval() {
        let (p, lo, hi) = wilson(8, 10);
        assert_eq!(p, 0.8);
        assert!((lo - 0.4902).abs() < 1e-3 && (hi - 0.9433).abs() < 1e-3, "{lo} {hi}");
    }
}
