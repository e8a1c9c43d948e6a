#!/usr/bin/env bash
# demo.sh — installs what is missing, builds nervegap in release mode, runs
# the main job on the bundled demo data (scripts/data/colony.csv: nest
# positions, in metres, of a shore-bird colony around two ponds) and prints
# `nervegap show` of the results file, then what a statistics script does
# next (scripts/read_results.py), and draws the report (`nervegap plot`:
# build/demo-report.svg, .html and a PNG rendered by rsvg-convert).
# README.md walks through the output.
set -euo pipefail
top=$(cd "$(dirname "$0")/.." && pwd)
cd "$top"
. scripts/deps.sh
ng_install_missing
ng_build build --buildtype=release

data=scripts/data/colony.csv
out=build/demo-colony.h5
# the demo's scheme (tests/ref_demo.py runs the same flags)
demo_flags=(--radius knn:8 --scale-limit 16 --slices factor:1.05,1.1,1.2)

echo "== radii: distance to the 8th nearest nest (knn:8), divided by its median"
build/src/cli/nervegap radii "$data" --radius knn:8 > build/demo-radii.csv
/usr/bin/python3 - build/demo-radii.csv <<'PY'
import csv, sys
r = sorted(float(x["radius"]) for x in csv.DictReader(open(sys.argv[1])))
q = lambda p: r[min(len(r) - 1, int(p * len(r)))]
print(f"   {len(r)} nests; radius quantiles 10% {q(0.1):.2f}  50% {q(0.5):.2f}  90% {q(0.9):.2f}  max {r[-1]:.2f}")
print("   (nests crowded at the shores get small balls, sparse inland nests large ones)")
PY
echo "== run: Čech and Rips barcodes over those balls up to scale 16, with slices"
build/src/cli/nervegap run "$data" "${demo_flags[@]}" -o "$out"
echo "== nervegap show $out"
build/src/cli/nervegap show "$out"
echo "== scripts/read_results.py $out  (total persistence, landscapes)"
/usr/bin/python3 scripts/read_results.py "$out"
echo "== nervegap plot $out  (the report as SVG, HTML and PNG)"
build/src/cli/nervegap plot "$out" -o build/demo-report.svg
build/src/cli/nervegap plot "$out" -o build/demo-report.html
rsvg-convert build/demo-report.svg -o build/demo-report.png
# 128 colours keep the PNG small enough for the README (docs/demo-report.png)
/usr/bin/python3 - build/demo-report.png <<'PY'
import sys
from PIL import Image
with Image.open(sys.argv[1]) as im:
    small = im.convert("RGB").quantize(colors=128, dither=Image.Dither.NONE)
small.save(sys.argv[1], optimize=True)
print(f"   build/demo-report.svg, build/demo-report.html, build/demo-report.png ({small.size[0]} x {small.size[1]})")
PY
