# shellcheck shell=bash
# What the benchmark scripts share, so that every script builds, installs,
# generates and times the same way. Sourced, not run:
#   . "$(dirname "$0")/lib.sh"
# Paths given to these functions are as the caller sees them (the scripts
# work from the repository root).

# Builds the release binary and prints its absolute path: mixed.sh runs it
# from another folder, and CARGO_TARGET_DIR moves it.
build_sheaf() {
  cargo build --release -q || return
  local target="${CARGO_TARGET_DIR:-target}"
  case $target in
    /*) ;;
    *) target="$PWD/$target" ;;
  esac
  echo "$target/release/sheaf"
}

# Makes a virtual environment with PACKAGES unless IMPORTS already import in
# it; asking Python (not testing the folder) also brings an environment made
# for another script up to what this one needs.
# Usage: ensure_venv VENV "IMPORTS" PACKAGE...
ensure_venv() {
  local venv=$1 imports=$2
  shift 2
  if ! "$venv/bin/python" -c "import $imports" 2>/dev/null; then
    python3 -m venv "$venv"
    "$venv/bin/pip" install -q "$@"
  fi
}

# The invented fill weights (12 filling heads over 3 shifts, fixed seed) that
# large_oneway.sh, columnar.sh and engines.sh all measure, so that their
# numbers are on the same file. Written under a temporary name first: an
# interrupted run must not leave a short file a later run would take as whole.
# Usage: ensure_fill_csv CSV ROWS
ensure_fill_csv() {
  local csv=$1 rows=$2
  if [ -s "$csv" ]; then
    return
  fi
  echo "generating $csv ($rows rows, invented data)"
  awk -v n="$rows" 'BEGIN { srand(11); print "head,fill_g,shift";
    for (i = 0; i < n; i++) { h = i % 12;
      printf "H%02d,%.3f,S%d\n", h, 500 + h * 0.02 + 0.8 * (rand() + rand() + rand() - 1.5), int(i / 1000) % 3 } }' > "$csv.tmp"
  mv "$csv.tmp" "$csv"
}

# Runs a command RUNS times as a whole process and prints
# "wall user+sys peakKiB" of the run with the least wall time. Wall time comes
# from the nanosecond clock (GNU time rounds to 10 ms, too coarse for cat);
# CPU time and peak memory (%M) from GNU time. The command's output goes to
# WORK/last.out, where a caller may read it. A failed run is reported on
# stderr with the end of its output, and the function returns 1 printing
# nothing, so the caller decides whether the benchmark goes on.
# Usage: measure_best_of RUNS WORK COMMAND...
measure_best_of() {
  local runs=$1 work=$2 best="" line wall user sys peak start end
  shift 2
  for _ in $(seq "$runs"); do
    start=$(date +%s%N)
    if ! /usr/bin/time -o "$work/time.out" -f "%U %S %M" "$@" > "$work/last.out" 2>&1; then
      echo "failed: $*" >&2
      tail -20 "$work/last.out" >&2
      return 1
    fi
    end=$(date +%s%N)
    read -r user sys peak < "$work/time.out"
    wall=$(awk -v s="$start" -v e="$end" 'BEGIN { printf "%.3f", (e - s) / 1e9 }')
    line="$wall $(awk -v u="$user" -v s="$sys" 'BEGIN { print u + s }') $peak"
    if [ -z "$best" ] || awk -v a="$wall" -v b="${best%% *}" 'BEGIN { exit !(a < b) }'; then
      best="$line"
    fi
  done
  echo "$best"
}

# The result table: a label column LABEL_WIDTH wide, then wall seconds, CPU
# seconds and peak MiB from a measure_best_of line.
# Usage: table_header LABEL_WIDTH; table_row LABEL_WIDTH LABEL MEASURED
table_header() {
  printf "%-${1}s %9s %9s %11s\n" "" "wall s" "CPU s" "peak MiB"
}
table_row() {
  local wall cpu peak
  read -r wall cpu peak <<< "$3"
  printf "%-${1}s %9.3f %9.2f %11.0f\n" "$2" "$wall" "$cpu" "$((peak / 1024))"
}

# The ratio of two measure_best_of lines' wall times, to DECIMALS places.
# Usage: wall_ratio DECIMALS MEASURED_A MEASURED_B   (prints A / B)
wall_ratio() {
  awk -v d="$1" -v x="${2%% *}" -v y="${3%% *}" 'BEGIN { printf "%." d "f", x / y }'
}
