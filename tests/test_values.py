"""Unit tests for the cell value parsers (checker/ingest/values.py).

Tables of (cell text, expected value) for every written form the parsers accept, plus
placeholders, partly readable cells (value + notes) and unreadable cells (problem).
All cell texts are invented in the styles described in the schedule-format reference notes.
"""
from __future__ import annotations

import math

import pytest

from checker.ingest import values
from checker.model import Parsed

ALL_PARSERS = [values.parse_hp, values.parse_kw, values.parse_current_a, values.parse_voltage_phase,
               values.parse_voltage, values.parse_phase, values.parse_duty, values.parse_starting,
               values.parse_conductor, values.parse_device, values.parse_service_factor, values.parse_text]
NAMES = lambda p: p.__name__


def read(parser, text: str):
    """The value of a cell that must read cleanly."""
    parsed = parser(text)
    assert parsed.problem is None, f"{text!r}: {parsed.problem}"
    assert not parsed.placeholder
    return parsed.value


def problem_of(parser, text: str) -> str:
    parsed = parser(text)
    assert parsed.problem, f"{text!r} should be a problem, got {parsed}"
    return parsed.problem


# --- placeholders and garbage, every parser ---------------------------------------------

PLACEHOLDERS = ["", "   ", "TBD", "T.B.D.", "tbd", "N/A", "n/a", "NA", "-", "--", "---", "\u2014", "\u2013",
                "by others", "BY OTHERS", "BY MECH", "BY MECH.", "by div 23", "FBO", "TBC", "?"]


@pytest.mark.parametrize("parser", ALL_PARSERS, ids=NAMES)
@pytest.mark.parametrize("text", PLACEHOLDERS)
def test_placeholders(parser, text):
    assert parser(text) == Parsed(placeholder=True)


@pytest.mark.parametrize("parser", ALL_PARSERS, ids=NAMES)
def test_none_and_nan_cells_are_placeholders(parser):
    assert parser(None).placeholder
    assert parser(float("nan")).placeholder


GARBAGE = ["banana", "=HYPERLINK(\"x\")", "=A1", "\u96fb\u52d5\u6a5f", "\x00\x01banana\x02", "x" * 1_000_000,
           "!!!", "SPARE"]


@pytest.mark.parametrize("parser", [p for p in ALL_PARSERS if p is not values.parse_text], ids=NAMES)
@pytest.mark.parametrize("text", GARBAGE, ids=["banana", "formula", "cellref", "non-latin", "controls",
                                               "1MB", "punct", "spare"])
def test_garbage_is_a_one_line_problem(parser, text):
    parsed = parser(text)
    assert parsed.value is None and not parsed.placeholder
    assert parsed.problem and "\n" not in parsed.problem
    assert "internal parser error" not in parsed.problem


@pytest.mark.parametrize("parser", ALL_PARSERS, ids=NAMES)
def test_problem_quotes_are_truncated(parser):
    text = "=HYPERLINK(\"" + "y" * 200 + "\")"
    problem = problem_of(parser, text)
    quoted = problem[problem.index("'") + 1:problem.rindex("'")]
    assert len(quoted) <= values.QUOTE_CHARS and quoted.endswith("...")


def test_one_megabyte_text_is_refused_quickly():
    problem = problem_of(values.parse_text, "a" * 1_000_000)
    assert "too long" in problem and "1000000 characters" in problem


@pytest.mark.parametrize("parser", ALL_PARSERS, ids=NAMES)
def test_formula_is_named(parser):
    assert "formula" in problem_of(parser, '=HYPERLINK("x")')


def test_control_characters_are_removed_and_noted():
    parsed = values.parse_hp("10\x07 HP")
    assert parsed.value == 10.0 and "removed control characters" in parsed.notes
    assert "\x07" not in problem_of(values.parse_hp, "\x07banana")
    assert "\\x07" in problem_of(values.parse_hp, "=SUM(\x07)")  # quoted raw text shows the escape


def test_control_only_cell_is_blank_and_a_lone_footnote_mark_is_a_problem():
    assert values.parse_hp("\x1b\n\x1b").placeholder
    assert "only a footnote mark" in problem_of(values.parse_hp, "*")
    assert values.parse_hp("TBD*").placeholder


