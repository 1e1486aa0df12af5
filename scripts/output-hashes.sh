#!/usr/bin/env bash
# Prints sha256 sums of everything a fixed set of lobemap runs writes or prints, so that a move
# of code can be checked to change no output byte: run it before and after, and diff.
#   bash scripts/output-hashes.sh > /tmp/before.txt   # ... move code ...
#   bash scripts/output-hashes.sh | diff /tmp/before.txt -
# stderr is not hashed.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=target/release/lobemap
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
"$bin" demo --out "$work/demo" --quiet
"$bin" aggregate --density-per-km2 300 --beamwidth-deg 30 --gain-dbi 12 --sidelobe-dbi -8 \
  --fading rayleigh --realizations 20000 --seed 11 --threshold-dbm -70 --json > "$work/agg1.json"
"$bin" aggregate --scenario sites/harbourlight/scenario.toml --density-per-km2 800 --hard-core-m 5 \
  --fading nakagami --m 3 --realizations 5000 --seed 3 --sweep sidelobe_dbi=-20,-5 \
  --max-density --min-guard --budget-dbm -60 --json > "$work/agg2.json"
"$bin" probe sites/harbourlight/scenario.toml --at 45.5010,-4.8125 --json --monte-carlo 20000 --seed 5 > "$work/probe.json"
"$bin" links sites/harbourlight/scenario.toml --out "$work/links" --json --no-maps --monte-carlo 2000 --quiet > "$work/links.json"
"$bin" check sites/harbourlight/scenario.toml > "$work/check.txt"
# A random layout: the demo scenario with a [draw] table, drawn once and mapped as an ensemble.
sed "s#^nodes = .*#nodes = \"$PWD/sites/harbourlight/nodes.geojson\"#; s#^cell_m = .*#cell_m = 12#; s#^ground = \"#ground = \"$PWD/sites/harbourlight/#; s#^buildings = \"#buildings = \"$PWD/sites/harbourlight/#; s#^layers = \[\"#layers = [\"$PWD/sites/harbourlight/#" \
  sites/harbourlight/scenario.toml > "$work/drawn.toml"
printf '\n[draw]\ndensity_per_km2 = 150\nkeep = 0.8\nhard_core_m = 10\nazimuth = "nearest"\nseed = 4\n' >> "$work/drawn.toml"
"$bin" draw "$work/drawn.toml" --out "$work/draw/layout.geojson" --quiet
"$bin" map "$work/drawn.toml" --out "$work/ensemble" --realizations 3 --quiet
rm "$work/drawn.toml"
# Wall-clock fields (`elapsed_s`, at any depth) are set to 0 in every JSON file before hashing;
# every other byte is hashed as written.
find "$work" -name '*.json' -print0 | xargs -0 sed -E -i 's/("elapsed_s": *)[-+0-9.eE]+/\10/g'
cd "$work" && find . -type f | LC_ALL=C sort | xargs sha256sum
