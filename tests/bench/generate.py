"""Deterministic large motor schedules for the speed benchmark (xlsx, CSV and a PDF drawing set).

The schedules are laid out the way big submissions arrive: title rows, a
two-row header with merged group cells, a section row (an MCC or panel) every
~20 motors, SPARE/SPACE rows, blank rows between sections, a few hidden rows,
a totals row and a notes block. Motor rows reuse the value styles of the
invented demo schedule (``fixtures/demo/make_demo.py``: '7-1/2', '22 A',
'575/3/60', '3 #4 RW90 CU + #8 BOND', '100AT/225AF', 'intermittent, 15 min',
TBD, blanks ...) with unique tags and per-section feeders. Every value is
invented; none is a code-table value.

The xlsx writer here is a small SpreadsheetML writer (shared strings, a date
style, merged ranges, hidden rows, fixed zip timestamps), so a 100 000-motor
workbook is written in seconds and byte-for-byte the same on every run.

Usage::

    python tests/bench/generate.py            # writes every size into tests/bench/data/
"""
from __future__ import annotations

import csv
import datetime as dt
import importlib.util
import io
import random
import sys
import zipfile
from dataclasses import dataclass, field
from pathlib import Path
from xml.sax.saxutils import escape

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]
DATA_DIR = HERE / "data"
DEMO_GENERATOR = ROOT / "fixtures" / "demo" / "make_demo.py"

SIZES = (1_000, 10_000, 100_000)
PDF_PAGES = 50
# Bump when the generated content changes, so stale cached files are rebuilt.
GENERATOR_VERSION = 1
SHEET = "MOTOR SCHEDULE"
ISSUE_DATE = dt.datetime(2025, 11, 14, 9, 0, 0)

LEAF_HEADERS = ("TAG", "DESCRIPTION", "HP", "FLA (A)\u00b9", "DUTY", "V/PH/HZ", "FED FROM",
                "STARTER", "CONDUCTORS", "OCPD", "O/L", "DISC.", "REMARKS")
# Group cells over the leaf row: (text, first column, last column), 1-based; REMARKS spans both rows.
GROUPS = (("MOTOR", 1, 5), ("SUPPLY", 6, 7), ("BRANCH CIRCUIT", 8, 9), ("PROTECTION", 10, 12))
NCOLS = len(LEAF_HEADERS)
FED_FROM_COL = 6  # 0-based index of FED FROM in a row


def _load_demo():
    spec = importlib.util.spec_from_file_location("make_demo", DEMO_GENERATOR)
    module = importlib.util.module_from_spec(spec)
    sys.modules.setdefault("make_demo", module)
    spec.loader.exec_module(module)
    return module


@dataclass
class Schedule:
    """Rows (cell values: str, int, float, datetime or None), 1-based merges as (r0, c0, r1, c1),
    1-based hidden row numbers, and the count of motor rows."""

    rows: list[list[object]] = field(default_factory=list)
    merges: list[tuple[int, int, int, int]] = field(default_factory=list)
    hidden_rows: set[int] = field(default_factory=set)
    motors: int = 0

    def add(self, cells, merge_full: bool = False) -> int:
        row = list(cells) + [None] * (NCOLS - len(cells))
        self.rows.append(row)
        number = len(self.rows)
        if merge_full:
            self.merges.append((number, 1, number, NCOLS))
        return number


def _section_name(index: int, rng: random.Random) -> tuple[str, str]:
    """(section row text, feeder prefix) for section ``index``: mostly MCCs, some lighting panels."""
    if rng.random() < 0.8:
        return f"MCC-{index + 1}  (600 V, 3\u00d8)", f"MCC-{index + 1}"
    return f"PANEL LP-{index + 1}  (120/208 V)", f"LP-{index + 1}"


