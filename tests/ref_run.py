#!/usr/bin/python3
"""Reference checks of `nervegap run` against outside values.

- Degree-0 deaths of the Rips (and Čech: edges agree) barcode under the
  scaled-uniform scheme (ball radius t) are the minimum spanning tree edge
  lengths / 2 (scipy.sparse.csgraph.minimum_spanning_tree, python3-scipy),
  for euclidean, chebyshev and manhattan clouds.
- Under law shifted with uniform radii (rho = 0) the values are the same
  as under scaled-uniform: the two laws then define one filtration.
- Under chebyshev (any dimension) and manhattan (plane), L∞ / L1 in the
  plane are hyperconvex (Aronszajn and Panitchpakdi, Pacific J. Math. 6,
  1956), so the Čech and Rips barcodes are equal for any radii and law.
- At the full scale (auto), both complexes are cones: exactly one infinite
  bar (degree 0) per filtration, and the file says not truncated.
- The results file has the paths of DESIGN §5 (read with python3-h5py).

Usage: ref_run.py NERVEGAP
"""
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


def run(path, out, *flags):
    p = subprocess.run([NERVEGAP, "run", path, "--quiet", "-o", out, *flags],
                       capture_output=True, text=True, timeout=300)
    if p.returncode != 0:
        raise RuntimeError(f"nervegap run failed: {p.stderr}")
    return h5py.File(out, "r")


def bars(f, complex_name, k):
    return f[f"{complex_name}/dim{k}/bars"][:]


def same_multiset(a, b, tol=1e-12):
    if a.shape != b.shape:
        return False
    a = a[np.lexsort((a[:, 1], a[:, 0]))]
    b = b[np.lexsort((b[:, 1], b[:, 0]))]
    both_inf = np.isinf(a) & np.isinf(b)
    with np.errstate(invalid="ignore"):
        diff = np.where(both_inf, 0.0, np.abs(a - b))
    return bool(np.all(diff <= tol * np.maximum(1.0, np.abs(np.where(both_inf, 0, a)))))


