//! Small-scale fading of a normalised power gain h (E\[h\] = 1) and log-normal shadowing.
//!
//! Each law lives in its own file with every formula the project needs of it: moments, the
//! Laplace transform E\[e^{−t h}\] (real and complex), samplers (double precision, and float32
//! for the random-field Monte Carlo) and the float32 transform the engine's coverage kernel
//! evaluates. [`Fading`] dispatches to them; adding a law is a file and one line per method
//! here, plus its name in [`Fading::NAMES`].
//!
//! # References
//! - M. Nakagami, "The m-distribution — a general formula of intensity distribution of rapid
//!   fading", in Statistical Methods in Radio Wave Propagation, Pergamon, 1960: a Rician power
//!   is matched by m = (K + 1)² / (2K + 1).

use crate::error::ModelError;
use num_complex::Complex64;
use rand::Rng;

mod nakagami;
mod none;
mod rayleigh;
mod rician;

pub(crate) use nakagami::laplace_f32 as nakagami_laplace_f32;
pub(crate) use none::laplace_f32 as none_laplace_f32;
pub(crate) use rayleigh::laplace_f32 as rayleigh_laplace_f32;
pub(crate) use rician::laplace_f32 as rician_laplace_f32;

/// A fading law for a normalised power gain; built only through its validating
/// constructors, so every value is usable.
///
/// ```
/// use lobemap::model::fading::Fading;
/// let f = Fading::rician_db(6.0).unwrap();
/// assert!((f.moment(1) - 1.0).abs() < 1e-12);
/// assert!(Fading::nakagami(0.3).is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Fading(Law);

#[derive(Debug, Clone, Copy, PartialEq)]
enum Law {
    None,
    Rayleigh,
    Nakagami(f64),
    Rician(f64),
}

/// A read-only view of a fading law and its parameter.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FadingKind {
    /// No fading: h = 1.
    None,
    /// Rayleigh amplitude: h ~ Exp(1).
    Rayleigh,
    /// Nakagami-m amplitude: h ~ Gamma(m, 1/m).
    Nakagami {
        /// Shape m.
        m: f64,
    },
    /// Rician amplitude with K-factor (linear).
    Rician {
        /// K-factor, linear.
        k: f64,
    },
}

/// The transform a kernel evaluates in float32 (the engine matches on this).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum KernelForm {
    /// e^{−t}.
    Unit,
    /// 1 / (1 + t).
    Rayleigh,
    /// (1 + t/m)^{−m}.
    Nakagami(f32),
    /// (1+K)/(1+K+t)·exp(−Kt/(1+K+t)).
    Rician(f32),
}

impl Fading {
    /// No fading.
    pub const NONE: Fading = Fading(Law::None);
    /// Rayleigh fading.
    pub const RAYLEIGH: Fading = Fading(Law::Rayleigh);
    /// Law names, as written in scenario files and on the command line.
    pub const NAMES: [&'static str; 4] = ["none", "rayleigh", "nakagami", "rician"];

    /// A Nakagami law, checking m in [0.5, 1e6] (key `m`).
    pub fn nakagami(m: f64) -> Result<Fading, ModelError> {
        if (0.5..=1e6).contains(&m) {
            Ok(Fading(Law::Nakagami(m)))
        } else {
            Err(ModelError::out_of_range("m", m, "[0.5, 1e6]"))
        }
    }

    /// A Rician law from its K-factor in dB, checking a finite value in [−30, 40] dB (key
    /// `k_db`).
    pub fn rician_db(k_db: f64) -> Result<Fading, ModelError> {
        if k_db.is_finite() && (-30.0..=40.0).contains(&k_db) {
            Ok(Fading(Law::Rician(10f64.powf(k_db / 10.0))))
        } else {
            Err(ModelError::out_of_range("k_db", k_db, "[-30, 40] dB"))
        }
    }

    /// A law by name: `m` is used by `nakagami`, `k_db` by `rician` (key `model` for an
    /// unknown name).
    pub fn from_name(name: &str, m: Option<f64>, k_db: Option<f64>) -> Result<Fading, ModelError> {
        match name {
            "none" => Ok(Fading::NONE),
            "rayleigh" => Ok(Fading::RAYLEIGH),
            "nakagami" => Fading::nakagami(m.unwrap_or(f64::NAN)),
            "rician" => Fading::rician_db(k_db.unwrap_or(f64::NAN)),
            other => Err(ModelError {
                key: "model",
                message: format!("value `{other}` is not one of `{}`", Fading::NAMES.join("`, `")),
            }),
        }
    }

    /// The law and its parameter.
    pub fn kind(&self) -> FadingKind {
        match self.0 {
            Law::None => FadingKind::None,
            Law::Rayleigh => FadingKind::Rayleigh,
            Law::Nakagami(m) => FadingKind::Nakagami { m },
            Law::Rician(k) => FadingKind::Rician { k },
        }
    }

    /// The law's name (one of [`Fading::NAMES`]).
    pub fn name(&self) -> &'static str {
        match self.0 {
            Law::None => "none",
            Law::Rayleigh => "rayleigh",
            Law::Nakagami(_) => "nakagami",
            Law::Rician(_) => "rician",
        }
    }

