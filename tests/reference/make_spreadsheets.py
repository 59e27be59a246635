#!/usr/bin/env python3
"""Writes the spreadsheet fixtures in tests/data/spreadsheets/ from the open
PlantGrowth CSV: plants.xlsx with openpyxl and plants.ods with odfpy's
OpenDocument API. Run from the repository root with the venv of generate.py
plus `pip install openpyxl odfpy`."""

import datetime
import pathlib

import openpyxl
import pandas as pd
from odf.opendocument import OpenDocumentSpreadsheet
from odf.table import Table, TableCell, TableRow
from odf.text import P

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


def ods_cell(value):
    """A text cell, or a float cell for a number (OpenDocument 1.2, 19.385)."""
    if isinstance(value, str):
        cell = TableCell(valuetype="string")
    else:
        cell = TableCell(valuetype="float", value=value)
    cell.addElement(P(text=str(value)))
    return cell


ods = OpenDocumentSpreadsheet()
sheet = Table(name="weights")
header = TableRow()
for name in df.columns:
    header.addElement(ods_cell(name))
sheet.addElement(header)
for w, g in zip(df.weight, df.group):
    row = TableRow()
    row.addElement(ods_cell(float(w)))
    row.addElement(ods_cell(g))
    sheet.addElement(row)
ods.spreadsheet.addElement(sheet)
ods.save(str(OUT / "plants.ods"))
print("wrote", OUT / "plants.xlsx", OUT / "plants.ods")
