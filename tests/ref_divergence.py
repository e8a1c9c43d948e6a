#!/usr/bin/python3
"""Checks of the divergence figures of `nervegap run` and of `nervegap distance`
against the stability theorem and an outside bottleneck computation.

- Stability (Cohen-Steiner, Edelsbrunner, Harer, "Stability of persistence
  diagrams", Discrete Comput. Geom. 37, 2007): bottleneck(Dgm f, Dgm g) <=
  max |f - g|.
  * A cloud and a copy with every point moved by at most eps, uniform radii
    (ball radius t): every Rips value d/2 and every Čech value (smallest
    enclosing ball radius) moves by at most eps, so `nervegap distance`
    between the two runs is <= eps in every degree, for both complexes.
  * Čech and Rips of one run are two filtrations of one complex with
    |cech - rips| <= Δ, so /divergence/bottleneck <= shift_bound; and
    log cech - log rips <= log Λ, so the bottleneck distance between the
    log-scaled diagrams (degrees >= 1, where births are positive) is
    <= log Λ.
- /divergence/bottleneck equals an exhaustive bottleneck computed here:
  binary search over the candidate costs with a perfect-matching test
  (scipy.sparse.csgraph.maximum_bipartite_matching, python3-scipy) on the
  diagrams augmented with diagonal copies; deaths of +inf count as T.
- Wasserstein: /divergence/wasserstein1,2 equal scipy.optimize.linear_sum_assignment
  on the augmented cost matrix (within the stored relative error).

Usage: ref_divergence.py NERVEGAP
"""
import json
import math
import os
import sys
import tempfile
from collections import Counter

import h5py
import numpy as np
from scipy.optimize import linear_sum_assignment
from scipy.sparse import csr_matrix
from scipy.sparse.csgraph import maximum_bipartite_matching
from checklib import expect, finish, nervegap as run_binary

NERVEGAP = sys.argv[1]


def nervegap(*args):
    return run_binary(NERVEGAP, *args)


def augmented_costs(a, b):
    """Cost matrix of the diagrams augmented with diagonal copies (L-inf)."""
    na, nb = len(a), len(b)
    n = na + nb
    c = np.zeros((n, n))
    if na and nb:
        c[:na, :nb] = np.maximum(np.abs(a[:, None, 0] - b[None, :, 0]),
                                 np.abs(a[:, None, 1] - b[None, :, 1]))
    big = np.inf
    c[:na, nb:] = big
    c[na:, :nb] = big
    for i in range(na):
        c[i, nb + i] = (a[i, 1] - a[i, 0]) / 2
    for j in range(nb):
        c[na + j, j] = (b[j, 1] - b[j, 0]) / 2
    return c


def bottleneck_reference(a, b):
    c = augmented_costs(a, b)
    n = len(c)
    if n == 0:
        return 0.0
    cand = np.unique(c[np.isfinite(c)])
    lo, hi = 0, len(cand) - 1
    while lo < hi:
        mid = (lo + hi) // 2
        m = maximum_bipartite_matching(csr_matrix((c <= cand[mid]).astype(np.int8)), perm_type="column")
        if np.all(m >= 0):
            hi = mid
        else:
            lo = mid + 1
    return cand[lo]


def wasserstein_reference(a, b, p):
    c = augmented_costs(a, b)
    if len(c) == 0:
        return 0.0
    cp = np.where(np.isfinite(c), c ** p, 1e300)
    r, s = linear_sum_assignment(cp)
    return cp[r, s].sum() ** (1 / p)


def cut(bars, T):
    b = bars.copy()
    b[np.isinf(b[:, 1]), 1] = T
    return b[b[:, 1] > b[:, 0]]


