"""Tests for checker.ingest.layout: finding header blocks and mapping columns to fields."""
from __future__ import annotations

import itertools

import fixture_builders as fb
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from checker.ingest.layout import describe_columns, locate_tables, match_header, merged_origins
from checker.ingest.readers import Grid, read_grids


def grid_of(rows, merged=(), name="t.csv") -> Grid:
    width = max(len(r) for r in rows)
    text = [[("" if v is None else str(v)) for v in r] + [""] * (width - len(r)) for r in rows]
    return Grid(file=name, kind="csv", sheet=None, rows=text, row_numbers=list(range(1, len(rows) + 1)),
                hidden_rows=frozenset(), merged=tuple(merged))


def fields_by_letter(table) -> dict[str, str]:
    return {c.letter: c.field for c in table.columns}


def row_no(table, index: int) -> int:
    return table.grid.row_numbers[index]


# --------------------------------------------------------------------------- header text

@pytest.mark.parametrize("text, field", [
    ("FLA (A)", "fla"), ("FLA\n(A)", "fla"), ("HP¹", "hp"), ("Volts*", "voltage"), ("Wire Size (Note 2)", "conductor"),
    ("Minimum Circuit Ampacity1", "mca"), ("Size (HP)", "hp"), ("Rated power (kW)", "kw"), ("H.P.", "hp"),
    ("Equip. No.", "tag"), ("NumTag", "tag"), ("Motor No.", "tag"), ("Mark", "tag"),
    ("Service", "description"), ("Driven equipment", "description"), ("Load description", "description"),
    ("Ø", "phase"), ("No. of phases", "phase"), ("Hz", "frequency"),
    ("Full-load current", "fla"), ("Nameplate amps", "fla"), ("Motor Amperes", "fla"), ("FLC", "fla"), ("RLA", "fla"),
    ("Duty cycle", "duty"), ("Starting method", "starting"), ("Starter type", "starting"),
    ("Motor type", "motor_type"), ("S.F.", "service_factor"),
    ("Branch conductors", "conductor"), ("Size Wire", "conductor"), ("Ground wire size", "bond"), ("EGC", "bond"),
    ("Conduit", "raceway"), ("Size Breaker", "ocpd"), ("Circuit breaker", "ocpd"), ("BRKR", "ocpd"),
    ("Branch protection", "ocpd"), ("FUSE/CB", "ocpd_type"),
    ("O.L.", "overload"), ("Heater Ampere", "overload"), ("OL setting", "overload"),
    ("Disc. Size", "disconnect"), ("NFD", "disconnect"), ("Isolator", "disconnect"),
    ("Fed from", "fed_from"), ("MCC-Bucket", "fed_from"), ("Panel-Ckt", "fed_from"), ("Feeder from", "fed_from"),
    ("MCA", "mca"), ("Min. circuit ampacity", "mca"), ("WSA", "mca"),
    ("MOCP", "mocp"), ("MOP", "mocp"), ("Max fuse", "mocp"), ("MAX FUSE OR HACR BRKR", "mocp"),
    ("MAX CKT BKR", "mocp"), ("Maximum overcurrent protection", "mocp"),
    ("Remarks", "remarks"), ("Notes", "remarks"), ("Qty", "quantity"), ("RPM", "rpm"), ("Encl.", "enclosure"),
    ("Length (m)", "length"), ("Ambient (°C)", "ambient"),
])
def test_header_synonyms(text, field):
    assert match_header(text)[0][0] == field


@pytest.mark.parametrize("text", ["V/PH/HZ", "VOLTS/PH", "NOM. V-PH-HZ", "Voltage / Phase / Hz", "Rated Volts & Phase",
                                  "V/Ø/Hz", "Volts-Phase"])
def test_combined_voltage_phase_headers(text):
    assert match_header(text)[0] == ("voltage_phase", 1.0)


@pytest.mark.parametrize("text", ["", "SIZE", "Motor", "LRA", "BHP", "P-101", "x" * 120])
def test_non_headers_match_nothing(text):
    matches = match_header(text)
    assert not matches or matches[0][1] < 0.5


def test_service_factor_beats_service():
    assert match_header("Service factor")[0][0] == "service_factor"


# --------------------------------------------------------------------------- the messy sheet

@pytest.fixture
def messy_grids(tmp_path):
    return read_grids(fb.write_messy_xlsx(tmp_path / "m.xlsx"))


