//! The map's obstruction sweep: for one node, the knife-edge factor of every cell of a band
//! of map rows, in one pass over the surface lattice outward from the node's cell
//! (O(cells) per node, no profile per pair).
//!
//! # The approximation
//! Rays go from the node to every cell on the border of the region (the band, the map's
//! columns and the node), stepping one column (or row) at a time, so every cell is crossed
//! by some ray (the "R2" viewshed construction of Franklin and Ray, 1994; from memory). Along
//! a ray the horizon is the steepest elevation slope of the tops crossed so far (lowered by
//! the Earth's drop d²/(2ka)) and the distance of the point that makes it. Each cell takes
//! the verdict of the ray passing closest to its centre, evaluated at the ray's crossing (at
//! most half a cell from the centre): the receiver is in line of sight when its own slope is
//! above that horizon. The loss is the knife-edge loss J(ν) of the horizon's point: the
//! obstacle of steepest slope from the node stands in for the profile's largest-ν obstacle,
//! which differs when a lower obstacle near the receiver has the larger ν. A ray sees one
//! cell per column (or row) it crosses, so it can miss a corner it clips. Its error against the exact per-path f64 single-edge loss is measured in
//! `tests/physics.rs` (`map_obstruction_sweep_against_the_exact_profile`) and in
//! docs/obstruction-accuracy.md.
//!
//! Factors are written signed: positive for a cell in line of sight of the node, negative
//! out of it, so one buffer serves the power and the `visible` count.

use crate::math::fastmath::{fast_exp2, fast_log2};
use crate::math::simd::multiversion;
use crate::model::obstruction::EARTH_RADIUS_M;
use crate::model::surface::Surface;

/// A node for the sweep: lattice position (column, row, fractional) and antenna altitude.
#[derive(Debug, Clone, Copy)]
pub(crate) struct SweepNode {
    pub(crate) u: f64,
    pub(crate) v: f64,
    pub(crate) z: f32,
}

/// Lower than any slope: no obstacle yet.
const NONE: f32 = -1e30;

/// The sweep's constants.
pub(crate) struct SweepSpec<'a> {
    pub(crate) surface: &'a Surface,
    pub(crate) wavelength_m: f32,
    /// Map rows of the band, [lo, hi).
    pub(crate) band: (usize, usize),
    pub(crate) map_cols: usize,
    /// Receiver altitude per band cell (band rows × map columns), m.
    pub(crate) zr: &'a [f32],
}

/// One thread's scratch for [`sweep`], reused from node to node.
#[derive(Default)]
pub(crate) struct Scratch {
    best: Vec<u8>,
    st: Vec<[f32; 2]>,
}

