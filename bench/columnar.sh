#!/usr/bin/env bash
# The same one-way report read from a Parquet file and from the CSV file
# with the same table, measured in the same run:
#   (h) openssl dgst -sha256 of each file: the floor for a build that
#       records its input's hash
#   (s) sheaf build with `checks: summary` (ANOVA, Tukey-Kramer)
#   (d) sheaf build with every check (the default)
# on the CSV file, on Parquet with the response as DOUBLE and as
# DECIMAL(7, 3) (snappy: about 30 MB, under the 32 MiB from which a file is
# streamed, so read into memory first) and on uncompressed Parquet with the
# DOUBLE response (large enough to be streamed row group by row group).
# Each build starts without a cache (a file read into memory would
# otherwise come from it on the second run). Each is timed as a whole
# process, best of $REPEAT, with CPU time and peak memory (GNU time %M).
# Prints F from every build (they must agree).
# The data are bench/large_oneway.sh's invented fill weights (12 filling
# heads, 20,000,000 rows); pyarrow (installed by the script into a virtual
# environment under the target folder) writes them as Parquet with its
# defaults (snappy, row groups of 1,048,576 rows).
# Usage: bench/columnar.sh            (ROWS=20000000 REPEAT=3 by default)
set -euo pipefail
. "$(dirname "$0")/lib.sh"
cd "$(dirname "$0")/.."
rows="${ROWS:-20000000}"
repeat="${REPEAT:-3}"
target="${CARGO_TARGET_DIR:-target}"
bin=$(build_sheaf)
venv="$target/columnar-venv"
ensure_venv "$venv" pyarrow pyarrow
data="$target/bench-data"
mkdir -p "$data"
csv="$data/fill-$rows.csv"
ensure_fill_csv "$csv" "$rows"
double="$data/fill-$rows.double.parquet"
decimal="$data/fill-$rows.decimal.parquet"
plain="$data/fill-$rows.plain.parquet"
if [ ! -s "$double" ] || [ ! -s "$decimal" ] || [ ! -s "$plain" ]; then
  echo "writing $double, $decimal and $plain"
  "$venv/bin/python" - "$csv" "$double" "$decimal" "$plain" <<'PY'
import os
import sys
import pyarrow as pa
import pyarrow.csv as pc
import pyarrow.parquet as pq
source, double, decimal, plain = sys.argv[1:]
for path, kind, compression in (
    (double, pa.float64(), "snappy"),
    (decimal, pa.decimal128(7, 3), "snappy"),
    (plain, pa.float64(), "none"),
):
    types = {"head": pa.string(), "fill_g": kind, "shift": pa.string()}
    table = pc.read_csv(source, convert_options=pc.ConvertOptions(column_types=types))
    pq.write_table(table, path + ".tmp", compression=compression)
    os.replace(path + ".tmp", path)
PY
fi
for checks in summary all; do
  for input in csv double decimal plain; do
    case $input in
      csv) file="$(basename "$csv")" ;;
      double) file="$(basename "$double")" ;;
      decimal) file="$(basename "$decimal")" ;;
      plain) file="$(basename "$plain")" ;;
    esac
    cat > "$data/columnar-$input-$checks.md" <<DOC
# Fill weights by filling head (invented data)

\`\`\`anova
id: fill
data: $file
model: fill_g ~ head
compare: tukey
checks: $checks
\`\`\`

F = {{ fill.f | fixed(6) }}
DOC
  done
done

cat "$csv" "$double" "$decimal" "$plain" > /dev/null # into the page cache alike
measure() { measure_best_of "$repeat" "$data" "$@"; }
row() { table_row 46 "$@"; }
mb() { echo "$(($(stat -c %s "$1") / 1000000))"; }
printf '%s rows, %s core(s); MB: CSV %s, Parquet double %s, decimal %s, plain %s\n' \
  "$rows" "$(nproc)" "$(mb "$csv")" "$(mb "$double")" "$(mb "$decimal")" "$(mb "$plain")"
table_header 46
declare -A hash
for input in csv double decimal plain; do
  case $input in
    csv) file="$csv" ;;
    double) file="$double" ;;
    decimal) file="$decimal" ;;
    plain) file="$plain" ;;
  esac
  hash[$input]=$(measure openssl dgst -sha256 "$file")
  row "(h) openssl dgst -sha256, $input" "${hash[$input]}"
done
fs=""
for checks in summary all; do
  for input in csv double decimal plain; do
    out="$data/out-columnar-$input-$checks"
    result=$(measure sh -c "rm -rf '$out/.sheaf-cache' && exec '$bin' build '$data/columnar-$input-$checks.md' -o '$out'")
    row "sheaf, checks: $checks, $input" "$result"
    f=$(grep -o 'F = [0-9.]*' "$out/columnar-$input-$checks.html" | head -1)
    fs="$fs $input/$checks: $f;"
    ratio=$(wall_ratio 1 "$result" "${hash[$input]}")
    echo "    = ${ratio}× the hash of its own file"
  done
done
echo "F:$fs"
