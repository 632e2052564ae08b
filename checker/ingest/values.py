"""Cell value parsers: the text of one schedule cell -> :class:`checker.model.Parsed`.

Every public ``parse_*`` function takes one cell's text and returns ``Parsed``.
The contract, relied on by ``checker.ingest.normalize``:

* a parser never raises; anything it cannot read becomes ``Parsed.problem``
  (one sentence quoting the cell, quotes cut to 60 characters);
* numbers are finite and positive (zero and negatives are problems);
* deliberate "nothing yet" cells (blank, TBD, N/A, dashes, "by others", ...)
  give ``Parsed(placeholder=True)``;
* words the parser does not know, next to a value it is sure of, are listed
  in ``Parsed.notes`` ("ignored 'XYZ'"); footnote marks ('20*', '60 (2)',
  '60¹') are removed and noted.

Amounts (hp, kW, A, V) are floats; phase, poles, sets and counts are ints.
Field names and value shapes follow ``schemas/motor.schema.json``.

The ``format_*`` functions write the canonical text of a valid value; the
matching parser reads it back to the same value (tested by property tests).

The parsers are cached (``functools.lru_cache``): schedules repeat the same
strings many times. Each call returns fresh dicts, so callers may mutate them.
"""
from __future__ import annotations

import math
import re
import unicodedata
from collections.abc import Callable
from decimal import Decimal
from functools import lru_cache, wraps
from typing import Any

from checker.model import Parsed

__all__ = [
    "AWG_SIZES",
    "KCMIL_SIZES",
    "format_conductor",
    "format_device",
    "format_duty",
    "format_hp",
    "format_voltage_phase",
    "parse_ambient_c",
    "parse_conductor",
    "parse_conductor_count",
    "parse_current_a",
    "parse_device",
    "parse_disconnect",
    "parse_duty",
    "parse_hp",
    "parse_kw",
    "parse_length_m",
    "parse_mocp",
    "parse_overload",
    "parse_phase",
    "parse_service_factor",
    "parse_starting",
    "parse_starting_details",
    "parse_temp_rise_c",
    "parse_text",
    "parse_voltage",
    "parse_voltage_phase",
    "with_header_hint",
]

# ---------------------------------------------------------------------------
# Limits and size lists
# ---------------------------------------------------------------------------

MAX_CELL_CHARS = 300  # a value cell longer than this is not a value (real ones are < 80 chars)
MAX_TEXT_CHARS = 10_000  # free-text cells (remarks) may be longer
QUOTE_CHARS = 60
_CACHE_SIZE = 8192

# Upper bounds mirror schemas/motor.schema.json (hp, kw, fla_a, voltage_v, rating_a).
MAX_HP = 100_000.0
MAX_KW = 75_000.0
MAX_CURRENT_A = 20_000.0
MAX_RATING_A = 10_000.0
MIN_VOLTAGE_V = 12.0
MAX_VOLTAGE_V = 15_000.0

#: Building-wire AWG sizes accepted, smallest to largest (NEC Chapter 9 Table 8 lists 18 AWG to 4/0;
#: CEC Table 2 starts at 14 AWG). Odd sizes 5, 7, 9 exist in the AWG series but are not sold as
#: building wire (common practice), so a schedule showing them is flagged.
AWG_SIZES = ("18", "16", "14", "12", "10", "8", "6", "4", "3", "2", "1", "1/0", "2/0", "3/0", "4/0")
_AWG_NUMBERS = frozenset({"18", "16", "14", "12", "10", "8", "6", "4", "3", "2", "1"})
#: Standard kcmil sizes (NEC Chapter 9 Table 8 and Table 310.16 rows to 2000 kcmil; CEC Tables 2/4
#: use the same series - from memory, verify against the code edition in use).
KCMIL_SIZES = (250, 300, 350, 400, 450, 500, 600, 700, 750, 800, 900, 1000, 1250, 1500, 1750, 2000)
_KCMIL_SET = frozenset(KCMIL_SIZES)
#: Metric trade sizes of conduit in mm (CSA/IEC designators; common practice).
_METRIC_TRADE_MM = ("16", "21", "27", "35", "41", "53", "63", "78", "91", "103", "129", "155")

# Time ratings of non-continuous duty motors: the columns of NEC Table 430.22(E) and CEC Table 27
# (5-, 15-, 30- and 60-minute and continuous rated).
_DUTY_MINUTES = (5, 15, 30, 60)

# ---------------------------------------------------------------------------
# Common text handling
# ---------------------------------------------------------------------------

_PLACEHOLDER_RE = re.compile(r"""^(?:
      t\.?\s*b\.?\s*[dca]\.?                          # TBD, T.B.D., TBC, TBA
    | n\s*/\s*a\.? | n\.?\s*a\.?                      # N/A, NA, n.a.
    | [-\u2010-\u2015\u2212_~\s]+                    # -, --, ---, en/em dashes
    | by\s+(?:others|owner|vendor|supplier|mfr|manufacturer|mech\w*|elec\w*
              |div(?:ision)?\.?\s*\d+|[a-z]+\s+contractor)\.?
    | f\.?\s*b\.?\s*o\.?                             # furnished by others
    | \?+
)$""", re.IGNORECASE | re.VERBOSE)
_FORMULA_RE = re.compile(r"^=\s*(?:[A-Z_][A-Z0-9_.]*\s*\(|\$?[A-Z]{1,3}\$?\d+)", re.IGNORECASE)
_CONTROL_RE = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f]")
_QUOTE_ESCAPE_RE = re.compile(r"[\x00-\x1f\x7f-\x9f\u2028\u2029]")  # incl. newline/tab: messages are one line
_INVISIBLE_RE = re.compile(r"[\u200b-\u200d\u2060\ufeff\u00ad]")
_WHITESPACE_RE = re.compile(r"\s+")
_AREA_RE = re.compile(r"mm\s*\u00b2", re.IGNORECASE)
_SUPERSCRIPT_RE = re.compile(r"[\u00b9\u00b2\u00b3\u2070\u2074-\u2079]+")
_VULGAR = {"½": "1/2", "¼": "1/4", "¾": "3/4", "⅓": "1/3", "⅔": "2/3", "⅕": "1/5", "⅖": "2/5",
           "⅗": "3/5", "⅘": "4/5", "⅙": "1/6", "⅚": "5/6", "⅛": "1/8", "⅜": "3/8", "⅝": "5/8", "⅞": "7/8"}
_VULGAR_RE = re.compile("(\\d?)\\s*([" + "".join(_VULGAR) + "])")
_CHAR_MAP = str.maketrans({
    "\u2010": "-", "\u2011": "-", "\u2012": "-", "\u2013": "-", "\u2014": "-", "\u2015": "-", "\u2212": "-",
    "\u2033": '"', "\u201c": '"', "\u201d": '"', "\u201e": '"', "\u2032": "'", "\u2018": "'", "\u2019": "'",
    "\u2044": "/", "\u2215": "/", "\u00d7": "x", "\u00a0": " ",
})
_STAR_RE = re.compile(r"\s*\*+\s*")
_TRAILING_NOTE_RE = re.compile(
    r"\s*(?:[(\[]\s*(?:see\s+)?(?:notes?\s*)?\d{1,2}\s*[)\]]|\(?\s*see\s+notes?\s*\d{1,2}\s*\)?"
    r"|\bnotes?\s*\d{1,2})\s*$", re.IGNORECASE)
_LEFTOVER_SPLIT_RE = re.compile(r"[\s,;:/\\()\[\]{}=@~|+&.'\"-]+")
_NEGATIVE_RE = re.compile(r"^-\s*\.?\d")

_PLACEHOLDER = Parsed(placeholder=True)


def _quote(text: str) -> str:
    """The cell text quoted for a message: control characters escaped, at most 60 characters."""
    shown = _QUOTE_ESCAPE_RE.sub(lambda m: f"\\x{ord(m.group()):02x}", text)
    if len(shown) > QUOTE_CHARS:
        shown = shown[:QUOTE_CHARS - 3] + "..."
    return f"'{shown}'"


# Every placeholder above begins with one of these (in either case) or with a character beyond ASCII.
_PLACEHOLDER_FIRST = frozenset("tTnNbBfF?-_~" + "".join(chr(c) for c in range(128) if chr(c).isspace()))


def _is_placeholder(text: str) -> bool:
    if not text:
        return True
    first = text[0]
    return (first in _PLACEHOLDER_FIRST or not first.isascii()) and _PLACEHOLDER_RE.match(text) is not None


def _clean_glyphs(text: str) -> str:
    """Map typographic variants to ASCII so the grammars stay small.

    Superscript digits must be handled before NFKC (which would turn '60¹' into '601').
    """
    text = _AREA_RE.sub("mm2", text)
    text = _VULGAR_RE.sub(lambda m: (m.group(1) + " " if m.group(1) else " ") + _VULGAR[m.group(2)], text)
    text = text.translate(_CHAR_MAP)
    if not text.isascii():
        text = unicodedata.normalize("NFKC", text)
    return text.strip()


def _strip_footnotes(text: str) -> tuple[str, list[str]]:
    """Remove footnote marks: superscript digits, asterisks, a trailing '(2)' or 'note 2'.

    Runs before NFKC, which would turn '60¹' into '601'; 'mm²' is protected first.
    """
    marks = []
    text = _AREA_RE.sub("mm2", text)
    found = _SUPERSCRIPT_RE.findall(text)
    if found:
        marks.extend(found)
        text = _SUPERSCRIPT_RE.sub(" ", text).strip()
    text = _clean_glyphs(text)
    if "*" in text:
        marks.append("*")
        text = _STAR_RE.sub(" ", text).strip()
    match = _TRAILING_NOTE_RE.search(text)
    if match and match.start() > 0:
        marks.append(match.group().strip())
        text = text[:match.start()].strip()
    notes = [f"footnote mark {', '.join(repr(m) for m in marks)} next to the value; see the schedule notes"]
    return text, notes if marks else []


def _prepare(text: str, what: str, *, footnotes: bool = True) -> tuple[str, list[str]] | Parsed:
    """Common first steps: placeholder, formula and junk checks, glyph clean-up, footnotes.

    Returns the cleaned text and notes so far, or a final ``Parsed``.
    """
    if _is_placeholder(text):
        return _PLACEHOLDER
    if _FORMULA_RE.match(text):
        return Parsed(problem=f"the cell holds a spreadsheet formula, not {what}: {_quote(text)}")
    notes: list[str] = []
    cleaned = _INVISIBLE_RE.sub("", text)
    if _CONTROL_RE.search(cleaned):
        notes.append("removed control characters")
        cleaned = _CONTROL_RE.sub(" ", cleaned)
    foot_notes: list[str] = []
    if footnotes:
        cleaned, foot_notes = _strip_footnotes(cleaned)
        notes.extend(foot_notes)
    cleaned = _WHITESPACE_RE.sub(" ", cleaned).strip()
    if _is_placeholder(cleaned):
        if cleaned or not foot_notes:
            return Parsed(placeholder=True, notes=tuple(notes))
        return Parsed(problem=f"only a footnote mark where {what} was expected: {_quote(text)}", notes=tuple(notes))
    return cleaned, notes


def _leftover_note(text: str, spans: list[tuple[int, int]], ignorable: re.Pattern[str] | None = None) -> list[str]:
    """Note the words of ``text`` outside ``spans`` that are not separators or known labels."""
    pieces, last = [], 0
    for start, end in sorted(spans):
        pieces.append(text[last:start])
        last = max(last, end)
    pieces.append(text[last:])
    words = [w for w in _LEFTOVER_SPLIT_RE.split(" ".join(pieces)) if w]
    if ignorable is not None:
        words = [w for w in words if not ignorable.fullmatch(w)]
    return [f"ignored {_quote(' '.join(words))}"] if words else []


def _fmt_num(value: float) -> str:
    """Shortest positional decimal that reads back to exactly ``value`` (no exponent)."""
    if value == int(value) and abs(value) < 1e15:
        return str(int(value))
    return format(Decimal(repr(float(value))), "f")


def _short_num(value: float) -> str:
    """A number for a message: exact when short, else 4 significant digits."""
    text = _fmt_num(value)
    return text if len(text) <= 12 else f"{value:.4g}"


def _check_amount(value: float | None, what: str, unit: str, upper: float, text: str) -> str | None:
    """Problem sentence when a parsed amount is zero, non-finite or above the schema bound."""
    if value is None or not math.isfinite(value):
        return f"the number in {_quote(text)} is too large to be {what}"
    if value <= 0:
        return f"{what} must be greater than zero, got {_quote(text)}"
    if value > upper:
        return f"{_short_num(value)} {unit} in {_quote(text)} is above the {_fmt_num(upper)} {unit} limit for {what}"
    return None


def _fresh(parsed: Parsed) -> Parsed:
    """Copy dict values so a caller mutating a result cannot poison the cache."""
    value = parsed.value
    if not isinstance(value, dict):
        return parsed
    copy = {k: (list(v) if isinstance(v, list) else v) for k, v in value.items()}
    return Parsed(copy, parsed.problem, parsed.placeholder, parsed.notes)


