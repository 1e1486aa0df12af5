//! Far-field aggregation (`map --far-field-db TOL`): near nodes exact, far nodes as clusters
//! of a quadtree over the layout, with a rigorous per-cell bound on the error.
//!
//! # The model
//! The map is computed in blocks of [`BLOCK`] × [`BLOCK`] cells. For each block the tree is
//! walked from the root; a cluster far enough from the block is taken whole, otherwise its
//! children are visited, and the members of a leaf that is not taken are computed exactly
//! (the same float32 kernels as the exact engine). A node's power toward a cell is
//! `act · P(φ) · f(r)` with the pattern P of the horizontal angle φ off boresight and the law
//! f(r) = r⁻ⁿ e^(−βr) of the 3-D distance r. Every pattern is split into its floor P_f (the
//! side level; constant in φ) and the rest, nonzero only within its beam half-width φ_b:
//! - the floor of every member is one isotropic emitter ("group") at the members' weighted
//!   centroid, weights act·P_f;
//! - of a flat sector's beam increment (P_main − P_f), the members whose beam surely covers
//!   the whole block are a second group; those whose beam edge may cross the block (the
//!   directions from members to cells lie within α = asin((ρ_c + ρ_b)/D) of the direction
//!   from the cluster's centre to the block's) are computed exactly, increment only; members
//!   whose beam surely misses the block add nothing;
//! - any other pattern's increment is computed exactly for the members whose beam may reach
//!   the block, and is zero for the others.
//!
//! Members are kept per cluster in order of boresight azimuth with prefix sums of their
//! moments, so a group of any azimuth window costs two binary searches.
//!
//! # The bound
//! A group of weights wᵢ at 3-D points pᵢ with centroid p̄ is taken as W·f(|x − p̄|). By
//! Taylor's theorem with the centroid's first-order term zero, the error at a cell x is at
//! most ½ Σ wᵢ|pᵢ − p̄|² · sup ‖∇²F‖ over the segments, and for a radial F(q) = f(|x − q|)
//! the Hessian's eigenvalues are f''(r) and f'(r)/r, both at most
//! f''(r) = e^(−βr)(n(n+1) r⁻ⁿ⁻² + 2nβ r⁻ⁿ⁻¹ + β² r⁻ⁿ), which falls with r; r is at least
//! r_min = (horizontal distance from the block's centre to p̄) − ρ_b − ρ_g. A group is taken
//! only when r_min exceeds the law's minimum distance and its bound is at most ε times its
//! smallest value over the block, ε = 1 − 10^(−TOL'/10); so the far part's error is at most ε
//! times the far part, which is part of every cell's total and of its interference (the
//! server is always exact: a block is redone with a larger exact radius when any cluster's
//! strongest member could outshine a cell's best exact node). Each cell's bound is reported as
//! −10 log10(1 − B/V) for V its total and its interference, plus [`FLOAT32_DB`] for the
//! float32 arithmetic; TOL' = TOL − [`FLOAT32_DB`].
//!
//! # Scope
//! Omni receiver, one channel and polarisation, no surface and no cutoff; layers `total`,
//! `interference`, `sinr` and `server` (the coverage and availability layers need each
//! interferer's fading or each server's path, which a cluster does not keep). The map
//! command refuses the other combinations by name.

// The block kernel takes the engine's pieces one by one (as the row kernel does).
#![allow(clippy::too_many_arguments, clippy::type_complexity)]

use crate::NODATA;
use crate::engine::kernels::{Decay, Flat, NodeK, RowBufs, Table, Unobstructed, pass_full, pass_sum};
use crate::engine::{Engine, LayerSet, Layers};
use crate::math::simd::multiversion;
use rayon::prelude::*;
use std::f64::consts::{PI, TAU};

/// Cells per side of a block.
pub const BLOCK: usize = 32;
/// Members of a leaf at most.
const LEAF: usize = 24;
/// What the float32 arithmetic of the exact part may add, dB (measured in the tests far
/// below this: see `tests/farfield.rs`).
pub const FLOAT32_DB: f64 = 0.01;
/// Angle added to every beam window, rad: covers the float32 beam test against the exact
/// angle.
const ANGLE_MARGIN: f64 = 1e-3;

/// Prefix moments of a weight: W, W·x, W·y, W·z, W·(x² + y² + z²) (relative to the
/// cluster's centre).
type Moments = [f64; 5];

