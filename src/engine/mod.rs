//! The per-cell engine: aggregate received power, best server, interference, SINR and
//! coverage probability on every grid cell.
//!
//! Layout for the vectoriser: rows are processed in parallel (rayon); within a row the loop
//! runs node-outer, cell-inner over structure-of-arrays buffers, so every cell is an
//! independent lane. The main-lobe test uses dot products (no trigonometry in the pair
//! loop); the distance law is specialised for exponents 2, 3 and 4, and any other exponent or
//! absorption uses vectorisable log2/exp2 approximations. The row kernel is compiled for
//! several instruction sets and chosen at run time ([`crate::engine::simd`]). The order of summation
//! is fixed (node index order), so results are bit-identical for any thread count.
//!
//! # Definitions (per cell, receiver at `[receiver] height_m`)
//! - p_i: mean power received from node i with a 0 dBi receiver, mW.
//! - `total` = G_omni · Σ a_i p_i (what any new receiver there would pick up), dBm.
//! - best server s = argmax p_i; S = G_rx,main · p_s.
//! - `interference` = Σ_{i≠s} a_i p_i G_rx(i), with G_rx omni or aimed at s, dBm.
//! - `sinr` = S / (I + N), dB; `server` = s (index in layout order).

use crate::NODATA;
use crate::engine::simd::multiversion;
use crate::model::antenna::Pattern;
use crate::model::scenario::Scenario;
use crate::model::units::{db_to_lin, dbm_to_mw, lin_to_db};
use rayon::prelude::*;
use rstar::{AABB, RTree, primitives::GeomWithData};

pub mod simd;

/// Which layers to compute and write.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LayerSet {
    /// Aggregate received power (omni receiver), dBm.
    pub total: bool,
    /// Aggregate interference at a receiver served by its best server, dBm.
    pub interference: bool,
    /// Mean SINR, dB.
    pub sinr: bool,
    /// Best server index.
    pub server: bool,
    /// Coverage probability P[SINR ≥ T] with fading.
    pub coverage: bool,
}

impl LayerSet {
    /// Every layer.
    pub const ALL: LayerSet = LayerSet { total: true, interference: true, sinr: true, server: true, coverage: true };
    /// Only `total`.
    pub const TOTAL: LayerSet =
        LayerSet { total: true, interference: false, sinr: false, server: false, coverage: false };

    /// Parses a comma-separated list such as `total,sinr`.
    pub fn parse(s: &str) -> Result<LayerSet, String> {
        let mut l = LayerSet { total: false, interference: false, sinr: false, server: false, coverage: false };
        for name in s.split(',').map(str::trim).filter(|x| !x.is_empty()) {
            match name {
                "total" => l.total = true,
                "interference" => l.interference = true,
                "sinr" => l.sinr = true,
                "server" => l.server = true,
                "coverage" => l.coverage = true,
                other => {
                    return Err(format!(
                        "unknown layer `{other}`; allowed: total, interference, sinr, server, coverage"
                    ));
                }
            }
        }
        if l.count() == 0 {
            return Err("no layer named; allowed: total, interference, sinr, server, coverage".into());
        }
        Ok(l)
    }

    /// Number of layers selected.
    pub fn count(&self) -> usize {
        [self.total, self.interference, self.sinr, self.server, self.coverage].iter().filter(|b| **b).count()
    }

    fn needs_server(&self) -> bool {
        self.interference || self.sinr || self.server || self.coverage
    }
}

/// Engine options.
#[derive(Debug, Clone, Copy)]
pub struct Options {
    /// Layers to compute.
    pub layers: LayerSet,
    /// Ignore nodes farther than this from a row (horizontal metres); the dropped power is
    /// bounded and reported as `neglected_db`.
    pub cutoff_m: Option<f64>,
    /// Show a progress bar on stderr.
    pub progress: bool,
}

/// Computed layers (row-major, north row first), in dBm / dB / index, [`NODATA`] where
/// undefined.
#[derive(Debug, Clone, Default)]
pub struct Layers {
    /// `total`, dBm.
    pub total: Option<Vec<f32>>,
    /// `interference`, dBm.
    pub interference: Option<Vec<f32>>,
    /// `sinr`, dB.
    pub sinr: Option<Vec<f32>>,
    /// `server`, node index.
    pub server: Option<Vec<f32>>,
    /// `coverage`, probability 0..1.
    pub coverage: Option<Vec<f32>>,
    /// Node-cell pair evaluations performed.
    pub pair_evaluations: u64,
    /// With a cutoff: the worst cell's upper bound on the dropped power, dB relative to noise.
    pub neglected_db: Option<f64>,
}

