#!/usr/bin/python3
"""Degenerate geometry: `nervegap run` and `nervegap values` on inputs that
break the assumptions numerical code likes to make. Every command must end
either with a correct result or with a clear error (exit code 1 or 2, one
line 'nervegap CMD: ...'), never with NaN in its output, never with a
filtration in which a face comes later than a coface, never with a bar that
dies before it is born.

Cases, and what they are checked against (besides the general rules above,
which apply to every run and every `values` call):
- all points equal: one degree-0 bar [b, inf) and nothing else, b the
  common vertex birth (a single point up to the scale limit); knn radii
  are refused (coincident points), with --merge-duplicates too few points
  are left (a clear error).
- all points on a line (in R^3): balls centred on a line meet jointly as
  soon as they meet pairwise (project a common point onto the line: it is
  closer to every centre; on the line Helly's theorem in dimension 1 holds:
  intervals that meet pairwise meet jointly), so Čech = Rips for every
  simplex, any radii and any law, and the two barcodes are equal. For
  uniform radii this is the Thales case of DESIGN §6.
- d = 1: the same (Helly in dimension 1); no bar in degree ≥ 1.
- a 6 × 6 square grid, spacing 1, uniform radii (massive ties): degree-0
  deaths = minimum spanning tree edges / 2 (scipy minimum_spanning_tree,
  DESIGN §6); each of the 25 unit squares gives a degree-1 bar
  [1/2, √2/2) in both barcodes (sides at t = 1/2; the diagonals, and the
  circumcentre of the square, at t = √2/2: elementary geometry); the same
  bars for 1 and 2 threads (DESIGN §3).
- two clusters of spread 1e-6 a distance ~1e6 apart: degree-0 deaths =
  MST / 2 (scipy) under uniform radii; exactly one long finite bar; under
  knn radii the degree-0 deaths are the MST of the edge values
  d_ij / (rho_i + rho_j) (DESIGN §2.3 scaled law; scipy MST).
- d = 200: degree-0 deaths = MST / 2 (scipy); for uniform radii
  1 ≤ cech/rips ≤ √(2m/(m+1)) on m+1 vertices (Jung's theorem, DESIGN §6).
- n = 2 at distance 2: bars [0, 1) and [0, inf) under every law with
  uniform radii (the edge value is d/2 under all three laws, DESIGN §2.3);
  as a distance matrix the intrinsic Čech edge value is d = 2.
- exact duplicates: without --merge-duplicates uniform radii give the bars
  of the cloud without them (a duplicate dies at once: a bar of length
  zero, not stored) and knn names the coincident points; with it, the
  bars equal those of the deduplicated cloud.

Usage: degenerate.py NERVEGAP
"""
import itertools
import math
import os
import subprocess
import sys
import tempfile

import h5py
import numpy as np
from scipy.sparse.csgraph import minimum_spanning_tree
from scipy.spatial.distance import cdist
from checklib import expect, finish

NERVEGAP = sys.argv[1]
LAWS = ("scaled", "shifted", "power")
RULES = ("uniform", "knn:3", "dtm:3", "kde")
TMP = tempfile.mkdtemp(prefix="nervegap-degenerate-")


def call(*args):
    p = subprocess.run([NERVEGAP, *args], capture_output=True, text=True, timeout=300)
    return p.returncode, p.stdout, p.stderr


def write_points(name, pts):
    path = os.path.join(TMP, name + ".csv")
    np.savetxt(path, np.atleast_2d(pts.T).T if pts.ndim == 1 else pts,
               delimiter=",", fmt="%.17g")
    return path


def clear_error(name, command, rc, err):
    lines = err.strip().split("\n")
    expect(f"{name}: error exit code", rc in (1, 2), rc)
    expect(f"{name}: one error line", len(lines) == 1 and
           lines[0].startswith(f"nervegap {command}: "), err)
    expect(f"{name}: no NaN in the message", "nan" not in err.lower(), err)