def build_schedule(n_motors: int) -> Schedule:
    """The schedule with exactly ``n_motors`` motor rows, the same for the same ``n_motors``."""
    demo = _load_demo()
    templates = [row.cells for row in demo.all_rows()]
    spare_rows = [extra for _, _, extras in demo.SECTIONS for extra in extras]
    rng = random.Random(f"motorcheck-bench-{n_motors}-v{GENERATOR_VERSION}")
    s = Schedule()
    s.add([f"INVENTED INDUSTRIAL COMPLEX \u2014 SITE-WIDE MOTOR SCHEDULE ({n_motors:,} MOTORS)"], merge_full=True)
    s.add(["DWG E-900 TO E-9XX    MOTOR SCHEDULE    SCALE: NTS"], merge_full=True)
    row = s.add(["REV 2 \u2014 ISSUED FOR REVIEW"] + [None] * 8 + ["ISSUED", dt.datetime.combine(ISSUE_DATE.date(), dt.time())])
    s.merges.append((row, 1, row, 9))
    s.add([])
    group_row = [None] * NCOLS
    for text, first, last in GROUPS:
        group_row[first - 1] = text
    group_row[NCOLS - 1] = "REMARKS"
    g = s.add(group_row)
    s.merges.extend((g, first, g, last) for _, first, last in GROUPS)
    s.merges.append((g, NCOLS, g + 1, NCOLS))
    s.add(list(LEAF_HEADERS[:-1]))
    section = 0
    tag_counter = 0
    total_hp = 0.0
    while s.motors < n_motors:
        title, feeder = _section_name(section, rng)
        s.add([title], merge_full=True)
        count = min(rng.randint(15, 25), n_motors - s.motors)
        for bucket in range(count):
            cells = list(rng.choice(templates))
            tag_counter += 1
            prefix = str(cells[0]).split("-")[0]
            cells[0] = f"{prefix}-{tag_counter}"
            cells[FED_FROM_COL] = f"{feeder} / {bucket // 3 + 1}{'ABC'[bucket % 3]}"
            number = s.add(cells)
            s.motors += 1
            if isinstance(cells[2], (int, float)):
                total_hp += cells[2]
            if rng.random() < 0.002:
                s.hidden_rows.add(number)
        if rng.random() < 0.6:
            spare = list(rng.choice(spare_rows))
            spare[FED_FROM_COL] = f"{feeder} / {count // 3 + 2}A"
            s.add(spare)
        s.add([])
        section += 1
    total = s.add(["TOTAL CONNECTED HP", None, round(total_hp, 1)])
    s.merges.append((total, 1, total, 2))
    s.add([])
    for line in demo.NOTES:
        s.add([line], merge_full=True)
    return s


# --------------------------------------------------------------------------- xlsx

