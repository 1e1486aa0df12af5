//! The pair kernels: one node over one row of cells, in structure-of-arrays form. Every
//! distance law (`Decay`), transmit pattern (`TxGain`), interferer fading transform (`Lt`),
//! per node-cell attenuation (`PairFactor`) and per interferer-receiver coupling
//! (`RxCoupling`) is a type parameter, so the loops are monomorphised and vectorised for each
//! combination; the identities (`Unobstructed`, `CoChannel`) cost nothing.

use crate::math::fastmath::{fast_exp2, fast_log2};

/// Per node–cell attenuation on the mean power and the vertical offset of each pair
/// (obstruction by buildings or terrain): the seam through which a surface model enters every
/// pair. `for_node` gives the view of one node over the row being computed (`len` cells).
pub(crate) trait PairFactor: Copy + Send + Sync {
    /// One node's view.
    type Node: NodeFactor;
    /// The view of node `node` over the row's `len` cells.
    fn for_node(self, node: u32, len: usize) -> Self::Node;
}

/// One node's attenuation over a row.
pub(crate) trait NodeFactor: Copy {
    /// `p` attenuated at column `col`.
    fn apply(self, col: usize, p: f32) -> f32;
    /// Squared 3-D distance at column `col` from the horizontal `w2` and the flat-ground
    /// squared height difference `dz2`.
    fn d2(self, col: usize, w2: f32, dz2: f32) -> f32;
}

/// No attenuation: line of sight on every pair over flat ground (compiles to nothing).
#[derive(Clone, Copy)]
pub(crate) struct Unobstructed;
impl PairFactor for Unobstructed {
    type Node = Unobstructed;
    #[inline(always)]
    fn for_node(self, _node: u32, _len: usize) -> Unobstructed {
        Unobstructed
    }
}
impl NodeFactor for Unobstructed {
    #[inline(always)]
    fn apply(self, _col: usize, p: f32) -> f32 {
        p
    }
    #[inline(always)]
    fn d2(self, _col: usize, w2: f32, dz2: f32) -> f32 {
        w2 + dz2
    }
}

/// The surface's factors for one row: `f[node * stride + col]` signed (negative out of line
/// of sight), the receiver altitude per column and the nodes (their antenna altitudes).
#[derive(Clone, Copy)]
pub(crate) struct Obstructed<'a> {
    pub(crate) f: &'a [f32],
    pub(crate) stride: usize,
    pub(crate) zr: &'a [f32],
    pub(crate) nodes: &'a [crate::engine::sweep::SweepNode],
}
/// [`Obstructed`] for one node.
#[derive(Clone, Copy)]
pub(crate) struct ObstructedNode<'a> {
    f: &'a [f32],
    zr: &'a [f32],
    z: f32,
}
impl<'a> PairFactor for Obstructed<'a> {
    type Node = ObstructedNode<'a>;
    #[inline(always)]
    fn for_node(self, node: u32, len: usize) -> ObstructedNode<'a> {
        let base = node as usize * self.stride;
        ObstructedNode { f: &self.f[base..base + len], zr: &self.zr[..len], z: self.nodes[node as usize].z }
    }
}
impl NodeFactor for ObstructedNode<'_> {
    #[inline(always)]
    fn apply(self, col: usize, p: f32) -> f32 {
        p * self.f[col].abs()
    }
    #[inline(always)]
    fn d2(self, col: usize, w2: f32, _dz2: f32) -> f32 {
        let dz = self.z - self.zr[col];
        w2 + dz * dz
    }
}

