//! The per-cell engine: aggregate received power, best server, interference, SINR and
//! coverage probability on every grid cell.
//!
//! Layout for the vectoriser: rows are processed in parallel (rayon); within a row the loop
//! runs node-outer, cell-inner over structure-of-arrays buffers, so every cell is an
//! independent lane. The main-lobe test uses dot products (no trigonometry in the pair
//! loop); the distance law is specialised for exponents 2, 3 and 4, and any other exponent or
//! absorption uses vectorisable log2/exp2 approximations. The row kernel is compiled for
//! several instruction sets and chosen at run time (`math::simd`). The order of summation
//! is fixed (node index order), so results are bit-identical for any thread count.
//!
//! # Definitions (per cell, receiver at `[receiver] height_m`)
//! - p_i: mean power received from node i with a 0 dBi receiver, mW.
//! - `total` = G_omni · Σ a_i p_i (what any new receiver there would pick up), dBm.
//! - best server s = argmax p_i; S = G_rx,main · p_s.
//! - `interference` = Σ_{i≠s} a_i p_i G_rx(i), with G_rx omni or aimed at s, dBm.
//! - `sinr` = S / (I + N), dB; `server` = s (index in layout order).
//! - With log-normal shadowing of σ dB every mean power is E\[10^(X/10)\] = exp((σ ln10/10)²/2)
//!   times the unshadowed one; the best server (an argmax) does not change.

use crate::engine::kernels::{
    CoChannel, Coupled, Cube, Decay, Fast, NodeK, Obstructed, Quart, RowBufs, Sq, Unobstructed,
};
use crate::engine::row::{RowJob, row};
use crate::engine::sweep::{Scratch, SweepNode, SweepSpec, sweep};
use crate::model::scenario::Scenario;
use crate::model::units::lin_to_db;
use rayon::prelude::*;
use rstar::{RTree, primitives::GeomWithData};

mod availability;
mod farfield;
pub(crate) mod kernels;
mod prepare;
mod row;
mod sweep;

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
    /// Coverage probability P\[SINR ≥ T\] with fading.
    pub coverage: bool,
    /// Number of transmitting nodes in line of sight (needs a surface).
    pub visible: bool,
    /// Availability in rain of a terminal served by its best server (needs `[rain]`).
    pub availability: bool,
    /// The best server's channel (index in the scenario's channel list).
    pub channel: bool,
}

impl LayerSet {
    /// No layer (the base the others are written from).
    pub const NONE: LayerSet = LayerSet {
        total: false,
        interference: false,
        sinr: false,
        server: false,
        coverage: false,
        visible: false,
        availability: false,
        channel: false,
    };
    /// Every layer but `visible`, `availability` and `channel` (which need a surface, `[rain]`
    /// and `[channels]`).
    pub const ALL: LayerSet =
        LayerSet { total: true, interference: true, sinr: true, server: true, coverage: true, ..Self::NONE };
    /// Only `total`.
    pub const TOTAL: LayerSet = LayerSet { total: true, ..Self::NONE };

    /// Parses a comma-separated list such as `total,sinr`.
    pub fn parse(s: &str) -> Result<LayerSet, String> {
        let mut l = Self::NONE;
        for name in s.split(',').map(str::trim).filter(|x| !x.is_empty()) {
            match name {
                "total" => l.total = true,
                "interference" => l.interference = true,
                "sinr" => l.sinr = true,
                "server" => l.server = true,
                "coverage" => l.coverage = true,
                "visible" => l.visible = true,
                "availability" => l.availability = true,
                "channel" => l.channel = true,
                other => {
                    return Err(format!("unknown layer `{other}`; allowed: {}", Self::NAMES));
                }
            }
        }
        if l.count() == 0 {
            return Err(format!("no layer named; allowed: {}", Self::NAMES));
        }
        Ok(l)
    }

    /// Every layer name `parse` accepts.
    pub const NAMES: &'static str = "total, interference, sinr, server, coverage, visible, availability, channel";

    /// Number of layers selected.
    pub fn count(&self) -> usize {
        [
            self.total,
            self.interference,
            self.sinr,
            self.server,
            self.coverage,
            self.visible,
            self.availability,
            self.channel,
        ]
        .iter()
        .filter(|b| **b)
        .count()
    }

