#!/usr/bin/python3
"""bench_run.py — the main job end to end: `nervegap run` on clouds in R^3
with strongly varying density (a few tight Gaussian clusters of very
different widths over a uniform background), knn:16, law scaled, degrees
0-1, auto scale limit under the default simplex budget and a memory budget. One machine-readable line per
case: wall time per stage (from the progress lines), total, peak memory of
the run (wait4 of the child), threads. Median of --repeat runs.

Usage: bench_run.py NERVEGAP [--sizes 10000,100000] [--threads 1,2]
                             [--repeat 3] [--budget 4G]
"""
import argparse
import os
import re
import statistics
import subprocess
import sys
import tempfile
import time

import numpy as np

ap = argparse.ArgumentParser()
ap.add_argument("nervegap")
ap.add_argument("--sizes", default="10000,100000")
ap.add_argument("--threads", default="1,2")
ap.add_argument("--repeat", type=int, default=3)
ap.add_argument("--budget", default="4G")
args = ap.parse_args()


def cloud(n, rng):
    centres = rng.uniform(0, 10, size=(6, 3))
    widths = np.array([0.02, 0.05, 0.1, 0.3, 0.6, 1.0])
    k = int(0.8 * n)
    which = rng.integers(0, 6, size=k)
    pts = centres[which] + rng.normal(size=(k, 3)) * widths[which, None]
    return np.vstack([pts, rng.uniform(0, 10, size=(n - k, 3))])


def one_run(path, out, threads):
    cmd = [args.nervegap, "run", path, "--radius", "knn:16", "--max-degree", "1",
           "--budget", args.budget, "--threads", str(threads), "-o", out]
    t0 = time.monotonic()
    p = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
    _, status, usage = os.wait4(p.pid, 0)
    wall = time.monotonic() - t0
    err = p.stderr.read()
    p.returncode = os.waitstatus_to_exitcode(status)
    if p.returncode != 0:
        sys.exit(f"run failed: {err}")
    stages = {}
    for name, took in re.findall(r"nervegap run: (\S+(?: \S+)?)\s+done in ([0-9.]+) s", err):
        stages[name.replace(" ", "_")] = float(took)
    m = re.search(r"\(scale limit ([0-9.e+-]+), (\d+) simplices\)", err)
    return wall, usage.ru_maxrss, stages, m.group(1), m.group(2)


rng = np.random.default_rng(1)
with tempfile.TemporaryDirectory() as tmp:
    for n in map(int, args.sizes.split(",")):
        path = os.path.join(tmp, f"cloud{n}.npy")
        np.save(path, cloud(n, rng))
        for threads in map(int, args.threads.split(",")):
            runs = [one_run(path, os.path.join(tmp, "out.h5"), threads) for _ in range(args.repeat)]
            walls = [r[0] for r in runs]
            med = runs[walls.index(statistics.median_low(walls))]
            stage_text = " ".join(f"s_{k}={v:.2f}" for k, v in med[2].items())
            print(f"bench=run n={n} dim=3 radius=knn:16 degree=1 threads={threads} "
                  f"scale_limit={med[3]} simplices={med[4]} seconds={statistics.median(walls):.2f} "
                  f"{stage_text} peak_rss_kib={max(r[1] for r in runs)}", flush=True)