def _cell_parser(what: str, max_chars: int = MAX_CELL_CHARS) -> Callable[[Callable[[str], Parsed]], Callable[..., Parsed]]:
    """Wrap a core parser: coerce the input to stripped text, cap its length, cache, never raise.

    The ``except`` is a last safety net so a reviewer never sees a traceback; its message is
    distinctive ("internal parser error") so the property tests can assert it never fires.
    """
    def decorate(core: Callable[[str], Parsed]) -> Callable[..., Parsed]:
        cached = lru_cache(maxsize=_CACHE_SIZE)(core)

        @wraps(core)
        def parse(text: object) -> Parsed:
            if text is None or (isinstance(text, float) and math.isnan(text)):
                return _PLACEHOLDER
            text = (text if isinstance(text, str) else str(text)).strip()
            if len(text) > max_chars:
                return Parsed(problem=f"the text is too long to be {what} ({len(text)} characters): {_quote(text)}")
            try:
                return _fresh(cached(text))
            except Exception as exc:  # noqa: BLE001 - parsers must never raise
                return Parsed(problem=f"could not read {what} from {_quote(text)} "
                                      f"(internal parser error: {type(exc).__name__})")

        parse.cache_info = cached.cache_info  # type: ignore[attr-defined]
        parse.cache_clear = cached.cache_clear  # type: ignore[attr-defined]
        return parse
    return decorate


# ---------------------------------------------------------------------------
# Plain numbers (hp, kW, amperes, service factor)
# ---------------------------------------------------------------------------

_DEC = r"\d[\d,]*(?:\.\d*)?|\.\d+"
_NUMBER_RE = re.compile(rf"""
      (?<![\d.,])(?P<w>\d+)(?:\s*-\s*|\s+)(?P<n>\d+)\s*/\s*(?P<d>\d+)(?![\d.,/])   # 7-1/2, 5 6/10
    | (?P<a>{_DEC})\s*/\s*(?P<b>{_DEC})                                          # 1/3 or 7.6/3.8
    | (?P<x>{_DEC})
""", re.VERBOSE)
_THOUSANDS_RE = re.compile(r"\d{1,3}(?:,\d{3})+(?:\.\d+)?")
_DECIMAL_COMMA_RE = re.compile(r"\d+,(?:\d{1,2}|\d{4,})")
_INTEGER_RE = re.compile(r"\d+")

_NUM_ANY = r"(?:\d[\d,]*(?:\.\d+)?|\.\d+)"
_FOREIGN_UNITS = {
    "volts": r"(?:" + _NUM_ANY + r"\s*/\s*)*" + _NUM_ANY + r"\s*(?:v|volts?|vac|vdc|kv)",
    "hz": _NUM_ANY + r"\s*(?:hz|cps)",
    "amps": _NUM_ANY + r"\s*(?:a|amps?|amperes?)",
    "rpm": _NUM_ANY + r"\s*(?:rpm|r/min)",
    "phase": r"\d\s*(?:ph(?:ase)?|ø|φ|ϕ)",
    "hp": _NUM_ANY + r"\s*(?:h\.?p\.?|horse\s*power)",
    "kw": _NUM_ANY + r"\s*kw",
}
_FOREIGN_RE = {name: re.compile(r"(?<![\w.])" + pattern + r"(?![a-z])", re.IGNORECASE) for name, pattern in _FOREIGN_UNITS.items()}


def _to_float(raw: str, *, decimal_comma: bool) -> tuple[float | None, str | None, str | None]:
    """(value, problem, note) for one decimal token, handling thousands and decimal commas."""
    note = None
    if "," in raw:
        if _DECIMAL_COMMA_RE.fullmatch(raw):
            if not decimal_comma:
                return None, f"cannot tell whether the comma in {_quote(raw)} is a decimal comma", None
            raw, note = raw.replace(",", "."), f"read {_quote(raw)} with a decimal comma"
        elif _THOUSANDS_RE.fullmatch(raw) and decimal_comma and "." not in raw:
            return None, f"cannot tell whether the comma in {_quote(raw)} separates thousands or decimals", None
        elif _THOUSANDS_RE.fullmatch(raw):
            raw = raw.replace(",", "")
        else:
            return None, f"cannot read the number {_quote(raw)}", None
    try:
        return float(raw), None, note
    except (ValueError, OverflowError):
        return None, f"cannot read the number {_quote(raw)}", None


def _fraction(num: str, den: str) -> float | None:
    """Proper fraction num/den as float, None when not proper (num >= den) or den is zero."""
    n, d = int(num), int(den)
    if d == 0 or n >= d:
        return None
    return n / d


def _number_value(m: re.Match[str], *, pair_ok: bool, decimal_comma: bool
                  ) -> tuple[float | None, str | None, str | None]:
    """(value, problem, note) for one ``_NUMBER_RE`` match."""
    if m["w"]:
        frac = _fraction(m["n"], m["d"])
        if frac is None:
            return None, f"{_quote(m.group())} is not a whole number and a proper fraction", None
        return float(int(m["w"])) + frac, None, None
    if m["a"]:
        a, b = m["a"], m["b"]
        if not pair_ok and _INTEGER_RE.fullmatch(a) and _INTEGER_RE.fullmatch(b):
            frac = _fraction(a, b)
            if frac is not None:
                return frac, None, None
        if pair_ok:
            value, problem, note = _to_float(a, decimal_comma=decimal_comma)
            pair_note = f"two values {_quote(m.group())} (a per-voltage pair); used the first"
            return value, problem, pair_note if note is None else f"{pair_note}; {note}"
        return None, f"{_quote(m.group())} holds two values", None
    return _to_float(m["x"], decimal_comma=decimal_comma)


def _strip_foreign(text: str, names: tuple[str, ...]) -> tuple[str, list[str]]:
    """Remove quantities in units that belong to other columns ('460V' in an hp cell), noting them."""
    notes = []
    for name in names:
        found = _FOREIGN_RE[name].findall(text)
        if found:
            notes.extend(f"ignored {_quote(f.strip())}" for f in found)
            text = _FOREIGN_RE[name].sub(" ", text)
    return text, notes


def _single_number(text: str, what: str, unit: str, upper: float, *, pair_ok: bool = False,
                   decimal_comma: bool = False, labels: re.Pattern[str] | None = None) -> Parsed:
    """Read exactly one amount from ``text`` (units already removed); words around it become notes."""
    if _NEGATIVE_RE.match(text):
        return Parsed(problem=f"{what} cannot be negative: {_quote(text)}")
    matches = list(_NUMBER_RE.finditer(text))
    if not matches:
        return Parsed(problem=f"no number for {what} in {_quote(text)}")
    if len(matches) > 1:
        return Parsed(problem=f"more than one number in {_quote(text)}; cannot tell which is {what}")
    m = matches[0]
    value, problem, note = _number_value(m, pair_ok=pair_ok, decimal_comma=decimal_comma)
    if problem is None:
        problem = _check_amount(value, what, unit, upper, text)
    notes = ([note] if note else []) + _leftover_note(text, [m.span()], labels)
    if problem:
        return Parsed(problem=problem, notes=tuple(notes))
    return Parsed(value, notes=tuple(notes))


def _with_notes(parsed: Parsed, notes: list[str]) -> Parsed:
    if not notes:
        return parsed
    return Parsed(parsed.value, parsed.problem, parsed.placeholder, tuple(notes) + parsed.notes)


_HP_UNIT_RE = re.compile(r"(?<![a-z])(?:h\.?\s*p\.?|horse\s*-?\s*power)(?![a-z])", re.IGNORECASE)
_KW_WORD_RE = re.compile(r"(?<![a-z])kw(?![a-z])", re.IGNORECASE)
_HP_LABELS = re.compile(r"motor|rated|output|approx|nom(?:inal)?", re.IGNORECASE)


@_cell_parser("a horsepower")
def parse_hp(text: str) -> Parsed:
    """Horsepower [hp] from '7-1/2', '7 1/2', '7½', '1/60', '.5', '10 HP', '10 H.P.'.

    A kW value is not converted (the checker works from the unit the designer wrote):
    it is reported as a problem with the kW amount in the notes.
    """
    prepared = _prepare(text, "a horsepower")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    if _KW_WORD_RE.search(cleaned) and _HP_UNIT_RE.search(cleaned):
        cleaned, kw_notes = _strip_foreign(cleaned, ("kw",))  # '10 HP (7.5 kW)': the hp is stated
        notes += kw_notes
    if _KW_WORD_RE.search(cleaned):
        kw = _single_number(_KW_WORD_RE.sub(" ", cleaned), "a power", "kW", MAX_KW, decimal_comma=True)
        kw_note = f"kW value: {_fmt_num(kw.value)}" if kw.value is not None else f"kW text: {_quote(cleaned)}"
        return Parsed(problem="value is in kW, not hp", notes=tuple(notes + [kw_note]))
    cleaned, foreign = _strip_foreign(cleaned, ("volts", "hz", "amps", "rpm", "phase"))
    cleaned = _HP_UNIT_RE.sub(" ", cleaned).strip()
    return _with_notes(_single_number(cleaned, "a horsepower", "hp", MAX_HP, labels=_HP_LABELS), notes + foreign)


_KW_LABELS = re.compile(r"motor|rated|output|approx|nom(?:inal)?", re.IGNORECASE)


@_cell_parser("a kW rating")
def parse_kw(text: str) -> Parsed:
    """Rated output [kW] from '5.5', '5.5 kW', '5,5 kW' (a decimal comma is accepted when it
    cannot be a thousands separator: '1,200' is reported as ambiguous)."""
    prepared = _prepare(text, "a kW rating")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    if _HP_UNIT_RE.search(cleaned) and _KW_WORD_RE.search(cleaned):
        cleaned, hp_notes = _strip_foreign(cleaned, ("hp",))  # '7.5 kW (10 HP)': the kW is stated
        notes += hp_notes
    if _HP_UNIT_RE.search(cleaned):
        hp = _single_number(_HP_UNIT_RE.sub(" ", cleaned), "a horsepower", "hp", MAX_HP)
        hp_note = f"hp value: {_fmt_num(hp.value)}" if hp.value is not None else f"hp text: {_quote(cleaned)}"
        return Parsed(problem="value is in hp, not kW", notes=tuple(notes + [hp_note]))
    cleaned, foreign = _strip_foreign(cleaned, ("volts", "hz", "amps", "rpm", "phase"))
    cleaned = _KW_WORD_RE.sub(" ", cleaned).strip()
    return _with_notes(_single_number(cleaned, "a kW rating", "kW", MAX_KW, decimal_comma=True,
                                      labels=_KW_LABELS), notes + foreign)


_AMP_UNIT_RE = re.compile(r"(?<![a-z])(?P<unit>k|m)?(?:a|amps?|amperes?)(?![a-z])\.?", re.IGNORECASE)
_AMP_LABELS = re.compile(r"fla|flc|mca|mocp|mop|full|load|current|max|min", re.IGNORECASE)


@_cell_parser("a current")
def parse_current_a(text: str) -> Parsed:
    """Current [A] from '56', '56 A', '56.0 amps', '1,200 A'.

    A per-voltage pair '7.6/3.8' gives the first value (the order of the voltage cell) with a note.
    """
    prepared = _prepare(text, "a current")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    cleaned, foreign = _strip_foreign(cleaned, ("volts", "hz", "hp", "kw", "rpm", "phase"))
    scale, units = 1.0, {(m["unit"] or "").lower() for m in _AMP_UNIT_RE.finditer(cleaned)}
    if len(units) > 1:
        return Parsed(problem=f"mixed current units in {_quote(cleaned)}", notes=tuple(notes + foreign))
    if units == {"k"}:
        scale, foreign = 1000.0, foreign + ["kA converted to A"]
    elif units == {"m"}:
        scale, foreign = 0.001, foreign + ["mA converted to A"]
    cleaned = _AMP_UNIT_RE.sub(" ", cleaned).strip()
    parsed = _single_number(cleaned, "a current", "A", MAX_CURRENT_A / scale, pair_ok=True, labels=_AMP_LABELS)
    if parsed.value is not None and scale != 1.0:
        parsed = Parsed(parsed.value * scale, parsed.problem, notes=parsed.notes)
    return _with_notes(parsed, notes + foreign)


_SF_LABEL_RE = re.compile(r"(?<![a-z])(?:s\.?\s*f\.?|service\s*factor)(?![a-z])|[:=]", re.IGNORECASE)
_PERCENT_RE = re.compile(r"\s*%")


@_cell_parser("a service factor")
def parse_service_factor(text: str) -> Parsed:
    """Service factor from '1.15', 'SF 1.15', '115%'; must lie in 1.0-2.0 (schema bounds)."""
    prepared = _prepare(text, "a service factor")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    percent = bool(_PERCENT_RE.search(cleaned))
    cleaned = _PERCENT_RE.sub(" ", _SF_LABEL_RE.sub(" ", cleaned)).strip()
    parsed = _single_number(cleaned, "a service factor", "", 200.0 if percent else 2.0)
    if parsed.value is None:
        return _with_notes(parsed, notes)
    value = parsed.value / 100.0 if percent else parsed.value
    if percent:
        notes.append(f"read {_fmt_num(parsed.value)}% as {_fmt_num(value)}")
    if not 1.0 <= value <= 2.0:
        return Parsed(problem=f"service factor {_fmt_num(value)} from {_quote(text)} is outside 1.0-2.0",
                      notes=tuple(notes) + parsed.notes)
    return Parsed(value, notes=tuple(notes) + parsed.notes)


# ---------------------------------------------------------------------------
# Voltage / phase / frequency
# ---------------------------------------------------------------------------