/// Writes node `nd`'s signed factor for every cell of the band into `out` (band rows × map
/// columns).
pub(crate) fn sweep(sp: &SweepSpec<'_>, nd: &SweepNode, out: &mut [f32], scratch: &mut Scratch) {
    let s = sp.surface;
    let (rows, cols) = (s.rows, s.cols);
    let (u, v) = (nd.u as f32, nd.v as f32);
    let nr = (nd.v.floor().max(0.0) as usize).min(rows - 1);
    let nc = (nd.u.floor().max(0.0) as usize).min(cols - 1);
    let (br0, br1) = (sp.band.0 + s.r0, sp.band.1 + s.r0);
    let (mc0, mc1) = (s.c0, s.c0 + sp.map_cols);
    let (clo, chi) = (nc.min(mc0), nc.max(mc1 - 1));
    let (rlo, rhi) = (nr.min(br0), nr.max(br1 - 1));
    let cell = s.cell_m as f32;
    let inv_2ka = 1.0 / (2.0 * s.earth_k * EARTH_RADIUS_M) as f32;
    let top = &s.top[..];
    let z = nd.z;
    let n = out.len();
    // Per cell the closest ray's offset, quantised to a byte (1/510 cell; the first ray wins
    // a tie) so the array every visit reads stays in cache, and that ray's horizon (slope,
    // distance), written only when a closer ray arrives.
    let Scratch { best, st } = scratch;
    best.clear();
    best.resize(n, u8::MAX);
    st.clear();
    st.resize(n, [NONE, 0.0]);
    let map_cols = sp.map_cols;
    // One ray from the node toward the centre of cell (re, ce), one column (or row) a step.
    let mut cast = |re: usize, ce: usize| {
        let (dx, dy) = (ce as f32 + 0.5 - u, re as f32 + 0.5 - v);
        let len = (dx * dx + dy * dy).sqrt() * cell;
        let (mut h, mut hd) = (NONE, 0f32);
        // The ray steps along its major axis (columns when it runs closer to east-west, else
        // rows) one cell centre line at a time; `m` is its minor coordinate there.
        let cols_major = dx.abs() >= dy.abs();
        let (a0, dmaj, m0, dmin, mlo, mhi, steps) = if cols_major {
            (nc, dx, v, dy, rlo, rhi, ce.abs_diff(nc))
        } else {
            (nr, dy, u, dx, clo, chi, re.abs_diff(nr))
        };
        let sgn = if dmaj > 0.0 { 1isize } else { -1 };
        // t at the first centre line beyond the node's cell (positive, as the node lies inside
        // its cell) and its step; the minor coordinate and the distance follow t.
        let dt = 1.0 / dmaj.abs();
        let t0 = (a0 as f32 + 0.5 + sgn as f32 - if cols_major { u } else { v }) / dmaj;
        for k in 0..steps {
            let t = t0 + k as f32 * dt;
            let a = (a0 as isize + sgn * (k as isize + 1)) as usize;
            let m = m0 + t * dmin;
            let b = (m.max(mlo as f32) as usize).min(mhi);
            let (r, c) = if cols_major { (b, a) } else { (a, b) };
            let d = t * len;
            if r >= br0 && r < br1 && c >= mc0 && c < mc1 {
                let o = (r - br0) * map_cols + c - mc0;
                let q = ((m - (b as f32 + 0.5)).abs() * 510.0) as u8;
                if q < best[o] {
                    best[o] = q;
                    st[o] = [h, hd];
                }
            }
            let rise = top[r * cols + c] - d * d * inv_2ka - z;
            if rise > h * d {
                h = rise / d;
                hd = d;
            }
        }
    };
    // Rays to the region's border cells within the band's rows (the others never reach it),
    // in turn around the border so that consecutive rays share most of their cells in cache.
    if rlo >= br0 {
        (clo..=chi).for_each(|c| cast(rlo, c));
    }
    ((rlo + 1).max(br0)..rhi.min(br1)).for_each(|r| cast(r, chi));
    if rhi < br1 {
        (clo..=chi).rev().for_each(|c| cast(rhi, c));
    }
    ((rlo + 1).max(br0)..rhi.min(br1)).rev().for_each(|r| cast(r, clo));
    // The verdict of each band cell from its ray's horizon, at the cell's centre, a row at a
    // time in a vectorised loop.
    let vc =
        VerdictConsts { cap: s.cap_db as f32, lambda: sp.wavelength_m, cell, inv_2ka, z, x0: mc0 as f32 + 0.5 - u };
    for (k, ((orow, srow), zrow)) in
        out.chunks_mut(map_cols).zip(st.chunks(map_cols)).zip(sp.zr.chunks(map_cols)).enumerate()
    {
        let dy = (k + br0) as f32 + 0.5 - v;
        verdict_row(&vc, dy, srow, zrow, orow);
    }
}

/// The constants of [`verdict_row`].
struct VerdictConsts {
    cap: f32,
    lambda: f32,
    cell: f32,
    inv_2ka: f32,
    z: f32,
    /// The first map column's centre east of the node, cells.
    x0: f32,
}

multiversion!(fn verdict_row(vc: &VerdictConsts, dy: f32, st: &[[f32; 2]], zr: &[f32], out: &mut [f32]) -> () => verdict_row_body);