rng = np.random.default_rng(11)
with tempfile.TemporaryDirectory() as tmp:
    out = os.path.join(tmp, "out.h5")
    for trial in range(12):
        dim = (2, 3, 2, 5)[trial % 4]
        n = int(rng.integers(8, 30))
        x = rng.uniform(-1, 1, size=(n, dim))
        path = os.path.join(tmp, f"c{trial}.csv")
        np.savetxt(path, x, delimiter=",", fmt="%.17g")
        metrics = [("euclidean", "euclidean"), ("chebyshev", "chebyshev")]
        if dim == 2:
            metrics.append(("manhattan", "cityblock"))
        for metric, scipy_name in metrics:
            d = cdist(x, x, metric=scipy_name)
            mst = minimum_spanning_tree(d).toarray()
            want = np.sort(mst[mst > 0]) / 2
            with run(path, out, "--metric", metric, "--max-degree", "1") as f:
                for c in ("rips", "cech"):
                    b = bars(f, c, 0)
                    finite = np.sort(b[np.isfinite(b[:, 1]), 1])
                    # reference: scipy.sparse.csgraph.minimum_spanning_tree
                    expect(f"{c} dim0 deaths = MST/2 ({metric}, n={n}, d={dim})",
                           finite.shape == want.shape and np.allclose(finite, want, rtol=1e-12, atol=0),
                           f"{finite[:4]} vs {want[:4]}")
                    expect(f"{c} births 0", np.all(b[:, 0] == 0))
                    # full scale: a cone, one infinite bar in degree 0 only
                    expect(f"{c} one essential class", np.sum(np.isinf(b[:, 1])) == 1)
                    expect(f"{c} dim1 all finite", np.all(np.isfinite(bars(f, c, 1)[:, 1])))
                expect("not truncated", f["scheme"].attrs["truncated"] == 0)
                if metric != "euclidean":
                    # hyperconvex: Čech = Rips (Aronszajn and Panitchpakdi 1956)
                    for k in (0, 1):
                        expect(f"{metric} cech = rips dim{k}",
                               same_multiset(bars(f, "cech", k), bars(f, "rips", k)))
            if metric == "euclidean":
                with run(path, out, "--law", "shifted") as f:
                    shifted = {c: [bars(f, c, k) for k in (0, 1)] for c in ("cech", "rips")}
                with run(path, out) as f:
                    for c in ("cech", "rips"):
                        for k in (0, 1):
                            expect(f"shifted-uniform = scaled-uniform {c} dim{k}",
                                   same_multiset(shifted[c][k], bars(f, c, k)))

    # adaptive radii under chebyshev: still Čech = Rips, every law
    x = rng.uniform(0, 1, size=(25, 3))
    path = os.path.join(tmp, "cheb.csv")
    np.savetxt(path, x, delimiter=",", fmt="%.17g")
    for law in ("scaled", "shifted", "power"):
        with run(path, out, "--metric", "chebyshev", "--radius", "knn:3", "--law", law,
                 "--max-degree", "2") as f:
            for k in (0, 1, 2):
                expect(f"chebyshev knn:3 {law} cech = rips dim{k}",
                       same_multiset(bars(f, "cech", k), bars(f, "rips", k)))

    # the file layout of DESIGN §5
    with run(path, out, "--radius", "dtm:4", "--law", "power", "--slices", "factor:1.1,1.3",
             "--max-degree", "1") as f:
        expect("format attr", f.attrs["format"] == "nervegap-results")
        for key in ("format_version", "tool_version", "command"):
            expect(f"root attr {key}", key in f.attrs)
        for key in ("source", "n_points", "ambient_dim", "metric"):
            expect(f"input attr {key}", key in f["input"].attrs)
        for key in ("radius_rule", "law", "scale_limit", "max_degree", "truncated"):
            expect(f"scheme attr {key}", key in f["scheme"].attrs)
        expect("radius rule", f["scheme"].attrs["radius_rule"] == "dtm:4")
        expect("vertices", f["vertices/radius"].shape == (25,) and f["vertices/birth"].shape == (25,))
        expect("births = radii under power", np.array_equal(f["vertices/radius"][:], f["vertices/birth"][:]))
        expect("slices values", list(f["slices/values"][:]) == [1.1, 1.3])
        expect("slices kind", f["slices/values"].attrs["kind"] == "factor")
        for g in ("cech", "rips", "slices/0", "slices/1"):
            for k in (0, 1):
                b = f[f"{g}/dim{k}/bars"]
                bv = f[f"{g}/dim{k}/birth_vertices"]
                dv = f[f"{g}/dim{k}/death_vertices"]
                expect(f"{g} dim{k} shapes", bv.shape == (b.shape[0], k + 1) and dv.shape == (b.shape[0], k + 2))
                arr = b[:]
                expect(f"{g} dim{k} no zero-length bars", np.all(arr[:, 1] > arr[:, 0]))
                expect(f"{g} dim{k} -1 exactly where death is inf",
                       np.array_equal(np.all(dv[:] == -1, axis=1), np.isinf(arr[:, 1])))

    # the same output for any thread count (DESIGN §3)
    x = rng.uniform(0, 1, size=(300, 3))
    path = os.path.join(tmp, "threads.csv")
    np.savetxt(path, x, delimiter=",", fmt="%.17g")
    outs = []
    for threads in ("1", "2", "4"):
        o = os.path.join(tmp, f"t{threads}.h5")
        flags = ["--radius", "knn:5", "--max-degree", "2", "--scale-limit", "0.12",
                 "--slices", "shift:0.01", "--threads", threads]
        with run(path, o, *flags) as f:
            outs.append({name: f[name][:] for name in
                         [f"{g}/dim{k}/{d}" for g in ("cech", "rips", "slices/0") for k in (0, 1, 2)
                          for d in ("bars", "birth_vertices", "death_vertices")]
                         + [f"divergence/{d}" for d in ("bottleneck", "wasserstein1", "wasserstein2")]})
    expect("threads 1, 2 and 4 give identical bars, simplices and divergence",
           all(np.array_equal(outs[0][k], o[k]) for o in outs[1:] for k in outs[0]))

    # a large cloud: degree-0 deaths = MST / 2 (scipy), cut just above the
    # longest MST edge so that every finite degree-0 bar is complete
    from scipy.spatial import cKDTree
    n = 5000
    x = rng.uniform(0, 1, size=(n, 3))
    path = os.path.join(tmp, "big.csv")
    np.savetxt(path, x, delimiter=",", fmt="%.17g")
    pairs = cKDTree(x).sparse_distance_matrix(cKDTree(x), 0.15, output_type="coo_matrix")
    mst = minimum_spanning_tree(pairs.tocsr()).toarray()
    want = np.sort(mst[mst > 0]) / 2
    expect("n=5000 MST connected within 0.15", len(want) == n - 1)
    with run(path, out, "--max-degree", "0", "--scale-limit", repr(want[-1] * 1.01)) as f:
        b = f["rips/dim0/bars"][:]
        finite = np.sort(b[np.isfinite(b[:, 1]), 1])
        # reference: scipy.sparse.csgraph.minimum_spanning_tree
        expect("n=5000 rips dim0 deaths = MST/2", finite.shape == want.shape and
               np.allclose(finite, want, rtol=1e-12, atol=0))

finish()