@pytest.mark.parametrize("parser", ALL_PARSERS, ids=NAMES)
def test_problem_is_one_line_even_when_the_cell_has_line_breaks(parser):
    problem = problem_of(parser, "=SUM(A1,\nA2)")
    assert "\n" not in problem and "\\x0a" in problem


def test_non_str_input_is_read_as_text():
    assert values.parse_hp(10).value == 10.0
    assert values.parse_current_a(7.5).value == 7.5


# --- horsepower ---------------------------------------------------------------------------

HP_CASES = [
    ("7-1/2", 7.5), ("7 1/2", 7.5), ("7\u00bd", 7.5), ("\u00bd", 0.5), ("1/3", 1 / 3), ("1/60", 1 / 60),
    ("0.5", 0.5), (".5", 0.5), ("10", 10.0), ("10 HP", 10.0), ("10hp", 10.0), ("10 H.P.", 10.0),
    ("7.5 HP", 7.5), ("1-1/2 HP", 1.5), ("\u00be HP", 0.75), ("2,500 HP", 2500.0), ("25HP", 25.0),
    ("\uff11\uff10 HP", 10.0),  # full-width digits
]


@pytest.mark.parametrize(("text", "expected"), HP_CASES)
def test_hp(text, expected):
    assert read(values.parse_hp, text) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(("text", "expected", "mark"), [
    ("20*", 20.0, "'*'"), ("60 (2)", 60.0, "'(2)'"), ("60\u00b9", 60.0, "'\u00b9'"), ("7-1/2 HP note 3", 7.5, "note 3"),
])
def test_footnote_marks_are_removed_and_noted(text, expected, mark):
    parsed = values.parse_hp(text)
    assert parsed.value == expected and parsed.problem is None
    assert any("footnote" in n and mark in n for n in parsed.notes)


def test_hp_in_kw_is_a_problem_with_the_kw_noted():
    parsed = values.parse_hp("5.5 kW")
    assert parsed.value is None and parsed.problem == "value is in kW, not hp"
    assert "kW value: 5.5" in parsed.notes


@pytest.mark.parametrize(("text", "expected", "note"), [
    ("10 HP 460V", 10.0, "ignored '460V'"),
    ("10 HP @ 1800 RPM", 10.0, "ignored '1800 RPM'"),
    ("10 hp (7.5 kW)", 10.0, "ignored '7.5 kW'"),
    ("15 BHP", 15.0, "ignored 'BHP'"),
])
def test_hp_with_other_words(text, expected, note):
    parsed = values.parse_hp(text)
    assert parsed.value == expected and parsed.problem is None and note in parsed.notes


@pytest.mark.parametrize(("text", "fragment"), [
    ("1/30, 1/15", "more than one number"), ("-5", "negative"), ("0", "greater than zero"),
    ("3/2", "two values"), ("ten", "no number"), ("200000", "limit"), ("7 9/8", "proper fraction"),
    ("9" * 299, "limit"),
])
def test_hp_problems(text, fragment):
    problem = problem_of(values.parse_hp, text)
    assert fragment in problem and len(problem) < 200


# --- kW, current, service factor ------------------------------------------------------------

@pytest.mark.parametrize(("text", "expected"), [
    ("5.5", 5.5), ("5.5 kW", 5.5), ("5,5 kW", 5.5), ("0,75kW", 0.75), ("1,200.5 kW", 1200.5), ("37 KW", 37.0),
])
def test_kw(text, expected):
    assert read(values.parse_kw, text) == expected


def test_kw_decimal_comma_is_noted_and_ambiguous_comma_refused():
    assert any("decimal comma" in n for n in values.parse_kw("5,5 kW").notes)
    assert "thousands or decimals" in problem_of(values.parse_kw, "1,200 kW")
    parsed = values.parse_kw("10 HP")
    assert parsed.problem == "value is in hp, not kW" and "hp value: 10" in parsed.notes


CURRENT_CASES = [
    ("56", 56.0), ("56 A", 56.0), ("56A", 56.0), ("56.0 amps", 56.0), ("1,200 A", 1200.0), ("FLA 56", 56.0),
    ("5 6/10", 5.6), ("1.2 kA", 1200.0), ("56 A @ 460V", 56.0), ("7.6 Amperes", 7.6),
]