def check_file(name, out, max_degree):
    """The general rules on a results file; returns {group/dimk: bars}."""
    found = {}
    with h5py.File(out, "r") as f:
        def visit(path, obj):
            values = [obj[()]] if isinstance(obj, h5py.Dataset) else []
            values += list(obj.attrs.values())
            for v in values:
                a = np.asarray(v)
                if a.dtype.kind == "f":
                    expect(f"{name}: no NaN in {path}", not np.isnan(a).any())
            if isinstance(obj, h5py.Dataset) and path.endswith("/bars"):
                b = obj[()]
                found[path[:-len("/bars")]] = b
                if len(b):
                    expect(f"{name}: {path} births ≥ 0", (b[:, 0] >= 0).all())
                    expect(f"{name}: {path} birth < death", (b[:, 0] < b[:, 1]).all(), b)
        f.visititems(visit)
        for k in range(max_degree + 1):
            for g in ("cech", "rips"):
                expect(f"{name}: {g}/dim{k} present", f"{g}/dim{k}" in found)
        # Euler–Poincaré on every sublevel set of the grid (classical): the
        # (D+1)-skeleton has beta_{D+1} = (-1)^(D+1) (chi - sum_{k<=D}
        # (-1)^k beta_k), which must lie in [0, #(D+1)-simplices]. It fails
        # when a sublevel set is not a complex (a coface before a face) or
        # the Betti numbers disagree with the simplex counts.
        for g in ("cech", "rips"):
            betti = f[f"grid/betti_{g}"][()]
            count = f[f"grid/simplices_{g}"][()]
            D = betti.shape[1] - 1
            signs = (-1) ** np.arange(D + 2)
            top = (-1) ** (D + 1) * (count @ signs - betti @ signs[:D + 1])
            bad = np.nonzero((top < 0) | (top > count[:, D + 1]))[0]
            expect(f"{name}: {g} grid Euler–Poincaré", len(bad) == 0,
                   (bad[:3], top[bad[:3]]))
    return found


def run(name, path, *flags, max_degree=1, expect_ok=True, distances=False):
    out = os.path.join(TMP, "out.h5")
    if os.path.exists(out):
        os.remove(out)
    src = ["--distances", path] if distances else [path]
    rc, _, err = call("run", *src, "--quiet", "--max-degree", str(max_degree),
                      "-o", out, *flags)
    if rc != 0:
        clear_error(name, "run", rc, err)
        expect(f"{name}: no file after a failed run", not os.path.exists(out))
        expect(f"{name}: runs", not expect_ok, err)
        return None
    expect(f"{name}: refused", expect_ok, "exit 0 where a clear error was expected")
    return check_file(name, out, max_degree)


def faces_closed(simplices):
    s = set()
    for v in simplices:
        for m in range(1, len(v) + 1):
            s.update(itertools.combinations(sorted(v), m))
    return sorted(s, key=lambda t: (len(t), t))


def values(name, path, simplices, *flags, expect_ok=True):
    """The general rules on `values`; returns {simplex: (rips, cech)}."""
    lst = faces_closed(simplices)
    sfile = os.path.join(TMP, "simplices.txt")
    with open(sfile, "w") as f:
        for v in lst:
            f.write(" ".join(map(str, v)) + "\n")
    rc, out, err = call("values", path, "--simplices", sfile, *flags)
    if rc != 0:
        clear_error(name + " values", "values", rc, err)
        expect(f"{name}: values runs", not expect_ok, err)
        return None
    expect(f"{name}: values refused", expect_ok, "exit 0 where a clear error was expected")
    rows = out.strip().split("\n")[1:]
    vals = {}
    for v, row in zip(lst, rows):
        r, c = (float(x) for x in row.split(","))
        vals[v] = (r, c)
    expect(f"{name}: a value per simplex", len(rows) == len(lst))
    bad = [v for v, (r, c) in vals.items() if math.isnan(r) or math.isnan(c)]
    expect(f"{name}: no NaN value", not bad, bad[:3])
    bad = [v for v, (r, c) in vals.items() if not r <= c]
    expect(f"{name}: rips ≤ cech", not bad, [(v, vals[v]) for v in bad[:3]])
    bad = []
    for v in vals:
        for face in itertools.combinations(v, len(v) - 1):
            if face and (vals[face][0] > vals[v][0] or vals[face][1] > vals[v][1]):
                bad.append((face, v))
    expect(f"{name}: a face never later than its coface", not bad, bad[:3])
    return vals