fn add(a: &mut Moments, b: &Moments) {
    for (x, y) in a.iter_mut().zip(b) {
        *x += y;
    }
}

#[derive(Clone, Copy)]
enum SegKind {
    /// Flat sector beam of half-width `half` (rad); prefix moments of the increment.
    Flat { half: f64 },
    /// A tabulated pattern (`lut`: the increment table) whose beam reaches `half` (rad).
    Table { lut: usize, half: f64 },
}

/// One pattern class of a cluster's members, sorted by boresight azimuth.
#[derive(Clone, Copy)]
struct Seg {
    kind: SegKind,
    /// Range in `FarTree::sorted`.
    lo: u32,
    hi: u32,
    /// Start of the segment's prefix sums in `FarTree::prefix` (hi − lo + 1 entries).
    plo: u32,
}

struct TNode {
    /// Centre of the cluster's square (plane metres).
    cx: f64,
    cy: f64,
    /// Largest horizontal distance of a member from the centre.
    rho: f64,
    /// Largest 3-D distance of a member from (cx, cy, zc).
    rho3: f64,
    zc: f64,
    /// The floor group's moments.
    side: Moments,
    /// Largest p (power × gain before activity) of a member toward its boresight.
    pmax: f64,
    /// Members: `perm[lo..hi]`.
    lo: u32,
    hi: u32,
    /// Children in `nodes[child..child + nchild]`.
    child: u32,
    nchild: u32,
    /// Pattern segments in `segs[seg_lo..seg_hi]`.
    seg_lo: u32,
    seg_hi: u32,
}

/// The far-field tree of an engine's transmitting nodes.
pub(crate) struct FarTree {
    nodes: Vec<TNode>,
    perm: Vec<u32>,
    segs: Vec<Seg>,
    /// (azimuth in the plane, rad in [0, 2π); engine node index).
    sorted: Vec<(f64, u32)>,
    prefix: Vec<Moments>,
    /// Per pattern table: the table less its floor (the increment), and the floor.
    inc_luts: Vec<Vec<f32>>,
    /// Per node: its height above the receiver, m.
    z: Vec<f64>,
    /// Per node: its floor weight act·P_f and increment weight act·(P_main − P_f) (flat
    /// sectors only).
    w_side: Vec<f64>,
    w_beam: Vec<f64>,
}

/// The law f(r) and its second derivative, in double precision.
#[derive(Clone, Copy)]
struct Law {
    n: f64,
    beta: f64,
    dmin: f64,
}

impl Law {
    fn f(&self, r: f64) -> f64 {
        let r = r.max(self.dmin);
        r.powf(-self.n) * (-self.beta * r).exp()
    }
    fn f2(&self, r: f64) -> f64 {
        let (n, b) = (self.n, self.beta);
        (-b * r).exp() * (n * (n + 1.0) * r.powf(-n - 2.0) + 2.0 * n * b * r.powf(-n - 1.0) + b * b * r.powf(-n))
    }
}

fn azimuth(n: &NodeK) -> f64 {
    let a = (n.bx as f64).atan2(n.by as f64);
    if a < 0.0 { a + TAU } else { a }
}

/// Half-width (rad) beyond which a pattern table equals its last value (its floor).
fn table_half_beam(lut: &[f32]) -> f64 {
    let floor = lut[lut.len() - 1];
    let last = lut.iter().rposition(|v| *v != floor).map_or(0, |i| i + 1);
    // The table is over s = sin(φ/2) on [0, 1].
    let s = (last as f64 / (lut.len() - 1) as f64).min(1.0);
    2.0 * s.asin()
}

