#!/usr/bin/python3
"""The results file against h5py (python3-h5py, an independent reader of
HDF5), SHA-256 against Python's hashlib, and the commands built on the
library's reader (show, export, distance), provenance and progress.

- Round trip: what the library writes (a synthetic record, tests/results_tool.c)
  h5py reads back equal: every dataset, every attribute; large datasets are
  chunked and deflate-compressed, small ones not.
- The library's reader (ng_results_load) returns what h5py sees, for files
  of format 2, for a file turned into format 1 with h5py, and it names the
  file and the HDF5 path when something is missing or malformed.
- SHA-256 of files of every length around the block boundaries and of a few
  MiB equals hashlib.sha256; `run` records hashlib's digest of its input.
- `run` records the command line, the threads, the HDF5 version that h5py
  reports for the same library (h5py.version.hdf5_version), the stages.
- `export` output parses with Python's csv and json modules and equals the
  HDF5 content (read by h5py).
- An unwritable output path fails before the input is read.
- Progress: one plain line per stage without a terminal, a redrawn line with
  a percentage on a terminal (a pseudo-terminal here), nothing with --quiet.

Usage: ref_results.py NERVEGAP RESULTS_TOOL
"""
import csv
import hashlib
import io
import json
import math
import os
import shutil
import subprocess
import sys
import tempfile

import h5py
import numpy as np
from checklib import expect, finish, pty_run

NERVEGAP, TOOL = sys.argv[1], sys.argv[2]


def run(binary, *args, timeout=300):
    p = subprocess.run([binary, *args], capture_output=True, text=True, timeout=timeout)
    return p.returncode, p.stdout, p.stderr


def attr_value(v):
    if isinstance(v, bytes):
        return v.decode()
    if isinstance(v, np.generic):
        return v.item()
    return v


def same(a, b):
    """Equal as numbers (NaN equals NaN, exact otherwise) or as strings."""
    if isinstance(a, float) or isinstance(b, float):
        return (math.isnan(a) and math.isnan(b)) or a == b
    return a == b


def compare_to_h5(name, dump, f, full):
    """dump (JSON from results_tool) against the h5py view of file f. With
    full, every dataset and attribute of the file must be in the dump."""
    for path, want in dump["datasets"].items():
        if path not in f:
            expect(f"{name}: {path} in the file", False)
            continue
        got = f[path][()]
        w = np.array(want, dtype=got.dtype).reshape(got.shape) if len(want) else np.zeros(got.shape, got.dtype)
        expect(f"{name}: {path} equal", got.shape == w.shape and np.array_equal(got, w, equal_nan=got.dtype.kind == "f"),
               f"{got.shape} vs {w.shape}")
    for obj, attrs in dump["attrs"].items():
        for k, want in attrs.items():
            if k not in f[obj].attrs:  # absent in the file (format 1): marked so
                expect(f"{name}: {obj} attr {k} absent and marked",
                       want is None or want == -1 or (isinstance(want, float) and math.isnan(want)), repr(want))
            else:
                got = attr_value(f[obj].attrs[k])
                expect(f"{name}: {obj} attr {k}", same(got, want), f"{got!r} vs {want!r}")
    stages = dump["stages"]
    if "provenance" in f:
        got = [(k, attr_value(v)) for k, v in f["provenance/stage_seconds"].attrs.items()]
        n = len(stages)
        expect(f"{name}: stages in order", [k for k, _ in got[:n]] == [s for s, _ in stages], f"{got} vs {stages}")
        expect(f"{name}: stage seconds", all(same(a[1], b[1]) for a, b in zip(got, stages)))
    if full:
        paths = []
        f.visititems(lambda p, o: paths.append("/" + p) if isinstance(o, h5py.Dataset) else None)
        expect(f"{name}: every dataset read", sorted(paths) == sorted(dump["datasets"]),
               str(set(paths) ^ set(dump["datasets"])))
        for obj in ("/", "/input", "/scheme", "/divergence", "/provenance"):
            if obj in f:
                missing = set(f[obj].attrs) - set(dump["attrs"].get(obj, {}))
                expect(f"{name}: every attribute of {obj} read", not missing, str(missing))


def load(path):
    rc, out, err = run(TOOL, "load", path)
    if rc != 0:
        raise RuntimeError(err)
    return json.loads(out)