/// Per interferer–receiver coupling on interference (channel overlap, polarisation): the seam
/// through which spectrum enters. Once a row's servers are known, `fill_row` writes each
/// interferer class's factor into each cell's server class to a row buffer; `for_node` gives
/// one interferer's factors over the row, read cell by cell in the kernels' vectorised loops
/// (a contiguous load, where a lookup through each cell's server would be a gather).
pub(crate) trait RxCoupling: Copy + Send + Sync {
    /// Whether the factor is 1 for every pair; then the omni interference needs no pass that
    /// knows the server.
    const IDENTITY: bool;
    /// One interferer's factors over the row.
    type Node<'b>: NodeCoupling;
    /// Writes the row's factors into `fac` for cells served by `server`.
    fn fill_row(self, server: &[u32], fac: &mut Vec<f32>);
    /// Interferer `interferer`'s factors, from the buffer `fill_row` wrote.
    fn for_node(self, interferer: u32, fac: &[f32], len: usize) -> Self::Node<'_>;
}

/// [`RxCoupling`] for one interferer over a row.
pub(crate) trait NodeCoupling: Copy {
    /// `p` coupled into the receiver of cell `col`.
    fn apply(self, col: usize, p: f32) -> f32;
}

/// Nodes on several channels or polarisations: each node's class (channel and polarisation)
/// and `table[interferer_class * classes + receiver_class]`.
#[derive(Clone, Copy)]
pub(crate) struct Coupled<'a> {
    pub(crate) class: &'a [u32],
    pub(crate) table: &'a [f32],
    pub(crate) classes: usize,
}
/// [`Coupled`] for one interferer: its factor per cell of the row.
#[derive(Clone, Copy)]
pub(crate) struct CoupledNode<'b>(&'b [f32]);
impl RxCoupling for Coupled<'_> {
    const IDENTITY: bool = false;
    type Node<'b> = CoupledNode<'b>;
    fn fill_row(self, server: &[u32], fac: &mut Vec<f32>) {
        let (len, m, last) = (server.len(), self.classes, self.class.len() - 1);
        fac.clear();
        fac.resize(m * len, 0.0);
        for (k, row) in fac.chunks_exact_mut(len).enumerate() {
            // A cell without a server (u32::MAX) reads the last node's class; its value is
            // unused.
            for (f, &s) in row.iter_mut().zip(server) {
                *f = self.table[k * m + self.class[(s as usize).min(last)] as usize];
            }
        }
    }
    #[inline(always)]
    fn for_node(self, interferer: u32, fac: &[f32], len: usize) -> CoupledNode<'_> {
        let base = self.class[interferer as usize] as usize * len;
        CoupledNode(&fac[base..base + len])
    }
}
impl NodeCoupling for CoupledNode<'_> {
    #[inline(always)]
    fn apply(self, col: usize, p: f32) -> f32 {
        p * self.0[col]
    }
}

/// Every node on one channel and polarisation: full coupling (compiles to nothing).
#[derive(Clone, Copy)]
pub(crate) struct CoChannel;
impl RxCoupling for CoChannel {
    const IDENTITY: bool = true;
    type Node<'b> = CoChannel;
    fn fill_row(self, _server: &[u32], _fac: &mut Vec<f32>) {}
    #[inline(always)]
    fn for_node(self, _interferer: u32, _fac: &[f32], _len: usize) -> CoChannel {
        CoChannel
    }
}
impl NodeCoupling for CoChannel {
    #[inline(always)]
    fn apply(self, _col: usize, p: f32) -> f32 {
        p
    }
}

/// One node prepared for the kernels (local metres, linear powers with the 1 m loss folded in).
#[derive(Debug, Clone, Copy)]
pub(crate) struct NodeK {
    pub(crate) x: f32,
    pub(crate) y: f32,
    pub(crate) dz2: f32,
    pub(crate) bx: f32,
    pub(crate) by: f32,
    pub(crate) cc: f32,
    pub(crate) p_main: f32,
    pub(crate) p_side: f32,
    pub(crate) act: f32,
    pub(crate) lut: Option<usize>,
    /// A parabolic lobe in closed form ([`Dish`]): k of 2^(−k φ²), φ in radians, and the
    /// floor as a share of the boresight gain (of `p_main`). Its `lut` serves the far field.
    pub(crate) dish: Option<(f32, f32)>,
    pub(crate) idx: u32,
    /// Absorption on the node's channel: β·log₂e, per metre.
    pub(crate) beta_log2e: f32,
    /// Upper bound of p_i · r^n (1 m-normalised) for the cutoff bound.
    pub(crate) p_max: f64,
}