impl FarTree {
    pub(crate) fn build(e: &Engine<'_>) -> FarTree {
        let rx_h = e.sc.receiver.height_m;
        let z: Vec<f64> = e.sc.nodes.iter().map(|n| n.height_m - rx_h).collect();
        let floors: Vec<f32> = e.luts.iter().map(|l| l[l.len() - 1]).collect();
        let inc_luts = e.luts.iter().zip(&floors).map(|(l, f)| l.iter().map(|v| v - f).collect()).collect();
        let (mut w_side, mut w_beam) = (vec![0.0; e.nodes.len()], vec![0.0; e.nodes.len()]);
        for n in &e.nodes {
            let i = n.idx as usize;
            match n.lut {
                None => {
                    w_side[i] = n.act as f64 * n.p_side as f64;
                    w_beam[i] = n.act as f64 * (n.p_main as f64 - n.p_side as f64);
                }
                Some(t) => w_side[i] = n.act as f64 * n.p_side as f64 * floors[t] as f64,
            }
        }
        let half_table: Vec<f64> = e.luts.iter().map(|l| table_half_beam(l)).collect();
        let mut t = FarTree {
            nodes: Vec::new(),
            perm: e.active.iter().map(|&k| k as u32).collect(),
            segs: Vec::new(),
            sorted: Vec::new(),
            prefix: Vec::new(),
            inc_luts,
            z,
            w_side,
            w_beam,
        };
        if t.perm.is_empty() {
            return t;
        }
        let (mut x0, mut y0, mut x1, mut y1) = (f64::MAX, f64::MAX, f64::MIN, f64::MIN);
        for &k in &t.perm {
            let n = &e.nodes[k as usize];
            x0 = x0.min(n.x as f64);
            x1 = x1.max(n.x as f64);
            y0 = y0.min(n.y as f64);
            y1 = y1.max(n.y as f64);
        }
        let half = ((x1 - x0).max(y1 - y0) / 2.0).max(1e-3);
        t.nodes.push(TNode::empty());
        let len = t.perm.len() as u32;
        t.split(e, 0, 0, len, ((x0 + x1) / 2.0, (y0 + y1) / 2.0), half, 0, &half_table);
        t
    }

    /// Fills tree node `at` with members perm[lo..hi] in the square of centre `c` and half
    /// side `half`, and its children.
    #[allow(clippy::too_many_arguments)]
    fn split(
        &mut self,
        e: &Engine<'_>,
        at: usize,
        lo: u32,
        hi: u32,
        c: (f64, f64),
        half: f64,
        depth: usize,
        half_table: &[f64],
    ) {
        let members: Vec<u32> = self.perm[lo as usize..hi as usize].to_vec();
        let pos = |k: u32| {
            let n = &e.nodes[k as usize];
            (n.x as f64 - c.0, n.y as f64 - c.1, self.z[k as usize])
        };
        let zc = {
            let (mut a, mut b) = (f64::MAX, f64::MIN);
            for &k in &members {
                a = a.min(self.z[k as usize]);
                b = b.max(self.z[k as usize]);
            }
            (a + b) / 2.0
        };
        let (mut rho, mut rho3, mut pmax) = (0f64, 0f64, 0f64);
        let mut side = [0.0; 5];
        for &k in &members {
            let (x, y, z) = pos(k);
            rho = rho.max(x.hypot(y));
            rho3 = rho3.max((x * x + y * y + (z - zc) * (z - zc)).sqrt());
            pmax = pmax.max(e.nodes[k as usize].p_main.max(e.nodes[k as usize].p_side) as f64);
            let w = self.w_side[k as usize];
            add(&mut side, &[w, w * x, w * y, w * z, w * (x * x + y * y + z * z)]);
        }
        // Pattern segments: flat sectors by beam width, tables by table.
        let seg_lo = self.segs.len() as u32;
        let mut kinds: Vec<(u32, bool)> = Vec::new(); // (beam cosine bits or table, is a table)
        for &k in &members {
            let n = &e.nodes[k as usize];
            let key = match n.lut {
                None if self.w_beam[k as usize] > 0.0 => (n.cc.to_bits(), false),
                None => continue,
                Some(t) => (t as u32, true),
            };
            if !kinds.contains(&key) {
                kinds.push(key);
            }
        }
        for (key, is_table) in kinds {
            let mut list: Vec<(f64, u32)> = members
                .iter()
                .filter(|&&k| {
                    let n = &e.nodes[k as usize];
                    match n.lut {
                        None => !is_table && n.cc.to_bits() == key && self.w_beam[k as usize] > 0.0,
                        Some(t) => is_table && t as u32 == key,
                    }
                })
                .map(|&k| (azimuth(&e.nodes[k as usize]), k))
                .collect();
            list.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
            let kind = if is_table {
                SegKind::Table { lut: key as usize, half: half_table[key as usize] }
            } else {
                // cc = cos(h/2)·|cos(h/2)|: the half-width back from it.
                let cc = f32::from_bits(key) as f64;
                let c = cc.signum() * cc.abs().sqrt();
                SegKind::Flat { half: c.clamp(-1.0, 1.0).acos() }
            };
            let slo = self.sorted.len() as u32;
            let plo = self.prefix.len() as u32;
            let mut acc = [0.0; 5];
            self.prefix.push(acc);
            for &(_, k) in &list {
                if !is_table {
                    let (x, y, z) = pos(k);
                    let w = self.w_beam[k as usize];
                    add(&mut acc, &[w, w * x, w * y, w * z, w * (x * x + y * y + z * z)]);
                }
                self.prefix.push(acc);
            }
            self.sorted.extend(list);
            self.segs.push(Seg { kind, lo: slo, hi: self.sorted.len() as u32, plo });
        }
        let seg_hi = self.segs.len() as u32;
        self.nodes[at] =
            TNode { cx: c.0, cy: c.1, rho, rho3, zc, side, pmax, lo, hi, child: 0, nchild: 0, seg_lo, seg_hi };
        if members.len() <= LEAF || depth >= 40 {
            return;
        }
        // Four quadrants, members reordered in place.
        let q = |k: u32| {
            let n = &e.nodes[k as usize];
            (if n.x as f64 >= c.0 { 1 } else { 0 }) + (if n.y as f64 >= c.1 { 2 } else { 0 })
        };
        let mut sorted = members.clone();
        sorted.sort_by_key(|&k| q(k));
        self.perm[lo as usize..hi as usize].copy_from_slice(&sorted);
        let first = self.nodes.len() as u32;
        let mut ranges = Vec::new();
        let mut s = lo;
        for quad in 0..4 {
            let cnt = sorted.iter().filter(|&&k| q(k) == quad).count() as u32;
            if cnt > 0 {
                ranges.push((quad, s, s + cnt));
            }
            s += cnt;
        }
        self.nodes[at].child = first;
        self.nodes[at].nchild = ranges.len() as u32;
        for _ in &ranges {
            self.nodes.push(TNode::empty());
        }
        let h2 = half / 2.0;
        for (i, (quad, a, b)) in ranges.into_iter().enumerate() {
            let cc = (c.0 + if quad & 1 == 1 { h2 } else { -h2 }, c.1 + if quad & 2 == 2 { h2 } else { -h2 });
            self.split(e, first as usize + i, a, b, cc, h2, depth + 1, half_table);
        }
    }

