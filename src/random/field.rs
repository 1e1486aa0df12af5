//! Aggregate interference from a Poisson field of directional interferers at a reference
//! receiver: moments, cumulants and the Laplace transform.
//!
//! Interferers form a Poisson process of density λ (after independent thinning `keep`) on the
//! annulus guard ≤ r ≤ radius around the receiver. Each has power P, a sector transmit gain
//! toward the receiver (main lobe with probability q_t = HPBW_t/360°), and is seen by the
//! receiver's sector antenna in its main lobe with probability q_r; both orientations are
//! uniform and independent, which for a Poisson field is exact, not an approximation. Each
//! link fades independently with normalised power h. Path gain ℓ(r) = 1/L(r) from the
//! scenario's path-loss model (planar distance, heights ignored).
//!
//! - Cumulants (Campbell's theorem): κ_n = λ Pⁿ E\[G_tⁿ\] E\[G_rⁿ\] E\[hⁿ\] ∫_A ℓ(|x|)ⁿ dx.
//! - Laplace transform (probability generating functional of the Poisson process, i.e. the
//!   law of total probability over the Poisson count): L_I(s) = exp(−λ ∫_A (1 − E\[e^{−s P G h ℓ}\]) dx).
//!
//! With a Matérn II hard core the analytic results use a Poisson field of the retained
//! density (the pair correlation of the hard core is ignored); the Monte Carlo simulates the
//! hard core itself, so the two show how much that matters.
//!
//! # References
//! - M. Haenggi, Stochastic Geometry for Wireless Networks, Cambridge 2012, ch. 4–5.
//! - F. Baccelli, B. Błaszczyszyn and P. Mühlethaler, "An Aloha protocol for multihop mobile
//!   wireless networks", IEEE Trans. Inf. Theory 52(2), 2006.

use crate::error::ModelError;
use crate::model::antenna::GainLaw;
use crate::model::fading::Fading;
use crate::model::pathloss::PathLoss;
use crate::model::units::db_to_lin;
use crate::random::points::matern_ii_density;
use num_complex::Complex64;
use std::f64::consts::PI;

/// The random-field model, built by [`Field::new`] and the `with_` builders (each checks its
/// value), or from command-line values by [`crate::config::field::FieldSpec::build`].
#[derive(Debug, Clone)]
pub struct Field {
    /// Parent density, per m².
    pub(crate) density_per_m2: f64,
    /// Independent retention probability.
    pub(crate) keep: f64,
    /// Matérn II hard-core distance, m (0: none).
    pub(crate) hard_core_m: f64,
    /// Guard radius (no interferer closer), m.
    pub(crate) guard_m: f64,
    /// Outer radius, m.
    pub(crate) radius_m: f64,
    /// Interferer transmit power, mW.
    pub(crate) power_mw: f64,
    /// Gain law of the interferers' transmit antennas toward the receiver (uniform
    /// orientation; any pattern through [`crate::model::antenna::Pattern::orientation_law`]).
    pub(crate) tx: GainLaw,
    /// Gain law of the receiver's antenna toward an interferer.
    pub(crate) rx: GainLaw,
    /// Fading of each interfering link.
    pub(crate) fading: Fading,
    /// Path-loss model (of line-of-sight links when there is blockage).
    pub(crate) pathloss: PathLoss,
    /// Blockage by buildings: line of sight with probability e^{−βr}, otherwise the
    /// non-line-of-sight law.
    pub(crate) blockage: Option<Blockage>,
}

/// Line-of-sight blockage of a Boolean model of buildings (Bai, Vaze and Heath, IEEE Trans.
/// Wireless Commun. 13(9), 2014): a link of length r is in line of sight with probability
/// e^{−βr}, β = λ_b E\[perimeter\] / π for buildings of density λ_b with random orientation;
/// a blocked link follows `nlos` (the constant e^{−λ_b E\[area\]} of the exact Boolean model is
/// left out: both ends stand outdoors).
#[derive(Debug, Clone)]
pub struct Blockage {
    /// β, per m.
    pub beta_per_m: f64,
    /// Path loss of blocked links.
    pub nlos: PathLoss,
}

pub use crate::math::quadrature::gauss_legendre;