_VNUM = r"\d{1,2},\d{3}(?!\d)|\d+(?:\.\d+)?"
_VP_TOKEN_RE = re.compile(rf"""
      (?P<ph3>(?<![a-z])(?:three|tri|poly)(?:[\s-]*phase|[\s-]*ph)?(?![a-z]))
    | (?P<ph1>(?<![a-z])(?:single|one|mono)(?:[\s-]*phase|[\s-]*ph)?(?![a-z]))
    | (?P<ph2>(?<![a-z])two[\s-]*ph(?:ase)?(?![a-z]))
    | (?P<phn>\d+)\s*(?:ø|φ|ϕ|⌀|~|ph(?:ase)?s?(?![a-z]))\.?
    | (?:ø|φ|ϕ|(?<![a-z])ph(?![a-z]))\s*(?P<phn2>\d)(?!\d)
    | (?P<wye>{_VNUM})\s*y\s*/\s*(?P<wye_ln>{_VNUM})\s*(?:v(?:olts?)?(?![a-z]))?
    | (?P<wires>\d)\s*-?\s*w(?:ire)?(?![a-z])
    | (?P<hz>{_VNUM})\s*(?:hz|cps|cycles?|cy)(?![a-z])
    | (?P<kv>{_VNUM})\s*kv(?![a-z])
    | (?P<v>{_VNUM})\s*v(?:olts?)?\.?(?:\s*(?P<vt>[ad]\.?c)\.?)?(?![a-z])
    | (?P<ct>(?<![a-z])[ad]\.?c\.?(?![a-z]))
    | (?P<n>{_VNUM})
""", re.IGNORECASE | re.VERBOSE)
_VP_LABELS = re.compile(r"v|volts?|voltage|vac|vdc|ph|phase|hz|ø|φ|ϕ|or|and|nom(?:inal)?|~", re.IGNORECASE)


def _vnum(raw: str) -> float:
    return float(raw.replace(",", ""))


_VP_KINDS = ("ph3", "ph1", "ph2", "phn", "phn2", "wye", "wires", "hz", "kv", "v", "ct", "n")


def _vp_tokens(text: str) -> tuple[list[tuple[str, Any]], list[tuple[int, int]], list[str]]:
    """(kind, value) tokens in reading order, the spans they cover, and notes."""
    tokens, spans, notes = [], [], []
    for m in _VP_TOKEN_RE.finditer(text):
        spans.append(m.span())
        kind = next(k for k in _VP_KINDS if m[k] is not None)
        if kind == "wye":
            # '480Y/277': a wye system; the motor sees the line-to-line voltage.
            tokens.append(("volts", _vnum(m["wye"])))
            notes.append(f"{_quote(m.group().strip())} is a wye system voltage; used the line-to-line value")
        elif kind == "wires":
            notes.append(f"ignored {_quote(m.group().strip())}")
        elif kind in ("ph3", "ph1", "ph2"):
            tokens.append(("phase", int(kind[2])))
        elif kind in ("phn", "phn2"):
            tokens.append(("phase", int(m[kind])))
        elif kind == "hz":
            tokens.append(("hz", _vnum(m["hz"])))
        elif kind == "kv":
            tokens.append(("volts", _vnum(m["kv"]) * 1000.0))
        elif kind == "ct":
            tokens.append(("ctype", "dc" if m["ct"].lower().startswith("d") else "ac"))
        elif kind == "n":
            tokens.append(("bare", _vnum(m["n"])))
        else:  # "v" with its optional ac/dc suffix
            tokens.append(("volts", _vnum(m["v"])))
            if m["vt"]:
                tokens.append(("ctype", "dc" if m["vt"].lower().startswith("d") else "ac"))
    return tokens, spans, notes


def _classify_bare(tokens: list[tuple[str, Any]]) -> list[tuple[str, Any]]:
    """Decide what each unit-less number is.

    Numbers 1, 2 and 3 are phases (only 1 and 3 are valid); other numbers below 12 are
    unreadable; 50 or 60 after a voltage, or any number after voltage and phase, is the
    frequency ('460/3/60', '460/60/3', '575/3/55' -> 55 Hz, a problem); any other number of
    12 or more is a voltage.
    """
    out: list[tuple[str, Any]] = []
    seen_volts = seen_volts_then_phase = False
    for kind, value in tokens:
        if kind == "bare":
            if value in (1.0, 2.0, 3.0):
                kind, value = "phase", int(value)
            elif value < MIN_VOLTAGE_V:
                kind = "small"
            elif seen_volts and (value in (50.0, 60.0) or seen_volts_then_phase):
                kind = "hz"
            else:
                kind = "volts"
        seen_volts_then_phase = seen_volts_then_phase or (seen_volts and kind == "phase")
        seen_volts = seen_volts or kind == "volts"
        out.append((kind, value))
    return out


def _vp_assemble(tokens: list[tuple[str, Any]]) -> tuple[dict[str, Any], list[str]]:
    """The voltage/phase dict and the problems found in the classified tokens."""
    volts: list[float] = []
    found: dict[str, set[Any]] = {"phase": set(), "hz": set(), "ctype": set()}
    problems = []
    for kind, value in tokens:
        if kind == "volts":
            if not MIN_VOLTAGE_V <= value <= MAX_VOLTAGE_V:
                problems.append(f"{_short_num(value)} V is outside {_fmt_num(MIN_VOLTAGE_V)}-"
                                f"{_fmt_num(MAX_VOLTAGE_V)} V")
            elif value not in volts:
                volts.append(value)
        elif kind == "small":
            problems.append(f"{_short_num(value)} is neither a phase (1 or 3) nor a voltage (12 V or more)")
        else:
            found[kind].add(value)
    for phase in sorted(found["phase"] - {1, 3}):
        problems.append(f"phase {phase} is not 1 or 3")
    for hz in sorted(found["hz"] - {50.0, 60.0}):
        problems.append(f"{_short_num(hz)} Hz is not 50 or 60 Hz")
    value: dict[str, Any] = {}
    if volts:
        value["voltage_v"] = volts[0]
        if len(volts) > 1:
            value["voltage_alternatives_v"] = volts[1:]
    for key, field, allowed in (("phase", "phase", {1, 3}), ("hz", "frequency_hz", {50.0, 60.0}),
                                ("ctype", "current_type", {"ac", "dc"})):
        good = found[key] & allowed
        if len(good) > 1:
            problems.append(f"more than one {field.replace('_', ' ')} ({', '.join(sorted(map(str, good)))})")
        elif good:
            item = good.pop()
            value[field] = int(item) if key in ("phase", "hz") else item
    if value.get("current_type") == "dc" and ("phase" in value or "frequency_hz" in value):
        problems.append("a DC supply cannot have a phase count or frequency")
    return value, problems


def _voltage_phase(text: str, what: str, need: str | None) -> Parsed:
    prepared = _prepare(text, what)
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    tokens, spans, token_notes = _vp_tokens(cleaned)
    value, problems = _vp_assemble(_classify_bare(tokens))
    notes += token_notes + _leftover_note(cleaned, spans, _VP_LABELS)
    if not value and not problems:
        problems.append("no voltage or phase")
    elif need and need not in value and not problems:
        problems.append(f"no {need.replace('_v', '')}")
    problem = f"{'; '.join(problems)} in {_quote(cleaned)}" if problems else None
    return Parsed(value or None, problem, notes=tuple(notes))


@_cell_parser("a voltage/phase")
def parse_voltage_phase(text: str) -> Parsed:
    """Voltage, phase, frequency and AC/DC from one cell.

    Accepts '575/3/60', '460-3-60', '208/230-1-60', '575V 3Ø 60Hz', '575 V, 3 PH', '120V-1Ø',
    '480', '3Ø', 'three phase', '250 VDC'. A bare 1 or 3 is the phase; unit-less numbers of 12
    or more are volts (the first is ``voltage_v``, later ones ``voltage_alternatives_v``); 50 or
    60 after a voltage is the frequency.
    """
    return _voltage_phase(text, "a voltage/phase", None)


@_cell_parser("a voltage")
def parse_voltage(text: str) -> Parsed:
    """Voltage-only cell ('600V', '208/230'); same dict shape as :func:`parse_voltage_phase`."""
    return _voltage_phase(text, "a voltage", "voltage_v")


@_cell_parser("a phase")
def parse_phase(text: str) -> Parsed:
    """Phase-only cell ('3', '3Ø', '3PH', 'Three', '1Ø', 'single'); same dict shape."""
    return _voltage_phase(text, "a phase", "phase")


def format_voltage_phase(value: dict[str, Any]) -> str:
    """Canonical text, e.g. ``'208V/230V 3PH 60Hz'`` or ``'250V DC'``; every voltage carries its V
    so that a 50 or 60 V alternative cannot be read as a frequency."""
    parts = []
    volts = [value["voltage_v"], *value.get("voltage_alternatives_v", [])] if "voltage_v" in value else []
    ctype = value.get("current_type")
    if volts:
        parts.append("/".join(f"{_fmt_num(v)}V" for v in volts) + (f" {ctype.upper()}" if ctype else ""))
    elif ctype:
        parts.append(ctype.upper())
    if "phase" in value:
        parts.append(f"{value['phase']}PH")
    if "frequency_hz" in value:
        parts.append(f"{_fmt_num(value['frequency_hz'])}Hz")
    if not parts:
        raise ValueError("nothing to format in the voltage/phase value")
    return " ".join(parts)


# ---------------------------------------------------------------------------
# Duty
# ---------------------------------------------------------------------------

_DUTY_TOKEN_RE = re.compile(r"""
      (?P<contrated>(?<![a-z])cont(?:inuous|\.)?[\s-]*(?:time[\s-]*)?rat(?:ed|ing)(?![a-z]))
    | (?P<continuous>(?<![a-z])(?:cont(?:inuous)?|constant)(?![a-z])\.?|(?<![a-z0-9])s1(?![a-z0-9]))
    | (?P<short>(?<![a-z])short[\s-]*time(?![a-z])|(?<![a-z0-9])s2(?![a-z0-9]))
    | (?P<intermittent>(?<![a-z])(?:intermittent|intermit|intmt|int)(?![a-z])\.?)
    | (?P<periodic>(?<![a-z])periodic(?:al)?(?![a-z]))
    | (?P<varying>(?<![a-z])(?:varying|variable)(?![a-z]))
    | (?P<iec>(?<![a-z0-9])s(?:[3-9]|10)(?![0-9]))
    | (?P<minutes>\d+(?:\.\d+)?)\s*-?\s*(?:minutes?|mins?|m)(?![a-z])\.?
    | (?P<hours>\d+(?:\.\d+)?)\s*-?\s*(?:hours?|hrs?|h)(?![a-z])\.?
    | (?P<num>\d+(?:\.\d+)?)
""", re.IGNORECASE | re.VERBOSE)
_DUTY_SERVICE = {"continuous": "continuous", "short": "short-time", "intermittent": "intermittent",
                 "periodic": "periodic", "varying": "varying"}
_DUTY_LABELS = re.compile(r"duty|service|rated|rating|time|motor|cycle", re.IGNORECASE)


def _duty_rating(minutes: list[float], cont_rated: bool, text: str) -> tuple[str | None, str | None]:
    """(rating, problem) from the time values found."""
    if cont_rated and minutes:
        return None, f"both a time rating and 'continuous rated' in {_quote(text)}"
    if cont_rated:
        return "continuous", None
    if not minutes:
        return None, None
    if len(set(minutes)) > 1:
        return None, f"more than one time rating in {_quote(text)}"
    if minutes[0] not in _DUTY_MINUTES:
        return None, (f"time rating {_fmt_num(minutes[0])} min in {_quote(text)} is not 5, 15, 30 or 60 min "
                      "(the time ratings of NEC Table 430.22(E) / CEC Table 27)")
    return f"{int(minutes[0])}-min", None


@_cell_parser("a duty")
def parse_duty(text: str) -> Parsed:
    """Duty service and time rating.

    'continuous', 'cont.', 'S1' -> continuous; 'INT 15 MIN' -> intermittent, 15-min;
    'short-time 15 min', 'periodic, 60 minute', 'varying duty', 'intermittent (continuous rated)'.
    IEC S2 is short-time duty (IEC 60034-1); S3-S10 have no one-to-one match and are problems.
    """
    prepared = _prepare(text, "a duty")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    services: list[str] = []
    minutes: list[float] = []
    cont_rated, spans, problems = False, [], []
    for m in _DUTY_TOKEN_RE.finditer(cleaned):
        spans.append(m.span())
        kind = m.lastgroup
        if kind == "contrated":
            cont_rated = True
        elif kind in _DUTY_SERVICE:
            services.append(_DUTY_SERVICE[kind])
        elif kind == "iec":
            problems.append(f"IEC duty type {m.group().upper()} has no one-to-one match with the code duty classes")
        elif kind == "hours":
            minutes.append(float(m["hours"]) * 60.0)
        else:
            minutes.append(float(m["minutes"] or m["num"]))
            if kind == "num":
                notes.append(f"no unit on {_quote(m.group())}; read as minutes")
    notes += _leftover_note(cleaned, spans, _DUTY_LABELS)
    if not services and cont_rated and not minutes:
        services = ["continuous"]
        cont_rated = False
    distinct = list(dict.fromkeys(services))
    if problems or len(distinct) != 1:
        if not problems:
            problems.append(f"no duty type in {_quote(cleaned)}" if not distinct
                            else f"more than one duty type ({', '.join(distinct)}) in {_quote(cleaned)}")
        return Parsed(problem="; ".join(problems), notes=tuple(notes))
    value = {"service": distinct[0]}
    if distinct[0] == "continuous":
        if minutes or cont_rated:
            notes.append("a continuous-duty motor has no time rating; ignored the time given")
        return Parsed(value, notes=tuple(notes))
    rating, problem = _duty_rating(minutes, cont_rated, cleaned)
    if rating:
        value["rating"] = rating
    return Parsed(value, problem, notes=tuple(notes))