/// Table length for non-flat patterns (steps of about 0.014° near boresight).
pub(crate) const LUT_LEN: usize = 8192;

pub(crate) trait Decay: Copy + Send + Sync {
    /// 1 / (L(d)/K) for squared 3-D distance `d2`.
    fn inv(self, d2: f32) -> f32;
    /// The law for node `n`'s transmissions (its channel's absorption); the laws without
    /// absorption are the same for every node.
    #[inline(always)]
    fn for_node(self, _n: &NodeK) -> Self {
        self
    }
}

#[derive(Clone, Copy)]
pub(crate) struct Sq(pub(crate) f32);
#[derive(Clone, Copy)]
pub(crate) struct Cube(pub(crate) f32);
#[derive(Clone, Copy)]
pub(crate) struct Quart(pub(crate) f32);
/// Any exponent and/or absorption: exp2(−(n/2)·log2(d²) − β·log2(e)·d), with the
/// vectorisable [`fast_log2`] and [`fast_exp2`].
#[derive(Clone, Copy)]
pub(crate) struct Fast {
    pub(crate) d2min: f32,
    pub(crate) half_n: f32,
    pub(crate) beta_log2e: f32,
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
    #[inline(always)]
    fn for_node(self, n: &NodeK) -> Self {
        Fast { beta_log2e: n.beta_log2e, ..self }
    }
}

pub(crate) trait TxGain: Copy {
    /// Transmit power times gain (with the 1 m loss folded in) toward offset (wx, wy).
    fn eval(self, n: &NodeK, wx: f32, wy: f32, w2: f32) -> f32;
}

#[derive(Clone, Copy)]
pub(crate) struct Flat;
impl TxGain for Flat {
    #[inline(always)]
    fn eval(self, n: &NodeK, wx: f32, wy: f32, w2: f32) -> f32 {
        let t = n.bx * wx + n.by * wy;
        if t * t.abs() >= n.cc * w2 { n.p_main } else { n.p_side }
    }
}

#[derive(Clone, Copy)]
pub(crate) struct Table<'a>(pub(crate) &'a [f32]);
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

/// A parabolic main lobe without a table: φ² = 4 asin²(√u) with u = sin²(φ/2) =
/// (|w| − b·w)/(2|w|) (in front of the dish (b × w)²/(2|w|(|w| + b·w)), the same without
/// cancellation), by its series 4u (1 + u/3 + 8u²/45 + 4u³/35 + 128u⁴/1575 +
/// 512u⁵/8316), whose first omitted term is below 1e-4 of the sum for φ ≤ 60° (the node uses
/// this form only when its lobe meets the floor within 60°); then p_main max(2^(−kφ²), floor)
/// with the vectorisable [`fast_exp2`]. Arithmetic only, so every instruction set gives the
/// same bits.
#[derive(Clone, Copy)]
pub(crate) struct Dish(pub(crate) (f32, f32));
impl TxGain for Dish {
    #[inline(always)]
    fn eval(self, n: &NodeK, wx: f32, wy: f32, w2: f32) -> f32 {
        let w = w2.sqrt();
        let t = n.bx * wx + n.by * wy;
        // In front, |w| − b·w = (b × w)² / (|w| + b·w): no cancellation near boresight,
        // where the narrowest lobes need u to a few ulps.
        let c = n.bx * wy - n.by * wx;
        let (num, den) = if t > 0.0 { (c * c, 2.0 * w * (w + t)) } else { (w - t, 2.0 * w) };
        let u = if w > 0.0 { (num / den).clamp(0.0, 1.0) } else { 0.0 };
        let series =
            1.0 + u * (1.0 / 3.0 + u * (8.0 / 45.0 + u * (4.0 / 35.0 + u * (128.0 / 1575.0 + u * (512.0 / 8316.0)))));
        let phi2 = 4.0 * u * series;
        let (k, floor) = self.0;
        n.p_main * fast_exp2(-k * phi2).max(floor)
    }
}