/// One band row's signed factors from each cell's horizon (slope, distance) `st`: every lane
/// computes every step and selects at the end (no branch, so the loop vectorises; the selected
/// values are the same IEEE operations as a branchy form).
#[inline(always)]
fn verdict_row_body(vc: &VerdictConsts, dy: f32, st: &[[f32; 2]], zr: &[f32], out: &mut [f32]) {
    let n = out.len().min(st.len()).min(zr.len());
    let (out, st, zr) = (&mut out[..n], &st[..n], &zr[..n]);
    for j in 0..n {
        let dx = vc.x0 + j as f32;
        let d = (dx * dx + dy * dy).sqrt() * vc.cell;
        let [h, hd] = st[j];
        let srx = (zr[j] - d * d * vc.inv_2ka - vc.z) / d;
        let los = srx > h;
        let nu = hd * (h - srx) * (2.0 * d / (vc.lambda * hd * (d - hd))).sqrt();
        let w = nu - 0.1;
        // 20 log10(x) = 20 log10(2) · log2(x); ITU-R P.526-16 eq. 31, 0 for ν ≤ −0.78.
        let knife = 6.9 + 6.020_6 * fast_log2((w * w + 1.0).sqrt() + w);
        let edge = hd > 0.0 && hd < d && nu > -0.78;
        let jl = if edge { knife.min(vc.cap) } else { 0.0 };
        // 10^(−J/10) = 2^(−J · log2(10)/10).
        let e = fast_exp2(-jl * 0.332_192_8);
        let f = if jl > 0.0 { e } else { 1.0 };
        let f = if los { f } else { -f };
        out[j] = if h <= NONE || d <= 0.0 { 1.0 } else { f };
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::frame::LocalFrame;
    use crate::model::obstruction::Edges;

    /// A flat lattice of `n` × `n` cells of 1 m at (0°, 0°) with the given tops.
    fn flat(n: usize, top: impl Fn(usize, usize) -> f32) -> Surface {
        let dlat = 1.0 / 110_574.0;
        let dlon = 1.0 / 111_320.0;
        let mut t = vec![0f32; n * n];
        for r in 0..n {
            for c in 0..n {
                t[r * n + c] = top(r, c);
            }
        }
        Surface {
            west: -(n as f64) / 2.0 * dlon,
            north: (n as f64) / 2.0 * dlat,
            dlon,
            dlat,
            cell_m: 1.0,
            rows: n,
            cols: n,
            r0: 0,
            c0: 0,
            ground: vec![0.0; n * n],
            top: t,
            building: vec![crate::model::surface::NO_BUILDING; n * n],
            buildings: Vec::new(),
            earth_k: 1e9,
            cap_db: 40.0,
            rooftop: false,
            files: Vec::new(),
            outlines: Vec::new(),
        }
    }

    /// On flat ground with three boxes, the sweep's line of sight differs from the exact
    /// profile's (quarter-cell samples, [`Surface::obstruction`]) only on shadow edges: every
    /// cell where they differ has a neighbour the exact profile puts on the other side.
    #[test]
    fn the_sweep_differs_from_the_exact_profile_only_on_shadow_edges() {
        let n = 61;
        let boxed = |r: usize, c: usize| {
            ((40..42).contains(&c) && (20..40).contains(&r))
                || ((10..14).contains(&c) && (44..47).contains(&r))
                || ((28..33).contains(&c) && (50..52).contains(&r))
        };
        let s = flat(n, |r, c| if boxed(r, c) { 3.0 } else { 0.0 });
        let frame = LocalFrame::new(0.0, 0.0);
        let (lon, lat) = (s.lon_of_col(25) + 0.3 * s.dlon, s.lat_of_row(22) - 0.2 * s.dlat);
        let (u, v) = s.position(lon, lat);
        let nd = SweepNode { u, v, z: 2.0 };
        let zr = vec![1.0f32; n * n];
        let sp = SweepSpec { surface: &s, wavelength_m: 0.005, band: (0, n), map_cols: n, zr: &zr };
        let mut out = vec![0f32; n * n];
        sweep(&sp, &nd, &mut out, &mut Scratch::default());
        let exact: Vec<bool> = (0..n * n)
            .map(|k| {
                let b = (s.lon_of_col(k % n), s.lat_of_row(k / n), 1.0);
                s.obstruction(&frame, (lon, lat, 2.0), b, 60.0, Edges::One).line_of_sight
            })
            .collect();
        let (mut differ, mut shadowed) = (0, 0);
        for r in 0..n {
            for c in 0..n {
                let k = r * n + c;
                shadowed += !exact[k] as usize;
                // A receiver inside a box is blocked by its own cell in the profile; the sweep
                // leaves a cell's own top out (receivers stand on roofs in practice).
                if (out[k] > 0.0) == exact[k] || boxed(r, c) {
                    continue;
                }
                differ += 1;
                let edge = (r.saturating_sub(1)..=(r + 1).min(n - 1))
                    .any(|rr| (c.saturating_sub(1)..=(c + 1).min(n - 1)).any(|cc| exact[rr * n + cc] != exact[k]));
                assert!(edge, "cell {r},{c} differs away from a shadow edge");
            }
        }
        assert!(shadowed > 500 && differ < shadowed / 5, "{differ} of {shadowed}");
    }
}
