"""Writes src/model/weather/p676_lines.rs: the spectroscopic line tables of ITU-R P.676-12
Annex 1 (Table 1 oxygen, Table 2 water vapour) as the `itur` package (PyPI) carries them in
its data folder (data/676/v12_lines_*.txt). Run once: python3 scripts/p676-tables.py"""
import os, itur

root = os.path.join(os.path.dirname(itur.__file__), "data", "676")
out = ["//! The line tables of ITU-R P.676-12 Annex 1: Table 1 (oxygen: f0 GHz, a1..a6) and",
       "//! Table 2 (water vapour: f0 GHz, b1..b6), transcribed from the data files of the `itur`",
       f"//! package {itur.__version__} (PyPI), data/676/v12_lines_oxygen.txt and",
       "//! v12_lines_water_vapour.txt, by scripts/p676-tables.py. Do not edit by hand.",
       ""]
for name, fname in [("OXYGEN", "v12_lines_oxygen.txt"), ("WATER_VAPOUR", "v12_lines_water_vapour.txt")]:
    rows = [l.strip() for l in open(os.path.join(root, fname)) if l.strip()][1:]
    out.append(f"pub(crate) const {name}: [[f64; 7]; {len(rows)}] = [")
    for r in rows:
        vals = [v.strip() for v in r.split(",")]
        out.append("    [" + ", ".join(v if "." in v else v + ".0" for v in vals) + "],")
    out.append("];")
    out.append("")
open("src/model/weather/p676_lines.rs", "w").write("\n".join(out))
