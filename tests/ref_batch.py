#!/usr/bin/python3
"""Batch runs without a cluster: manifests, shards, resume, gather and the
subsample confidence, checked against direct `nervegap run`s, h5py
(python3-h5py), numpy and scipy.

- Four shards (--shard 1/4 .. 4/4) as concurrent processes over a manifest
  of 12 jobs: every job runs exactly once, and every job file equals (every
  dataset and scheme attribute, read by h5py) a direct `nervegap run` with
  the same parameters; gather copies each file unchanged under /jobs/ID and
  writes one CSV row per job whose numbers are those of the file.
- A shard killed with SIGKILL in the middle of a job leaves no final file
  for it; the rerun skips the finished jobs (their files keep their
  modification times, the log says "skipped"), removes the partial file,
  completes the killed job, and gather is complete.
- A job with a bad input fails, is recorded with its error and the others
  go on (exit code 1); a missing, corrupt or failed job file is listed by
  gather (stderr, /index, CSV), never dropped; a rerun redoes a corrupt
  file.
- Bad manifests and a missing input: exit code 2 with FILE:LINE:COLUMN,
  before anything runs (the output directory is not even created).
- Subsample confidence: a subsample job equals a direct run on its points;
  the bottleneck distances of gather equal an independent computation
  (binary search over the costs with a perfect-matching test by
  scipy.sparse.csgraph.maximum_bipartite_matching), the quantile equals
  numpy.quantile(method="inverted_cdf") (the nearest-rank rule), and on a
  noisy circle exactly one degree-1 bar is significant (classical topology:
  the circle has one 1-dimensional hole).

Usage: ref_batch.py NERVEGAP
"""
import csv
import os
import signal
import subprocess
import sys
import tempfile
import time

import h5py
import numpy as np
from scipy.sparse import csr_matrix
from scipy.sparse.csgraph import maximum_bipartite_matching
from batchlib import circle, nervegap, params_of, read_log, run_args, same_results
from checklib import expect, finish

NG = sys.argv[1]


def run(*args, env=None, timeout=300):
    return nervegap(NG, *args, env=env, timeout=timeout)


def bottleneck(a, b):
    """Exact bottleneck distance of two finite diagrams (L∞ ground metric,
    diagonal (d − b)/2): the smallest cost c with a perfect matching of the
    augmented bipartite graph using edges of cost ≤ c
    (reference: scipy.sparse.csgraph.maximum_bipartite_matching)."""
    na, nb = len(a), len(b)
    n = na + nb
    if n == 0:
        return 0.0
    cost = np.zeros((n, n))
    if na and nb:
        cost[:na, :nb] = np.maximum(np.abs(a[:, None, 0] - b[None, :, 0]), np.abs(a[:, None, 1] - b[None, :, 1]))
    cost[:na, nb:] = np.inf
    cost[na:, :nb] = np.inf
    for i in range(na):
        cost[i, nb + i] = (a[i, 1] - a[i, 0]) / 2
    for j in range(nb):
        cost[na + j, j] = (b[j, 1] - b[j, 0]) / 2
    cost[na:, nb:] = 0.0
    values = np.unique(cost[np.isfinite(cost)])
    lo, hi = 0, len(values) - 1
    while lo < hi:
        mid = (lo + hi) // 2
        m = maximum_bipartite_matching(csr_matrix((cost <= values[mid]).astype(np.int8)), perm_type="column")
        if (m >= 0).all():
            hi = mid
        else:
            lo = mid + 1
    return float(values[lo])


def cut(bars, T):
    """Bars cut at T: deaths above T become T, bars born at or after T go."""
    b = bars.copy()
    b[:, 1] = np.minimum(b[:, 1], T)
    return b[b[:, 0] < b[:, 1]]