def format_duty(value: dict[str, Any]) -> str:
    """Canonical text: 'continuous', 'intermittent, 15 min', 'periodic (continuous rated)'."""
    service, rating = value["service"], value.get("rating")
    if service not in _DUTY_SERVICE.values():
        raise ValueError(f"unknown duty service {service!r}")
    if rating is None:
        return service
    if service == "continuous":
        raise ValueError("a continuous-duty motor has no time rating")
    if rating == "continuous":
        return f"{service} (continuous rated)"
    return f"{service}, {rating.split('-')[0]} min"


# ---------------------------------------------------------------------------
# Starting method
# ---------------------------------------------------------------------------

def _word(pattern: str) -> str:
    """Pattern bounded so abbreviations do not match inside other words or numbers."""
    return rf"(?<![a-z0-9])(?:{pattern})(?![a-z0-9])"


_STARTING_PATTERNS = (
    ("vfd", (r"variable[\s-]*(?:frequency|speed)[\s-]*(?:ac[\s-]*)?drive|adjustable[\s-]*(?:frequency|speed)"
             r"[\s-]*drive|vfd|vsd|afd|asd|drive|inverter")),
    ("two-speed", r"2s1w|2s2w|two[\s-]*speed|2[\s-]*speed"),
    ("soft-start", r"soft[\s-]*start(?:er|ing)?|rvss|ssrv|ss|solid[\s-]*state"),
    ("autotransformer", r"rvat|auto[\s-]*transformer|auto[\s-]*xfmr"),
    ("star-delta", r"star[\s-]*delta|wye[\s-]*delta|y\s*[-/]?\s*(?:delta|d|Δ)(?:c|o)?|yd[co]?"),
    ("part-winding", r"part[\s-]*winding|pw"),
    ("reactor", r"(?:primary[\s-]*)?reactors?"),
    ("resistor", r"(?:primary[\s-]*)?resist(?:or|ors|ance)"),
    ("manual", r"manual(?:[\s-]*(?:motor[\s-]*)?starter)?|mms|ms"),
    ("full-voltage", (r"[dh]?fvnr|fvr|fvc|d\.?o\.?l\.?|direct[\s-]*on[\s-]*line|a\.?t\.?l\.?"
                      r"|across[\s-]*the[\s-]*line|full[\s-]*voltage(?:[\s-]*(?:non[\s-]*)?reversing)?"
                      r"|mag(?:netic)?|contactor")),
    ("reduced", r"rvnr|rv|reduced[\s-]*voltage"),
    ("size", r"(?:nema[\s-]*)?size[\s-]*(?:\d+(?:\.\d+)?|00?)"),
)
_STARTING_RE = re.compile("|".join(f"(?P<g{i}>{_word(p)})" for i, (_, p) in enumerate(_STARTING_PATTERNS)), re.IGNORECASE)
_STARTING_LABELS = re.compile(
    r"starter|starting|start|comb(?:ination|o)?|non|reversing|nr|w|with|c|by|pass|bypass|integral|unit|mcc"
    r"|motor|control|type|method|in|remote|mounted|nema", re.IGNORECASE)


def _starting_pick(methods: list[str], cleaned: str) -> tuple[str | None, list[str], str | None]:
    """(method, notes, problem) from the methods named in the cell."""
    notes = []
    if "manual" in methods:
        notes.append("manual starter: read as full-voltage starting")
        methods = ["full-voltage" if m == "manual" else m for m in methods]
    distinct = [m for m in dict.fromkeys(methods) if m != "reduced"]
    if len(distinct) > 1 and "full-voltage" in distinct:
        # 'VFD c/w FVNR bypass', '2S2W FVNR': the full-voltage unit is the bypass or contactor.
        distinct.remove("full-voltage")
        notes.append("a full-voltage starter is also named (bypass or contactor); used the other method")
    if len(distinct) > 1:
        return None, notes, f"more than one starting method ({', '.join(distinct)}) in {_quote(cleaned)}"
    if not distinct:
        if "reduced" in methods:
            return None, notes, f"reduced-voltage starting without the method in {_quote(cleaned)}"
        return None, notes, f"no starting method this checker knows in {_quote(cleaned)}"
    return distinct[0], notes, None


@_cell_parser("a starting method")
def parse_starting(text: str) -> Parsed:
    """Starting method: 'full-voltage' (FVNR, DOL, ATL, magnetic, manual), 'autotransformer' (RVAT),
    'star-delta' (Y-D, YDC), 'resistor', 'reactor', 'part-winding', 'soft-start' (RVSS),
    'vfd' (VFD, VSD, AFD, ASD) or 'two-speed' (2S1W, 2S2W). A NEMA size is noted."""
    prepared = _prepare(text, "a starting method")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    methods, spans = [], []
    for m in _STARTING_RE.finditer(cleaned):
        spans.append(m.span())
        kind = _STARTING_PATTERNS[int(m.lastgroup[1:])][0]
        if kind == "size":
            notes.append(f"NEMA starter {m.group().lower().replace('nema', '').strip()}")
        else:
            methods.append(kind)
    method, pick_notes, problem = _starting_pick(methods, cleaned)
    notes += pick_notes + _leftover_note(cleaned, spans, _STARTING_LABELS)
    return Parsed(method, problem, notes=tuple(notes))


# ---------------------------------------------------------------------------
# Conductors
# ---------------------------------------------------------------------------

_RACEWAY_TYPES = r"emt|rmc|imc|rgs|grc|rpvc|pvc|hdpe|fmc|lfmc|lfnc|ent|flex|rigid"
_INCH_SIZE = r"(?:(?<![#\d/.])(?P<rw>\d+)(?:\s*-\s*|\s+)(?P<rn>\d)\s*/\s*(?P<rd>\d)|(?<![#\d/.])(?P<rfn>\d)\s*/\s*(?P<rfd>\d)" \
             r"|(?<![#\d/.])(?P<ri>\d+(?:\.\d+)?))"
_RACEWAY_RE = re.compile(rf"""
      (?:\(\s*(?P<rcount>\d+)\s*\)\s*)?{_INCH_SIZE}
      \s*(?:"|''|-?\s*inch(?:es)?(?![a-z])|in\.|in(?![a-z]))(?:\s*trade\s*size)?
      (?:\s*(?P<rtype>{_RACEWAY_TYPES})(?![a-z]))?(?:\s*(?:c|cond|conduit)(?![a-z]))?
    | (?<![\d.#])(?P<mm>{'|'.join(_METRIC_TRADE_MM)})\s*(?:mm(?![a-z0-9])\s*(?P<mtype>{_RACEWAY_TYPES})?(?![a-z])
                                       (?:\s*(?:c|conduit)(?![a-z]))?|c(?![a-z]))
    | (?<![a-z])(?P<tonly>{_RACEWAY_TYPES})(?![a-z])
""", re.IGNORECASE | re.VERBOSE)
_METRIC_WIRE_RE = re.compile(r"\d+(?:\.\d+)?\s*(?:mm2(?!\d)|sq\.?\s*mm|mm\s*sq)", re.IGNORECASE)
_THOUSANDS_SIZE_RE = re.compile(r"(?<=\d),(?=\d{3}(?!\d))")

_INSULATIONS = (r"rwu\s*90|rw\s*90|rw\s*75|t\s*90(?:\s*nylon)?|twn\s*75|twu\s*75|twu|tw\s*75|twn|tw"
                r"|thhn\s*/\s*thwn(?:\s*-?\s*2)?|thhn|thwn(?:\s*-?\s*2)?|thw(?:\s*-?\s*2)?|thhw|xhhw(?:\s*-?\s*2)?"
                r"|xhhn|rhw(?:\s*-?\s*2)?|rhh|use(?:\s*-?\s*2)?|teck\s*90|teck|acwu\s*90|ac\s*90|nmd\s*90|nmwu"
                r"|tc-er|tc|mc|uf")
_COND_TOKEN_RE = re.compile(rf"""
      (?P<temp>\d+\s*°\s*c(?![a-z])|(?<![\d#])(?:60|75|90|105)\s*c(?![a-z/]))
    | (?P<legend>(?<![a-z])(?:ft\s*[1-6]|xlpe|hl|cp)(?![a-z0-9]))          # cable print legend ratings
    | (?P<volt>\d+\s*(?:v|kv|volts?)(?![a-z]))
    | (?P<sets>\d+)\s*-?\s*(?:parallel\s*)?(?:sets?|runs?)(?![a-z])(?:\s*of(?![a-z]))?
    | \(\s*(?P<paren>\d+)\s*\)
    | (?P<perph>per\s*phase|per\s*ph(?![a-z])|/\s*phase(?![a-z])|/\s*ph(?![a-z]))
    | (?P<count1c>\d+)\s*-\s*1\s*/\s*c(?![a-z])
    | (?P<onec>(?<!\d)1\s*/\s*c(?![a-z]))
    | (?P<cable>\d+)\s*/?\s*c(?:ond(?:uctors?)?)?(?![a-z])(?!\s*/\s*w)
    | \#\s*(?P<hsize>\d+(?:\s*/\s*0(?!\d))?)(?:\s*/\s*(?P<hcab>[1-9])(?!\d))?(?:\s*(?P<hunit>awg|mcm|kcmil|kcm)(?![a-z]))?
    | (?P<count>\d+)\s*(?:[-x*]\s*(?=[#(\d])|(?=\#))
    | (?P<usize>\d+(?:\s*/\s*0(?!\d))?)\s*(?P<uunit>awg|mcm|kcmil|kcm)(?![a-z])
    | (?P<bare>\d+(?:\s*/\s*0(?!\d))?)(?!\d)
    | (?P<mat>(?<![a-z])(?:cu|copper|alum(?:inum|inium)?|al|aluminium|acm|aa[\s-]*8000)(?![a-z]))
    | (?P<ins>(?<![a-z])(?:{_INSULATIONS})(?![a-z0-9]))
    | (?P<gnd>(?<![a-z])(?:g|gnd|grd|grnd|grn|gr|ground|grounding|bond|bonding|bc|egc|eg|green|bare)(?![a-z]))
    | (?P<neu>(?<![a-z])(?:n|neu|neut|neutral)(?![a-z]))
    | (?P<sep>\+|&|[,;]|(?<![a-z])(?:and|plus|with|w/|c/w)(?![a-z]))
""", re.IGNORECASE | re.VERBOSE)
_COND_LABELS = re.compile(r"wires?|conductors?|cond|cables?|of|in|each|per|phase|ph|type|insulated|insul"
                          r"|stranded|str|solid|sol|awg|size|run|feeder|xlpe|c", re.IGNORECASE)
_COND_KINDS = ("temp", "legend", "volt", "sets", "paren", "perph", "count1c", "onec", "cable", "hsize", "count", "usize",
               "bare", "mat", "ins", "gnd", "neu", "sep")
_SIZE_KINDS = ("hsize", "usize", "bare")
_COUNT_KINDS = ("count", "count1c", "cable", "paren")


def _canon_size(raw: str, unit: str | None, shown: str) -> tuple[str | None, str | None, str | None]:
    """(canonical size, problem, note) for one size token; ``unit`` is 'awg', 'kcmil' or None,
    ``shown`` the token as written (for messages)."""
    raw = _WHITESPACE_RE.sub("", raw)
    if set(raw) == {"0"}:
        if len(raw) > 4:
            return None, f"{_quote(shown)} is not a conductor size", None
        return f"{len(raw)}/0", None, (f"read {_quote(raw)} as {len(raw)}/0" if len(raw) > 1 else None)
    if raw.endswith("/0"):
        ok = raw in AWG_SIZES and unit != "kcmil"
        return (raw, None, None) if ok else (None, f"{_quote(shown)} is not a standard conductor size", None)
    number = int(raw)
    if unit == "kcmil":
        if number in _KCMIL_SET:
            return str(number), None, None
        return None, f"{_quote(shown)} is not a standard kcmil size", None
    if str(number) in _AWG_NUMBERS:
        return str(number), None, None
    if number in _KCMIL_SET and unit is None:
        return str(number), None, f"no unit on size {number}; read as {number} kcmil"
    return None, f"{_quote(shown)} is not a standard AWG size", None


def _size_unit(text: str | None) -> str | None:
    if not text:
        return None
    return "awg" if text.lower() == "awg" else "kcmil"


def _raceway_text(m: re.Match[str]) -> str:
    """Canonical raceway: '3/4"', '1-1/2" EMT', '27 mm PVC', '(2) 4"'."""
    if m["tonly"]:
        return m["tonly"].upper()
    if m["mm"]:
        return f"{m['mm']} mm" + (f" {m['mtype'].upper()}" if m["mtype"] else "")
    if m["rw"]:
        size = f"{int(m['rw'])}-{m['rn']}/{m['rd']}"
    elif m["rfn"]:
        size = f"{m['rfn']}/{m['rfd']}"
    else:
        size = m["ri"]
    text = (f"({m['rcount']}) " if m["rcount"] else "") + size + '"'
    return text + (f" {m['rtype'].upper()}" if m["rtype"] else "")


