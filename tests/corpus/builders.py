"""Low-level writers for the bad-input corpus: raw zip archives, OLE2 compound files,
legacy .xls (BIFF8), OpenDocument spreadsheets and patched .xlsx packages.

Written by hand (no extra dependencies) so that every byte of a hostile file is
under the test's control. Everything here is invented test data.
"""
from __future__ import annotations

import io
import re
import struct
import zipfile
import zlib
from collections.abc import Sequence
from xml.sax.saxutils import escape

from openpyxl import Workbook

Row = Sequence[object]

# --------------------------------------------------------------------------- raw zip


def deflate(data: bytes, level: int = 9) -> bytes:
    """Raw deflate stream (no zlib header), as stored in a zip member."""
    packer = zlib.compressobj(level, zlib.DEFLATED, -15)
    return packer.compress(data) + packer.flush()


def raw_zip(members: Sequence[tuple[str, bytes, int, int]], extra_refs: Sequence[tuple[str, int]] = ()) -> bytes:
    """A zip archive from already-deflated members: (name, deflated data, crc32, unpacked size).

    ``extra_refs`` adds central-directory entries (name, index of a member) that point at an
    existing member's data: the overlapping-entry form of a zip bomb.
    """
    out = io.BytesIO()
    central = []
    offsets = []
    for name, data, crc, size in members:
        raw_name = name.encode()
        offsets.append(out.tell())
        out.write(struct.pack("<IHHHHHIIIHH", 0x04034B50, 20, 0, 8, 0, 0x21, crc, len(data), size,
                              len(raw_name), 0) + raw_name + data)
    entries = [(name, i) for i, (name, *_rest) in enumerate(members)] + list(extra_refs)
    for name, index in entries:
        _, data, crc, size = members[index]
        raw_name = name.encode()
        central.append(struct.pack("<IHHHHHHIIIHHHHHII", 0x02014B50, 20, 20, 0, 8, 0, 0x21, crc, len(data), size,
                                   len(raw_name), 0, 0, 0, 0, 0, offsets[index]) + raw_name)
    start = out.tell()
    directory = b"".join(central)
    out.write(directory)
    out.write(struct.pack("<IHHHHIIH", 0x06054B50, 0, 0, len(entries), len(entries), len(directory), start, 0))
    return out.getvalue()


def member(name: str, data: bytes) -> tuple[str, bytes, int, int]:
    return name, deflate(data), zlib.crc32(data), len(data)


# --------------------------------------------------------------------------- xlsx

def xlsx(sheets: dict[str, Sequence[Row]], hidden_sheets: Sequence[str] = (),
         hidden_rows: dict[str, Sequence[int]] | None = None, merges: dict[str, Sequence[str]] | None = None,
         formulas: dict[str, dict[str, str]] | None = None) -> bytes:
    """A workbook written by openpyxl; ``formulas`` maps sheet -> cell -> formula text (no cached value)."""
    book = Workbook()
    book.remove(book.active)
    for title, rows in sheets.items():
        ws = book.create_sheet(title)
        for r, row in enumerate(rows, start=1):
            for c, value in enumerate(row, start=1):
                if value is not None and value != "":
                    cell = ws.cell(row=r, column=c, value=value)
                    if isinstance(value, str):
                        cell.data_type = "s"  # text that starts with '=' stays text; formulas go in ``formulas``
        for ref, text in (formulas or {}).get(title, {}).items():
            ws[ref] = text
        for rng in (merges or {}).get(title, ()):
            ws.merge_cells(rng)
        for r in (hidden_rows or {}).get(title, ()):
            ws.row_dimensions[r].hidden = True
        if title in hidden_sheets:
            ws.sheet_state = "hidden"
    buffer = io.BytesIO()
    book.save(buffer)
    return buffer.getvalue()


def xlsx_members(data: bytes) -> dict[str, bytes]:
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        return {info.filename: archive.read(info.filename) for info in archive.infolist()}


def repack(members: dict[str, bytes]) -> bytes:
    """A zip of ``members`` in the given order, deflated."""
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
        for name, data in members.items():
            archive.writestr(name, data)
    return buffer.getvalue()


def patch_xlsx(data: bytes, part: str, change) -> bytes:
    """``data`` with member ``part`` replaced by ``change(old_bytes)``."""
    members = xlsx_members(data)
    members[part] = change(members[part])
    return repack(members)


def cache_formula_values(sheet_xml: bytes, values: dict[str, object]) -> bytes:
    """Give formula cells (openpyxl writes ``<f>..</f><v />``) the value a spreadsheet program saves.

    A number is saved as is; text is saved with ``t="str"``, as Excel does for a formula's text result.
    """
    def fill(match: re.Match[bytes]) -> bytes:
        ref = match.group(1).decode()
        if ref not in values:
            return match.group(0)
        value = values[ref]
        kind = b' t="str"' if isinstance(value, str) else b""
        return b'<c r="%s"%s%s><f>%s</f><v>%s</v></c>' % (match.group(1), match.group(2), kind, match.group(3),
                                                          escape(str(value)).encode())
    return re.sub(rb'<c r="([A-Z]+\d+)"((?: s="\d+")?)[^>]*><f>(.*?)</f><v\s*/></c>', fill, sheet_xml)


