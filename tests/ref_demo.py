#!/usr/bin/python3
"""The demo and the safety of the output file under signals.

- Demo regression: `nervegap run` with the flags of scripts/demo.sh on
  scripts/data/colony.csv, then `nervegap show`: the two longest degree-1
  bars of Čech and of Rips are the two ponds (their birth edges lie on the
  shores of different ponds, whose centres are those of
  scripts/make_demo_data.py), they stand out (each at least twice as long
  as the third longest), show prints them, and Rips fills each pond no
  later than Čech (the demo's point). On a terminal (a pseudo-terminal)
  the progress line shows percentages.
- Killed runs: `run` killed (SIGTERM or SIGKILL) at random moments, most
  of them during the write, never leaves a file at the final path unless
  the run had finished it (then the file is complete and equal to an
  unkilled run); SIGTERM leaves no temporary file either; a rerun succeeds.
- scripts/read_results.py on the demo file: total persistence and
  landscapes against their definitions (Bubenik, "Statistical topological
  data analysis using persistence landscapes", JMLR 16, 2015).

Usage: ref_demo.py NERVEGAP SCRIPTS_DIR
"""
import os
import random
import re
import shlex
import signal
import subprocess
import sys
import tempfile
import time

import h5py
import numpy as np
from checklib import expect, finish, pty_run

NERVEGAP, SCRIPTS = sys.argv[1], sys.argv[2]
DATA = os.path.join(SCRIPTS, "data", "colony.csv")
PONDS = [((0.0, 0.0), 40.0), ((105.0, 12.0), 22.0)]  # scripts/make_demo_data.py

with open(os.path.join(SCRIPTS, "demo.sh")) as fh:
    line = next(ln for ln in fh if ln.startswith("demo_flags=("))
FLAGS = shlex.split(line[len("demo_flags=("):line.rindex(")")])


def pond_of(point):
    d = [np.hypot(point[0] - cx, point[1] - cy) - r for (cx, cy), r in PONDS]
    return int(np.argmin(np.abs(d)))