    /// The n-th moment E\[hⁿ\] (n ≥ 0).
    pub fn moment(&self, n: u32) -> f64 {
        match self.0 {
            Law::None => none::moment(n),
            Law::Rayleigh => rayleigh::moment(n),
            Law::Nakagami(m) => nakagami::moment(m, n),
            Law::Rician(k) => rician::moment(k, n),
        }
    }

    /// The Nakagami-m of the gamma law with the same first two moments: 1 / Var\[h\]
    /// (∞ for no fading). For Rician this is (K+1)²/(2K+1) (Nakagami 1960).
    pub fn gamma_shape(&self) -> f64 {
        match self.0 {
            Law::None => f64::INFINITY,
            Law::Rayleigh => 1.0,
            Law::Nakagami(m) => m,
            Law::Rician(k) => (k + 1.0).powi(2) / (2.0 * k + 1.0),
        }
    }

    /// The Laplace transform E\[e^{−t h}\] at real t ≥ 0.
    pub fn laplace(&self, t: f64) -> f64 {
        match self.0 {
            Law::None => none::laplace(t),
            Law::Rayleigh => rayleigh::laplace(t),
            Law::Nakagami(m) => nakagami::laplace(m, t),
            Law::Rician(k) => rician::laplace(k, t),
        }
    }

    /// The Laplace transform E\[e^{−t h}\] at complex t with Re t ≥ 0.
    pub fn laplace_complex(&self, t: Complex64) -> Complex64 {
        match self.0 {
            Law::None => none::laplace_complex(t),
            Law::Rayleigh => rayleigh::laplace_complex(t),
            Law::Nakagami(m) => nakagami::laplace_complex(m, t),
            Law::Rician(k) => rician::laplace_complex(k, t),
        }
    }

    /// The transform in the form the engine's kernels evaluate.
    pub fn kernel_form(&self) -> KernelForm {
        match self.0 {
            Law::None => KernelForm::Unit,
            Law::Rayleigh => KernelForm::Rayleigh,
            Law::Nakagami(m) => KernelForm::Nakagami(m as f32),
            Law::Rician(k) => KernelForm::Rician(k as f32),
        }
    }

    /// A double-precision sampler of h (prepared once, drawn many times).
    pub fn sampler(&self) -> Sampler {
        Sampler(match self.0 {
            Law::None => Prepared::None,
            Law::Rayleigh => Prepared::Rayleigh,
            Law::Nakagami(m) => Prepared::Nakagami(nakagami::law(m)),
            Law::Rician(k) => Prepared::Rician(k),
        })
    }

    /// Fills `h` with float32 draws of h (the random-field Monte Carlo's vectorised form).
    pub fn fill_f32(&self, rng: &mut impl Rng, h: &mut [f32]) {
        match self.0 {
            Law::None => h.fill(1.0),
            Law::Rayleigh => rayleigh::fill_f32(rng, h),
            Law::Nakagami(m) => nakagami::fill_f32(m, rng, h),
            Law::Rician(k) => rician::fill_f32(k, rng, h),
        }
    }
}

/// A prepared double-precision sampler of a fading law.
#[derive(Debug, Clone)]
pub struct Sampler(Prepared);