def _take_raceway(text: str) -> tuple[str, str | None, list[str]]:
    """Remove raceway mentions; return the rest, the canonical raceway and notes."""
    matches = list(_RACEWAY_RE.finditer(text))
    if not matches:
        return text, None, []
    sized = [m for m in matches if not m["tonly"]]
    main = sized[0] if sized else matches[0]
    notes = [f"ignored second raceway {_quote(m.group().strip())}" for m in sized[1:]]
    rest = _RACEWAY_RE.sub(" , ", text)
    return rest, _raceway_text(main), notes


class _Item:
    """One conductor group in a cell: '3#4 RW90 CU' or '#8 BOND'."""

    __slots__ = ("cable", "count", "end", "ground", "ins", "mats", "neutral", "paren", "shown", "size", "start", "unit")

    def __init__(self, start: int) -> None:
        self.count: int | None = None
        self.paren: int | None = None
        self.size: str | None = None
        self.shown = ""
        self.unit: str | None = None
        self.cable: int | None = None
        self.mats: list[str] = []
        self.ins: list[str] = []
        self.ground = False
        self.neutral = False
        self.start = start
        self.end = start

    def empty(self) -> bool:
        return (self.size is None and self.count is None and self.paren is None and self.cable is None
                and not self.mats and not self.ins and not self.ground and not self.neutral)


def _material(raw: str) -> str:
    low = raw.lower()
    return "cu" if low.startswith("c") else "al"


def _insulation(raw: str) -> str:
    """Canonical insulation: upper case, no space before digits ('TECK 90' -> 'TECK90')."""
    text = _WHITESPACE_RE.sub(" ", raw.upper())
    return re.sub(r"\s*([-/])\s*", r"\1", re.sub(r"\s+(?=\d)", "", text))


class _CondScan:
    """Token walk that groups a conductor cell into items and global facts."""

    def __init__(self, text: str) -> None:
        self.text = text
        self.tokens = list(_COND_TOKEN_RE.finditer(text))
        # lastgroup would name an inner group ('uunit'), so find the alternative that matched.
        self.kinds = [next(k for k in _COND_KINDS if t[k] is not None) for t in self.tokens]
        self.items: list[_Item] = []
        self.sets: list[int] = []
        self.per_phase = False
        self.notes: list[str] = []
        self.problems: list[str] = []
        self.cur = _Item(0)

    def close(self, at: int) -> None:
        if not self.cur.empty():
            self.items.append(self.cur)
        self.cur = _Item(at)

    def next_kind(self, index: int) -> str | None:
        return self.kinds[index + 1] if index + 1 < len(self.tokens) else None

    def run(self) -> _CondScan:
        for index, tok in enumerate(self.tokens):
            self.step(index, tok, self.kinds[index])
            self.cur.end = max(self.cur.end, tok.end())
        self.close(len(self.text))
        return self

    def step(self, index: int, tok: re.Match[str], kind: str) -> None:
        cur = self.cur
        if kind == "sep":
            self.close(tok.end())
        elif kind == "sets":
            self.sets.append(int(tok["sets"]))
        elif kind == "perph":
            self.per_phase = True
        elif kind == "legend":
            pass
        elif kind in ("temp", "volt"):
            self.notes.append(f"ignored {_quote(tok.group().strip())}")
        elif kind in _COUNT_KINDS or kind == "onec":
            self.count_token(tok, kind)
        elif kind in _SIZE_KINDS:
            self.size_token(index, tok, kind)
        elif kind == "mat":
            cur.mats.append(_material(tok["mat"]))
            if tok["mat"].lower().startswith(("acm", "aa")):
                self.notes.append(f"{_quote(tok['mat'])} is an aluminium alloy")
        elif kind == "ins":
            cur.ins.append(_insulation(tok["ins"]))
        elif kind in ("gnd", "neu"):
            self.role_token(index, tok, kind)

    def count_token(self, tok: re.Match[str], kind: str, group: str | None = None) -> None:
        if self.cur.size is not None:
            self.close(tok.start())
        cur = self.cur
        if kind == "onec":
            return
        value = int(tok[group or kind])
        if kind == "paren":
            cur.paren = value
        elif kind == "cable":
            cur.cable = value
        elif cur.count is not None and cur.count != value:
            self.problems.append(f"two conductor counts ({cur.count} and {value})")
        else:
            cur.count = value

    def size_token(self, index: int, tok: re.Match[str], kind: str) -> None:
        if kind == "bare" and self.next_kind(index) in ("hsize", "usize"):
            # '3 500 kcmil', '(3) 4 AWG': a unit-less number before a marked size is a count.
            self.count_token(tok, "count", "bare")
            return
        if self.cur.size is not None:
            self.close(tok.start())
        cur = self.cur
        cur.size = tok[kind]
        cur.shown = tok.group().strip()
        cur.unit = _size_unit(tok["hunit"] if kind == "hsize" else tok["uunit"] if kind == "usize" else None)
        if kind == "hsize" and tok["hcab"]:
            cur.cable = int(tok["hcab"])

    def role_token(self, index: int, tok: re.Match[str], kind: str) -> None:
        """A ground/neutral word marks the item it follows, or the next one when a size comes next."""
        follows = self.next_kind(index)
        if self.cur.size is not None and follows in _SIZE_KINDS + ("count",):
            self.close(tok.start())
        if kind == "gnd":
            self.cur.ground = True
        else:
            self.cur.neutral = True


def _cps(item: _Item) -> tuple[int | None, str | None]:
    """Conductors per set from the item's counts."""
    counts = {c for c in (item.count, item.cable) if c is not None}
    if item.paren is not None and item.count is None and item.cable is None:
        counts.add(item.paren)
    if len(counts) > 1:
        return None, f"conflicting conductor counts {sorted(counts)}"
    return (counts.pop() if counts else None), None


def _sets(scan: _CondScan, main: _Item, cps: int | None) -> tuple[int, int | None, list[str], list[str]]:
    """(sets, conductors per set, notes, problems): parallel sets from 'N sets of', '(N) 3#..', 'Nx .. per phase'."""
    notes: list[str] = []
    candidates = list(scan.sets)
    if main.paren is not None and (main.count is not None or main.cable is not None):
        candidates.append(main.paren)
    if scan.per_phase and cps is not None:
        if cps == 3:
            notes.append("'3 ... per phase' read as 3 phase conductors in one set; confirm whether 3 parallel "
                         "sets per phase were meant")
        else:
            candidates.append(cps)
            cps = None
    if len(set(candidates)) > 1:
        return 1, cps, notes, [f"conflicting numbers of parallel sets {sorted(set(candidates))}"]
    return (candidates[0] if candidates else 1), cps, notes, []


def _item_text(scan: _CondScan, item: _Item) -> str:
    return scan.text[item.start:item.end].strip(" ,;+&")


def _conductor_value(scan: _CondScan, main: _Item, bond: _Item | None) -> tuple[dict[str, Any], list[str], list[str]]:
    """(value, notes, problems) for the chosen phase and bond items."""
    notes, problems = [], list(scan.problems)
    size, problem, note = _canon_size(main.size or "", main.unit, main.shown)
    problems += [problem] if problem else []
    notes += [note] if note else []
    cps, problem = _cps(main)
    problems += [problem] if problem else []
    sets, cps, set_notes, set_problems = _sets(scan, main, cps)
    notes += set_notes
    problems += set_problems
    mats = set(main.mats)
    if len(mats) > 1:
        problems.append("both copper and aluminium are named")
    value: dict[str, Any] = {"sets": sets}
    if cps is not None:
        value["conductors_per_set"] = cps
    stated = len(mats) == 1
    value.update(size=size, material=next(iter(mats)) if stated else "cu", material_stated=stated)
    if main.ins:
        value["insulation"] = main.ins[0]
        notes += [f"ignored second insulation type {_quote(i)}" for i in main.ins[1:] if i != main.ins[0]]
    if not 1 <= sets <= 20:
        problems.append(f"{sets} parallel sets is outside 1-20")
    if cps is not None and not 1 <= cps <= 12:
        problems.append(f"{cps} conductors per set is outside 1-12")
    if bond is not None:
        bond_size, problem, note = _canon_size(bond.size or "", bond.unit, bond.shown)
        problems += [f"bond: {problem}"] if problem else []
        notes += [f"bond: {note}"] if note else []
        if bond_size:
            value["bond_size"] = bond_size
        if len(set(bond.mats)) == 1:
            value["bond_material"] = bond.mats[0]
    return value, notes, problems


def _pick_items(scan: _CondScan) -> tuple[_Item | None, _Item | None, list[str]]:
    """Choose the phase-conductor item and the bond item; note everything else."""
    notes = []
    sized = [i for i in scan.items if i.size is not None]
    phase = [i for i in sized if not i.ground and not i.neutral]
    grounds = [i for i in sized if i.ground]
    if not phase and grounds:
        notes.append(f"only a bond/ground conductor is written ({_quote(_item_text(scan, grounds[0]))})")
        phase, grounds = grounds[:1], []
    main = phase[0] if phase else None
    for item in scan.items:
        if item.size is None and main is not None and not item.ground and not item.neutral:
            main.mats += item.mats
            main.ins += item.ins
        elif item.size is None and item.ground:
            notes.append("a bond/ground conductor is mentioned without its size")
    notes += [f"ignored neutral {_quote(_item_text(scan, i))}" for i in sized if i.neutral]
    notes += [f"ignored extra conductors {_quote(_item_text(scan, i))} (not marked as bond or ground)"
              for i in phase[1:]]
    notes += [f"ignored second bond {_quote(_item_text(scan, i))}" for i in grounds[1:]]
    return main, (grounds[0] if grounds else None), notes


@_cell_parser("a conductor")
def parse_conductor(text: str) -> Parsed:
    """Conductor set from '3 #4 RW90 CU + #8 BOND', '3#10, 1#10G, 3/4"C', '(2) 3#4/0',
    '2 sets of 3-500 kcmil', '3C #4 TECK90', '#6/3 TECK', '250 MCM', '00', '3#250MCM-AL'.

    Value keys: sets, conductors_per_set (only when a count is written), size, material
    ('cu' unless stated), material_stated, insulation, bond_size, bond_material, raceway.
    Metric sizes and sizes outside the standard AWG/kcmil series are problems.
    """
    prepared = _prepare(text, "a conductor")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    metric = _METRIC_WIRE_RE.search(cleaned)
    if metric:
        return Parsed(problem=f"{_quote(metric.group())} is a metric size; this checker needs AWG or kcmil sizes",
                      notes=tuple(notes))
    cleaned = _THOUSANDS_SIZE_RE.sub("", cleaned)
    rest, raceway, raceway_notes = _take_raceway(cleaned)
    scan = _CondScan(rest).run()
    main, bond, pick_notes = _pick_items(scan)
    leftover = _leftover_note(rest, [t.span() for t in scan.tokens], _COND_LABELS)
    notes += raceway_notes + scan.notes + pick_notes + leftover
    if main is None:
        return Parsed(problem=f"no conductor size in {_quote(cleaned)}", notes=tuple(notes))
    value, value_notes, problems = _conductor_value(scan, main, bond)
    notes += value_notes
    if raceway:
        value["raceway"] = raceway
    if problems:
        problem = "; ".join(dict.fromkeys(problems)) + f" in {_quote(cleaned)}"
        return Parsed(value if value.get("size") else None, problem, notes=tuple(notes))
    return Parsed(value, notes=tuple(notes))


def _format_size(size: str) -> str:
    return f"#{size}" if size in AWG_SIZES else f"{size} kcmil"


def format_conductor(value: dict[str, Any]) -> str:
    """Canonical text, e.g. ``'2 sets of 3-500 kcmil RW90 CU + #2 CU BOND, 3" EMT'``."""
    parts = []
    sets = value.get("sets", 1)
    if sets != 1:
        parts.append(f"{sets} sets of")
    cps = value.get("conductors_per_set")
    parts.append((f"{cps}-" if cps else "") + _format_size(value["size"]))
    if value.get("insulation"):
        parts.append(value["insulation"])
    if value.get("material_stated"):
        parts.append(value.get("material", "cu").upper())
    elif value.get("material", "cu") != "cu":
        raise ValueError("a material other than copper must be marked as stated")
    if value.get("bond_size"):
        bond_material = f" {value['bond_material'].upper()}" if value.get("bond_material") else ""
        parts.append(f"+ {_format_size(value['bond_size'])}{bond_material} BOND")
    text = " ".join(parts)
    return f"{text}, {value['raceway']}" if value.get("raceway") else text


# ---------------------------------------------------------------------------
# Overcurrent devices
# ---------------------------------------------------------------------------

