"""ref_cech.py — reference check of the euclidean Čech values of
values.c/cech.c against a general-purpose convex solver.

reference: cvxopt.solvers.socp (Debian python3-cvxopt), a second-order cone
program per simplex; all three growth laws are SOCPs in (y, t):
    scaled   |y − x_i| ≤ rho_i t
    shifted  |y − x_i| ≤ t − rho_i
    power    |(y − x_i, rho_i)| ≤ t
minimise t. The Rips values are checked against the edge formulas of
DESIGN §2.3, written again here.

Usage: /usr/bin/python3 ref_cech.py VALUES_TOOL [--count N] [--seed S]
N random weighted simplices of 2–5 vertices in R^2, R^3 and R^7 per law.
Exit 0 when every value agrees within the tolerance, 1 otherwise. Where
cvxopt cannot narrow its bracket to the tolerance (a few cases in a
thousand), the tool's value must still lie inside it; at most 1% of the
cases may be such.
"""
import argparse
import math
import subprocess
import sys
import tempfile

import numpy as np
from cvxopt import matrix, solvers

# cvxopt's interior-point method stops at its own duality-gap tolerances;
# tightened from the defaults (1e-7). Its answer is used as a bracket: the
# dual objective is a lower bound of the optimum and f(y) = max_i tau_i at
# its primal point y an upper bound, so the tool's value must lie in
# [lower, upper] widened by REL_TOL, and the bracket must be that narrow.
solvers.options.update({"show_progress": False, "maxiters": 200})
SOLVER_TOLS = (1e-11, 1e-10, 1e-9, 1e-8)  # the tight runs may break down
REL_TOL = 1e-8      # Čech: tool vs the cvxopt bracket, relative
RIPS_TOL = 1e-12    # Rips: tool vs the formulas, relative

LAWS = ("scaled", "shifted", "power")
DIMS = (2, 3, 7)


def socp_cech(law, x, rho):
    """Bracket [lower, upper] of min t subject to the law's cone
    constraints; x is m × d. The problem is centred and scaled to unit size
    first (the values scale with it: t ∝ size under scaled, and under
    shifted and power with rho scaled alike), which keeps cvxopt's absolute
    tolerances meaningful. Of the runs at SOLVER_TOLS the narrowest bracket
    is returned (stopping at the first one narrower than REL_TOL/10);
    (nan, nan) when every run failed."""
    m, d = x.shape
    centre = x.mean(axis=0)
    size = max(float(np.max(np.abs(x - centre))), 1e-300)
    xs = (x - centre) / size
    rs = rho if law == "scaled" else rho / size
    c = matrix([0.0] * d + [1.0])
    gq, hq = [], []
    for i in range(m):
        rows = d + 2 if law == "power" else d + 1
        g = np.zeros((rows, d + 1))
        h = np.zeros(rows)
        if law == "scaled":
            g[0, d] = -rs[i]
        elif law == "shifted":
            g[0, d] = -1.0
            h[0] = -rs[i]
        else:
            g[0, d] = -1.0
            h[d + 1] = rs[i]
        for k in range(d):
            g[1 + k, k] = -1.0
            h[1 + k] = -xs[i, k]
        gq.append(matrix(g))
        hq.append(matrix(h))
    best = (math.nan, math.nan)
    for tol in SOLVER_TOLS:
        solvers.options.update({"abstol": tol, "reltol": tol, "feastol": tol})
        try:
            sol = solvers.socp(c, Gq=gq, hq=hq)
        except (ValueError, ArithmeticError):
            continue
        if sol["x"] is None or sol["dual objective"] is None:
            continue  # "unknown" runs count too: the bracket judges them
        y = np.array(sol["x"]).ravel()[:d] * size + centre
        lower = float(sol["dual objective"]) * size
        upper = f_value(law, x, rho, y)
        if lower > upper * (1 + REL_TOL):
            continue  # a broken-down run: its dual value is no bound
        if math.isnan(best[0]) or upper - lower < best[1] - best[0]:
            best = (lower, upper)
        if upper - lower <= 0.1 * REL_TOL * upper:
            break
    return best


def f_value(law, x, rho, y):
    """max_i tau_i(|y − x_i|), the reach times of DESIGN §2.2."""
    t = 0.0
    for i in range(len(rho)):
        s = float(np.linalg.norm(y - x[i]))
        if law == "scaled":
            tau = s / rho[i]
        elif law == "shifted":
            tau = s + rho[i]
        else:
            tau = math.hypot(s, rho[i])
        t = max(t, tau)
    return t


