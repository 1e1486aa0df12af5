//! Rayleigh amplitude: the power gain h is exponential with mean 1.

use rand::Rng;
use rand_distr::{Distribution, Exp1};

/// E\[hⁿ\] = n! (moments of Exp(1)).
pub(super) fn moment(n: u32) -> f64 {
    (1..=n).map(f64::from).product()
}

/// E\[e^{−t h}\] = 1 / (1 + t), real t.
pub(super) fn laplace(t: f64) -> f64 {
    1.0 / (1.0 + t)
}

/// E\[e^{−t h}\] = 1 / (1 + t), complex t.
pub(super) fn laplace_complex(t: num_complex::Complex64) -> num_complex::Complex64 {
    1.0 / (1.0 + t)
}

/// 1 / (1 + t) in float32 (the engine's kernel form).
#[inline(always)]
pub(crate) fn laplace_f32(t: f32) -> f32 {
    1.0 / (1.0 + t)
}

/// One draw in double precision.
pub(super) fn sample(rng: &mut impl Rng) -> f64 {
    Exp1.sample(rng)
}

/// Fills `h` with float32 draws by inversion, h = −ln U with U = (k + ½)/2³² (no zero; the
/// tail is cut at P < 1e−10), two uniforms per 64-bit draw, the logarithm in a vectorised
/// loop.
pub(super) fn fill_f32(rng: &mut impl Rng, h: &mut [f32]) {
    for pair in h.chunks_mut(2) {
        let u = rng.next_u64();
        pair[0] = ((u >> 32) as f32 + 0.5) * (1.0 / 4_294_967_296.0);
        if pair.len() > 1 {
            pair[1] = ((u & 0xffff_ffff) as f32 + 0.5) * (1.0 / 4_294_967_296.0);
        }
    }
    neg_ln_in_place(h);
}

#[inline(always)]
fn neg_ln_body(h: &mut [f32]) {
    for x in h.iter_mut() {
        *x = -crate::math::fastmath::fast_log2(*x) * std::f32::consts::LN_2;
    }
}

crate::math::simd::multiversion!(fn neg_ln_in_place(h: &mut [f32]) -> () => neg_ln_body);
