"""Writers for test schedules with motors grouped on feeders (xlsx), built in a tmp_path.

Every tag, description and number here is invented for tests. The motor
currents of MCC-A and MCC-B are chosen to equal two published worked examples
(named in tests/test_feeders.py) so that an end-to-end run can be compared with
them; nothing else here is a code value.

The module constants say where things are (spreadsheet row numbers as a
spreadsheet program shows them).
"""
from __future__ import annotations

from pathlib import Path

from fixture_builders import write_xlsx

MOTOR_HEADER = ["TAG", "DESCRIPTION", "HP", "FLA (A)", "DUTY", "V/PH", "STARTER", "FED FROM", "CONDUCTORS", "OCPD"]

# --------------------------------------------------------------------------- two MCCs, feeders on a second sheet

TWO_MCC_MOTOR_SHEET = "MOTORS"
TWO_MCC_FEEDER_SHEET = "FEEDERS"
TWO_MCC_MOTOR_ROWS = [
    ["PLANT 7 - MOTOR SCHEDULE"],                                                                 # 1
    [],                                                                                            # 2
    MOTOR_HEADER,                                                                                  # 3
    ["MCC-A  (230 V, 3Ø)"],                                                                        # 4 section heading
    ["CV-1", "CONVEYOR 1", 10, 36, "CONT", "230/3", "FVNR", "MCC-A / 1A", "3#6 RW90", "90A CB"],    # 5
    ["CV-2", "CONVEYOR 2", 15, 40, "CONT", "230/3", "FVNR", "MCC-A / 1B", "3#6 RW90", "100A CB"],   # 6
    ["CR-1", "CRUSHER", 15, 50, "CONT", "230/3", "FVNR", "MCC-A / 2A", "3#4 RW90", "125A CB"],      # 7
    ["FN-1", "FAN", 20, 60, "CONT", "230/3", "AUTOTRANSFORMER", "MCC-A / 2B", "3#3 RW90", "110A CB"],  # 8
    ["SPARE", "", "", "", "", "", "", "MCC-A / 3A", "", "100A CB"],                                # 9 spare
    [],                                                                                            # 10
    ["MCC-B  (230 V, 3Ø)"],                                                                        # 11 section heading
    ["PU-1", "PUMP 1", 10, 36, "CONT", "230/3", "FVNR", "", "3#6 RW90", "90A CB"],                  # 12
    ["PU-2", "PUMP 2", 15, 40, "CONT", "230/3", "FVNR", "", "3#6 RW90", "100A CB"],                 # 13
    ["GT-1", "GATE", 15, 50, "SHORT-TIME 5 MIN", "230/3", "FVNR", "", "3#6 RW90", "125A CB"],       # 14
    ["HO-1", "HOIST", 20, 60, "INTERMITTENT 15 MIN", "230/3", "FVNR", "", "3#6 RW90", "150A CB"],   # 15
    [],                                                                                            # 16
    ["NOTES: FLA FROM NAMEPLATES."],                                                               # 17
]
TWO_MCC_FEEDER_ROWS = [
    ["FEEDER SCHEDULE"],                                                                           # 1 title
    ["FEEDER", "FROM", "TO", "CONDUCTORS", "OCPD", "LENGTH (m)"],                                   # 2 header
    ["F-1", "MDP", "MCC-A", "3#250 kcmil CU RW90", "250A CB", 40],                                  # 3 passes both
    ["F-2", "MDP", "MCC-B", "3#2/0 CU RW90", "250A CB", 55],                                        # 4 conductor fails
    ["F-3", "MDP", "LP-9", "4#6 CU", "60A CB", 20],                                                 # 5 no motors on it
    [],                                                                                            # 6
    ["NOTES: ALL FEEDERS IN RIGID CONDUIT."],                                                      # 7
]
TWO_MCC_MOTORS = 8          # CV-1 .. HO-1
TWO_MCC_FEEDER_ROWS_READ = 3


