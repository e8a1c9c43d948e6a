#!/usr/bin/python3
"""Writes the seed corpus of every fuzz target from tests/fixtures.

Run with Debian's /usr/bin/python3 (h5py) from anywhere:
    /usr/bin/python3 tests/fuzz/seeds.py
It (re)writes tests/fuzz/corpus/<target>/seed-* and leaves the other files
of the corpus (those the fuzzers found) alone. See tests/fuzz/README.md.
"""
import os
import glob

import h5py

HERE = os.path.dirname(os.path.abspath(__file__))
FIXTURES = os.path.join(os.path.dirname(HERE), "fixtures")
CORPUS = os.path.join(HERE, "corpus")


def put(target, name, data):
    d = os.path.join(CORPUS, target)
    os.makedirs(d, exist_ok=True)
    with open(os.path.join(d, "seed-" + name), "wb") as f:
        f.write(data)


def fixtures(*patterns):
    for pattern in patterns:
        for path in sorted(glob.glob(os.path.join(FIXTURES, pattern))):
            rel = os.path.relpath(path, FIXTURES)
            with open(path, "rb") as f:
                yield rel, f.read()


def flat(rel):
    return rel.replace("/", "-")


def main():
    for d in glob.glob(os.path.join(CORPUS, "*", "seed-*")):
        os.remove(d)
    text = ("*/*.csv", "*/*.tsv", "*/*.txt")
    for rel, data in fixtures(*text):
        put("text", flat(rel), data)
    for rel, data in fixtures("*/*.npy"):
        put("npy", flat(rel), data)
    # distances: first byte 0 = text, 1 = .npy
    for rel, data in fixtures(*text):
        put("distances", flat(rel), b"\0" + data)
    for rel, data in fixtures("*/*.npy"):
        put("distances", flat(rel), b"\1" + data)
    # HDF5 specs relative to tests/fixtures: every dataset and group of
    # every HDF5 fixture, the specs of bad/EXPECTED, and a few odd ones.
    specs = set()
    for path in sorted(glob.glob(os.path.join(FIXTURES, "*", "*.h5"))):
        rel = os.path.relpath(path, FIXTURES)
        specs.add(rel)
        specs.add(rel + ":")
        try:
            with h5py.File(path, "r") as f:
                f.visit(lambda name: specs.add(rel + ":/" + name))
        except OSError:
            specs.add(rel + ":/points")
    with open(os.path.join(FIXTURES, "bad", "EXPECTED")) as f:
        for line in f:
            spec = line.split("\t")[0]
            if ".h5" in spec:
                specs.add("bad/" + spec)
    specs.update(["good/same.h5:/group/points:/x", "good/same.h5:group/points",
                  "good/same.h5://group//points/", "good/same.h5:/group/",
                  "good/dist.h5:/d/", "good/same.csv:/x.h5:/d",
                  "good/SAME.H5:/group/points", "good/same.hdf5:/x"])
    for i, spec in enumerate(sorted(specs)):
        put("h5path", "%03d" % i, spec.encode())
    # simplices: config byte, then the file
    lists = [
        b"0 1\n1 2\n0 1 2\n",
        b"# edges and triangles\n0,1\n0, 2 ,3\n\n1\t2\t3\n",
        b"0 1 2 3 4 5\n5 4 3 2 1 0\n",
        b"0 5\n0 5 1\n1 2 3\n7 0\n7 8 9\n",
        b"3 1 2\r\n9 10 11\r\n",
        b"0 0\n",
        b"0 12\n",
        b"0 1 2 3 4 5 6\n",
        b"a b\n",
        b"18446744073709551616 1\n",
    ]
    for i, text in enumerate(lists):
        for config in (0x0B, 0x1B, 0x2B, 0x4B, 0x8B, 0x6B, 0x03):
            put("simplices", "%02d-%02x" % (i, config), bytes([config]) + text)


if __name__ == "__main__":
    main()
