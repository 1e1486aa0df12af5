//! The project's own sequential colour map ("tideline"): lightness rises linearly in OKLab
//! from deep blue-slate to pale sand while the hue turns through teal, so equal steps in value
//! read as equal steps in lightness (perceptually ordered, readable in grey-scale print).
//!
//! # References
//! - B. Ottosson, "A perceptual color space for image processing" (2020): OKLab.
//! - IEC 61966-2-1 (sRGB transfer function).

/// 256 sRGB entries, computed once.
pub fn tideline() -> Vec<[u8; 3]> {
    (0..256).map(|i| tideline_at(i as f64 / 255.0)).collect()
}

/// The colour at `t` in [0, 1].
pub fn tideline_at(t: f64) -> [u8; 3] {
    let t = t.clamp(0.0, 1.0);
    let l = 0.27 + 0.68 * t;
    let hue = (262.0 - 175.0 * t).to_radians();
    // Chroma peaks mid-scale; reduce until the colour is inside the sRGB gamut.
    let mut c = 0.035 + 0.085 * (std::f64::consts::PI * t).sin();
    loop {
        let rgb = oklab_to_linear_srgb(l, c * hue.cos(), c * hue.sin());
        if rgb.iter().all(|v| (-1e-9..=1.0 + 1e-9).contains(v)) || c < 1e-4 {
            return rgb.map(|v| (encode_srgb(v.clamp(0.0, 1.0)) * 255.0).round() as u8);
        }
        c *= 0.97;
    }
}

fn oklab_to_linear_srgb(l: f64, a: f64, b: f64) -> [f64; 3] {
    let l_ = l + 0.396_337_777_4 * a + 0.215_803_757_3 * b;
    let m_ = l - 0.105_561_345_8 * a - 0.063_854_172_8 * b;
    let s_ = l - 0.089_484_177_5 * a - 1.291_485_548 * b;
    let (l3, m3, s3) = (l_ * l_ * l_, m_ * m_ * m_, s_ * s_ * s_);
    [
        4.076_741_662_1 * l3 - 3.307_711_591_3 * m3 + 0.230_969_929_2 * s3,
        -1.268_438_004_6 * l3 + 2.609_757_401_1 * m3 - 0.341_319_396_5 * s3,
        -0.004_196_086_3 * l3 - 0.703_418_614_7 * m3 + 1.707_614_701 * s3,
    ]
}

fn encode_srgb(v: f64) -> f64 {
    if v <= 0.003_130_8 { 12.92 * v } else { 1.055 * v.powf(1.0 / 2.4) - 0.055 }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn luminance(c: [u8; 3]) -> f64 {
        let lin = |u: u8| {
            let v = u as f64 / 255.0;
            if v <= 0.04045 { v / 12.92 } else { ((v + 0.055) / 1.055).powf(2.4) }
        };
        // Rec. 709 / sRGB luminance weights (IEC 61966-2-1).
        0.2126 * lin(c[0]) + 0.7152 * lin(c[1]) + 0.0722 * lin(c[2])
    }

    // A sequential map must be monotonic in luminance (common practice for heatmaps).
    #[test]
    fn luminance_is_monotonic() {
        let m = tideline();
        for w in m.windows(2) {
            assert!(luminance(w[1]) >= luminance(w[0]) - 1e-3, "{:?} {:?}", w[0], w[1]);
        }
        assert!(luminance(m[255]) > 8.0 * luminance(m[0]));
    }
}