with tempfile.TemporaryDirectory() as tmp:
    # ---- round trip: library writes, h5py reads ----
    cases = [(1, 0, 0, 5, 3, 2), (2, 1, 0, 40, 16, 30), (3, 2, 3, 200, 64, 100),
             (4, 3, 1, 30, 2, 10), (5, 1, 2, 9000, 128, 3000)]
    for seed, D, L, n, G, bars in cases:
        path = os.path.join(tmp, f"w{seed}.h5")
        rc, out, err = run(TOOL, "write", path, str(seed), str(D), str(L), str(n), str(G), str(bars))
        expect(f"write {seed}", rc == 0, err)
        written = json.loads(out)
        with h5py.File(path, "r") as f:
            compare_to_h5(f"written {seed}", written, f, False)
            expect(f"written {seed}: the writing stage last",
                   list(f["provenance/stage_seconds"].attrs)[-1] == "writing")
            for p in ("/vertices/radius", "/cech/dim1/bars", "/grid/scale"):
                if p not in f:
                    continue
                d = f[p]
                big = d.size >= 4096
                expect(f"written {seed}: {p} chunked and deflated iff large ({d.size})",
                       (d.compression == "gzip" and d.chunks is not None and d.shuffle) == big,
                       f"{d.compression} {d.chunks}")
            # the library's reader against h5py on the same file
            compare_to_h5(f"loaded {seed}", load(path), f, True)

    # a format-1 file (made from a written one with h5py): loads, provenance absent
    v1 = os.path.join(tmp, "v1.h5")
    shutil.copy(os.path.join(tmp, "w3.h5"), v1)
    with h5py.File(v1, "a") as f:
        f.attrs["format_version"] = 1
        del f["provenance"]
        for a in ("file", "sha256", "bytes"):
            del f["input"].attrs[a]
        for a in ("scale_auto", "full_scale", "limited_by_budget"):
            del f["scheme"].attrs[a]
    dump = load(v1)
    with h5py.File(v1, "r") as f:
        compare_to_h5("format 1", dump, f, True)
    expect("format 1: no provenance, fields marked absent",
           dump["stages"] == [] and dump["attrs"]["/input"]["sha256"] is None
           and dump["attrs"]["/scheme"]["scale_auto"] == -1, json.dumps(dump["attrs"])[:300])

    # broken files: each error names the file and the HDF5 path
    def broken(name, change, needle):
        p = os.path.join(tmp, name + ".h5")
        shutil.copy(os.path.join(tmp, "w3.h5"), p)
        with h5py.File(p, "a") as f:
            change(f)
        for cmd in ([TOOL, "load", p], [NERVEGAP, "show", p], [NERVEGAP, "export", p]):
            r = subprocess.run(cmd, capture_output=True, text=True)
            expect(f"{name}: {os.path.basename(cmd[0])} exit code 2", r.returncode == 2, f"{r.returncode} {r.stderr}")
            expect(f"{name}: message names file and path", p in r.stderr and needle in r.stderr, r.stderr)

    broken("missing-bars", lambda f: f.__delitem__("cech/dim1/bars"), "/cech/dim1/bars: no such dataset")
    broken("missing-degree", lambda f: f.__delitem__("rips/dim2"), "/rips/dim2/bars")

    def wrong_shape(f):
        del f["slices/1/dim1/birth_vertices"]
        f["slices/1/dim1/birth_vertices"] = np.zeros((3, 5), dtype=np.int64)
    broken("wrong-shape", wrong_shape, "/slices/1/dim1/birth_vertices: expected int64[70][2], found int64[3][5]")

    def float_vertices(f):
        n = f["grid/betti_rips"].shape
        del f["grid/betti_rips"]
        f["grid/betti_rips"] = np.zeros(n)
    broken("float-ints", float_vertices, "/grid/betti_rips: expected int64")
    broken("grid-length", lambda f: (f["grid"].__delitem__("shift_q90"), f["grid"].create_dataset("shift_q90", data=np.zeros(5))),
           "/grid/shift_q90: expected float64[64], found float64[5]")
    broken("newer", lambda f: f.attrs.__setitem__("format_version", 99), "format_version 99")
    broken("no-max-degree", lambda f: f["scheme"].attrs.__delitem__("max_degree"), "/scheme: attribute max_degree is missing")
    broken("no-stage-group", lambda f: f.__delitem__("provenance/stage_seconds"), "/provenance/stage_seconds")
    broken("not-ours", lambda f: f.attrs.__setitem__("format", "something-else"), "not a nervegap results file")
    text = os.path.join(tmp, "text.h5")
    with open(text, "w") as fh:
        fh.write("1,2\n")
    rc, _, err = run(NERVEGAP, "show", text)
    expect("text file: exit 2, not HDF5", rc == 2 and "not an HDF5 file" in err and text in err, err)
    rc, _, err = run(NERVEGAP, "show", os.path.join(tmp, "none.h5"))
    expect("missing file: exit 2", rc == 2 and "none.h5: cannot open" in err, err)

    # ---- SHA-256 against hashlib ----
    rng = np.random.default_rng(11)
    files = []
    for length in (0, 1, 3, 55, 56, 57, 63, 64, 65, 119, 120, 127, 128, 129, 1000, 65535, 65536, 65537,
                   3 * 2**20 + 17):
        p = os.path.join(tmp, f"h{length}.bin")
        with open(p, "wb") as fh:
            fh.write(rng.integers(0, 256, size=length, dtype=np.uint8).tobytes())
        files.append(p)
    rc, out, err = run(TOOL, "sha256", *files)
    expect("sha256 tool", rc == 0, err)
    got = dict(reversed(line.split("  ")) for line in out.splitlines())
    for p in files:
        with open(p, "rb") as fh:
            want = hashlib.sha256(fh.read()).hexdigest()  # reference: Python hashlib
        expect(f"sha256 of {os.path.getsize(p)} bytes = hashlib", got.get(p) == want, f"{got.get(p)} vs {want}")

    # ---- a real run: provenance ----
    x = rng.uniform(0, 1, size=(120, 2))
    x[:60] = np.c_[np.cos(np.linspace(0, 2 * np.pi, 60, endpoint=False)),
                   np.sin(np.linspace(0, 2 * np.pi, 60, endpoint=False))] * 0.4 + 0.5
    cloud = os.path.join(tmp, "cloud with space.csv")
    np.savetxt(cloud, x, delimiter=",", fmt="%.17g", header="x,y", comments="")
    out = os.path.join(tmp, "run.h5")
    args = ["run", cloud, "--radius", "knn:4", "--max-degree", "2", "--scale-limit", "0.2",
            "--slices", "factor:1.05,1.2", "--threads", "2", "--grid", "33", "-o", out]
    rc, _, err = run(NERVEGAP, *args)
    expect("run ok", rc == 0, err)
    stages = ["reading", "radii", "scale limit", "simplices", "reduction", "grid", "divergence", "writing"]
    lines = [ln for ln in err.splitlines() if " done in " in ln]
    expect("no terminal: one plain line per stage, in order",
           [ln.split(": ", 1)[1].split(" done in")[0].strip() for ln in lines] == stages, err)
    expect("no terminal: no carriage returns", "\r" not in err, repr(err[:200]))
    with h5py.File(out, "r") as f, open(cloud, "rb") as fh:
        inp, prov = f["input"].attrs, f["provenance"].attrs
        expect("input sha256 = hashlib", attr_value(inp["sha256"]) == hashlib.sha256(fh.read()).hexdigest())
        expect("input bytes", inp["bytes"] == os.path.getsize(cloud))
        expect("input file and source", attr_value(inp["file"]) == cloud and attr_value(inp["source"]) == cloud)
        expect("command line, the path with a space quoted",
               attr_value(f.attrs["command"]) == " ".join([NERVEGAP] + [f"'{a}'" if " " in a else a for a in args]),
               attr_value(f.attrs["command"]))
        expect("format_version 2", f.attrs["format_version"] == 2)
        expect("threads", prov["threads"] == 2)
        expect("HDF5 version = h5py's view of the library",
               attr_value(prov["hdf5_version"]) == h5py.version.hdf5_version,
               f"{attr_value(prov['hdf5_version'])} vs {h5py.version.hdf5_version}")
        expect("peak memory between 1 MiB and 10 GiB", 2**20 < prov["peak_memory_bytes"] < 10 * 2**30)
        secs = dict(f["provenance/stage_seconds"].attrs)
        expect("stages recorded in order", list(f["provenance/stage_seconds"].attrs) == stages, list(secs))
        expect("wall time = sum of stages", abs(prov["wall_seconds"] - sum(secs.values())) < 1e-9)
        expect("scheme: a given scale limit recorded", f["scheme"].attrs["scale_auto"] == 0
               and f["scheme"].attrs["limited_by_budget"] == 0 and math.isnan(f["scheme"].attrs["full_scale"]))
        compare_to_h5("loaded run", load(out), f, True)

    auto = os.path.join(tmp, "auto.h5")
    rc, _, err = run(NERVEGAP, "run", cloud, "--quiet", "-o", auto)
    with h5py.File(auto, "r") as f:
        sch = f["scheme"].attrs
        expect("scheme: auto scale limit recorded with the full scale", rc == 0 and sch["scale_auto"] == 1
               and sch["limited_by_budget"] == 0 and sch["full_scale"] == sch["scale_limit"], err)

    # ---- export against h5py ----
    def export(*what):
        rc, o, e = run(NERVEGAP, "export", out, *what)
        expect(f"export {' '.join(what)} ok", rc == 0, e)
        return o

    with h5py.File(out, "r") as f:
        D = int(f["scheme"].attrs["max_degree"])
        L = len(f["slices/values"])
        groups = [("cech", "", None), ("rips", "", None)] + [("slice", j, f["slices/values"][j]) for j in range(L)]

        def h5_group(c, j):
            return c if c != "slice" else f"slices/{j}"

        rows = list(csv.DictReader(io.StringIO(export())))
        expect("bars csv header", rows and list(rows[0]) == ["complex", "slice", "slice_value", "degree", "birth", "death",
                                                               "birth_vertices", "death_vertices"])
        at = 0
        for c, j, value in groups:
            for k in range(D + 1):
                g = f[f"{h5_group(c, j)}/dim{k}"]
                b, bv, dv = g["bars"][:], g["birth_vertices"][:], g["death_vertices"][:]
                mine = rows[at:at + len(b)]
                at += len(b)
                ok = len(mine) == len(b) and all(
                    r["complex"] == c and r["degree"] == str(k)
                    and (c != "slice" or (int(r["slice"]) == j and float(r["slice_value"]) == value))
                    and float(r["birth"]) == b[i, 0] and float(r["death"]) == b[i, 1]
                    and [int(v) for v in r["birth_vertices"].split()] == list(bv[i])
                    and ([int(v) for v in r["death_vertices"].split()] if r["death_vertices"] else [-1] * (k + 2)) == list(dv[i])
                    for i, r in enumerate(mine))
                expect(f"bars csv = HDF5 {h5_group(c, j)}/dim{k}", ok)
        expect("bars csv: no extra rows", at == len(rows), f"{at} vs {len(rows)}")

        doc = json.loads(export("--format", "json"))
        expect("bars json note on null deaths", "null" in doc["note"])
        it = iter(doc["diagrams"])
        for c, j, value in groups:
            for k in range(D + 1):
                d = next(it)
                g = f[f"{h5_group(c, j)}/dim{k}"]
                b = g["bars"][:]
                got = np.array([[x, math.inf if y is None else y] for x, y in d["bars"]]).reshape(-1, 2)
                dv = [v if v is not None else [-1] * (k + 2) for v in d["death_vertices"]]
                expect(f"bars json = HDF5 {h5_group(c, j)}/dim{k}",
                       d["complex"] == c and d["degree"] == k and np.array_equal(got, b)
                       and np.array_equal(np.array(d["birth_vertices"]).reshape(-1, k + 1), g["birth_vertices"][:])
                       and np.array_equal(np.array(dv).reshape(-1, k + 2), g["death_vertices"][:])
                       and (c != "slice" or d["slice_value"] == value))

        grid = f["grid"]
        rows = list(csv.DictReader(io.StringIO(export("--what", "grid"))))
        G = len(grid["scale"])
        ok = len(rows) == G
        for i, r in enumerate(rows if ok else []):
            ok &= float(r["scale"]) == grid["scale"][i]
            for k in range(D + 1):
                ok &= int(r[f"betti_cech_{k}"]) == grid["betti_cech"][i, k]
                ok &= int(r[f"betti_rips_{k}"]) == grid["betti_rips"][i, k]
                for j in range(L):
                    ok &= int(r[f"hilbert_{j}_{k}"]) == grid["hilbert"][j, i, k]
            for k in range(D + 2):
                ok &= int(r[f"simplices_cech_{k}"]) == grid["simplices_cech"][i, k]
                ok &= int(r[f"simplices_rips_{k}"]) == grid["simplices_rips"][i, k]
            for name in ("factor_max", "factor_q50", "factor_q90", "shift_max", "shift_q50", "shift_q90"):
                ok &= float(r[name]) == grid[name][i]
        expect("grid csv = HDF5 /grid", ok)
        doc = json.loads(export("--what", "grid", "--format", "json"))
        expect("grid json = HDF5 /grid",
               all(np.array_equal(np.array(doc[name]), grid[name][:]) for name in grid)
               and doc["slice_values"] == list(f["slices/values"][:]), str(list(doc)))

        dv = f["divergence"]
        rows = list(csv.DictReader(io.StringIO(export("--what", "divergence"))))
        expect("divergence csv = HDF5 /divergence",
               len(rows) == D + 1 and all(
                   float(r[name]) == dv[name][k] for k, r in enumerate(rows)
                   for name in ("bottleneck", "wasserstein1", "wasserstein2"))
               and all(float(r[a]) == dv.attrs[a] for r in rows for a in dv.attrs))
        doc = json.loads(export("--what", "divergence", "--format", "json"))
        expect("divergence json = HDF5 /divergence",
               all(doc[name] == list(dv[name][:]) for name in dv) and all(doc[a] == dv.attrs[a] for a in dv.attrs))

    rc, _, err = run(NERVEGAP, "export", out, "--format", "xml")
    expect("export bad format: exit 2 naming the flag", rc == 2 and "--format xml" in err, err)
    rc, _, err = run(NERVEGAP, "export", out, "--what", "everything")
    expect("export bad what: exit 2 naming the flag", rc == 2 and "--what everything" in err, err)

    # show: the figures it prints are the file's
    rc, text, err = run(NERVEGAP, "show", out)
    expect("show ok", rc == 0, err)
    with h5py.File(out, "r") as f:
        b = f["cech/dim1/bars"][:]
        top = b[np.argmax(b[:, 1] - b[:, 0])]
        expect("show: the longest Čech degree-1 bar", f"[{top[0]:.4g}, {top[1]:.4g})" in text, text)
        expect("show: Λ", f"Λ = {f['divergence'].attrs['factor_bound']:.6g}" in text)
        expect("show: input digest", attr_value(f["input"].attrs["sha256"]) in text)

    # distance through the reader: a file against itself is 0
    odd = os.path.join(tmp, 'a "quoted" name.h5')
    shutil.copy(out, odd)
    rc, o, err = run(NERVEGAP, "distance", out, odd, "--json")
    doc = json.loads(o) if rc == 0 else {}
    expect("distance of a file to its copy is 0, names escaped in JSON", rc == 0 and doc["b"] == odd and all(
        r["bottleneck"] == 0 for r in doc["degrees"]), o + err)

    # ---- an unwritable output fails before the input is read ----
    big = os.path.join(tmp, "big.csv")
    np.savetxt(big, rng.uniform(size=(20000, 3)), delimiter=",")
    for bad_out, needle in ((os.path.join(tmp, "no", "dir", "o.h5"), "No such file or directory"),
                            (os.path.join(cloud, "o.h5"), "Not a directory"),
                            (tmp + "/", "names a directory")):
        rc, o, err = run(NERVEGAP, "run", big, "-o", bad_out)
        expect(f"unwritable {bad_out}: exit 2 naming -o", rc == 2 and "-o " in err and needle in err, err)
        expect(f"unwritable {bad_out}: failed before reading", "reading" not in err and err.count("\n") == 1, err)
    expect("no temporary file left behind", not [n for n in os.listdir(tmp) if "partial" in n], os.listdir(tmp))

    # ---- progress on a terminal (a pseudo-terminal as stderr) and --quiet ----
    rc, tty_text = pty_run([NERVEGAP, *args[:-1], os.path.join(tmp, "tty.h5")])
    expect("terminal: run ok", rc == 0, tty_text)
    expect("terminal: every stage ends with a line", all(f"{s:12s} done in" in tty_text for s in stages), tty_text)
    rc, _, err = run(NERVEGAP, *args[:-1], os.path.join(tmp, "quiet.h5"), "--quiet")
    expect("--quiet: nothing on stderr", rc == 0 and err == "", err)

finish()