    /// Index ranges of `sorted[seg]` with azimuth in the circular window [a, b] (b − a < 2π).
    fn window(&self, s: &Seg, a: f64, b: f64) -> [(usize, usize); 2] {
        let v = &self.sorted[s.lo as usize..s.hi as usize];
        let n = v.len();
        if b - a >= TAU {
            return [(0, n), (0, 0)];
        }
        let width = (b - a).max(0.0);
        let a = a.rem_euclid(TAU);
        let b = a + width;
        let first = |x: f64| v.partition_point(|e| e.0 < x);
        let after = |x: f64| v.partition_point(|e| e.0 <= x);
        if b < TAU { [(first(a), after(b)), (0, 0)] } else { [(first(a), n), (0, after(b - TAU))] }
    }
}

impl TNode {
    fn empty() -> TNode {
        TNode {
            cx: 0.0,
            cy: 0.0,
            rho: 0.0,
            rho3: 0.0,
            zc: 0.0,
            side: [0.0; 5],
            pmax: 0.0,
            lo: 0,
            hi: 0,
            child: 0,
            nchild: 0,
            seg_lo: 0,
            seg_hi: 0,
        }
    }
}

/// What a block computes: exact nodes (whole), increments (beam parts, as kernel nodes),
/// groups (isotropic kernel nodes), the summed bound (mW, before the receiver's gain) and the
/// strongest single far member's bound.
#[derive(Default)]
struct Lists {
    exact: Vec<u32>,
    inc: Vec<NodeK>,
    groups: Vec<NodeK>,
    bound: f64,
    far_best: f64,
    /// Clusters taken whole.
    taken: usize,
}

struct BlockGeo {
    cx: f64,
    cy: f64,
    rho: f64,
}