/// Scratch and results of one row.
pub(crate) struct RowBufs {
    pub(crate) xs: Vec<f32>,
    pub(crate) ys: Vec<f32>,
    pub(crate) best: Vec<f32>,
    pub(crate) bestw: Vec<f32>,
    pub(crate) other: Vec<f32>,
    pub(crate) server: Vec<u32>,
    pub(crate) ux: Vec<f32>,
    pub(crate) uy: Vec<f32>,
    pub(crate) iacc: Vec<f32>,
    pub(crate) tinv: Vec<f32>,
    pub(crate) cacc: Vec<f32>,
    pub(crate) cvar: Vec<f32>,
    /// The [`STRONG`] strongest interferers per cell, strongest first: received mean power
    /// (`top[j * cols + c]`) and node index.
    pub(crate) top: Vec<f32>,
    pub(crate) topi: Vec<u32>,
    /// One node's received power per cell, for the strong-set insertion.
    pub(crate) qbuf: Vec<f32>,
    /// With channels: the aimed interference summed per interferer class (channel and
    /// polarisation), coupled into each cell's server class at the end of the pass.
    pub(crate) iacc_cls: Vec<Vec<f32>>,
    /// With channels: each interferer class's coupling into each cell's server class
    /// (`RxCoupling::fill_row`).
    pub(crate) cfac: Vec<f32>,
}

impl RowBufs {
    pub(crate) fn new(n: usize) -> Self {
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
            top: vec![0.0; STRONG * n],
            topi: vec![u32::MAX; STRONG * n],
            qbuf: vec![0.0; n],
            iacc_cls: Vec::new(),
            cfac: Vec::new(),
        }
    }
}

// The pass kernels below repeat their first lines (offset, distance, transmit gain) on
// purpose: moving them into a shared helper returning a tuple measured 1.7–2× slower for the
// aimed pass (`cargo bench --bench engine`), the vectoriser loses the loop.
#[inline(always)]
pub(crate) fn pass_sum<D: Decay, G: TxGain, A: PairFactor>(
    d: D,
    g: G,
    a: A,
    n: &NodeK,
    xs: &[f32],
    ys: &[f32],
    sum: &mut [f32],
) {
    let len = xs.len();
    let (ys, sum) = (&ys[..len], &mut sum[..len]);
    let af = a.for_node(n.idx, len);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = af.apply(c, g.eval(n, wx, wy, w2) * d.inv(af.d2(c, w2, n.dz2)));
        sum[c] += n.act * p;
    }
}

