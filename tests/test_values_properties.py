"""Property tests for the cell value parsers (checker/ingest/values.py).

1. Any text: a parser returns a Parsed, never raises, never hits its internal safety net,
   never yields a negative or non-finite number, and a value given without a problem fits
   schemas/motor.schema.json.
2. Canonical text written by a format_* function reads back to the same value.
"""
from __future__ import annotations

import json
import math
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from jsonschema import Draft202012Validator

from checker.ingest import values
from checker.model import Parsed

SCHEMA = json.loads((Path(__file__).resolve().parents[1] / "schemas" / "motor.schema.json").read_text())
VALIDATOR = Draft202012Validator(SCHEMA)
EXAMPLES = settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])

# parser -> how its value sits in a motor record (None: free text, any string is fine)
RECORD_OF = {
    values.parse_hp: lambda v: {"hp": v},
    values.parse_kw: lambda v: {"kw": v},
    values.parse_current_a: lambda v: {"fla_a": v},
    values.parse_voltage_phase: lambda v: dict(v),
    values.parse_voltage: lambda v: dict(v),
    values.parse_phase: lambda v: dict(v),
    values.parse_duty: lambda v: {"duty": v},
    values.parse_starting: lambda v: {"starting": v},
    values.parse_conductor: lambda v: {"conductor": v},
    values.parse_device: lambda v: {"ocpd": v},
    values.parse_service_factor: lambda v: {"service_factor": v},
    values.parse_text: lambda v: {"remarks": v},
}
PARSERS = list(RECORD_OF)

# Characters that schedules use, so random strings reach deep into the grammars.
SCHEDULE_ALPHABET = ("0123456789 /-#.,()xX*+&\"'%:;AaVvHhPpØø½¾¹²kKmMcCuUlLgGbBoOnNdDsStTfFwWrRiIeEyY"
                     "—–\t\n\x1b")
schedule_text = st.text(alphabet=SCHEDULE_ALPHABET, max_size=40)
any_text = st.one_of(st.text(max_size=80), schedule_text)


def _numbers(value):
    """Every number inside a parsed value (bools excluded)."""
    if isinstance(value, bool):
        return
    if isinstance(value, (int, float)):
        yield value
    elif isinstance(value, dict):
        for item in value.values():
            yield from _numbers(item)
    elif isinstance(value, (list, tuple)):
        for item in value:
            yield from _numbers(item)


def _assert_sound(parser, text: str) -> None:
    parsed = parser(text)
    assert isinstance(parsed, Parsed)
    assert parsed.problem is None or "internal parser error" not in parsed.problem, parsed.problem
    assert parsed.problem is None or "\n" not in parsed.problem
    for number in _numbers(parsed.value):
        assert math.isfinite(number) and number >= 0, (text, parsed)
    if parsed.placeholder:
        assert parsed.value is None and parsed.problem is None
    if parsed.value is not None and parsed.problem is None:
        record = {"tag": "T-1", **RECORD_OF[parser](parsed.value)}
        errors = [e.message for e in VALIDATOR.iter_errors(record)]
        assert not errors, (text, parsed.value, errors)


@pytest.mark.parametrize("parser", PARSERS, ids=lambda p: p.__name__)
@EXAMPLES
@given(text=any_text)
def test_any_text_is_handled(parser, text):
    _assert_sound(parser, text)


# --- canonical text round trips ---------------------------------------------------------

hp_values = st.floats(min_value=1e-4, max_value=values.MAX_HP, allow_nan=False, allow_infinity=False)


@EXAMPLES
@given(hp=hp_values)
def test_hp_round_trip(hp):
    parsed = values.parse_hp(values.format_hp(hp))
    assert parsed.problem is None and parsed.value == hp


@st.composite
def conductors(draw):
    value = {"sets": draw(st.integers(1, 20))}
    if draw(st.booleans()):
        value["conductors_per_set"] = draw(st.integers(1, 12))
    value["size"] = draw(st.sampled_from(values.AWG_SIZES + tuple(str(k) for k in values.KCMIL_SIZES)))
    stated = draw(st.booleans())
    value["material"] = draw(st.sampled_from(["cu", "al"])) if stated else "cu"
    value["material_stated"] = stated
    if draw(st.booleans()):
        value["insulation"] = draw(st.sampled_from(["RW90", "RWU90", "T90", "TW75", "THWN-2", "THHN", "XHHW-2",
                                                    "TECK90", "ACWU90", "AC90", "THW", "USE-2"]))
    if draw(st.booleans()):
        value["bond_size"] = draw(st.sampled_from(values.AWG_SIZES + ("250", "500")))
        if draw(st.booleans()):
            value["bond_material"] = draw(st.sampled_from(["cu", "al"]))
    if draw(st.booleans()):
        value["raceway"] = draw(st.sampled_from(['3/4"', '1"', '1-1/2" EMT', '2-1/2" RMC', '1/2" PVC',
                                                 "27 mm", "35 mm PVC", "21 mm EMT"]))
    return value


@EXAMPLES
@given(value=conductors())
def test_conductor_round_trip(value):
    text = values.format_conductor(value)
    parsed = values.parse_conductor(text)
    assert parsed.problem is None, (text, parsed)
    assert parsed.value == value, text


amps = st.floats(min_value=0.01, max_value=values.MAX_RATING_A, allow_nan=False, allow_infinity=False)


