"""Runs sheaf's cell-summary queries on DuckDB and Apache DataFusion and checks
their output against exact arithmetic.

Used by tests/engines.rs, in the virtual environment .ci/run creates
(target/engines-venv: duckdb, datafusion, pyarrow at pinned versions).

  engines.py check                 exit 0 when every package imports
  engines.py generate DIR ROWS     writes DIR/fill.csv and DIR/fill.parquet:
                                   ROWS invented rows (fill weights in grams
                                   of 12 filling heads over 3 shifts), the
                                   response as 3-decimal text in the CSV and as
                                   a double column in the Parquet file
  engines.py run JOBS.json         runs each job's query on its engine, writes
                                   the engine's CSV, and compares every cell
                                   with exact sums from Python's `decimal`
                                   module over the raw CSV text; writes the
                                   comparison to the JSON file the jobs name

The reference (`exact_cells`) reads the raw file as text and never uses an
engine or sheaf: n, origin = min(y), Σ(y − origin) and Σ(y − origin)² as exact
decimals. The engines' numbers must equal them digit for digit.
"""

import csv
import json
import os
import random
import sys
import time
from decimal import Decimal


def check():
    import duckdb  # noqa: F401
    import datafusion  # noqa: F401
    import pyarrow  # noqa: F401

    print(f"duckdb {duckdb.__version__}, datafusion {datafusion.__version__}, pyarrow {pyarrow.__version__}")


def generate(folder, rows):
    """Invented data, reproducible from the seed."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    rng = random.Random(11)
    heads, weights, shifts = [], [], []
    with open(os.path.join(folder, "fill.csv"), "w", newline="") as out:
        out.write("head,fill_g,shift\n")
        for i in range(rows):
            h = i % 12
            w = f"{500 + h * 0.02 + 0.8 * (rng.random() + rng.random() + rng.random() - 1.5):.3f}"
            s = f"S{(i // 1000) % 3}"
            out.write(f"H{h:02d},{w},{s}\n")
            heads.append(f"H{h:02d}")
            weights.append(float(w))
            shifts.append(s)
    table = pa.table({"head": heads, "fill_g": weights, "shift": shifts})
    pq.write_table(table, os.path.join(folder, "fill.parquet"), row_group_size=500_000)


def exact_cells(raw, response, factors, where):
    """Exact cell sums from the raw CSV text; `where` is [column, value]
    pairs of rows to leave out (the tests' `!=` filters)."""
    values = {}
    with open(raw, newline="") as f:
        for row in csv.DictReader(f):
            if any(row[c].strip() == v for c, v in where):
                continue
            key = tuple(row[c].strip() for c in factors)
            values.setdefault(key, []).append(Decimal(row[response].strip()))
    origin = min(min(v) for v in values.values())
    cells = {}
    for key, vs in values.items():
        d = [v - origin for v in vs]
        cells[key] = {"n": len(vs), "sum": sum(d), "squares": sum(x * x for x in d)}
    return origin, cells


def run_duckdb(sql, source_csv, out):
    import duckdb

    con = duckdb.connect()
    if source_csv:
        con.execute(f"CREATE VIEW source AS SELECT * FROM read_csv('{source_csv}')")
    con.execute(f"COPY ({sql.rstrip().rstrip(';')}) TO '{out}' (HEADER, DELIMITER ',')")


def run_datafusion(sql, source_csv, out):
    import datafusion

    # A quoted Parquet path in FROM needs URL tables, which the SQL cannot
    # switch on itself (datafusion-cli has them on).
    ctx = datafusion.SessionContext().enable_url_table()
    if source_csv:
        ctx.register_csv("source", source_csv)
    ctx.sql(sql).write_csv(out, with_header=True)


def read_engine_csv(path, factors):
    with open(path, newline="") as f:
        rows = list(csv.DictReader(f))
    return rows


def compare(job, expected, rows):
    origin, cells = expected
    problems = []
    header_needed = job["factors"] + ["n", "origin", "sum", "squares", "rounded"]
    if rows and list(rows[0].keys()) != header_needed:
        problems.append(f"header {list(rows[0].keys())} != {header_needed}")
        return problems
    keys = [tuple(r[c] for c in job["factors"]) for r in rows]
    if keys != sorted(cells.keys()):
        problems.append(f"cells {keys[:5]}... differ from {sorted(cells.keys())[:5]}...")
        return problems
    for key, r in zip(keys, rows):
        want = cells[key]
        got = {
            "n": int(r["n"]),
            "origin": Decimal(r["origin"]),
            "sum": Decimal(r["sum"]),
            "squares": Decimal(r["squares"]),
            "rounded": int(r["rounded"]),
        }
        for name, value in (
            ("n", want["n"]),
            ("origin", origin),
            ("sum", want["sum"]),
            ("squares", want["squares"]),
            ("rounded", 0),
        ):
            if got[name] != value:
                problems.append(f"cell {key}: {name} {got[name]} != exact {value}")
    return problems


def overflow_job(job, sql):
    """A query past what the decimals hold in cell `b` (tests/engines.rs
    writes the data): the engine must stop with an error or leave that
    cell's `sum` or `squares` empty; numbers there are a failure."""
    started = time.perf_counter()
    outcome, problems = "", []
    try:
        {"duckdb": run_duckdb, "datafusion": run_datafusion}[job["engine"]](sql, job.get("table_csv"), job["out"])
        rows = read_engine_csv(job["out"], job["factors"])
        numbers = [r for r in rows if r["g"] == "b" and r["sum"] != "" and r["squares"] != ""]
        outcome = "empty sums" if not numbers else "numbers"
        if numbers:
            problems.append(f"numbers past the decimals' range: {numbers}")
    except Exception as e:
        outcome = f"error: {str(e).splitlines()[0][:120]}"
    return {"name": job["name"], "engine": job["engine"], "seconds": time.perf_counter() - started,
            "problems": problems, "outcome": outcome}


def run(jobs_file):
    with open(jobs_file) as f:
        spec = json.load(f)
    expectations = {}
    report = []
    for job in spec["jobs"]:
        if job.get("overflow"):
            with open(job["sql"]) as f:
                report.append(overflow_job(job, f.read()))
            continue
        key = (job["raw"], job["response"], tuple(job["factors"]), json.dumps(job.get("where", [])))
        if key not in expectations:
            expectations[key] = exact_cells(job["raw"], job["response"], job["factors"], job.get("where", []))
        with open(job["sql"]) as f:
            sql = f.read()
        started = time.perf_counter()
        try:
            {"duckdb": run_duckdb, "datafusion": run_datafusion}[job["engine"]](sql, job.get("table_csv"), job["out"])
            problems = compare(job, expectations[key], read_engine_csv(job["out"], job["factors"]))
        except Exception as e:  # reported to the Rust test, which fails on it
            problems = [f"{type(e).__name__}: {e}"]
        report.append({"name": job["name"], "engine": job["engine"], "seconds": time.perf_counter() - started,
                       "problems": problems})
    with open(spec["report"], "w") as f:
        json.dump(report, f, indent=1)


if __name__ == "__main__":
    command = sys.argv[1]
    if command == "check":
        check()
    elif command == "generate":
        generate(sys.argv[2], int(sys.argv[3]))
    elif command == "run":
        run(sys.argv[2])
    else:
        sys.exit(f"unknown command {command}")