_AMOUNT = r"(?:\d+(?:\s+|\s*-\s*)\d+\s*/\s*\d+(?![\d/])|\d[\d,]*(?:\.\d+)?|\.\d+)"
_DEVICE_TOKEN_RE = re.compile(rf"""
      (?P<at>{_AMOUNT})\s*a\.?\s*t\.?(?![a-z])
    | (?P<af>{_AMOUNT})\s*(?:a\.?\s*f\.?(?![a-z])|(?:a\s*)?frame(?![a-z]))
    | (?<![\d.])(?P<poles>\d)\s*-?\s*p(?:oles?)?(?![a-z])
    | (?P<amp>{_AMOUNT}|\d+\s*/\s*\d+)\s*(?:a|amps?|amperes?)(?![a-z])\.?
    | (?P<pa>\d[\d,]*(?:\.\d+)?)\s*/\s*(?P<pb>\d[\d,]*(?:\.\d+)?)(?:\s*p(?:oles?)?(?![a-z]))?
    | (?P<num>{_AMOUNT})
    | (?P<ntd>(?<![a-z])(?:ntd|non[\s-]*time[\s-]*delay|non[\s-]*td|fast[\s-]*acting|single[\s-]*element
                         |type\s*p|p(?=\s*-?\s*fuses?))(?![a-z]))
    | (?P<td>(?<![a-z])(?:t\.?d\.?|time[\s-]*delay|dual[\s-]*element|d\.e\.|slow[\s-]*blow
                        |type\s*d|d(?=\s*-?\s*fuses?))(?![a-z]))
    | (?P<cls>(?<![a-z])(?:class\s*(?:rk\s*-?\s*[15]|cc|cd|cf|j|l|t|g|k\s*-?\s*[15]|r|h)|rk\s*-?\s*[15]|cc|j)(?![a-z0-9]))
    | (?P<fuse>(?<![a-z])(?:fuses?|fused|fusible|fu|fsd)(?![a-z]))
    | (?P<inst>(?<![a-z])(?:h?mcp|motor\s*circuit\s*protectors?|instantaneous(?:[\s-]*trip)?
                          |mag(?:netic)?[\s-]*only)(?![a-z]))
    | (?P<inv>(?<![a-z])(?:inverse[\s-]*time|thermal[\s-]*mag(?:netic)?|itb|t/m)(?![a-z]))
    | (?P<hacr>(?<![a-z])hacr(?![a-z]))
    | (?P<brk>(?<![a-z])(?:c\.?b\.?|c/b|cbs|bkrs?|brkrs?|circuit\s*breakers?|breakers?|mccb|mcb)(?![a-z]))
""", re.IGNORECASE | re.VERBOSE)
_DEVICE_LABELS = re.compile(r"trip|rating|rated|max|maximum|mocp|ocp|mop|size|type|class|amps?|a|hrc|hrci"
                            r"|with|w|and|in|switch", re.IGNORECASE)
_DEVICE_NAMES = {"td": "time-delay-fuse", "ntd": "non-time-delay-fuse", "fuse": "fuse",
                 "inv": "inverse-time-breaker", "inst": "instantaneous-trip-breaker", "brk": "breaker"}


def _amount(raw: str) -> float | None:
    """Ampere amount from '125', '1,200', '5 6/10', '17-1/2', '1/2'."""
    m = _NUMBER_RE.fullmatch(raw.strip())
    if m is None:
        return None
    value, problem, _ = _number_value(m, pair_ok=False, decimal_comma=False)
    return None if problem else value


class _DeviceScan:
    """Facts found in a device cell."""

    def __init__(self) -> None:
        self.ratings: list[tuple[float | None, str]] = []
        self.frames: list[tuple[float | None, str]] = []
        self.poles: list[int] = []
        self.kinds: set[str] = set()
        self.notes: list[str] = []
        self.problems: list[str] = []

    def add(self, m: re.Match[str]) -> None:
        kind = m.lastgroup
        if kind in ("at", "af"):  # ampere-trip / ampere-frame notation only describes circuit breakers
            self.kinds.add("brk")
        if kind in ("at", "amp", "num"):
            self.ratings.append((_amount(m[kind]), m[kind]))
        elif kind == "af":
            self.frames.append((_amount(m["af"]), m["af"]))
        elif kind == "poles":
            self.poles.append(int(m["poles"]))
        elif kind in ("pa", "pb"):
            self.pair(m)
        elif kind == "cls":
            self.kinds.add("fuse")
            self.notes.append(f"fuse class {m.group().upper().replace('CLASS', '').strip()}; "
                              "a class alone does not say time-delay")
        elif kind == "hacr":
            self.kinds.add("brk")
            self.notes.append("HACR-type breaker")
        elif kind in _DEVICE_NAMES:
            self.kinds.add(kind)

    def pair(self, m: re.Match[str]) -> None:
        """'30/3' is amperes/poles; any other 'a/b' holds two ratings."""
        b = m["pb"]
        if _INTEGER_RE.fullmatch(b) and 1 <= int(b) <= 4:
            self.ratings.append((_amount(m["pa"]), m["pa"]))
            self.poles.append(int(b))
        else:
            self.problems.append(f"{_quote(m.group())} holds two numbers; cannot tell which is the rating")

    def device(self) -> str | None:
        fuse = self.kinds & {"td", "ntd", "fuse"}
        breaker = self.kinds & {"inv", "inst", "brk"}
        if fuse and breaker:
            self.problems.append("names both a fuse and a breaker")
            return None
        if {"td", "ntd"} <= fuse or {"inv", "inst"} <= breaker:
            self.problems.append("names two different device types")
            return None
        for kind in ("td", "ntd", "fuse", "inv", "inst", "brk"):
            if kind in self.kinds:
                return _DEVICE_NAMES[kind]
        return None


def _one_amount(found: list[tuple[float | None, str]], what: str, text: str) -> tuple[float | None, str | None]:
    values = {v for v, _ in found}
    if None in values:
        raw = next(r for v, r in found if v is None)
        return None, f"cannot read {what} from {_quote(raw)}"
    if len(values) > 1:
        return None, f"more than one {what.split(' ', 1)[1]} in {_quote(text)}"
    value = values.pop() if values else None
    if value is not None:
        problem = _check_amount(value, what, "A", MAX_RATING_A, text)
        if problem:
            return None, problem
    return value, None


@_cell_parser("an overcurrent device")
def parse_device(text: str) -> Parsed:
    """Overcurrent device: rating [A], kind, frame [A] and poles.

    '125 A CB', '100AT/225AF', '3P-125A', '30/3' (amperes/poles), '60 A TD fuse',
    '45A dual element fuse', 'Type D' / 'D fuse' (time-delay) and 'Type P' (non-time-delay)
    per CEC Table 29 column headings (see the reference notes' fuse-terminology addendum),
    'RK5' (class alone -> 'fuse'), 'MCP 30A' (instantaneous-trip), 'CB' (kind not stated),
    '5 6/10 A fuse', '17 1/2'.
    """
    prepared = _prepare(text, "an overcurrent device")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    if _NEGATIVE_RE.match(cleaned):
        return Parsed(problem=f"a device rating cannot be negative: {_quote(cleaned)}", notes=tuple(notes))
    scan, spans = _DeviceScan(), []
    for m in _DEVICE_TOKEN_RE.finditer(cleaned):
        spans.append(m.span())
        scan.add(m)
    device = scan.device()
    rating, rating_problem = _one_amount(scan.ratings, "an ampere rating", cleaned)
    frame, frame_problem = _one_amount(scan.frames, "a frame rating", cleaned)
    problems = scan.problems + [p for p in (rating_problem, frame_problem) if p]
    if len(set(scan.poles)) > 1 or any(not 1 <= p <= 4 for p in scan.poles):
        problems.append(f"pole count {sorted(set(scan.poles))} is not one number from 1 to 4")
    notes += scan.notes + _leftover_note(cleaned, spans, _DEVICE_LABELS)
    if rating is None and not problems:
        problems.append(f"no ampere rating in {_quote(cleaned)}")
    if rating is None and device:
        notes.append(f"device read as {device}")
    value: dict[str, Any] | None = None
    if rating is not None:
        value = {"rating_a": rating}
        if device:
            value["device"] = device
        if frame is not None:
            value["frame_a"] = frame
        if scan.poles and len(set(scan.poles)) == 1 and 1 <= scan.poles[0] <= 4:
            value["poles"] = scan.poles[0]
    return Parsed(value, "; ".join(problems) or None, notes=tuple(notes))


_DEVICE_WORDS = {"time-delay-fuse": "TD FUSE", "non-time-delay-fuse": "NTD FUSE", "fuse": "FUSE",
                 "inverse-time-breaker": "INVERSE-TIME CB", "instantaneous-trip-breaker": "MCP", "breaker": "CB"}


def format_device(value: dict[str, Any]) -> str:
    """Canonical text, e.g. ``'125 A 3P 225 AF INVERSE-TIME CB'``."""
    parts = [f"{_fmt_num(value['rating_a'])} A"]
    if "poles" in value:
        parts.append(f"{value['poles']}P")
    if "frame_a" in value:
        parts.append(f"{_fmt_num(value['frame_a'])} AF")
    if "device" in value:
        parts.append(_DEVICE_WORDS[value["device"]])
    return " ".join(parts)


# ---------------------------------------------------------------------------
# Free text and hp formatting
# ---------------------------------------------------------------------------

def _is_plain_text(text: str) -> bool:
    """Stripped text that ``_prepare`` would leave as it is (most tags and descriptions)."""
    return text.isascii() and text.isprintable() and "  " not in text and not _is_placeholder(text) \
        and not (text[0] == "=" and _FORMULA_RE.match(text))


@_cell_parser("text", max_chars=MAX_TEXT_CHARS)
def parse_text(text: str) -> Parsed:
    """Tag, description, fed-from or remarks text with internal whitespace collapsed."""
    if _is_plain_text(text):
        return Parsed(text)
    return _prepared_text(text)


def plain_text(text: str) -> Parsed | None:
    """``parse_text(text)`` for a cell with nothing to clean, else None (then call ``parse_text``).

    A schedule's tags and descriptions are mostly distinct, each read once: this is the short way
    for them, without the cache and the wrapper's checks that such text passes anyway.
    """
    return Parsed(text) if is_plain(text) else None


def is_plain(text: str) -> bool:
    """Whether ``parse_text(text)`` is ``text`` itself, with nothing to note (see ``plain_text``)."""
    return bool(text) and text[0] != " " and text[-1] != " " and len(text) <= MAX_TEXT_CHARS and _is_plain_text(text)


def _prepared_text(text: str) -> Parsed:
    """``parse_text`` the long way (tests hold the short way to it)."""
    prepared = _prepare(text, "text", footnotes=False)
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    return Parsed(cleaned, notes=tuple(notes))


def format_hp(value: float) -> str:
    """Canonical text of a horsepower, e.g. ``'7.5 HP'`` (decimal, never an exponent)."""
    if not math.isfinite(value) or value <= 0:
        raise ValueError(f"not a horsepower: {value!r}")
    return f"{_fmt_num(value)} HP"


# ---------------------------------------------------------------------------
# Overload, disconnect, run length, packaged-equipment and drive cells
# ---------------------------------------------------------------------------
#
# parse_overload, parse_disconnect and parse_starting_details return merge dicts (like
# parse_voltage_phase) so that the cell text is kept beside its reading. Shapes: motor.schema.json.

_OL_CLASS_RE = re.compile(r"(?<![a-z])(?:trip\s*)?(?:class|cl)\.?\s*-?\s*(?P<cls>\d{1,2})(?![\d.])", re.IGNORECASE)
_OL_PERCENT_RE = re.compile(r"(?P<pct>\d+(?:\.\d+)?)\s*%")
_OL_RANGE_RE = re.compile(rf"(?P<lo>{_DEC})\s*(?:-|to|\.\.)\s*(?P<hi>{_DEC})(?![\d/])\s*(?:a|amps?|amperes?)?(?![a-z])",
                          re.IGNORECASE)
_OL_KIND_WORDS = (
    ("integral", (r"integral|internal|inherent|thermal[\s-]*protect(?:or|ed|ion)|thermally[\s-]*protected"
                  r"|t\.?p\.?|klixon")),
    ("drive", r"vfd|vsd|afd|asd|drives?|inverter"),
    ("soft-starter", r"soft[\s-]*start(?:er)?|rvss|ssrv"),
    ("electronic", r"ssol|solid[\s-]*state|electronic|eol"),
    ("heater", r"heaters?|htrs?|heater[\s-]*elements?"),
)
_OL_KIND_RE = re.compile("|".join(f"(?P<k{i}>{_word(p)})" for i, (_, p) in enumerate(_OL_KIND_WORDS)), re.IGNORECASE)
_OL_CATALOGUE_RE = re.compile(r"(?<![a-z0-9.])[a-z]{1,3}-?\d+(?:\.\d+)?[a-z]?(?![a-z0-9])", re.IGNORECASE)
_OL_LABELS = re.compile(r"ol|o|l|olr|overloads?|relays?|set|setting|sett|trip|at|by|in|with|w|c|adj|adjustable"
                        r"|range|motor|protection|mounted|starter|fla|dial|mmp|mpcb|and", re.IGNORECASE)
#: Trip classes of overload relays (IEC 60947-4-1 and UL 60947-4-1 classes 5, 10, 10A, 20, 30; common practice).
OVERLOAD_TRIP_CLASSES = (5, 10, 15, 20, 30)