@pytest.mark.parametrize(("text", "expected"), CURRENT_CASES)
def test_current(text, expected):
    assert read(values.parse_current_a, text) == pytest.approx(expected)


def test_current_pair_takes_the_first_and_says_so():
    parsed = values.parse_current_a("7.6/3.8")
    assert parsed.value == 7.6 and parsed.problem is None
    assert any("pair" in n for n in parsed.notes)


@pytest.mark.parametrize(("text", "fragment"), [
    ("5,5", "decimal comma"), ("56 / 28 / 14", "more than one number"), ("-3 A", "negative"), ("0 A", "greater"),
    ("25000 A", "limit"),
])
def test_current_problems(text, fragment):
    assert fragment in problem_of(values.parse_current_a, text)


@pytest.mark.parametrize(("text", "expected"), [
    ("1.15", 1.15), ("SF 1.15", 1.15), ("1.0", 1.0), ("S.F. 1.25", 1.25), ("115%", 1.15), ("1", 1.0),
])
def test_service_factor(text, expected):
    assert read(values.parse_service_factor, text) == pytest.approx(expected)


@pytest.mark.parametrize("text", ["0.9", "2.5", "SF", "1.15/1.0"])
def test_service_factor_problems(text):
    problem_of(values.parse_service_factor, text)


# --- voltage / phase ----------------------------------------------------------------------

VP_CASES = [
    ("575/3/60", {"voltage_v": 575.0, "phase": 3, "frequency_hz": 60}),
    ("460-3-60", {"voltage_v": 460.0, "phase": 3, "frequency_hz": 60}),
    ("208/230-1", {"voltage_v": 208.0, "voltage_alternatives_v": [230.0], "phase": 1}),
    ("208/230-1-60", {"voltage_v": 208.0, "voltage_alternatives_v": [230.0], "phase": 1, "frequency_hz": 60}),
    ("230/208-1", {"voltage_v": 230.0, "voltage_alternatives_v": [208.0], "phase": 1}),
    ("575V 3\u00d8 60Hz", {"voltage_v": 575.0, "phase": 3, "frequency_hz": 60}),
    ("575 V, 3 PH", {"voltage_v": 575.0, "phase": 3}),
    ("120/1", {"voltage_v": 120.0, "phase": 1}),
    ("120V-1\u00d8", {"voltage_v": 120.0, "phase": 1}),
    ("600V", {"voltage_v": 600.0}),
    ("480", {"voltage_v": 480.0}),
    ("3\u00d8", {"phase": 3}),
    ("3 PH", {"phase": 3}),
    ("1", {"phase": 1}),
    ("3", {"phase": 3}),
    ("three phase", {"phase": 3}),
    ("single phase", {"phase": 1}),
    ("250 VDC", {"voltage_v": 250.0, "current_type": "dc"}),
    ("250V DC", {"voltage_v": 250.0, "current_type": "dc"}),
    ("460/60/3", {"voltage_v": 460.0, "phase": 3, "frequency_hz": 60}),
    ("208-230/1/60", {"voltage_v": 208.0, "voltage_alternatives_v": [230.0], "phase": 1, "frequency_hz": 60}),
    ("4.16 kV", {"voltage_v": 4160.0}),
    ("4,160V", {"voltage_v": 4160.0}),
    ("3~ 400V 50Hz", {"voltage_v": 400.0, "phase": 3, "frequency_hz": 50}),
    ("600 VAC", {"voltage_v": 600.0, "current_type": "ac"}),
    ("480Y/277V 3PH", {"voltage_v": 480.0, "phase": 3}),
]


@pytest.mark.parametrize(("text", "expected"), VP_CASES)
def test_voltage_phase(text, expected):
    assert read(values.parse_voltage_phase, text) == expected


@pytest.mark.parametrize(("text", "fragment"), [
    ("2", "phase 2 is not 1 or 3"), ("2 PH", "phase 2"), ("two phase", "phase 2"), ("575/3/55", "55 Hz"),
    ("20000V", "outside"), ("5", "neither a phase"), ("250 VDC 3PH", "DC supply"), ("1PH 3PH", "more than one phase"),
    ("volts", "no voltage or phase"),
])
def test_voltage_phase_problems(text, fragment):
    assert fragment in problem_of(values.parse_voltage_phase, text)


