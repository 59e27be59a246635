"""Brown-Forsythe (scipy.stats.levene, center='median') and Levene
(center='mean') on two invented files of 3 levels x 6,000 rows each, more
than a level that sheaf keeps whole, so its median selection counts the
values in buckets:

- spread_grid.csv: values on a 0.01 grid, nearly normal (a sum of twelve
  uniforms), so the buckets near the median hold one value each and the
  far tails share the two end buckets;
- spread_fine.csv: the same draws with six decimals, so a bucket holds
  values on both sides of the median.

The draws come from a 64-bit linear congruential generator written out
here (no library generator, so the file is the same everywhere). Writes
both CSV files to tests/data/invented/ and brown_forsythe_buckets.json beside
this script; tests/brown_forsythe_buckets.rs reads them."""
import json
import os

import numpy as np
import scipy
from scipy import stats

here = os.path.dirname(os.path.abspath(__file__))
data_dir = os.path.join(here, "..", "data", "invented")

state = 88172645463325252


def uniform():
    global state
    state = (state * 6364136223846793005 + 1442695040888963407) % (1 << 64)
    return (state >> 11) / float(1 << 53)


levels = [("north", 50.0, 1.0), ("centre", 50.3, 1.25), ("south", 50.1, 0.9)]
rows = []
for i in range(18000):
    name, mean, sd = levels[i % 3]
    z = sum(uniform() for _ in range(12)) - 6.0
    rows.append((name, mean + sd * z))

out = {"scipy": scipy.__version__, "numpy": np.__version__, "files": {}}
for file, decimals in [("spread_grid.csv", 2), ("spread_fine.csv", 6)]:
    texts = [(name, f"{y:.{decimals}f}") for name, y in rows]
    with open(os.path.join(data_dir, file), "w", newline="\n") as f:
        f.write("bed,height\n")
        for name, text in texts:
            f.write(f"{name},{text}\n")
    groups = [np.array([float(t) for n, t in texts if n == name]) for name, _, _ in levels]
    bf = stats.levene(*groups, center="median")
    lv = stats.levene(*groups, center="mean")
    out["files"][file] = {
        "brown_forsythe": {"statistic": float(bf.statistic), "p": float(bf.pvalue)},
        "levene": {"statistic": float(lv.statistic), "p": float(lv.pvalue)},
        "medians": {name: float(np.median(g)) for (name, _, _), g in zip(levels, groups)},
    }
with open(os.path.join(here, "brown_forsythe_buckets.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