def test_messy_header_found_below_title_and_revision_rows(messy_grids):
    tables = locate_tables(messy_grids[1])
    assert len(tables) == 1
    table = tables[0]
    assert row_no(table, table.header_first) == row_no(table, table.header_last) == fb.MESSY_HEADER_ROW
    assert row_no(table, table.data_first) == fb.MESSY_FIRST_DATA_ROW
    # section, spare, total, blank and the final NOTES block stay inside the table
    assert row_no(table, table.data_last) == fb.MESSY_LAST_ROW
    assert fields_by_letter(table) == fb.MESSY_COLUMNS
    assert table.unmapped == ()
    assert table.score > 0


def test_messy_header_texts_as_written(messy_grids):
    table = locate_tables(messy_grids[1])[0]
    headers = {c.letter: c.header for c in table.columns}
    assert headers["E"] == "FLA (A)"            # line break shown as a space
    assert headers["C"] == "Motor HP¹"
    assert headers["G"] == "Wire Size (Note 2)"
    assert describe_columns(table)[4] == "E: FLA (A) -> fla"


def test_sheets_without_schedule_give_no_table(messy_grids):
    assert locate_tables(messy_grids[0]) == []     # cover sheet
    assert locate_tables(messy_grids[2]) == []     # numbers only


def test_messy_schedule_as_cp1252_csv(tmp_path):
    path = fb.write_csv(tmp_path / "m.csv", fb.messy_csv_rows(), encoding="cp1252")
    table = locate_tables(read_grids(path)[0])[0]
    assert row_no(table, table.header_first) == fb.MESSY_HEADER_ROW
    assert fields_by_letter(table) == fb.MESSY_COLUMNS


def test_header_on_a_late_row_with_offset_columns():
    rows = [["Project: invented"]] + [[] for _ in range(27)] + [
        [None, "Tag", "HP", "Volts", "FLA", "Wire"],
        [None, "P-7", "3", "208", "10.6", "#12"],
    ]
    table = locate_tables(grid_of(rows))[0]
    assert row_no(table, table.header_first) == 29
    assert fields_by_letter(table) == {"B": "tag", "C": "hp", "D": "voltage", "E": "fla", "F": "conductor"}


# --------------------------------------------------------------------------- multi-row headers

def test_two_row_merged_group_header(tmp_path):
    grid = read_grids(fb.write_two_row_header_xlsx(tmp_path / "t.xlsx"))[0]
    table = locate_tables(grid)[0]
    assert (row_no(table, table.header_first), row_no(table, table.header_last)) == fb.TWO_ROW_HEADER_ROWS
    assert fields_by_letter(table) == fb.TWO_ROW_COLUMNS
    headers = {c.letter: c.header for c in table.columns}
    assert headers["A"] == "MARK"                    # merged down two rows: one level, not 'MARK / MARK'
    assert headers["D"] == "MOTOR / VOLTS"           # group spread over its merged span
    assert headers["F"] == "FEEDER / PHASE"          # phase-conductor size, not the number of phases
    assert row_no(table, table.data_first) == 5 and row_no(table, table.data_last) == 7


def test_three_row_header_xlsx(tmp_path):
    grid = read_grids(fb.write_three_row_header_xlsx(tmp_path / "t3.xlsx"))[0]
    table = locate_tables(grid)[0]
    assert (row_no(table, table.header_first), row_no(table, table.header_last)) == fb.THREE_ROW_HEADER_ROWS
    assert fields_by_letter(table) == fb.THREE_ROW_COLUMNS


def test_three_row_header_csv_without_merges(tmp_path):
    grid = read_grids(fb.write_three_row_header_csv(tmp_path / "t3.csv", delimiter="\t"))[0]
    table = locate_tables(grid)[0]
    assert (row_no(table, table.header_first), row_no(table, table.header_last)) == fb.THREE_ROW_HEADER_ROWS
    assert fields_by_letter(table) == fb.THREE_ROW_COLUMNS
    headers = {c.letter: c.header for c in table.columns}
    assert headers["H"] == "BRANCH CIRCUIT / OVERCURRENT / RATING"
    assert headers["A"] == "TAG"                     # a lone header is not carried into its neighbours


