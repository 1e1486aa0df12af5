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
//!   tail falls below 1e−13).
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
    for k in 1..n {
        out[k] = out[k - 1] * (m + (k - 1) as f64) / k as f64 * rho;
    }
}

/// acc ← acc · f, truncated to n terms.
fn mul_into(acc: &mut [f64], f: &[f64], n: usize, tmp: &mut [f64]) {
    for k in 0..n {
        let mut s = 0.0;
        for j in 0..=k {
            s += acc[j] * f[k - j];
        }
        tmp[k] = s;
    }
    acc[..n].copy_from_slice(&tmp[..n]);
}

/// Coefficients of L_W(s(1 − η)) to `n` terms.
fn transform_series(s: f64, noise: f64, interferer: Fading, terms: &[Term], res: Residual, n: usize) -> Vec<f64> {
    let mut acc = vec![0.0; n];
    let mut f = vec![0.0; n];
    let mut tmp = vec![0.0; n];
    // Noise: e^{−ns} e^{ns η}.
    acc[0] = (-noise * s).exp();
    for k in 1..n {
        acc[k] = acc[k - 1] * noise * s / k as f64;
    }
    for &(a, c) in terms {
        factor_series(interferer, c * s, n, &mut f);
        f.iter_mut().for_each(|v| *v *= a);
        f[0] += 1.0 - a;
        mul_into(&mut acc, &f, n, &mut tmp);
    }
    if let Some((k, theta)) = res {
        binomial_series(k, theta * s, n, &mut f);
        mul_into(&mut acc, &f, n, &mut tmp);
    }
    acc
}

/// P for a gamma signal of integer shape `m` at rate `s` (s = m for Nakagami-m).
fn integer_shape(m: usize, s: f64, noise: f64, interferer: Fading, terms: &[Term], res: Residual) -> f64 {
    transform_series(s, noise, interferer, terms, res, m).iter().sum()
}

/// Coverage for a Nakagami or Rician signal without shadowing.
pub fn gamma_like(signal: Fading, noise: f64, interferer: Fading, terms: &[Term], res: Residual) -> f64 {
    let p = match signal.kind() {
        FadingKind::Rayleigh => integer_shape(1, 1.0, noise, interferer, terms, res),
        FadingKind::Nakagami { m } if (m - m.round()).abs() < 1e-9 => {
            integer_shape(m.round() as usize, m, noise, interferer, terms, res)
        }
        FadingKind::Nakagami { m } => {
            let mc = m.ceil();
            let f = mc - m;
            let gl = crate::math::quadrature::gauss_legendre(16);
            let (mut num, mut den) = (0.0, 0.0);
            for &(x, w) in &gl {
                let t = 0.5 * (x + 1.0);
                let b = 1.0 - t.powf(1.0 / f);
                if b <= 0.0 {
                    continue;
                }
                let wb = w * b.powf(m - 1.0);
                num += wb * integer_shape(mc as usize, m / b, noise, interferer, terms, res);
                den += wb;
            }
            num / den
        }
        FadingKind::Rician { k } => {
            // Weights P[J ≥ j] for J ~ Poisson(K).
            let pt = super::mixture::poisson_terms(k);
            let jmax = pt.last().map(|p| p.0 as usize).unwrap_or(0);
            let mut pmf = vec![0.0; jmax + 1];
            for &(j, lw) in &pt {
                pmf[j as usize] = lw.exp();
            }
            let mut tail = vec![0.0; jmax + 2];
            for j in (0..=jmax).rev() {
                tail[j] = tail[j + 1] + pmf[j];
            }
            let n = (0..=jmax).rev().find(|&j| tail[j] > 1e-13).map(|j| j + 1).unwrap_or(1);
            let c = transform_series(k + 1.0, noise, interferer, terms, res, n);
            c.iter().zip(&tail).map(|(a, b)| a * b).sum()
        }
        FadingKind::None => unreachable!("no-fading signals use `unfaded`"),
    };
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
