//! The availability layer: per cell, the ITU-R P.530 rain fade on the path from the best
//! server against the cell's fade margin (mean SINR − threshold; interferers do not fade),
//! inverted to the percentage of an average year the margin holds. The same equations as
//! [`crate::model::weather::rain`] in float32 with the crate's `fast_log2`/`fast_exp2` (IEEE
//! arithmetic only, so the bytes do not depend on the instruction set), once per cell after
//! the node passes.
//!
//! Every constant is the server's: its channel's carrier and its polarisation. The scaling
//! coefficients C₁, C₂, C₃ are taken at the grid centre's latitude (they depend on it only
//! under the latitude scaling, and a map spans a few kilometres).

use crate::NODATA;
use crate::math::fastmath::{fast_exp2, fast_log2};
use crate::model::scenario::Scenario;
use crate::model::weather::rain::{P_MAX, P_MIN, RainCoefficients};
use std::f32::consts::{LOG2_10, LOG2_E, LOG10_2};

/// Rain constants for the availability layer.
pub(crate) struct RainK {
    /// Per node, at its channel's carrier: k_H, k_V, k_H α_H, k_V α_V, 0.477 f^0.123,
    /// log₁₀ C₁, C₂, C₃.
    per_node: Vec<[f32; 8]>,
    /// Per node: cos 2τ of its polarisation.
    cos_2tau: Vec<f32>,
    /// log₂ R₀.₀₁.
    log2_rate: f32,
    /// SINR threshold, dB.
    pub(crate) thr_db: f32,
}

impl RainK {
    /// The constants of a scenario with `[rain]`.
    pub(crate) fn new(sc: &Scenario) -> Option<RainK> {
        let rain = sc.weather().rain?;
        let (_, lat) = sc.grid.bbox().centre();
        let per_channel: Vec<[f32; 8]> = sc
            .spectrum
            .channels
            .iter()
            .map(|ch| {
                let f = ch.centre_ghz;
                let c = RainCoefficients::at(f);
                let (c1, c2, c3) = rain.coefficients(f, lat);
                [
                    c.k_h as f32,
                    c.k_v as f32,
                    (c.k_h * c.alpha_h) as f32,
                    (c.k_v * c.alpha_v) as f32,
                    (0.477 * f.powf(0.123)) as f32,
                    c1.log10() as f32,
                    c2 as f32,
                    c3 as f32,
                ]
            })
            .collect();
        Some(RainK {
            per_node: sc.nodes.iter().map(|n| per_channel[n.channel]).collect(),
            cos_2tau: sc.nodes.iter().map(|n| n.polarisation.cos_2tau() as f32).collect(),
            log2_rate: rain.rate_mm_h.log2() as f32,
            thr_db: sc.thresholds.sinr_db as f32,
        })
    }

    /// cos 2τ of node `node`'s polarisation.
    #[inline(always)]
    pub(crate) fn cos_2tau(&self, node: usize) -> f32 {
        self.cos_2tau[node]
    }

    /// Availability, percent, of each cell of a row from its server (`server`, u32::MAX for
    /// none), fade margin `margin` (dB; NaN where the cell has no server), squared 3-D
    /// distance to the server `d2` (m²) and `w` = cos²θ cos 2τ of the server path; clamped to
    /// the method's range (99 to 99.999), 0 without a margin, NODATA without a server.
    /// Branch-free, so the loop vectorises.
    #[inline(always)]
    pub(crate) fn row(&self, server: &[u32], margin: &[f32], d2: &[f32], w: &[f32], out: &mut [f32]) {
        let (x_min, x_max) = (P_MIN.log10() as f32, P_MAX.log10() as f32);
        let last = self.per_node.len() - 1;
        for ((((o, &s), &m), &d2), &w) in out.iter_mut().zip(server).zip(margin).zip(d2).zip(w) {
            let [kh, kv, kah, kav, f_term, log10_c1, c2, c3] = self.per_node[(s as usize).min(last)];
            let k = 0.5 * (kh + kv + (kh - kv) * w);
            let alpha = 0.5 * (kah + kav + (kah - kav) * w) / k;
            let d_km = d2.max(1.0).sqrt() * 1e-3;
            let gamma = k * fast_exp2(alpha * self.log2_rate);
            let den = f_term * fast_exp2(0.633 * fast_log2(d_km) + 0.073 * alpha * self.log2_rate)
                - 10.579 * (1.0 - fast_exp2(-0.024 * d_km * LOG2_E));
            let r = if den < 0.4 { 2.5 } else { 1.0 / den };
            let a001 = gamma * d_km * r;
            // C₃ x² + C₂ x + y = 0 on x = log₁₀ p, the root where A_p falls with p.
            let y = (fast_log2(m.max(1e-6)) - fast_log2(a001)) * LOG10_2 - log10_c1;
            let disc = c2 * c2 - 4.0 * c3 * y;
            let x = ((disc.max(0.0).sqrt() - c2) / (2.0 * c3)).clamp(x_min, x_max);
            let x = if disc < 0.0 { x_min } else { x };
            let a = 100.0 - fast_exp2(x * LOG2_10);
            *o = if m.is_nan() {
                NODATA
            } else if m > 0.0 {
                a
            } else {
                0.0
            };
        }
    }
}
