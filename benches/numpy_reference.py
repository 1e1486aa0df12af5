"""Reference: a straightforward vectorised numpy version of the `total` layer kernel
(sector pattern, exponent 2), float32, single thread. Prints pair evaluations per second.
Run: OMP_NUM_THREADS=1 python3 benches/numpy_reference.py"""
import time
import numpy as np

rng = np.random.default_rng(1)
n_nodes, side = 200, 1000
half = 2000.0
nx = rng.uniform(-half, half, n_nodes).astype(np.float32)
ny = rng.uniform(-half, half, n_nodes).astype(np.float32)
az = np.radians(rng.uniform(0, 360, n_nodes))
bx, by = np.sin(az).astype(np.float32), np.cos(az).astype(np.float32)
cc = np.float32(np.cos(np.radians(15)) ** 2)
p_main, p_side = np.float32(1e2), np.float32(10 ** -0.5)
xs = np.linspace(-half, half, side, dtype=np.float32)
gx, gy = np.meshgrid(xs, xs)
gx, gy = gx.ravel(), gy.ravel()
dz2 = np.float32(4.5 ** 2)
total = np.zeros_like(gx)
t0 = time.perf_counter()
for i in range(n_nodes):
    wx = gx - nx[i]
    wy = gy - ny[i]
    w2 = wx * wx + wy * wy
    t = bx[i] * wx + by[i] * wy
    g = np.where(t * np.abs(t) >= cc * w2, p_main, p_side)
    total += g / np.maximum(w2 + dz2, np.float32(1.0))
dt = time.perf_counter() - t0
print(f"numpy {np.__version__}: {n_nodes} nodes x {gx.size} cells in {dt:.2f} s: {n_nodes * gx.size / dt:.3e} pair evaluations/s")
