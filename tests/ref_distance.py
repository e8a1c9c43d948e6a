#!/usr/bin/python3
"""Reference check of the diagram distances (distance.h) against an
exhaustive assignment computed with scipy.

Usage: /usr/bin/python3 ref_distance.py PATH/TO/distance_tool [--pairs N]

Draws N pairs of random diagrams (default 600, so 1,200 diagrams) of up to
60 points: uniform points, integer grids (ties and duplicate points),
points near the diagonal and on it (birth == death, to be ignored), empty
diagrams, essential points (death = +inf) in equal and in different
numbers, and perturbed copies. The reference, for every pair:
  - the augmented (na + nb) × (na + nb) cost matrix: point–point L∞ costs,
    point–diagonal costs (death − birth)/2, diagonal–diagonal 0;
    essential points matched in sorted order of birth (optimal on the line
    for convex costs), +inf when their numbers differ;
  - W1 and W2: scipy.optimize.linear_sum_assignment on cost^p
    (reference: scipy.optimize.linear_sum_assignment);
  - bottleneck: binary search over the sorted distinct costs with a
    perfect-matching test by scipy.sparse.csgraph.maximum_bipartite_matching
    (reference: scipy.sparse.csgraph.maximum_bipartite_matching).
The tool is run three times, with relative error 1e-6 requested: the
library's own choice of method, the Hungarian method forced for every size
(it reports a bound of 0) and the method of large diagrams (shortest
augmenting paths on the geometric graph) forced for every size. The
bottleneck must equal the reference as doubles; W_p must be within the
reported bound (plus 1e-12 relative for the summation order of the
reference), and the reported bound within the request.
Exit status 0 when everything matches.
"""
import os
import struct
import subprocess
import sys
import tempfile

import numpy as np
from scipy.optimize import linear_sum_assignment
from scipy.sparse import csr_matrix
from scipy.sparse.csgraph import maximum_bipartite_matching

ROUNDING = 1e-12


