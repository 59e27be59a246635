#!/usr/bin/env bash
# Incremental rebuilds against a cold build, measured in the same run.
# Generates an invented dataset (200,000 rows, 40 levels) and a report with
# three blocks, then times: a cold build (no cache), a rebuild after a
# prose-only edit (every block from the cache), and a rebuild after one of
# two data files changed (one block recomputed). Usage: bench/rebuild.sh
set -euo pipefail
. "$(dirname "$0")/lib.sh"
cd "$(dirname "$0")/.."
bin=$(build_sheaf)
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
awk 'BEGIN { srand(7); print "y,g"; for (i = 0; i < 200000; i++) { g = i % 40; printf "%.3f,L%02d\n", 50 + g * 0.05 + 3 * (rand() + rand() + rand() - 1.5), g } }' > "$work/big.csv"
awk 'BEGIN { srand(8); print "y,g"; for (i = 0; i < 2000; i++) { g = i % 5; printf "%.2f,T%d\n", 10 + g + rand(), g } }' > "$work/small.csv"
cat > "$work/report.md" <<'DOC'
# Benchmark report (invented data)

```anova
id: big
data: big.csv
model: y ~ g
compare: tukey
```

```anova
id: small
data: small.csv
model: y ~ g
compare: tukey
plot: box
```

```anova
id: ranks
data: big.csv
model: y ~ g
method: ranks
compare: none
```
DOC
seconds() { local s e; s=$(date +%s.%N); "$@" > /dev/null 2>&1; e=$(date +%s.%N); awk -v a="$s" -v b="$e" 'BEGIN { print b - a }'; }
computed() { "$@" 2>&1 >/dev/null | awk -F' block\\(s\\): ' '/block\(s\):/ { split($2, w, " "); print w[1] }'; }
cold=$(seconds "$bin" build "$work/report.md" -o "$work/out")
echo "Intro paragraph." >> "$work/report.md"
prose=$(seconds "$bin" build "$work/report.md" -o "$work/out")
echo "12.34,T1" >> "$work/small.csv"
data=$(seconds "$bin" build "$work/report.md" -o "$work/out")
echo "99.99,T2" >> "$work/small.csv"
recomputed=$(computed "$bin" build "$work/report.md" -o "$work/out")
ratio() { wall_ratio 1 "$@"; }
printf 'cold build (3 blocks computed):        %6.2f s\n' "$cold"
printf 'after a prose edit (0 computed):       %6.2f s  (%sx faster)\n' "$prose" "$(ratio "$cold" "$prose")"
printf 'after small.csv changed:               %6.2f s  (%sx faster; %s block recomputed)\n' "$data" "$(ratio "$cold" "$data")" "$recomputed"
