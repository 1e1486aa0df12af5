"""Peer for the availability layer: the same per-cell ITU-R P.530-17 inversion (P.838-3
coefficients already combined per server, distance factor, quadratic root in log10 p) written
with whole-array float32 numpy operations on 1 001 000 cells, single thread. Prints cells per
second, to set beside the engine's added cost per cell (`cargo bench --bench weather`).
Run: OMP_NUM_THREADS=1 python3 benches/numpy_availability.py"""
import time
import numpy as np

rng = np.random.default_rng(1)
n = 1_001_000
d2 = rng.uniform(100.0, 4000.0, n).astype(np.float32) ** 2
w2 = d2 - np.float32(18.5 ** 2)
sinr = rng.uniform(-10.0, 40.0, n).astype(np.float32)
kh, kv, kah, kav, ct = (np.float32(v) for v in (0.2051, 0.1964, 0.1985, 0.1822, -1.0))
log2r, f_term = np.float32(np.log2(42.0)), np.float32(0.477 * 28.0 ** 0.123)
c0 = 0.12 + 0.4 * np.log10(2.8) ** 0.8
c1, c2, c3 = 0.07 ** c0 * 0.12 ** (1 - c0), 0.855 * c0 + 0.546 * (1 - c0), 0.139 * c0 + 0.043 * (1 - c0)
lc1, c2, c3 = np.float32(np.log10(c1)), np.float32(c2), np.float32(c3)
best = None
for _ in range(5):
    t0 = time.perf_counter()
    m = sinr - np.float32(5.0)
    w = w2 / d2 * ct
    k = np.float32(0.5) * (kh + kv + (kh - kv) * w)
    alpha = np.float32(0.5) * (kah + kav + (kah - kav) * w) / k
    d_km = np.sqrt(d2) * np.float32(1e-3)
    gamma = k * np.exp2(alpha * log2r)
    den = f_term * np.exp2(np.float32(0.633) * np.log2(d_km) + np.float32(0.073) * alpha * log2r) - np.float32(10.579) * (
        np.float32(1.0) - np.exp(np.float32(-0.024) * d_km)
    )
    r = np.where(den < 0.4, np.float32(2.5), np.float32(1.0) / den)
    a001 = gamma * d_km * r
    with np.errstate(invalid="ignore", divide="ignore"):
        y = np.log10(np.maximum(m, np.float32(1e-6)) / a001) - lc1
        disc = c2 * c2 - np.float32(4.0) * c3 * y
        x = np.where(disc < 0, np.float32(-3.0), np.clip((np.sqrt(np.maximum(disc, 0)) - c2) / (2 * c3), -3.0, 0.0))
    avail = np.where(m > 0, np.float32(100.0) - np.power(np.float32(10.0), x), np.float32(0.0))
    dt = time.perf_counter() - t0
    best = dt if best is None else min(best, dt)
print(f"numpy {np.__version__}: availability of {n} cells in {best:.3f} s (best of 5): {n / best:.3e} cells/s")
