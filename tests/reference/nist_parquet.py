"""Writes the Parquet test files under tests/data/parquet/ with pyarrow
(the Apache Arrow project's Python library), from CSV text already in the
repository, so that the Rust tests need no Python.

- nist/<name>.decimal.parquet: the NIST StRD one-way ANOVA datasets
  (tests/data/nist/*.csv, see SOURCE.md there) with the response as
  DECIMAL(p, s), p and s the most digits and decimals in the file's text
  (exact); every other dataset stores the decimals as INT32/INT64
  (`store_decimal_as_integer`), the rest as FIXED_LEN_BYTE_ARRAY. Row
  groups of 100 rows, zstd compression.
- nist/<name>.double.parquet: the response as DOUBLE, the double nearest
  the certified file's text (Python's float(), correctly rounded), snappy.
- warpbreaks.parquet, sleepstudy.parquet: open data from tests/data/open/
  (see SOURCES.md there): counts as INT64 and INT32, the reaction times
  as DECIMAL(8, 4) (the CSV text's four decimals), factors as strings;
  gzip and lz4.
- invented-nulls.parquet and invented-nulls.csv: invented fill weights with
  null responses and factors, a level name holding a comma and a quote,
  row groups of 7 rows (the CSV file holds the same table, nulls as
  empty cells).
- types.parquet: one row per kind of column sheaf reads (dates,
  timestamps, booleans, unsigned integers, float32, decimals) and a list
  column it refuses; the expected text of each cell is written by hand in
  tests/parquet.rs.

Run: /tmp/venv-ref/bin/python tests/reference/nist_parquet.py
"""

import csv
import datetime
import decimal
import json
import pathlib

import pyarrow as pa
import pyarrow.parquet as pq

ROOT = pathlib.Path(__file__).resolve().parents[2]
DATA = ROOT / "tests" / "data"
OUT = DATA / "parquet"


def read_text(path):
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    return rows[0], rows[1:]


def decimal_type(texts):
    scale = max(len(t.split(".")[1]) if "." in t else 0 for t in texts)
    digits = max(len(t.lstrip("-").replace(".", "").lstrip("0") or "0") for t in texts)
    whole = max(len(t.lstrip("-").split(".")[0].lstrip("0")) for t in texts)
    return pa.decimal128(max(digits, whole + scale, 1), scale), scale


def write_nist():
    (OUT / "nist").mkdir(parents=True, exist_ok=True)
    certified = json.loads((DATA / "nist" / "certified.json").read_text())
    for i, name in enumerate(sorted(certified["datasets"])):
        header, rows = read_text(DATA / "nist" / certified["datasets"][name]["csv"])
        assert header == ["group", "value"], header
        groups = [r[0] for r in rows]
        texts = [r[1] for r in rows]
        kind, scale = decimal_type(texts)
        exact = [decimal.Decimal(t).quantize(decimal.Decimal(1).scaleb(-scale)) for t in texts]
        assert all(decimal.Decimal(t) == e for t, e in zip(texts, exact))
        table = pa.table({"group": pa.array(groups, pa.string()), "value": pa.array(exact, kind)})
        pq.write_table(
            table,
            OUT / "nist" / f"{name}.decimal.parquet",
            row_group_size=100,
            compression="zstd",
            store_decimal_as_integer=(i % 2 == 0),
        )
        doubles = pa.table(
            {"group": pa.array(groups, pa.string()), "value": pa.array([float(t) for t in texts], pa.float64())}
        )
        pq.write_table(doubles, OUT / "nist" / f"{name}.double.parquet", compression="snappy")


def write_open():
    header, rows = read_text(DATA / "open" / "warpbreaks.csv")
    assert header == ["breaks", "wool", "tension"]
    table = pa.table(
        {
            "breaks": pa.array([int(r[0]) for r in rows], pa.int64()),
            "wool": pa.array([r[1] for r in rows], pa.string()),
            "tension": pa.array([r[2] for r in rows], pa.string()),
        }
    )
    pq.write_table(table, OUT / "warpbreaks.parquet", compression="gzip", row_group_size=20)
    header, rows = read_text(DATA / "open" / "sleepstudy.csv")
    assert header == ["Reaction", "Days", "Subject"]
    table = pa.table(
        {
            "Reaction": pa.array([decimal.Decimal(r[0]) for r in rows], pa.decimal128(8, 4)),
            "Days": pa.array([int(r[1]) for r in rows], pa.int32()),
            "Subject": pa.array([r[2] for r in rows], pa.string()),
        }
    )
    pq.write_table(table, OUT / "sleepstudy.parquet", compression="lz4", row_group_size=50)


def write_invented():
    heads = ["H1", "H2", 'H3, "north"']
    rows = []
    for i in range(60):
        head = heads[i % 3]
        weight = f"{500 + (i % 3) * 0.4 + ((i * 37) % 11) * 0.05:.2f}"
        if i in (4, 23, 41):
            weight = None
        if i == 17:
            head = None
        rows.append((head, weight, f"S{i // 20}"))
    with open(OUT / "invented-nulls.csv", "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["head", "fill_g", "shift"])
        for head, weight, shift in rows:
            w.writerow(["" if head is None else head, "" if weight is None else weight, shift])
    table = pa.table(
        {
            "head": pa.array([r[0] for r in rows], pa.string()),
            "fill_g": pa.array([None if r[1] is None else decimal.Decimal(r[1]) for r in rows], pa.decimal128(6, 2)),
            "shift": pa.array([r[2] for r in rows], pa.string()),
        }
    )
    pq.write_table(table, OUT / "invented-nulls.parquet", row_group_size=7, compression="snappy")


def write_types():
    table = pa.table(
        {
            "day": pa.array([datetime.date(2024, 5, 1), None], pa.date32()),
            "stamp_ms": pa.array([datetime.datetime(2024, 5, 1, 8, 30, 0, 123000), None], pa.timestamp("ms")),
            "stamp_us_utc": pa.array(
                [datetime.datetime(1969, 12, 31, 23, 59, 59, 999999, tzinfo=datetime.timezone.utc), None],
                pa.timestamp("us", tz="UTC"),
            ),
            "flag": pa.array([True, False], pa.bool_()),
            "count_u32": pa.array([4294967295, 0], pa.uint32()),
            "count_u64": pa.array([18446744073709551615, 1], pa.uint64()),
            "small_i8": pa.array([-128, 127], pa.int8()),
            "single": pa.array([0.1, -2.5e-30], pa.float32()),
            "wide_decimal": pa.array(
                [decimal.Decimal("-12345678901234567890.123456789"), decimal.Decimal("0.000000001")],
                pa.decimal128(38, 9),
            ),
            "text": pa.array(["line\nbreak", ""], pa.string()),
            "tags": pa.array([[1, 2], []], pa.list_(pa.int32())),
        }
    )
    pq.write_table(table, OUT / "types.parquet", compression="none")


if __name__ == "__main__":
    write_nist()
    write_open()
    write_invented()
    write_types()
    print("written under", OUT)