def write_two_mcc_xlsx(path: Path) -> Path:
    """Motor schedule with two MCC sections on one sheet, feeder schedule on a second sheet."""
    return write_xlsx(path, {TWO_MCC_MOTOR_SHEET: TWO_MCC_MOTOR_ROWS, TWO_MCC_FEEDER_SHEET: TWO_MCC_FEEDER_ROWS})


# --------------------------------------------------------------------------- feeder table under the motor schedule

SAME_SHEET = "SCHEDULE"
SAME_SHEET_ROWS = [
    MOTOR_HEADER,                                                                                  # 1
    ["P-1", "PUMP", 10, 36, "CONT", "230/3", "FVNR", "MCC-C / 1", "3#6", "90A CB"],                 # 2
    ["P-2", "PUMP", 15, 40, "CONT", "230/3", "FVNR", "MCC-C / 2", "3#6", "100A CB"],                # 3
    [],                                                                                            # 4
    ["FEEDERS"],                                                                                   # 5 title
    ["FEEDER NO.", "FROM", "TO", "CONDUCTORS", "BREAKER"],                                          # 6 header
    ["F-10", "MSB", "MCC-C", "3#1 CU", "125A"],                                                     # 7
]
SAME_SHEET_FEEDER_ROW = 7


def write_same_sheet_xlsx(path: Path) -> Path:
    """Motor schedule with its feeder table a few rows below it on the same sheet."""
    return write_xlsx(path, {SAME_SHEET: SAME_SHEET_ROWS})


# --------------------------------------------------------------------------- feeder data on a heading row

HEADING_SHEET = "MCC SCHEDULE"
HEADING_ROWS = [
    ["TAG", "DESCRIPTION", "HP", "FLA (A)", "V/PH", "CONDUCTORS", "OCPD"],                          # 1
    ["MCC-D FEEDER (600 V)", "", "", "", "", "3#1/0 CU", "150A CB"],                                # 2 feeder heading
    ["M-1", "MIXER", 25, 27, "600/3", "3#8", "60A CB"],                                             # 3
    ["M-2", "MIXER", 20, 22, "600/3", "3#10", "50A CB"],                                            # 4
    ["MCC-E (600 V)"],                                                                             # 5 plain heading
    ["M-3", "AGITATOR", 10, 11, "600/3", "3#12", "25A CB"],                                         # 6
    ["M-4", "AGITATOR", 10, 11, "600/3", "3#12", "25A CB"],                                         # 7
]
HEADING_FEEDER_ROW = 2


def write_heading_feeder_xlsx(path: Path) -> Path:
    """Motor schedule whose MCC heading row carries the feeder's conductors and breaker."""
    return write_xlsx(path, {HEADING_SHEET: HEADING_ROWS})


# --------------------------------------------------------------------------- feeder table above the motor schedule

ABOVE_SHEET = "ELECTRICAL"
ABOVE_ROWS = [
    ["FEEDER SCHEDULE"],                                                                           # 1 title
    ["FDR", "FED FROM", "FEEDS", "WIRE", "FUSE"],                                                  # 2 header
    ["F-20", "MSB", "MCC-F", "3#3/0 AL", "200A TD FUSE"],                                           # 3
    [],                                                                                            # 4
    ["MOTOR SCHEDULE"],                                                                            # 5 next title
    MOTOR_HEADER,                                                                                  # 6
    ["B-1", "BLOWER", 30, 40, "CONT", "460/3", "FVNR", "MCC-F / 1", "3#8", "70A TD FUSE"],          # 7
    ["B-2", "BLOWER", 30, 40, "CONT", "460/3", "FVNR", "MCC-F / 2", "3#8", "70A TD FUSE"],          # 8
]


def write_feeders_above_xlsx(path: Path) -> Path:
    """Feeder schedule first, motor schedule under it, on one sheet."""
    return write_xlsx(path, {ABOVE_SHEET: ABOVE_ROWS})