/// Radial quadrature of ∫_{guard}^{radius} f(r) 2πr dr as (r, weight) pairs, with the
/// constant-gain disc inside the minimum distance handled separately by the caller.
#[derive(Debug, Clone)]
pub struct Radial {
    /// Area of the part of the annulus inside the path-loss minimum distance, m².
    pub inner_area_m2: f64,
    /// Gain inside the minimum distance (ℓ(d_min)).
    pub inner_gain: f64,
    /// (r, ℓ(r), weight) for the part beyond the minimum distance; Σ weight·f(r) ≈ ∫ f dA.
    /// With blockage each r appears twice: the line-of-sight gain weighted by e^{−βr} and the
    /// blocked gain by 1 − e^{−βr}.
    pub nodes: Vec<(f64, f64, f64)>,
    /// With blockage: the blocked part inside the minimum distance (gain, area m²).
    pub inner_blocked: (f64, f64),
}

impl Field {
    /// A Poisson field of interferers of `density_per_m2` ((0, 10] per m²) on the annulus
    /// `guard_m` ≤ r ≤ `radius_m` (0 ≤ guard < radius ≤ 1e6 m) with `pathloss`; 1 mW
    /// interferers, omni 0 dBi at both ends, Rayleigh fading, no thinning, no hard core.
    ///
    /// ```
    /// use lobemap::model::pathloss::{PathLoss, PowerLaw};
    /// use lobemap::random::field::Field;
    /// let pl = PathLoss::new(PowerLaw::new(4.0, 0.0).unwrap(), 2.0, 0.0, 1e-3).unwrap();
    /// let f = Field::new(1e-4, 0.0, 2000.0, pl).unwrap();
    /// assert!(Field::new(1e-4, 10.0, 5.0, f.pathloss().clone()).is_err());
    /// ```
    pub fn new(density_per_m2: f64, guard_m: f64, radius_m: f64, pathloss: PathLoss) -> Result<Field, Vec<ModelError>> {
        let f = Field {
            density_per_m2,
            keep: 1.0,
            hard_core_m: 0.0,
            guard_m,
            radius_m,
            power_mw: 1.0,
            tx: GainLaw::two_level(1.0, 0.0, 0.0),
            rx: GainLaw::two_level(1.0, 0.0, 0.0),
            fading: Fading::RAYLEIGH,
            pathloss,
            blockage: None,
        };
        f.checked()
    }

    fn checked(self) -> Result<Field, Vec<ModelError>> {
        let mut e = Vec::new();
        if !(self.density_per_m2.is_finite() && self.density_per_m2 > 0.0 && self.density_per_m2 <= 10.0) {
            e.push(ModelError::out_of_range("density_per_m2", self.density_per_m2, "(0, 10] per m²"));
        }
        if !(self.radius_m.is_finite() && self.radius_m > 0.0 && self.radius_m <= 1e6) {
            e.push(ModelError::out_of_range("radius_m", self.radius_m, "(0, 1e6] m"));
        }
        if !(self.guard_m.is_finite() && self.guard_m >= 0.0 && self.guard_m < self.radius_m) {
            e.push(ModelError::out_of_range("guard_m", self.guard_m, "[0, radius_m) m"));
        }
        if !(self.keep > 0.0 && self.keep <= 1.0) {
            e.push(ModelError::out_of_range("keep", self.keep, "(0, 1]"));
        }
        if !(self.hard_core_m.is_finite() && (0.0..=10_000.0).contains(&self.hard_core_m)) {
            e.push(ModelError::out_of_range("hard_core_m", self.hard_core_m, "[0, 10000] m"));
        }
        if !(self.power_mw.is_finite() && self.power_mw > 0.0) {
            e.push(ModelError::out_of_range("power_mw", self.power_mw, "(0, inf) mW"));
        }
        if let Some(b) = &self.blockage
            && !(b.beta_per_m.is_finite() && b.beta_per_m > 0.0 && b.beta_per_m <= 1.0)
        {
            e.push(ModelError::out_of_range("los_beta_per_m", b.beta_per_m, "(0, 1] per m"));
        }
        if e.is_empty() { Ok(self) } else { Err(e) }
    }