def random_diagram(rng, kind, m):
    """m points (birth, death) of the given kind; invented data only."""
    if m == 0:
        return np.zeros((0, 2))
    if kind == "uniform":
        b = rng.random(m)
        d = b + rng.exponential(0.3, m)
    elif kind == "grid":
        b = rng.integers(0, 5, m).astype(float)
        d = b + rng.integers(1, 4, m).astype(float)
    elif kind == "near-diagonal":
        b = rng.random(m)
        d = b + rng.choice([1e-12, 1e-9, 1e-6, 0.0, 0.01], m)
    else:  # mixed scales
        b = rng.normal(0, 10, m)
        d = b + np.abs(rng.normal(0, 5, m)) + 1e-3
    pts = np.column_stack([b, d])
    # a few exact duplicates
    if m > 3 and rng.random() < 0.5:
        k = rng.integers(1, m // 2 + 1)
        pts[:k] = pts[rng.integers(0, m, k)]
    return pts


def add_essential(rng, pts, k, grid):
    if k == 0:
        return pts
    if grid:
        b = rng.integers(0, 5, k).astype(float)
    else:
        b = rng.random(k)
    ess = np.column_stack([b, np.full(k, np.inf)])
    out = np.vstack([pts, ess])
    return out[rng.permutation(len(out))]


def pairs(rng, count):
    kinds = ["uniform", "grid", "near-diagonal", "mixed"]
    for c in range(count):
        kind = kinds[c % len(kinds)]
        na = int(rng.integers(0, 61)) if c % 10 else 0
        a = random_diagram(rng, kind, na)
        style = c % 3
        if style == 0 and na > 0:  # perturbed copy
            b = a + rng.normal(0, 0.05, a.shape)
            b[:, 1] = np.maximum(b[:, 1], b[:, 0])
            keep = rng.random(len(b)) < 0.9
            b = b[keep]
            if kind == "grid":
                b = np.round(b)
                b[:, 1] = np.maximum(b[:, 1], b[:, 0])
        else:
            nb = int(rng.integers(0, 61)) if c % 7 else 0
            b = random_diagram(rng, kind, nb)
        e = int(rng.integers(0, 4)) if c % 4 == 1 else 0
        eb = e + 1 if rng.random() < 0.1 else e
        a = add_essential(rng, a, e, kind == "grid")
        b = add_essential(rng, b, eb, kind == "grid")
        yield a, b


def reference(a, b):
    """(bottleneck, W1, W2) by exhaustive assignment."""
    a = a[a[:, 0] != a[:, 1]]
    b = b[b[:, 0] != b[:, 1]]
    ea = np.sort(a[np.isinf(a[:, 1]), 0])
    eb = np.sort(b[np.isinf(b[:, 1]), 0])
    if len(ea) != len(eb):
        return np.inf, np.inf, np.inf
    ess = np.abs(ea - eb)
    fa = a[np.isfinite(a[:, 1])]
    fb = b[np.isfinite(b[:, 1])]
    na, nb = len(fa), len(fb)
    n = na + nb
    cost = np.zeros((n, n))
    if na and nb:
        cost[:na, :nb] = np.maximum(
            np.abs(fa[:, 0][:, None] - fb[:, 0][None, :]),
            np.abs(fa[:, 1][:, None] - fb[:, 1][None, :]))
    cost[:na, nb:] = ((fa[:, 1] - fa[:, 0]) / 2)[:, None]
    cost[na:, :nb] = ((fb[:, 1] - fb[:, 0]) / 2)[None, :]
    w = []
    for p in (1, 2):
        s = np.sum(ess ** p)
        if n:
            r, c = linear_sum_assignment(cost ** p)
            s += np.sum(cost[r, c] ** p)
        w.append(s ** (1.0 / p))
    bott = 0.0
    if n:
        values = np.unique(cost)
        lo, hi = 0, len(values) - 1  # values[hi] is feasible
        while lo < hi:
            mid = (lo + hi) // 2
            graph = csr_matrix((cost <= values[mid]).astype(np.int8))
            match = maximum_bipartite_matching(graph, perm_type="column")
            if np.all(match >= 0):
                hi = mid
            else:
                lo = mid + 1
        bott = values[lo]
    if len(ess):
        bott = max(bott, float(np.max(ess)))
    return bott, w[0], w[1]


def run_tool(exe, cases, method, rel, tmp):
    src = os.path.join(tmp, "in.bin")
    dst = os.path.join(tmp, "out.bin")
    with open(src, "wb") as f:
        f.write(b"NGDISTIN")
        f.write(struct.pack("<Q", len(cases)))
        for a, b in cases:
            f.write(struct.pack("<2Q", len(a), len(b)))
            f.write(np.ascontiguousarray(a, dtype="<f8").tobytes())
            f.write(np.ascontiguousarray(b, dtype="<f8").tobytes())
    subprocess.run([exe, src, dst, method, repr(rel)], check=True)
    with open(dst, "rb") as f:
        data = f.read()
    if data[:8] != b"NGDISTOU":
        raise RuntimeError("distance_tool wrote no valid output")
    (count,) = struct.unpack("<Q", data[8:16])
    assert count == len(cases)
    return np.frombuffer(data, "<f8", 5 * count, 16).reshape(count, 5)


def close(got, want, bound):
    if np.isinf(want) or np.isinf(got):
        return got == want
    return abs(got - want) <= (bound + ROUNDING) * max(want, 1e-300)


def main():
    exe = sys.argv[1]
    count = 600
    if len(sys.argv) > 3 and sys.argv[2] == "--pairs":
        count = int(sys.argv[3])
    rng = np.random.default_rng(20240611)
    cases = list(pairs(rng, count))
    refs = [reference(a, b) for a, b in cases]
    failures = 0
    with tempfile.TemporaryDirectory() as tmp:
        for method, rel in (("auto", 1e-6), ("exact", 1e-6),
                            ("paths", 1e-6)):
            got = run_tool(exe, cases, method, rel, tmp)
            for i, ((a, b), ref) in enumerate(zip(cases, refs)):
                g = got[i]
                problems = []
                if g[0] != ref[0]:
                    problems.append(f"bottleneck {g[0]!r} != {ref[0]!r}")
                for p, col in ((1, 1), (2, 3)):
                    bound = g[col + 1]
                    if method == "exact" and bound != 0.0:
                        problems.append(f"W{p} exact path bound {bound}")
                    if not bound <= rel:
                        problems.append(f"W{p} bound {bound} > {rel}")
                    if not close(g[col], ref[p], bound):
                        problems.append(
                            f"W{p} {g[col]!r} vs {ref[p]!r} (bound {bound})")
                if problems:
                    failures += 1
                    if failures <= 20:
                        print(f"case {i} ({method}, {rel}) na={len(a)} "
                              f"nb={len(b)}: " + "; ".join(problems))
            print(f"{method} rel={rel}: {len(cases)} pairs checked")
    if failures:
        print(f"FAILED: {failures} mismatches")
        return 1
    print(f"all {len(cases)} pairs ({2 * len(cases)} diagrams) match")
    return 0


if __name__ == "__main__":
    sys.exit(main())
