#!/usr/bin/python3
"""Resource guards of `nervegap run`.

- Budget: a run whose size estimate exceeds --budget fails (exit code 1)
  before allocating the complex, quickly, with the estimate in the
  message: building the neighbour graph alone (24 bytes per directed pair
  at the peak of its construction, src/scale_limit.c; the search stops
  once the graph cannot fit, so the message gives a lower bound), or the
  complex (whose clique count stops once it passes what the
  budget can hold). Its peak resident memory stays below the budget plus
  what the process needs before anything is allocated (measured: the peak
  of `nervegap radii` on the same cloud); not checked in a sanitizer build,
  whose shadow memory counts too.
- Signals: SIGINT and SIGTERM sent to a running `nervegap run` stop it
  with exit code 130 / 143 (128 + the signal, common practice of shells),
  leaving nothing at the output path and no temporary file beside it.

Usage: guards.py NERVEGAP [SANITIZE]   (SANITIZE: meson's b_sanitize)
"""
import os
import re
import signal
import subprocess
import sys
import tempfile
import time

import numpy as np
from checklib import expect, finish

NERVEGAP = sys.argv[1]
SANITIZED = len(sys.argv) > 2 and sys.argv[2] not in ("", "none")
MIB = 1 << 20


def run_rss(args, timeout=300):
    """Runs nervegap; (exit code, stderr, the child's peak RSS in bytes
    from wait4, seconds)."""
    t0 = time.monotonic()
    with tempfile.TemporaryFile("w+") as errf:
        p = subprocess.Popen([NERVEGAP, *args], stdout=subprocess.DEVNULL, stderr=errf)
        deadline = t0 + timeout
        while True:
            pid, status, usage = os.wait4(p.pid, os.WNOHANG)
            if pid:
                break
            if time.monotonic() > deadline:
                p.kill()
                os.wait4(p.pid, 0)
                return None, "timed out", 0, timeout
            time.sleep(0.02)
        p.returncode = os.waitstatus_to_exitcode(status)
        errf.seek(0)
        return p.returncode, errf.read(), usage.ru_maxrss * 1024, time.monotonic() - t0


with tempfile.TemporaryDirectory() as tmp:
    rng = np.random.default_rng(7)
    n = 1500
    cloud = os.path.join(tmp, "cloud.csv")
    np.savetxt(cloud, rng.normal(size=(n, 3)), delimiter=",", fmt="%.17g")
    out = os.path.join(tmp, "out.h5")
    rc, err, base, _ = run_rss(["radii", cloud])
    expect("radii runs", rc == 0, err)

    # the graph alone: every pair is within scale 100; the search stops
    # once the graph cannot fit, so the message gives a lower bound
    rc, err, rss, secs = run_rss(["run", cloud, "--quiet", "--scale-limit", "100",
                                  "--budget", "4M", "-o", out])
    expect("graph over budget: exit 1", rc == 1, (rc, err))
    m = re.search(r"building the neighbour graph alone needs more than the budget of "
                  r"4\.0 MiB \(it has more than ([0-9]+) edges\); --scale-limit "
                  r"([0-9.e+-]+) would fit", err)
    expect("graph over budget: the estimate in the message", m is not None, err)
    if m:
        # 24 bytes a directed pair while the graph is built (src/scale_limit.c)
        edges = int(m.group(1))
        expect("graph over budget: the bound is what 4 MiB holds, and at most all pairs",
               4 * MIB // 48 <= edges <= n * (n - 1) // 2, (edges, 4 * MIB // 48))
    expect("graph over budget: peak memory within the budget",
           SANITIZED or rss < base + 4 * MIB, (rss / MIB, base / MIB))
    expect("graph over budget: no file", os.listdir(tmp) == ["cloud.csv"], os.listdir(tmp))

    # the complex: C(1500, k+1) simplices up to dimension 4 are far beyond
    # 128 MiB; counting them all would take hours
    budget = 128 * MIB
    rc, err, rss, secs = run_rss(["run", cloud, "--quiet", "--scale-limit", "100",
                                  "--max-degree", "3", "--budget", "128M", "-o", out],
                                 timeout=120)
    expect("complex over budget: exit 1", rc == 1, (rc, err))
    m = re.search(r"the complex would have more than ([0-9]+) simplices and need "
                  r"more than 128\.0 MiB, the budget; --scale-limit ([0-9.e+-]+) would fit", err)
    expect("complex over budget: the estimate in the message", m is not None, err)
    if m:
        expect("complex over budget: more simplices than 16 bytes each allow",
               int(m.group(1)) > budget // 16, m.group(1))
    expect("complex over budget: peak memory within the budget",
           SANITIZED or rss < base + budget, (rss / MIB, base / MIB))
    expect("complex over budget: no file", os.listdir(tmp) == ["cloud.csv"], os.listdir(tmp))

    # a complex that can be counted, over a budget that holds its graph
    rc, err, rss, secs = run_rss(["run", cloud, "--quiet", "--scale-limit", "0.33",
                                  "--max-degree", "2", "--budget", "24M", "-o", out])
    m = re.search(r"the complex would have ([0-9]+) simplices and need ([0-9.]+) "
                  r"MiB, more than the budget of 24\.0 MiB", err)
    expect("complex over budget (counted): exit 1 and the estimate",
           rc == 1 and m is not None and float(m.group(2)) > 24, (rc, err))
    expect("complex over budget (counted): peak memory within the budget",
           SANITIZED or rss < base + 24 * MIB, (rss / MIB, base / MIB))

    # signals: wait until the run has created its temporary file (the
    # handlers are installed right after), then interrupt it
    for sig, code in ((signal.SIGINT, 130), (signal.SIGTERM, 143)):
        name = signal.Signals(sig).name
        p = subprocess.Popen([NERVEGAP, "run", cloud, "--quiet", "--scale-limit", "0.35",
                              "--max-degree", "2", "-o", out],
                             stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
        deadline = time.monotonic() + 60
        while (not any(".partial" in f for f in os.listdir(tmp)) and p.poll() is None
               and time.monotonic() < deadline):
            time.sleep(0.01)
        time.sleep(0.5)
        running = p.poll() is None
        expect(f"{name}: the run is still running when signalled", running,
               "make the cloud larger")
        p.send_signal(sig)
        _, err = p.communicate(timeout=120)
        if running:
            expect(f"{name}: exit code {code}", p.returncode == code, (p.returncode, err))
            expect(f"{name}: nothing at or beside the output path",
                   os.listdir(tmp) == ["cloud.csv"], os.listdir(tmp))
        for f in os.listdir(tmp):
            if f != "cloud.csv":
                os.remove(os.path.join(tmp, f))

finish()