def test_group_cell_not_carried_over_column_without_leaf():
    rows = [["Tag", "MOTOR", None, None, "Remarks"],
            [None, "HP", "Volts", "FLA", None],
            ["P-1", "5", "575", "6.1", "ok"]]
    table = locate_tables(grid_of(rows))[0]
    headers = {c.letter: c.header for c in table.columns}
    assert headers == {"A": "Tag", "B": "MOTOR / HP", "C": "MOTOR / Volts", "D": "MOTOR / FLA", "E": "Remarks"}


def test_units_row_under_header_joins_the_header():
    rows = [["Tag", "HP", "Volts", "FLA", "Length"],
            [None, "(hp)", "(V)", "(A)", "(m)"],
            ["P-1", "5", "575", "6.1", "40"]]
    table = locate_tables(grid_of(rows))[0]
    assert (table.header_first, table.header_last, table.data_first) == (0, 1, 2)
    assert fields_by_letter(table) == {"A": "tag", "B": "hp", "C": "voltage", "D": "fla", "E": "length"}
    assert {c.letter: c.header for c in table.columns}["D"] == "FLA / (A)"


def test_generic_leaf_takes_the_group_field():
    rows = [["Tag", "HP", "Volts", "BREAKER", None, "STARTER", None],
            [None, None, None, "TRIP", "FRAME", "SIZE", "TYPE"],
            ["P-1", "5", "575", "15", "100", "1", "FVNR"]]
    table = locate_tables(grid_of(rows))[0]
    fields = fields_by_letter(table)
    assert fields["D"] == "ocpd"           # BREAKER / TRIP
    assert "E" not in fields               # BREAKER / FRAME loses ocpd to TRIP
    assert fields["G"] == "starting"       # STARTER / TYPE names it better than STARTER / SIZE
    assert (4, "BREAKER / FRAME") in table.unmapped


# --------------------------------------------------------------------------- conflicts

def test_feeder_is_conductor_only_without_a_better_column():
    better = grid_of([["Tag", "HP", "FLA", "Feeder", "Wire size"], ["P-1", "5", "6.1", "LP-1", "#12"]])
    table = locate_tables(better)[0]
    assert fields_by_letter(table)["E"] == "conductor"
    assert "D" not in fields_by_letter(table)
    alone = grid_of([["Tag", "HP", "FLA", "Feeder"], ["P-1", "5", "6.1", "3#12"]])
    assert fields_by_letter(locate_tables(alone)[0])["D"] == "conductor"


def test_same_leaf_under_two_groups_keeps_the_first_and_reports_the_other():
    rows = [["Unit", "Volts", "NO C.O.", None, "W/ PWRD C.O.", None],
            [None, None, "MCA", "MOCP", "MCA", "MOCP"],
            ["RTU-1", "575", "12", "20", "14", "20"]]
    table = locate_tables(grid_of(rows))[0]
    fields = fields_by_letter(table)
    assert fields["C"] == "mca" and fields["D"] == "mocp"
    assert (4, "W/ PWRD C.O. / MCA") in table.unmapped and (5, "W/ PWRD C.O. / MOCP") in table.unmapped


def test_two_fla_like_columns_keep_the_better():
    rows = [["Tag", "HP", "Amps", "FLA"], ["P-1", "5", "6", "6.1"]]
    table = locate_tables(grid_of(rows))[0]
    assert fields_by_letter(table) == {"A": "tag", "B": "hp", "D": "fla"}


# --------------------------------------------------------------------------- several tables, none

def test_two_schedules_on_one_sheet(tmp_path):
    grid = read_grids(fb.write_two_schedules_xlsx(tmp_path / "two.xlsx"))[0]
    tables = locate_tables(grid)
    assert len(tables) == 2
    assert tuple(row_no(t, t.header_first) for t in tables) == fb.TWO_SCHEDULES_HEADER_ROWS
    assert tuple(row_no(t, t.data_last) for t in tables) == fb.TWO_SCHEDULES_LAST_DATA_ROWS
    assert fields_by_letter(tables[0])["G"] == "ocpd"
    assert fields_by_letter(tables[1])["F"] == "disconnect"


def test_other_table_below_ends_the_motor_table():
    rows = [["Tag", "HP", "Volts", "FLA"],
            ["P-1", "5", "575", "6.1"],
            [],
            ["CKT", "LOAD DESCRIPTION", "BREAKER", "POLES", "CONDUCTORS"],
            ["1", "Lighting", "15A", "1", "#14"]]
    tables = locate_tables(grid_of(rows))
    assert len(tables) == 1 and tables[0].data_last == 1


