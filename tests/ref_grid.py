#!/usr/bin/python3
"""Checks of the per-scale grid of `nervegap run` (DESIGN §2.6).

- Betti numbers on the grid equal a recount from the stored bars (a bar
  counts at t when birth <= t < death), done here in numpy.
- Simplex counts and the factor/shift statistics equal an independent
  computation: every simplex of a small cloud evaluated with
  `nervegap values`, counted and ranked here (nearest-rank quantiles, the
  ceil(q*m)-th smallest; factor 1 and shift 0 where no simplex is present).
- Hilbert function: the slice at factor 1 is the Čech filtration, and a
  slice at factor >= Λ is the Rips filtration (f_λ = max(rips, cech/λ)),
  so their rows equal the Čech and Rips Betti curves.
- Jung's theorem (H. Jung, J. reine angew. Math. 123, 1901): with uniform
  radii in R^d every factor is <= sqrt(2d/(d+1)); with any radii <= sqrt(2)
  (Euclidean space is sqrt(2)-hyperconvex; common practice in metric
  geometry).

Usage: ref_grid.py NERVEGAP
"""
import csv
import io
import itertools
import math
import os
import sys
import tempfile

import h5py
import numpy as np
from checklib import expect, finish, nervegap as run_binary

NERVEGAP = sys.argv[1]


def nervegap(*args):
    return run_binary(NERVEGAP, *args)


def betti_recount(f, group, scale, D):
    out = np.zeros((len(scale), D + 1), dtype=np.int64)
    for k in range(D + 1):
        b = f[f"{group}/dim{k}/bars"][:]
        for i, t in enumerate(scale):
            out[i, k] = np.sum((b[:, 0] <= t) & (t < b[:, 1]))
    return out


def nearest_rank(sorted_vals, q):
    m = len(sorted_vals)
    return sorted_vals[max(1, math.ceil(q * m - 1e-12)) - 1]


rng = np.random.default_rng(5)
with tempfile.TemporaryDirectory() as tmp:
    out = os.path.join(tmp, "out.h5")
    for trial, (dim, rule, law) in enumerate([(2, "uniform", "scaled"), (3, "knn:3", "scaled"),
                                              (2, "dtm:4", "power"), (3, "kde", "shifted"),
                                              (3, "uniform", "scaled"), (2, "knn:2", "shifted")]):
        n = 13
        x = rng.uniform(0, 1, size=(n, dim))
        path = os.path.join(tmp, f"c{trial}.csv")
        np.savetxt(path, x, delimiter=",", fmt="%.17g")
        D = 2
        G = 17
        nervegap("run", path, "--quiet", "-o", out, "--radius", rule, "--law", law,
                 "--max-degree", str(D), "--grid", str(G), "--slices", "factor:1,2")
        with h5py.File(out, "r") as f:
            g = f["grid"]
            scale = g["scale"][:]
            T = f["scheme"].attrs["scale_limit"]
            expect("grid ends at T", scale[-1] == T and scale[0] == 0 and len(scale) == G)
            for c in ("cech", "rips"):
                expect(f"{trial} betti_{c} = recount from bars",
                       np.array_equal(g[f"betti_{c}"][:], betti_recount(f, c, scale, D)))
            lam = f["divergence"].attrs["factor_bound"] if "divergence" in f else None
            hil = g["hilbert"][:]
            expect(f"{trial} hilbert at factor 1 = Čech Betti curve",
                   np.array_equal(hil[0], g["betti_cech"][:]))
            grid = {k: g[k][:] for k in g}
        # every simplex of up to D+2 vertices, evaluated independently
        simplices = [s for m in range(1, D + 3) for s in itertools.combinations(range(n), m)]
        spath = os.path.join(tmp, "s.txt")
        with open(spath, "w") as fh:
            fh.write("\n".join(" ".join(map(str, s)) for s in simplices) + "\n")
        rows = list(csv.DictReader(io.StringIO(nervegap("values", path, "--radius", rule,
                                                        "--law", law, "--simplices", spath))))
        rips = np.array([float(r["rips"]) for r in rows])
        cech = np.array([float(r["cech"]) for r in rows])
        size = np.array([len(s) for s in simplices])
        for i, t in enumerate(scale):
            for k in range(D + 2):
                expect(f"{trial} simplices_rips t={t:.3g} dim{k}",
                       grid["simplices_rips"][i, k] == np.sum((size == k + 1) & (rips <= t)))
                expect(f"{trial} simplices_cech t={t:.3g} dim{k}",
                       grid["simplices_cech"][i, k] == np.sum((size == k + 1) & (cech <= t)))
            sel = (size >= 3) & (rips <= t)
            shifts = np.sort(cech[sel] - rips[sel])
            fsel = sel & (rips > 0)
            factors = np.sort(cech[fsel] / rips[fsel])
            if len(factors):
                want = (factors[-1], nearest_rank(factors, 0.5), nearest_rank(factors, 0.9))
            else:
                want = (1.0, 1.0, 1.0)
            got = (grid["factor_max"][i], grid["factor_q50"][i], grid["factor_q90"][i])
            expect(f"{trial} factor stats t={t:.3g}", np.allclose(got, want, rtol=1e-15, atol=0),
                   f"{got} vs {want}")
            want = (shifts[-1], nearest_rank(shifts, 0.5), nearest_rank(shifts, 0.9)) \
                if len(shifts) else (0.0, 0.0, 0.0)
            got = (grid["shift_max"][i], grid["shift_q50"][i], grid["shift_q90"][i])
            expect(f"{trial} shift stats t={t:.3g}", np.allclose(got, want, rtol=1e-15, atol=1e-300),
                   f"{got} vs {want}")
        fmax = grid["factor_max"].max()
        jung = math.sqrt(2 * dim / (dim + 1))
        if rule == "uniform":
            # Jung's theorem (1901)
            expect(f"{trial} factor <= Jung's constant", fmax <= jung * (1 + 1e-12), f"{fmax} > {jung}")
        # sqrt(2)-hyperconvexity of Euclidean space (common practice)
        expect(f"{trial} factor <= sqrt 2", fmax <= math.sqrt(2) * (1 + 1e-12), fmax)
        # slice at factor 2 >= sqrt(2) >= Λ: the Rips filtration
        expect(f"{trial} hilbert at factor 2 = Rips Betti curve",
               np.array_equal(grid["hilbert"][1], grid["betti_rips"]))

finish()