    /// The same field with another parent density, per m².
    pub fn with_density_per_m2(self, density_per_m2: f64) -> Result<Field, Vec<ModelError>> {
        Field { density_per_m2, ..self }.checked()
    }
    /// The same field with independent thinning: each interferer kept with probability `keep`.
    pub fn with_keep(self, keep: f64) -> Result<Field, Vec<ModelError>> {
        Field { keep, ..self }.checked()
    }
    /// The same field with Matérn II hard-core thinning at `hard_core_m` (0: none).
    pub fn with_hard_core_m(self, hard_core_m: f64) -> Result<Field, Vec<ModelError>> {
        Field { hard_core_m, ..self }.checked()
    }
    /// The same field on another annulus.
    pub fn with_annulus(self, guard_m: f64, radius_m: f64) -> Result<Field, Vec<ModelError>> {
        Field { guard_m, radius_m, ..self }.checked()
    }
    /// The same field with another interferer power, mW.
    pub fn with_power_mw(self, power_mw: f64) -> Result<Field, Vec<ModelError>> {
        Field { power_mw, ..self }.checked()
    }
    /// The same field with the interferers' and the receiver's gain laws (any pattern, via
    /// [`crate::model::antenna::Pattern::orientation_law`]).
    pub fn with_antennas(self, tx: GainLaw, rx: GainLaw) -> Field {
        Field { tx, rx, ..self }
    }
    /// The same field with another fading law on every interfering link.
    pub fn with_fading(self, fading: Fading) -> Field {
        Field { fading, ..self }
    }
    /// Parent density, per m².
    pub fn density_per_m2(&self) -> f64 {
        self.density_per_m2
    }
    /// Independent retention probability.
    pub fn keep(&self) -> f64 {
        self.keep
    }
    /// Matérn II hard-core distance, m (0: none).
    pub fn hard_core_m(&self) -> f64 {
        self.hard_core_m
    }
    /// Guard radius, m.
    pub fn guard_m(&self) -> f64 {
        self.guard_m
    }
    /// Outer radius, m.
    pub fn radius_m(&self) -> f64 {
        self.radius_m
    }
    /// Interferer transmit power, mW.
    pub fn power_mw(&self) -> f64 {
        self.power_mw
    }
    /// The interferers' transmit gain law.
    pub fn tx(&self) -> &GainLaw {
        &self.tx
    }
    /// The receiver's gain law.
    pub fn rx(&self) -> &GainLaw {
        &self.rx
    }
    /// Fading of each interfering link.
    pub fn fading(&self) -> Fading {
        self.fading
    }
    /// Path-loss model.
    pub fn pathloss(&self) -> &PathLoss {
        &self.pathloss
    }
    /// Density of the analytic (Poisson) field: λ·keep, then the Matérn II retained density.
    pub fn effective_density(&self) -> f64 {
        let l = self.density_per_m2 * self.keep;
        if self.hard_core_m > 0.0 { matern_ii_density(l, self.hard_core_m) } else { l }
    }

    /// Area of the annulus, m².
    pub fn area_m2(&self) -> f64 {
        PI * (self.radius_m.powi(2) - self.guard_m.powi(2))
    }

    /// Path gain ℓ(r) (linear).
    pub fn path_gain(&self, r: f64) -> f64 {
        self.pathloss.gain_lin(r)
    }