/// One node prepared for the kernels (local metres, linear powers with the 1 m loss folded in).
#[derive(Debug, Clone, Copy)]
struct NodeK {
    x: f32,
    y: f32,
    dz2: f32,
    bx: f32,
    by: f32,
    cc: f32,
    p_main: f32,
    p_side: f32,
    act: f32,
    lut: Option<usize>,
    idx: u32,
    /// Upper bound of p_i · r^n (1 m-normalised) for the cutoff bound.
    p_max: f64,
}

/// Table length for non-flat patterns (steps of about 0.014° near boresight).
const LUT_LEN: usize = 8192;

trait Decay: Copy + Send + Sync {
    /// 1 / (L(d)/K) for squared 3-D distance `d2`.
    fn inv(self, d2: f32) -> f32;
}

#[derive(Clone, Copy)]
struct Sq(f32);
#[derive(Clone, Copy)]
struct Cube(f32);
#[derive(Clone, Copy)]
struct Quart(f32);
/// Any exponent and/or absorption: exp2(−(n/2)·log2(d²) − β·log2(e)·d), with the
/// vectorisable [`fast_log2`] and [`fast_exp2`].
#[derive(Clone, Copy)]
struct Fast {
    d2min: f32,
    half_n: f32,
    beta_log2e: f32,
}

impl Decay for Sq {
    #[inline(always)]
    fn inv(self, d2: f32) -> f32 {
        1.0 / d2.max(self.0)
    }
}
impl Decay for Cube {
    #[inline(always)]
    fn inv(self, d2: f32) -> f32 {
        let d2 = d2.max(self.0);
        1.0 / (d2 * d2.sqrt())
    }
}
impl Decay for Quart {
    #[inline(always)]
    fn inv(self, d2: f32) -> f32 {
        let d2 = d2.max(self.0);
        1.0 / (d2 * d2)
    }
}
impl Decay for Fast {
    #[inline(always)]
    fn inv(self, d2: f32) -> f32 {
        let d2 = d2.max(self.d2min);
        fast_exp2(-self.half_n * fast_log2(d2) - self.beta_log2e * d2.sqrt())
    }
}

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

trait TxGain: Copy {
    /// Transmit power times gain (with the 1 m loss folded in) toward offset (wx, wy).
    fn eval(self, n: &NodeK, wx: f32, wy: f32, w2: f32) -> f32;
}

#[derive(Clone, Copy)]
struct Flat;
impl TxGain for Flat {
    #[inline(always)]
    fn eval(self, n: &NodeK, wx: f32, wy: f32, w2: f32) -> f32 {
        let t = n.bx * wx + n.by * wy;
        if t * t.abs() >= n.cc * w2 { n.p_main } else { n.p_side }
    }
}

#[derive(Clone, Copy)]
struct Table<'a>(&'a [f32]);
impl TxGain for Table<'_> {
    #[inline(always)]
    fn eval(self, n: &NodeK, wx: f32, wy: f32, w2: f32) -> f32 {
        let w = w2.sqrt();
        let t = n.bx * wx + n.by * wy;
        // s = sin(φ/2), s² = (|w| − b·w) / (2|w|).
        let s2 = if w > 0.0 { (w - t) / (2.0 * w) } else { 0.0 };
        let f = s2.clamp(0.0, 1.0).sqrt() * (LUT_LEN - 1) as f32;
        let i = (f as usize).min(LUT_LEN - 2);
        let fr = f - i as f32;
        let (a, b) = (self.0[i], self.0[i + 1]);
        (a + fr * (b - a)) * n.p_side
    }
}

/// Scratch and results of one row.
struct RowBufs {
    xs: Vec<f32>,
    ys: Vec<f32>,
    best: Vec<f32>,
    bestw: Vec<f32>,
    other: Vec<f32>,
    server: Vec<u32>,
    ux: Vec<f32>,
    uy: Vec<f32>,
    iacc: Vec<f32>,
    tinv: Vec<f32>,
    cacc: Vec<f32>,
    cvar: Vec<f32>,
}

