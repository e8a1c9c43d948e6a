#!/usr/bin/python3
"""Reference check of ng_knn_all against scipy.spatial.cKDTree.

Usage: /usr/bin/python3 ref_knn.py PATH/TO/knn_dump

Writes point clouds (random in 2, 3, 8 and 24 dimensions, and integer grids
where ties and coincident points abound) in the raw format of
tests/knn_dump.c, runs knn_dump on each and compares, for the metrics
p = 2 (euclidean), p = 1 (manhattan) and p = inf (chebyshev):
  - the k nearest distances with those of scipy.spatial.cKDTree
    (reference: scipy.spatial.cKDTree), relative error <= 1e-12;
  - the returned indices: distinct, never the point itself, and at the
    reported distance (recomputed with numpy), in (distance, index) order.
Exit status 0 when everything matches.
"""
import os
import struct
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial import cKDTree

METRICS = [(0, 2.0, "euclidean"), (2, 1.0, "manhattan"),
           (1, np.inf, "chebyshev")]
TOL = 1e-12


def clouds():
    """(name, points, ks): invented data only."""
    rng = np.random.default_rng(20240601)
    yield "random-2d", rng.random((2000, 2)), (1, 8, 20)
    yield "random-3d", rng.normal(size=(3000, 3)), (1, 16)
    yield "random-8d", rng.random((1500, 8)), (1, 10)
    yield "random-24d", rng.random((600, 24)), (5,)
    yield "tiny", rng.random((12, 3)), (1, 11)
    g = np.arange(30, dtype=float)
    yield "grid-2d", np.array([(x, y) for x in g for y in g]), (1, 4, 12)
    yield "grid-3d-dup", rng.integers(0, 6, size=(1500, 3)).astype(float), \
        (1, 9, 30)
    yield "grid-8d", rng.integers(0, 3, size=(800, 8)).astype(float), (1, 6)


def run_dump(exe, pts, k, metric, tmp):
    n, dim = pts.shape
    src = os.path.join(tmp, "in.bin")
    dst = os.path.join(tmp, "out.bin")
    with open(src, "wb") as f:
        f.write(b"NGKNNIN1")
        f.write(struct.pack("<5Q", n, dim, k, metric, 2))
        f.write(np.ascontiguousarray(pts, dtype="<f8").tobytes())
    subprocess.run([exe, src, dst], check=True)
    with open(dst, "rb") as f:
        data = f.read()
    if data[:8] != b"NGKNNOUT":
        raise RuntimeError("knn_dump wrote no valid output")
    n_out, k_out = struct.unpack("<2Q", data[8:24])
    assert (n_out, k_out) == (n, k)
    dist = np.frombuffer(data, "<f8", n * k, 24).reshape(n, k)
    idx = np.frombuffer(data, "<u4", n * k, 24 + 8 * n * k).reshape(n, k)
    return dist, idx


def rel_err(a, b):
    scale = np.maximum(np.abs(b), 1e-300)
    return np.where(a == b, 0.0, np.abs(a - b) / scale)


def check(name, pts, k, metric, p, mname, dist, idx):
    n = pts.shape[0]
    failures = []
    # reference: scipy.spatial.cKDTree. The k + 1 nearest include the point
    # itself at distance 0, which is the smallest distance: dropping one 0
    # leaves the distances of the k nearest others.
    ref, _ = cKDTree(pts).query(pts, k=k + 1, p=p)
    err = rel_err(dist, ref[:, 1:]).max()
    if err > TOL:
        failures.append("distances differ from cKDTree: max relative "
                        "error %.3g" % err)
    rows = np.arange(n)[:, None]
    if np.any(idx == rows):
        failures.append("a point is its own neighbour")
    if np.any(np.sort(idx, axis=1)[:, 1:] == np.sort(idx, axis=1)[:, :-1]):
        failures.append("a neighbour is repeated")
    diff = pts[idx] - pts[:, None, :]
    if p == 2.0:
        direct = np.sqrt((diff ** 2).sum(axis=2))
    elif p == 1.0:
        direct = np.abs(diff).sum(axis=2)
    else:
        direct = np.abs(diff).max(axis=2)
    err = rel_err(dist, direct).max()
    if err > TOL:
        failures.append("reported distance is not that of the reported "
                        "index: max relative error %.3g" % err)
    order_ok = (dist[:, 1:] > dist[:, :-1]) | (
        (dist[:, 1:] == dist[:, :-1]) & (idx[:, 1:] > idx[:, :-1]))
    if not order_ok.all():
        failures.append("rows not in (distance, index) order")
    for f in failures:
        print("FAIL %s k=%d %s: %s" % (name, k, mname, f))
    return not failures


def main():
    if len(sys.argv) != 2:
        print(__doc__)
        return 2
    exe = sys.argv[1]
    ok = True
    count = 0
    with tempfile.TemporaryDirectory() as tmp:
        for name, pts, ks in clouds():
            for k in ks:
                for metric, p, mname in METRICS:
                    dist, idx = run_dump(exe, pts, k, metric, tmp)
                    ok &= check(name, pts, k, metric, p, mname, dist, idx)
                    count += 1
    print("%d comparisons with scipy.spatial.cKDTree: %s"
          % (count, "all match" if ok else "FAILURES"))
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
