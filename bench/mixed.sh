#!/usr/bin/env bash
# Mixed models: sheaf reports with random terms against statsmodels' MixedLM
# fitting the same models by REML, measured in the same run:
#   (a) sheaf build of the oats split-plot report (open data, 72 rows)
#   (b) statsmodels MixedLM, the same model and random terms (fit only)
#   (c) sheaf build of an invented split-plot: 100 blocks × 5 whole-plot
#       treatments (500 whole plots) × 4 subplot treatments × 10 samples,
#       20,000 rows, random block + block:wholeplot
#   (d) statsmodels MixedLM on (c) (fit only; reading the CSV not counted)
# sheaf is timed as a whole process (reading, fitting, every table, the
# report), best of $REPEAT; statsmodels' fit alone, best of $REPEAT, so the
# ratios favour statsmodels. Prints F of the whole-plot factor from both.
# Usage: bench/mixed.sh       (REPEAT=3 by default)
set -euo pipefail
cd "$(dirname "$0")/.."
repeat="${REPEAT:-3}"
cargo build --release -q
bin="$PWD/target/release/sheaf"
venv=target/bench-venv
if ! "$venv/bin/python" -c "import statsmodels, pandas" 2>/dev/null; then
  python3 -m venv "$venv"
  "$venv/bin/pip" install -q statsmodels pandas
fi
data=target/bench-data/mixed
mkdir -p "$data"
cp tests/data/open/oats.csv "$data/oats.csv"
if [ ! -s "$data/split.csv" ]; then
  echo "generating $data/split.csv (20,000 rows, invented data)"
  awk 'BEGIN { srand(7); print "block,A,B,y";
    for (b = 0; b < 100; b++) { bl = 3 * (rand() - 0.5);
      for (a = 0; a < 5; a++) { wp = 2 * (rand() + rand() - 1);
        for (s = 0; s < 4; s++) for (r = 0; r < 10; r++)
          printf "K%03d,A%d,B%d,%.2f\n", b, a, s, 50 + bl + 0.3 * a + 0.5 * s + wp + (rand() + rand() + rand() - 1.5) } } }' \
    > "$data/split.csv.tmp"
  mv "$data/split.csv.tmp" "$data/split.csv"
fi
cat > "$data/oats.md" <<'DOC'
# Oats (open data)

```anova
id: oats
data: oats.csv
model: Y ~ V * N
random: B + B:V
compare: tukey
```
DOC
cat > "$data/split.md" <<'DOC'
# A large split-plot (invented data)

```anova
id: split
data: split.csv
model: y ~ A * B
random: block + block:A
compare: tukey
```
DOC
best() { # best wall time of $repeat runs of a command, in seconds
  local best=999999 t0 t1 t
  for _ in $(seq "$repeat"); do
    t0=$(date +%s.%N); "$@" >/dev/null 2>&1; t1=$(date +%s.%N)
    t=$(echo "$t1 - $t0" | bc -l); best=$(echo "if ($t < $best) $t else $best" | bc -l)
  done
  printf "%.4f" "$best"
}
a=$(cd "$data" && best "$bin" build oats.md -o out-oats --to md)
c=$(cd "$data" && best "$bin" build split.md -o out-split --to md)
read -r b fb d fd < <("$venv/bin/python" - "$data" "$repeat" <<'PY'
import sys, time, warnings
import pandas as pd
import statsmodels.formula.api as smf
warnings.simplefilter("ignore")
folder, repeat = sys.argv[1], int(sys.argv[2])
def fit(df, formula, group, vc):
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        m = smf.mixedlm(formula, df, groups=group, re_formula="1", vc_formula=vc).fit(reml=True)
        best = min(best, time.perf_counter() - t0)
    return best, m
oats = pd.read_csv(f"{folder}/oats.csv")
b, m = fit(oats, "Y ~ C(V) * C(N)", "B", {"wp": "0 + C(V)"})
fb = m.wald_test_terms(scalar=True).table.loc["C(V)", "statistic"] / 2
split = pd.read_csv(f"{folder}/split.csv")
d, m = fit(split, "y ~ C(A) * C(B)", "block", {"wp": "0 + C(A)"})
fd = m.wald_test_terms(scalar=True).table.loc["C(A)", "statistic"] / 4
print(b, fb, d, fd)
PY
)
fa=$(python3 -c "import json;b=json.load(open('$data/out-oats/oats.results.json'))['blocks'][0];print([t['f'] for t in b['anova']['terms'] if t['term']=='V'][0])")
fc=$(python3 -c "import json;b=json.load(open('$data/out-split/split.results.json'))['blocks'][0];print([t['f'] for t in b['anova']['terms'] if t['term']=='A'][0])")
echo "(a) sheaf build, oats report            $a s   F(V) = $fa"
echo "(b) statsmodels MixedLM fit, oats        $b s   Wald chi2/2 (V) = $fb"
echo "(c) sheaf build, 20,000-row split-plot   $c s   F(A) = $fc"
echo "(d) statsmodels MixedLM fit, same data   $d s   Wald chi2/4 (A) = $fd"
echo "ratios: b/a = $(echo "$b / $a" | bc -l | cut -c1-6), d/c = $(echo "$d / $c" | bc -l | cut -c1-6)"