impl RowBufs {
    fn new(n: usize) -> Self {
        RowBufs {
            xs: vec![0.0; n],
            ys: vec![0.0; n],
            best: vec![0.0; n],
            bestw: vec![0.0; n],
            other: vec![0.0; n],
            server: vec![u32::MAX; n],
            ux: vec![0.0; n],
            uy: vec![0.0; n],
            iacc: vec![0.0; n],
            tinv: vec![0.0; n],
            cacc: vec![0.0; n],
            cvar: vec![0.0; n],
        }
    }
}

// The pass kernels below repeat their first lines (offset, distance, transmit gain) on
// purpose: moving them into a shared helper returning a tuple measured 1.7–2× slower for the
// aimed pass (`cargo bench --bench engine`), the vectoriser loses the loop.
#[inline(always)]
fn pass_sum<D: Decay, G: TxGain>(d: D, g: G, n: &NodeK, xs: &[f32], ys: &[f32], sum: &mut [f32]) {
    let len = xs.len();
    let (ys, sum) = (&ys[..len], &mut sum[..len]);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = g.eval(n, wx, wy, w2) * d.inv(w2 + n.dz2);
        sum[c] += n.act * p;
    }
}

#[inline(always)]
fn pass_full<D: Decay, G: TxGain>(d: D, g: G, n: &NodeK, b: &mut RowBufs) {
    let len = b.xs.len();
    let (xs, ys) = (&b.xs[..len], &b.ys[..len]);
    let (best, bestw, other, server) =
        (&mut b.best[..len], &mut b.bestw[..len], &mut b.other[..len], &mut b.server[..len]);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = g.eval(n, wx, wy, w2) * d.inv(w2 + n.dz2);
        let ap = n.act * p;
        let better = p > best[c];
        // The running sum of every node but the current best: no cancellation.
        other[c] += if better { bestw[c] } else { ap };
        bestw[c] = if better { ap } else { bestw[c] };
        best[c] = if better { p } else { best[c] };
        server[c] = if better { n.idx } else { server[c] };
    }
}

#[inline(always)]
fn pass_aimed<D: Decay, G: TxGain>(d: D, g: G, n: &NodeK, rx: (f32, f32, f32), b: &mut RowBufs) {
    let (rcc, rmain, rside) = rx;
    let len = b.xs.len();
    let (xs, ys, ux, uy, server, iacc) =
        (&b.xs[..len], &b.ys[..len], &b.ux[..len], &b.uy[..len], &b.server[..len], &mut b.iacc[..len]);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = g.eval(n, wx, wy, w2) * d.inv(w2 + n.dz2);
        // Receiver boresight u points at the server; the node lies along −w.
        let t = -(ux[c] * wx + uy[c] * wy);
        let gr = if t * t.abs() >= rcc * w2 { rmain } else { rside };
        let own = server[c] == n.idx;
        iacc[c] += if own { 0.0 } else { n.act * p * gr };
    }
}

/// The interferers' Laplace transform E[e^{−t h}] in the vectorisable form.
trait Lt: Copy {
    fn l(self, t: f32) -> f32;
}
#[derive(Clone, Copy)]
struct LtNone;
#[derive(Clone, Copy)]
struct LtRayleigh;
#[derive(Clone, Copy)]
struct LtNakagami(f32);
#[derive(Clone, Copy)]
struct LtRician(f32);
impl Lt for LtNone {
    #[inline(always)]
    fn l(self, t: f32) -> f32 {
        fast_exp2(-t * std::f32::consts::LOG2_E)
    }
}
impl Lt for LtRayleigh {
    #[inline(always)]
    fn l(self, t: f32) -> f32 {
        1.0 / (1.0 + t)
    }
}
impl Lt for LtNakagami {
    #[inline(always)]
    fn l(self, t: f32) -> f32 {
        fast_exp2(-self.0 * fast_log2(1.0 + t / self.0))
    }
}
impl Lt for LtRician {
    #[inline(always)]
    fn l(self, t: f32) -> f32 {
        let d = 1.0 + self.0 + t;
        (1.0 + self.0) / d * fast_exp2(-self.0 * t / d * std::f32::consts::LOG2_E)
    }
}

