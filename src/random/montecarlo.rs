//! Monte Carlo simulation of the aggregate interference of a [`Field`]: seeded, parallel,
//! and the same result for any thread count (realisations come in fixed chunks, each chunk
//! with its own generator seeded from the run seed and the chunk index).

use crate::math::fastmath::{fast_exp2, fast_log2};
use crate::math::simd::multiversion;
use crate::model::antenna::GainLaw;
use crate::random::field::Field;
use rand::{Rng, RngExt, SeedableRng};
use rand_distr::{Distribution, Poisson};
use rand_pcg::Pcg64Mcg;
use rayon::prelude::*;
use rstar::{RTree, primitives::GeomWithData};

const CHUNK: usize = 256;

/// SplitMix64 finaliser: decorrelates the seeds of neighbouring chunks.
fn mix(mut z: u64) -> u64 {
    z = z.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// Simulated aggregate powers (mW), one per realisation, in realisation order, and the
/// number of interferer draws made.
pub fn simulate(field: &Field, realizations: usize, seed: u64) -> (Vec<f64>, u64) {
    let chunks = realizations.div_ceil(CHUNK);
    let bar = crate::progress::bar("Monte Carlo", realizations as u64, "realisations");
    let per: Vec<(Vec<f64>, u64)> = (0..chunks)
        .into_par_iter()
        .map(|c| {
            let mut rng = Pcg64Mcg::seed_from_u64(mix(seed ^ mix(c as u64)));
            let n = CHUNK.min(realizations - c * CHUNK);
            let mut draws = 0u64;
            let mut buf = Buf::default();
            let v = (0..n)
                .map(|_| {
                    let (x, d) = if field.hard_core_m > 0.0 {
                        one_hard_core(field, &mut rng, &mut buf)
                    } else {
                        one_poisson(field, &mut rng, &mut buf)
                    };
                    draws += d;
                    x
                })
                .collect();
            bar.inc(n as u64);
            (v, draws)
        })
        .collect();
    bar.finish_and_clear();
    let draws = per.iter().map(|p| p.1).sum();
    (per.into_iter().flat_map(|p| p.0).collect(), draws)
}

/// Per-interferer constants for the inner loop.
struct Consts {
    log2_kinv: f32,
    half_alpha: f32,
    beta_log2e: f32,
    d2min: f32,
    power: f64,
}

/// Picks an antenna gain from a uniform u in [0, 1) by the gain law's levels.
trait Pick: Copy {
    fn pick(self, u: f32) -> f32;
}

/// Two levels (a sector): branch-free select.
#[derive(Clone, Copy)]
struct Two {
    q: f32,
    main: f32,
    side: f32,
}
impl Pick for Two {
    #[inline(always)]
    fn pick(self, u: f32) -> f32 {
        if u < self.q { self.main } else { self.side }
    }
}

/// Any number of levels: the first level whose cumulative probability exceeds u.
#[derive(Clone, Copy)]
struct Many<'a> {
    cum: &'a [f32],
    gain: &'a [f32],
}
impl Pick for Many<'_> {
    #[inline(always)]
    fn pick(self, u: f32) -> f32 {
        let last = self.gain.len() - 1;
        let mut g = self.gain[last];
        for i in (0..last).rev() {
            g = if u < self.cum[i] { self.gain[i] } else { g };
        }
        g
    }
}

/// A gain law in the form the loop picks from.
enum Picker {
    Two(Two),
    Many(Vec<f32>, Vec<f32>),
}

fn picker(law: &GainLaw) -> Picker {
    match law.levels() {
        [(q, main), (_, side)] => Picker::Two(Two { q: *q as f32, main: *main as f32, side: *side as f32 }),
        levels => {
            let mut acc = 0.0;
            let cum = levels
                .iter()
                .map(|(p, _)| {
                    acc += p;
                    acc as f32
                })
                .collect();
            Picker::Many(cum, levels.iter().map(|(_, g)| *g as f32).collect())
        }
    }
}

