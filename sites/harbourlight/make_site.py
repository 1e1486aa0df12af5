"""Builds nodes.geojson for the invented Harbourlight Quay demo (a made-up 60 GHz waterfront
mesh). Deterministic: run `python3 make_nodes.py` to rebuild the committed file."""
import json, math

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
    add(f"BB{k+1:02d}", pos, {"name": f"Quay pole {k+1}", "pattern": "parabolic", "beamwidth_deg": 2.5,
        "gain_dbi": 36.0, "sidelobe_dbi": -4.0, "power_dbm": 8.0, "height_m": 9.0, "activity": 0.8,
        "azimuth_deg": round(az % 360, 2), "peer": f"BB{mate+1:02d}"})

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
    add(f"LP{k+1:02d}", pos, {"azimuth_deg": round(az, 1), "height_m": 5.0})

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
        "peer": f"LP{host+1:02d}"})

json.dump({"type": "FeatureCollection", "features": feats}, open("nodes.geojson", "w"), indent=1)
print(len(feats), "nodes")
