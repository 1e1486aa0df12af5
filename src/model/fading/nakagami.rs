//! Nakagami-m amplitude: the power gain h is gamma with shape m and mean 1, m ≥ 0.5.
//!
//! # References
//! - M. Nakagami, "The m-distribution — a general formula of intensity distribution of rapid
//!   fading", in Statistical Methods in Radio Wave Propagation, Pergamon, 1960.

use rand::Rng;
use rand_distr::{Distribution, Gamma};
use statrs::function::gamma::ln_gamma;

/// E\[hⁿ\] = Γ(m + n) / (Γ(m) mⁿ).
pub(super) fn moment(m: f64, n: u32) -> f64 {
    (ln_gamma(m + n as f64) - ln_gamma(m) - n as f64 * m.ln()).exp()
}

/// E\[e^{−t h}\] = (1 + t/m)^{−m}, real t.
pub(super) fn laplace(m: f64, t: f64) -> f64 {
    (1.0 + t / m).powf(-m)
}

/// E\[e^{−t h}\] = exp(−m ln(1 + t/m)), complex t.
pub(super) fn laplace_complex(m: f64, t: num_complex::Complex64) -> num_complex::Complex64 {
    (-m * (1.0 + t / m).ln()).exp()
}

/// (1 + t/m)^{−m} in float32 with the vectorisable log2/exp2 (the engine's kernel form).
#[inline(always)]
pub(crate) fn laplace_f32(m: f32, t: f32) -> f32 {
    use crate::math::fastmath::{fast_exp2, fast_log2};
    fast_exp2(-m * fast_log2(1.0 + t / m))
}

/// The gamma law of h, for drawing.
pub(super) fn law(m: f64) -> Gamma<f64> {
    Gamma::new(m, 1.0 / m).expect("validated m")
}

/// Fills `h` with float32 draws.
pub(super) fn fill_f32(m: f64, rng: &mut impl Rng, h: &mut [f32]) {
    let g = law(m);
    h.iter_mut().for_each(|x| *x = g.sample(rng) as f32);
}
