"""Builds the invented Harbourlight Quay demo site (a made-up 60 GHz waterfront mesh on made-up
land): nodes.geojson, buildings.geojson, context.geojson and ground.tif. Deterministic: run
`python3 make_site.py` (needs pyproj, for the ground model's UTM grid) to rebuild the committed
files. No real place, survey or operator is behind any of it."""
import json, math, struct, zlib
from pyproj import Transformer

LAT0, LON0 = 45.500, -4.800          # an invented quay in open water: no real site
M_PER_DEG_LAT = 111_132.0
M_PER_DEG_LON = 111_320.0 * math.cos(math.radians(LAT0))

def geo(e, n):
    return [round(LON0 + e / M_PER_DEG_LON, 7), round(LAT0 + n / M_PER_DEG_LAT, 7)]

def quay(t):
    """Quay line: a gentle S-curve 2.2 km long, t in [0, 1]."""
    e = -1100 + 2200 * t
    n = 180 * math.sin(2.4 * math.pi * t)
    return e, n

def bearing(a, b):
    return (math.degrees(math.atan2(b[0] - a[0], b[1] - a[1])) + 360) % 360

feats = []
def add(id_, pos, props):
    p = {"id": id_}
    p.update(props)
    feats.append({"type": "Feature", "geometry": {"type": "Point", "coordinates": geo(*pos)}, "properties": p})

# Backbone: 12 poles along the quay, linked in mutual pairs with narrow parabolic dishes.
bb = [quay(k / 11) for k in range(12)]
bb = [(e, n + 25) for e, n in bb]
for k, pos in enumerate(bb):
    mate = k + 1 if k % 2 == 0 else k - 1
    az = bearing(pos, bb[mate])
    if k == 7:
        az += 4.0                      # a deliberately misaligned dish (shows up in link checks)
    # Channel plan: the six backbone pairs alternate between channels a and c of the 2.16 GHz
    # raster, neighbouring pairs on the same channel on opposite polarisations.
    pair = k // 2
    add(f"BB{k+1:02d}", pos, {"name": f"Quay pole {k+1}", "pattern": "parabolic", "beamwidth_deg": 2.5,
        "gain_dbi": 36.0, "sidelobe_dbi": -4.0, "power_dbm": 8.0, "height_m": 9.0, "activity": 0.8,
        "azimuth_deg": round(az % 360, 2), "peer": f"BB{mate+1:02d}",
        "channel": "a" if pair % 2 == 0 else "c", "polarisation": "V" if pair % 4 < 2 else "H"})

# Access: 24 lamp-post sectors, alternating between facing inland (north) and the water.
acc = []
for k in range(24):
    t = (k + 0.5) / 24
    e, n = quay(t)
    inland = k % 2 == 0
    pos = (e + 12 * math.sin(k), n + (60 if inland else -20))
    base = 0 if inland else 180
    az = (base + 25 * math.sin(1.7 * k)) % 360
    acc.append(pos)
    # Access on channel b, inland and water-facing sectors on opposite polarisations.
    add(f"LP{k+1:02d}", pos, {"azimuth_deg": round(az, 1), "height_m": 5.0, "channel": "b",
        "polarisation": "V" if inland else "H"})

# Subscriber terminals: 8 aimed at a lamp-post sector, low duty cycle. Each sits 80-110 m out
# inside its host's 60-degree sector (within 15 degrees of its boresight), except ST05, which
# is deliberately mounted behind its host's sector (a fault the link check must show).
acc_az = [f["properties"]["azimuth_deg"] for f in feats if f["properties"]["id"].startswith("LP")]
for k in range(8):
    host = 2 * k + (k % 2)
    hx, hy = acc[host]
    off = 12 * math.sin(2.3 * k)                       # degrees off the host's boresight
    if k == 4:
        off = 150                                      # the deliberate fault: behind the sector
    d = 95 + 15 * math.cos(1.3 * k)
    a = math.radians(acc_az[host] + off)
    pos = (hx + d * math.sin(a), hy + d * math.cos(a))
    add(f"ST{k+1:02d}", pos, {"pattern": "sector", "beamwidth_deg": 20.0, "gain_dbi": 24.0, "sidelobe_dbi": -6.0,
        "power_dbm": 12.0, "height_m": 3.0, "activity": 0.3, "azimuth_deg": round(bearing(pos, (hx, hy)), 1),
        "peer": f"LP{host+1:02d}", "channel": "b", "polarisation": "V" if host % 2 == 0 else "H"})

