#!/usr/bin/env bash
# The studentized-range cdf and a 100-level Tukey-Kramer table against scipy,
# measured in the same run on the same grid (k = 2..100, ν = 3..1000,
# q = 1..6; 140 points). scipy is installed into a virtual environment under
# target/ on first use. Prints seconds per evaluation and the speed ratios;
# agreement with scipy (|Δcdf| < 1e-8) is checked by tests/distributions.rs.
# Usage: bench/studentized_range.sh
set -euo pipefail
. "$(dirname "$0")/lib.sh"
cd "$(dirname "$0")/.."
venv=target/bench-venv
ensure_venv "$venv" scipy scipy
ours="$(cargo bench -q --bench studentized_range 2>/dev/null)"
echo "$ours"
"$venv/bin/python" - "$ours" <<'PY'
import sys, time
import numpy as np
from scipy.stats import studentized_range, tukey_hsd

ours = {line.split()[0]: float(line.split()[1]) for line in sys.argv[1].splitlines()}
grid = [(q, k, df) for k in (2, 3, 5, 10, 20, 50, 100)
        for df in (3.0, 10.0, 30.0, 120.0, 1000.0) for q in (1.0, 2.5, 4.0, 6.0)]
start = time.perf_counter()
for q, k, df in grid:
    studentized_range.cdf(q, k, df)
scipy_eval = (time.perf_counter() - start) / len(grid)
print(f"scipy studentized_range.cdf {scipy_eval:.3e} s/eval; "
      f"sheaf {ours['ptukey_cdf']:.3e} s/eval; ratio {scipy_eval / ours['ptukey_cdf']:.1f}x")

# The same 100-level layout as the Rust side: n = 4 + i mod 5, means 10 + 0.03 i,
# MSE 0.8 on 500 df. scipy's tukey_hsd needs raw samples, so build samples
# with exactly those means and a within-level spread; it then spends its time
# on the same 4,950 studentized-range tail probabilities.
rng = np.random.default_rng(7)
samples = []
for i in range(100):
    n = 4 + i % 5
    x = rng.normal(size=n)
    samples.append(10.0 + 0.03 * i + (x - x.mean()))
start = time.perf_counter()
tukey_hsd(*samples)
scipy_table = time.perf_counter() - start
print(f"scipy tukey_hsd, 100 levels {scipy_table:.2f} s; "
      f"sheaf {ours['tukey_table_100']:.2f} s; ratio {scipy_table / ours['tukey_table_100']:.1f}x")
PY
