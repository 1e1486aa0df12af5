//! Coverage without shadowing for a wanted signal that is not Rayleigh, exactly in the
//! interferers given (the engine passes the strongest ones and a gamma law for the rest).
//!
//! - Gamma (Nakagami) signal of integer shape m: P\[h₀ ≥ W\] = Σ_{k<m} (−s)^k/k! L_W^{(k)}(s) at
//!   s = m, with W = T(I + N)/S̄ and L_W its Laplace transform. The derivatives come from
//!   truncated power series: with δ = −sη every factor of L_W(s(1 − η)) has non-negative
//!   coefficients in η (its transform is completely monotone), so P = Σ_{k<m} \[η^k\] L_W is a
//!   sum of positive terms, free of cancellation.
//! - Rician signal: its power is a Poisson(K) mixture of Gamma(1 + j)/(K + 1) laws, so
//!   P = Σ_k P\[J ≥ k\] \[η^k\] L_W(s(1 − η)) at s = K + 1 (the series is cut where the Poisson
//!   tail falls below 1e−10).
//! - Non-integer shape m: Gamma(m) = Gamma(⌈m⌉)·Beta(m, ⌈m⌉ − m) (beta–gamma algebra), so P is
//!   the integer form at s = m/b averaged over b with 16-point Gauss–Legendre in
//!   t = (1 − b)^{⌈m⌉−m}, which removes the beta density's end singularity.
//! - No fading on the signal: P = P\[W ≤ 1\], by Euler inversion of L_W(s)/s
//!   (`math::laplace`); the atom of W when every interferer is off is taken out of
//!   the transform and added exactly. With unfaded interferers too, W takes finitely many
//!   values: their on/off states are enumerated.
//!
//! # References
//! - J. Abate and W. Whitt, ORSA J. Computing 7 (1995) 36–43 (Euler inversion).
//! - Beta–gamma algebra: e.g. L. Devroye, Non-Uniform Random Variate Generation, 1986, ch. IX.

use crate::model::fading::{Fading, FadingKind};
use num_complex::Complex64;

/// One interferer as the per-cell evaluators see it: activity and normalised mean power
/// c = T·p/S̄.
pub type Term = (f64, f64);

/// The gamma law (shape, scale) of the normalised residual interference, if any.
pub type Residual = Option<(f64, f64)>;

/// Coefficients in η of L_h(c s (1 − η)) for an interferer law, to `n` terms.
fn factor_series(law: Fading, cs: f64, n: usize, out: &mut [f64]) {
    match law.kind() {
        FadingKind::None => {
            // e^{−cs} e^{cs η}.
            out[0] = (-cs).exp();
            for k in 1..n {
                out[k] = out[k - 1] * cs / k as f64;
            }
        }
        FadingKind::Rayleigh => binomial_series(1.0, cs, n, out),
        FadingKind::Nakagami { m } => binomial_series(m, cs / m, n, out),
        FadingKind::Rician { k } => {
            // L(t) = (1+K)e^{−K} u exp(K(1+K) u), u = 1/(1+K+t), t = cs(1 − η):
            // u = (1/D) Σ (cs/D)^k η^k with D = 1 + K + cs.
            let d = 1.0 + k + cs;
            let r = cs / d;
            let mut u = vec![0.0; n];
            u[0] = 1.0 / d;
            for i in 1..n {
                u[i] = u[i - 1] * r;
            }
            // exp(K(1+K)u) = exp(K(1+K)u₀) · exp(A), A = K(1+K)(u − u₀).
            let kk = k * (1.0 + k);
            let mut e = vec![0.0; n];
            e[0] = 1.0;
            for i in 1..n {
                let mut acc = 0.0;
                for j in 1..=i {
                    acc += j as f64 * kk * u[j] * e[i - j];
                }
                e[i] = acc / i as f64;
            }
            let lead = (1.0 + k) * (-k + kk * u[0]).exp();
            for i in 0..n {
                let mut acc = 0.0;
                for j in 0..=i {
                    acc += u[j] * e[i - j];
                }
                out[i] = lead * acc;
            }
        }
    }
}

