//! Rician amplitude with K-factor K (linear): h = |√(K/(K+1)) + CN(0, 1/(K+1))|², mean 1.
//!
//! # References
//! - Moments from the non-central χ² with two degrees of freedom: E\[Xⁿ\] = n! Σ_j C(n, j)
//!   K^j / j! for X = |√K + CN(0, 1)|² (Laguerre form), h = X/(K+1); E\[h²\] =
//!   (2 + 4K + K²)/(1 + K)² (values checked against scipy.stats.rice, docs/reference-values.md).
//! - Laplace transform (1+K)/(1+K+t)·exp(−Kt/(1+K+t)) (common practice; the moment generating
//!   function of the non-central χ²).

use rand::Rng;
use rand_distr::{Distribution, StandardNormal};

/// E\[hⁿ\].
pub(super) fn moment(k: f64, n: u32) -> f64 {
    let mut s = 0.0;
    let mut binom = 1.0;
    let mut jfact = 1.0;
    for j in 0..=n {
        if j > 0 {
            binom *= (n - j + 1) as f64 / j as f64;
            jfact *= j as f64;
        }
        s += binom * k.powi(j as i32) / jfact;
    }
    let nfact: f64 = (1..=n).map(f64::from).product();
    nfact * s / (k + 1.0).powi(n as i32)
}

/// E\[e^{−t h}\], real t.
pub(super) fn laplace(k: f64, t: f64) -> f64 {
    (1.0 + k) / (1.0 + k + t) * (-k * t / (1.0 + k + t)).exp()
}

/// E\[e^{−t h}\], complex t.
pub(super) fn laplace_complex(k: f64, t: num_complex::Complex64) -> num_complex::Complex64 {
    let d = 1.0 + k + t;
    (1.0 + k) / d * (-k * t / d).exp()
}

/// The transform in float32 with the vectorisable exp2 (the engine's kernel form).
#[inline(always)]
pub(crate) fn laplace_f32(k: f32, t: f32) -> f32 {
    let d = 1.0 + k + t;
    (1.0 + k) / d * crate::math::fastmath::fast_exp2(-k * t / d * std::f32::consts::LOG2_E)
}

/// Line-of-sight amplitude and per-component scatter: (√(K/(K+1)), √(1/(2(K+1)))).
pub(super) fn parts(k: f64) -> (f64, f64) {
    ((k / (k + 1.0)).sqrt(), (0.5 / (k + 1.0)).sqrt())
}

/// One draw in double precision.
pub(super) fn sample(k: f64, rng: &mut impl Rng) -> f64 {
    let (a, s) = parts(k);
    let x: f64 = StandardNormal.sample(rng);
    let y: f64 = StandardNormal.sample(rng);
    (a + s * x).powi(2) + (s * y).powi(2)
}

/// Fills `h` with float32 draws.
pub(super) fn fill_f32(k: f64, rng: &mut impl Rng, h: &mut [f32]) {
    let a = (k / (k + 1.0)).sqrt() as f32;
    let s = (0.5 / (k + 1.0)).sqrt() as f32;
    h.iter_mut().for_each(|x| {
        let u: f32 = StandardNormal.sample(rng);
        let v: f32 = StandardNormal.sample(rng);
        *x = (a + s * u).powi(2) + (s * v).powi(2)
    });
}
