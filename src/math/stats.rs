//! Order statistics of a layer without copying it: a histogram with 0.01 dB bins.

use crate::NODATA;

const LO: f64 = -400.0;
const HI: f64 = 200.0;
const BIN: f64 = 0.01;

/// Histogram of a layer's defined values (dB units), for percentiles at 0.01 dB resolution.
pub struct Histogram {
    counts: Vec<u64>,
    n: u64,
    max: f32,
}

impl Histogram {
    /// Builds the histogram of every value that is not [`NODATA`] or NaN.
    pub fn of(data: &[f32]) -> Histogram {
        Self::of_scaled(data, 1.0)
    }

    /// Like [`Self::of`] for values multiplied by `scale` (e.g. 100 for probabilities, so the
    /// resolution is 1e−4); quantiles and the maximum come back in the scaled unit.
    pub fn of_scaled(data: &[f32], scale: f32) -> Histogram {
        let nb = ((HI - LO) / BIN) as usize;
        let mut counts = vec![0u64; nb];
        let (mut n, mut max) = (0u64, f32::MIN);
        for &v in data {
            if v == NODATA || !v.is_finite() {
                continue;
            }
            let v = v * scale;
            let k = (((v as f64 - LO) / BIN + 1e-6).floor().max(0.0) as usize).min(nb - 1);
            counts[k] += 1;
            n += 1;
            max = max.max(v);
        }
        Histogram { counts, n, max }
    }

    /// Number of defined values.
    pub fn len(&self) -> u64 {
        self.n
    }

    /// Whether no value is defined.
    pub fn is_empty(&self) -> bool {
        self.n == 0
    }

    /// Largest value.
    pub fn max(&self) -> Option<f64> {
        (self.n > 0).then_some(self.max as f64)
    }

    /// The q-quantile (0..1) as the centre of the bin holding the value of rank
    /// ⌈q·n⌉ (nearest-rank definition): within 0.005 of the exact value.
    pub fn quantile(&self, q: f64) -> Option<f64> {
        if self.n == 0 {
            return None;
        }
        let rank = ((q * self.n as f64 - 1e-9).ceil() as u64).clamp(1, self.n);
        let mut acc = 0;
        for (k, c) in self.counts.iter().enumerate() {
            acc += c;
            if acc >= rank {
                return Some(LO + (k as f64 + 0.5) * BIN);
            }
        }
        None
    }

    /// Fraction of defined values at or above `x` (to the bin resolution).
    pub fn fraction_at_least(&self, x: f64) -> Option<f64> {
        if self.n == 0 {
            return None;
        }
        let k0 = (((x - LO) / BIN).floor().max(0.0) as usize).min(self.counts.len());
        let above: u64 = self.counts[k0..].iter().sum();
        Some(above as f64 / self.n as f64)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Nearest-rank percentile definition (NIST/SEMATECH e-Handbook, percentiles; common
    // practice): of 1..=100 dB, p10 = 10, p50 = 50, p90 = 90.
    #[test]
    fn nearest_rank_quantiles() {
        let v: Vec<f32> = (1..=100).map(|x| x as f32).chain([NODATA, f32::NAN]).collect();
        let h = Histogram::of(&v);
        assert_eq!(h.len(), 100);
        assert!((h.quantile(0.1).unwrap() - 10.0).abs() <= 0.006);
        assert!((h.quantile(0.5).unwrap() - 50.0).abs() <= 0.006);
        assert!((h.quantile(0.9).unwrap() - 90.0).abs() <= 0.006);
        assert_eq!(h.max(), Some(100.0));
        assert!((h.fraction_at_least(91.0).unwrap() - 0.10).abs() < 1e-12);
    }
}