def test_voltage_phase_unknown_word_is_noted():
    parsed = values.parse_voltage_phase("575V 3\u00d8 60Hz TEFC")
    assert parsed.value == {"voltage_v": 575.0, "phase": 3, "frequency_hz": 60}
    assert "ignored 'TEFC'" in parsed.notes


@pytest.mark.parametrize(("text", "expected"), [
    ("600V", {"voltage_v": 600.0}), ("208/230", {"voltage_v": 208.0, "voltage_alternatives_v": [230.0]}),
    ("575", {"voltage_v": 575.0}),
])
def test_voltage_only(text, expected):
    assert read(values.parse_voltage, text) == expected


@pytest.mark.parametrize("text", ["3", "3PH"])
def test_voltage_cell_without_volts_is_a_problem(text):
    assert "no voltage" in problem_of(values.parse_voltage, text)


@pytest.mark.parametrize(("text", "phase"), [
    ("3", 3), ("3\u00d8", 3), ("3PH", 3), ("Three", 3), ("1\u00d8", 1), ("single", 1), ("1 phase", 1),
])
def test_phase_only(text, phase):
    assert read(values.parse_phase, text) == {"phase": phase}


def test_phase_cell_without_phase_is_a_problem():
    assert "no phase" in problem_of(values.parse_phase, "575")


# --- duty ---------------------------------------------------------------------------------
# Time ratings 5/15/30/60 min and 'continuous rated' are the columns of NEC Table 430.22(E)
# and CEC Table 27 (reference notes, code-values sections 5 and 16).

DUTY_CASES = [
    ("continuous", {"service": "continuous"}), ("cont.", {"service": "continuous"}),
    ("CONT", {"service": "continuous"}), ("S1", {"service": "continuous"}),
    ("intermittent, 5 min", {"service": "intermittent", "rating": "5-min"}),
    ("INT 15 MIN", {"service": "intermittent", "rating": "15-min"}),
    ("intermittent 15-minute", {"service": "intermittent", "rating": "15-min"}),
    ("short-time 15 min", {"service": "short-time", "rating": "15-min"}),
    ("short time, 5 min.", {"service": "short-time", "rating": "5-min"}),
    ("periodic 30 min", {"service": "periodic", "rating": "30-min"}),
    ("periodic, 60 minute", {"service": "periodic", "rating": "60-min"}),
    ("varying", {"service": "varying"}), ("varying duty", {"service": "varying"}),
    ("intermittent (continuous rated)", {"service": "intermittent", "rating": "continuous"}),
    ("intermittent 1 hr", {"service": "intermittent", "rating": "60-min"}),
    ("S2 30 min", {"service": "short-time", "rating": "30-min"}),
    ("Continuous duty", {"service": "continuous"}),
]


@pytest.mark.parametrize(("text", "expected"), DUTY_CASES)
def test_duty(text, expected):
    assert read(values.parse_duty, text) == expected


@pytest.mark.parametrize(("text", "fragment"), [
    ("intermittent 10 min", "not 5, 15, 30 or 60"), ("periodic 45 minutes", "not 5, 15, 30 or 60"),
    ("15 min", "no duty type"), ("S3", "IEC duty type S3"), ("continuous intermittent", "more than one duty"),
    ("periodic 5 min continuous rated", "both a time rating"),
])
def test_duty_problems(text, fragment):
    assert fragment in problem_of(values.parse_duty, text)


def test_continuous_duty_drops_a_time_rating_with_a_note():
    parsed = values.parse_duty("continuous 60 min")
    assert parsed.value == {"service": "continuous"} and parsed.notes


# --- starting method ----------------------------------------------------------------------