@st.composite
def devices(draw):
    value = {"rating_a": draw(amps)}
    if draw(st.booleans()):
        value["device"] = draw(st.sampled_from(["time-delay-fuse", "non-time-delay-fuse", "fuse",
                                                "inverse-time-breaker", "instantaneous-trip-breaker", "breaker"]))
    if value.get("device", "breaker").endswith("breaker") and draw(st.booleans()):
        # An ampere frame is read as a breaker: canonical values carry the frame only with a breaker kind.
        value["frame_a"] = draw(amps)
        value.setdefault("device", "breaker")
    if draw(st.booleans()):
        value["poles"] = draw(st.integers(1, 4))
    return value


@EXAMPLES
@given(value=devices())
def test_device_round_trip(value):
    text = values.format_device(value)
    parsed = values.parse_device(text)
    assert parsed.problem is None, (text, parsed)
    assert parsed.value == value, text


volts = st.floats(min_value=values.MIN_VOLTAGE_V, max_value=values.MAX_VOLTAGE_V, allow_nan=False)


@st.composite
def voltage_phases(draw):
    value = {}
    all_volts = draw(st.lists(volts, min_size=0, max_size=3, unique=True))
    if all_volts:
        value["voltage_v"] = all_volts[0]
        if len(all_volts) > 1:
            value["voltage_alternatives_v"] = all_volts[1:]
    current_type = draw(st.sampled_from([None, "ac", "dc"]))
    if current_type:
        value["current_type"] = current_type
    if current_type != "dc":
        if draw(st.booleans()):
            value["phase"] = draw(st.sampled_from([1, 3]))
        if draw(st.booleans()):
            value["frequency_hz"] = draw(st.sampled_from([50, 60]))
    if not value:
        value["phase"] = 3
    return value


@EXAMPLES
@given(value=voltage_phases())
def test_voltage_phase_round_trip(value):
    text = values.format_voltage_phase(value)
    parsed = values.parse_voltage_phase(text)
    assert parsed.problem is None, (text, parsed)
    assert parsed.value == value, text


@st.composite
def duties(draw):
    service = draw(st.sampled_from(["continuous", "short-time", "intermittent", "periodic", "varying"]))
    value = {"service": service}
    if service != "continuous" and draw(st.booleans()):
        value["rating"] = draw(st.sampled_from(["5-min", "15-min", "30-min", "60-min", "continuous"]))
    return value


@EXAMPLES
@given(value=duties())
def test_duty_round_trip(value):
    text = values.format_duty(value)
    parsed = values.parse_duty(text)
    assert parsed.problem is None, (text, parsed)
    assert parsed.value == value, text


@EXAMPLES
@given(hp=hp_values, junk=st.sampled_from(["*", "**", " (2)", "¹", "²", " note 3", " [4]"]))
def test_footnote_mark_keeps_the_value_and_is_noted(hp, junk):
    """'20*', '60 (2)', '60¹': the mark is not read as a digit and is reported in the notes."""
    marked = values.parse_hp(values.format_hp(hp) + junk)
    assert marked.problem is None and marked.value == hp
    assert any("footnote" in n for n in marked.notes)


@settings(max_examples=400, deadline=None)
@given(st.one_of(st.text(alphabet=st.characters(min_codepoint=32, max_codepoint=126), max_size=40),
                 st.sampled_from(["TBD", "n/a", "--", "=SUM(A1:A3)", "=B2", "by others", "P-1  A", " x ", ""])))
def test_plain_text_short_way_equals_the_long_way(text):
    """``parse_text`` skips the clean-up steps for plain ASCII text; the result is what they give."""
    stripped = text.strip()
    assert values.parse_text(text) == values._prepared_text(stripped)


@settings(max_examples=400, deadline=None)
@given(st.one_of(st.text(max_size=40),
                 st.text(alphabet=st.characters(min_codepoint=32, max_codepoint=126), max_size=40),
                 st.sampled_from(["TBD", "n/a", "--", "=SUM(A1:A3)", "=B2", "P-1  A", " x ", "P-1 ", "\tP-1", ""])))
def test_plain_text_without_the_wrapper_is_parse_text(text):
    """``plain_text`` (the row loop's way for distinct tags) answers only where ``parse_text`` gives the
    same, and leaves the rest (padding, placeholders, formulas, other characters) to it."""
    plain = values.plain_text(text)
    if plain is not None:
        assert plain == values.parse_text(text)
        assert plain.value == text


@pytest.mark.parametrize("text", ["P-101", "Raw water pump No. 2", "MCC-1 / 3A", "AHU-3 supply fan (VFD)"])
def test_plain_text_answers_for_ordinary_tags_and_descriptions(text):
    assert values.plain_text(text) == values.parse_text(text) == Parsed(text)


@settings(max_examples=500, deadline=None)
@given(st.one_of(st.text(max_size=12),
                 st.sampled_from(["TBD", "t.b.a.", "N/A", "n.a", "--", "\u2014", " \u00a0", "by others", "By Div. 23",
                                  "F.B.O.", "??", "_", "~", "\x1c", "Tbd pump", "NA-1", "fbo"])))
def test_placeholder_first_letter_test_agrees_with_the_pattern(text):
    """``_is_placeholder`` runs the placeholder pattern only on text whose first character can begin one."""
    assert values._is_placeholder(text) == (not text or values._PLACEHOLDER_RE.match(text) is not None)
