//! Small-scale fading of a normalised power gain h (E[h] = 1) and log-normal shadowing:
//! exact moments and the gamma (Nakagami-m) form used by moment matching.
//!
//! # References
//! - M. Nakagami, "The m-distribution — a general formula of intensity distribution of rapid
//!   fading", in Statistical Methods in Radio Wave Propagation, Pergamon, 1960: a Rician power
//!   is matched by m = (K + 1)² / (2K + 1).
//! - Rician second moment E[h²] = (2 + 4K + K²)/(1 + K)² (from the non-central χ² with two
//!   degrees of freedom; values checked against scipy.stats.rice in the shared model notes).

use statrs::function::gamma::ln_gamma;

/// A fading law for a normalised power gain.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Fading {
    /// No fading: h = 1.
    None,
    /// Rayleigh amplitude: h ~ Exp(1).
    Rayleigh,
    /// Nakagami-m amplitude: h ~ Gamma(m, 1/m), m ≥ 0.5.
    Nakagami {
        /// Shape m.
        m: f64,
    },
    /// Rician amplitude with K-factor (linear): h = |√(K/(K+1)) + CN(0, 1/(K+1))|².
    Rician {
        /// K-factor, linear.
        k: f64,
    },
}

impl Fading {
    /// A Nakagami law, checking m ≥ 0.5.
    pub fn nakagami(m: f64) -> Result<Fading, String> {
        if (0.5..=1e6).contains(&m) {
            Ok(Fading::Nakagami { m })
        } else {
            Err(format!("value {m} is outside the allowed range [0.5, 1e6]"))
        }
    }

    /// A Rician law from its K-factor in dB, checking a finite value in [−30, 40] dB.
    pub fn rician_db(k_db: f64) -> Result<Fading, String> {
        if k_db.is_finite() && (-30.0..=40.0).contains(&k_db) {
            Ok(Fading::Rician { k: 10f64.powf(k_db / 10.0) })
        } else {
            Err(format!("value {k_db} is outside the allowed range [-30, 40] dB"))
        }
    }

    /// The n-th moment E[hⁿ] (n ≥ 0).
    pub fn moment(&self, n: u32) -> f64 {
        match *self {
            Fading::None => 1.0,
            Fading::Rayleigh => (1..=n).map(f64::from).product(),
            Fading::Nakagami { m } => (ln_gamma(m + n as f64) - ln_gamma(m) - n as f64 * m.ln()).exp(),
            Fading::Rician { k } => {
                // h = X / (K+1) with X non-central χ²-like: |√K + CN(0,1)|² has moments
                // E[Xⁿ] = n! Σ_j C(n, j) K^j / j!  (Laguerre form).
                let mut s = 0.0;
                let mut binom = 1.0;
                let mut jfact = 1.0;
                for j in 0..=n {
                    if j > 0 {
                        binom *= (n - j + 1) as f64 / j as f64;
                        jfact *= j as f64;
                    }
                    s += binom * k.powi(j as i32) / jfact;
                }
                let nfact: f64 = (1..=n).map(f64::from).product();
                nfact * s / (k + 1.0).powi(n as i32)
            }
        }
    }

    /// The Nakagami-m of the gamma law with the same first two moments: 1 / Var[h]
    /// (∞ for no fading). For Rician this is (K+1)²/(2K+1) (Nakagami 1960).
    pub fn gamma_shape(&self) -> f64 {
        match *self {
            Fading::None => f64::INFINITY,
            Fading::Rayleigh => 1.0,
            Fading::Nakagami { m } => m,
            Fading::Rician { k } => (k + 1.0).powi(2) / (2.0 * k + 1.0),
        }
    }
}

/// Mean of the linear gain 10^(X/10) for log-normal shadowing X ~ N(0, σ²) in dB:
/// exp((σ ln10 / 10)² / 2) (moment generating function of the normal law).
pub fn lognormal_mean(sigma_db: f64) -> f64 {
    let s = sigma_db * std::f64::consts::LN_10 / 10.0;
    (s * s / 2.0).exp()
}

/// n-th moment of 10^(X/10), X ~ N(0, σ²) in dB: exp(n² s² / 2), s = σ ln10 / 10.
pub fn lognormal_moment(sigma_db: f64, n: u32) -> f64 {
    let s = sigma_db * std::f64::consts::LN_10 / 10.0;
    ((n * n) as f64 * s * s / 2.0).exp()
}

/// `[fading]`: small-scale fading of the wanted signal and of interferers, and log-normal
/// shadowing of every link.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FadingSpec {
    /// Fading of the wanted signal.
    pub signal: Fading,
    /// Fading of each interferer.
    pub interferer: Fading,
    /// Log-normal shadowing standard deviation, dB (0: none).
    pub shadowing_db: f64,
}

impl Default for FadingSpec {
    fn default() -> Self {
        FadingSpec { signal: Fading::None, interferer: Fading::None, shadowing_db: 0.0 }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Rician K = 3, 6, 10 dB: m = 1.7977, 2.7684, 5.7619 and E[h²] = 1.55626, 1.36122, 1.17355
    // (shared model notes, checked there against scipy.stats.rice); the gamma match of a
    // Rician power has m = 1/Var[h] (Nakagami 1960).
    #[test]
    fn rician_to_nakagami_mapping() {
        for (k_db, m, e2) in [(3.0, 1.7977, 1.55626), (6.0, 2.7684, 1.36122), (10.0, 5.7619, 1.17355)] {
            let f = Fading::rician_db(k_db).unwrap();
            assert!((f.gamma_shape() - m).abs() < 1e-4, "{k_db}: {}", f.gamma_shape());
            assert!((f.moment(2) - e2).abs() < 1e-5, "{k_db}: {}", f.moment(2));
            assert!((f.moment(1) - 1.0).abs() < 1e-12);
            assert!((1.0 / (f.moment(2) - 1.0) - f.gamma_shape()).abs() < 1e-9);
        }
    }

    // Exponential moments n! and gamma moments Γ(m+n)/(Γ(m) mⁿ) (standard results; Nakagami
    // with m = 1 is Rayleigh).
    #[test]
    fn rayleigh_and_nakagami_moments() {
        assert_eq!(Fading::Rayleigh.moment(3), 6.0);
        let n1 = Fading::nakagami(1.0).unwrap();
        for n in 0..5 {
            assert!((n1.moment(n) - Fading::Rayleigh.moment(n)).abs() < 1e-9 * Fading::Rayleigh.moment(n));
        }
        // m = 2: E[h²] = Γ(4)/(Γ(2)·4) = 1.5.
        assert!((Fading::nakagami(2.0).unwrap().moment(2) - 1.5).abs() < 1e-12);
        assert!(Fading::nakagami(0.4).is_err() && Fading::rician_db(f64::NAN).is_err());
    }

    // Log-normal mean exp((σ ln10/10)²/2), the normal law's moment generating function at
    // ln10/10. Hand calculation for σ = 8 dB: s = 1.842068, s²/2 = 1.696607, e^1.696607 =
    // 5.45541; second moment e^(2 s²) = e^6.786430 = 885.745.
    #[test]
    fn lognormal_moments() {
        let s: f64 = 8.0 * std::f64::consts::LN_10 / 10.0;
        assert!((lognormal_mean(8.0) - 5.45541).abs() < 1e-4);
        assert!((lognormal_moment(8.0, 2) - 885.745).abs() < 1e-2);
        assert!((s - 1.842068).abs() < 1e-6);
        assert_eq!(lognormal_mean(0.0), 1.0);
    }
}
