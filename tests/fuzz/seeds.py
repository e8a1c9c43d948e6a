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
    # manifest: the example of README.md ("The manifest"), the manifests
    # of tests/test_manifest.c, tests/ref_batch.py and
    # tests/slurm_cluster.py, and one line for every key and value form
    for i, text in enumerate([readme_manifest()] + MANIFESTS):
        put("manifest", "%02d" % i, text)


def readme_manifest():
    """The first code block after the heading "### The manifest"."""
    with open(os.path.join(os.path.dirname(os.path.dirname(HERE)),
                           "README.md"), "rb") as f:
        readme = f.read()
    section = readme.split(b"### The manifest", 1)[1]
    return section.split(b"```\n", 2)[1]


MANIFESTS = [
    # tests/test_manifest.c
    b"# three inputs, three radii, two laws: 18 jobs\n"
    b"input a.csv b.csv\n"
    b"input \"sub dir/c d.csv\"   # a path with a space\n"
    b"radius knn:8 knn:16 dtm:16\n"
    b"law scaled shifted\n"
    b"scale-limit 2.5\n",
    b"scale-limit 2.50\nlaw shifted scaled power\n"
    b"radius dtm:16 knn:16 knn:8 kde\n"
    b"input \"sub dir/c d.csv\" b.csv a.csv x.csv\n",
    b"input a.csv\nradius knn:4 uniform\nsubsamples 3\nsubsample-size 20\n"
    b"seed 9\nalpha 0.1\n",
    b"distances d.npy\ninput p.csv\nmetric euclidean chebyshev\n",
    b"input a.csv\nradus knn:4\n",
    b"input a.csv\nradius   knn:x\n",
    b"input a.csv\nmax-degree 7\n",
    b"input a.csv\nscale-limit -1\n",
    b"input a.csv\nslices factor:0.5\n",
    b"input a.csv\nbudget lots\n",
    b"input a.csv\nraw-radius maybe\n",
    b"input \"a.csv\n",
    b"input \"a\"b.csv\n",
    b"input a\"b.csv\n",
    b"input \"a\\n.csv\"\n",
    b"input \"\"\n",
    b"input a.csv\x01\n",
    b"law scaled\nlaw shifted\ninput a.csv\n",
    b"input a.csv\nseed 1 2\n",
    b"input a.csv b.csv a.csv\n",
    b"input a.csv\ndistances a.csv\n",
    b"input a.csv\nradius knn:4 knn:04\n",
    b"radius knn:4\n# nothing else\n",
    b"input a.csv\nsubsamples 4\n",
    b"input a.csv\nsubsamples 0\n",
    b"input a.csv\nsubsample-size 1\n",
    b"input a.csv\nalpha 1\n",
    b"input a.csv\nseed -3\n",
    b"input a.csv\nmetric given\n",
    b"input a.csv\nradius file:r.txt\nsubsamples 2\nsubsample-size 5\n",
    b"input a.csv\ninput\n",
    b"input a.csv\nlaw sca\0led\n",
    b"input  /nonexistent/x.csv\n",
    b"input a.csv b.csv\nradius knn:4 dtm:8\nsubsamples 2\nsubsample-size 5\n",
    # tests/ref_batch.py, tests/slurm_cluster.py
    b"# 2 point clouds x 2 radii x 2 laws + 1 matrix x 2 x 2 = 12 jobs\n"
    b"input data/ring_a.csv data/ring_b.csv\n"
    b"distances data/matrix.csv\n"
    b"radius knn:4 dtm:4\n"
    b"law scaled shifted\n"
    b"max-degree 1\n"
    b"scale-limit 1.5\n"
    b"grid 16\n"
    b"slices factor:1.1\n",
    b"input data/ring_a.csv\nradius knn:4\nlaw scaled sideways\n",
    b"input data/ring_a.csv\nmax-degree 1\nmax-degre 2\n",
    b"input ring_a.csv ring_b.csv ring_c.csv\nradius knn:4 uniform\n"
    b"law scaled shifted\nmax-degree 1\nscale-limit 1.5\ngrid 16\n",
    # every key, and the value forms of each (three manifests of fewer
    # than NG_MANIFEST_MAX_JOBS jobs)
    b"input pts.csv /abs/pts.tsv \"q \\\"x\\\\y\\\".txt\"\r\n"
    b"distances d.npy d.h5:/g/d\r\n"
    b"input survey.h5:/group/points\r\n"
    b"metric euclidean chebyshev\r\n"
    b"radius uniform knn:8 dtm:3 kde kde:0.25 column:2 column:rho\r\n",
    b"input pts.csv\n"
    b"law scaled shifted power\n"
    b"raw-radius yes no\n"
    b"merge-duplicates no yes\n"
    b"max-degree 0 2\n"
    b"scale-limit auto 0 1e-3\n"
    b"slices none factor:1.02,1.05 shift:0.1,0.25\n",
    b"input pts.csv\n"
    b"grid 2 64\n"
    b"max-simplices 0 2e7\n"
    b"budget 4G 512M 1.5GiB 1000000\n"
    b"wasserstein-limit 0 5e4\n"
    b"seed 18446744073709551615\n"
    b"alpha 0.01\n",
    b"input a.csv\nradius file:radii/r.txt column:0\n",
    b"input a.csv\tb.csv # tab between\n\n   \n#only a comment\nlaw power",
    b"input a.csv\nsubsamples 100000\nsubsample-size 4294967294\n",
    b"input a.csv\nsubsamples 2\nsubsample-size 3\ndistances m.csv\n"
    b"radius knn:1 knn:2 knn:3\nlaw scaled shifted power\n",
]


if __name__ == "__main__":
    main()