def radii(path, *flags):
    rc, out, err = call("radii", path, *flags)
    if rc != 0:
        raise RuntimeError(err)
    rows = np.loadtxt(out.strip().split("\n")[1:], delimiter=",", ndmin=2)
    return rows[:, 1], rows[:, 2]


def finite_deaths(b):
    return np.sort(b[np.isfinite(b[:, 1]), 1]) if len(b) else np.zeros(0)


def close(a, b, rel=1e-9):
    a, b = np.sort(np.asarray(a, float)), np.sort(np.asarray(b, float))
    return a.shape == b.shape and bool(np.all(np.abs(a - b) <= rel * np.maximum(1.0, np.abs(b))))


def same_bars(a, b, rel=1e-9):
    if a.shape != b.shape:
        return False
    a = a[np.lexsort((a[:, 1], a[:, 0]))]
    b = b[np.lexsort((b[:, 1], b[:, 0]))]
    inf = np.isinf(a) & np.isinf(b)
    d = np.where(inf, 0.0, np.abs(np.where(inf, 0, a) - np.where(inf, 0, b)))
    return bool(np.all(d <= rel * np.maximum(1.0, np.abs(np.where(inf, 0, b)))))


def mst_half(pts):
    m = minimum_spanning_tree(cdist(pts, pts)).toarray()
    return np.sort(m[m > 0]) / 2


rng = np.random.default_rng(2024)
random_simplices = lambda n, count, size: [tuple(rng.choice(n, size, replace=False))
                                           for _ in range(count)]

# ---- all points equal -------------------------------------------------------
equal = write_points("equal", np.ones((6, 2)))
for law in LAWS:
    for rule in ("uniform", "dtm:3", "kde:0.5"):
        name = f"equal {rule} {law}"
        ok = not (rule == "dtm:3" and law == "scaled")  # median radius 0
        found = run(name, equal, "--radius", rule, "--law", law, expect_ok=ok)
        if found is not None:
            _, birth = radii(equal, "--radius", rule, "--law", law)
            for g in ("cech", "rips"):
                expect(f"{name}: {g} one bar [b, inf)",
                       found[f"{g}/dim0"].tolist() == [[birth[0], math.inf]]
                       and len(found[f"{g}/dim1"]) == 0, found[f"{g}/dim0"])
        values(name, equal, [(0, 1, 2, 3, 4, 5)], "--radius", rule, "--law", law,
               expect_ok=ok)
    for merge in ([], ["--merge-duplicates"]):
        run(f"equal knn {law} {merge}", equal, "--radius", "knn:2", "--law", law,
            *merge, expect_ok=False)
    rc, _, err = call("radii", equal, "--radius", "knn:2")
    expect("equal knn names the points", rc == 2 and "points 0 and 1 coincide" in err, err)

# ---- collinear in R^3, and d = 1: Čech = Rips (Helly in dimension 1) -----------
s = np.sort(rng.uniform(-3, 3, 14))
line3 = write_points("line3", np.outer(s, [0.48, -0.6, 0.64]) + [1.0, 2.0, -0.5])
line1 = write_points("line1", rng.uniform(-3, 3, (15, 1)))
for label, path in (("collinear", line3), ("d=1", line1)):
    n = 15 if label == "d=1" else 14
    for rule in RULES:
        for law in LAWS:
            name = f"{label} {rule} {law}"
            found = run(name, path, "--radius", rule, "--law", law, max_degree=2)
            if found is not None:
                for k in range(3):
                    expect(f"{name}: dim{k} Čech = Rips",
                           same_bars(found[f"cech/dim{k}"], found[f"rips/dim{k}"]),
                           (found[f"cech/dim{k}"], found[f"rips/dim{k}"]))
                    if k and label == "d=1":
                        expect(f"{name}: no dim{k} bar", len(found[f"cech/dim{k}"]) == 0)
            vals = values(name, path, random_simplices(n, 20, 4) + random_simplices(n, 5, 6),
                          "--radius", rule, "--law", law)
            if vals:
                bad = [v for v, (r, c) in vals.items() if c > r * (1 + 1e-9) + 1e-12]
                expect(f"{name}: Čech = Rips on every simplex", not bad,
                       [(v, vals[v]) for v in bad[:3]])
    # scaled law: degree-0 deaths are the MST of the edge values d/(rho_i+rho_j)
    for rule in ("knn:3", "dtm:3"):
        rho, _ = radii(path, "--radius", rule)
        pts = np.loadtxt(path, delimiter=",", ndmin=2)
        e = cdist(pts, pts) / (rho[:, None] + rho[None, :])
        m = minimum_spanning_tree(e).toarray()
        found = run(f"{label} {rule} mst", path, "--radius", rule)
        if found is not None:
            expect(f"{label} {rule}: degree-0 deaths = MST of edge values",
                   close(finite_deaths(found["rips/dim0"]), m[m > 0]))

