//! Planning answers from a random field: the highest density and the smallest guard radius
//! that keep P(I > budget) within an outage, from the exact law and from the gamma fit alone.

use crate::model::units::dbm_to_mw;
use crate::random::characterise::{Exact, GammaFit};
use crate::random::field::Field;
use serde::Serialize;

/// A planning answer: the value found from the exact distribution and from the gamma fit.
#[derive(Debug, Clone, Serialize)]
pub struct PlanAnswer {
    /// What was searched (`max_density_per_km2` or `min_guard_m`).
    pub quantity: String,
    /// Answer from the exact distribution (None: no value meets the target in range).
    pub exact: Option<f64>,
    /// Answer the gamma approximation alone would give.
    pub gamma: Option<f64>,
    /// gamma − exact.
    pub difference: Option<f64>,
    /// Budget, dBm.
    pub budget_dbm: f64,
    /// Allowed outage P(I > budget).
    pub outage: f64,
}

fn bisect(mut lo: f64, mut hi: f64, ok: impl Fn(f64) -> bool, geometric: bool) -> f64 {
    // Invariant: ok(lo) is true, ok(hi) false.
    for _ in 0..60 {
        let mid = if geometric && lo > 0.0 { (lo * hi).sqrt() } else { (lo + hi) / 2.0 };
        if ok(mid) {
            lo = mid;
        } else {
            hi = mid;
        }
        if (hi - lo) <= 1e-6 * hi.abs().max(1e-12) {
            break;
        }
    }
    lo
}

/// P(I > x) by the moment-matched gamma alone.
fn gamma_sf(f: &Field, x_mw: f64) -> f64 {
    let rad = f.radial();
    GammaFit::from_cumulants(f.cumulant(1, &rad), f.cumulant(2, &rad)).sf(x_mw)
}

/// The highest parent density (per km²) with P(I > budget) ≤ outage.
pub fn max_density(field: &Field, budget_dbm: f64, outage: f64) -> PlanAnswer {
    let x = dbm_to_mw(budget_dbm);
    let with = |d: f64| Field { density_per_m2: d / 1e6, ..field.clone() };
    let exact_ok = |d: f64| Exact::new(&with(d)).sf(x) <= outage;
    let gamma_ok = |d: f64| gamma_sf(&with(d), x) <= outage;
    let search = |ok: &dyn Fn(f64) -> bool| -> Option<f64> {
        let mut hi = (field.density_per_m2 * 1e6).max(1e-3);
        let mut lo = hi;
        if ok(hi) {
            let mut n = 0;
            while ok(hi) {
                lo = hi;
                hi *= 4.0;
                n += 1;
                if n > 30 {
                    return None; // met at any density in range (e.g. a saturating hard core)
                }
            }
        } else {
            let mut n = 0;
            while !ok(lo) {
                hi = lo;
                lo /= 4.0;
                n += 1;
                if n > 40 {
                    return Some(0.0);
                }
            }
        }
        Some(bisect(lo, hi, ok, true))
    };
    let exact = search(&exact_ok);
    let gamma = search(&gamma_ok);
    PlanAnswer {
        quantity: "max_density_per_km2".into(),
        exact,
        gamma,
        difference: exact.zip(gamma).map(|(e, g)| g - e),
        budget_dbm,
        outage,
    }
}

/// The smallest guard radius (m) with P(I > budget) ≤ outage at the field's density.
pub fn min_guard(field: &Field, budget_dbm: f64, outage: f64) -> PlanAnswer {
    let x = dbm_to_mw(budget_dbm);
    let with = |g: f64| Field { guard_m: g, ..field.clone() };
    let exact_ok = |g: f64| Exact::new(&with(g)).sf(x) <= outage;
    let gamma_ok = |g: f64| gamma_sf(&with(g), x) <= outage;
    let r = field.radius_m;
    let search = |ok: &dyn Fn(f64) -> bool| -> Option<f64> {
        if ok(0.0) {
            return Some(0.0);
        }
        let top = r * 0.999;
        if !ok(top) {
            return None;
        }
        // ok(guard) is false below the answer and true above: bisect on u = top − guard.
        Some(top - bisect(0.0, top, |u| ok(top - u), false))
    };
    let exact = search(&exact_ok);
    let gamma = search(&gamma_ok);
    PlanAnswer {
        quantity: "min_guard_m".into(),
        exact,
        gamma,
        difference: exact.zip(gamma).map(|(e, g)| g - e),
        budget_dbm,
        outage,
    }
}