points = np.loadtxt(DATA, delimiter=",", skiprows=2)
with tempfile.TemporaryDirectory() as tmp:
    out = os.path.join(tmp, "demo.h5")
    rc, err = pty_run([NERVEGAP, "run", DATA, *FLAGS, "-o", out])
    expect("demo run ok", rc == 0, err)
    expect("terminal progress redrawn in place with a percentage",
           "\r\033[K" in err and re.search(r"reduction +\d+%", err) is not None, repr(err[:300]))
    show = subprocess.run([NERVEGAP, "show", out], capture_output=True, text=True)
    expect("show ok", show.returncode == 0, show.stderr)
    text = show.stdout
    longest = {}
    with h5py.File(out, "r") as f:
        for c, label in (("cech", "Čech"), ("rips", "Rips")):
            b = f[f"{c}/dim1/bars"][:]
            bv = f[f"{c}/dim1/birth_vertices"][:]
            order = np.argsort(b[:, 0] - b[:, 1])  # longest first
            top = b[order[:3]]
            ponds = [pond_of(points[bv[i, 0]]) for i in order[:2]] + [pond_of(points[bv[i, 1]]) for i in order[:2]]
            expect(f"{c}: the two longest degree-1 bars are born on different ponds' shores",
                   ponds[0] != ponds[1] and ponds[0] == ponds[2] and ponds[1] == ponds[3], str(ponds))
            lengths = top[:, 1] - top[:, 0]
            expect(f"{c}: both pond bars at least twice the third", lengths[1] >= 2 * lengths[2], str(lengths))
            row = next((ln for ln in text.splitlines() if ln.strip().startswith(label) and "degree" not in ln
                        and text.index(ln) > text.index("degree 1")), "")
            for x, y in top[:2]:
                expect(f"show prints the {c} pond bar [{x:.4g}, {y:.4g})", f"[{x:.4g}, {y:.4g})" in row, row)
            longest[c] = {pond_of(points[bv[i, 0]]): b[i] for i in order[:2]}
        for pond in (0, 1):
            expect(f"pond {pond}: Rips fills it no later than Čech",
                   longest["rips"][pond][1] <= longest["cech"][pond][1], str(longest))

    # read_results.py on the demo file: its figures against the definitions
    rr = subprocess.run(["/usr/bin/python3", os.path.join(SCRIPTS, "read_results.py"), out, "--json"],
                        capture_output=True, text=True, timeout=300)
    expect("read_results.py ok", rr.returncode == 0, rr.stderr)
    if rr.returncode == 0:
        import json
        doc = json.loads(rr.stdout)
        with h5py.File(out, "r") as f:
            T = f["scheme"].attrs["scale_limit"]
            for c in ("cech", "rips"):
                for k in (0, 1):
                    b = f[f"{c}/dim{k}/bars"][:]
                    d = np.where(np.isinf(b[:, 1]), T, b[:, 1])
                    # total persistence: the sum of bar lengths, deaths of inf cut at T
                    want = float(np.sum(d - b[:, 0]))
                    got = doc[c]["total_persistence"][k]
                    expect(f"{c} dim{k} total persistence", abs(got - want) <= 1e-9 * want, f"{got} vs {want}")
                    # landscapes (Bubenik 2015): lambda_j(t) is the j-th
                    # largest tent max(0, min(t - b, d - t)) over the bars
                    land = np.array(doc[c]["landscape"][k])
                    ts = np.array(doc["t"])
                    if len(b):
                        tent = np.maximum(0, np.minimum(ts[None, :] - b[:, :1], d[:, None] - ts[None, :]))
                        expect(f"{c} dim{k} lambda_1 = max tent", np.allclose(land[0], tent.max(axis=0), atol=1e-12))
                        j = min(1, len(b) - 1)
                        second = np.sort(tent, axis=0)[::-1][j] if len(b) > 1 else np.zeros_like(ts)
                        expect(f"{c} dim{k} lambda_2 = second largest tent", np.allclose(land[1], second, atol=1e-12))

    # the landscape code itself on diagrams worked by hand from the
    # definition (Bubenik 2015) and the integral identity: summed over all
    # levels, the integrals of lambda_j are the tents' integrals (d - b)^2 / 4
    sys.path.insert(0, SCRIPTS)
    import read_results
    t = np.array([0.0, 0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 4.0])
    land = read_results.landscape(np.array([[0.0, 4.0], [1.0, 3.0]]), t, 3)
    expect("landscape [0,4),[1,3): lambda_1 = tent of [0,4)", np.allclose(land[0], [0, .5, 1, 1.5, 2, 1.5, 1, 0]))
    expect("landscape [0,4),[1,3): lambda_2 = tent of [1,3)", np.allclose(land[1], [0, 0, 0, .5, 1, .5, 0, 0]))
    expect("landscape [0,4),[1,3): lambda_3 = 0", np.allclose(land[2], 0))
    land = read_results.landscape(np.array([[0.0, 2.0], [1.0, 3.0]]), t, 2)
    expect("landscape [0,2),[1,3): crossing tents", np.allclose(land[0], [0, .5, 1, .5, 1, .5, 0, 0])
           and np.allclose(land[1], [0, 0, 0, .5, 0, 0, 0, 0]))
    rng = np.random.default_rng(9)
    b = np.sort(rng.uniform(0, 10, size=(40, 2)), axis=1)
    ts = np.linspace(0, 10, 20001)
    land = read_results.landscape(b, ts, 40, chunk=7)
    integral = float(np.sum(np.trapz(land, ts, axis=1)))
    want = float(np.sum((b[:, 1] - b[:, 0]) ** 2) / 4)
    expect("sum of landscape integrals = sum (d-b)^2/4", abs(integral - want) <= 1e-4 * want, f"{integral} vs {want}")

    # ---- killed runs ----
    big = os.path.join(tmp, "big.csv")
    np.savetxt(big, np.random.default_rng(5).uniform(size=(100000, 2)), delimiter=",", fmt="%.6f")
    args = [NERVEGAP, "run", big, "--max-degree", "0", "--scale-limit", "0.0015",
            "--slices", "factor:1.1,1.2", "--grid", "500"]
    final = os.path.join(tmp, "k.h5")
    reference = os.path.join(tmp, "ref.h5")
    t0 = time.monotonic()
    subprocess.run(args + ["--quiet", "-o", reference], check=True)
    whole = time.monotonic() - t0
    with h5py.File(reference, "r") as f:
        ref_bars = f["cech/dim0/bars"][:]
    rnd = random.Random(17)
    during_write = 0
    for trial in range(10):
        sig = signal.SIGTERM if trial % 2 == 0 else signal.SIGKILL
        # trials aimed at the write slow it down to about 2 s (a pause at
        # each of its progress reports), so that the kill lands inside it
        env = dict(os.environ, NG_TEST_WRITE_PAUSE_MS="40") if trial < 7 else None
        p = subprocess.Popen(args + ["-o", final], stderr=subprocess.PIPE, text=True, env=env)
        if trial < 7:  # during the write: after the last stage before it
            for ln in p.stderr:
                if "divergence" in ln:
                    break
            time.sleep(rnd.uniform(0.0, 0.3))
        else:  # anywhere in the run
            time.sleep(rnd.uniform(0.0, whole))
        p.send_signal(sig)
        p.wait()
        p.stderr.close()
        leftovers = [n for n in os.listdir(tmp) if ".k.h5.partial-" in n]
        if os.path.exists(final):
            # the run had renamed its complete file before the signal
            with h5py.File(final, "r") as f:
                ok = np.array_equal(f["cech/dim0/bars"][:], ref_bars) and "provenance/stage_seconds" in f
            expect(f"trial {trial}: a file at the final path is complete", ok and p.returncode in (0, -sig, 128 + sig))
            os.unlink(final)
        else:
            expect(f"trial {trial}: killed ({sig.name}), nothing at the final path",
                   p.returncode in (-sig, 128 + sig), str(p.returncode))
            during_write += trial < 7
        if sig == signal.SIGTERM:
            expect(f"trial {trial}: SIGTERM leaves no temporary file", not leftovers, str(leftovers))
        for n in leftovers:  # SIGKILL cannot be caught: the partial file stays
            os.unlink(os.path.join(tmp, n))
    expect("most kills aimed at the write landed before the rename", during_write >= 4, str(during_write))
    rc = subprocess.run(args + ["--quiet", "-o", final]).returncode
    with h5py.File(final, "r") as f:
        expect("a rerun succeeds", rc == 0 and np.array_equal(f["cech/dim0/bars"][:], ref_bars))

finish()
