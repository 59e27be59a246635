#!/usr/bin/env python3
"""Writes tests/reference/nist_summaries.json: the NIST StRD one-way ANOVA
datasets (tests/data/nist) as summary tables, n, mean and SD per level,
computed exactly with Python's fractions module (no floating point), for
sheaf's `input: summary` accuracy tests.

Every dataset appears as published; SiRstv, SmLs01 and AtmWtAg appear again
shifted by exactly 10^j for j = 0..12 (an offset sweep: the certified SS,
MS, F and R^2 do not change with the shift). Means are written with 20
decimals (exact when the mean terminates sooner; otherwise correctly rounded,
an error below 5e-21 that moves no certified value in its 15 digits); SDs
with 25 significant digits (sqrt of the exact variance by decimal at 50
digits). Also written: the exact difference of the second level's mean from
the first's, to check pairwise differences.

Run from the repository root with any Python 3 (standard library only):

    python3 tests/reference/nist_summaries.py
"""

import csv
import decimal
import json
import pathlib
from fractions import Fraction

ROOT = pathlib.Path(__file__).resolve().parents[2]
NIST = ROOT / "tests" / "data" / "nist"
OUT = ROOT / "tests" / "reference" / "nist_summaries.json"
SWEPT = ["SiRstv", "SmLs01", "AtmWtAg"]
MEAN_DECIMALS = 20

decimal.getcontext().prec = 50


def fixed(value, places):
    """A Fraction as a plain decimal string, rounded half to even."""
    q = decimal.Decimal(value.numerator) / decimal.Decimal(value.denominator)
    return str(q.quantize(decimal.Decimal(1).scaleb(-places), rounding=decimal.ROUND_HALF_EVEN))


def significant(value, digits):
    """A non-negative Decimal as a plain string with `digits` significant digits."""
    if value == 0:
        return "0"
    exponent = value.adjusted()
    return str(value.quantize(decimal.Decimal(1).scaleb(exponent - digits + 1)))


def summary(groups):
    rows = []
    for level, values in groups.items():
        n = len(values)
        mean = sum(values) / n
        var = sum((v - mean) ** 2 for v in values) / (n - 1)
        sd = (decimal.Decimal(var.numerator) / decimal.Decimal(var.denominator)).sqrt()
        rows.append({"level": level, "n": n, "mean": fixed(mean, MEAN_DECIMALS),
                     "sd": significant(sd, 25), "exact_mean": mean})
    diff = rows[1]["exact_mean"] - rows[0]["exact_mean"]
    for r in rows:
        del r["exact_mean"]
    return rows, fixed(diff, MEAN_DECIMALS)


def read(name, shift):
    groups = {}
    with open(NIST / f"{name}.csv", newline="") as f:
        for row in csv.DictReader(f):
            groups.setdefault(row["group"], []).append(Fraction(row["value"]) + shift)
    return groups


def main():
    certified = json.loads((NIST / "certified.json").read_text())["datasets"]
    cases = []
    for name in sorted(certified):
        offsets = [None] + ([10**j for j in range(13)] if name in SWEPT else [])
        for offset in offsets:
            rows, diff = summary(read(name, offset or 0))
            cases.append({"dataset": name, "offset": offset, "rows": rows,
                          "difference_2_1": diff})
    fixture = {"generator": "tests/reference/nist_summaries.py",
               "source": "NIST StRD ANOVA data in tests/data/nist, summarised exactly",
               "cases": cases}
    OUT.write_text(json.dumps(fixture, indent=1) + "\n")
    print("wrote", OUT, len(cases), "cases")


if __name__ == "__main__":
    main()