# ---- square grid: massive ties ------------------------------------------------
grid = write_points("grid", np.array([(i, j) for i in range(6) for j in range(6)], float))
found = run("grid uniform", grid, "--threads", "1")
if found is not None:
    h = math.sqrt(2) / 2
    expect("grid: degree-0 deaths = MST/2", close(finite_deaths(found["rips/dim0"]),
           mst_half(np.loadtxt(grid, delimiter=","))))
    for g in ("cech", "rips"):
        b = found[f"{g}/dim1"]
        squares = np.sum((np.abs(b[:, 0] - 0.5) < 1e-12) & (np.abs(b[:, 1] - h) < 1e-12))
        expect(f"grid: {g} 25 bars [1/2, √2/2)", squares == 25 and len(b) == 25, b)
    two = run("grid uniform 2 threads", grid, "--threads", "2")
    if two is not None:
        expect("grid: same bars for 1 and 2 threads",
               all(np.array_equal(found[k], two[k]) for k in found), "")
for rule in RULES:
    for law in LAWS:
        name = f"grid {rule} {law}"
        run(name, grid, "--radius", rule, "--law", law, "--slices", "factor:1.1,1.3")
        values(name, grid, random_simplices(36, 15, 4) + [(0, 1, 6, 7), (7, 8, 13, 14, 0, 2)],
               "--radius", rule, "--law", law)

# ---- two far clusters: scale spread 1e-6 to 1e6 ----------------------------------
a = rng.normal(0, 1e-6, (8, 3))
b = rng.normal(0, 1e-6, (8, 3)) + [7e5, 7e5, 0]
far = write_points("far", np.vstack([a, b]))
pts = np.loadtxt(far, delimiter=",")
found = run("far uniform", far)
if found is not None:
    d = finite_deaths(found["rips/dim0"])
    expect("far: degree-0 deaths = MST/2", close(d, mst_half(pts), 1e-6), (d, mst_half(pts)))
    expect("far: one long finite degree-0 bar", np.sum(d > 1e3) == 1 and np.sum(d < 1e-4) == 14, d)
    expect("far: Čech degree-0 = Rips degree-0",
           close(finite_deaths(found["cech/dim0"]), d, 1e-6))
rho, _ = radii(far, "--radius", "knn:3")
m = minimum_spanning_tree(cdist(pts, pts) / (rho[:, None] + rho[None, :])).toarray()
found = run("far knn", far, "--radius", "knn:3")
if found is not None:
    d = finite_deaths(found["rips/dim0"])
    expect("far knn: degree-0 deaths = MST of edge values", close(d, m[m > 0], 1e-6), d)
    expect("far knn: one long finite degree-0 bar", np.sum(d > 1e3 * np.median(d)) == 1, d)
for rule in RULES:
    for law in LAWS:
        name = f"far {rule} {law}"
        run(name, far, "--radius", rule, "--law", law, max_degree=2)
        vals = values(name, far, random_simplices(8, 10, 4) +
                      [tuple(v + 8 for v in s) for s in random_simplices(8, 10, 4)] +
                      [(0, 1, 8, 9)], "--radius", rule, "--law", law)
        if vals and rule == "uniform" and law == "scaled":
            bad = [v for v, (r, c) in vals.items()
                   if len(v) > 1 and r > 0 and c / r > math.sqrt(2 * (len(v) - 1) / len(v)) + 1e-6]
            expect(f"{name}: factor within Jung's bound", not bad, [(v, vals[v]) for v in bad[:3]])