#[derive(Debug, Clone)]
enum Prepared {
    None,
    Rayleigh,
    Nakagami(rand_distr::Gamma<f64>),
    Rician(f64),
}

impl Sampler {
    /// One draw of h.
    pub fn sample(&self, rng: &mut impl Rng) -> f64 {
        use rand_distr::Distribution;
        match &self.0 {
            Prepared::None => 1.0,
            Prepared::Rayleigh => rayleigh::sample(rng),
            Prepared::Nakagami(g) => g.sample(rng),
            Prepared::Rician(k) => rician::sample(*k, rng),
        }
    }
}

/// The log-standard deviation in nepers, s = σ ln10 / 10, of a shadowing σ in dB: 10^(X/10)
/// = e^{sZ} with Z standard normal.
pub fn shadowing_nepers(sigma_db: f64) -> f64 {
    sigma_db * std::f64::consts::LN_10 / 10.0
}

/// Mean of the linear gain 10^(X/10) for log-normal shadowing X ~ N(0, σ²) in dB:
/// exp((σ ln10 / 10)² / 2) (moment generating function of the normal law).
pub fn lognormal_mean(sigma_db: f64) -> f64 {
    let s = shadowing_nepers(sigma_db);
    (s * s / 2.0).exp()
}

/// n-th moment of 10^(X/10), X ~ N(0, σ²) in dB: exp(n² s² / 2), s = σ ln10 / 10.
pub fn lognormal_moment(sigma_db: f64, n: u32) -> f64 {
    let s = shadowing_nepers(sigma_db);
    ((n * n) as f64 * s * s / 2.0).exp()
}

/// `[fading]`: small-scale fading of the wanted signal and of interferers, and log-normal
/// shadowing of every link.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FadingSpec {
    /// Fading of the wanted signal.
    pub signal: Fading,
    /// Fading of each interferer.
    pub interferer: Fading,
    /// Log-normal shadowing standard deviation, dB (0: none).
    pub shadowing_db: f64,
}

impl FadingSpec {
    /// The mean shadowing gain E[10^(X/10)] (1 without shadowing): every mean power is this
    /// times the unshadowed one.
    pub fn shadow_mean(&self) -> f64 {
        lognormal_mean(self.shadowing_db)
    }
}