impl Engine<'_> {
    /// Runs the far-field engine over the rows `span` with tolerance `tol_db` (see the module
    /// documentation). Blocks are aligned to the whole grid, so a tile's cells have the same
    /// bits as in a run over the whole grid.
    pub fn run_far_field(&self, layers: LayerSet, span: std::ops::Range<usize>, tol_db: f64) -> Layers {
        let pl = &self.sc.pathloss;
        let d2min = (pl.min_distance_m() * pl.min_distance_m()) as f32;
        let n = pl.exponent();
        let absorbing = self.nodes.iter().any(|k| k.beta_log2e != 0.0);
        use crate::engine::kernels::{Cube, Fast, Quart, Sq};
        if !absorbing && n == 2.0 {
            self.far_with(Sq(d2min), layers, span, tol_db)
        } else if !absorbing && n == 3.0 {
            self.far_with(Cube(d2min), layers, span, tol_db)
        } else if !absorbing && n == 4.0 {
            self.far_with(Quart(d2min), layers, span, tol_db)
        } else {
            self.far_with(Fast { d2min, half_n: (n / 2.0) as f32, beta_log2e: 0.0 }, layers, span, tol_db)
        }
    }

    fn far_with<D: Decay>(&self, d: D, l: LayerSet, span: std::ops::Range<usize>, tol_db: f64) -> Layers {
        let tree = FarTree::build(self);
        let pl = &self.sc.pathloss;
        let law = Law { n: pl.exponent(), beta: pl.beta_per_m(), dmin: pl.min_distance_m() };
        let eps = 1.0 - 10f64.powf(-(tol_db - FLOAT32_DB).max(1e-6) / 10.0);
        let g = &self.sc.grid;
        let cols = g.cols();
        let rows = span.len();
        let alloc = |on: bool| on.then(|| vec![0f32; rows * cols]);
        let (mut total, mut interference, mut sinr, mut server) =
            (alloc(l.total), alloc(l.interference), alloc(l.sinr), alloc(l.server));
        // Block rows of the whole grid that meet the span; each fills its rows of the span.
        let b0 = span.start / BLOCK;
        let b1 = span.end.div_ceil(BLOCK);
        let row_range = |br: usize| (br * BLOCK).max(span.start)..((br + 1) * BLOCK).min(span.end).min(g.rows());
        fn split<'a>(v: &'a mut Option<Vec<f32>>, sizes: &[usize]) -> Vec<Option<&'a mut [f32]>> {
            match v {
                None => sizes.iter().map(|_| None).collect(),
                Some(v) => {
                    let mut rest: &mut [f32] = v;
                    sizes
                        .iter()
                        .map(|&s| {
                            let (a, b) = std::mem::take(&mut rest).split_at_mut(s);
                            rest = b;
                            Some(a)
                        })
                        .collect()
                }
            }
        }
        let sizes: Vec<usize> = (b0..b1).map(|br| row_range(br).len() * cols).collect();
        let work: Vec<_> = split(&mut total, &sizes)
            .into_iter()
            .zip(split(&mut interference, &sizes))
            .zip(split(&mut sinr, &sizes))
            .zip(split(&mut server, &sizes))
            .enumerate()
            .map(|(i, (((t, it), s), v))| (b0 + i, [t, it, s, v]))
            .collect();
        let bar = crate::progress::bar("far-field map", work.len() as u64, "block rows");
        let res: Vec<(u64, f64)> = work
            .into_par_iter()
            .map(|(br, mut out)| {
                let rr = row_range(br);
                let (mut pairs, mut worst) = (0u64, 0f64);
                let mut bufs = RowBufs::new(BLOCK * BLOCK);
                for bc in 0..cols.div_ceil(BLOCK) {
                    let cr = bc * BLOCK..((bc + 1) * BLOCK).min(cols);
                    let (p, w) =
                        far_block(self, d, &tree, law, eps, l, (br * BLOCK, cr.clone()), &rr, &mut out, &mut bufs);
                    pairs += p;
                    worst = worst.max(w);
                }
                bar.inc(1);
                (pairs, worst)
            })
            .collect();
        bar.finish_and_clear();
        let worst = res.iter().map(|r| r.1).fold(0.0, f64::max);
        Layers {
            total,
            interference,
            sinr,
            server,
            pair_evaluations: res.iter().map(|r| r.0).sum(),
            far_field_bound_db: Some(worst + FLOAT32_DB),
            ..Layers::default()
        }
    }

    /// The lists of one block for a forced-exact radius `near` (m).
    fn far_lists(&self, tree: &FarTree, law: Law, eps: f64, b: &BlockGeo, near: f64) -> Lists {
        let mut out = Lists::default();
        if tree.nodes.is_empty() {
            return out;
        }
        let beta_log2e = self.nodes.first().map_or(0.0, |n| n.beta_log2e);
        // A group of moments `m` in cluster `t` as one isotropic node: (node, bound on its
        // error over the block, its smallest value over the block). With `unsure` the
        // members' beams may or may not reach a cell: the node is half their sum, and the
        // bound covers anything from none to all of it.
        let group = |m: &Moments, t: &TNode, unsure: bool| -> Option<(Option<NodeK>, f64, f64)> {
            let w = m[0];
            if w <= 0.0 {
                return Some((None, 0.0, 0.0));
            }
            let (gx, gy, gz) = (m[1] / w, m[2] / w, m[3] / w);
            let s = (m[4] - (m[1] * m[1] + m[2] * m[2] + m[3] * m[3]) / w).max(0.0);
            let rho_g = t.rho3 + (gx * gx + gy * gy + (gz - t.zc) * (gz - t.zc)).sqrt();
            let (px, py) = (t.cx + gx, t.cy + gy);
            let dg = (b.cx - px).hypot(b.cy - py);
            let rmin = dg - b.rho - rho_g;
            if rmin <= law.dmin {
                return None;
            }
            let rmax = ((dg + b.rho) * (dg + b.rho) + gz * gz).sqrt();
            let taylor = 0.5 * s * law.f2(rmin);
            let (weight, bound, least) = if unsure {
                (0.5 * w, w * law.f(rmin) - 0.5 * w * law.f(rmax) + 0.5 * taylor, 0.0)
            } else {
                if taylor > eps * w * law.f(rmax) {
                    return None;
                }
                (w, taylor, w * law.f(rmax))
            };
            let k = NodeK {
                x: px as f32,
                y: py as f32,
                dz2: (gz * gz) as f32,
                bx: 0.0,
                by: 1.0,
                cc: -1.0,
                p_main: weight as f32,
                p_side: weight as f32,
                act: 1.0,
                lut: None,
                dish: None,
                idx: u32::MAX,
                beta_log2e,
                p_max: 0.0,
            };
            Some((Some(k), bound, least))
        };
        let mut stack = vec![0usize];
        while let Some(ti) = stack.pop() {
            let t = &tree.nodes[ti];
            let dist = (b.cx - t.cx).hypot(b.cy - t.cy);
            let r = t.rho + b.rho;
            let take = dist - r > near.max(law.dmin) && self.far_take(tree, eps, t, b, dist, r, &group, &mut out);
            if take {
                out.taken += 1;
                out.far_best = out.far_best.max(t.pmax * law.f(dist - r));
                continue;
            }
            if t.nchild == 0 {
                out.exact.extend(&tree.perm[t.lo as usize..t.hi as usize]);
            } else {
                // Children pushed last first, so they are visited in order.
                for c in (t.child..t.child + t.nchild).rev() {
                    stack.push(c as usize);
                }
            }
        }
        out.exact.sort_unstable();
        out
    }

    /// Takes cluster `t` whole into `out` when every group passes; false (and `out`
    /// untouched) otherwise.
    #[allow(clippy::too_many_arguments)]
    fn far_take(
        &self,
        tree: &FarTree,
        eps: f64,
        t: &TNode,
        b: &BlockGeo,
        dist: f64,
        r: f64,
        group: &dyn Fn(&Moments, &TNode, bool) -> Option<(Option<NodeK>, f64, f64)>,
        out: &mut Lists,
    ) -> bool {
        let Some((side, mut bound, mut least)) = group(&t.side, t, false) else { return false };
        let theta = {
            let a = (b.cx - t.cx).atan2(b.cy - t.cy);
            if a < 0.0 { a + TAU } else { a }
        };
        let alpha = (r / dist).min(1.0).asin() + ANGLE_MARGIN;
        let mut groups: Vec<NodeK> = side.into_iter().collect();
        // Flat beams whose edge may cross the block: (segment, index window) each, decided
        // together at the end (one bounded group, or exact).
        let mut unsure: Vec<(Seg, (usize, usize))> = Vec::new();
        let mut inc: Vec<NodeK> = Vec::new();
        let push_inc = |s: &Seg, (a, z): (usize, usize), inc: &mut Vec<NodeK>| {
            for &(_, k) in &tree.sorted[s.lo as usize + a..s.lo as usize + z] {
                let mut n = self.nodes[k as usize];
                match s.kind {
                    SegKind::Flat { .. } => {
                        n.p_main -= n.p_side;
                        n.p_side = 0.0;
                    }
                    SegKind::Table { lut, .. } => {
                        n.lut = Some(self.luts.len() + lut);
                        n.dish = None;
                    }
                }
                inc.push(n);
            }
        };
        let moments = |s: &Seg, (a, z): (usize, usize), m: &mut Moments| {
            if z > a {
                let (p0, p1) = (&tree.prefix[s.plo as usize + a], &tree.prefix[s.plo as usize + z]);
                for j in 0..5 {
                    m[j] += p1[j] - p0[j];
                }
            }
        };
        for s in &tree.segs[t.seg_lo as usize..t.seg_hi as usize] {
            match s.kind {
                SegKind::Table { half, .. } => {
                    for w in tree.window(s, theta - half - alpha, theta + half + alpha) {
                        push_inc(s, w, &mut inc);
                    }
                }
                SegKind::Flat { half } => {
                    if half + alpha >= PI {
                        unsure.extend(tree.window(s, 0.0, TAU).map(|w| (*s, w)));
                    } else if half > alpha {
                        // Surely inside: one group from the prefix sums.
                        let mut m = [0.0; 5];
                        for w in tree.window(s, theta - half + alpha, theta + half - alpha) {
                            moments(s, w, &mut m);
                        }
                        let Some((g, bd, lst)) = group(&m, t, false) else { return false };
                        bound += bd;
                        least += lst;
                        groups.extend(g);
                        unsure.extend(tree.window(s, theta - half - alpha, theta - half + alpha).map(|w| (*s, w)));
                        unsure.extend(tree.window(s, theta + half - alpha, theta + half + alpha).map(|w| (*s, w)));
                    } else {
                        unsure.extend(tree.window(s, theta - half - alpha, theta + half + alpha).map(|w| (*s, w)));
                    }
                }
            }
        }
        // The unsure beams as one bounded group when the cluster's whole bound stays within
        // ε of its least value; otherwise each exactly.
        let mut m = [0.0; 5];
        for (s, w) in &unsure {
            moments(s, *w, &mut m);
        }
        match group(&m, t, true) {
            Some((g, bd, _)) if bound + bd <= eps * least => {
                bound += bd;
                groups.extend(g);
            }
            _ => {
                for (s, w) in &unsure {
                    push_inc(s, *w, &mut inc);
                }
            }
        }
        out.groups.extend(groups);
        out.inc.extend(inc);
        out.bound += bound;
        true
    }
}

