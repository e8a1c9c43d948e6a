"""batchlib.py — what the batch checks share (tests/ref_batch.py and
tests/slurm_cluster.py): invented inputs, the `nervegap run` equivalent of
a job's parameters, and comparing results files with h5py."""
import os
import subprocess

import h5py
import numpy as np


def nervegap(binary, *args, env=None, timeout=300):
    """Runs the binary; returns (exit code, stdout, stderr)."""
    p = subprocess.run([binary, *args], capture_output=True, text=True, timeout=timeout, env=env)
    return p.returncode, p.stdout, p.stderr


def circle(rng, n, noise, path):
    """Invented data: n points near the unit circle."""
    t = rng.random(n) * 2 * np.pi
    x = np.column_stack([np.cos(t), np.sin(t)]) + rng.normal(0, noise, (n, 2))
    with open(path, "w") as f:
        for p in x:
            f.write(f"{p[0]!r},{p[1]!r}\n")
    return x


def params_of(text):
    return dict(field.split("=", 1) for field in text.split("\t"))


def run_args(p, inp, out):
    """The `nervegap run` command line equivalent to job parameters p."""
    a = [inp] if "input" in p else ["--distances", inp]
    if "input" in p:
        a += ["--metric", p["metric"]]
    a += ["--radius", p["radius"], "--law", p["law"], "--max-degree", p["max-degree"],
          "--scale-limit", p["scale-limit"], "--grid", p["grid"], "--max-simplices", p["max-simplices"],
          "--wasserstein-limit", p["wasserstein-limit"]]
    if p["raw-radius"] == "yes":
        a.append("--raw-radius")
    if p["merge-duplicates"] == "yes":
        a.append("--merge-duplicates")
    if p["slices"] != "none":
        a += ["--slices", p["slices"]]
    if p["budget"] != "default":
        a += ["--budget", p["budget"]]
    return ["run", *a, "--quiet", "-o", out]


def datasets(f, skip=("provenance", "job")):
    out = {}
    f.visititems(lambda name, o: out.__setitem__(name, o[()])
                 if isinstance(o, h5py.Dataset) and name.split("/")[0] not in skip else None)
    return out


def same_results(a, b, groups_with_attrs=("scheme", "divergence")):
    """Equal datasets (bit for bit) and attributes of the scheme and
    divergence; returns a description of the first difference or ''."""
    da, db = datasets(a), datasets(b)
    if sorted(da) != sorted(db):
        return f"datasets differ: {set(da) ^ set(db)}"
    for k in da:
        if da[k].shape != db[k].shape or not np.array_equal(da[k], db[k], equal_nan=da[k].dtype.kind == "f"):
            return f"{k} differs"
    for g in groups_with_attrs:
        for k, v in a[g].attrs.items():
            w = b[g].attrs[k]
            if not (v == w or (isinstance(v, float) and np.isnan(v) and np.isnan(w))):
                return f"/{g} attr {k}: {v} vs {w}"
    return ""


def read_log(out):
    lines = []
    for name in sorted(os.listdir(os.path.join(out, "logs"))):
        with open(os.path.join(out, "logs", name)) as f:
            lines += [line.rstrip("\n").split("\t") for line in f]
    return lines