/// Coefficients of (1 + x(1 − η))^{−m} = (1 + x)^{−m} (1 − ρη)^{−m}, ρ = x/(1 + x).
fn binomial_series(m: f64, x: f64, n: usize, out: &mut [f64]) {
    let rho = x / (1.0 + x);
    out[0] = (-m * x.ln_1p()).exp();
    // The step factor is computed apart from the running product, so the chain from one
    // coefficient to the next is a single multiplication.
    for k in 1..n {
        out[k] = out[k - 1] * ((m + (k - 1) as f64) / k as f64 * rho);
    }
}

/// acc ← acc · f, truncated to n terms.
///
/// Row by row (each acc_j times the whole of f, added to the tail from j on): every output
/// coefficient gets its terms in the same order as the textbook double sum (so the same
/// bits), but the inner loop carries no dependency from one step to the next and vectorises.
fn mul_into(acc: &mut [f64], f: &[f64], n: usize, tmp: &mut [f64]) {
    let (acc, f, tmp) = (&mut acc[..n], &f[..n], &mut tmp[..n]);
    tmp.fill(0.0);
    for j in 0..n {
        let aj = acc[j];
        for (t, fv) in tmp[j..].iter_mut().zip(f) {
            *t += aj * fv;
        }
    }
    acc.copy_from_slice(tmp);
}

/// acc ← acc · (1 − a + a (1 + x(1 − η))^{−m}) for an integer m, in O(m n): (1 − ρη)^{−1} is a
/// running sum S_k = ρ S_{k−1} + acc_k, applied m times.
fn mul_integer_binomial(acc: &mut [f64], a: f64, m: usize, x: f64, n: usize, tmp: &mut [f64]) {
    let rho = x / (1.0 + x);
    let base = if m == 1 { 1.0 / (1.0 + x) } else { (-(m as f64) * x.ln_1p()).exp() };
    tmp[..n].copy_from_slice(&acc[..n]);
    for _ in 0..m {
        let mut run = 0.0;
        for v in tmp[..n].iter_mut() {
            run = rho * run + *v;
            *v = run;
        }
    }
    for k in 0..n {
        acc[k] = (1.0 - a) * acc[k] + a * base * tmp[k];
    }
}

/// The wanted signal's part of the series method, fixed per scenario: which powers of η are
/// summed with which weights, at which rate s.
#[derive(Debug, Clone)]
pub struct Plan {
    /// (rate s, weight of the whole sum, weights of η⁰ … η^{n−1}).
    parts: Vec<(f64, f64, Vec<f64>)>,
}

impl Plan {
    /// The plan for a Nakagami or Rician signal (`None` for other laws: Rayleigh has its exact
    /// product, no fading its inversion).
    pub fn new(signal: Fading) -> Option<Plan> {
        let parts = match signal.kind() {
            FadingKind::Nakagami { m } if (m - m.round()).abs() < 1e-9 => vec![(m, 1.0, vec![1.0; m.round() as usize])],
            FadingKind::Nakagami { m } => {
                let mc = m.ceil();
                let f = mc - m;
                let mut parts = Vec::new();
                let mut den = 0.0;
                for &(x, w) in &crate::math::quadrature::gauss_legendre(16) {
                    let b = 1.0 - (0.5 * (x + 1.0)).powf(1.0 / f);
                    if b > 0.0 {
                        let wb = w * b.powf(m - 1.0);
                        den += wb;
                        parts.push((m / b, wb, vec![1.0; mc as usize]));
                    }
                }
                parts.iter_mut().for_each(|p| p.1 /= den);
                parts
            }
            FadingKind::Rician { k } => {
                // Weights P[J ≥ j] for J ~ Poisson(K), cut where the tail falls below 1e−10
                // (the coverage error of the cut is at most that).
                let pt = super::mixture::poisson_terms(k);
                let jmax = pt.last().map(|p| p.0 as usize).unwrap_or(0);
                let mut tail = vec![0.0; jmax + 2];
                for &(j, lw) in &pt {
                    tail[j as usize] = lw.exp();
                }
                for j in (0..=jmax).rev() {
                    tail[j] += tail[j + 1];
                }
                let n = (0..=jmax).rev().find(|&j| tail[j] > 1e-10).map(|j| j + 1).unwrap_or(1);
                tail.truncate(n);
                vec![(k + 1.0, 1.0, tail)]
            }
            FadingKind::Rayleigh | FadingKind::None => return None,
        };
        Some(Plan { parts })
    }

    /// The longest series the plan needs.
    fn len(&self) -> usize {
        self.parts.iter().map(|p| p.2.len()).max().unwrap_or(1)
    }
}