STARTING_CASES = {
    "full-voltage": ["FVNR", "FVR", "FVC", "DOL", "D.O.L.", "ATL", "across-the-line", "across the line",
                     "full voltage", "MAG", "magnetic", "direct on line", "DFVNR"],
    "autotransformer": ["RVAT", "autotransformer", "auto-transformer"],
    "star-delta": ["Y-D", "Y/D", "star-delta", "wye-delta", "YDC", "YDO", "Y-Delta"],
    "resistor": ["primary resistor", "resistor"],
    "reactor": ["reactor", "primary reactor"],
    "part-winding": ["PW", "part winding", "part-winding"],
    "soft-start": ["soft start", "soft-starter", "RVSS", "SS", "solid state"],
    "vfd": ["VFD", "VSD", "AFD", "ASD", "variable frequency drive", "drive", "VFD c/w bypass"],
    "two-speed": ["2S1W", "2S2W", "two speed", "2-speed"],
}


@pytest.mark.parametrize(("text", "expected"), [(t, k) for k, ts in STARTING_CASES.items() for t in ts])
def test_starting(text, expected):
    assert read(values.parse_starting, text) == expected


def test_starting_notes_nema_size_and_manual():
    parsed = values.parse_starting("combination starter FVNR size 1")
    assert parsed.value == "full-voltage" and any("size 1" in n for n in parsed.notes)
    for text in ("manual", "MS", "manual starter"):
        parsed = values.parse_starting(text)
        assert parsed.value == "full-voltage" and any("manual" in n for n in parsed.notes)


def test_starting_unknown_word_next_to_a_method_is_noted():
    parsed = values.parse_starting("FVNR XYZ")
    assert parsed.value == "full-voltage" and "ignored 'XYZ'" in parsed.notes


@pytest.mark.parametrize(("text", "fragment"), [
    ("banana", "no starting method"), ("RVNR", "reduced-voltage starting without the method"),
    ("VFD RVAT", "more than one starting method"),
])
def test_starting_problems(text, fragment):
    assert fragment in problem_of(values.parse_starting, text)


# --- conductors ---------------------------------------------------------------------------

def cond(size, cps=None, sets=1, material="cu", stated=False, **extra):
    value = {"sets": sets}
    if cps is not None:
        value["conductors_per_set"] = cps
    value.update(size=size, material=material, material_stated=stated, **extra)
    return value


CONDUCTOR_CASES = [
    ("3 #4 RW90 CU + #8 BOND", cond("4", 3, stated=True, insulation="RW90", bond_size="8")),
    ('3#10, 1#10G, 3/4"C', cond("10", 3, bond_size="10", raceway='3/4"')),
    ("(3) 4 AWG CU THWN-2", cond("4", 3, stated=True, insulation="THWN-2")),
    ("3-#4 & 1-#8 GND", cond("4", 3, bond_size="8")),
    ("3-#4 and 1-#6 gnd", cond("4", 3, bond_size="6")),
    ("3C #4 TECK90", cond("4", 3, insulation="TECK90")),
    ("3/C #6 TECK90", cond("6", 3, insulation="TECK90")),
    ("#1/0", cond("1/0")), ("1/0", cond("1/0")), ("00", cond("2/0")), ("000", cond("3/0")), ("0000", cond("4/0")),
    ("250 MCM", cond("250")), ("250MCM", cond("250")), ("#250 MCM", cond("250")), ("250 kcmil", cond("250")),
    ("250kcmil", cond("250")),
    ("3-500mcm thw", cond("500", 3, insulation="THW")),
    ("2 sets of 3-500 kcmil", cond("500", 3, sets=2)),
    ("2-sets of 350 MCM", cond("350", sets=2)),
    ("(2) 3#4/0", cond("4/0", 3, sets=2)),
    ("3x500kcmil per phase", cond("500", 3)),
    ("2x500 kcmil per phase", cond("500", sets=2)),
    ("3#250MCM-AL", cond("250", 3, material="al", stated=True)),
    ("3 #4/0 AL", cond("4/0", 3, material="al", stated=True)),
    ("3 #2 ALUMINUM", cond("2", 3, material="al", stated=True)),
    ("3 #1 ACM", cond("1", 3, material="al", stated=True)),
    ("#12", cond("12")), ("12", cond("12")), ("12 AWG", cond("12")),
    ("3#12 TECK90", cond("12", 3, insulation="TECK90")),
    ("#6/3 TECK", cond("6", 3, insulation="TECK")),
    ("2#12 + #12 GND", cond("12", 2, bond_size="12")),
    ("3 #6 + #10 BOND", cond("6", 3, bond_size="10")),
    ("3-1/C #4", cond("4", 3)),
    ("18", cond("18")), ("16", cond("16")),
    ('3/4" 4 #12', cond("12", 4, raceway='3/4"')),
    ('3#12 1/2"C', cond("12", 3, raceway='1/2"')),
    ('3 #8 & #10 GND, 3/4" EMT', cond("8", 3, bond_size="10", raceway='3/4" EMT')),
    ('3#4 CU THWN in 1-1/2\u2033 EMT', cond("4", 3, stated=True, insulation="THWN", raceway='1-1/2" EMT')),
    ("3#6 + 1#10 G 21C", cond("6", 3, bond_size="10", raceway="21 mm")),
    ("3 #3/0 + #6 BOND, 53 mm PVC", cond("3/0", 3, bond_size="6", raceway="53 mm PVC")),
    ("3 #6 CU + #10 AL BOND", cond("6", 3, stated=True, bond_size="10", bond_material="al")),
    ("3#6 c/w #10 bond", cond("6", 3, bond_size="10")),
    ("3#4 bond #8", cond("4", 3, bond_size="8")),
    ("3#10 THHN, 1#10 GRN", cond("10", 3, insulation="THHN", bond_size="10")),
    ("1,000 kcmil", cond("1000")),
    ("3 x 1/0", cond("1/0", 3)),
    ("(3) 500 kcmil ALUMINUM in (2) 4\"", cond("500", 3, material="al", stated=True, raceway='(2) 4"')),
    ("3/C 500 KCMIL CU TECK 90 XLPE -40\u00b0C FT4 1000V HL", cond("500", 3, stated=True, insulation="TECK90")),
    ("6 x 500kcmil XHHW per phase in 3-inch trade size EMT", cond("500", sets=6, insulation="XHHW", raceway='3" EMT')),
    ('3 #6 in 3\u00bd-inch RMC', cond("6", 3, raceway='3-1/2" RMC')),
]


