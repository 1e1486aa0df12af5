//! Gaussian quadrature rules.
//!
//! # References
//! - M. Abramowitz and I. A. Stegun, Handbook of Mathematical Functions, 25.4.29 (Legendre)
//!   and 25.4.45 (Laguerre).
//! - W. H. Press et al., Numerical Recipes, 2nd ed., §4.5 (Newton iteration with asymptotic
//!   starting values for the generalised Laguerre rule).

use statrs::function::gamma::ln_gamma;
use std::f64::consts::PI;

/// Gauss–Legendre nodes and weights on [−1, 1] (Newton on the Legendre recurrence).
pub fn gauss_legendre(n: usize) -> Vec<(f64, f64)> {
    let mut out = Vec::with_capacity(n);
    for i in 0..n {
        let mut x = (PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 0.0;
        for _ in 0..100 {
            let (mut p0, mut p1) = (1.0, x);
            for k in 2..=n {
                let p2 = ((2 * k - 1) as f64 * x * p1 - (k - 1) as f64 * p0) / k as f64;
                p0 = p1;
                p1 = p2;
            }
            dp = n as f64 * (x * p1 - p0) / (x * x - 1.0);
            let dx = p1 / dp;
            x -= dx;
            if dx.abs() < 1e-15 {
                break;
            }
        }
        out.push((x, 2.0 / ((1.0 - x * x) * dp * dp)));
    }
    out
}

/// Generalised Gauss–Laguerre rule normalised to the gamma law: nodes x_j and weights w_j
/// with Σ w_j f(x_j) ≈ E[f(X)] for X ~ Gamma(shape, 1), shape = α + 1 > 0.
pub fn gamma_expectation_rule(n: usize, shape: f64) -> Vec<(f64, f64)> {
    let alf = shape - 1.0;
    let nf = n as f64;
    let mut x: Vec<f64> = Vec::with_capacity(n);
    let mut out = Vec::with_capacity(n);
    let mut z = 0.0;
    for i in 0..n {
        if i == 0 {
            z = (1.0 + alf) * (3.0 + 0.92 * alf) / (1.0 + 2.4 * nf + 1.8 * alf);
        } else if i == 1 {
            z += (15.0 + 6.25 * alf) / (1.0 + 0.9 * alf + 2.5 * nf);
        } else {
            let ai = (i - 1) as f64;
            z += ((1.0 + 2.55 * ai) / (1.9 * ai) + 1.26 * ai * alf / (1.0 + 3.5 * ai)) * (z - x[i - 2])
                / (1.0 + 0.3 * alf);
        }
        let (mut pp, mut p2) = (0.0, 0.0);
        for _ in 0..200 {
            let (mut p1, mut q2) = (1.0, 0.0);
            for j in 1..=n {
                let p3 = q2;
                q2 = p1;
                p1 = ((2.0 * j as f64 - 1.0 + alf - z) * q2 - (j as f64 - 1.0 + alf) * p3) / j as f64;
            }
            p2 = q2;
            pp = (nf * p1 - (nf + alf) * p2) / z;
            let z1 = z;
            z = z1 - p1 / pp;
            if (z - z1).abs() <= 1e-14 * z.abs().max(1.0) {
                break;
            }
        }
        x.push(z);
        // w = −Γ(α+n)/(Γ(n) pp n p2), divided by Γ(α+1) to normalise.
        let lw = ln_gamma(alf + nf) - ln_gamma(nf) - ln_gamma(alf + 1.0);
        out.push((z, -lw.exp() / (pp * nf * p2)));
    }
    out
}

/// Gauss–Hermite rule normalised to the standard normal law: Σ w_j f(z_j) ≈ E[f(Z)],
/// Z ~ N(0, 1) (Newton on the orthonormal Hermite recurrence, Numerical Recipes §4.5).
pub fn normal_expectation_rule(n: usize) -> Vec<(f64, f64)> {
    let pim4 = PI.powf(-0.25);
    let nf = n as f64;
    let m = n.div_ceil(2);
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    let mut z = 0.0;
    for i in 0..m {
        z = match i {
            0 => (2.0 * nf + 1.0).sqrt() - 1.85575 * (2.0 * nf + 1.0).powf(-1.0 / 6.0),
            1 => z - 1.14 * nf.powf(0.426) / z,
            2 => 1.86 * z - 0.86 * x[0],
            3 => 1.91 * z - 0.91 * x[1],
            _ => 2.0 * z - x[i - 2],
        };
        let mut pp = 0.0;
        for _ in 0..200 {
            let (mut p1, mut p2) = (pim4, 0.0);
            for j in 1..=n {
                let p3 = p2;
                p2 = p1;
                p1 = z * (2.0 / j as f64).sqrt() * p2 - ((j as f64 - 1.0) / j as f64).sqrt() * p3;
            }
            pp = (2.0 * nf).sqrt() * p2;
            let z1 = z;
            z = z1 - p1 / pp;
            if (z - z1).abs() <= 1e-14 {
                break;
            }
        }
        x[i] = z;
        x[n - 1 - i] = -z;
        w[i] = 2.0 / (pp * pp);
        w[n - 1 - i] = w[i];
    }
    x.iter().zip(&w).map(|(x, w)| (x * 2f64.sqrt(), w / PI.sqrt())).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    // Gauss–Legendre rules integrate polynomials of degree 2n−1 exactly (A&S 25.4.29):
    // ∫_{−1}^{1} x^14 dx = 2/15 with 8 points.
    #[test]
    fn gauss_legendre_exactness() {
        let gl = gauss_legendre(8);
        let s: f64 = gl.iter().map(|(x, w)| w * x.powi(14)).sum();
        assert!((s - 2.0 / 15.0).abs() < 1e-14);
    }

    // Normal moments E[Z^2k] = (2k−1)!! (standard result), exact up to degree 2n − 1.
    #[test]
    fn normal_rule_reproduces_moments() {
        for n in [1usize, 5, 8] {
            let r = normal_expectation_rule(n);
            assert!((r.iter().map(|p| p.1).sum::<f64>() - 1.0).abs() < 1e-12);
            let mut dfact = 1.0;
            for k in 1..n {
                dfact *= (2 * k - 1) as f64;
                let got: f64 = r.iter().map(|(z, w)| w * z.powi(2 * k as i32)).sum();
                assert!((got / dfact - 1.0).abs() < 1e-10, "n {n} k {k}: {got}");
            }
        }
    }

    // Gamma moments E[X^k] = Γ(a+k)/Γ(a) (standard result), exact for k ≤ 2n − 1.
    #[test]
    fn gamma_rule_reproduces_moments() {
        for a in [0.6, 1.0, 2.77, 11.0] {
            let r = gamma_expectation_rule(20, a);
            assert!((r.iter().map(|p| p.1).sum::<f64>() - 1.0).abs() < 1e-12, "a {a}");
            for k in 1..6 {
                let want = (ln_gamma(a + k as f64) - ln_gamma(a)).exp();
                let got: f64 = r.iter().map(|(x, w)| w * x.powi(k)).sum();
                assert!((got / want - 1.0).abs() < 1e-10, "a {a} k {k}: {got} vs {want}");
            }
        }
    }
}
