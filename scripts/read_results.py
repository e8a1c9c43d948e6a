#!/usr/bin/python3
"""read_results.py — what a statistics script does next with a nervegap
results file: per homology degree, for the Čech and the Rips barcode,

- the total persistence, the sum of the bar lengths (d - b), and
- the persistence landscape (Bubenik, "Statistical topological data
  analysis using persistence landscapes", J. Mach. Learn. Res. 16, 2015):
  lambda_j(t) = the j-th largest of the tents max(0, min(t - b, d - t))
  over the bars [b, d), on a grid of scales over [0, T].

Bars alive at the scale limit T (death = inf) are cut at T, as the run's
own divergence figures do. Needs h5py and numpy (Debian python3-h5py,
python3-numpy).

    /usr/bin/python3 scripts/read_results.py OUT.h5 [--levels 5] [--points 200] [--json]
"""
import argparse
import json

import h5py
import numpy as np


def bars_of(f, complex_name, k):
    """The bars of one diagram as an (m, 2) array, deaths of inf cut at T."""
    T = f["scheme"].attrs["scale_limit"]
    b = f[f"{complex_name}/dim{k}/bars"][:]
    b[np.isinf(b[:, 1]), 1] = T
    return b


def total_persistence(bars):
    return float(np.sum(bars[:, 1] - bars[:, 0]))


def landscape(bars, t, levels, chunk=4096):
    """lambda_1..lambda_levels on the scales t: (levels, len(t)); zero rows
    beyond the number of bars. Bars are taken in chunks so that memory stays
    at (chunk + levels) * len(t)."""
    top = np.zeros((levels, len(t)))
    for start in range(0, len(bars), chunk):
        b = bars[start:start + chunk]
        tents = np.maximum(0.0, np.minimum(t[None, :] - b[:, :1], b[:, 1:] - t[None, :]))
        both = np.vstack([top, tents])
        top = -np.sort(-both, axis=0)[:levels]
    return top


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("results")
    ap.add_argument("--levels", type=int, default=5, help="landscape levels lambda_1..lambda_K (5)")
    ap.add_argument("--points", type=int, default=200, help="scales on the grid over [0, T] (200)")
    ap.add_argument("--json", action="store_true", help="print everything as JSON")
    a = ap.parse_args()
    with h5py.File(a.results, "r") as f:
        T = float(f["scheme"].attrs["scale_limit"])
        D = int(f["scheme"].attrs["max_degree"])
        t = np.linspace(0.0, T, a.points)
        out = {"file": a.results, "scale_limit": T, "levels": a.levels, "t": t.tolist()}
        for c in ("cech", "rips"):
            tp, land = [], []
            for k in range(D + 1):
                b = bars_of(f, c, k)
                tp.append(total_persistence(b))
                land.append(landscape(b, t, a.levels).tolist())
            out[c] = {"total_persistence": tp, "landscape": land}
    if a.json:
        print(json.dumps(out))
        return
    print(f"{a.results}: scale limit T = {T:g}; bars alive at T cut at T")
    print("total persistence (sum of bar lengths)")
    print("  degree        Čech        Rips")
    for k in range(D + 1):
        print(f"  {k:6d} {out['cech']['total_persistence'][k]:11.4f} {out['rips']['total_persistence'][k]:11.4f}")
    print(f"persistence landscapes on {a.points} scales over [0, T] (Bubenik 2015): "
          "max of lambda_1..lambda_3 and the L1 norm of lambda_1")
    step = t[1] - t[0] if len(t) > 1 else 0.0
    for k in range(D + 1):
        for c, label in (("cech", "Čech"), ("rips", "Rips")):
            land = np.array(out[c]["landscape"][k])
            peaks = " ".join(f"{v:8.4f}" for v in land[:3].max(axis=1))
            print(f"  degree {k} {label}: peaks {peaks}   |lambda_1|_1 = {np.trapz(land[0], dx=step):.4f}")


if __name__ == "__main__":
    main()
