#!/usr/bin/env python3
"""Writes tests/reference/nist_exact_sums.json: the NIST StRD one-way ANOVA
datasets (tests/data/nist) in the exact-sums summary form, one row per
level with n, the origin, sum = sum(y - origin) and squares =
sum((y - origin)^2), every value an exact decimal computed with Python's
fractions module (no floating point), as a database engine aggregating
DECIMAL columns would write them.

Origins: the first observation of the file (what a query taking any data
value gives), 0 (no shift at all), and the first observation plus 0.05 (a
decimal that is no data value). SiRstv, SmLs01 and AtmWtAg appear again
with the data shifted by exactly 10^j, j = 0, 4, 8, 12, origin the shifted
first observation. Also written: the difference of the second level's
mean from the first's, to check pairwise differences (exact where it
terminates within 40 decimals, else the double nearest the exact
fraction).

Run from the repository root with any Python 3 (standard library only):

    python3 tests/reference/nist_exact_sums.py
"""

import csv
import json
import pathlib
from fractions import Fraction

ROOT = pathlib.Path(__file__).resolve().parents[2]
NIST = ROOT / "tests" / "data" / "nist"
OUT = ROOT / "tests" / "reference" / "nist_exact_sums.json"
SWEPT = ["SiRstv", "SmLs01", "AtmWtAg"]


def exact(value):
    """A Fraction whose denominator divides a power of ten, as a plain decimal."""
    places = 0
    while (value * 10**places).denominator != 1:
        places += 1
        if places > 60:
            raise ValueError("not a terminating decimal")
    digits = value * 10**places
    sign = "-" if digits < 0 else ""
    text = str(abs(digits.numerator)).rjust(places + 1, "0")
    if places == 0:
        return sign + text
    return f"{sign}{text[:-places]}.{text[-places:]}"


def read(name, shift):
    groups = {}
    with open(NIST / f"{name}.csv", newline="") as f:
        for row in csv.DictReader(f):
            groups.setdefault(row["group"], []).append(Fraction(row["value"]) + shift)
    return groups


def case(name, shift, origin, label):
    groups = read(name, shift)
    rows = []
    for level, values in groups.items():
        d = [v - origin for v in values]
        rows.append({"level": level, "n": len(values), "origin": exact(origin),
                     "sum": exact(sum(d)), "squares": exact(sum(x * x for x in d))})
    means = [sum(v) / len(v) for v in groups.values()]
    return {"dataset": name, "shift": shift, "origin_kind": label, "rows": rows,
            "difference_2_1": exact(means[1] - means[0]) if (means[1] - means[0]) * 10**40 % 1 == 0
            else str(float(means[1] - means[0]))}


def main():
    certified = json.loads((NIST / "certified.json").read_text())["datasets"]
    cases = []
    for name in sorted(certified):
        first = next(iter(read(name, 0).values()))[0]
        cases.append(case(name, 0, first, "first value"))
        cases.append(case(name, 0, Fraction(0), "zero"))
        cases.append(case(name, 0, first + Fraction(5, 100), "first value + 0.05"))
        if name in SWEPT:
            for j in (0, 4, 8, 12):
                cases.append(case(name, 10**j, first + 10**j, "shifted first value"))
    fixture = {"generator": "tests/reference/nist_exact_sums.py",
               "source": "NIST StRD ANOVA data in tests/data/nist, summed exactly",
               "cases": cases}
    OUT.write_text(json.dumps(fixture, indent=1) + "\n")
    print("wrote", OUT, len(cases), "cases")


if __name__ == "__main__":
    main()