/// Coverage, exact form: Π (1 − a + a L(T p g_rx / S)) over interferers, accumulated as a
/// product floored at 1e−30 (a coverage below that is zero for any purpose; no underflow into
/// slow subnormals).
#[inline(always)]
fn pass_cov_exact<D: Decay, G: TxGain, L: Lt>(d: D, g: G, lt: L, n: &NodeK, rx: (f32, f32, f32), b: &mut RowBufs) {
    let (rcc, rmain, rside) = rx;
    let len = b.xs.len();
    let (xs, ys, ux, uy, server, tinv) =
        (&b.xs[..len], &b.ys[..len], &b.ux[..len], &b.uy[..len], &b.server[..len], &b.tinv[..len]);
    let (acc, iacc) = (&mut b.cacc[..len], &mut b.iacc[..len]);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = g.eval(n, wx, wy, w2) * d.inv(w2 + n.dz2);
        let t = -(ux[c] * wx + uy[c] * wy);
        let gr = if t * t.abs() >= rcc * w2 { rmain } else { rside };
        let term = 1.0 - n.act + n.act * lt.l(tinv[c] * p * gr);
        let own = server[c] == n.idx;
        acc[c] = if own { acc[c] } else { (acc[c] * term).max(1e-30) };
        // The interference sum of `pass_aimed`, same expression: one pass serves both layers.
        iacc[c] += if own { 0.0 } else { n.act * p * gr };
    }
}

/// Coverage, moment form: Σ a p g_rx and Σ (a e2 − a² e1²)(p g_rx)².
#[inline(always)]
fn pass_cov_moment<D: Decay, G: TxGain>(d: D, g: G, n: &NodeK, rx: (f32, f32, f32), coef: f32, b: &mut RowBufs) {
    let (rcc, rmain, rside) = rx;
    let len = b.xs.len();
    let (xs, ys, ux, uy, server) = (&b.xs[..len], &b.ys[..len], &b.ux[..len], &b.uy[..len], &b.server[..len]);
    let (acc, var, iacc) = (&mut b.cacc[..len], &mut b.cvar[..len], &mut b.iacc[..len]);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = g.eval(n, wx, wy, w2) * d.inv(w2 + n.dz2);
        let t = -(ux[c] * wx + uy[c] * wy);
        let gr = if t * t.abs() >= rcc * w2 { rmain } else { rside };
        let q = p * gr;
        let own = server[c] == n.idx;
        acc[c] += if own { 0.0 } else { n.act * q };
        var[c] += if own { 0.0 } else { coef * q * q };
        // The interference sum of `pass_aimed`, same expression: one pass serves both layers.
        iacc[c] += if own { 0.0 } else { n.act * p * gr };
    }
}

/// Prepared nodes and model, ready to run over the grid.
pub struct Engine<'s> {
    sc: &'s Scenario,
    nodes: Vec<NodeK>,
    luts: Vec<Vec<f32>>,
    tree: RTree<GeomWithData<[f64; 2], usize>>,
    sin_dlon: Vec<f64>,
    cos_dlon: Vec<f64>,
    noise_mw: f64,
    g_omni: f32,
    rx_aim: Option<(f32, f32, f32)>,
    g_signal: f32,
    cov: crate::model::coverage::CoverageModel,
}

