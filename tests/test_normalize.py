"""Row classification and record building, through the real reader and layout steps."""
import csv

from checker.review import review_schedule


def _review(tmp_path, rows, name="s.csv"):
    path = tmp_path / name
    with path.open("w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows(rows)
    return review_schedule(path)


HEADER = ["TAG", "DESCRIPTION", "HP", "KW", "VOLTS", "PH", "FLA", "CONDUCTORS", "OCPD", "REMARKS"]


def test_power_written_in_the_other_unit_is_read_in_that_unit(tmp_path):
    review = _review(tmp_path, [HEADER,
                                ["F-1", "fan", "", "7.5 hp", "575", "3", "", "3#10", "20A CB", ""],
                                ["F-2", "fan", "5.5 kW", "", "575", "3", "8", "3#10", "20A CB", ""]])
    records = {m.motor.tag: m.motor.record for m in review.motors}
    assert records["F-1"]["hp"] == 7.5 and "kw" not in records["F-1"]
    assert records["F-2"]["kw"] == 5.5 and "hp" not in records["F-2"]
    assert not any(m.motor.input_findings for m in review.motors)


def test_section_heading_feeds_only_when_it_names_a_source(tmp_path):
    review = _review(tmp_path, [HEADER,
                                ["MCC-3"] + [""] * 9,
                                ["P-1", "pump", "10", "", "575", "3", "11", "3#12", "25A CB", ""],
                                ["EAST MECHANICAL ROOM"] + [""] * 9,
                                ["P-2", "pump", "10", "", "575", "3", "11", "3#12", "25A CB", ""]])
    records = {m.motor.tag: m.motor.record for m in review.motors}
    assert records["P-1"]["fed_from"] == "MCC-3"
    assert "fed_from" not in records["P-2"]


def test_row_with_text_but_no_motor_data_is_skipped_with_reason(tmp_path):
    review = _review(tmp_path, [HEADER,
                                ["", "ICE RESURFACER CHARGER", "", "", "", "", "", "", "", "by others"],
                                ["SPARE", "", "", "", "", "", "", "", "20A CB", ""],
                                ["P-1", "pump", "10", "", "575", "3", "11", "3#12", "25A CB", ""],
                                ["TOTAL", "", "10", "", "", "", "11", "", "", ""]])
    reasons = [row.reason for row in review.skipped if row.source.row > 1]
    assert reasons == ["no motor data in the row (no hp, kW, FLA, voltage, conductor or device)",
                       "spare or space, not a motor", "total row"]
    assert [m.motor.tag for m in review.motors] == ["P-1"]


def test_unreadable_cell_is_a_needs_info_naming_the_cell(tmp_path):
    review = _review(tmp_path, [HEADER, ["P-1", "pump", "10", "", "575", "3", "11", "3#4 XYZ QQ", "25A ??", ""]])
    motor = review.motors[0].motor
    labels = " ".join(f.message for f in motor.input_findings)
    assert all(f.status.value == "needs-info" for f in motor.input_findings)
    assert "H2" in labels or "I2" in labels


def test_schema_violation_becomes_needs_info_and_drops_the_value(tmp_path):
    review = _review(tmp_path, [HEADER, ["P-1", "pump", "10", "", "575", "3", "0", "3#12", "25A CB", ""]])
    motor = review.motors[0].motor
    assert "fla_a" not in motor.record
    assert any(f.check in ("record-schema", "cell-value") and "fla" in " ".join(f.fields) for f in motor.input_findings)


def test_standby_motor_described_as_spare_is_reviewed(tmp_path):
    review = _review(tmp_path, [HEADER,
                                ["P-9", "Spare sump pump (standby)", "5", "", "575", "3", "6.1", "3#12", "15A CB", ""],
                                ["SPARE", "", "", "", "", "", "", "", "20A CB", ""]])
    assert [m.motor.tag for m in review.motors] == ["P-9"]
    assert [row.reason for row in review.skipped if row.source.row == 3] == ["spare or space, not a motor"]


def test_bundled_motor_schema_is_a_valid_draft_2020_12_schema():
    import json

    from jsonschema import Draft202012Validator

    from checker.ingest.normalize import SCHEMA_PATH
    Draft202012Validator.check_schema(json.loads(SCHEMA_PATH.read_text(encoding="utf-8")))


def test_rows_with_the_same_conductor_text_keep_their_own_bond_and_raceway(tmp_path):
    """A cell text is read once per table and its value shared by the rows that repeat it; a row
    whose bond or raceway column amends that conductor must not change the other rows' value."""
    header = ["TAG", "HP", "VOLTS", "FLA", "CONDUCTORS", "BOND", "RACEWAY", "OCPD"]
    review = _review(tmp_path, [header,
                                ["P-1", "10", "575", "11", "3#12 RW90", "", "", "25A CB"],
                                ["P-2", "10", "575", "11", "3#12 RW90", "#10", "27 mm EMT", "25A CB"],
                                ["P-3", "10", "575", "11", "3#12 RW90", "", "", "25A CB"]])
    conductors = {m.motor.tag: m.motor.record["conductor"] for m in review.motors}
    assert conductors["P-2"]["bond_size"] == "10" and conductors["P-2"]["raceway"] == "27 mm EMT"
    for tag in ("P-1", "P-3"):
        assert "bond_size" not in conductors[tag] and "raceway" not in conductors[tag]
    assert conductors["P-1"] == conductors["P-3"]


def test_repeated_header_counts_a_column_at_a_time_as_row_by_row():
    """The table's count of header-repeating cells per row (worked out a column at a time) is the
    row-by-row count, with a field mapped twice read from its last column as the row's dict keeps it."""
    from checker.ingest.normalize import _header_repeats_by_row, header_repeats

    header_texts = {"tag": "tag", "hp": "hp", "fla": "full load amps", "volts": "volts"}
    columns = [("tag", 0), ("hp", 1), ("fla", 2), ("volts", 3), ("hp", 4)]
    rows = [["TAG", "HP", "AMPS", "VOLTS", "hp"], ["P-1", "5", "7.6", "575", ""], ["tag", "", "load amps", "Volts", "HP"],
            ["", "", "", "", ""], ["Tag", "hp", "", "", "7.5"], ["g", "p", "s", "s", "p"]]
    by_row = [header_repeats({f: cells[i] for f, i in columns}, header_texts) for cells in rows]
    assert _header_repeats_by_row(rows, dict(columns), header_texts) == by_row
    assert by_row == [4, 0, 4, 0, 1, 4]
