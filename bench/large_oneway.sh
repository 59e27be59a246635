#!/usr/bin/env bash
# A one-way report on a large CSV file against the cost of hashing its bytes
# (the floor for a report that records every input's SHA-256) and against
# two general-purpose baselines, all measured in the same run:
#   (a) cat FILE > /dev/null                       reading the bytes (for reference)
#   (h) openssl dgst -sha256 FILE                  the floor: hashing the bytes
#   (b) sheaf build (one-way ANOVA, Tukey-Kramer, `checks: summary`)
#   (b2) sheaf build with every check (the default; the file is read again
#        for the checks, in bounded memory)
#   (b3) sheaf build of a two-factor model (head × shift) with every check
#   (c) pandas.read_csv + scipy.stats f_oneway, levene (median and mean
#       centred) + tukey_hsd
#   (d) polars read_csv + group_by aggregation (n, mean, variance, median)
# Each is timed as a whole process, best of $REPEAT, with CPU time and peak
# memory (GNU time %M). Prints the ratios to the hash (b/h target <= 3,
# b2/h target <= 8), c/b2 and d/b2, and F and Brown-Forsythe from sheaf and
# from scipy so that both are seen to compute the same thing.
# The data are invented: fill weights from 12 filling heads.
# Usage: bench/large_oneway.sh            (ROWS=20000000 REPEAT=3 by default)
#        ROWS=200000000 bench/large_oneway.sh
#   From 100 million rows on (about 3 GB at 200 million) the file is deleted
#   afterwards, and pandas and polars are not run: they would need many times
#   the file in memory.
set -euo pipefail
shopt -s inherit_errexit
. "$(dirname "$0")/lib.sh"
cd "$(dirname "$0")/.."
rows="${ROWS:-20000000}"
repeat="${REPEAT:-3}"
large=$((rows >= 100000000))
bin=$(build_sheaf)
venv=target/bench-venv
if [ "$large" = 0 ]; then
  ensure_venv "$venv" "scipy, pandas, polars" scipy pandas polars
fi
data="target/bench-data"
mkdir -p "$data"
csv="$data/fill-$rows.csv"
ensure_fill_csv "$csv" "$rows"
if [ "$large" = 1 ]; then
  trap 'rm -f "$csv" "$csv.tmp"' EXIT
fi
name="$(basename "$csv")"
for checks in summary all; do
  extra=""
  if [ "$checks" = all ]; then
    extra=", Brown-Forsythe {{ fill.checks.brown_forsythe.statistic | fixed(4) }}"
  fi
  cat > "$data/report-$checks.md" <<DOC
# Fill weights by filling head (invented data)

\`\`\`anova
id: fill
data: $name
model: fill_g ~ head
compare: tukey
checks: $checks
\`\`\`

F = {{ fill.f | fixed(4) }}$extra
DOC
done
cat > "$data/report-factorial.md" <<DOC
# Fill weights by filling head and shift (invented data)

\`\`\`anova
id: fill
data: $name
model: fill_g ~ head * shift
compare: tukey
\`\`\`
DOC
cat > "$data/pandas_scipy.py" <<'PY'
import sys
import pandas as pd
from scipy.stats import f_oneway, levene, tukey_hsd
df = pd.read_csv(sys.argv[1])
groups = [g.to_numpy() for _, g in df.groupby("head", sort=False)["fill_g"]]
print(f"scipy F = {f_oneway(*groups).statistic:.4f}")
print(f"scipy Brown-Forsythe = {levene(*groups, center='median').statistic:.4f}")
print(f"scipy Levene = {levene(*groups, center='mean').statistic:.4f}")
res = tukey_hsd(*groups)
print(f"tukey_hsd pairs: {len(groups) * (len(groups) - 1) // 2}, smallest p {res.pvalue.min():.3g}")
PY
cat > "$data/polars_agg.py" <<'PY'
import sys
import polars as pl
out = pl.read_csv(sys.argv[1]).group_by("head").agg(
    pl.len().alias("n"), pl.col("fill_g").mean().alias("mean"), pl.col("fill_g").var().alias("var"),
    pl.col("fill_g").median().alias("median"))
print(f"polars levels: {out.height}")
PY

cat "$csv" > /dev/null # into the page cache for every contender alike
# A failed run ends the benchmark (inherit_errexit above).
measure() { measure_best_of "$repeat" "$data" "$@"; }
a=$(measure sh -c "cat '$csv' > /dev/null")
h=$(measure openssl dgst -sha256 "$csv")
b=$(measure "$bin" build "$data/report-summary.md" -o "$data/out-summary")
b2=$(measure "$bin" build "$data/report-all.md" -o "$data/out-all")
sheaf_f=$(grep -o 'F = [0-9.]*, Brown-Forsythe [0-9.]*' "$data/out-all/report-all.html" | head -1)
b3=$(measure "$bin" build "$data/report-factorial.md" -o "$data/out-factorial")
if [ "$large" = 0 ]; then
  c=$(measure "$venv/bin/python" "$data/pandas_scipy.py" "$csv")
  scipy_f=$(grep -o 'scipy [A-Za-z-]* = [0-9.]*' "$data/last.out" | tr '\n' ' ')
  d=$(measure "$venv/bin/python" "$data/polars_agg.py" "$csv")
fi

size=$(stat -c %s "$csv")
printf '%s: %s rows, %s MB, %s core(s), load average %s\n' "$name" "$rows" "$((size / 1000000))" "$(nproc)" "$(cut -d' ' -f1-3 /proc/loadavg)"
table_header 44
row() { table_row 44 "$@"; }
row "(a) cat to /dev/null" "$a"
row "(h) openssl dgst -sha256" "$h"
row "(b) sheaf build, checks: summary" "$b"
row "(b2) sheaf build, every check" "$b2"
row "(b3) sheaf build, head × shift, every check" "$b3"
ratio() { wall_ratio 2 "$@"; }
if [ "$large" = 0 ]; then
  row "(c) pandas + scipy (F, Levene x2, Tukey)" "$c"
  row "(d) polars read_csv + group_by" "$d"
fi
echo "b/h = $(ratio "$b" "$h") (target <= 3)   b2/h = $(ratio "$b2" "$h") (target <= 8)"
if [ "$large" = 0 ]; then
  echo "c/b2 = $(ratio "$c" "$b2") (target >= 4)   d/b2 = $(ratio "$d" "$b2") (target >= 1: polars no faster)"
  echo "sheaf $sheaf_f; $scipy_f"
else
  echo "sheaf $sheaf_f"
fi