@pytest.mark.parametrize(("text", "expected"), CONDUCTOR_CASES)
def test_conductor(text, expected):
    assert read(values.parse_conductor, text) == expected


@pytest.mark.parametrize(("text", "note"), [
    ("3#4 XYZ", "ignored 'XYZ'"),
    ("00", "read '00' as 2/0"),
    ("3 #1 ACM", "aluminium alloy"),
    ("3x500kcmil per phase", "confirm whether 3 parallel sets"),
    ("3#4, 1#6N", "ignored neutral"),
    ("3#4 #8", "not marked as bond or ground"),
    ("3#4 + bond", "without its size"),
    ("#8 BOND", "only a bond/ground conductor"),
    ("500", "read as 500 kcmil"),
])
def test_conductor_notes(text, note):
    parsed = values.parse_conductor(text)
    assert parsed.value is not None and parsed.problem is None
    assert any(note in n for n in parsed.notes), parsed.notes


@pytest.mark.parametrize(("text", "fragment"), [
    ("25 mm\u00b2", "metric size"), ("3#16 sq.mm", "metric size"),
    ("#5", "'#5' is not a standard AWG size"), ("#7", "'#7' is not a standard AWG size"),
    ("275 kcmil", "'275 kcmil' is not a standard kcmil size"), ("#20", "not a standard AWG size"),
    ("4 kcmil", "not a standard kcmil size"), ("5/0", "not a standard conductor size"),
    ("30 #4", "conductors per set is outside 1-12"), ("3#4 CU AL", "both copper and aluminium"),
    ("2 sets of (3) 3#4", "conflicting numbers of parallel sets"),
    ('1-1/2" EMT', "no conductor size"), ("banana", "no conductor size"),
])
def test_conductor_problems(text, fragment):
    assert fragment in problem_of(values.parse_conductor, text)


def test_bad_bond_size_is_a_problem_but_keeps_the_phase_conductors():
    parsed = values.parse_conductor("3#4 + #7 bond")
    assert "'#7'" in parsed.problem and parsed.value["size"] == "4"
    assert "bond_size" not in parsed.value


