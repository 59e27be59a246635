#!/usr/bin/env bash
# The engine path on the 20-million-row file of bench/large_oneway.sh (the
# same invented fill weights of 12 filling heads over 3 shifts, made by the
# same generator), measured in one run:
#   (h) sha256sum FILE                         the floor of any report that hashes its input
#   (s) sheaf build of the raw file            sheaf's own streaming, `checks: summary`
#   (q) sheaf sql                              printing the cell query
#   (e) the query on DuckDB, Apache DataFusion and (where pyspark and Java 17
#       are at hand) Apache Spark in local mode, each from the CSV file and
#       from a Parquet copy, writing the summary CSV
#   (r) sheaf build of the summary file        `input: summary` with `query`
# Each is one whole process, timed once (ROUNDS=n for the best of n), with CPU
# time and peak memory from GNU time. The F of the raw build and of each
# engine's summary build are printed side by side.
# Usage: bench/engines.sh        (ROWS=20000000 by default)
set -euo pipefail
. "$(dirname "$0")/lib.sh"
cd "$(dirname "$0")/.."
rows="${ROWS:-20000000}"
rounds="${ROUNDS:-1}"
bin=$(build_sheaf)
venv=target/engines-venv
ensure_venv "$venv" "duckdb, datafusion, pyarrow" duckdb==2.0.0 datafusion==55.0.0 pyarrow==26.0.1
# Spark needs Java 17: the machine's, or Debian's headless runtime.
spark=yes
if ! java -version 2>&1 | grep -q 'version "17'; then
  (apt-get install -y -qq openjdk-17-jre-headless >/dev/null 2>&1) || true
fi
if ! java -version 2>&1 | grep -q 'version "17'; then
  echo "note: no Java 17 (openjdk-17-jre-headless); Spark is skipped"
  spark=no
elif ! "$venv/bin/python" -c "import pyspark" 2>/dev/null; then
  "$venv/bin/pip" install -q pyspark==4.3.0 || { echo "note: pyspark could not be installed; Spark is skipped"; spark=no; }
fi
data="target/bench-data"
mkdir -p "$data"
csv="$data/fill-$rows.csv"
ensure_fill_csv "$csv" "$rows"
name="$(basename "$csv")"
work="$data/engines"
mkdir -p "$work"
parquet="$PWD/$work/fill-$rows.parquet"
if [ ! -s "$parquet" ]; then
  "$venv/bin/python" -c "
import pyarrow.csv as c, pyarrow.parquet as p, sys
t = c.read_csv(sys.argv[1], convert_options=c.ConvertOptions(column_types={'fill_g': 'float64'}))
p.write_table(t, sys.argv[2], row_group_size=1_000_000)" "$csv" "$parquet"
fi
cat > "$work/raw.md" <<DOC
# Fill weights by filling head (invented data)

\`\`\`anova
id: fill
data: ../$name
model: fill_g ~ head
compare: tukey
checks: summary
\`\`\`

F = {{ fill.f | fixed(6) }}
DOC
summary_doc() { # engine source
  cat <<DOC
# Fill weights by filling head, from an engine's cell summaries (invented data)

\`\`\`anova
id: fill
data: cells-$1-$2.csv
input: summary
query: cells-$1-$2.sql
model: fill_g ~ head
compare: tukey
\`\`\`

F = {{ fill.f | fixed(6) }}
DOC
}
cat > "$work/run_query.py" <<'PY'
# One cell query on one engine: engine, query file, source CSV (registered as
# `source`, or "-" when the query reads a Parquet path), output CSV.
import os, shutil, sys, glob
engine, sql_path, source, out = sys.argv[1:5]
sql = open(sql_path).read()
if engine == "duckdb":
    import duckdb
    con = duckdb.connect()
    if source != "-":
        con.execute(f"CREATE VIEW source AS SELECT * FROM read_csv('{source}')")
    con.execute(f"COPY ({sql}) TO '{out}' (HEADER, DELIMITER ',')")
elif engine == "datafusion":
    import datafusion
    ctx = datafusion.SessionContext().enable_url_table()
    if source != "-":
        ctx.register_csv("source", source)
    ctx.sql(sql).write_csv(out, with_header=True)
else:
    from pyspark.sql import SparkSession
    spark = (SparkSession.builder.master("local[2]").config("spark.ui.enabled", "false")
             .config("spark.driver.memory", "2g").getOrCreate())
    spark.sparkContext.setLogLevel("ERROR")
    if source != "-":
        spark.read.schema("head STRING, fill_g DOUBLE, shift STRING").option("header", True) \
            .csv(source).createOrReplaceTempView("source")
    folder = out + ".parts"
    spark.sql(sql).coalesce(1).write.mode("overwrite").option("header", True).csv(folder)
    shutil.move(glob.glob(os.path.join(folder, "part-*.csv"))[0], out)
    shutil.rmtree(folder)
    spark.stop()
PY
cat "$csv" > /dev/null # into the page cache for every contender alike
# A failed engine gets a row of nan and the run goes on to the others.
measure() { measure_best_of "$rounds" "$work" "$@" || echo "nan nan 0"; }
# The numbers as measured (CPU "0", not table_row's "0.00"): BENCHMARKS.md
# quotes this table as it has always printed.
row() {
  local wall cpu peak
  read -r wall cpu peak <<< "$2"
  printf '%-48s %9s %9s %11s\n' "$1" "$wall" "$cpu" "$((peak / 1024))"
}
size=$(stat -c %s "$csv")
printf '%s: %s rows, %s MB CSV, %s MB Parquet, %s core(s), shared machine\n' "$name" "$rows" \
  "$((size / 1000000))" "$(($(stat -c %s "$parquet") / 1000000))" "$(nproc)"
table_header 48
row "(h) sha256sum of the CSV" "$(measure sha256sum "$csv")"
row "(s) sheaf build of the raw CSV (streaming)" "$(measure "$bin" build "$work/raw.md" -o "$work/out-raw")"
raw_f=$(grep -o 'F = [0-9.]*' "$work/out-raw/raw.html" | head -1 || true)
engines="duckdb datafusion"
[ "$spark" = yes ] && engines="$engines spark"
declare -A fs
for engine in $engines; do
  for src in csv parquet; do
    sql="$work/cells-$engine-$src.sql"
    summary_doc "$engine" "$src" > "$work/summary-$engine-$src.md"
    if [ "$src" = csv ]; then
      q=$(measure "$bin" sql "$work/summary-$engine-$src.md" --table source --scale 3 -o "$sql")
      source="$PWD/$csv"
    else
      q=$(measure "$bin" sql "$work/summary-$engine-$src.md" --parquet "$parquet" --engine "$engine" --scale 3 -o "$sql")
      source="-"
    fi
    [ "$engine" = duckdb ] && [ "$src" = csv ] && row "(q) sheaf sql (print the query)" "$q"
    row "(e) $engine, from $src" "$(measure "$venv/bin/python" "$work/run_query.py" "$engine" "$sql" "$source" "$PWD/$work/cells-$engine-$src.csv")"
    r=$(measure "$bin" build "$work/summary-$engine-$src.md" -o "$work/out-$engine-$src")
    [ "$engine" = duckdb ] && [ "$src" = csv ] && row "(r) sheaf build of the summary file" "$r"
    fs["$engine $src"]=$(grep -o 'F = [0-9.]*' "$work/out-$engine-$src/summary-$engine-$src.html" 2>/dev/null | head -1 || echo "F = (not built)")
  done
done
echo "raw file: $raw_f"
for k in "${!fs[@]}"; do echo "$k: ${fs[$k]}"; done | sort