/// Σ P G_t G_r h ℓ over the buffers with the laws' pickers.
fn sum_all(c: &Consts, tx: &Picker, rx: &Picker, b: &Buf) -> f64 {
    match (tx, rx) {
        (Picker::Two(t), Picker::Two(r)) => sum_powers(c, *t, *r, b),
        (Picker::Two(t), Picker::Many(rc, rg)) => sum_powers(c, *t, Many { cum: rc, gain: rg }, b),
        (Picker::Many(tc, tg), Picker::Two(r)) => sum_powers(c, Many { cum: tc, gain: tg }, *r, b),
        (Picker::Many(tc, tg), Picker::Many(rc, rg)) => {
            sum_powers(c, Many { cum: tc, gain: tg }, Many { cum: rc, gain: rg }, b)
        }
    }
}

fn consts(f: &Field) -> Consts {
    let pl = &f.pathloss;
    Consts {
        log2_kinv: (-pl.loss_at_1m_db() / 10.0 * std::f64::consts::LOG2_10) as f32,
        half_alpha: (pl.exponent() / 2.0) as f32,
        beta_log2e: (pl.beta_per_m() * std::f64::consts::LOG2_E) as f32,
        d2min: (pl.min_distance_m() * pl.min_distance_m()) as f32,
        power: f.power_mw,
    }
}

/// Scratch buffers of one realisation.
#[derive(Default)]
struct Buf {
    r2: Vec<f32>,
    ut: Vec<f32>,
    ur: Vec<f32>,
    h: Vec<f32>,
}

impl Buf {
    fn resize(&mut self, n: usize) {
        self.r2.resize(n, 0.0);
        self.ut.resize(n, 0.0);
        self.ur.resize(n, 0.0);
        self.h.resize(n, 0.0);
    }
}

#[inline(always)]
fn one_power<T: Pick, R: Pick>(c: &Consts, t: T, r: R, r2: f32, ut: f32, ur: f32, h: f32) -> f32 {
    let d2 = r2.max(c.d2min);
    let gain = fast_exp2(c.log2_kinv - c.half_alpha * fast_log2(d2) - c.beta_log2e * d2.sqrt());
    let gt = t.pick(ut);
    let gr = r.pick(ur);
    gt * gr * gain * h
}

/// Σ P G_t G_r h ℓ over the buffers: branch-free blocks of eight the compiler vectorises,
/// summed in eight fixed float64 lanes plus the tail (the order never depends on threads or
/// on the instruction set chosen).
#[inline(always)]
fn sum_body<T: Pick, R: Pick>(c: &Consts, t: T, r: R, b: &Buf) -> f64 {
    let n = b.r2.len();
    let n8 = n / 8 * 8;
    let mut lanes = [0f64; 8];
    let blocks = b.r2[..n8]
        .chunks_exact(8)
        .zip(b.ut[..n8].chunks_exact(8))
        .zip(b.ur[..n8].chunks_exact(8))
        .zip(b.h[..n8].chunks_exact(8));
    for (((r2, ut), ur), h) in blocks {
        let mut p = [0f32; 8];
        for j in 0..8 {
            p[j] = one_power(c, t, r, r2[j], ut[j], ur[j], h[j]);
        }
        for j in 0..8 {
            lanes[j] += p[j] as f64;
        }
    }
    let mut tail = 0f64;
    for k in n8..n {
        tail += one_power(c, t, r, b.r2[k], b.ut[k], b.ur[k], b.h[k]) as f64;
    }
    c.power * (lanes.iter().sum::<f64>() + tail)
}

multiversion!(fn sum_powers<T: Pick, R: Pick>(c: &Consts, t: T, r: R, b: &Buf) -> f64 => sum_body);