impl<'s> Engine<'s> {
    /// Prepares the scenario's nodes: local coordinates, unit boresights, linear powers,
    /// pattern tables, and the R-tree.
    pub fn new(sc: &'s Scenario) -> Engine<'s> {
        let k_inv = db_to_lin(-sc.pathloss.loss_at_1m_db());
        let rx_h = sc.receiver.height_m;
        let mut luts: Vec<(Pattern, Vec<f32>)> = Vec::new();
        let nodes: Vec<NodeK> = sc
            .nodes
            .iter()
            .enumerate()
            .map(|(i, n)| {
                let (x, y) = sc.frame.to_local(n.lon, n.lat);
                let az = n.azimuth_deg.to_radians();
                let p = dbm_to_mw(n.power_dbm) * k_inv;
                let (p_main, p_side, lut) = match n.pattern {
                    Pattern::Sector { gain_dbi, sidelobe_dbi, .. } => {
                        (p * db_to_lin(gain_dbi), p * db_to_lin(sidelobe_dbi), None)
                    }
                    Pattern::Omni { gain_dbi } => (p * db_to_lin(gain_dbi), p * db_to_lin(gain_dbi), None),
                    Pattern::Parabolic { .. } => {
                        let pos = luts.iter().position(|(q, _)| *q == n.pattern).unwrap_or_else(|| {
                            luts.push((n.pattern, n.pattern.gain_table_over_half_angle_sine(LUT_LEN)));
                            luts.len() - 1
                        });
                        (p * db_to_lin(n.pattern.max_gain_dbi()), p, Some(pos))
                    }
                };
                NodeK {
                    x: x as f32,
                    y: y as f32,
                    dz2: ((n.height_m - rx_h) * (n.height_m - rx_h)) as f32,
                    bx: az.sin() as f32,
                    by: az.cos() as f32,
                    cc: n.pattern.signed_cos_sq_half_beam() as f32,
                    p_main: p_main as f32,
                    p_side: p_side as f32,
                    act: n.activity as f32,
                    lut,
                    idx: i as u32,
                    p_max: p * db_to_lin(n.pattern.max_gain_dbi()),
                }
            })
            .collect();
        let tree = RTree::bulk_load(
            nodes.iter().map(|n| GeomWithData::new([n.x as f64, n.y as f64], n.idx as usize)).collect(),
        );
        let g = &sc.grid;
        let (sin_dlon, cos_dlon) =
            (0..g.cols()).map(|c| (g.lon_of_col(c) - sc.frame.lon0()).to_radians().sin_cos()).unzip();
        let rxp = sc.receiver.pattern;
        let rx_aim = sc.receiver.aimed.then(|| match rxp {
            Pattern::Sector { gain_dbi, sidelobe_dbi, .. } => {
                (rxp.signed_cos_sq_half_beam() as f32, db_to_lin(gain_dbi) as f32, db_to_lin(sidelobe_dbi) as f32)
            }
            _ => unreachable!("an aimed receiver is a sector"),
        });
        Engine {
            sc,
            nodes,
            luts: luts.into_iter().map(|(_, t)| t).collect(),
            tree,
            sin_dlon,
            cos_dlon,
            noise_mw: dbm_to_mw(sc.noise_dbm()),
            g_omni: db_to_lin(sc.receiver.omni_gain_dbi()) as f32,
            rx_aim,
            g_signal: db_to_lin(rxp.max_gain_dbi()) as f32,
            cov: crate::model::coverage::CoverageModel::new(sc.fading, sc.thresholds.sinr_db, sc.noise_dbm()),
        }
    }

    /// How the coverage layer is computed.
    pub fn coverage_method(&self) -> crate::model::coverage::Method {
        self.cov.method
    }

    /// Runs the engine over the whole grid.
    pub fn run(&self, opts: &Options) -> Layers {
        let pl = &self.sc.pathloss;
        let d2min = (pl.min_distance_m() * pl.min_distance_m()) as f32;
        let n = pl.exponent();
        let beta = pl.beta_per_m() as f32;
        if beta == 0.0 && n == 2.0 {
            self.run_with(Sq(d2min), opts)
        } else if beta == 0.0 && n == 3.0 {
            self.run_with(Cube(d2min), opts)
        } else if beta == 0.0 && n == 4.0 {
            self.run_with(Quart(d2min), opts)
        } else {
            self.run_with(Fast { d2min, half_n: (n / 2.0) as f32, beta_log2e: beta * std::f32::consts::LOG2_E }, opts)
        }
    }

    fn run_with<D: Decay>(&self, d: D, opts: &Options) -> Layers {
        let g = &self.sc.grid;
        let (rows, cols) = (g.rows(), g.cols());
        let l = opts.layers;
        let alloc = |on: bool| on.then(|| vec![0f32; rows * cols]);
        let mut total = alloc(l.total);
        let mut interference = alloc(l.interference);
        let mut sinr = alloc(l.sinr);
        let mut server = alloc(l.server);
        let mut coverage = alloc(l.coverage);
        fn chunks(v: &mut Option<Vec<f32>>, cols: usize, rows: usize) -> Vec<Option<&mut [f32]>> {
            match v {
                Some(v) => v.chunks_mut(cols).map(Some).collect(),
                None => (0..rows).map(|_| None).collect(),
            }
        }
        let work: Vec<_> = chunks(&mut total, cols, rows)
            .into_iter()
            .zip(chunks(&mut interference, cols, rows))
            .zip(chunks(&mut sinr, cols, rows))
            .zip(chunks(&mut server, cols, rows))
            .zip(chunks(&mut coverage, cols, rows))
            .enumerate()
            .map(|(r, ((((t, i), s), v), cv))| (r, [t, i, s, v, cv]))
            .collect();
        let bar = if opts.progress && rows * cols * self.nodes.len() > 50_000_000 {
            let b = indicatif::ProgressBar::new(rows as u64);
            b.set_style(
                indicatif::ProgressStyle::with_template("{msg} [{bar:40}] {pos}/{len} rows, {eta} left")
                    .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
            );
            b.set_message("map");
            b
        } else {
            indicatif::ProgressBar::hidden()
        };
        let per_row: Vec<(u64, f64)> = work
            .into_par_iter()
            .map_init(
                || RowBufs::new(cols),
                |bufs, (r, out)| {
                    let out = row(self, d, RowJob { r, l, cutoff: opts.cutoff_m, out }, bufs);
                    bar.inc(1);
                    out
                },
            )
            .collect();
        bar.finish_and_clear();
        let pairs = per_row.iter().map(|x| x.0).sum();
        let neglected = opts.cutoff_m.map(|_| {
            let worst = per_row.iter().map(|x| x.1).fold(0.0, f64::max);
            if worst > 0.0 { lin_to_db(worst / self.noise_mw) } else { -300.0 }
        });
        Layers { total, interference, sinr, server, coverage, pair_evaluations: pairs, neglected_db: neglected }
    }
}

/// One row: the grid row, the layers wanted, the cutoff and the row's output slices.
struct RowJob<'a> {
    r: usize,
    l: LayerSet,
    cutoff: Option<f64>,
    out: [Option<&'a mut [f32]>; 5],
}

multiversion!(fn row<D: Decay>(e: &Engine<'_>, d: D, job: RowJob<'_>, b: &mut RowBufs) -> (u64, f64) => row_body);

/// One row; returns (pair evaluations, bound on dropped power in mW).
#[inline(always)]
fn row_body<D: Decay>(e: &Engine<'_>, d: D, job: RowJob<'_>, b: &mut RowBufs) -> (u64, f64) {
    let RowJob { r, l, cutoff, out } = job;
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
    // Candidate nodes: all, or (with a cutoff) those near the row, in index order.
    let mut dropped_mw = 0.0;
    let cand: Vec<usize> = match cutoff {
        None => (0..e.nodes.len()).collect(),
        Some(rc) => {
            let env = AABB::from_corners([xmin - rc, ymin - rc], [xmax + rc, ymax + rc]);
            let mut keep = vec![false; e.nodes.len()];
            for gd in e.tree.locate_in_envelope(env) {
                keep[gd.data] = true;
            }
            let pl = &e.sc.pathloss;
            let gmax_rx = e.g_omni.max(e.g_signal) as f64;
            for (_, n) in e.nodes.iter().enumerate().filter(|(k, _)| !keep[*k]) {
                let (nx, ny) = (n.x as f64, n.y as f64);
                let dx = (xmin - nx).max(0.0).max(nx - xmax);
                let dy = (ymin - ny).max(0.0).max(ny - ymax);
                let dist = (dx * dx + dy * dy + n.dz2 as f64).sqrt();
                dropped_mw += n.act as f64 * n.p_max * gmax_rx * pl.gain_lin(dist) / db_to_lin(-pl.loss_at_1m_db());
            }
            (0..e.nodes.len()).filter(|k| keep[*k]).collect()
        }
    };
    let mut pairs = 0u64;
    let full = l.needs_server();
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
        match (n.lut, full) {
            (None, true) => pass_full(d, Flat, n, b),
            (Some(t), true) => pass_full(d, Table(&e.luts[t]), n, b),
            (None, false) => pass_sum(d, Flat, n, &b.xs, &b.ys, &mut b.other),
            (Some(t), false) => pass_sum(d, Table(&e.luts[t]), n, &b.xs, &b.ys, &mut b.other),
        }
        pairs += cols as u64;
    }
    let aimed_needed = e.rx_aim.is_some() && (l.interference || l.sinr);
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
    // With coverage requested, its pass also sums the aimed interference (see the kernels).
    if let (Some(rx), true) = (e.rx_aim, aimed_needed && !l.coverage) {
        b.iacc.fill(0.0);
        for &k in &cand {
            let n = &e.nodes[k];
            match n.lut {
                None => pass_aimed(d, Flat, n, rx, b),
                Some(t) => pass_aimed(d, Table(&e.luts[t]), n, rx, b),
            }
            pairs += cols as u64;
        }
    }
    if l.coverage {
        // An omni receiver is the aimed kernel with an always-true beam test.
        let rx = e.rx_aim.unwrap_or((-1.0, e.g_omni, e.g_omni));
        let t_lin = e.cov.t_lin as f32;
        for c in 0..cols {
            let sig = e.g_signal * b.best[c];
            b.tinv[c] = if sig > 0.0 { t_lin / sig } else { 0.0 };
        }
        let exact = e.cov.method == crate::model::coverage::Method::Exact;
        b.cacc.fill(if exact { 1.0 } else { 0.0 });
        b.cvar.fill(0.0);
        b.iacc.fill(0.0);
        let (e1, e2) = (e.cov.e1 as f32, e.cov.e2 as f32);
        for &k in &cand {
            let n = &e.nodes[k];
            macro_rules! lt_pass {
                ($lt:expr) => {
                    match n.lut {
                        None => pass_cov_exact(d, Flat, $lt, n, rx, b),
                        Some(t) => pass_cov_exact(d, Table(&e.luts[t]), $lt, n, rx, b),
                    }
                };
            }
            if exact {
                match e.cov.spec.interferer {
                    crate::model::fading::Fading::None => lt_pass!(LtNone),
                    crate::model::fading::Fading::Rayleigh => lt_pass!(LtRayleigh),
                    crate::model::fading::Fading::Nakagami { m } => lt_pass!(LtNakagami(m as f32)),
                    crate::model::fading::Fading::Rician { k } => lt_pass!(LtRician(k as f32)),
                }
            } else {
                let coef = n.act * e2 - n.act * n.act * e1 * e1;
                match n.lut {
                    None => pass_cov_moment(d, Flat, n, rx, coef, b),
                    Some(t) => pass_cov_moment(d, Table(&e.luts[t]), n, rx, coef, b),
                }
            }
            pairs += cols as u64;
        }
    }
    let db = |v: f32| if v > 0.0 { 10.0 * v.log10() } else { NODATA };
    let noise = e.noise_mw as f32;
    let [mut t, mut i, mut s, mut v, cv] = out;
    if let Some(cv) = cv {
        let exact = e.cov.method == crate::model::coverage::Method::Exact;
        for (c, out) in cv.iter_mut().enumerate() {
            let sig = (e.g_signal * b.best[c]) as f64;
            *out = if b.server[c] == u32::MAX || sig <= 0.0 {
                NODATA
            } else if exact {
                e.cov.from_log2_product(sig, (b.cacc[c] as f64).log2()) as f32
            } else {
                e.cov.from_moments(sig, b.cacc[c] as f64, b.cvar[c] as f64) as f32
            };
        }
    }
    for c in 0..cols {
        let all = if full { b.other[c] + b.bestw[c] } else { b.other[c] };
        let interf = if aimed_needed { b.iacc[c] } else { e.g_omni * b.other[c] };
        if let Some(t) = t.as_deref_mut() {
            t[c] = db(e.g_omni * all);
        }
        if let Some(i) = i.as_deref_mut() {
            i[c] = db(interf);
        }
        let best = b.best[c];
        if let Some(s) = s.as_deref_mut() {
            s[c] = if best > 0.0 { db(e.g_signal * best / (interf + noise)) } else { NODATA };
        }
        if let Some(v) = v.as_deref_mut() {
            v[c] = if b.server[c] == u32::MAX { NODATA } else { b.server[c] as f32 };
        }
    }
    (pairs, dropped_mw)
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