def _ol_amounts(rest: str, setting: dict[str, Any], problems: list[str]) -> list[tuple[int, int]]:
    """Read a percentage, a dial range or one current from the overload text; returns spans read."""
    pct = _OL_PERCENT_RE.search(rest)
    if pct:
        setting["percent"] = float(pct["pct"])
        if not 0 < setting["percent"] <= 1000:
            problems.append(f"{_quote(pct.group())} is not a usable percentage of full-load current")
        return [pct.span()]
    rng = _OL_RANGE_RE.search(rest)
    if rng:
        lo, hi = (_to_float(rng[g], decimal_comma=False)[0] for g in ("lo", "hi"))
        if lo is None or hi is None or not 0 < lo < hi <= MAX_CURRENT_A:
            problems.append(f"cannot read the setting range {_quote(rng.group().strip())}")
        else:
            setting.update(range_min_a=lo, range_max_a=hi)
        return [rng.span()]
    catalogue = [c for c in _OL_CATALOGUE_RE.findall(rest) if not _OL_LABELS.fullmatch(c)]
    if catalogue:
        problems.append(f"{_quote(catalogue[0])} looks like a heater or relay catalogue number; "
                        "give the trip current in amperes")
        return []
    matches = list(_NUMBER_RE.finditer(rest))
    if len(matches) > 1:
        problems.append(f"more than one current in {_quote(rest.strip())}; cannot tell which is the setting")
    elif matches and matches[0]["a"]:
        problems.append(f"{_quote(matches[0].group())} holds two values; cannot tell which is the setting")
    elif matches:
        value, problem, _ = _number_value(matches[0], pair_ok=False, decimal_comma=False)
        problem = problem or _check_amount(value, "an overload setting", "A", MAX_CURRENT_A, rest.strip())
        if problem:
            problems.append(problem)
        else:
            setting["setting_a"] = value
    return [m.span() for m in matches]


@_cell_parser("an overload")
def parse_overload(text: str) -> Parsed:
    """Overload relay or heater cell -> ``{'overload': text, 'overload_setting': {...}}``.

    'OL 27 A', '27A', 'set 26.5 A' -> kind 'setting' with setting_a; 'heater 4.83' -> kind 'heater'
    (the number read as the heater's current in amperes); '24-32 A' -> kind 'range' (an adjustable
    relay's dial range); 'OL 115%' -> kind 'percent' (of nameplate current); 'class 20 / 30A' -> a
    setting with trip_class 20; 'CL 10', 'SSOL' -> kind 'no-setting'; 'INTEGRAL' -> 'integral'
    (thermal protector in the motor); 'BY VFD' -> 'drive'; 'by soft starter' -> 'soft-starter'.
    A setting written next to a drive or soft-starter word keeps it as ``provided_by``. A heater
    catalogue code ('H1034', 'B6.25') is a problem: its trip current depends on the maker's table.
    """
    prepared = _prepare(text, "an overload")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    setting: dict[str, Any] = {}
    problems: list[str] = []
    rest = cleaned
    m = _OL_CLASS_RE.search(rest)
    if m:
        if int(m["cls"]) in OVERLOAD_TRIP_CLASSES:
            setting["trip_class"] = int(m["cls"])
        else:
            problems.append(f"trip class {m['cls']} is not 5, 10, 15, 20 or 30")
        rest = rest[:m.start()] + " " + rest[m.end():]
    kinds = [_OL_KIND_WORDS[int(k.lastgroup[1:])][0] for k in _OL_KIND_RE.finditer(rest)]
    rest = _AMP_UNIT_RE.sub(" ", _OL_KIND_RE.sub(" ", rest))
    distinct = list(dict.fromkeys(k for k in kinds if k != "heater"))
    if len(distinct) > 1:
        problems.append(f"names more than one kind of overload protection ({', '.join(distinct)})")
    kind = distinct[0] if len(distinct) == 1 else None
    spans = _ol_amounts(rest, setting, problems)
    if kind == "integral" and len(setting) > ("trip_class" in setting):
        problems.append(f"an integral thermal protector has no setting to write: {_quote(cleaned)}")
    notes += _leftover_note(rest, spans, _OL_LABELS)
    if problems:
        return Parsed(problem="; ".join(problems), notes=tuple(notes))
    if "percent" in setting:
        setting["kind"] = "percent"
    elif "range_min_a" in setting:
        setting["kind"] = "range"
    elif "setting_a" in setting:
        setting["kind"] = "heater" if "heater" in kinds else "setting"
        if "heater" in kinds:
            notes.append("heater read as its current in amperes; the maker's heater table governs")
    elif kind in ("integral", "drive", "soft-starter"):
        setting["kind"] = kind
    elif kind == "electronic" or "trip_class" in setting or "heater" in kinds:
        setting["kind"] = "no-setting"
    else:
        return Parsed(problem=f"no overload setting, trip class or kind in {_quote(cleaned)}", notes=tuple(notes))
    if kind in ("drive", "soft-starter", "electronic") and setting["kind"] != "no-setting" and kind != setting["kind"]:
        setting["provided_by"] = kind
    return Parsed({"overload": cleaned, "overload_setting": setting}, notes=tuple(notes))


_DISC_AMOUNT = r"\d[\d,]*(?:\.\d+)?"
_DISC_TOKEN_RE = re.compile(rf"""
      (?P<triple>(?P<ta>{_DISC_AMOUNT})\s*a?\s*/\s*(?P<tp>[1-4])\s*p?\s*/\s*(?P<tf>{_DISC_AMOUNT})\s*(?:a\.?\s*f\.?|a)?)(?![a-z])
    | (?P<pair>(?P<pa>{_DISC_AMOUNT})\s*a?\s*/\s*(?P<pb>{_DISC_AMOUNT}))\s*(?P<pbu>a\.?\s*f\.?|a|p(?:oles?)?)?(?![a-z\d])
    | (?P<hp>{_DISC_AMOUNT})\s*-?\s*(?:h\.?\s*p\.?|horse\s*power)(?![a-z])
    | (?P<fa>{_DISC_AMOUNT})\s*-?\s*(?:a\.?\s*f\.?|a(?:mps?)?\s*fuses?|fuses?)(?![a-z])
    | (?P<sa>{_DISC_AMOUNT})\s*-?\s*a\.?\s*s\.?(?![a-z])
    | (?<![\d.])(?P<poles>[1-4])\s*-?\s*p(?:oles?)?(?![a-z])
    | (?P<amp>{_DISC_AMOUNT})\s*-?\s*(?:a|amps?|amperes?)(?![a-z])\.?
    | (?P<num>{_DISC_AMOUNT})
    | (?P<nf>(?<![a-z])(?:n\.?\s*f\.?(?:d\.?)?|non[\s-]*fused|non[\s-]*fusible|unfused)(?![a-z]))
    | (?P<fused>(?<![a-z])(?:fused|fusible|fsd|fds|fs)(?![a-z]))
    | (?P<cw>(?<![a-z])(?:c/w|w/|with|complete\s+with)(?![a-z]))
    | (?P<lock>(?<![a-z])(?:lockable|lock[\s-]*(?:off|out)|padlockable|lock)(?![a-z]))
    | (?P<brk>(?<![a-z])(?:breakers?|bkrs?|brkrs?|c\.?b\.?|mcc|comb(?:ination|\.)?|panel)(?![a-z]))
    | (?P<integral>(?<![a-z])(?:integral|unit[\s-]*mounted|factory[\s-]*mounted|on[\s-]*unit|built[\s-]*in)(?![a-z]))
    | (?P<general>(?<![a-z])(?:toggle|snap\s*switch|manual\s*(?:motor\s*)?(?:starter|switch)|mms)(?![a-z]))
    | (?P<plug>(?<![a-z])(?:plug|cord(?:\s*(?:and|&)\s*plug)?|receptacle|cord[\s-]*connected)(?![a-z]))
    | (?P<at>(?:@|(?<![a-z])at(?=\s+[a-z]))\s*.*$)
""", re.IGNORECASE | re.VERBOSE)
_DISC_ENCLOSURE_RE = re.compile(r"(?<![a-z0-9])(?:nema|type)\s*-?\s*\d{1,2}[a-z]{0,2}(?![a-z0-9])"
                                r"|(?<![a-z0-9])(?:n?4x|n?3r|n12)(?![a-z0-9])", re.IGNORECASE)
_DISC_LABELS = re.compile(r"disc|disconnect|sw|switch|safety|hd|heavy|duty|gd|general|rated|motor|circuit|size"
                          r"|and|in|of|a|amps?|ss|stainless|enclosed|enclosure|visible|blade|rotary|3ph|ph", re.IGNORECASE)


def _disc_amount(raw: str, what: str, text: str, problems: list[str]) -> float | None:
    value, problem, _ = _to_float(raw, decimal_comma=False)
    problem = problem or _check_amount(value, what, "A", MAX_RATING_A, text)
    if problem:
        problems.append(problem)
        return None
    return value


@_cell_parser("a disconnect")
def parse_disconnect(text: str) -> Parsed:
    """Disconnecting-means cell -> ``{'disconnect': text, 'disconnect_switch': {...}}``.

    '100A NF', '30/3 NF', '200A NF @ PUMP' (location noted) -> a non-fused switch; '60/3/45',
    '60A/3P/45AF', '60 A FUSED c/w 45 A', '60/45' -> a 60 A fused switch with 45 A fuses
    ('AF' in a disconnect cell is amperes of fuse, 'AS' amperes of switch); '30A FUSED' -> fused,
    fuse size not given; '10 HP', '30A 10HP' -> a horsepower rating. Words without a rating:
    'LOCKABLE @ MCC', 'BKR', 'COMB' -> means 'branch-device' (the branch breaker or combination
    starter serves as the disconnect); 'INTEGRAL' -> 'integral'; 'TOGGLE' -> 'general-use-switch';
    'PLUG', 'CORD & PLUG' -> 'plug'.
    """
    prepared = _prepare(text, "a disconnect")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    rest = _DISC_ENCLOSURE_RE.sub(" ", cleaned)
    switch: dict[str, Any] = {}
    amps: list[float] = []
    fuses: list[float] = []
    poles: set[int] = set()
    words: set[str] = set()
    problems: list[str] = []
    spans: list[tuple[int, int]] = []
    after_cw = False
    for m in _DISC_TOKEN_RE.finditer(rest):
        spans.append(m.span())
        kind = next(k for k in ("triple", "pair", "hp", "fa", "sa", "poles", "amp", "num", "nf", "fused", "cw",
                                "lock", "brk", "integral", "general", "plug", "at") if m[k] is not None)
        if kind == "at":
            notes.append(f"location {_quote(m.group().strip())}")
        elif kind == "triple":
            for raw, bucket in ((m["ta"], amps), (m["tf"], fuses)):
                value = _disc_amount(raw, "a disconnect rating", cleaned, problems)
                if value is not None:
                    bucket.append(value)
            poles.add(int(m["tp"]))
        elif kind == "pair":
            first = _disc_amount(m["pa"], "a disconnect rating", cleaned, problems)
            unit = (m["pbu"] or "").lower().replace(".", "").replace(" ", "")
            if unit.startswith("p") or (not unit.startswith("af") and m["pb"].isdigit() and 1 <= int(m["pb"]) <= 4):
                poles.add(int(m["pb"]) if m["pb"].isdigit() else 0)
            else:
                second = _disc_amount(m["pb"], "a fuse rating", cleaned, problems)
                if second is not None:
                    fuses.append(second)
            if first is not None:
                amps.append(first)
        elif kind == "hp":
            value, problem, _ = _to_float(m["hp"], decimal_comma=False)
            problem = problem or _check_amount(value, "a horsepower rating", "hp", MAX_HP, cleaned)
            if problem:
                problems.append(problem)
            else:
                switch["hp"] = value
        elif kind in ("fa", "sa", "amp", "num"):
            value = _disc_amount(m[kind], "a disconnect rating", cleaned, problems)
            if value is None:
                continue
            if kind == "fa" or (kind in ("amp", "num") and after_cw) or (kind == "amp" and amps and "fused" in words):
                fuses.append(value)
            else:
                amps.append(value)
        elif kind == "poles":
            poles.add(int(m["poles"]))
        elif kind == "cw":
            after_cw = True
            continue
        else:
            words.add(kind)
        after_cw = after_cw and kind not in ("fa", "amp", "num")
    if len(amps) > 1:
        if len(amps) == 2 and not fuses and "nf" not in words:
            fuses.append(amps.pop())  # '60A FUSED 45A': the second current is the fuse
        else:
            problems.append(f"more than one switch rating in {_quote(cleaned)}")
    if len(fuses) > 1:
        problems.append(f"more than one fuse rating in {_quote(cleaned)}")
    if len(poles) > 1 or 0 in poles:
        problems.append(f"pole count is not one number from 1 to 4 in {_quote(cleaned)}")
    if "nf" in words and ("fused" in words or fuses):
        problems.append(f"both non-fused and fused in {_quote(cleaned)}")
    notes += _leftover_note(rest, spans, _DISC_LABELS)
    if problems:
        return Parsed(problem="; ".join(dict.fromkeys(problems)), notes=tuple(notes))
    if amps:
        switch["rating_a"] = amps[0]
    if fuses:
        switch["fuse_a"] = fuses[0]
    if poles:
        switch["poles"] = poles.pop()
    if fuses or "fused" in words:
        switch["fused"] = True
    elif "nf" in words:
        switch["fused"] = False
    means = [w for w in ("integral", "general", "plug") if w in words]
    if len(means) > 1:
        return Parsed(problem=f"names more than one kind of disconnect in {_quote(cleaned)}", notes=tuple(notes))
    if means:
        switch["means"] = {"general": "general-use-switch"}.get(means[0], means[0])
    elif "rating_a" in switch or "hp" in switch or "fused" in switch:
        switch["means"] = "switch"
    elif words & {"lock", "brk"}:
        switch["means"] = "branch-device"
    else:
        return Parsed(problem=f"no disconnect rating or kind in {_quote(cleaned)}", notes=tuple(notes))
    return Parsed({"disconnect": cleaned, "disconnect_switch": switch}, notes=tuple(notes))