/// Coefficients of L_W(s(1 − η)) to `n` terms, into `acc` (with scratch `f`, `tmp`).
#[allow(clippy::too_many_arguments)] // the three buffers are the caller's scratch
fn transform_series(
    s: f64,
    noise: f64,
    interferer: Fading,
    terms: &[Term],
    res: Residual,
    n: usize,
    acc: &mut [f64],
    f: &mut [f64],
    tmp: &mut [f64],
) {
    // Noise: e^{−ns} e^{ns η}.
    acc[0] = (-noise * s).exp();
    let ns = noise * s;
    for k in 1..n {
        acc[k] = acc[k - 1] * (ns / k as f64);
    }
    let integer_m = match interferer.kind() {
        FadingKind::Rayleigh => Some(1),
        FadingKind::Nakagami { m } if (m - m.round()).abs() < 1e-9 && (m.round() as usize) < n => {
            Some(m.round() as usize)
        }
        _ => None,
    };
    // Rayleigh interferers (m = 1): every factor's running sum in one sweep over the
    // coefficients, interferer after interferer at each coefficient. Each factor sees the
    // same inputs in the same order as when applied one by one (so the same bits), but the
    // chains of different factors overlap instead of waiting for each other.
    if integer_m == Some(1) {
        // In blocks of up to 32 factors (stack arrays); a block is applied whole.
        const FUSED: usize = 32;
        for block in terms.chunks(FUSED) {
            let (mut rho, mut keep, mut take, mut run) = ([0.0; FUSED], [0.0; FUSED], [0.0; FUSED], [0.0; FUSED]);
            for (i, &(a, c)) in block.iter().enumerate() {
                let x = c * s;
                rho[i] = x / (1.0 + x);
                keep[i] = 1.0 - a;
                take[i] = a * (1.0 / (1.0 + x));
            }
            for v in acc[..n].iter_mut() {
                let mut u = *v;
                for i in 0..block.len() {
                    run[i] = rho[i] * run[i] + u;
                    u = keep[i] * u + take[i] * run[i];
                }
                *v = u;
            }
        }
    } else {
        multiply_factors(interferer, integer_m, s, terms, n, acc, f, tmp);
    }
    if let Some((k, theta)) = res {
        binomial_series(k, theta * s, n, f);
        mul_into(acc, f, n, tmp);
    }
}

/// acc ← acc · Π (1 − a + a L(c s (1 − η))) over `terms`, factor by factor.
#[allow(clippy::too_many_arguments)] // the buffers are the caller's scratch
fn multiply_factors(
    interferer: Fading,
    integer_m: Option<usize>,
    s: f64,
    terms: &[Term],
    n: usize,
    acc: &mut [f64],
    f: &mut [f64],
    tmp: &mut [f64],
) {
    for &(a, c) in terms {
        match integer_m {
            Some(m) => mul_integer_binomial(acc, a, m, c * s / m as f64, n, tmp),
            None => {
                factor_series(interferer, c * s, n, f);
                f[..n].iter_mut().for_each(|v| *v *= a);
                f[0] += 1.0 - a;
                mul_into(acc, f, n, tmp);
            }
        }
    }
}

/// Coverage for a Nakagami or Rician signal without shadowing, by its [`Plan`].
pub fn gamma_like(plan: &Plan, noise: f64, interferer: Fading, terms: &[Term], res: Residual) -> f64 {
    let n = plan.len();
    // Series up to 64 terms (Rician K up to about 12 dB) live on the stack; longer ones on
    // the heap.
    const STACK: usize = 64;
    let mut stack = [[0.0f64; STACK]; 3];
    let mut heap: Vec<Vec<f64>>;
    let [acc, f, tmp]: [&mut [f64]; 3] = if n <= STACK {
        let [a, b, c] = &mut stack;
        [a, b, c]
    } else {
        heap = vec![vec![0.0; n]; 3];
        let (a, rest) = heap.split_at_mut(1);
        let (b, c) = rest.split_at_mut(1);
        [&mut a[0], &mut b[0], &mut c[0]]
    };
    let mut p = 0.0;
    for (s, w, weights) in &plan.parts {
        let m = weights.len();
        transform_series(*s, noise, interferer, terms, res, m, acc, f, tmp);
        p += w * acc[..m].iter().zip(weights).map(|(a, b)| a * b).sum::<f64>();
    }
    p.clamp(0.0, 1.0)
}

