#!/usr/bin/env python3
"""Writes the spreadsheet fixtures in tests/data/spreadsheets/ from the open
PlantGrowth CSV: plants.xlsx with openpyxl and plants.ods with pandas' odf
writer (odfpy). Run from the repository root with the venv of generate.py
plus `pip install openpyxl odfpy`."""

import datetime
import pathlib

import openpyxl
import pandas as pd

ROOT = pathlib.Path(__file__).resolve().parents[2]
OUT = ROOT / "tests" / "data" / "spreadsheets"

df = pd.read_csv(ROOT / "tests" / "data" / "open" / "PlantGrowth.csv")
wb = openpyxl.Workbook()
notes = wb.active
notes.title = "notes"
notes["A1"] = "PlantGrowth (Dobson 1983), copied from the open dataset for a spreadsheet test"
ws = wb.create_sheet("weights")
ws["B3"], ws["C3"], ws["D3"] = "weight", "group", "sown"
for i, (w, g) in enumerate(zip(df.weight, df.group)):
    ws.cell(row=4 + i, column=2, value=float(w))
    ws.cell(row=4 + i, column=3, value=g)
    ws.cell(row=4 + i, column=4, value=datetime.date(2024, 5, 1 + i % 3))
wb.save(OUT / "plants.xlsx")
df.to_excel(OUT / "plants.ods", engine="odf", index=False, sheet_name="weights")
print("wrote", OUT / "plants.xlsx", OUT / "plants.ods")