_LENGTH_RE = re.compile(rf"""
      (?P<n>{_DEC})\s*(?:
          (?P<m>m|metres?|meters?|mtrs?)(?![a-z])\.?
        | (?P<ft>ft|feet|foot|')(?![a-z'])\.?
        | (?P<km>km)(?![a-z])
      )
""", re.IGNORECASE | re.VERBOSE)
_LENGTH_LABELS = re.compile(r"approx|approximately|run|length|len|route|circuit|one|way|est|estimated|about|ca|total", re.IGNORECASE)
#: One international foot is exactly 0.3048 m (international yard and pound agreement, 1959).
FOOT_M = 0.3048
MAX_LENGTH_M = 100_000.0


@_cell_parser("a run length")
def parse_length_m(text: str) -> Parsed:
    """One-way circuit length [m] from '45 m', '45m', '150 ft', "150'", '150 feet', '0.2 km'.

    Feet are converted (1 ft = 0.3048 m) and the conversion is noted. A number with no unit is a
    problem: the column header may carry it (see :func:`with_header_hint`).
    """
    prepared = _prepare(text, "a run length")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    found = list(_LENGTH_RE.finditer(cleaned))
    if not found:
        if _NUMBER_RE.search(cleaned):
            return Parsed(problem=f"no unit (m or ft) on the length {_quote(cleaned)}", notes=tuple(notes))
        return Parsed(problem=f"no length in {_quote(cleaned)}", notes=tuple(notes))
    if len(found) > 1:
        return Parsed(problem=f"more than one length in {_quote(cleaned)}", notes=tuple(notes))
    m = found[0]
    value, problem, note = _to_float(m["n"], decimal_comma=False)
    if value is not None:
        value = value * (FOOT_M if m["ft"] else 1000.0 if m["km"] else 1.0)
    problem = problem or _check_amount(value, "a run length", "m", MAX_LENGTH_M, cleaned)
    notes += ([note] if note else []) + _leftover_note(cleaned, [m.span()], _LENGTH_LABELS)
    if problem:
        return Parsed(problem=problem, notes=tuple(notes))
    if m["ft"]:
        notes.append(f"{_fmt_num(float(m['n'].replace(',', '')))} ft converted to {_short_num(round(value, 3))} m")
    return Parsed(value, notes=tuple(notes))


_MOCP_TOKEN_RE = re.compile(r"""
      (?P<fuse>(?<![a-z])(?:fuses?|fusible|fused|mfs|time[\s-]*delay|td|dual[\s-]*element|class\s*(?:rk[15]|j|cc|t))(?![a-z0-9]))
    | (?P<hacr>(?<![a-z])hacr(?![a-z]))
    | (?P<brk>(?<![a-z])(?:c\.?b\.?|c/b|bkrs?|brkrs?|ckt\.?\s*bkr|circuit\s*breakers?|breakers?|mccb|itb)(?![a-z]))
""", re.IGNORECASE | re.VERBOSE)
_MOCP_LABELS = re.compile(r"max|maximum|size|mocp|mop|ocp|ocpd|overcurrent|protection|protective|device|rating|or|and"
                          r"|type|a|amps?|amperes?|ckt|circuit|of|rated|nameplate|np|per|mfr", re.IGNORECASE)


@_cell_parser("a maximum overcurrent rating")
def parse_mocp(text: str) -> Parsed:
    """Nameplate maximum overcurrent device of packaged equipment -> ``{'rating_a', 'allows', 'hacr'}``.

    'MAX FUSE 40', 'Maximum Size Fuse 40 A', 'MFS 40' -> allows 'fuse' (a fuse-only marking);
    '40A MAX FUSE OR HACR', 'MAX FUSE/CKT BKR 40' -> 'fuse-or-breaker'; 'MAX CKT BKR 40' ->
    'breaker'; 'MOCP 40 A', 'MOP 40', '40' -> 'unstated'. ``hacr`` is True when HACR is named.
    """
    prepared = _prepare(text, "a maximum overcurrent rating")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    kinds, spans = set(), []
    for m in _MOCP_TOKEN_RE.finditer(cleaned):
        spans.append(m.span())
        kinds.add(m.lastgroup)
    rest = _MOCP_TOKEN_RE.sub(" ", cleaned)
    rest = _AMP_UNIT_RE.sub(" ", rest)
    pair = re.search(r"\d\s*/\s*\d", rest)
    if pair:  # '40/50': two ratings (or a per-voltage pair), never a fraction of an ampere here
        return Parsed(problem=f"{_quote(cleaned)} holds two values; cannot tell which is the maximum rating",
                      notes=tuple(notes))
    number = _single_number(rest, "a maximum overcurrent rating", "A", MAX_RATING_A, labels=_MOCP_LABELS)
    if number.value is None:
        return _with_notes(number, notes)
    breaker = bool(kinds & {"hacr", "brk"})
    allows = ("fuse-or-breaker" if "fuse" in kinds and breaker else "fuse" if "fuse" in kinds
              else "breaker" if breaker else "unstated")
    value = {"rating_a": number.value, "allows": allows}
    if "hacr" in kinds:
        value["hacr"] = True
    return Parsed(value, notes=tuple(notes) + number.notes)


_RISE_RE = re.compile(r"(?P<n>\d+(?:\.\d+)?)\s*(?:°\s*c|deg(?:rees?)?\.?\s*c|c|k)?(?![a-z0-9])", re.IGNORECASE)
_RISE_LABELS = re.compile(r"rise|temp|temperature|rated|amb|ambient|max|insulation|ins|class|[abfh]|over|above|by|res"
                          r"|resistance|deg|degrees|c", re.IGNORECASE)


@_cell_parser("a temperature rise")
def parse_temp_rise_c(text: str) -> Parsed:
    """Rated temperature rise [°C] from '40 °C', '40C', '40 deg C', 'rise 80 K', '40'. One number 10-200."""
    prepared = _prepare(text, "a temperature rise")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    cleaned = cleaned.replace("\u00b0", "°")
    found = list(_RISE_RE.finditer(cleaned))
    if len(found) != 1:
        what = "no" if not found else "more than one"
        return Parsed(problem=f"{what} temperature rise in {_quote(cleaned)}", notes=tuple(notes))
    value = float(found[0]["n"])
    if not 10 <= value <= 200:
        return Parsed(problem=f"{_short_num(value)} °C is outside 10-200 °C for a temperature rise", notes=tuple(notes))
    return Parsed(value, notes=tuple(notes + _leftover_note(cleaned, [found[0].span()], _RISE_LABELS)))


_BYPASS_RE = re.compile(r"(?<![a-z])by[\s-]*pass(?:ed|es)?(?![a-z])", re.IGNORECASE)


@_cell_parser("a starting method")
def parse_starting_details(text: str) -> Parsed:
    """:func:`parse_starting` as a merge dict, with ``drive_bypass`` True for a drive 'W/ BYPASS'."""
    parsed = parse_starting(text)
    if parsed.value is None:
        return parsed
    value: dict[str, Any] = {"starting": parsed.value}
    if parsed.value == "vfd" and _BYPASS_RE.search(text):
        value["drive_bypass"] = True
    return Parsed(value, parsed.problem, notes=parsed.notes)


_HINT_LENGTH_RE = re.compile(r"\((?P<u>m|metres?|meters?|ft|feet)\)|(?<![a-z])(?P<w>metres|meters|feet|ft)(?![a-z])",
                             re.IGNORECASE)
_HINT_HAS_UNIT_RE = re.compile(r"[a-z']", re.IGNORECASE)
_HINT_FUSE_RE = re.compile(r"(?<![a-z])(?:fuses?|mfs)(?![a-z])", re.IGNORECASE)
_HINT_BREAKER_RE = re.compile(r"(?<![a-z])(?:hacr|breakers?|bkrs?|brkrs?|cb)(?![a-z])", re.IGNORECASE)


def with_header_hint(field: str, text: str, header: str) -> str:
    """The cell text completed by what its column header says, for the fields where that matters.

    A bare run length under 'LENGTH (FT)' gets ' ft'; a bare rating under 'MAX FUSE' gets
    ' MAX FUSE' (a fuse-only marking), under 'MAX FUSE OR HACR BKR' ' MAX FUSE OR HACR BREAKER'.
    Cells that state their own unit or device keep it (the cell wins). Other fields: unchanged.
    """
    if not text or not header:
        return text
    if field == "length" and not _HINT_HAS_UNIT_RE.search(text):
        m = _HINT_LENGTH_RE.search(header)
        if m:
            unit = (m["u"] or m["w"]).lower()
            return f"{text} {'ft' if unit.startswith('f') else 'm'}"
    if field == "ambient" and not _HINT_HAS_UNIT_RE.search(text):  # 'AMBIENT (°F)' over a bare '104'
        m = _HINT_TEMP_RE.search(_clean_glyphs(header))
        if m:
            return f"{text} °{m['u'].upper()}"
    if field == "mocp" and not _MOCP_TOKEN_RE.search(text):
        fuse, breaker = _HINT_FUSE_RE.search(header), _HINT_BREAKER_RE.search(header)
        if fuse and breaker:
            return f"{text} MAX FUSE OR {'HACR ' if 'hacr' in header.lower() else ''}BREAKER"
        if fuse:
            return f"{text} MAX FUSE"
        if breaker:
            return f"{text} MAX {'HACR ' if 'hacr' in header.lower() else ''}BREAKER"
    return text


# ---------------------------------------------------------------------------
# Installation conditions: ambient temperature and conductor count
# ---------------------------------------------------------------------------

_HINT_TEMP_RE = re.compile(r"(?:°\s*|deg(?:rees?)?\.?\s*|\(\s*)(?P<u>[cf])(?![a-z])", re.IGNORECASE)
_TEMP_RE = re.compile(r"(?P<neg>-\s*)?(?P<n>\d+(?:\.\d+)?)\s*(?P<u>°\s*[cf]|deg(?:rees?)?\.?\s*[cf]|[cf])?(?![a-z0-9])",
                      re.IGNORECASE)
_TEMP_LABELS = re.compile(r"amb|ambient|temp|temperature|max|maximum|design|room|outdoor|indoor|outside|inside"
                          r"|summer|deg|degrees|approx", re.IGNORECASE)
MIN_AMBIENT_C, MAX_AMBIENT_C = -50.0, 100.0  # mirror schemas/motor.schema.json ambient_c


@_cell_parser("an ambient temperature")
def parse_ambient_c(text: str) -> Parsed:
    """Ambient temperature [°C] from '40 °C', '40C', '40 deg C', '104 °F', '104F', '-10 C'.

    Fahrenheit is converted (°C = (°F - 32) / 1.8) and the conversion noted. A bare number is a
    problem: 40 and 104 are both plausible ambients in different units (the column header may carry
    the unit, see :func:`with_header_hint`). One number, -50 to 100 °C.
    """
    prepared = _prepare(text, "an ambient temperature")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    cleaned = cleaned.replace("\u00b0", "°")
    found = list(_TEMP_RE.finditer(cleaned))
    if len(found) != 1:
        what = "no" if not found else "more than one"
        return Parsed(problem=f"{what} ambient temperature in {_quote(cleaned)}", notes=tuple(notes))
    m = found[0]
    if not m["u"]:
        return Parsed(problem=f"no unit on the ambient temperature {_quote(cleaned)}; write °C or °F",
                      notes=tuple(notes))
    value = float(m["n"]) * (-1 if m["neg"] else 1)
    if m["u"].strip()[-1].lower() == "f":
        celsius = (value - 32) / 1.8
        notes.append(f"{_short_num(value)} °F converted to {_short_num(round(celsius, 1))} °C")
        value = round(celsius, 1)
    if not MIN_AMBIENT_C <= value <= MAX_AMBIENT_C:
        return Parsed(problem=f"{_short_num(value)} °C is outside {_short_num(MIN_AMBIENT_C)} to "
                              f"{_short_num(MAX_AMBIENT_C)} °C for an ambient temperature", notes=tuple(notes))
    return Parsed(value, notes=tuple(notes + _leftover_note(cleaned, [m.span()], _TEMP_LABELS)))


_COUNT_UNIT_RE = re.compile(r"(?<![a-z])(?:ccc|current[\s-]*carrying|cond(?:uctor)?s?|wires?|in\s+(?:raceway|conduit|cable))"
                            r"(?![a-z])", re.IGNORECASE)
MAX_CONDUCTOR_COUNT = 200  # mirrors schemas/motor.schema.json current_carrying_conductors


@_cell_parser("a conductor count")
def parse_conductor_count(text: str) -> Parsed:
    """Number of current-carrying conductors in one raceway or cable from '6', '6 CCC', '9 conductors'."""
    prepared = _prepare(text, "a conductor count")
    if isinstance(prepared, Parsed):
        return prepared
    cleaned, notes = prepared
    parsed = _single_number(_COUNT_UNIT_RE.sub(" ", cleaned), "a conductor count", "conductors",
                            float(MAX_CONDUCTOR_COUNT))
    if parsed.value is None:
        return _with_notes(parsed, notes)
    if parsed.value != int(parsed.value):
        return Parsed(problem=f"a conductor count must be a whole number, not {_quote(cleaned)}", notes=tuple(notes))
    return _with_notes(Parsed(int(parsed.value), notes=parsed.notes), notes)