# --- overcurrent devices ------------------------------------------------------------------
# 'Type D' = time-delay and 'Type P' = non-time-delay fuse: Canadian usage, CEC Table 29 column
# headings (reference notes, code-values addendum "Canadian fuse terminology").

DEVICE_CASES = [
    ("125 A CB", {"rating_a": 125.0, "device": "breaker"}),
    ("100AT/225AF", {"rating_a": 100.0, "device": "breaker", "frame_a": 225.0}),
    ("100 AT / 225 AF", {"rating_a": 100.0, "device": "breaker", "frame_a": 225.0}),
    ("125A 3P", {"rating_a": 125.0, "poles": 3}),
    ("3P-125A", {"rating_a": 125.0, "poles": 3}),
    ("30/3", {"rating_a": 30.0, "poles": 3}),
    ("20/1", {"rating_a": 20.0, "poles": 1}),
    ("60 A TD fuse", {"rating_a": 60.0, "device": "time-delay-fuse"}),
    ("50A time delay fuses", {"rating_a": 50.0, "device": "time-delay-fuse"}),
    ("60A non-time-delay fuse", {"rating_a": 60.0, "device": "non-time-delay-fuse"}),
    ("60A NTD", {"rating_a": 60.0, "device": "non-time-delay-fuse"}),
    ("45A dual element fuse", {"rating_a": 45.0, "device": "time-delay-fuse"}),
    ("60A Type D", {"rating_a": 60.0, "device": "time-delay-fuse"}),
    ("60A D fuse", {"rating_a": 60.0, "device": "time-delay-fuse"}),
    ("100A Type P", {"rating_a": 100.0, "device": "non-time-delay-fuse"}),
    ("100A P fuse", {"rating_a": 100.0, "device": "non-time-delay-fuse"}),
    ("30A RK5", {"rating_a": 30.0, "device": "fuse"}),
    ("30A class RK1 fuse", {"rating_a": 30.0, "device": "fuse"}),
    ("30A J", {"rating_a": 30.0, "device": "fuse"}),
    ("15A CC", {"rating_a": 15.0, "device": "fuse"}),
    ("30A RK5 TD", {"rating_a": 30.0, "device": "time-delay-fuse"}),
    ("Class J time delay 30A", {"rating_a": 30.0, "device": "time-delay-fuse"}),
    ("125 A inverse-time CB", {"rating_a": 125.0, "device": "inverse-time-breaker"}),
    ("125 A inverse time breaker", {"rating_a": 125.0, "device": "inverse-time-breaker"}),
    ("MCP 30A", {"rating_a": 30.0, "device": "instantaneous-trip-breaker"}),
    ("motor circuit protector 50A", {"rating_a": 50.0, "device": "instantaneous-trip-breaker"}),
    ("50A instantaneous", {"rating_a": 50.0, "device": "instantaneous-trip-breaker"}),
    ("HMCP 30", {"rating_a": 30.0, "device": "instantaneous-trip-breaker"}),
    ("BKR 20", {"rating_a": 20.0, "device": "breaker"}),
    ("30A breaker", {"rating_a": 30.0, "device": "breaker"}),
    ("100A MCB", {"rating_a": 100.0, "device": "breaker"}),
    ("15AT", {"rating_a": 15.0, "device": "breaker"}),  # AT (ampere trip) only describes breakers
    ("5 6/10 A fuse", {"rating_a": 5.6, "device": "fuse"}),
    ("2-8/10 A fuse", {"rating_a": 2.8, "device": "fuse"}),
    ("17 1/2", {"rating_a": 17.5}),
    ("125", {"rating_a": 125.0}),
    ("1,200 AT", {"rating_a": 1200.0, "device": "breaker"}),
    ("mcp 15a 3p", {"rating_a": 15.0, "device": "instantaneous-trip-breaker", "poles": 3}),
    ("225 A 3P 400 AF INVERSE-TIME CB",
     {"rating_a": 225.0, "device": "inverse-time-breaker", "frame_a": 400.0, "poles": 3}),
]


@pytest.mark.parametrize(("text", "expected"), DEVICE_CASES)
def test_device(text, expected):
    assert read(values.parse_device, text) == pytest.approx(expected)