rng = np.random.default_rng(3)
with tempfile.TemporaryDirectory() as tmp:
    for trial in range(8):
        dim = 2 + trial % 2
        n = 18 + trial
        x = rng.uniform(0, 1, size=(n, dim))
        eps = 0.01 * (1 + trial)
        step = rng.normal(size=x.shape)
        step *= (eps * rng.uniform(0, 1, size=(n, 1))) / np.linalg.norm(step, axis=1, keepdims=True)
        pa, pb = os.path.join(tmp, "a.csv"), os.path.join(tmp, "b.csv")
        np.savetxt(pa, x, delimiter=",", fmt="%.17g")
        np.savetxt(pb, x + step, delimiter=",", fmt="%.17g")
        oa, ob = os.path.join(tmp, "a.h5"), os.path.join(tmp, "b.h5")
        nervegap("run", pa, "--quiet", "-o", oa, "--max-degree", "2")
        nervegap("run", pb, "--quiet", "-o", ob, "--max-degree", "2")
        for c in ("cech", "rips"):
            table = json.loads(nervegap("distance", oa, ob, "--complex", c, "--json"))
            for row in table["degrees"]:
                # stability theorem (Cohen-Steiner, Edelsbrunner, Harer 2007)
                expect(f"{trial} {c} dim{row['degree']} bottleneck <= eps",
                       row["bottleneck"] is not None and row["bottleneck"] <= eps * (1 + 1e-9),
                       f"{row['bottleneck']} > {eps}")
                with h5py.File(oa) as fa, h5py.File(ob) as fb:
                    ba = fa[f"{c}/dim{row['degree']}/bars"][:]
                    bb = fb[f"{c}/dim{row['degree']}/bars"][:]
                fin_a, fin_b = ba[np.isfinite(ba[:, 1])], bb[np.isfinite(bb[:, 1])]
                ia = np.sort(ba[np.isinf(ba[:, 1]), 0])
                ib = np.sort(bb[np.isinf(bb[:, 1]), 0])
                ess = np.max(np.abs(ia - ib)) if len(ia) == len(ib) and len(ia) else 0.0
                want = max(bottleneck_reference(fin_a, fin_b), ess) if len(ia) == len(ib) else math.inf
                expect(f"{trial} {c} dim{row['degree']} distance = reference",
                       row["bottleneck"] == want, f"{row['bottleneck']} vs {want}")

        # one run: Čech against Rips
        for rule, law in (("knn:3", "scaled"), ("dtm:4", "shifted"), ("uniform", "scaled")):
            o = os.path.join(tmp, "one.h5")
            nervegap("run", pa, "--quiet", "-o", o, "--max-degree", "2", "--radius", rule,
                     "--law", law, "--scale-limit", "0.4" if law == "scaled" else "0.3")
            with h5py.File(o) as f:
                T = f["scheme"].attrs["scale_limit"]
                dv = f["divergence"]
                lam, delta = dv.attrs["factor_bound"], dv.attrs["shift_bound"]
                rel = dv.attrs["wasserstein_relative_error"]
                for k in range(3):
                    a = cut(f[f"cech/dim{k}/bars"][:], T)
                    b = cut(f[f"rips/dim{k}/bars"][:], T)
                    got = dv["bottleneck"][k]
                    expect(f"{trial} {rule} dim{k} bottleneck = reference",
                           got == bottleneck_reference(a, b), f"{got} vs {bottleneck_reference(a, b)}")
                    expect(f"{trial} {rule} dim{k} bottleneck <= Δ (stability)",
                           got <= delta * (1 + 1e-12) + 1e-15, f"{got} > {delta}")
                    for p, key in ((1, "wasserstein1"), (2, "wasserstein2")):
                        want = wasserstein_reference(a, b, p)
                        expect(f"{trial} {rule} dim{k} {key} = linear_sum_assignment",
                               abs(dv[key][k] - want) <= max(rel, 1e-12) * want + 1e-14,
                               f"{dv[key][k]} vs {want}")
                    if k >= 1 and len(a) and len(b) and a[:, 0].min() > 0 and b[:, 0].min() > 0:
                        la = np.log(a)
                        lb = np.log(b)
                        got = bottleneck_reference(la, lb)
                        expect(f"{trial} {rule} dim{k} log bottleneck <= log Λ",
                               got <= math.log(lam) + 1e-12, f"{got} > {math.log(lam)}")

    # a larger run: unbalanced real diagrams (many more short Čech bars than
    # Rips ones), solved by shortest paths with the smaller side bidding;
    # then the same run under a Wasserstein limit below the degree-1
    # difference: W1, W2 NaN exactly there, everything else unchanged (the
    # limit counts the points of either diagram without an identical point
    # in the other; the degree-0 diagrams are equal)
    x = rng.uniform(0, 1, size=(500, 2))
    pc = os.path.join(tmp, "c.csv")
    np.savetxt(pc, x, delimiter=",", fmt="%.17g")
    o, ol = os.path.join(tmp, "c.h5"), os.path.join(tmp, "cl.h5")
    flags = ["--quiet", "--radius", "knn:4", "--scale-limit", "0.08"]
    nervegap("run", pc, *flags, "-o", o)
    with h5py.File(o) as f:
        T = f["scheme"].attrs["scale_limit"]
        dv = f["divergence"]
        rel = dv.attrs["wasserstein_relative_error"]
        a = cut(f["cech/dim1/bars"][:], T)
        b = cut(f["rips/dim1/bars"][:], T)
        expect("larger run: unbalanced degree-1 diagrams", len(a) > 2 * len(b) > 40,
               f"{len(a)} and {len(b)} bars")
        for p, key in ((1, "wasserstein1"), (2, "wasserstein2")):
            want = wasserstein_reference(a, b, p)
            expect(f"larger run {key} = linear_sum_assignment",
                   abs(dv[key][1] - want) <= max(rel, 1e-12) * want + 1e-14,
                   f"{dv[key][1]} vs {want}")
        before = {key: dv[key][:] for key in ("bottleneck", "wasserstein1", "wasserstein2")}
        sizes = []
        for k in (0, 1):
            ca = Counter(map(tuple, cut(f[f"cech/dim{k}/bars"][:], T)))
            cb = Counter(map(tuple, cut(f[f"rips/dim{k}/bars"][:], T)))
            sizes.append(max(sum((ca - cb).values()), sum((cb - ca).values())))
        expect("degree 0: equal diagrams", sizes[0] == 0, str(sizes))
    limit = sizes[1] - 1
    nervegap("run", pc, *flags, "--wasserstein-limit", str(limit), "-o", ol)
    with h5py.File(ol) as f:
        dv = f["divergence"]
        expect("limit recorded", dv.attrs["wasserstein_limit"] == limit)
        expect("bottleneck unchanged under the limit",
               np.array_equal(dv["bottleneck"][:], before["bottleneck"]))
        for key in ("wasserstein1", "wasserstein2"):
            for k in (0, 1):
                if sizes[k] > limit:
                    expect(f"{key} dim{k} NaN over the limit", math.isnan(dv[key][k]))
                else:
                    expect(f"{key} dim{k} unchanged under the limit", dv[key][k] == before[key][k])
    doc = json.loads(nervegap("export", ol, "--format", "json", "--what", "divergence"))
    expect("export: NaN written as null", doc["wasserstein1"][1] is None and "null" in doc["note"])

finish()