#[inline(always)]
pub(crate) fn pass_full<D: Decay, G: TxGain, A: PairFactor>(d: D, g: G, a: A, n: &NodeK, b: &mut RowBufs) {
    let len = b.xs.len();
    let (xs, ys) = (&b.xs[..len], &b.ys[..len]);
    let (best, bestw, other, server) =
        (&mut b.best[..len], &mut b.bestw[..len], &mut b.other[..len], &mut b.server[..len]);
    let af = a.for_node(n.idx, len);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = af.apply(c, g.eval(n, wx, wy, w2) * d.inv(af.d2(c, w2, n.dz2)));
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
pub(crate) fn pass_aimed<D: Decay, G: TxGain, A: PairFactor, C: RxCoupling>(
    d: D,
    g: G,
    a: A,
    cp: C,
    n: &NodeK,
    rx: (f32, f32, f32),
    b: &mut RowBufs,
) {
    let (rcc, rmain, rside) = rx;
    let len = b.xs.len();
    let (xs, ys, ux, uy, server, iacc) =
        (&b.xs[..len], &b.ys[..len], &b.ux[..len], &b.uy[..len], &b.server[..len], &mut b.iacc[..len]);
    let af = a.for_node(n.idx, len);
    let cf = cp.for_node(n.idx, &b.cfac, len);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = af.apply(c, g.eval(n, wx, wy, w2) * d.inv(af.d2(c, w2, n.dz2)));
        // Receiver boresight u points at the server; the node lies along −w.
        let p = cf.apply(c, p);
        let t = -(ux[c] * wx + uy[c] * wy);
        let gr = if t * t.abs() >= rcc * w2 { rmain } else { rside };
        let own = server[c] == n.idx;
        iacc[c] += if own { 0.0 } else { n.act * p * gr };
    }
}

/// The interferers' Laplace transform E\[e^{−t h}\] in the vectorisable form.
pub(crate) trait Lt: Copy {
    fn l(self, t: f32) -> f32;
}
#[derive(Clone, Copy)]
pub(crate) struct LtNone;
#[derive(Clone, Copy)]
pub(crate) struct LtRayleigh;
#[derive(Clone, Copy)]
pub(crate) struct LtNakagami(pub(crate) f32);
#[derive(Clone, Copy)]
pub(crate) struct LtRician(pub(crate) f32);
impl Lt for LtNone {
    #[inline(always)]
    fn l(self, t: f32) -> f32 {
        crate::model::fading::none_laplace_f32(t)
    }
}
impl Lt for LtRayleigh {
    #[inline(always)]
    fn l(self, t: f32) -> f32 {
        crate::model::fading::rayleigh_laplace_f32(t)
    }
}
impl Lt for LtNakagami {
    #[inline(always)]
    fn l(self, t: f32) -> f32 {
        crate::model::fading::nakagami_laplace_f32(self.0, t)
    }
}
impl Lt for LtRician {
    #[inline(always)]
    fn l(self, t: f32) -> f32 {
        crate::model::fading::rician_laplace_f32(self.0, t)
    }
}

/// Coverage, exact form: Π (1 − a + a L(T p g_rx / S)) over interferers, accumulated as a
/// product floored at 1e−30 (a coverage below that is zero for any purpose; no underflow into
/// slow subnormals).
#[inline(always)]
#[allow(clippy::too_many_arguments)] // every parameter is monomorphised into the loop
pub(crate) fn pass_cov_exact<D: Decay, G: TxGain, A: PairFactor, C: RxCoupling, L: Lt>(
    d: D,
    g: G,
    a: A,
    cp: C,
    lt: L,
    n: &NodeK,
    rx: (f32, f32, f32),
    b: &mut RowBufs,
) {
    let (rcc, rmain, rside) = rx;
    let len = b.xs.len();
    let (xs, ys, ux, uy, server, tinv) =
        (&b.xs[..len], &b.ys[..len], &b.ux[..len], &b.uy[..len], &b.server[..len], &b.tinv[..len]);
    let (acc, iacc) = (&mut b.cacc[..len], &mut b.iacc[..len]);
    let af = a.for_node(n.idx, len);
    let cf = cp.for_node(n.idx, &b.cfac, len);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = af.apply(c, g.eval(n, wx, wy, w2) * d.inv(af.d2(c, w2, n.dz2)));
        let p = cf.apply(c, p);
        let t = -(ux[c] * wx + uy[c] * wy);
        let gr = if t * t.abs() >= rcc * w2 { rmain } else { rside };
        let term = 1.0 - n.act + n.act * lt.l(tinv[c] * p * gr);
        let own = server[c] == n.idx;
        acc[c] = if own { acc[c] } else { (acc[c] * term).max(1e-30) };
        // The interference sum of `pass_aimed`, same expression: one pass serves both layers.
        iacc[c] += if own { 0.0 } else { n.act * p * gr };
    }
}