    /// The radial quadrature: 8-point Gauss–Legendre panels 0.25 wide in ln r.
    pub fn radial(&self) -> Radial {
        let dmin = self.pathloss.min_distance_m();
        let (a, b) = (self.guard_m, self.radius_m);
        let inner_hi = dmin.min(b);
        let inner_area_m2 = if a < inner_hi { PI * (inner_hi * inner_hi - a * a) } else { 0.0 };
        let lo = a.max(dmin);
        let mut nodes = Vec::new();
        if b > lo {
            let (ua, ub) = (lo.ln(), b.ln());
            let panels = (((ub - ua) / 0.25).ceil() as usize).max(4);
            let gl = gauss_legendre(8);
            let h = (ub - ua) / panels as f64;
            for p in 0..panels {
                let c = ua + (p as f64 + 0.5) * h;
                for &(x, w) in &gl {
                    let r = (c + x * h / 2.0).exp();
                    // dA = 2πr dr = 2πr² du.
                    nodes.push((r, self.path_gain(r), w * h / 2.0 * 2.0 * PI * r * r));
                }
            }
        }
        let Some(b) = &self.blockage else {
            return Radial { inner_area_m2, inner_gain: self.path_gain(dmin), nodes, inner_blocked: (0.0, 0.0) };
        };
        let p = |r: f64| (-b.beta_per_m * r).exp();
        let split: Vec<(f64, f64, f64)> =
            nodes.iter().flat_map(|&(r, g, w)| [(r, g, w * p(r)), (r, b.nlos.gain_lin(r), w * (1.0 - p(r)))]).collect();
        // Inside d_min: the area-weighted mean of e^{−βr} over a ≤ r ≤ min(d_min, R), from
        // ∫ r e^{−βr} dr = −e^{−βr}(βr + 1)/β².
        let lo_in = a.min(inner_hi);
        let prim = |r: f64| -(-b.beta_per_m * r).exp() * (b.beta_per_m * r + 1.0) / b.beta_per_m.powi(2);
        let p_in = if inner_area_m2 > 0.0 {
            (2.0 * PI * (prim(inner_hi) - prim(lo_in)) / inner_area_m2).clamp(0.0, 1.0)
        } else {
            1.0
        };
        Radial {
            inner_area_m2: inner_area_m2 * p_in,
            inner_gain: self.path_gain(dmin),
            nodes: split,
            inner_blocked: (b.nlos.gain_lin(dmin), inner_area_m2 * (1.0 - p_in)),
        }
    }

    /// The same field with blockage (or none); β in [0, 1] per m.
    pub fn with_blockage(self, blockage: Option<Blockage>) -> Result<Field, Vec<ModelError>> {
        Field { blockage, ..self }.checked()
    }

    /// Blockage, if any.
    pub fn blockage(&self) -> Option<&Blockage> {
        self.blockage.as_ref()
    }

    /// Probability that a link of length `r_m` is in line of sight (1 without blockage).
    pub fn los_probability(&self, r_m: f64) -> f64 {
        self.blockage.as_ref().map_or(1.0, |b| (-b.beta_per_m * r_m).exp())
    }

    /// ∫_A ℓ(|x|)ⁿ dA by quadrature.
    pub fn path_gain_integral(&self, n: f64, rad: &Radial) -> f64 {
        rad.inner_area_m2 * rad.inner_gain.powf(n)
            + rad.inner_blocked.1 * rad.inner_blocked.0.powf(n)
            + rad.nodes.iter().map(|(_, g, w)| w * g.powf(n)).sum::<f64>()
    }

    /// ∫_A ℓ(|x|)ⁿ dA in closed form, when the model has no absorption:
    /// inside d_min the gain is constant; beyond, 2π K^{−n} (a^{2−nα} − R^{2−nα}) / (nα − 2).
    pub fn path_gain_integral_closed(&self, n: f64) -> Option<f64> {
        if self.pathloss.absorption_db_per_km() > 0.0 || self.blockage.is_some() {
            return None;
        }
        let dmin = self.pathloss.min_distance_m();
        let (a, b) = (self.guard_m, self.radius_m);
        let kinv = db_to_lin(-self.pathloss.loss_at_1m_db());
        let alpha = self.pathloss.exponent();
        let inner_hi = dmin.min(b);
        let inner = if a < inner_hi { PI * (inner_hi * inner_hi - a * a) * self.path_gain(dmin).powf(n) } else { 0.0 };
        let lo = a.max(dmin);
        let outer = if b > lo {
            let e = n * alpha - 2.0;
            let i = if e.abs() < 1e-12 { (b / lo).ln() } else { (lo.powf(-e) - b.powf(-e)) / e };
            2.0 * PI * kinv.powf(n) * i
        } else {
            0.0
        };
        Some(inner + outer)
    }

    /// The n-th cumulant of the aggregate (mWⁿ), closed form where available.
    pub fn cumulant(&self, n: u32, rad: &Radial) -> f64 {
        let nf = n as f64;
        let integral = self.path_gain_integral_closed(nf).unwrap_or_else(|| self.path_gain_integral(nf, rad));
        self.effective_density()
            * self.power_mw.powi(n as i32)
            * self.tx.moment(nf)
            * self.rx.moment(nf)
            * self.fading.moment(n)
            * integral
    }

    /// E\[e^{−t h}\] for complex t with Re t ≥ 0.
    pub fn fading_transform(&self, t: Complex64) -> Complex64 {
        self.fading.laplace_complex(t)
    }