/// L_W(β) at complex β.
fn transform_complex(beta: Complex64, noise: f64, interferer: Fading, terms: &[Term], res: Residual) -> Complex64 {
    let mut l = (-beta * noise).exp();
    for &(a, c) in terms {
        l *= 1.0 - a + a * interferer.laplace_complex(beta * c);
    }
    if let Some((k, theta)) = res {
        l *= (-k * (1.0 + beta * theta).ln()).exp();
    }
    l
}

/// Coverage for a signal without fading or shadowing: P\[W ≤ 1\].
pub fn unfaded(
    euler: &crate::math::laplace::Euler,
    noise: f64,
    interferer: Fading,
    terms: &[Term],
    res: Residual,
) -> f64 {
    if interferer.kind() == FadingKind::None {
        return enumerate(noise, terms, res);
    }
    // The atom at W = noise when every interferer is off (only without a residual).
    let off: f64 = if res.is_none() { terms.iter().map(|t| 1.0 - t.0).product() } else { 0.0 };
    let p = euler.invert(1.0, |b| {
        let l = transform_complex(b, noise, interferer, terms, res) - off * (-b * noise).exp();
        l / b
    });
    (p + if noise <= 1.0 { off } else { 0.0 }).clamp(0.0, 1.0)
}

/// P\[W ≤ 1\] for unfaded interferers: their on/off states enumerated (depth first, a branch
/// cut as soon as its switched-on sum alone exceeds the margin), the residual's gamma CDF at
/// each leaf.
fn enumerate(noise: f64, terms: &[Term], res: Residual) -> f64 {
    fn go(i: usize, used: f64, p: f64, terms: &[Term], res: Residual) -> f64 {
        if used > 1.0 || p == 0.0 {
            return 0.0;
        }
        if i == terms.len() {
            return p * match res {
                None => 1.0,
                Some((k, theta)) => statrs::function::gamma::gamma_lr(k, (1.0 - used) / theta),
            };
        }
        let (a, c) = terms[i];
        go(i + 1, used, p * (1.0 - a), terms, res) + go(i + 1, used + c, p * a, terms, res)
    }
    go(0, noise, 1.0, terms, res).clamp(0.0, 1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The fast forms keep the arithmetic of the textbook forms exactly (common practice for
    /// a speed-only rewrite): the row-by-row convolution against the double sum, and the
    /// fused sweep over Rayleigh factors against applying them one by one.
    #[test]
    fn fast_recurrences_give_the_same_bits_as_the_plain_ones() {
        let n = 33;
        let acc0: Vec<f64> = (0..n).map(|k| 0.9f64.powi(k as i32) / (1.0 + k as f64)).collect();
        let f: Vec<f64> = (0..n).map(|k| 0.7f64.powi(k as i32) * (k as f64 + 0.3)).collect();
        let mut plain = vec![0.0; n];
        for k in 0..n {
            let mut s = 0.0;
            for j in 0..=k {
                s += acc0[j] * f[k - j];
            }
            plain[k] = s;
        }
        let (mut acc, mut tmp) = (acc0.clone(), vec![0.0; n]);
        mul_into(&mut acc, &f, n, &mut tmp);
        assert_eq!(acc, plain);

        // 8 factors (one block) and 40 (two blocks).
        for count in [8, 40] {
            let terms: Vec<Term> = (0..count).map(|i| (0.3 + 0.016 * i as f64, 0.01 * (i + 1) as f64)).collect();
            let s = 7.9;
            let (mut fused, mut one_by_one) = (vec![0.0; n], vec![0.0; n]);
            let (mut fb, mut tb) = (vec![0.0; n], vec![0.0; n]);
            transform_series(s, 0.2, Fading::RAYLEIGH, &terms, None, n, &mut fused, &mut fb, &mut tb);
            one_by_one[0] = (-0.2 * s).exp();
            let ns = 0.2 * s;
            for k in 1..n {
                one_by_one[k] = one_by_one[k - 1] * (ns / k as f64);
            }
            for &(a, c) in &terms {
                mul_integer_binomial(&mut one_by_one, a, 1, c * s, n, &mut tb);
            }
            assert_eq!(fused, one_by_one, "{count} factors");
        }
    }
}
