#!/usr/bin/python3
"""Makes the demo data set scripts/data/colony.csv (invented, for the demo only).

Scenario: nest positions (metres) of a shore-bird colony on a meadow with two
ponds. Birds nest close to the water, so nests are dense in a band along each
shore and sparse inland. Both ponds are holes in the nesting area: adaptive
(density-based) radii see both rings, one uniform radius either misses the
sparse far side or fills the small pond.
"""
import numpy as np

rng = np.random.default_rng(20261202)
ponds = [((0.0, 0.0), 40.0, 330), ((105.0, 12.0), 22.0, 170)]  # centre, radius, nests
rows = []
for (cx, cy), radius, count in ponds:
    angle = rng.uniform(0.0, 2.0 * np.pi, count)
    # distance from the shore: most nests within a few metres of the water
    gap = rng.exponential(3.0, count)
    r = radius + gap
    rows.append(np.c_[cx + r * np.cos(angle), cy + r * np.sin(angle)])
inland = rng.uniform((-80.0, -70.0), (160.0, 80.0), (400, 2))
keep = [all(np.hypot(p[0] - cx, p[1] - cy) > radius + 8.0 for (cx, cy), radius, _ in ponds)
        for p in inland]
rows.append(inland[np.array(keep)][:100])
points = np.vstack(rows)
np.savetxt("scripts/data/colony.csv", points, delimiter=",", fmt="%.2f",
           header="# invented demo data: nest positions of a shore-bird colony around two ponds (metres)\nx_m,y_m",
           comments="")
print(len(points), "nests")