rng = np.random.default_rng(2024)
with tempfile.TemporaryDirectory() as tmp:
    os.mkdir(os.path.join(tmp, "data"))
    for name, n in (("ring_a", 30), ("ring_b", 36)):
        circle(rng, n, 0.08, os.path.join(tmp, "data", name + ".csv"))
    pts = rng.random((24, 2))
    dist = np.sqrt(((pts[:, None, :] - pts[None, :, :]) ** 2).sum(-1))
    np.savetxt(os.path.join(tmp, "data", "matrix.csv"), dist, delimiter=",", fmt="%r")
    manifest = os.path.join(tmp, "sweep.txt")
    with open(manifest, "w") as f:
        f.write("# 2 point clouds x 2 radii x 2 laws + 1 matrix x 2 x 2 = 12 jobs\n"
                "input data/ring_a.csv data/ring_b.csv\n"
                "distances data/matrix.csv\n"
                "radius knn:4 dtm:4\n"
                "law scaled shifted\n"
                "max-degree 1\n"
                "scale-limit 1.5\n"
                "grid 16\n"
                "slices factor:1.1\n")
    rc, listing, err = run("batch", manifest, "--list")
    jobs = [line.split("\t", 1) for line in listing.splitlines()]
    expect("list: 12 jobs", rc == 0 and len(jobs) == 12, err + listing)
    ids = [j[0] for j in jobs]

    # ---- four shards as separate processes ----
    out = os.path.join(tmp, "out")
    procs = [subprocess.Popen([NG, "batch", manifest, "--out-dir", out, "--shard", f"{i}/4", "--threads", "1"],
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for i in range(1, 5)]
    for i, p in enumerate(procs, 1):
        o, e = p.communicate(timeout=300)
        expect(f"shard {i}/4 exit 0", p.returncode == 0, e)
        expect(f"shard {i}/4 ran 3 jobs", "3 jobs: 3 done, 0 skipped" in e, e)
    done = [line[3] for line in read_log(out) if line[4] == "done"]
    expect("every job done exactly once across the shards", sorted(done) == sorted(ids), str(done))
    for (jid, ptext) in jobs:
        p = params_of(ptext)
        ref = os.path.join(tmp, f"direct-{jid}.h5")
        inp = os.path.join(tmp, p.get("input", p.get("distances")))
        rc, _, e = run(*run_args(p, inp, ref))
        expect(f"direct run of {jid}", rc == 0, e)
        with h5py.File(os.path.join(out, "jobs", jid + ".h5")) as a, h5py.File(ref) as b:
            diff = same_results(a, b)
            expect(f"{jid}: batch file equals a direct run", diff == "", diff)
            expect(f"{jid}: /job records id and parameters",
                   a["job"].attrs["id"] == jid and a["job"].attrs["parameters"] == ptext)
            expect(f"{jid}: same input and sha256", a["input"].attrs["source"] == b["input"].attrs["source"]
                   and a["input"].attrs["sha256"] == b["input"].attrs["sha256"])

    all_h5, table = os.path.join(tmp, "all.h5"), os.path.join(tmp, "summary.csv")
    rc, _, e = run("gather", out, "-o", tmp + "/")
    expect("gather to a directory path: refused at once (exit 2)",
           rc == 2 and "names a directory" in e, (rc, e))
    rc, _, e = run("gather", out, "-o", all_h5, "--table", table)
    expect("gather complete: exit 0", rc == 0 and "12 of 12 jobs complete" in e, e)
    with open(table) as f:
        rows = list(csv.DictReader(f))
    expect("one CSV row per job", [r["id"] for r in rows] == ids, str([r["id"] for r in rows]))
    with h5py.File(all_h5) as g:
        expect("index lists every job", [x.decode() for x in g["index/id"][:]] == ids)
        for r in rows:
            jid = r["id"]
            with h5py.File(os.path.join(out, "jobs", jid + ".h5")) as a:
                diff = same_results(g["jobs"][jid], a, ("scheme", "divergence", "input", "job"))
                expect(f"{jid}: copied unchanged into the gathered file", diff == "", diff)
                p = params_of(a["job"].attrs["parameters"])
                expect(f"{jid}: CSV parameters", all(r[k.replace("-", "_")] == v for k, v in p.items()), str(r))
                want = {"status": "complete", "n_points": str(a["input"].attrs["n_points"]),
                        "bars_cech_1": str(len(a["cech/dim1/bars"])), "bars_rips_0": str(len(a["rips/dim0/bars"])),
                        "simplices_cech": str(int(a["grid/simplices_cech"][-1].sum()))}
                expect(f"{jid}: CSV counts", all(r[k] == v for k, v in want.items()), f"{r} vs {want}")
                for k in range(2):
                    expect(f"{jid}: CSV bottleneck_{k}", float(r[f"bottleneck_{k}"]) == a["divergence/bottleneck"][k])
                    expect(f"{jid}: CSV wasserstein1_{k}", float(r[f"wasserstein1_{k}"]) == a["divergence/wasserstein1"][k])
                expect(f"{jid}: CSV Λ", float(r["factor_bound"]) == a["divergence"].attrs["factor_bound"])

    # ---- a shard killed mid-job, then rerun ----
    kdir = os.path.join(tmp, "killed")
    env = dict(os.environ, NG_TEST_WRITE_PAUSE_MS="60")
    p = subprocess.Popen([NG, "batch", manifest, "--out-dir", kdir, "--shard", "2/3", "--threads", "1"],
                         env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    mine = ids[1::3]
    deadline = time.time() + 120
    killed_job = None
    while time.time() < deadline and killed_job is None:
        time.sleep(0.05)
        if not os.path.isdir(os.path.join(kdir, "logs")):
            continue
        log = read_log(kdir)
        if sum(1 for x in log if x[4] == "done") == 2 and log and log[-1][4] == "started":
            killed_job = log[-1][3]
            os.kill(p.pid, signal.SIGKILL)
    p.wait()
    expect("the shard was killed in its third job", killed_job == mine[2], str(killed_job))
    files = sorted(os.listdir(os.path.join(kdir, "jobs")))
    expect("killed: final files only for the finished jobs",
           [x for x in files if x.endswith(".h5") and not x.startswith(".")] == sorted(j + ".h5" for j in mine[:2]),
           str(files))
    expect("killed: the killed job left only a partial file",
           any(x.startswith(f".{killed_job}.h5.partial-") for x in files), str(files))
    mtimes = {j: os.stat(os.path.join(kdir, "jobs", j + ".h5")).st_mtime_ns for j in mine[:2]}
    before = len(read_log(kdir))
    time.sleep(0.05)
    rc, _, e = run("batch", manifest, "--out-dir", kdir, "--shard", "2/3", "--threads", "1")
    expect("rerun exit 0: 2 skipped, 2 done", rc == 0 and "4 jobs: 2 done, 2 skipped" in e, e)
    rerun = read_log(kdir)[before:]
    expect("rerun: finished jobs skipped, not recomputed",
           sorted(x[3] for x in rerun if x[4] == "skipped") == sorted(mine[:2])
           and not any(x[4] in ("started", "done") and x[3] in mine[:2] for x in rerun), str(rerun))
    expect("rerun: the killed job completed", any(x[4] == "done" and x[3] == killed_job for x in rerun))
    expect("rerun: finished files untouched",
           all(os.stat(os.path.join(kdir, "jobs", j + ".h5")).st_mtime_ns == t for j, t in mtimes.items()))
    expect("rerun: no partial file left", not any(".partial-" in x for x in os.listdir(os.path.join(kdir, "jobs"))))
    for i in (1, 3):
        rc, _, e = run("batch", manifest, "--out-dir", kdir, "--shard", f"{i}/3", "--quiet")
        expect(f"other shard {i}/3", rc == 0, e)
    rc, _, e = run("gather", kdir, "-o", os.path.join(tmp, "k.h5"))
    expect("gather after the rerun is complete", rc == 0 and "12 of 12 jobs complete" in e, e)
    with h5py.File(os.path.join(kdir, "jobs", killed_job + ".h5")) as a, \
            h5py.File(os.path.join(tmp, f"direct-{killed_job}.h5")) as b:
        expect("the redone job equals a direct run", same_results(a, b) == "")

    # ---- a failing job, missing and corrupt files ----
    with open(os.path.join(tmp, "data", "bad.csv"), "w") as f:
        f.write("0,0\n1,abc\n2,2\n")
    fm = os.path.join(tmp, "failing.txt")
    with open(fm, "w") as f:
        f.write("input data/ring_a.csv data/bad.csv data/ring_b.csv\nradius knn:4\nscale-limit 1\ngrid 8\n")
    fdir = os.path.join(tmp, "failing")
    rc, _, e = run("batch", fm, "--out-dir", fdir)
    expect("a failing job: exit 1, the others done", rc == 1 and "3 jobs: 2 done, 0 skipped (finished before), 1 failed" in e, e)
    failed = [x for x in os.listdir(os.path.join(fdir, "jobs")) if x.endswith(".failed")]
    expect("its error is recorded", len(failed) == 1 and failed[0].startswith("bad-knn4-scaled-"), str(failed))
    bad_id = failed[0][:-len(".failed")]
    with open(os.path.join(fdir, "jobs", failed[0])) as f:
        record = f.read()
    expect("the record names the file, line and column", "bad.csv:2:3" in record, record)
    ok_ids = sorted(x[:-3] for x in os.listdir(os.path.join(fdir, "jobs")) if x.endswith(".h5"))
    os.remove(os.path.join(fdir, "jobs", ok_ids[0] + ".h5"))
    with open(os.path.join(fdir, "jobs", ok_ids[1] + ".h5"), "r+b") as f:
        f.seek(0)
        f.write(b"not hdf5 any more")
    ftable = os.path.join(tmp, "failing.csv")
    rc, _, e = run("gather", fdir, "-o", os.path.join(tmp, "f.h5"), "--table", ftable)
    expect("gather lists failed, missing and corrupt jobs: exit 1",
           rc == 1 and f"job {bad_id} failed" in e and f"job {ok_ids[0]} missing" in e
           and f"job {ok_ids[1]} corrupt" in e and "0 of 3 jobs complete" in e, e)
    with open(ftable) as f:
        status = {r["id"]: (r["status"], r["message"]) for r in csv.DictReader(f)}
    expect("the table has a row for each", status.get(bad_id, ("",))[0] == "failed" and "bad.csv:2:3" in status[bad_id][1]
           and status.get(ok_ids[0], ("",))[0] == "missing" and status.get(ok_ids[1], ("",))[0] == "corrupt", str(status))
    with h5py.File(os.path.join(tmp, "f.h5")) as g:
        st = dict(zip([x.decode() for x in g["index/id"][:]], [x.decode() for x in g["index/status"][:]]))
        expect("/index has the statuses", st == {bad_id: "failed", ok_ids[0]: "missing", ok_ids[1]: "corrupt"}, str(st))
        expect("no copy of incomplete jobs", len(g["jobs"]) == 0)
    rc, _, e = run("batch", fm, "--out-dir", fdir)
    expect("rerun redoes the missing and corrupt files", rc == 1 and "2 done" in e and "does not load" in e, e)

    # ---- bad manifests: exit 2 with the line, nothing runs ----
    for text, where in (("input data/ring_a.csv\nradius knn:4\nlaw scaled sideways\n", ":3:12: law"),
                        ("input data/ring_a.csv\nmax-degree 1\nmax-degre 2\n", ":3:1: unknown key"),
                        ("input data/ring_a.csv data/none.csv\n", ":1:23: input data/none.csv: cannot open")):
        bm = os.path.join(tmp, "bad-manifest.txt")
        with open(bm, "w") as f:
            f.write(text)
        bdir = os.path.join(tmp, "never")
        rc, _, e = run("batch", bm, "--out-dir", bdir)
        expect(f"bad manifest {where}: exit 2", rc == 2, f"{rc} {e}")
        expect(f"bad manifest {where}: message names the line", f"nervegap batch: {bm}{where}" in e, e)
        expect(f"bad manifest {where}: nothing ran", not os.path.exists(bdir))

    # ---- subsample confidence on a noisy circle ----
    circle(rng, 60, 0.03, os.path.join(tmp, "data", "circle.csv"))
    sm = os.path.join(tmp, "subsample.txt")
    with open(sm, "w") as f:
        f.write("input data/circle.csv\nmax-degree 1\nscale-limit 1.5\ngrid 8\n"
                "subsamples 20\nsubsample-size 40\nseed 11\nalpha 0.1\n")
    sdir = os.path.join(tmp, "sub")
    procs = [subprocess.Popen([NG, "batch", sm, "--out-dir", sdir, "--shard", f"{i}/2", "--quiet"],
                              stderr=subprocess.PIPE, text=True) for i in (1, 2)]
    for p in procs:
        _, e = p.communicate(timeout=300)
        expect("subsample shard exit 0", p.returncode == 0, e)
    s_h5, s_csv = os.path.join(tmp, "sub.h5"), os.path.join(tmp, "sub.csv")
    rc, _, e = run("gather", sdir, "-o", s_h5, "--table", s_csv)
    expect("subsample gather exit 0", rc == 0, e)
    with open(s_csv) as f:
        srows = list(csv.DictReader(f))
    full_id = srows[0]["id"]
    x = np.loadtxt(os.path.join(tmp, "data", "circle.csv"), delimiter=",")
    with h5py.File(s_h5) as g:
        conf = g["confidence"][full_id]
        full = g["jobs"][full_id]
        subs = [r["id"] for r in srows[1:]]
        expect("20 subsample jobs, each under its parent", len(subs) == 20
               and all(r["subsample_of"] == full_id for r in srows[1:]))
        expect("confidence from all 20", conf.attrs["subsamples_used"] == 20)
        # one subsample job against a direct run on its points
        rows_used = g["jobs"][subs[0]]["job/subsample_points"][:]
        expect("subsample: 40 distinct sorted rows", len(rows_used) == 40 and np.all(np.diff(rows_used) > 0))
        sub_csv = os.path.join(tmp, "sub0.csv")
        with open(sub_csv, "w") as f:
            for pnt in x[rows_used]:
                f.write(f"{pnt[0]!r},{pnt[1]!r}\n")
        ref = os.path.join(tmp, "sub0.h5")
        rc, _, e = run("run", sub_csv, "--max-degree", "1", "--scale-limit", "1.5", "--grid", "8", "--quiet", "-o", ref)
        with h5py.File(ref) as b:
            diff = same_results(g["jobs"][subs[0]], b, ("divergence",))
            expect("a subsample job equals a direct run on its points", rc == 0 and diff == "", diff + e)
        alpha = g.attrs["alpha"]
        T = full["scheme"].attrs["scale_limit"]
        for cx in ("cech", "rips"):
            stored = conf[cx]["bottleneck"][:]
            for k in range(2):
                fb = full[cx][f"dim{k}/bars"][:]
                mine_d = []
                for s in subs:
                    Ts = min(T, g["jobs"][s]["scheme"].attrs["scale_limit"])
                    mine_d.append(bottleneck(cut(fb, Ts), cut(g["jobs"][s][cx][f"dim{k}/bars"][:], Ts)))
                mine_d = np.array(mine_d)
                expect(f"{cx} degree {k}: bottleneck distances = scipy matching",
                       np.allclose(stored[:, k], mine_d, rtol=1e-12, atol=0), f"{stored[:, k]} vs {mine_d}")
                q = np.quantile(stored[:, k], 1 - alpha, method="inverted_cdf")  # reference: numpy nearest rank
                expect(f"{cx} degree {k}: quantile = numpy inverted_cdf", conf[cx]["quantile"][k] == q,
                       f"{conf[cx]['quantile'][k]} vs {q}")
                length = np.minimum(fb[:, 1], T) - fb[:, 0]
                marks = conf[cx][f"significant_dim{k}"][:]
                expect(f"{cx} degree {k}: marks = bars longer than 2q", np.array_equal(marks.astype(bool), length > 2 * q))
                expect(f"{cx} degree {k}: CSV significant count", int(srows[0][f"significant_{cx}_{k}"]) == int(marks.sum()))
            # classical topology: a circle has exactly one 1-dimensional hole
            expect(f"{cx}: exactly one significant degree-1 bar on the circle",
                   int(conf[cx]["significant_dim1"][:].sum()) == 1,
                   f"{conf[cx]['significant_dim1'][:]} q={conf[cx]['quantile'][:]}")
finish()