/// Interferers kept one by one per cell (see [`crate::model::coverage::STRONG`]).
pub(crate) const STRONG: usize = crate::model::coverage::STRONG;
/// Cells per insertion chunk: one AVX-512 vector of float32.
const CHUNK: usize = 16;

/// Coverage, strong-set form: the [`STRONG`] strongest interferers of each cell (strongest
/// first, ties to the node inserted first) beside Σ a p g_rx (the aimed interference, in
/// `iacc`) and Σ (a e2 − a² e1²)(p g_rx)² over all of them. The vectorised loop writes each
/// cell's received power to `qbuf`; a
/// second loop inserts only where it beats the cell's weakest kept one, which after the first
/// few nodes is rare (about STRONG·ln(nodes/STRONG) insertions per cell in all).
#[inline(always)]
#[allow(clippy::too_many_arguments)] // every parameter is monomorphised into the loop
pub(crate) fn pass_cov_strong<D: Decay, G: TxGain, A: PairFactor, C: RxCoupling>(
    d: D,
    g: G,
    a: A,
    cp: C,
    n: &NodeK,
    rx: (f32, f32, f32),
    coef: f32,
    b: &mut RowBufs,
) {
    let (rcc, rmain, rside) = rx;
    let len = b.xs.len();
    let (xs, ys, ux, uy, server) = (&b.xs[..len], &b.ys[..len], &b.ux[..len], &b.uy[..len], &b.server[..len]);
    let (iacc, var, qbuf) = (&mut b.iacc[..len], &mut b.cvar[..len], &mut b.qbuf[..len]);
    let af = a.for_node(n.idx, len);
    let cf = cp.for_node(n.idx, &b.cfac, len);
    for c in 0..len {
        let wx = xs[c] - n.x;
        let wy = ys[c] - n.y;
        let w2 = wx * wx + wy * wy;
        let p = af.apply(c, g.eval(n, wx, wy, w2) * d.inv(af.d2(c, w2, n.dz2)));
        let p = cf.apply(c, p);
        let t = -(ux[c] * wx + uy[c] * wy);
        let gr = if t * t.abs() >= rcc * w2 { rmain } else { rside };
        // The server is no interferer of its own cell: its power counts as 0 everywhere.
        let own = server[c] == n.idx;
        let q = if own { 0.0 } else { p * gr };
        // The interference sum of `pass_aimed`, same expression: one pass serves both layers.
        iacc[c] += if own { 0.0 } else { n.act * p * gr };
        var[c] += coef * q * q;
        qbuf[c] = q;
    }
    let (top, topi) = (&mut b.top[..STRONG * len], &mut b.topi[..STRONG * len]);
    let weakest = (STRONG - 1) * len;
    // Chunks of 16 cells: a vectorised test whether any cell's power beats its weakest kept
    // one, then a branch-free insertion (swaps by selection, no mispredicted branches) only
    // in the chunks that need it. A value not above a level moves nothing there, so the
    // result is the sorted insertion cell by cell.
    let mut start = 0;
    while start < len {
        let end = (start + CHUNK).min(len);
        let w = end - start;
        let mut hit = false;
        for (q, t) in qbuf[start..end].iter().zip(&top[weakest + start..weakest + end]) {
            hit |= q > t;
        }
        if hit {
            // Level by level over the chunk, so each level is one vector select.
            let mut v = [0.0f32; CHUNK];
            let mut id = [n.idx; CHUNK];
            v[..w].copy_from_slice(&qbuf[start..end]);
            for j in 0..STRONG {
                let (tv, ti) = (&mut top[j * len + start..j * len + end], &mut topi[j * len + start..j * len + end]);
                for c in 0..w {
                    let sw = v[c] > tv[c];
                    let (old, oldi) = (tv[c], ti[c]);
                    tv[c] = if sw { v[c] } else { old };
                    ti[c] = if sw { id[c] } else { oldi };
                    v[c] = if sw { old } else { v[c] };
                    id[c] = if sw { oldi } else { id[c] };
                }
            }
        }
        start = end;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::grid::{BBox, Grid};
    use crate::model::antenna::{GainForm, Pattern, Sector};
    use crate::model::node::Node;
    use crate::model::pathloss::{FreeSpace, PathLoss};
    use crate::model::scenario::{Radio, Receiver, ReceiverAntenna, Scenario, Thresholds};

    /// One node with `pattern`, prepared by the engine.
    fn prepared(pattern: Pattern) -> NodeK {
        let node = Node {
            id: "d".into(),
            lon: 7.0,
            lat: 45.0,
            azimuth_deg: 37.0,
            pattern,
            power_dbm: 10.0,
            height_m: 5.0,
            activity: 1.0,
            peer: None,
            name: None,
            polarisation: Default::default(),
            channel: 0,
        };
        let grid = Grid::new(BBox { west: 6.999, south: 44.999, east: 7.001, north: 45.001 }, 10.0).unwrap();
        let sc = Scenario::from_parts(
            vec![node],
            Radio { bandwidth_mhz: 400.0, noise_figure_db: 7.0 },
            PathLoss::new(FreeSpace, 28.0, 0.0, 1.0).unwrap(),
            Receiver { height_m: 1.5, antenna: ReceiverAntenna::Aimed(Sector::new(30.0, 15.0, -5.0).unwrap()) },
            grid,
            Thresholds { sinr_db: 5.0, hotspot_i_over_n_db: 0.0, coverage_target: 0.9 },
        );
        crate::engine::Engine::new(&sc).nodes[0]
    }

    /// The closed-form dish (`Dish`) against the pattern's own f64 gain, the parabolic cut
    /// G = gain − min(12 (φ/HPBW)², gain − floor) of 3GPP TR 38.901 Table 7.3-1, every 0.01°
    /// from boresight to 180° on both sides: within 0.01 dB (issue bound for the kernels
    /// against the f64 link budget), for lobes meeting their floor from 1.9° to 59.9° off
    /// boresight. A lobe meeting it beyond 60° keeps the table.
    #[test]
    fn dish_matches_the_parabolic_pattern() {
        for (bw, g, fl) in [
            (0.3, 50.0, -10.0),
            (1.0, 40.0, -10.0),
            (3.0, 34.0, -5.0),
            (10.0, 25.0, -15.0),
            (30.0, 20.0, -16.0),
            (34.6, 18.0, -18.0),
        ] {
            let pattern = Pattern::parabolic(bw, g, fl).unwrap();
            assert!(matches!(pattern.kernel(), GainForm::Parabolic { .. }), "{bw}");
            let n = prepared(pattern);
            let dish = Dish(n.dish.expect("a dish"));
            let az = n.bx.atan2(n.by) as f64;
            let mut worst = 0f64;
            for step in -18000..=18000 {
                let phi = step as f64 * 0.01;
                let a = az + phi.to_radians();
                let (wx, wy) = ((250.0 * a.sin()) as f32, (250.0 * a.cos()) as f32);
                let lin = dish.eval(&n, wx, wy, wx * wx + wy * wy) / n.p_main;
                let err = (10.0 * (lin as f64).log10() + g - pattern.gain_dbi(phi)).abs();
                worst = worst.max(err);
            }
            eprintln!("dish HPBW {bw}°, {g}/{fl} dBi: worst {worst:.5} dB against the f64 pattern");
            assert!(worst <= 0.01, "HPBW {bw}: worst {worst} dB");
        }
        assert!(matches!(Pattern::parabolic(40.0, 20.0, -20.0).unwrap().kernel(), GainForm::Table));
    }
}