multiversion!(fn far_block<D: Decay>(e: &Engine<'_>, d: D, tree: &FarTree, law: Law, eps: f64, l: LayerSet, at: (usize, std::ops::Range<usize>), span: &std::ops::Range<usize>, out: &mut [Option<&mut [f32]>; 4], b: &mut RowBufs) -> (u64, f64) => far_block_body);

/// One block: rows `at.0 .. at.0 + BLOCK` (those in `span` written) × columns `at.1`.
/// Returns (pair evaluations, the worst cell's bound in dB without the float32 allowance).
#[allow(clippy::too_many_arguments)]
#[inline(always)]
fn far_block_body<D: Decay>(
    e: &Engine<'_>,
    d: D,
    tree: &FarTree,
    law: Law,
    eps: f64,
    l: LayerSet,
    at: (usize, std::ops::Range<usize>),
    span: &std::ops::Range<usize>,
    out: &mut [Option<&mut [f32]>; 4],
    b: &mut RowBufs,
) -> (u64, f64) {
    let g = &e.sc.grid;
    let cols = g.cols();
    let (r0, cr) = at;
    let r1 = (r0 + BLOCK).min(g.rows());
    let bw = cr.len();
    let nc = (r1 - r0) * bw;
    for v in [&mut b.xs, &mut b.ys, &mut b.best, &mut b.bestw, &mut b.other] {
        v.resize(nc, 0.0);
    }
    b.server.resize(nc, u32::MAX);
    let (mut x0, mut x1, mut y0, mut y1) = (f64::MAX, f64::MIN, f64::MAX, f64::MIN);
    for r in r0..r1 {
        let (sl, cl) = g.lat_of_row(r).to_radians().sin_cos();
        for (j, c) in cr.clone().enumerate() {
            let (x, y) = e.sc.frame.from_trig(sl, cl, e.sin_dlon[c], e.cos_dlon[c]);
            let i = (r - r0) * bw + j;
            b.xs[i] = x as f32;
            b.ys[i] = y as f32;
            x0 = x0.min(x);
            x1 = x1.max(x);
            y0 = y0.min(y);
            y1 = y1.max(y);
        }
    }
    let (cx, cy) = ((x0 + x1) / 2.0, (y0 + y1) / 2.0);
    let mut rho = 0f64;
    for i in 0..nc {
        rho = rho.max((b.xs[i] as f64 - cx).hypot(b.ys[i] as f64 - cy));
    }
    // The f32 cell positions differ from the f64 ones by far less than this.
    let geo = BlockGeo { cx, cy, rho: rho + 0.01 };
    let full = l.needs_server();
    let mut near = 0.0;
    let mut pairs = 0u64;
    let lists = loop {
        let lists = e.far_lists(tree, law, eps, &geo, near);
        b.best.fill(0.0);
        b.bestw.fill(0.0);
        b.other.fill(0.0);
        b.server.fill(u32::MAX);
        let a = Unobstructed;
        for &k in &lists.exact {
            let n = &e.nodes[k as usize];
            match n.lut {
                None => pass_full(d.for_node(n), Flat, a, n, b),
                Some(t) => pass_full(d.for_node(n), Table(&e.luts[t]), a, n, b),
            }
        }
        pairs += (nc * lists.exact.len()) as u64;
        // The server stays exact: when a far member could beat a cell's best, redo the
        // block with a larger exact radius.
        let unsure = full && b.best.iter().any(|&v| (v as f64) <= lists.far_best * (1.0 + 1e-5));
        if unsure && lists.taken > 0 {
            near = if near == 0.0 { 4.0 * geo.rho + 1.0 } else { 2.0 * near };
            continue;
        }
        break lists;
    };
    let (xs, ys) = (&b.xs[..nc], &b.ys[..nc]);
    for n in &lists.inc {
        match n.lut {
            None => pass_sum(d.for_node(n), Flat, Unobstructed, n, xs, ys, &mut b.other),
            Some(t) => {
                pass_sum(d.for_node(n), Table(&tree.inc_luts[t - e.luts.len()]), Unobstructed, n, xs, ys, &mut b.other)
            }
        }
    }
    for n in &lists.groups {
        pass_sum(d.for_node(n), Flat, Unobstructed, n, xs, ys, &mut b.other);
    }
    pairs += (nc * (lists.inc.len() + lists.groups.len())) as u64;
    let db = |v: f32| if v > 0.0 { 10.0 * v.log10() } else { NODATA };
    let noise = e.noise_mw as f32;
    let sm = e.shadow_mean;
    // The bound in dB falls as the value it is relative to grows: only the block's smallest
    // value of each written layer (linear, before the receiver's gain) is needed.
    let nv = (noise / (e.g_omni * sm)) as f64;
    let mut least = f64::INFINITY;
    for r in r0.max(span.start)..r1.min(span.end) {
        for (j, c) in cr.clone().enumerate() {
            let i = (r - r0) * bw + j;
            let o = (r - span.start.max(r0)) * cols + c;
            let all = b.other[i] + b.bestw[i];
            let interf = e.g_omni * b.other[i];
            if let Some(t) = out[0].as_deref_mut() {
                t[o] = db(sm * (e.g_omni * all));
                least = least.min(all as f64);
            }
            if let Some(it) = out[1].as_deref_mut() {
                it[o] = db(sm * interf);
                least = least.min(b.other[i] as f64);
            }
            let best = b.best[i];
            if let Some(s) = out[2].as_deref_mut() {
                s[o] = if best > 0.0 { db(e.g_signal * best * sm / (interf * sm + noise)) } else { NODATA };
                least = least.min(b.other[i] as f64 + nv);
            }
            if let Some(v) = out[3].as_deref_mut() {
                v[o] = if b.server[i] == u32::MAX { NODATA } else { b.server[i] as f32 };
            }
        }
    }
    let bound = lists.bound;
    let worst = if bound <= 0.0 {
        0.0
    } else if bound >= least {
        f64::INFINITY
    } else {
        -10.0 * (1.0 - bound / least).log10()
    };
    (pairs, worst)
}
