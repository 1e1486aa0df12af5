//! The availability layer: per cell, the ITU-R P.530 rain fade on the path from the best
//! server against the cell's fade margin (mean SINR − threshold; interferers do not fade),
//! inverted to the percentage of an average year the margin holds. The same equations as
//! [`crate::model::weather::rain`] in float32 with the crate's `fast_log2`/`fast_exp2` (IEEE
//! arithmetic only, so the bytes do not depend on the instruction set), once per cell after
//! the node passes.
//!
//! The scaling coefficients C₁, C₂, C₃ are taken at the grid centre's latitude (they depend
//! on it only under the latitude scaling, and a map spans a few kilometres).

use crate::math::fastmath::{fast_exp2, fast_log2};
use crate::model::scenario::Scenario;
use crate::model::weather::rain::{P_MAX, P_MIN, RainCoefficients};
use std::f32::consts::{LOG2_10, LOG2_E, LOG10_2};

/// Rain constants for the availability layer.
pub(crate) struct RainK {
    /// Per node: k_H, k_V, k_H α_H, k_V α_V and cos 2τ of its polarisation.
    nodes: Vec<[f32; 5]>,
    /// log₂ R₀.₀₁.
    log2_rate: f32,
    /// 0.477 f^0.123.
    f_term: f32,
    /// log₁₀ C₁, C₂, C₃.
    log10_c1: f32,
    c2: f32,
    c3: f32,
    /// SINR threshold, dB.
    thr_db: f32,
}

impl RainK {
    /// The constants of a scenario with `[rain]`.
    pub(crate) fn new(sc: &Scenario) -> Option<RainK> {
        let rain = sc.weather().rain?;
        let f = sc.pathloss.frequency_ghz();
        let c = RainCoefficients::at(f);
        let nodes = sc
            .nodes
            .iter()
            .map(|n| {
                [
                    c.k_h as f32,
                    c.k_v as f32,
                    (c.k_h * c.alpha_h) as f32,
                    (c.k_v * c.alpha_v) as f32,
                    n.polarisation.cos_2tau() as f32,
                ]
            })
            .collect();
        let (_, lat) = sc.grid.bbox().centre();
        let (c1, c2, c3) = rain.coefficients(f, lat);
        Some(RainK {
            nodes,
            log2_rate: rain.rate_mm_h.log2() as f32,
            f_term: (0.477 * f.powf(0.123)) as f32,
            log10_c1: c1.log10() as f32,
            c2: c2 as f32,
            c3: c3 as f32,
            thr_db: sc.thresholds.sinr_db as f32,
        })
    }

    /// Availability, percent, of a cell served by `node` at squared 3-D distance `d2` (m²),
    /// squared horizontal distance `w2`, with mean SINR `sinr_db`; clamped to the method's
    /// range (99 to 99.999), 0 without a margin.
    #[inline(always)]
    pub(crate) fn availability_pct(&self, node: usize, d2: f32, w2: f32, sinr_db: f32) -> f32 {
        let margin = sinr_db - self.thr_db;
        if margin.is_nan() || margin <= 0.0 {
            return 0.0;
        }
        let [kh, kv, kah, kav, ct] = self.nodes[node];
        let d2 = d2.max(1.0);
        let cos2 = w2 / d2;
        let w = cos2 * ct;
        let k = 0.5 * (kh + kv + (kh - kv) * w);
        let alpha = 0.5 * (kah + kav + (kah - kav) * w) / k;
        let d_km = d2.sqrt() * 1e-3;
        let log2_d = fast_log2(d_km);
        let gamma = k * fast_exp2(alpha * self.log2_rate);
        let den = self.f_term * fast_exp2(0.633 * log2_d + 0.073 * alpha * self.log2_rate)
            - 10.579 * (1.0 - fast_exp2(-0.024 * d_km * LOG2_E));
        let r = if den < 0.4 { 2.5 } else { 1.0 / den };
        let a001 = gamma * d_km * r;
        // C₃ x² + C₂ x + y = 0 on x = log₁₀ p, the root where A_p falls with p.
        let y = (fast_log2(margin) - fast_log2(a001)) * LOG10_2 - self.log10_c1;
        let disc = self.c2 * self.c2 - 4.0 * self.c3 * y;
        let (x_min, x_max) = (P_MIN.log10() as f32, P_MAX.log10() as f32);
        let x = if disc < 0.0 { x_min } else { ((disc.sqrt() - self.c2) / (2.0 * self.c3)).clamp(x_min, x_max) };
        100.0 - fast_exp2(x * LOG2_10)
    }
}