@pytest.mark.parametrize(("text", "note"), [
    ("30A RK5", "fuse class RK5; a class alone does not say time-delay"),
    ("125A ??", "ignored '??'"),
    ("20A*", "footnote"),
    ("30A 3 pole HACR", "HACR"),
])
def test_device_notes(text, note):
    parsed = values.parse_device(text)
    assert parsed.value is not None and parsed.problem is None
    assert any(note in n for n in parsed.notes), parsed.notes


@pytest.mark.parametrize(("text", "device"), [
    ("inverse time breaker", "inverse-time-breaker"), ("MCP", "instantaneous-trip-breaker"), ("CB", "breaker"),
    ("BKR", "breaker"), ("breaker", "breaker"), ("MCB", "breaker"), ("Type D", "time-delay-fuse"),
    ("D fuse", "time-delay-fuse"), ("Type P", "non-time-delay-fuse"),
])
def test_device_without_rating_is_a_problem_that_names_the_device(text, device):
    parsed = values.parse_device(text)
    assert parsed.value is None and parsed.problem.startswith("no ampere rating")
    assert f"device read as {device}" in parsed.notes


@pytest.mark.parametrize(("text", "fragment"), [
    ("20/19", "holds two numbers"), ("60A fuse CB", "both a fuse and a breaker"), ("0A", "greater than zero"),
    ("100A 5P", "pole count"), ("60A 30A", "more than one ampere rating"), ("-30A", "negative"),
    ("60A TD NTD fuse", "two different device types"), ("20000 A", "limit"),
])
def test_device_problems(text, fragment):
    assert fragment in problem_of(values.parse_device, text)


# --- free text ------------------------------------------------------------------------------

@pytest.mark.parametrize(("text", "expected"), [
    ("  P-101   pump\n motor ", "P-101 pump motor"), ("\u96fb\u52d5\u6a5f", "\u96fb\u52d5\u6a5f"),
    ("MCC-1 / 2B", "MCC-1 / 2B"), ("= existing", "= existing"), ("Pump *see note 2", "Pump *see note 2"),
])
def test_text(text, expected):
    assert read(values.parse_text, text) == expected


# --- formatters and caching -----------------------------------------------------------------

@pytest.mark.parametrize(("formatter", "value", "text"), [
    (values.format_hp, 7.5, "7.5 HP"), (values.format_hp, 1e-4, "0.0001 HP"), (values.format_hp, 10.0, "10 HP"),
    (values.format_conductor, cond("500", 3, sets=2, material="al", stated=True, insulation="RW90",
                                   bond_size="2", raceway='3" EMT'),
     '2 sets of 3-500 kcmil RW90 AL + #2 BOND, 3" EMT'),
    (values.format_device, {"rating_a": 125.0, "poles": 3, "frame_a": 225.0, "device": "inverse-time-breaker"},
     "125 A 3P 225 AF INVERSE-TIME CB"),
    (values.format_voltage_phase, {"voltage_v": 208.0, "voltage_alternatives_v": [230.0], "phase": 1,
                                   "frequency_hz": 60}, "208V/230V 1PH 60Hz"),
    (values.format_duty, {"service": "intermittent", "rating": "15-min"}, "intermittent, 15 min"),
    (values.format_duty, {"service": "periodic", "rating": "continuous"}, "periodic (continuous rated)"),
])
def test_formatters(formatter, value, text):
    assert formatter(value) == text


@pytest.mark.parametrize(("formatter", "value"), [
    (values.format_hp, 0.0), (values.format_hp, math.inf), (values.format_voltage_phase, {}),
    (values.format_duty, {"service": "continuous", "rating": "5-min"}),
    (values.format_conductor, {"size": "4", "material": "al", "material_stated": False}),
])
def test_formatters_refuse_invalid_values(formatter, value):
    with pytest.raises(ValueError):
        formatter(value)


def test_cached_results_are_independent_copies():
    first = values.parse_conductor("3#4 + #8 BOND")
    first.value["size"] = "tampered"
    second = values.parse_voltage_phase("208/230-1")
    second.value["voltage_alternatives_v"].append(999.0)
    assert values.parse_conductor("3#4 + #8 BOND").value["size"] == "4"
    assert values.parse_voltage_phase("208/230-1").value["voltage_alternatives_v"] == [230.0]