# --------------------------------------------------------------------------- OLE2 compound file and BIFF8

_SECTOR = 512
_FREE, _END, _FATSECT, _NOSTREAM = 0xFFFFFFFF, 0xFFFFFFFE, 0xFFFFFFFD, 0xFFFFFFFF
_MINI_CUTOFF = 4096


def _dir_entry(name: str, kind: int, right: int = _NOSTREAM, child: int = _NOSTREAM, start: int = _END,
               size: int = 0) -> bytes:
    raw = name.encode("utf-16-le") + b"\0\0" if name else b""
    return (raw.ljust(64, b"\0") + struct.pack("<HBB3I", len(raw), kind, 1, _NOSTREAM, right, child)
            + b"\0" * 36 + struct.pack("<IQ", start, size))


def compound_file(streams: dict[str, bytes]) -> bytes:
    """A version-3 OLE2 compound file (512-byte sectors, one FAT sector) holding ``streams``.

    Streams are padded to 4096 bytes so none lives in the mini stream; the
    directory is a chain of right siblings under the root, which readers accept.
    """
    names = list(streams)
    datas = [streams[n].ljust(_MINI_CUTOFF, b"\0") for n in names]
    dir_sectors = (len(names) + 1 + 3) // 4
    counts = [(len(d) + _SECTOR - 1) // _SECTOR for d in datas]
    if 1 + dir_sectors + sum(counts) > 128:
        raise ValueError("too large for one FAT sector")
    fat = [_FREE] * 128
    fat[0] = _FATSECT
    for i in range(1, 1 + dir_sectors):
        fat[i] = i + 1 if i < dir_sectors else _END
    starts, position = [], 1 + dir_sectors
    for count in counts:
        starts.append(position)
        for k in range(count):
            fat[position + k] = position + k + 1 if k < count - 1 else _END
        position += count
    entries = [_dir_entry("Root Entry", 5, child=1 if names else _NOSTREAM)]
    for i, (name, data) in enumerate(zip(names, datas)):
        entries.append(_dir_entry(name, 2, right=i + 2 if i + 1 < len(names) else _NOSTREAM, start=starts[i],
                                  size=len(data)))
    while len(entries) < dir_sectors * 4:
        entries.append(_dir_entry("", 0))
    header = (b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\0" * 16 + struct.pack("<HHHHH", 0x3E, 3, 0xFFFE, 9, 6)
              + b"\0" * 6 + struct.pack("<IIIIIIIII", 0, 1, 1, 0, _MINI_CUTOFF, _END, 0, _END, 0)
              + struct.pack("<109I", 0, *([_FREE] * 108)))  # DIFAT: the one FAT sector is sector 0
    body = (struct.pack("<128I", *fat) + b"".join(entries)
            + b"".join(d.ljust(c * _SECTOR, b"\0") for d, c in zip(datas, counts)))
    return header + body


def _record(kind: int, payload: bytes = b"") -> bytes:
    return struct.pack("<HH", kind, len(payload)) + payload


def biff8_workbook(sheets: Sequence[tuple[str, Sequence[Row]]],
                   merges: dict[str, Sequence[tuple[int, int, int, int]]] | None = None) -> bytes:
    """The Workbook stream of a legacy .xls: text as LABEL records, numbers as NUMBER records.

    ``merges`` maps a sheet to 0-based (first row, last row, first column, last column) ranges.
    """
    def bof(kind: int) -> bytes:
        return _record(0x0809, struct.pack("<HHHHII", 0x0600, kind, 0x0DBB, 0x07CC, 0, 0x06))

    def sheet_stream(title: str, rows: Sequence[Row]) -> bytes:
        out = bof(0x10) + _record(0x0200, struct.pack("<IIHHH", 0, len(rows), 0, max(map(len, rows), default=0), 0))
        for r, row in enumerate(rows):
            for c, value in enumerate(row):
                if value is None or value == "":
                    continue
                if isinstance(value, str):
                    out += _record(0x0204, struct.pack("<HHHHB", r, c, 15, len(value), 1) + value.encode("utf-16-le"))
                else:
                    out += _record(0x0203, struct.pack("<HHHd", r, c, 15, float(value)))
        ranges = (merges or {}).get(title, ())
        if ranges:
            out += _record(0x00E5, struct.pack("<H", len(ranges)) + b"".join(struct.pack("<4H", *x) for x in ranges))
        return out + _record(0x000A)

    bodies = [sheet_stream(title, rows) for title, rows in sheets]

    def globals_stream(offsets: Sequence[int]) -> bytes:
        out = bof(0x05) + _record(0x0042, struct.pack("<H", 1200))
        for (title, _), offset in zip(sheets, offsets):
            out += _record(0x0085, struct.pack("<IBBBB", offset, 0, 0, len(title), 1) + title.encode("utf-16-le"))
        return out + _record(0x000A)

    position = len(globals_stream([0] * len(sheets)))
    offsets = []
    for body in bodies:
        offsets.append(position)
        position += len(body)
    return globals_stream(offsets) + b"".join(bodies)


def xls(sheets: Sequence[tuple[str, Sequence[Row]]], merges=None) -> bytes:
    return compound_file({"Workbook": biff8_workbook(sheets, merges)})


def encrypted_package() -> bytes:
    """What a password-protected .xlsx is: an OLE2 file with EncryptionInfo and EncryptedPackage streams.

    The stream contents are placeholders (agile-encryption version header, then
    pseudo-random bytes): no reader can decrypt them, which is the point.
    """
    info = struct.pack("<HHI", 4, 4, 0x40) + b"<?xml version=\"1.0\"?><encryption/>"
    package = bytes((i * 131 + 7) % 256 for i in range(6000))
    return compound_file({"EncryptionInfo": info, "EncryptedPackage": package})


# --------------------------------------------------------------------------- OpenDocument

def ods(sheets: Sequence[tuple[str, Sequence[Row]]], doctype: str = "") -> bytes:
    def cell(value: object) -> str:
        if value is None or value == "":
            return "<table:table-cell/>"
        if isinstance(value, str):
            return f'<table:table-cell office:value-type="string"><text:p>{escape(value)}</text:p></table:table-cell>'
        return f'<table:table-cell office:value-type="float" office:value="{value}"><text:p>{value}</text:p></table:table-cell>'

    tables = "".join(
        f'<table:table table:name="{escape(title)}">'
        + "".join("<table:table-row>" + "".join(cell(v) for v in row) + "</table:table-row>" for row in rows)
        + "</table:table>" for title, rows in sheets)
    content = ('<?xml version="1.0" encoding="UTF-8"?>' + doctype
               + '<office:document-content xmlns:office="urn:oasis:names:tc:opendocument:xmlns:office:1.0" '
               'xmlns:table="urn:oasis:names:tc:opendocument:xmlns:table:1.0" '
               'xmlns:text="urn:oasis:names:tc:opendocument:xmlns:text:1.0" office:version="1.2">'
               f'<office:body><office:spreadsheet>{tables}</office:spreadsheet></office:body></office:document-content>')
    manifest = ('<?xml version="1.0" encoding="UTF-8"?><manifest:manifest '
                'xmlns:manifest="urn:oasis:names:tc:opendocument:xmlns:manifest:1.0" manifest:version="1.2">'
                '<manifest:file-entry manifest:full-path="/" '
                'manifest:media-type="application/vnd.oasis.opendocument.spreadsheet"/>'
                '<manifest:file-entry manifest:full-path="content.xml" manifest:media-type="text/xml"/>'
                '</manifest:manifest>')
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w") as archive:
        archive.writestr(zipfile.ZipInfo("mimetype"), "application/vnd.oasis.opendocument.spreadsheet",
                         compress_type=zipfile.ZIP_STORED)
        archive.writestr("META-INF/manifest.xml", manifest, compress_type=zipfile.ZIP_DEFLATED)
        archive.writestr("content.xml", content, compress_type=zipfile.ZIP_DEFLATED)
    return buffer.getvalue()


# --------------------------------------------------------------------------- PDF

def pdf(contents: Sequence[bytes], size: tuple[int, int] = (792, 612)) -> bytes:
    """A minimal PDF 1.4: one page per content stream, Helvetica as /F1.

    Pages whose content is identical share one stream object, so a file of
    thousands of pages stays small (as drawing sets with repeated sheets do).
    """
    bodies: list[bytes] = [b"", b""]  # 1: catalog, 2: page tree (filled in below)
    bodies.append(b"<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica >>")
    font, streams, kids = 3, {}, []
    for content in contents:
        if content not in streams:
            packed = zlib.compress(content, 6)
            bodies.append(b"<< /Length %d /Filter /FlateDecode >>\nstream\n" % len(packed) + packed + b"\nendstream")
            streams[content] = len(bodies)
        bodies.append(b"<< /Type /Page /Parent 2 0 R /MediaBox [0 0 %d %d] /Resources << /Font << /F1 %d 0 R >> >> "
                      b"/Contents %d 0 R >>" % (size[0], size[1], font, streams[content]))
        kids.append(len(bodies))
    bodies[0] = b"<< /Type /Catalog /Pages 2 0 R >>"
    bodies[1] = b"<< /Type /Pages /Kids [" + b" ".join(b"%d 0 R" % k for k in kids) + b"] /Count %d >>" % len(kids)
    out = bytearray(b"%PDF-1.4\n%\xe2\xe3\xcf\xd3\n")
    offsets = []
    for number, body in enumerate(bodies, start=1):
        offsets.append(len(out))
        out += b"%d 0 obj\n" % number + body + b"\nendobj\n"
    xref = len(out)
    out += b"xref\n0 %d\n0000000000 65535 f \n" % (len(bodies) + 1)
    out += b"".join(b"%010d 00000 n \n" % offset for offset in offsets)
    out += b"trailer\n<< /Size %d /Root 1 0 R >>\nstartxref\n%d\n%%%%EOF\n" % (len(bodies) + 1, xref)
    return bytes(out)
