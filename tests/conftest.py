"""Schedules shared by the tests of the fast paths and of the second process.

All invented: the demo, the test fixtures and the benchmark generator's schedules.
"""
from __future__ import annotations

from pathlib import Path

import fixture_builders as fb
import pytest

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "fixtures" / "demo"


@pytest.fixture(params=["demo-xlsx", "demo-csv", "messy-xlsx", "bench-csv"])
def schedule(request, tmp_path) -> Path:
    if request.param == "demo-xlsx":
        return DEMO / "northfield-pump-station.xlsx"
    if request.param == "demo-csv":
        return DEMO / "northfield-pump-station.csv"
    if request.param == "messy-xlsx":
        return fb.write_messy_xlsx(tmp_path / "messy.xlsx")
    return fb.bench_schedule_csv(tmp_path, 150)


@pytest.fixture(params=["northfield-chromium.pdf", "e601-motor-schedule.pdf", "hostile-cells", "odd-sheet-name"])
def more_schedules(request, tmp_path) -> Path:
    """PDF tables (cells labelled by page and table), cells that must be escaped, and a sheet
    name with quotes, digits and markup (it is part of every cell label)."""
    if request.param.endswith(".pdf"):
        return ROOT / "fixtures" / "pdf" / request.param
    if request.param == "odd-sheet-name":
        import openpyxl

        book = openpyxl.Workbook()
        sheet = book.active
        sheet.title = 'Pumps "1" & <2>!'
        for row in (["TAG", "HP", "VOLTS", "FLA", "CONDUCTORS", "OCPD"], ["P-1", 10, 575, 11, "3#12", "25A CB"],
                    ["P-12", 7.5, 575, 9, "3#14", "20A CB"]):
            sheet.append(row)
        book.save(tmp_path / "odd.xlsx")
        return tmp_path / "odd.xlsx"
    path = tmp_path / "hostile.csv"
    path.write_text("TAG,DESCRIPTION,HP,VOLTS,FLA,CONDUCTORS,OCPD,REMARKS\n"
                    "<script>alert(1)</script>,\"pump & \"\"fan\"\" <b>\",10,575,11,3#12 RW90,25A CB,=1+1\n"
                    "P-2,'quoted' é ünïcode \u2028 line,7.5,575,9,3#14,20 A TD fuse,\n"
                    "P-3,no current,5,575,,3#14,,\n", encoding="utf-8")
    return path