    /// ln L_I(s) = −λ ∫_A (1 − E\[e^{−s P G_t G_r h ℓ}\]) dA for complex s (Re s > 0).
    pub fn log_laplace(&self, s: Complex64, rad: &Radial) -> Complex64 {
        let combos: Vec<(f64, f64)> = self
            .tx
            .levels()
            .iter()
            .flat_map(|&(pt, gt)| self.rx.levels().iter().map(move |&(pr, gr)| (pt * pr, gt * gr)))
            .collect();
        let one_minus = |g: f64| -> Complex64 {
            let mut acc = Complex64::new(0.0, 0.0);
            for &(w, gain) in &combos {
                if w > 0.0 {
                    acc += w * (1.0 - self.fading_transform(s * (self.power_mw * gain * g)));
                }
            }
            acc
        };
        let mut integral = one_minus(rad.inner_gain) * rad.inner_area_m2;
        if rad.inner_blocked.1 > 0.0 {
            integral += one_minus(rad.inner_blocked.0) * rad.inner_blocked.1;
        }
        for &(_, g, w) in &rad.nodes {
            integral += one_minus(g) * w;
        }
        -self.effective_density() * integral
    }

    /// P(I ≤ x) by Euler inversion of L_I(s)/s.
    pub fn cdf(&self, x_mw: f64, euler: &crate::math::laplace::Euler, rad: &Radial) -> f64 {
        if x_mw <= 0.0 {
            return 0.0;
        }
        euler.invert(x_mw, |s| self.log_laplace(s, rad).exp() / s).clamp(0.0, 1.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::pathloss::PowerLaw;

    fn field(alpha: f64, guard: f64, radius: f64) -> Field {
        Field {
            density_per_m2: 1e-4,
            keep: 1.0,
            hard_core_m: 0.0,
            guard_m: guard,
            radius_m: radius,
            power_mw: 1.0,
            tx: GainLaw::two_level(1.0, 0.0, 0.0),
            rx: GainLaw::two_level(1.0, 0.0, 0.0),
            fading: Fading::RAYLEIGH,
            pathloss: PathLoss::new(PowerLaw::new(alpha, 0.0).unwrap(), 2.0, 0.0, 1e-3).unwrap(),
            blockage: None,
        }
    }

    // Closed-form cumulants on an annulus (Campbell; hand integration in the module docs)
    // against the quadrature, for several n and exponents.
    #[test]
    fn closed_form_cumulant_integrals_match_quadrature() {
        for (alpha, guard, radius) in [(3.0, 10.0, 2000.0), (4.0, 0.5, 500.0), (2.5, 0.0, 1000.0)] {
            let f = field(alpha, guard, radius);
            let rad = f.radial();
            for n in [1.0, 2.0, 3.0, 4.0] {
                let c = f.path_gain_integral_closed(n).unwrap();
                let q = f.path_gain_integral(n, &rad);
                assert!((c - q).abs() < 1e-9 * c, "α {alpha} n {n}: {c} vs {q}");
            }
        }
    }

    // Haenggi 2012 (§5.1) / Baccelli, Błaszczyszyn and Mühlethaler 2006: Rayleigh success
    // probability at distance r with threshold T, no noise, equals L_I(T r^α / G₀); on a
    // 2 km disc with λ = 1e−4 m⁻², r = 20 m, T = 0 dB: 0.820879 (α = 4) and 0.739788 (α = 3);
    // on the infinite plane 0.820869 and 0.737931 (docs/reference-values.md, numpy).
    #[test]
    fn rayleigh_success_probability_haenggi() {
        for (alpha, disc, plane) in [(4.0, 0.820879, 0.820869), (3.0, 0.739788, 0.737931)] {
            let f = field(alpha, 0.0, 2000.0);
            let s = 20f64.powf(alpha);
            let p = f.log_laplace(Complex64::new(s, 0.0), &f.radial()).exp().re;
            assert!((p - disc).abs() < 2e-5, "α {alpha}: {p} vs {disc}");
            let delta = 2.0 / alpha;
            let closed = (-1e-4
                * PI
                * 400.0
                * statrs::function::gamma::gamma(1.0 + delta)
                * statrs::function::gamma::gamma(1.0 - delta))
            .exp();
            assert!((closed - plane).abs() < 1e-6);
        }
    }
}