    fn needs_server(&self) -> bool {
        self.interference || self.sinr || self.server || self.coverage || self.availability || self.channel
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

/// Computed layers (row-major, north row first), in dBm / dB / index, [`crate::NODATA`] where
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
    /// `visible`, transmitting nodes in line of sight.
    pub visible: Option<Vec<f32>>,
    /// `availability`, percent of an average year.
    pub availability: Option<Vec<f32>>,
    /// `channel`, the best server's channel index.
    pub channel: Option<Vec<f32>>,
    /// Node-cell pair evaluations performed.
    pub pair_evaluations: u64,
    /// With a cutoff: the worst cell's upper bound on the dropped power, dB relative to noise.
    pub neglected_db: Option<f64>,
    /// With far-field aggregation: the worst cell's bound on the error of any layer, dB.
    pub far_field_bound_db: Option<f64>,
}

/// Prepared nodes and model, ready to run over the grid.
pub struct Engine<'s> {
    pub(crate) sc: &'s Scenario,
    pub(crate) nodes: Vec<NodeK>,
    /// Indices of the nodes that transmit (activity above 0).
    pub(crate) active: Vec<usize>,
    pub(crate) luts: Vec<Vec<f32>>,
    pub(crate) tree: RTree<GeomWithData<[f64; 2], usize>>,
    pub(crate) sin_dlon: Vec<f64>,
    pub(crate) cos_dlon: Vec<f64>,
    pub(crate) noise_mw: f64,
    pub(crate) g_omni: f32,
    pub(crate) rx_aim: Option<(f32, f32, f32)>,
    pub(crate) g_signal: f32,
    /// Mean of the log-normal shadowing gain, E[10^(X/10)] (1 without shadowing): the mean
    /// layers are means of the shadowed powers.
    pub(crate) shadow_mean: f32,
    pub(crate) cov: crate::model::coverage::CoverageModel,
    /// With a surface: what the sweep and the obstructed kernels need.
    pub(crate) obs: Option<ObsPrep>,
    /// With `[rain]`: what the availability layer needs.
    pub(crate) rain: Option<crate::engine::availability::RainK>,
    /// Per node: noise on its channel, mW.
    pub(crate) noise_of: Vec<f32>,
    /// Per node: its channel.
    pub(crate) chan: Vec<u32>,
    /// Per channel: the coverage model (its noise).
    pub(crate) cov_of: Vec<crate::model::coverage::CoverageModel>,
    /// With nodes on several channels or polarisations: the coupling tables.
    pub(crate) coupling: Option<CouplingPrep>,
}

/// The coupling between the (channel, polarisation) classes of the nodes.
pub(crate) struct CouplingPrep {
    /// Each node's class.
    pub(crate) class: Vec<u32>,
    /// `table[interferer_class * classes + receiver_class]`.
    pub(crate) table: Vec<f32>,
    /// Number of classes.
    pub(crate) classes: usize,
}

impl CouplingPrep {
    fn kernel(&self) -> Coupled<'_> {
        Coupled { class: &self.class, table: &self.table, classes: self.classes }
    }
}

/// The surface prepared for the map: each node's lattice position and antenna altitude.
pub(crate) struct ObsPrep {
    pub(crate) nodes: Vec<SweepNode>,
    pub(crate) wavelength_m: f32,
}

/// Memory for one band of sweep factors (4 bytes a node a cell), bytes: the map is computed
/// in bands of rows that fit.
pub const SWEEP_BAND_BYTES: usize = 256 << 20;

/// Rows per band over a surface for a grid of `rows` × `cols` cells and `nodes` nodes.
pub fn band_rows(rows: usize, cols: usize, nodes: usize) -> usize {
    (SWEEP_BAND_BYTES / (4 * cols * nodes.max(1))).clamp(1, rows)
}