fn one_poisson(f: &Field, rng: &mut Pcg64Mcg, buf: &mut Buf) -> (f64, u64) {
    let c = consts(f);
    let mean = f.density_per_m2 * f.keep * f.area_m2();
    let n = if mean > 0.0 { Poisson::new(mean).map(|p| p.sample(rng) as usize).unwrap_or(0) } else { 0 };
    let (a2, span) = ((f.guard_m * f.guard_m) as f32, (f.radius_m * f.radius_m - f.guard_m * f.guard_m) as f32);
    buf.resize(n);
    for k in 0..n {
        let u = rng.next_u64();
        // Three uniforms from one 64-bit draw: 24 bits for r², 20 bits for each gain.
        buf.r2[k] = a2 + span * ((u >> 40) as f32 * (1.0 / 16_777_216.0));
        buf.ut[k] = ((u >> 20) & 0xfffff) as f32 * (1.0 / 1_048_576.0);
        buf.ur[k] = (u & 0xfffff) as f32 * (1.0 / 1_048_576.0);
    }
    f.fading.fill_f32(rng, &mut buf.h);
    block(f, rng, buf);
    (sum_all(&c, &picker(&f.tx), &picker(&f.rx), buf), n as u64)
}

/// With blockage, each interferer is in line of sight with probability e^{−βr}; a blocked one
/// takes the blocked law, folded into its fading as the gain ratio ℓ_N(r)/ℓ_L(r) (so the
/// vectorised sum stays one law). The draws come after every other, so a field without
/// blockage keeps its random stream.
fn block(f: &Field, rng: &mut Pcg64Mcg, buf: &mut Buf) {
    let Some(b) = &f.blockage else { return };
    for k in 0..buf.r2.len() {
        let r = (buf.r2[k] as f64).sqrt();
        if rng.random::<f64>() >= (-b.beta_per_m * r).exp() {
            buf.h[k] *= (b.nlos.gain_lin(r) / f.pathloss.gain_lin(r)) as f32;
        }
    }
}

fn one_hard_core(f: &Field, rng: &mut Pcg64Mcg, buf: &mut Buf) -> (f64, u64) {
    let c = consts(f);
    // Parent Poisson points on the disc of radius R + h, so that every candidate in the
    // annulus sees all its competitors; uniform marks; Matérn II retention.
    let rp = f.radius_m + f.hard_core_m;
    let mean = f.density_per_m2 * f.keep * std::f64::consts::PI * rp * rp;
    let n = if mean > 0.0 { Poisson::new(mean).map(|p| p.sample(rng) as usize).unwrap_or(0) } else { 0 };
    let pts: Vec<([f64; 2], f64)> = (0..n)
        .map(|_| {
            let r = rp * rng.random::<f64>().sqrt();
            let t = rng.random::<f64>() * std::f64::consts::TAU;
            ([r * t.cos(), r * t.sin()], rng.random::<f64>())
        })
        .collect();
    let tree = RTree::bulk_load(pts.iter().enumerate().map(|(i, p)| GeomWithData::new(p.0, i)).collect());
    let h2 = f.hard_core_m * f.hard_core_m;
    let (a2, b2) = (f.guard_m * f.guard_m, f.radius_m * f.radius_m);
    let kept: Vec<f32> = pts
        .iter()
        .enumerate()
        .filter(|(i, (p, mark))| {
            let r2 = p[0] * p[0] + p[1] * p[1];
            r2 >= a2 && r2 <= b2 && !tree.locate_within_distance(*p, h2).any(|q| q.data != *i && pts[q.data].1 < *mark)
        })
        .map(|(_, (p, _))| (p[0] * p[0] + p[1] * p[1]) as f32)
        .collect();
    buf.resize(kept.len());
    buf.r2.copy_from_slice(&kept);
    for k in 0..kept.len() {
        buf.ut[k] = rng.random::<f32>();
        buf.ur[k] = rng.random::<f32>();
    }
    f.fading.fill_f32(rng, &mut buf.h);
    block(f, rng, buf);
    (sum_all(&c, &picker(&f.tx), &picker(&f.rx), buf), n as u64)
}
