//! Gaussian quadrature rules.
//!
//! # References
//! - M. Abramowitz and I. A. Stegun, Handbook of Mathematical Functions, 25.4.29 (Legendre)
//!   and 25.4.46 (Hermite).

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

/// The standard normal expectation by the trapezoidal rule: nodes z = k·step on \[−9, 9\],
/// weights e^{−z²/2} normalised to sum to 1. For functions analytic in a strip around the
/// real axis the error falls geometrically as the step shrinks (Trefethen and Weideman,
/// SIAM Review 56, 2014), unlike Gauss–Hermite with its fixed sparse nodes at the centre.
pub fn normal_trapezoid_rule(step: f64) -> Vec<(f64, f64)> {
    let n = (9.0 / step).round() as i64;
    let mut r: Vec<(f64, f64)> = (-n..=n)
        .map(|i| {
            let z = i as f64 * step;
            (z, (-0.5 * z * z).exp())
        })
        .collect();
    let s: f64 = r.iter().map(|p| p.1).sum();
    r.iter_mut().for_each(|p| p.1 /= s);
    r
}

/// Gauss–Hermite rule normalised to the standard normal law: Σ w_j f(z_j) ≈ E\[f(Z)\],
/// Z ~ N(0, 1) (Newton on the orthonormal Hermite recurrence, Numerical Recipes §4.5).
#[cfg(test)]
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
}
