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
# ratios favour statsmodels. Prints the variance components from both.
# Usage: bench/mixed.sh       (REPEAT=3 by default)
set -euo pipefail
. "$(dirname "$0")/lib.sh"
cd "$(dirname "$0")/.."
repeat="${REPEAT:-3}"
bin=$(build_sheaf)
venv=target/bench-venv
ensure_venv "$venv" "statsmodels, pandas" statsmodels pandas
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
# Each run starts without the block cache, so every run fits the model.
fresh_build() { rm -rf "$2/.sheaf-cache"; "$bin" build "$1" -o "$2" --to md; }
a=$(cd "$data" && best fresh_build oats.md out-oats)
c=$(cd "$data" && best fresh_build split.md out-split)
read -r b vb d vd < <("$venv/bin/python" - "$data" "$repeat" <<'PY'
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
# The variance components (block, whole plot, residual), to compare with
# sheaf's; statsmodels' optimiser stops about 1e-5 short of the optimum.
comps = lambda m: "%.6g/%.6g/%.6g" % (m.cov_re.iloc[0, 0], m.vcomp[0], m.scale)
b, m = fit(oats, "Y ~ C(V) * C(N)", "B", {"wp": "0 + C(V)"})
vb = comps(m)
split = pd.read_csv(f"{folder}/split.csv")
d, m = fit(split, "y ~ C(A) * C(B)", "block", {"wp": "0 + C(A)"})
vd = comps(m)
print(b, vb, d, vd)
PY
)
components() { python3 -c "import json,sys;b=json.load(open(sys.argv[1]))['blocks'][0];print('/'.join('%.6g' % c['variance'] for c in b['variance_components']))" "$1"; }
va=$(components "$data/out-oats/oats.results.json")
vc=$(components "$data/out-split/split.results.json")
echo "variance components: block / whole plot / residual"
echo "(a) sheaf build, oats report            $a s   $va"
echo "(b) statsmodels MixedLM fit, oats        $(printf %.4f "$b") s   $vb"
echo "(c) sheaf build, 20,000-row split-plot   $c s   $vc"
echo "(d) statsmodels MixedLM fit, same data   $(printf %.4f "$d") s   $vd"
echo "ratios: b/a = $(echo "$b / $a" | bc -l | cut -c1-6), d/c = $(echo "$d / $c" | bc -l | cut -c1-6)"