def rips_formula(law, x, rho):
    """DESIGN §2.3: max(max b_i, max e_ij)."""
    m = len(rho)
    t = 0.0 if law == "scaled" else max(rho)
    for i in range(m):
        for j in range(i + 1, m):
            d = float(np.linalg.norm(x[i] - x[j]))
            a, b = sorted((rho[i], rho[j]))
            if law == "scaled":
                e = d / (a + b)
            elif law == "shifted":
                e = max(b, (d + a + b) / 2)
            elif d * d <= b * b - a * a:
                e = b
            else:
                e = math.sqrt(((a + b) ** 2 + d * d) *
                              ((b - a) ** 2 + d * d)) / (2 * d)
            t = max(t, e)
    return t


def make_cases(count, rng):
    cases = []
    for law in LAWS:
        for n in range(count):
            d = DIMS[n % len(DIMS)]
            m = 2 + (n // len(DIMS)) % 4
            x = rng.uniform(-1.0, 1.0, size=(m, d)) * 10.0 ** rng.uniform(-1, 1)
            scale = float(np.max(np.abs(x)))
            if law == "scaled":
                rho = np.exp(rng.uniform(math.log(0.3), math.log(3.0), m))
            else:
                rho = rng.uniform(0.0, 0.6 * scale, m)
                rho[rng.uniform(size=m) < 0.2] = 0.0
            cases.append((law, x, rho))
    return cases


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("tool")
    ap.add_argument("--count", type=int, default=300)
    ap.add_argument("--seed", type=int, default=20240611)
    args = ap.parse_args()
    rng = np.random.default_rng(args.seed)
    cases = make_cases(args.count, rng)
    with tempfile.NamedTemporaryFile("w", suffix=".txt") as f:
        for law, x, rho in cases:
            m, d = x.shape
            nums = " ".join(repr(float(v)) for v in list(x.ravel()) + list(rho))
            f.write(f"euclidean {law} {m} {d} {nums}\n")
        f.flush()
        out = subprocess.run([args.tool, f.name], capture_output=True,
                             text=True, check=True).stdout.split("\n")
    bad = 0
    inconclusive = 0
    worst = {law: 0.0 for law in LAWS}
    worst_gap = {law: 0.0 for law in LAWS}
    worst_above = {law: -math.inf for law in LAWS}
    for (law, x, rho), line in zip(cases, out):
        rips, cech, rips_mono, cech_mono = (float(v) for v in line.split())
        ref_rips = rips_formula(law, x, rho)
        lower, upper = socp_cech(law, x, rho)
        scale = max(abs(upper), 1e-300)
        above, below = (cech - upper) / scale, (lower - cech) / scale
        rel = max(above, below, 0.0)
        gap = abs(upper - lower) / scale
        worst[law] = max(worst[law], rel)
        worst_above[law] = max(worst_above[law], above)
        worst_gap[law] = max(worst_gap[law], gap)
        problems = []
        if not abs(rips - ref_rips) <= RIPS_TOL * ref_rips:
            problems.append(f"rips {rips!r} vs formula {ref_rips!r}")
        if rel <= REL_TOL and not gap <= REL_TOL:
            inconclusive += 1  # cvxopt could not narrow it; tool inside
        elif not (rel <= REL_TOL and gap <= REL_TOL):
            problems.append(f"cech {cech!r} vs cvxopt bracket [{lower!r}, "
                            f"{upper!r}] (outside by {rel:.3g}, width {gap:.3g})")
        if not (rips_mono == rips and cech_mono >= cech and cech_mono >= rips):
            problems.append(f"monotone values {rips_mono!r} {cech_mono!r}")
        if problems:
            bad += 1
            if bad <= 20:
                print(f"MISMATCH {law} m={len(rho)} d={x.shape[1]}: "
                      + "; ".join(problems))
                print("  x =", x.tolist(), " rho =", list(rho))
    for law in LAWS:
        print(f"{law}: {args.count} simplices, worst distance outside the "
              f"cvxopt bracket {worst[law]:.3g}, widest bracket "
              f"{worst_gap[law]:.3g} (tolerance {REL_TOL:g}, relative); "
              f"largest excess over the primal bound f(y) "
              f"{worst_above[law]:.3g}")
    print(f"{bad} mismatches; {inconclusive} simplices inside a cvxopt "
          f"bracket wider than {REL_TOL:g} (at most 1% allowed)")
    return 1 if bad or inconclusive > 0.01 * len(cases) else 0


if __name__ == "__main__":
    sys.exit(main())
