"""End-to-end peer for `lobemap map`: a straightforward vectorised numpy float32 script
computing the four mean layers (total received power, best server, interference, SINR) of
2,000 sector nodes over about 464k cells, against `lobemap map` with its default layers
(total, interference, sinr, server, coverage; GeoTIFFs, PNGs, sheets, hot spots, KMZ,
summary) on the same invented layout, timed in the same run.

Run (after `cargo build --release`):
    OMP_NUM_THREADS=1 python3 benches/numpy_map.py [--nodes 2000] [--runs 3]

The script writes the scenario (free space at 28 GHz, 65-degree sectors of 15/-5 dBi, 20 dBm,
10 m masts, a 1.5 m omni receiver, no fading) and a seeded node file into a temporary folder,
runs `target/release/lobemap map` on it, then computes the same layers with numpy on the
grid's cell centres (an equirectangular local plane, which matches lobemap's tangent plane
to well under a cell over 3.4 km) and compares the total layer with lobemap's GeoTIFF when
GDAL's Python bindings or rasterio are installed (optional).
"""
import json
import math
import os
import subprocess
import sys
import tempfile
import time

import numpy as np

args = sys.argv[1:]
n_nodes = int(args[args.index("--nodes") + 1]) if "--nodes" in args else 2000
runs = int(args[args.index("--runs") + 1]) if "--runs" in args else 3
root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
exe = os.path.join(root, "target", "release", "lobemap")

# An invented square of about 3.4 km at 5 m cells near (0.3 E, 44.2 N): 682 x 681 cells.
lat0, lon0 = 44.2, 0.3
cell = 5.0
m_per_deg_lat = 111_132.954 - 559.822 * math.cos(2 * math.radians(lat0))  # common practice
m_per_deg_lon = 111_412.84 * math.cos(math.radians(lat0))
half = 1700.0
west, east = lon0 - half / m_per_deg_lon, lon0 + half / m_per_deg_lon
south, north = lat0 - half / m_per_deg_lat, lat0 + half / m_per_deg_lat

rng = np.random.default_rng(12)
nx = rng.uniform(-half, half, n_nodes)
ny = rng.uniform(-half, half, n_nodes)
az = rng.uniform(0, 360, n_nodes)

d = tempfile.mkdtemp()
feats = []
for i in range(n_nodes):
    lon, lat = lon0 + nx[i] / m_per_deg_lon, lat0 + ny[i] / m_per_deg_lat
    feats.append({"type": "Feature", "geometry": {"type": "Point", "coordinates": [lon, lat]},
                  "properties": {"id": f"S{i}", "azimuth_deg": float(az[i])}})
with open(os.path.join(d, "nodes.geojson"), "w") as f:
    json.dump({"type": "FeatureCollection", "features": feats}, f)
with open(os.path.join(d, "s.toml"), "w") as f:
    f.write(f"""name = "numpy-peer"
nodes = "nodes.geojson"
[radio]
frequency_ghz = 28
bandwidth_mhz = 400
noise_figure_db = 7
[propagation]
model = "free-space"
[antenna]
pattern = "sector"
beamwidth_deg = 65
gain_dbi = 15
sidelobe_dbi = -5
power_dbm = 20
height_m = 10
activity = 1
[receiver]
height_m = 1.5
[grid]
cell_m = {cell}
bbox = [{west}, {south}, {east}, {north}]
""")

lob = []
for r in range(runs):
    out = os.path.join(d, f"out{r}")
    t0 = time.perf_counter()
    subprocess.run([exe, "map", os.path.join(d, "s.toml"), "--out", out, "--quiet"], check=True)
    lob.append(time.perf_counter() - t0)
    summary = json.load(open(os.path.join(out, "summary.json")))
cols, rows = summary["cols"], summary["rows"]
cells = cols * rows
engine_s = summary["elapsed_s"]

# numpy: cell centres in metres east and north of (lon0, lat0), as lobemap's grid puts them.
g_west, g_south, g_east, g_north = summary["bbox"]
dlon, dlat = (g_east - g_west) / cols, (g_north - g_south) / rows
xs = ((g_west + (np.arange(cols) + 0.5) * dlon) - lon0) * m_per_deg_lon
ys = ((g_north - (np.arange(rows) + 0.5) * dlat) - lat0) * m_per_deg_lat
gx, gy = np.meshgrid(xs.astype(np.float32), ys.astype(np.float32))
gx, gy = gx.ravel(), gy.ravel()
wavelength = 299_792_458.0 / 28e9
k_fs = np.float32((wavelength / (4 * math.pi)) ** 2)  # Friis: (lambda / 4 pi d)^2
p_tx = np.float32(10 ** (20 / 10))  # mW
g_main, g_side = np.float32(10 ** 1.5), np.float32(10 ** -0.5)
cc = np.float32(math.cos(math.radians(65 / 2)) ** 2)
bx = np.sin(np.radians(az)).astype(np.float32)
by = np.cos(np.radians(az)).astype(np.float32)
nxf, nyf = nx.astype(np.float32), ny.astype(np.float32)
dz2 = np.float32((10 - 1.5) ** 2)
noise_mw = np.float32(10 ** ((-174 + 10 * math.log10(400e6) + 7) / 10))

best_np = []
for r in range(runs):
    t0 = time.perf_counter()
    total = np.zeros(cells, np.float32)
    best = np.zeros(cells, np.float32)
    server = np.full(cells, -1, np.int32)
    for i in range(n_nodes):
        wx = gx - nxf[i]
        wy = gy - nyf[i]
        w2 = wx * wx + wy * wy
        t = bx[i] * wx + by[i] * wy
        g = np.where(t * np.abs(t) >= cc * w2, g_main, g_side)
        p = p_tx * k_fs * g / np.maximum(w2 + dz2, np.float32(1.0))
        total += p
        better = p > best
        best = np.where(better, p, best)
        server = np.where(better, np.int32(i), server)
    interference = total - best
    total_dbm = 10 * np.log10(total)
    interf_dbm = 10 * np.log10(np.maximum(interference, np.float32(1e-30)))
    sinr_db = 10 * np.log10(best / (interference + noise_mw))
    best_np.append(time.perf_counter() - t0)

pairs = n_nodes * cells
print(f"{n_nodes} sector nodes over {cols} x {rows} = {cells} cells ({pairs:.3e} pairs)")
print(f"lobemap map (default layers, every file written), end to end: {', '.join(f'{t:.2f}' for t in lob)} s "
      f"(engine {engine_s:.2f} s in the last run)")
print(f"numpy {np.__version__} float32, total/server/interference/SINR: {', '.join(f'{t:.2f}' for t in best_np)} s "
      f"({pairs / min(best_np):.3e} pairs/s)")
print(f"lobemap end to end is {min(best_np) / min(lob):.1f}x faster than numpy (best of {runs} each)")

try:
    import rasterio
    with rasterio.open(os.path.join(d, f"out{runs - 1}", "total.tif")) as src:
        lt = src.read(1).ravel()
    diff = np.abs(lt - total_dbm)
    print(f"total layer, lobemap against numpy: median |diff| {np.median(diff):.4f} dB, 99th percentile {np.percentile(diff, 99):.4f} dB")
except ImportError:
    print("rasterio not installed: no layer comparison")
