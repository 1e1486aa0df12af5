//! One grid row: cell positions, candidate nodes (all, or near the row under a cutoff, with
//! the bound on what is dropped), the passes over the nodes, and the row's layer values.

use crate::NODATA;
use crate::engine::kernels::*;
use crate::engine::{Engine, LayerSet};
use crate::math::simd::multiversion;
use crate::model::fading::KernelForm;
use crate::model::units::db_to_lin;
use rstar::AABB;

/// Runs `$call` with node `$n`'s transmit gain bound to `$g`: the closed-form dish, the gain
/// table, or the two flat levels (each a type, so every pass is monomorphised for each).
macro_rules! by_gain {
    ($e:expr, $n:expr, |$g:ident| $call:expr) => {
        match ($n.dish, $n.lut) {
            (Some(k), _) => {
                let $g = Dish(k);
                $call
            }
            (None, Some(t)) => {
                let $g = Table(&$e.luts[t]);
                $call
            }
            (None, None) => {
                let $g = Flat;
                $call
            }
        }
    };
}

/// One row: the grid row, the layers wanted, the cutoff and the row's output slices.
pub(crate) struct RowJob<'a> {
    pub(crate) r: usize,
    pub(crate) l: LayerSet,
    pub(crate) cutoff: Option<f64>,
    pub(crate) out: [Option<&'a mut [f32]>; 6],
}

multiversion!(pub(crate) fn row<D: Decay, A: PairFactor, C: RxCoupling>(e: &Engine<'_>, d: D, a: A, cp: C, job: RowJob<'_>, b: &mut RowBufs) -> (u64, f64) => row_body);