# Two access sectors on the roof of the Lanternlight Hotel (see the buildings below), 3 m masts.
HOTEL = quay(0.6)
HOTEL = (HOTEL[0], HOTEL[1] + 135)
HOTEL_H = 32.0
for k, az in enumerate([200.0, 320.0]):
    add(f"HR{k+1:02d}", (HOTEL[0] - 8 + 16 * k, HOTEL[1]), {"name": f"Hotel roof {k+1}", "azimuth_deg": az,
        "height_m": HOTEL_H + 3.0, "channel": "d", "polarisation": "V"})

# ---- The land -------------------------------------------------------------------------
# The quay edge runs 40 m south of the quay line; south of it is water (0 m). The apron is
# flat at 2.5 m for 40 m either side of the line; inland a gentle hillside rises 35 m over
# 600 m. Beyond 250 m out the survey has no values (nodata; the scenario fills it at 0 m).
def shore_n(e):
    return quay((e + 1100) / 2200)[1] if -1100 <= e <= 1100 else 180 * math.sin(2.4 * math.pi * ((e + 1100) / 2200))

def ground(e, n):
    d = n - shore_n(e)
    if d < -250:
        return None
    if d < -40:
        return 0.0
    if d <= 40:
        return 2.5
    x = min(1.0, (d - 40) / 600)
    return 2.5 + 35.0 * (3 * x * x - 2 * x * x * x)

# ---- Buildings ------------------------------------------------------------------------
bfeats = []
def rect(centre, along, length, width):
    """Corners of a length x width rectangle centred at `centre`, its long side along `along` (deg)."""
    a = math.radians(along)
    ux, uy = math.sin(a), math.cos(a)
    vx, vy = uy, -ux
    pts = []
    for sl, sw in [(-1, -1), (1, -1), (1, 1), (-1, 1), (-1, -1)]:
        pts.append((centre[0] + sl * ux * length / 2 + sw * vx * width / 2,
                    centre[1] + sl * uy * length / 2 + sw * vy * width / 2))
    return pts

def building(name, pts, h, note=None):
    props = {"name": name, "height_m": h}
    if note:
        props["note"] = note
    bfeats.append({"type": "Feature", "geometry": {"type": "Polygon", "coordinates": [[geo(*p) for p in pts]]},
                   "properties": props, "_pts": pts})

def mid(a, b):
    return ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)

# Warehouse 3 stands across the chord of backbone link BB05-BB06: that link is blocked.
building("Warehouse 3", rect(mid(bb[4], bb[5]), bearing(bb[4], bb[5]), 60, 22), 11.0, "blocks BB05-BB06")
# A low shed under the chord of BB09-BB10: the ray clears it by about 0.2 m, less than 60 %
# of the first Fresnel zone (about 0.5 m there at 60 GHz).
building("Net shed", rect(mid(bb[8], bb[9]), bearing(bb[8], bb[9]), 24, 8), 8.8, "marginal clearance under BB09-BB10")
# Other warehouses along the quay, clear of the backbone chords.
for k, t in enumerate([0.12, 0.27, 0.55, 0.86]):
    e, n = quay(t)
    building(f"Warehouse {[1, 2, 4, 5][k]}", rect((e, n + 95), bearing(quay(t - 0.01), quay(t + 0.01)), 50, 24), 11.0)
building("Lanternlight Hotel", rect(HOTEL, 90, 44, 30), HOTEL_H)
# Houses on the hillside: rows of 12 x 10 m, 8 m high.
for i in range(-9, 10):
    for j in range(3):
        e = 110 * i + 30 * j
        n = shore_n(e) + 190 + 70 * j
        building(f"House {i + 10}-{j + 1}", rect((e, n), 90, 12, 10), 8.0)

def inside(p, pts):
    x, y = p
    c = False
    for (x1, y1), (x2, y2) in zip(pts, pts[1:]):
        if (y1 > y) != (y2 > y) and x < x1 + (y - y1) * (x2 - x1) / (y2 - y1):
            c = not c
    return c

# A terminal that lands on a building goes on its roof (2 m above it); a pole or lamp post
# there would be a layout error, so none may.
for f in feats:
    lon, lat = f["geometry"]["coordinates"]
    p = ((lon - LON0) * M_PER_DEG_LON, (lat - LAT0) * M_PER_DEG_LAT)
    for b in bfeats:
        if inside(p, b["_pts"]):
            pid = f["properties"]["id"]
            if pid.startswith("ST"):
                f["properties"]["height_m"] = b["properties"]["height_m"] + 2.0
                f["properties"]["name"] = f"Rooftop terminal on {b['properties']['name']}"
            elif not pid.startswith("HR"):
                raise SystemExit(f"{pid} stands inside {b['properties']['name']}")