def test_no_schedule_and_transposed_table_give_nothing(tmp_path):
    for grid in read_grids(fb.write_no_schedule_xlsx(tmp_path / "none.xlsx")):
        assert locate_tables(grid) == [], grid.sheet


def test_tag_alone_is_not_a_motor_schedule():
    rows = [["Tag", "Description", "Remarks"], ["P-1", "Pump", ""]]
    assert locate_tables(grid_of(rows)) == []


def test_header_without_data_rows():
    table = locate_tables(grid_of([["Tag", "HP", "FLA"]]))[0]
    assert table.data_first == 1 and table.data_last == 0


def test_value_rows_are_never_headers():
    # a data row that spells units ('7.5 HP', '575 V') must not start a second table
    rows = [["Tag", "HP", "Volts", "Phase", "FLA"],
            ["P-1", "7.5 HP", "575 V", "3 PH", "9 A"],
            ["P-2", "7.5 HP", "575 V", "3 PH", "9 A"]]
    tables = locate_tables(grid_of(rows))
    assert len(tables) == 1 and tables[0].data_last == 2


def test_describe_columns_lists_unmapped_columns():
    table = locate_tables(grid_of([["Tag", "HP", "CFM", "FLA"], ["F-1", "2", "1200", "3"]]))[0]
    assert describe_columns(table) == ["A: Tag -> tag", "B: HP -> hp", "C: CFM -> not used", "D: FLA -> fla"]


def test_merged_origins():
    grid = grid_of([["A", "", ""], ["", "", ""]], merged=[(0, 0, 1, 1)])
    assert merged_origins(grid) == {(0, 1): (0, 0), (1, 0): (0, 0), (1, 1): (0, 0)}


def test_repeated_header_stays_in_the_table():
    header = ["Tag", "HP", "Volts", "FLA"]
    rows = [header, ["P-1", "5", "575", "6.1"], [], header, ["P-2", "5", "575", "6.1"]]
    tables = locate_tables(grid_of(rows))
    assert len(tables) == 1 and tables[0].data_last == 4


def test_device_words_in_a_data_row_do_not_end_the_table():
    rows = [["Tag", "Description", "HP", "FLA", "Fed from", "OCPD", "Disconnect", "Starter"],
            ["P-1", "Pump", "TBD", "TBD", "MCC", "CB", "NFD", "VFD"],
            ["P-2", "Pump", "5", "6.1", "MCC-1", "15A CB", "30A NFD", "FVNR"]]
    tables = locate_tables(grid_of(rows))
    assert len(tables) == 1 and tables[0].data_last == 2


# --------------------------------------------------------------------------- properties


_WORDS = st.sampled_from(["Tag", "HP", "FLA", "Volts", "MOTOR", "FEEDER", "Wire", "P-1", "7.5", "575", "", "",
                          "TBD", "NOTES:", "Remarks", "V/PH/HZ", "SIZE", "Mark", "kW", "Description", "CB"])


@settings(max_examples=150, deadline=None)
@given(st.lists(st.lists(_WORDS, min_size=1, max_size=7), min_size=1, max_size=25), st.data())
def test_locate_tables_is_well_formed_on_any_grid(rows, data):
    width = max(len(r) for r in rows)
    merged = []
    if width > 1 and data.draw(st.booleans()):
        r = data.draw(st.integers(0, len(rows) - 1))
        merged.append((r, 0, min(r + 1, len(rows) - 1), 1))
    grid = grid_of(rows, merged=merged)
    tables = locate_tables(grid)
    previous_end = -1
    for t in tables:
        assert previous_end < t.header_first <= t.header_last < t.data_first <= t.data_last + 1
        assert t.data_last < len(grid.rows)
        assert all(0 <= c.index < width for c in t.columns)
        assert len({c.field for c in t.columns}) == len(t.columns)
        assert {c.index for c in t.columns}.isdisjoint(i for i, _ in t.unmapped)
        previous_end = t.data_last


def test_merge_reaching_into_a_later_header_does_not_pull_it_over_the_first():
    # found by the property test above: a merge from row 1 into row 2 must not
    # make the second table's header start inside the first table
    grid = grid_of([["Tag", "HP", "V/PH/HZ"], ["Tag", "V/PH/HZ", "HP"]], merged=[(0, 0, 1, 1)])
    tables = locate_tables(grid)
    assert all(b.header_first > a.data_last for a, b in itertools.pairwise(tables))
