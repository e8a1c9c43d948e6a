#!/usr/bin/python3
"""Runs the built nervegap binary on the fixtures: exit codes (0 ok, 1
runtime, 2 bad usage or input), --help and --version, the messages for every
bad-input fixture of tests/fixtures/bad/EXPECTED, and the CSV of `radii` and
`values`.

Usage: cli_test.py NERVEGAP FIXTURES_DIR
"""
import csv
import io
import os
import subprocess
import sys
import tempfile
from checklib import expect, finish

NERVEGAP, FIXTURES = sys.argv[1], sys.argv[2]


def run(*args):
    p = subprocess.run([NERVEGAP, *args], capture_output=True, text=True, timeout=120)
    return p.returncode, p.stdout, p.stderr


def expect_error(name, args, code, needle):
    rc, out, err = run(*args)
    expect(name + " exit code", rc == code, f"got {rc}, want {code}; stderr: {err.strip()}")
    expect(name + " message", needle in err, f"{needle!r} not in {err.strip()!r}")
    expect(name + " one line on stderr", err.count("\n") == 1, repr(err))
    expect(name + " nothing on stdout", out == "", repr(out[:200]))


# --version and --help
rc, out, _ = run("--version")
expect("--version", rc == 0 and out.startswith("nervegap "), out)
for cmd in ("radii", "values"):
    rc, out, _ = run(cmd, "--help")
    expect(f"{cmd} --help", rc == 0 and "Usage: nervegap " + cmd in out, out[:80])
rc, out, _ = run("--help")
expect("--help lists commands", rc == 0 and "radii" in out and "values" in out)

# bad usage: exit code 2, a message naming the flag
good = os.path.join(FIXTURES, "good", "same.csv")
expect_error("no command", [], 2, "Usage")
expect_error("unknown command", ["frobnicate"], 2, "unknown command 'frobnicate'")
expect_error("unknown option", ["radii", good, "--colour"], 2, "unknown option '--colour'")
expect_error("unknown metric", ["radii", good, "--metric", "taxicab"], 2, "--metric")
expect_error("unknown law", ["radii", good, "--law", "linear"], 2, "--law")
expect_error("bad rule", ["radii", good, "--radius", "knn:zero"], 2, "--radius")
expect_error("bad threads", ["radii", good, "--threads", "0"], 2, "--threads")
expect_error("missing value", ["radii", good, "--radius"], 2, "--radius needs a value")
expect_error("no input", ["radii"], 2, "no input")
expect_error("missing file", ["radii", os.path.join(FIXTURES, "no-such-file.csv")], 2,
             "no-such-file.csv")
expect_error("values without --simplices", ["values", good], 2, "--simplices")

# every bad-input fixture: exit code 2 and the expected words
with open(os.path.join(FIXTURES, "bad", "EXPECTED")) as f:
    for line in f:
        if not line.strip() or line.startswith("#"):
            continue
        name, reader, needle = line.rstrip("\n").split("\t")
        path = os.path.join(FIXTURES, "bad", name)
        if reader == "distances":
            args = ["radii", "--distances", path]
        else:
            args = ["radii", path]
        expect_error(f"fixture {name}", args, 2, needle)

# radii on a good file: header, one row per point, 17 significant digits
rc, out, err = run("radii", good, "--radius", "knn:2", "--law", "shifted")
expect("radii ok", rc == 0, err)
rows = list(csv.reader(io.StringIO(out)))
expect("radii header", rows and rows[0] == ["index", "radius", "birth"], rows[:1])
expect("radii rows", all(len(r) == 3 for r in rows[1:]) and len(rows) > 2)
expect("radii birth = radius under shifted", all(r[1] == r[2] for r in rows[1:]))

# values: bad simplices lines name the line and column
with tempfile.TemporaryDirectory() as tmp:
    def simplices(text):
        path = os.path.join(tmp, "s.txt")
        with open(path, "w") as fh:
            fh.write(text)
        return path
    expect_error("simplex out of range", ["values", good, "--simplices", simplices("0 1\n0 99\n")],
                 2, "s.txt:2:3: vertex 99 is out of range")
    expect_error("simplex repeated vertex", ["values", good, "--simplices", simplices("0,1,1\n")],
                 2, "s.txt:1:5: vertex 1 is repeated")
    expect_error("simplex too many vertices",
                 ["values", good, "--simplices", simplices("0 1 2 3 4 5 6\n")], 2, "more than 6")
    expect_error("simplex not a number", ["values", good, "--simplices", simplices("0 x\n")],
                 2, "s.txt:1:3: 'x' is not a vertex index")
    rc, out, err = run("values", good, "--simplices", simplices("# a comment\n0 1\n\n0, 1, 2\n"))
    expect("values ok", rc == 0, err)
    rows = list(csv.reader(io.StringIO(out)))
    expect("values header and rows", rows[0] == ["rips", "cech"] and len(rows) == 3, rows)
    if rc == 0 and len(rows) == 3:
        expect("values: Čech = Rips on an edge", rows[1][0] == rows[1][1], rows[1])
        expect("values: Rips ≤ Čech", float(rows[2][0]) <= float(rows[2][1]), rows[2])

# run: the output path is checked before any computation; a scale limit
# that does not fit the budget fails with the size and a scale that fits
with tempfile.TemporaryDirectory() as tmp:
    expect_error("run unwritable output", ["run", good, "--quiet", "-o",
                 os.path.join(tmp, "no", "such", "dir", "out.h5")], 2, "cannot create")
    expect_error("run without -o", ["run", good], 2, "-o OUT.h5 is required")
    expect_error("run bad max-degree", ["run", good, "-o", os.path.join(tmp, "x.h5"),
                 "--max-degree", "7"], 2, "--max-degree")
    expect_error("run bad slices", ["run", good, "-o", os.path.join(tmp, "x.h5"),
                 "--slices", "factor:0.5"], 2, "--slices")
    expect_error("run bad Wasserstein limit", ["run", good, "-o", os.path.join(tmp, "x.h5"),
                 "--wasserstein-limit", "-3"], 2, "--wasserstein-limit -3: expected a whole number")
    expect_error("run bad budget", ["run", good, "-o", os.path.join(tmp, "x.h5"),
                 "--budget", "lots"], 2, "--budget")
    out = os.path.join(tmp, "big.h5")
    expect_error("run over budget", ["run", good, "--quiet", "-o", out, "--radius", "knn:3",
                 "--scale-limit", "1e6", "--max-degree", "3", "--budget", "64K"], 1,
                 "would fit")
    expect("run over budget leaves no file", not os.path.exists(out))
    expect("run leaves no temporary file", os.listdir(tmp) == [], os.listdir(tmp))
    rc, _, err = run("run", good, "-o", out, "--radius", "knn:3", "--budget", "1M")
    expect("run auto under a small budget", rc == 0 and "chosen to fit the budget" in err, err)
    expect("run wrote the file", os.path.exists(out))

finish()
