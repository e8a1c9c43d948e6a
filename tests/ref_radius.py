#!/usr/bin/python3
"""Reference check of `nervegap radii` on random clouds.

- kde:H and kde (Scott's rule) against a direct evaluation of the Gaussian
  kernel density with scipy.spatial.distance.cdist (python3-scipy): every
  pair summed, no truncation.
- knn:K and dtm:K against scipy.spatial.cKDTree (python3-scipy), p = 2, 1, inf.
- median normalisation under law scaled (numpy.median).

Usage: ref_radius.py NERVEGAP
"""
import csv
import io
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial import cKDTree
from scipy.spatial.distance import cdist

NERVEGAP = sys.argv[1]
failures = 0


def radii(path, *flags):
    out = subprocess.run([NERVEGAP, "radii", path, *flags], check=True,
                         capture_output=True, text=True).stdout
    rows = list(csv.DictReader(io.StringIO(out)))
    return (np.array([float(r["radius"]) for r in rows]),
            np.array([float(r["birth"]) for r in rows]))


def check(name, got, want, rtol):
    global failures
    err = np.max(np.abs(got - want) / np.maximum(np.abs(want), 1e-300))
    if not err <= rtol:
        failures += 1
        print(f"FAIL {name}: max relative error {err:.3g} > {rtol:g}")
    else:
        print(f"ok   {name}: max relative error {err:.3g}")


def kde_reference(x, h, metric):
    n, d = x.shape
    dist = cdist(x, x, metric=metric)
    f = np.exp(-dist ** 2 / (2 * h * h)).sum(axis=1) / (n * (2 * np.pi * h * h) ** (d / 2))
    return f ** (-1.0 / d)


rng = np.random.default_rng(7)
metric_names = {"euclidean": ("euclidean", 2), "manhattan": ("cityblock", 1),
                "chebyshev": ("chebyshev", np.inf)}
with tempfile.TemporaryDirectory() as tmp:
    for dim in (2, 3, 8):
        n = 400
        x = rng.normal(size=(n, dim)) * rng.uniform(0.5, 2.0, size=dim)
        path = os.path.join(tmp, f"cloud{dim}.csv")
        np.savetxt(path, x, delimiter=",", fmt="%.17g")
        for metric, (scipy_name, p) in metric_names.items():
            tree = cKDTree(x)
            for k in (1, 5, 16):
                # cKDTree counts the point itself as its own first neighbour
                dk, _ = tree.query(x, k=k + 1, p=p)
                got, _ = radii(path, "--metric", metric, "--radius", f"knn:{k}",
                               "--raw-radius")
                check(f"knn:{k} d={dim} {metric} vs cKDTree", got, dk[:, k], 1e-12)
                got, birth = radii(path, "--metric", metric, "--radius", f"dtm:{k}",
                                   "--law", "shifted")
                want = np.sqrt((dk[:, :k] ** 2).sum(axis=1) / k)
                check(f"dtm:{k} d={dim} {metric} vs cKDTree", got, want, 1e-12)
                check(f"dtm:{k} birth = rho (shifted)", birth, want, 1e-12)
            got, _ = radii(path, "--metric", metric, "--radius", "knn:5")
            dk, _ = tree.query(x, k=6, p=p)
            check(f"knn:5 d={dim} {metric} median-normalised", got,
                  dk[:, 5] / np.median(dk[:, 5]), 1e-12)
            for h in (0.3, 1.0, 4.0):
                got, _ = radii(path, "--metric", metric, "--radius", f"kde:{h}",
                               "--raw-radius")
                check(f"kde:{h} d={dim} {metric} vs direct sum", got,
                      kde_reference(x, h, scipy_name), 1e-10)
        # Scott's rule with an isotropic bandwidth: sigma² = mean variance
        sigma = np.sqrt(np.var(x, axis=0, ddof=1).mean())
        h = sigma * n ** (-1.0 / (dim + 4))
        got, _ = radii(path, "--radius", "kde", "--raw-radius")
        check(f"kde (Scott) d={dim} vs direct sum", got,
              kde_reference(x, h, "euclidean"), 1e-10)

print(f"{failures} failed" if failures else "all reference checks passed")
sys.exit(1 if failures else 0)