# ---- d = 200 ------------------------------------------------------------------------
high = write_points("d200", rng.normal(0, 1, (25, 200)))
pts = np.loadtxt(high, delimiter=",")
found = run("d=200 uniform", high, max_degree=2)
if found is not None:
    expect("d=200: degree-0 deaths = MST/2", close(finite_deaths(found["rips/dim0"]), mst_half(pts)))
vals = values("d=200 uniform", high, random_simplices(25, 30, 6))
if vals:
    bad = [v for v, (r, c) in vals.items() if len(v) > 1 and
           not (1 - 1e-12 <= c / r <= math.sqrt(2 * (len(v) - 1) / len(v)) + 1e-9)]
    expect("d=200: 1 ≤ factor ≤ Jung's bound", not bad, [(v, vals[v]) for v in bad[:3]])
for rule in RULES[1:]:
    for law in LAWS:
        run(f"d=200 {rule} {law}", high, "--radius", rule, "--law", law)
        values(f"d=200 {rule} {law}", high, random_simplices(25, 8, 5), "--radius", rule, "--law", law)

# ---- n = 2 ------------------------------------------------------------------------------
two = write_points("two", np.array([[0.0, 0.0], [2.0, 0.0]]))
for law in LAWS:
    found = run(f"n=2 uniform {law}", two, "--law", law)
    if found is not None:
        for g in ("cech", "rips"):
            expect(f"n=2 {law}: {g} bars [0,1) and [0,inf)",
                   sorted(found[f"{g}/dim0"].tolist()) == [[0.0, 1.0], [0.0, math.inf]],
                   found[f"{g}/dim0"])
    # K is at most n - 1 for knn and n for dtm: knn:3 and dtm:3 are refused
    for rule in RULES[1:] + ("knn:1", "dtm:2"):
        run(f"n=2 {rule} {law}", two, "--radius", rule, "--law", law,
            expect_ok=rule not in ("knn:3", "dtm:3"))
    values(f"n=2 {law}", two, [(0, 1)], "--law", law)
dist2 = os.path.join(TMP, "dist2.csv")
with open(dist2, "w") as f:
    f.write("0,2\n2,0\n")
found = run("n=2 distances", dist2, distances=True)
if found is not None:
    # Rips: d/2 = 1; the intrinsic Čech value of DESIGN §2.3 takes the
    # common point among the sample points: one ball must reach the other
    # centre, t = d = 2
    for g, death in (("rips", 1.0), ("cech", 2.0)):
        expect(f"n=2 distances: {g} bars [0,{death:g}) and [0,inf)",
               sorted(found[f"{g}/dim0"].tolist()) == [[0.0, death], [0.0, math.inf]],
               found[f"{g}/dim0"])

# ---- exact duplicates ------------------------------------------------------------------------
base = rng.uniform(0, 1, (12, 2))
dup = write_points("dup", np.vstack([base, base[[0, 3, 3]]]))
nodup = write_points("nodup", base)
for law in LAWS:
    for rule in RULES:
        ref = run(f"nodup {rule} {law}", nodup, "--radius", rule, "--law", law)
        merged = run(f"dup {rule} {law} merged", dup, "--radius", rule, "--law", law,
                     "--merge-duplicates")
        if ref is not None and merged is not None:
            expect(f"dup {rule} {law}: merged = deduplicated",
                   all(same_bars(ref[k], merged[k]) for k in ref))
        plain = run(f"dup {rule} {law}", dup, "--radius", rule, "--law", law,
                    expect_ok=rule != "knn:3")
        if ref is not None and plain is not None and rule == "uniform":
            expect(f"dup uniform {law}: duplicates change no bar",
                   all(same_bars(ref[k], plain[k]) for k in ref))
        values(f"dup {rule} {law}", dup, [(0, 12, 1), (3, 13, 14, 5), (0, 12, 3, 13)],
               "--radius", rule, "--law", law, expect_ok=rule != "knn:3")
rc, _, err = call("run", dup, "--radius", "knn:3", "-o", os.path.join(TMP, "x.h5"))
expect("dup knn: names two coincident points", rc == 2 and "points 0 and 12 coincide" in err, err)

finish()
