//! No fading: h = 1 (a steady line-of-sight path).

/// E\[hⁿ\] = 1.
pub(super) fn moment(_n: u32) -> f64 {
    1.0
}

/// E\[e^{−t h}\] = e^{−t}, real t.
pub(super) fn laplace(t: f64) -> f64 {
    (-t).exp()
}

/// E\[e^{−t h}\] = e^{−t}, complex t.
pub(super) fn laplace_complex(t: num_complex::Complex64) -> num_complex::Complex64 {
    (-t).exp()
}

/// e^{−t} in float32 with the vectorisable exp2 (the engine's kernel form).
#[inline(always)]
pub(crate) fn laplace_f32(t: f32) -> f32 {
    crate::math::fastmath::fast_exp2(-t * std::f32::consts::LOG2_E)
}