impl Default for FadingSpec {
    fn default() -> Self {
        FadingSpec { signal: Fading::NONE, interferer: Fading::NONE, shadowing_db: 0.0 }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Rician K = 3, 6, 10 dB: m = 1.7977, 2.7684, 5.7619 and E[h²] = 1.55626, 1.36122, 1.17355
    // (docs/reference-values.md, checked against scipy.stats.rice); the gamma match of a
    // Rician power has m = 1/Var[h] (Nakagami 1960).
    #[test]
    fn rician_to_nakagami_mapping() {
        for (k_db, m, e2) in [(3.0, 1.7977, 1.55626), (6.0, 2.7684, 1.36122), (10.0, 5.7619, 1.17355)] {
            let f = Fading::rician_db(k_db).unwrap();
            assert!((f.gamma_shape() - m).abs() < 1e-4, "{k_db}: {}", f.gamma_shape());
            assert!((f.moment(2) - e2).abs() < 1e-5, "{k_db}: {}", f.moment(2));
            assert!((f.moment(1) - 1.0).abs() < 1e-12);
            assert!((1.0 / (f.moment(2) - 1.0) - f.gamma_shape()).abs() < 1e-9);
        }
    }

    // Exponential moments n! and gamma moments Γ(m+n)/(Γ(m) mⁿ) (standard results; Nakagami
    // with m = 1 is Rayleigh).
    #[test]
    fn rayleigh_and_nakagami_moments() {
        assert_eq!(Fading::RAYLEIGH.moment(3), 6.0);
        let n1 = Fading::nakagami(1.0).unwrap();
        for n in 0..5 {
            assert!((n1.moment(n) - Fading::RAYLEIGH.moment(n)).abs() < 1e-9 * Fading::RAYLEIGH.moment(n));
        }
        // m = 2: E[h²] = Γ(4)/(Γ(2)·4) = 1.5.
        assert!((Fading::nakagami(2.0).unwrap().moment(2) - 1.5).abs() < 1e-12);
        assert!(Fading::nakagami(0.4).is_err() && Fading::rician_db(f64::NAN).is_err());
    }

    // Log-normal mean exp((σ ln10/10)²/2), the normal law's moment generating function at
    // ln10/10. Hand calculation for σ = 8 dB: s = 1.842068, s²/2 = 1.696607, e^1.696607 =
    // 5.45541; second moment e^(2 s²) = e^6.786430 = 885.745.
    #[test]
    fn lognormal_moments() {
        let s: f64 = 8.0 * std::f64::consts::LN_10 / 10.0;
        assert!((lognormal_mean(8.0) - 5.45541).abs() < 1e-4);
        assert!((lognormal_moment(8.0, 2) - 885.745).abs() < 1e-2);
        assert!((s - 1.842068).abs() < 1e-6);
        assert_eq!(lognormal_mean(0.0), 1.0);
    }

    /// Every law against its own formulas (a statrs-style self-check): seeded samples of the
    /// double-precision sampler and of the float32 filler, N = 200 000 each, must have mean,
    /// second moment and E[e^{−t h}] within 4 standard errors of [`Fading::moment`] and
    /// [`Fading::laplace`], the standard errors computed from the law's own higher moments
    /// (Var h = E h² − 1, Var h² = E h⁴ − (E h²)², Var e^{−th} = L(2t) − L(t)²); the complex
    /// transform on the real axis and the engine's float32 form agree with the real one.
    #[test]
    fn every_law_matches_its_formulas() {
        use rand::SeedableRng;
        let laws = [
            Fading::NONE,
            Fading::RAYLEIGH,
            Fading::nakagami(0.7).unwrap(),
            Fading::nakagami(3.0).unwrap(),
            Fading::rician_db(-3.0).unwrap(),
            Fading::rician_db(6.0).unwrap(),
            Fading::rician_db(15.0).unwrap(),
        ];
        let n = 200_000usize;
        for (k, f) in laws.iter().enumerate() {
            let mut rng = rand_pcg::Pcg64::seed_from_u64(40 + k as u64);
            let s = f.sampler();
            let d: Vec<f64> = (0..n).map(|_| s.sample(&mut rng)).collect();
            let mut h32 = vec![0f32; n];
            f.fill_f32(&mut rng, &mut h32);
            let f32s: Vec<f64> = h32.iter().map(|&x| x as f64).collect();
            for (label, v) in [("f64", &d), ("f32", &f32s)] {
                let mean = |g: &dyn Fn(f64) -> f64| v.iter().map(|&x| g(x)).sum::<f64>() / n as f64;
                // Plus the rounding of a 200 000-term sum (n·ε ≈ 2e-11).
                let se = |var: f64| 4.0 * (var.max(0.0) / n as f64).sqrt() + 1e-10;
                let (m1, m2, m4) = (f.moment(1), f.moment(2), f.moment(4));
                assert!((mean(&|x| x) - m1).abs() < se(m2 - m1 * m1), "{f:?} {label} mean");
                assert!((mean(&|x| x * x) - m2).abs() < se(m4 - m2 * m2), "{f:?} {label} second moment");
                for t in [0.3, 1.0, 3.0] {
                    let l = f.laplace(t);
                    let got = mean(&|x| (-t * x).exp());
                    assert!((got - l).abs() < se(f.laplace(2.0 * t) - l * l), "{f:?} {label} L({t}): {got} vs {l}");
                }
            }
            for t in [0.0, 0.01, 0.5, 2.0, 40.0] {
                let l = f.laplace(t);
                assert!((f.laplace_complex(Complex64::new(t, 0.0)).re - l).abs() < 1e-12 * l.max(1e-300).max(1.0));
                let k32 = match f.kernel_form() {
                    KernelForm::Unit => none_laplace_f32(t as f32),
                    KernelForm::Rayleigh => rayleigh_laplace_f32(t as f32),
                    KernelForm::Nakagami(m) => nakagami_laplace_f32(m, t as f32),
                    KernelForm::Rician(kk) => rician_laplace_f32(kk, t as f32),
                } as f64;
                assert!((k32 - l).abs() < 1e-5 * l + 1e-30, "{f:?} kernel L({t}): {k32} vs {l}");
            }
        }
    }
}
