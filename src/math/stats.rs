//! Order statistics of a layer without copying it: a histogram with 0.01 dB bins.

use crate::NODATA;

const LO: f64 = -400.0;
const HI: f64 = 200.0;
const BIN: f64 = 0.01;

/// Histogram of a layer's defined values (dB units), for percentiles at 0.01 dB resolution.
/// Histograms of parts of a layer (tiles) merge into the histogram of the whole
/// ([`Histogram::merge`]), so percentiles of a tiled map are exact; they are stored as their
/// non-empty bins.
#[derive(Clone, serde::Serialize, serde::Deserialize)]
#[serde(into = "SparseHistogram", try_from = "SparseHistogram")]
pub struct Histogram {
    counts: Vec<u64>,
    n: u64,
    max: f32,
}

/// A histogram as stored: its count, maximum and non-empty bins (index, count).
#[derive(serde::Serialize, serde::Deserialize)]
struct SparseHistogram {
    n: u64,
    max: f32,
    bins: Vec<(u32, u64)>,
}

impl From<Histogram> for SparseHistogram {
    fn from(h: Histogram) -> Self {
        let bins = h.counts.iter().enumerate().filter(|(_, c)| **c > 0).map(|(k, c)| (k as u32, *c)).collect();
        SparseHistogram { n: h.n, max: h.max, bins }
    }
}

impl TryFrom<SparseHistogram> for Histogram {
    type Error = String;
    fn try_from(s: SparseHistogram) -> Result<Self, String> {
        let mut counts = vec![0u64; bins()];
        for (k, c) in s.bins {
            *counts.get_mut(k as usize).ok_or(format!("bin {k} is outside the histogram's {} bins", bins()))? += c;
        }
        if counts.iter().sum::<u64>() != s.n {
            return Err(format!("bin counts do not add up to n = {}", s.n));
        }
        Ok(Histogram { counts, n: s.n, max: s.max })
    }
}

fn bins() -> usize {
    ((HI - LO) / BIN) as usize
}

impl Histogram {
    /// Adds the values of `other` (the histogram of the union of both data sets).
    pub fn merge(&mut self, other: &Histogram) {
        self.counts.iter_mut().zip(&other.counts).for_each(|(a, b)| *a += b);
        self.n += other.n;
        self.max = self.max.max(other.max);
    }

    /// Builds the histogram of every value that is not [`NODATA`] or NaN.
    pub fn of(data: &[f32]) -> Histogram {
        Self::of_scaled(data, 1.0)
    }

    /// Like [`Self::of`] for values multiplied by `scale` (e.g. 100 for probabilities, so the
    /// resolution is 1e−4); quantiles and the maximum come back in the scaled unit.
    pub fn of_scaled(data: &[f32], scale: f32) -> Histogram {
        let nb = bins();
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

    /// Merging the histograms of two halves gives the histogram of the whole, through the
    /// stored form (a tiled map's percentiles are those of the whole map).
    #[test]
    fn halves_merge_into_the_whole() {
        let v: Vec<f32> = (0..1000).map(|x| -90.0 + (x as f32 * 0.37) % 41.0).collect();
        let whole = Histogram::of(&v);
        let mut a = Histogram::of(&v[..313]);
        let b: Histogram = serde_json::from_str(&serde_json::to_string(&Histogram::of(&v[313..])).unwrap()).unwrap();
        a.merge(&b);
        assert_eq!(a.counts, whole.counts);
        assert_eq!((a.n, a.max), (whole.n, whole.max));
        for q in [0.1, 0.5, 0.9] {
            assert_eq!(a.quantile(q), whole.quantile(q));
        }
    }
}