for b in bfeats:
    del b["_pts"]

json.dump({"type": "FeatureCollection", "features": feats}, open("nodes.geojson", "w"), indent=1)
json.dump({"type": "FeatureCollection", "features": bfeats}, open("buildings.geojson", "w"), indent=1)

# ---- context.geojson: lines a crew places the map by (drawn beneath the sheets only) -------
# The quay edge (40 m seaward of the quay line, where the ground model drops to the water), the
# quay road behind the apron, and two lanes between the rows of houses on the hillside.
def line(name, offset):
    pts = [geo(e, shore_n(e) + offset) for e in range(-1400, 1401, 20)]
    return {"type": "Feature", "geometry": {"type": "LineString", "coordinates": pts}, "properties": {"name": name}}
cfeats = [line("Quay edge", -40), line("Quay road", 60), line("Upper lane", 225), line("Top lane", 295)]
json.dump({"type": "FeatureCollection", "features": cfeats}, open("context.geojson", "w"), indent=1)

# ---- ground.tif: float32, 5 m pixels in UTM zone 30N (EPSG:32630), DEFLATE ----------------
to_utm = Transformer.from_crs(4326, 32630, always_xy=True)
to_ll = Transformer.from_crs(32630, 4326, always_xy=True)
lons = [f["geometry"]["coordinates"][0] for f in feats]
lats = [f["geometry"]["coordinates"][1] for f in feats]
xs, ys = to_utm.transform([min(lons), max(lons), min(lons), max(lons)], [min(lats), min(lats), max(lats), max(lats)])
PIX, MARGIN = 5.0, 400.0
x0 = math.floor((min(xs) - MARGIN) / PIX) * PIX
y0 = math.ceil((max(ys) + MARGIN) / PIX) * PIX
w = int(math.ceil((max(xs) + MARGIN - x0) / PIX))
h = int(math.ceil((y0 - (min(ys) - MARGIN)) / PIX))
NODATA = -9999.0
rows = bytearray()
for r in range(h):
    yy = [y0 - (r + 0.5) * PIX] * w
    xx = [x0 + (c + 0.5) * PIX for c in range(w)]
    lo, la = to_ll.transform(xx, yy)
    for c in range(w):
        z = ground((lo[c] - LON0) * M_PER_DEG_LON, (la[c] - LAT0) * M_PER_DEG_LAT)
        rows += struct.pack("<f", NODATA if z is None else z)
data = zlib.compress(bytes(rows), 9)
nodata = b"-9999\0"
geokeys = [1, 1, 0, 4, 1024, 0, 1, 1, 1025, 0, 1, 1, 3072, 0, 1, 32630, 3076, 0, 1, 9001]
entries = []  # (tag, type, count, payload bytes)
def e(tag, typ, vals):
    fmt = {3: "H", 4: "I", 12: "d", 2: "s"}[typ]
    if typ == 2:
        entries.append((tag, typ, len(vals), vals))
    else:
        entries.append((tag, typ, len(vals), struct.pack("<" + fmt * len(vals), *vals)))
e(256, 4, [w]); e(257, 4, [h]); e(258, 3, [32]); e(259, 3, [8]); e(262, 3, [1])
e(273, 4, [0]); e(277, 3, [1]); e(278, 4, [h]); e(279, 4, [len(data)]); e(339, 3, [3])
e(33550, 12, [PIX, PIX, 0.0]); e(33922, 12, [0.0, 0.0, 0.0, x0, y0, 0.0])
e(34735, 3, geokeys); e(42113, 2, nodata)
entries.sort()
ifd_off = 8
ifd_len = 2 + 12 * len(entries) + 4
extra_off = ifd_off + ifd_len
extra = bytearray()
body = bytearray()
placed = []
for tag, typ, count, payload in entries:
    if len(payload) <= 4:
        placed.append((tag, typ, count, payload.ljust(4, b"\0")))
    else:
        placed.append((tag, typ, count, struct.pack("<I", extra_off + len(extra))))
        extra += payload
        if len(extra) % 2:
            extra += b"\0"
strip_off = extra_off + len(extra)
out = bytearray(b"II*\0" + struct.pack("<I", ifd_off) + struct.pack("<H", len(placed)))
for tag, typ, count, val in placed:
    if tag == 273:
        val = struct.pack("<I", strip_off)
    out += struct.pack("<HHI", tag, typ, count) + val
out += struct.pack("<I", 0) + extra + data
open("ground.tif", "wb").write(out)
print(len(feats), "nodes,", len(bfeats), "buildings, ground", w, "x", h, "pixels")