/// One row; returns (pair evaluations, bound on dropped power in mW).
#[inline(always)]
pub(crate) fn row_body<D: Decay, A: PairFactor, C: RxCoupling>(
    e: &Engine<'_>,
    d: D,
    a: A,
    cp: C,
    job: RowJob<'_>,
    b: &mut RowBufs,
) -> (u64, f64) {
    let RowJob { r, l, cutoff, out } = job;
    // Coverage by the exact per-pair product (no strong sets).
    let exact = e.cov.strong_per_cell() == 0;
    let g = &e.sc.grid;
    let cols = g.cols();
    let (sl, cl) = g.lat_of_row(r).to_radians().sin_cos();
    let (mut xmin, mut xmax, mut ymin, mut ymax) = (f64::MAX, f64::MIN, f64::MAX, f64::MIN);
    for c in 0..cols {
        let (x, y) = e.sc.frame.from_trig(sl, cl, e.sin_dlon[c], e.cos_dlon[c]);
        b.xs[c] = x as f32;
        b.ys[c] = y as f32;
        xmin = xmin.min(x);
        xmax = xmax.max(x);
        ymin = ymin.min(y);
        ymax = ymax.max(y);
    }
    // Candidate nodes: every node that transmits, or (with a cutoff) those near the row, in
    // index order. A node with activity 0 adds nothing to any sum and is never a server.
    // Under a cutoff the server must stay exact: when a dropped node could outshine a cell's
    // best candidate (its bound at the row exceeds that cell's best), the row is redone with
    // every node, so the cutoff only ever drops interference, within `dropped_mw`.
    let mut cutoff = cutoff;
    let mut pairs = 0u64;
    let full = l.needs_server();
    let (cand, dropped_mw) = loop {
        let mut dropped_mw = 0.0;
        let mut strongest_dropped = 0.0f64;
        let cand: Vec<usize> = match cutoff {
            None => e.active.clone(),
            Some(rc) => {
                let env = AABB::from_corners([xmin - rc, ymin - rc], [xmax + rc, ymax + rc]);
                let mut keep = vec![false; e.nodes.len()];
                for gd in e.tree.locate_in_envelope(env) {
                    keep[gd.data] = true;
                }
                let gmax_rx = e.g_omni.max(e.g_signal) as f64;
                for &k in e.active.iter().filter(|k| !keep[**k]) {
                    let n = &e.nodes[k];
                    // The node's channel's law (p_max carries its 1 m loss).
                    let pl = e.sc.pathloss_of(&e.sc.nodes[k]);
                    let k_inv = db_to_lin(-pl.loss_at_1m_db());
                    let (nx, ny) = (n.x as f64, n.y as f64);
                    let dx = (xmin - nx).max(0.0).max(nx - xmax);
                    let dy = (ymin - ny).max(0.0).max(ny - ymax);
                    let dist = (dx * dx + dy * dy + n.dz2 as f64).sqrt();
                    let most = n.p_max * pl.gain_lin(dist) / k_inv;
                    strongest_dropped = strongest_dropped.max(most);
                    dropped_mw += n.act as f64 * most * gmax_rx;
                }
                e.active.iter().copied().filter(|k| keep[*k]).collect()
            }
        };
        if full {
            b.best.fill(0.0);
            b.bestw.fill(0.0);
            b.other.fill(0.0);
            b.server.fill(u32::MAX);
        } else {
            b.other.fill(0.0);
        }
        for &k in &cand {
            let n = &e.nodes[k];
            if full {
                by_gain!(e, n, |g| pass_full(d.for_node(n), g, a, n, b));
            } else {
                by_gain!(e, n, |g| pass_sum(d.for_node(n), g, a, n, &b.xs, &b.ys, &mut b.other));
            }
            pairs += cols as u64;
        }
        // 1e-5 covers the float32 kernel against this float64 bound.
        let unsure = full && cutoff.is_some() && b.best.iter().any(|&v| (v as f64) <= strongest_dropped * (1.0 + 1e-5));
        if unsure {
            cutoff = None;
            continue;
        }
        break (cand, dropped_mw);
    };
    // The interference needs a pass that knows each cell's server when the receiver is aimed
    // at it or when coupling depends on it; otherwise the server pass's sum stands.
    // Without fading and with every node always on, coverage is the SINR indicator: it needs
    // the interference sums the SINR needs, not a pass of its own.
    let indicator = e.cov.method == crate::model::coverage::Method::Indicator;
    let aimed_needed = (e.rx_aim.is_some() || !C::IDENTITY)
        && (l.interference || l.sinr || l.availability || (l.coverage && indicator));
    let cov_pass = l.coverage && !indicator;
    if e.rx_aim.is_some() && (aimed_needed || l.coverage) {
        for c in 0..cols {
            let s = b.server[c];
            let (ux, uy) = if s == u32::MAX {
                (0.0, 1.0)
            } else {
                let n = &e.nodes[s as usize];
                let (vx, vy) = (n.x - b.xs[c], n.y - b.ys[c]);
                let m = (vx * vx + vy * vy).sqrt();
                if m > 0.0 { (vx / m, vy / m) } else { (0.0, 1.0) }
            };
            b.ux[c] = ux;
            b.uy[c] = uy;
        }
    }
    // The coupling of every interferer class into each cell's server class, for the per-pair
    // kernels (nothing without channels).
    if !C::IDENTITY && (aimed_needed || l.coverage) {
        cp.fill_row(&b.server[..cols], &mut b.cfac);
    }
    // With coverage requested, its pass also sums the aimed interference (see the kernels).
    if aimed_needed && !cov_pass {
        // An omni receiver is the aimed kernel with an always-true beam test.
        let rx = e.rx_aim.unwrap_or((-1.0, e.g_omni, e.g_omni));
        b.iacc.fill(0.0);
        match &e.coupling {
            None => {
                for &k in &cand {
                    let n = &e.nodes[k];
                    by_gain!(e, n, |g| pass_aimed(d.for_node(n), g, a, cp, n, rx, b));
                    pairs += cols as u64;
                }
            }
            Some(cpl) => {
                let (class, table, m) = (&cpl.class, &cpl.table, &cpl.classes);
                // Sum each interferer class apart (the kernel as for one channel, into that
                // class's buffer), then couple the m sums into each cell's server class:
                // m products a cell instead of a coupling lookup a pair.
                let m = *m;
                b.iacc_cls.resize_with(m, Vec::new);
                for v in &mut b.iacc_cls {
                    v.clear();
                    v.resize(cols, 0.0);
                }
                for &k in &cand {
                    let n = &e.nodes[k];
                    let ci = class[k] as usize;
                    std::mem::swap(&mut b.iacc, &mut b.iacc_cls[ci]);
                    by_gain!(e, n, |g| pass_aimed(d.for_node(n), g, a, CoChannel, n, rx, b));
                    std::mem::swap(&mut b.iacc, &mut b.iacc_cls[ci]);
                    pairs += cols as u64;
                }
                let last = class.len() - 1;
                for c in 0..cols {
                    let s = class[(b.server[c] as usize).min(last)] as usize;
                    let mut sum = 0.0f32;
                    for (k, v) in b.iacc_cls.iter().enumerate() {
                        sum += table[k * m + s] * v[c];
                    }
                    b.iacc[c] = sum;
                }
            }
        }
    }
    if cov_pass {
        // An omni receiver is the aimed kernel with an always-true beam test.
        let rx = e.rx_aim.unwrap_or((-1.0, e.g_omni, e.g_omni));
        let t_lin = e.cov.t_lin as f32;
        for c in 0..cols {
            let sig = e.g_signal * b.best[c];
            b.tinv[c] = if sig > 0.0 { t_lin / sig } else { 0.0 };
        }
        // The exact pass keeps a product in `cacc`; the strong-set pass the moments in
        // `cvar` and the sets. Both sum the interference into `iacc`.
        if exact {
            b.cacc.fill(1.0);
        } else {
            b.cvar.fill(0.0);
            b.top.fill(0.0);
            b.topi.fill(u32::MAX);
        }
        b.iacc.fill(0.0);
        let (e1, e2) = (e.cov.e1 as f32, e.cov.e2 as f32);
        for &k in &cand {
            let n = &e.nodes[k];
            macro_rules! lt_pass {
                ($lt:expr) => {
                    by_gain!(e, n, |g| pass_cov_exact(d.for_node(n), g, a, cp, $lt, n, rx, b))
                };
            }
            if exact {
                match e.cov.spec.interferer.kernel_form() {
                    KernelForm::Unit => lt_pass!(LtNone),
                    KernelForm::Rayleigh => lt_pass!(LtRayleigh),
                    KernelForm::Nakagami(m) => lt_pass!(LtNakagami(m)),
                    KernelForm::Rician(k) => lt_pass!(LtRician(k)),
                }
            } else {
                let coef = n.act * e2 - n.act * n.act * e1 * e1;
                by_gain!(e, n, |g| pass_cov_strong(d.for_node(n), g, a, cp, n, rx, coef, b));
            }
            pairs += cols as u64;
        }
    }
    let db = |v: f32| if v > 0.0 { 10.0 * v.log10() } else { NODATA };
    let noise = e.noise_mw as f32;
    let [mut t, mut i, mut s, mut v, cv, av] = out;
    if let Some(cv) = cv {
        let (e1, e2) = (e.cov.e1, e.cov.e2);
        let mut strong: Vec<(f64, f64)> = Vec::with_capacity(STRONG);
        for (c, out) in cv.iter_mut().enumerate() {
            let sig = (e.g_signal * b.best[c]) as f64;
            // The model of the server's channel (its noise).
            let cov = &e.cov_of[e.chan[(b.server[c] as usize).min(e.chan.len() - 1)] as usize];
            *out = if b.server[c] == u32::MAX || sig <= 0.0 {
                NODATA
            } else if indicator {
                // The SINR layer's sums (no shadowing here, so no shadow mean).
                let interf = if aimed_needed { b.iacc[c] } else { e.g_omni * b.other[c] };
                let noise = e.noise_of[b.server[c] as usize];
                if e.g_signal * b.best[c] >= e.cov.t_lin as f32 * (interf + noise) { 1.0 } else { 0.0 }
            } else if exact {
                cov.from_log2_product(sig, (b.cacc[c] as f64).log2()) as f32
            } else {
                // The residual: the sums over every interferer less the strong ones.
                strong.clear();
                let (mut ap, mut var) = (b.iacc[c] as f64, b.cvar[c] as f64);
                for j in 0..STRONG {
                    let (q, id) = (b.top[j * cols + c] as f64, b.topi[j * cols + c]);
                    if id == u32::MAX || q <= 0.0 {
                        break;
                    }
                    let act = e.nodes[id as usize].act as f64;
                    strong.push((act, q));
                    ap -= act * q;
                    var -= (act * e2 - act * act * e1 * e1) * q * q;
                }
                // Not finite only for a combination the scenario check refuses.
                let p = cov.evaluate(sig, &strong, ap, var);
                if p.is_finite() { p as f32 } else { NODATA }
            };
        }
    }
    for c in 0..cols {
        // The noise on the server's channel.
        let noise = if b.server[c] == u32::MAX { noise } else { e.noise_of[b.server[c] as usize] };
        let all = if full { b.other[c] + b.bestw[c] } else { b.other[c] };
        let interf = if aimed_needed { b.iacc[c] } else { e.g_omni * b.other[c] };
        if let Some(t) = t.as_deref_mut() {
            t[c] = db(e.shadow_mean * (e.g_omni * all));
        }
        if let Some(i) = i.as_deref_mut() {
            i[c] = db(e.shadow_mean * interf);
        }
        let best = b.best[c];
        if let Some(s) = s.as_deref_mut() {
            s[c] = if best > 0.0 {
                db(e.g_signal * best * e.shadow_mean / (interf * e.shadow_mean + noise))
            } else {
                NODATA
            };
        }
        if let Some(v) = v.as_deref_mut() {
            v[c] = if b.server[c] == u32::MAX { NODATA } else { b.server[c] as f32 };
        }
        // The availability's inputs per cell (margin, distance, polarisation over elevation)
        // go into buffers free at this point; the vectorised loop below reads them.
        if let (true, Some(rk)) = (av.is_some(), &e.rain) {
            let srv = b.server[c];
            let (m, d2, w) = if srv == u32::MAX || best <= 0.0 {
                (f32::NAN, 1.0, 0.0)
            } else {
                let nk = &e.nodes[srv as usize];
                let (dx, dy) = (b.xs[c] - nk.x, b.ys[c] - nk.y);
                let w2 = dx * dx + dy * dy;
                let d2 = a.for_node(srv, cols).d2(c, w2, nk.dz2).max(1.0);
                let sinr = e.g_signal * best * e.shadow_mean / (interf * e.shadow_mean + noise);
                let sinr_db = 10.0 * std::f32::consts::LOG10_2 * crate::math::fastmath::fast_log2(sinr);
                (sinr_db - rk.thr_db, d2, w2 / d2 * rk.cos_2tau(srv as usize))
            };
            (b.ux[c], b.uy[c], b.tinv[c]) = (m, d2, w);
        }
    }
    if let (Some(av), Some(rk)) = (av, &e.rain) {
        rk.row(&b.server[..cols], &b.ux[..cols], &b.uy[..cols], &b.tinv[..cols], av);
    }
    (pairs, dropped_mw)
}