impl Engine<'_> {
    /// The map's obstruction of node `node` on every grid cell (row-major): loss in dB and
    /// whether the cell is in line of sight, as the map's sweep computes them; `None` without
    /// a surface. For checks against the exact profile ([`crate::model::surface::Surface::obstruction`]).
    pub fn sweep_obstruction(&self, node: usize) -> Option<Vec<(f32, bool)>> {
        let (o, surf) = (self.obs.as_ref()?, self.sc.surface()?);
        let g = &self.sc.grid;
        let (rows, cols) = (g.rows(), g.cols());
        let zr = surf.receiver_alts(0..rows, cols, self.sc.receiver.height_m as f32);
        let spec = SweepSpec { surface: surf, wavelength_m: o.wavelength_m, band: (0, rows), map_cols: cols, zr: &zr };
        let mut out = vec![0f32; rows * cols];
        sweep(&spec, &o.nodes[node], &mut out, &mut Scratch::default());
        Some(out.into_iter().map(|f| (-10.0 * f.abs().log10(), f > 0.0)).collect())
    }

    /// How the coverage layer is computed.
    pub fn coverage_method(&self) -> crate::model::coverage::Method {
        self.cov.method
    }

    /// Runs the engine over the whole grid.
    pub fn run(&self, opts: &Options) -> Layers {
        self.run_rows(opts, 0..self.sc.grid.rows())
    }

    /// Runs the engine over the grid rows `rows` only (a tile of the map): the layers hold
    /// those rows (row-major, `rows.len()` × columns), each cell's value the same bits as in
    /// a run over the whole grid. Over a surface every band of the whole run that meets the
    /// rows is swept whole, since a sweep's rays depend on its band.
    ///
    /// # Panics
    /// If `rows` is empty or reaches past the grid.
    pub fn run_rows(&self, opts: &Options, rows: std::ops::Range<usize>) -> Layers {
        assert!(rows.start < rows.end && rows.end <= self.sc.grid.rows(), "rows {rows:?} outside the grid");
        let pl = &self.sc.pathloss;
        let d2min = (pl.min_distance_m() * pl.min_distance_m()) as f32;
        let n = pl.exponent();
        // The special laws hold when no node's channel has absorption; the general one takes
        // each node's absorption (`Decay::for_node`).
        let absorbing = self.nodes.iter().any(|k| k.beta_log2e != 0.0);
        if !absorbing && n == 2.0 {
            self.run_with(Sq(d2min), opts, rows)
        } else if !absorbing && n == 3.0 {
            self.run_with(Cube(d2min), opts, rows)
        } else if !absorbing && n == 4.0 {
            self.run_with(Quart(d2min), opts, rows)
        } else {
            self.run_with(Fast { d2min, half_n: (n / 2.0) as f32, beta_log2e: 0.0 }, opts, rows)
        }
    }

    fn run_with<D: Decay>(&self, d: D, opts: &Options, span: std::ops::Range<usize>) -> Layers {
        let g = &self.sc.grid;
        let (grid_rows, cols) = (g.rows(), g.cols());
        let (r0, rows) = (span.start, span.len());
        let l = opts.layers;
        let alloc = |on: bool| on.then(|| vec![0f32; rows * cols]);
        let mut total = alloc(l.total);
        let mut interference = alloc(l.interference);
        let mut sinr = alloc(l.sinr);
        let mut server = alloc(l.server || l.channel);
        let mut coverage = alloc(l.coverage);
        let mut visible = alloc(l.visible && self.obs.is_some());
        let mut availability = alloc(l.availability && self.rain.is_some());
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
            .zip(chunks(&mut availability, cols, rows))
            .enumerate()
            .map(|(r, (((((t, i), s), v), cv), av))| (r0 + r, [t, i, s, v, cv, av]))
            .collect();
        let bar = if opts.progress && rows * cols * self.nodes.len() > 50_000_000 {
            crate::progress::styled("map", rows as u64, "rows")
        } else {
            indicatif::ProgressBar::hidden()
        };
        let mut per_row: Vec<(u64, f64)> = Vec::with_capacity(rows);
        match (&self.obs, self.sc.surface()) {
            (Some(o), Some(surf)) => {
                // Bands of the whole grid (a sweep depends on its band), computed where they
                // meet the rows asked for.
                let band = band_rows(grid_rows, cols, self.nodes.len());
                let mut fbuf = vec![0f32; self.nodes.len() * band * cols];
                let mut work = work.into_iter();
                let mut visible_rows = visible.as_deref_mut().map(|v| v.chunks_mut(cols));
                for b0 in (0..grid_rows).step_by(band).filter(|b0| *b0 + band > span.start && *b0 < span.end) {
                    let b1 = (b0 + band).min(grid_rows);
                    let stride = (b1 - b0) * cols;
                    let zr = surf.receiver_alts(b0..b1, cols, self.sc.receiver.height_m as f32);
                    let spec = SweepSpec {
                        surface: surf,
                        wavelength_m: o.wavelength_m,
                        band: (b0, b1),
                        map_cols: cols,
                        zr: &zr,
                    };
                    fbuf[..self.nodes.len() * stride].par_chunks_mut(stride).enumerate().for_each_init(
                        Scratch::default,
                        |scratch, (i, out)| {
                            if self.nodes[i].act > 0.0 {
                                sweep(&spec, &o.nodes[i], out, scratch);
                            } else {
                                out.fill(0.0);
                            }
                        },
                    );
                    let fb = &fbuf[..self.nodes.len() * stride];
                    // The band's rows inside the span.
                    let (s0, s1) = (b0.max(span.start), b1.min(span.end));
                    if let Some(vis) = visible_rows.as_mut() {
                        let band_vis: Vec<&mut [f32]> = vis.by_ref().take(s1 - s0).collect();
                        band_vis.into_par_iter().enumerate().for_each(|(i, vrow)| {
                            let rb = s0 + i - b0;
                            for &k in &self.active {
                                let f = &fb[k * stride + rb * cols..k * stride + (rb + 1) * cols];
                                for (v, x) in vrow.iter_mut().zip(f) {
                                    *v += if *x > 0.0 { 1.0 } else { 0.0 };
                                }
                            }
                        });
                    }
                    let band_work: Vec<_> = work.by_ref().take(s1 - s0).collect();
                    per_row.par_extend(band_work.into_par_iter().map_init(
                        || RowBufs::new(cols),
                        |bufs, (r, out)| {
                            let rb = r - b0;
                            let a = Obstructed {
                                f: &fb[rb * cols..],
                                stride,
                                zr: &zr[rb * cols..(rb + 1) * cols],
                                nodes: &o.nodes,
                            };
                            let job = RowJob { r, l, cutoff: opts.cutoff_m, out };
                            let res = match &self.coupling {
                                None => row(self, d, a, CoChannel, job, bufs),
                                Some(cp) => row(self, d, a, cp.kernel(), job, bufs),
                            };
                            bar.inc(1);
                            res
                        },
                    ));
                }
            }
            _ => per_row.par_extend(work.into_par_iter().map_init(
                || RowBufs::new(cols),
                |bufs, (r, out)| {
                    let job = RowJob { r, l, cutoff: opts.cutoff_m, out };
                    let out = match &self.coupling {
                        None => row(self, d, Unobstructed, CoChannel, job, bufs),
                        Some(cp) => row(self, d, Unobstructed, cp.kernel(), job, bufs),
                    };
                    bar.inc(1);
                    out
                },
            )),
        }
        bar.finish_and_clear();
        let pairs = per_row.iter().map(|x| x.0).sum();
        let neglected = opts.cutoff_m.map(|_| {
            let worst = per_row.iter().map(|x| x.1).fold(0.0, f64::max);
            if worst > 0.0 { lin_to_db(worst / self.noise_mw) } else { -300.0 }
        });
        // The channel layer reads the server layer (computed for it when not asked for).
        let channel = l.channel.then(|| {
            let srv = server.as_deref().unwrap_or_default();
            srv.iter().map(|&s| if s == crate::NODATA { s } else { self.chan[s as usize] as f32 }).collect()
        });
        if !l.server {
            server = None;
        }
        Layers {
            total,
            interference,
            sinr,
            server,
            channel,
            coverage,
            visible,
            availability,
            pair_evaluations: pairs,
            neglected_db: neglected,
            far_field_bound_db: None,
        }
    }
}