def _col_letter(index1: int) -> str:
    letters = ""
    while index1:
        index1, rem = divmod(index1 - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


def _excel_serial(value: dt.datetime) -> float:
    delta = value - dt.datetime(1899, 12, 30)
    return delta.days + delta.seconds / 86400


_CONTENT_TYPES = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">\
<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>\
<Default Extension="xml" ContentType="application/xml"/>\
<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>\
{sheets}\
<Override PartName="/xl/styles.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.styles+xml"/>\
<Override PartName="/xl/sharedStrings.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml"/>\
</Types>"""
_ROOT_RELS = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">\
<Relationship Id="rId1" Type="http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument" Target="xl/workbook.xml"/>\
</Relationships>"""
_STYLES = """<?xml version="1.0" encoding="UTF-8" standalone="yes"?>
<styleSheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">\
<fonts count="2"><font><sz val="10"/><name val="Arial"/></font><font><b/><sz val="10"/><name val="Arial"/></font></fonts>\
<fills count="2"><fill><patternFill patternType="none"/></fill><fill><patternFill patternType="gray125"/></fill></fills>\
<borders count="1"><border><left/><right/><top/><bottom/><diagonal/></border></borders>\
<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/></cellStyleXfs>\
<cellXfs count="3"><xf numFmtId="0" fontId="0" fillId="0" borderId="0" xfId="0"/>\
<xf numFmtId="14" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>\
<xf numFmtId="0" fontId="1" fillId="0" borderId="0" xfId="0" applyFont="1"/></cellXfs>\
<cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0"/></cellStyles>\
</styleSheet>"""
_NS = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" ' \
      'xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"'


class _SharedStrings:
    def __init__(self) -> None:
        self.index: dict[str, int] = {}
        self.count = 0

    def ref(self, text: str) -> int:
        self.count += 1
        return self.index.setdefault(text, len(self.index))

    def xml(self) -> str:
        items = "".join(f'<si><t xml:space="preserve">{escape(t)}</t></si>' for t in self.index)
        return (f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<sst {_NS} count="{self.count}" '
                f'uniqueCount="{len(self.index)}">{items}</sst>')


def _sheet_xml(rows, merges, hidden_rows, strings: _SharedStrings, bold_rows=()) -> str:
    parts = [f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<worksheet {_NS}><sheetData>']
    for r, row in enumerate(rows, start=1):
        cells = []
        for c, value in enumerate(row, start=1):
            if value is None or value == "":
                continue
            ref = f"{_col_letter(c)}{r}"
            if isinstance(value, str):
                style = ' s="2"' if r in bold_rows else ""
                cells.append(f'<c r="{ref}" t="s"{style}><v>{strings.ref(value)}</v></c>')
            elif isinstance(value, dt.datetime):
                cells.append(f'<c r="{ref}" s="1"><v>{_excel_serial(value)!r}</v></c>')
            else:
                cells.append(f'<c r="{ref}"><v>{value!r}</v></c>')
        hidden = ' hidden="1"' if r in hidden_rows else ""
        if cells or hidden:
            parts.append(f'<row r="{r}"{hidden}>{"".join(cells)}</row>')
    parts.append("</sheetData>")
    if merges:
        refs = "".join(f'<mergeCell ref="{_col_letter(c0)}{r0}:{_col_letter(c1)}{r1}"/>'
                       for r0, c0, r1, c1 in merges)
        parts.append(f'<mergeCells count="{len(merges)}">{refs}</mergeCells>')
    parts.append("</worksheet>")
    return "".join(parts)


def write_xlsx(path: Path, sheets: list[tuple[str, list, list, set]], hidden_sheets: tuple[str, ...] = (),
               bold_rows: dict[str, tuple[int, ...]] | None = None) -> Path:
    """Write sheets given as (name, rows, merges, hidden rows); reproducible to the byte."""
    strings = _SharedStrings()
    members: list[tuple[str, str]] = []
    sheet_entries, rel_entries, type_entries = [], [], []
    for i, (name, rows, merges, hidden) in enumerate(sheets, start=1):
        xml = _sheet_xml(rows, merges, hidden, strings, (bold_rows or {}).get(name, ()))
        members.append((f"xl/worksheets/sheet{i}.xml", xml))
        state = ' state="hidden"' if name in hidden_sheets else ""
        sheet_entries.append(f'<sheet name="{escape(name)}" sheetId="{i}"{state} r:id="rId{i}"/>')
        rel_entries.append(f'<Relationship Id="rId{i}" Type="http://schemas.openxmlformats.org/officeDocument/'
                           f'2006/relationships/worksheet" Target="worksheets/sheet{i}.xml"/>')
        type_entries.append(f'<Override PartName="/xl/worksheets/sheet{i}.xml" ContentType="application/'
                            f'vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>')
    n = len(sheets)
    rel_entries.append(f'<Relationship Id="rId{n + 1}" Type="http://schemas.openxmlformats.org/officeDocument/'
                       f'2006/relationships/styles" Target="styles.xml"/>')
    rel_entries.append(f'<Relationship Id="rId{n + 2}" Type="http://schemas.openxmlformats.org/officeDocument/'
                       f'2006/relationships/sharedStrings" Target="sharedStrings.xml"/>')
    workbook = (f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<workbook {_NS}><sheets>'
                f'{"".join(sheet_entries)}</sheets></workbook>')
    rels = ('<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<Relationships xmlns="http://schemas.'
            f'openxmlformats.org/package/2006/relationships">{"".join(rel_entries)}</Relationships>')
    members = [("[Content_Types].xml", _CONTENT_TYPES.format(sheets="".join(type_entries))),
               ("_rels/.rels", _ROOT_RELS), ("xl/workbook.xml", workbook), ("xl/_rels/workbook.xml.rels", rels),
               ("xl/styles.xml", _STYLES), ("xl/sharedStrings.xml", strings.xml()), *members]
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, text in members:
            info = zipfile.ZipInfo(name, date_time=ISSUE_DATE.timetuple()[:6])
            info.compress_type = zipfile.ZIP_DEFLATED
            info.external_attr = 0o600 << 16
            archive.writestr(info, text.encode("utf-8"))
    Path(path).write_bytes(buffer.getvalue())
    return Path(path)


def write_schedule_xlsx(path: Path, schedule: Schedule) -> Path:
    """The schedule on sheet 'MOTOR SCHEDULE' plus a small 'Revisions' sheet with dates."""
    demo = _load_demo()
    revisions = [["REVISIONS"], ["REV", "DATE", "DESCRIPTION", "BY", "CHK'D"]]
    revisions += [[rev, dt.datetime.combine(day, dt.time()), text, by, chk]
                  for rev, day, text, by, chk in demo.REVISIONS]
    header_rows = (1, 2, 5, 6)
    return write_xlsx(path, [(SHEET, schedule.rows, schedule.merges, schedule.hidden_rows),
                             ("Revisions", revisions, [], set())], bold_rows={SHEET: header_rows})


# --------------------------------------------------------------------------- csv

def _csv_text(value: object) -> str:
    if value is None:
        return ""
    if isinstance(value, dt.datetime):
        return value.date().isoformat()
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def write_schedule_csv(path: Path, schedule: Schedule) -> Path:
    """The same rows as CSV (UTF-8 with BOM, CRLF), as a spreadsheet exports them; merges and
    hidden rows are lost, group cells sit in the first column of their group."""
    out = io.StringIO(newline="")
    writer = csv.writer(out, lineterminator="\r\n")
    for row in schedule.rows:
        writer.writerow([_csv_text(v) for v in row])
    Path(path).write_bytes(out.getvalue().encode("utf-8-sig"))
    return Path(path)


# --------------------------------------------------------------------------- pdf

PDF_SCHEDULE_PAGES = frozenset(range(31, 41))  # 1-based pages of the set that hold the motor schedule
PDF_MOTORS_PER_PAGE = 30


def write_drawing_set_pdf(path: Path, pages: int = PDF_PAGES) -> Path:
    """A drawing set of ``pages`` landscape pages: title sheet, plan sheets (text and linework),
    a panel schedule, the motor schedule on ``PDF_SCHEDULE_PAGES`` (ruled tables with a
    two-row header), then detail sheets. Needs reportlab. Deterministic (invariant mode)."""
    from reportlab.lib.pagesizes import landscape, letter
    from reportlab.pdfgen import canvas

    schedule = build_schedule(PDF_MOTORS_PER_PAGE * len(PDF_SCHEDULE_PAGES))
    motor_rows = [r for r in schedule.rows[6:] if any(v not in (None, "") for v in r)]
    width, height = landscape(letter)
    c = canvas.Canvas(str(path), pagesize=(width, height), invariant=1)
    rng = random.Random(f"motorcheck-bench-pdf-v{GENERATOR_VERSION}")
    cursor = 0
    for page in range(1, pages + 1):
        _title_block(c, width, page, pages)
        if page in PDF_SCHEDULE_PAGES:
            chunk = motor_rows[cursor:cursor + PDF_MOTORS_PER_PAGE]
            cursor += len(chunk)
            _ruled_table(c, 30, height - 60, chunk)
        elif page == 1:
            c.setFont("Helvetica-Bold", 20)
            c.drawString(60, height - 120, "INVENTED INDUSTRIAL COMPLEX - ELECTRICAL")
            c.setFont("Helvetica", 9)
            for i in range(40):
                c.drawString(60, height - 160 - 11 * i, f"E-{900 + i:03d}  SHEET TITLE {i + 1}")
        else:
            _plan_sheet(c, width, height, rng)
        c.showPage()
    c.save()
    return Path(path)


def _title_block(c, width, page, pages) -> None:
    c.setFont("Helvetica", 7)
    c.rect(20, 20, width - 40, 30)
    c.drawString(30, 32, f"INVENTED INDUSTRIAL COMPLEX   DWG E-{899 + page:03d}   SHEET {page} OF {pages}")


def _plan_sheet(c, width, height, rng: random.Random) -> None:
    """Linework and scattered labels, as on a floor plan (no table)."""
    c.setLineWidth(0.4)
    for _ in range(120):
        x, y = rng.uniform(40, width - 40), rng.uniform(70, height - 40)
        c.line(x, y, x + rng.uniform(-80, 80), y + rng.uniform(-80, 80))
    c.setFont("Helvetica", 6)
    for _ in range(80):
        c.drawString(rng.uniform(40, width - 100), rng.uniform(70, height - 40),
                     f"{rng.choice(['JB', 'RECPT', 'MCC', 'LP', 'TX'])}-{rng.randint(1, 400)}")


def _ruled_table(c, x0, y_top, rows) -> None:
    col_w = (48, 120, 30, 38, 70, 52, 58, 52, 110, 70, 40, 60, 72)
    row_h = 14
    header = [[""] * NCOLS, list(LEAF_HEADERS)]
    for text, first, _ in GROUPS:
        header[0][first - 1] = text
    all_rows = header + [[_csv_text(v) for v in r] for r in rows]
    c.setFont("Helvetica", 5.5)
    c.setLineWidth(0.5)
    xs = [x0]
    for w in col_w:
        xs.append(xs[-1] + w)
    y = y_top
    for row in all_rows:
        for i, text in enumerate(row):
            c.drawString(xs[i] + 2, y - row_h + 4, str(text)[:40])
        c.line(xs[0], y, xs[-1], y)
        y -= row_h
    c.line(xs[0], y, xs[-1], y)
    for x in xs:
        c.line(x, y_top, x, y)


# --------------------------------------------------------------------------- entry point

def xlsx_path(n: int) -> Path:
    return DATA_DIR / f"schedule-{n}-v{GENERATOR_VERSION}.xlsx"


def csv_path(n: int) -> Path:
    return DATA_DIR / f"schedule-{n}-v{GENERATOR_VERSION}.csv"


def pdf_path(pages: int = PDF_PAGES) -> Path:
    return DATA_DIR / f"drawing-set-{pages}p-v{GENERATOR_VERSION}.pdf"


def ensure_inputs(sizes=SIZES, pdf: bool = True) -> dict[str, Path]:
    """Write any missing input file; returns {'xlsx-1000': path, 'csv-1000': path, ..., 'pdf-50': path}."""
    DATA_DIR.mkdir(parents=True, exist_ok=True)
    out: dict[str, Path] = {}
    for n in sizes:
        xp, cp = xlsx_path(n), csv_path(n)
        if not (xp.exists() and cp.exists()):
            schedule = build_schedule(n)
            write_schedule_xlsx(xp, schedule)
            write_schedule_csv(cp, schedule)
        out[f"xlsx-{n}"], out[f"csv-{n}"] = xp, cp
    if pdf:
        pp = pdf_path()
        if not pp.exists():
            write_drawing_set_pdf(pp)
        out[f"pdf-{PDF_PAGES}"] = pp
    return out


if __name__ == "__main__":
    for key, value in ensure_inputs().items():
        print(f"{key:>12}  {value.relative_to(ROOT)}  {value.stat().st_size:,} bytes")
