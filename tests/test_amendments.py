"""Local amendments (``extends`` + ``[override.*]``) and project configuration (motorcheck.toml).

All amendments here are invented for tests; none is a real jurisdiction's.
"""
from __future__ import annotations

import json
from pathlib import Path

import pytest

from checker.cli import main
from checker.config import ConfigError, ProjectConfig, effective_settings, load_config
from checker.model import Motor, SourceRef, Status
from checker.review import review_schedule
from checker.rules.common import ReviewOptions
from checker.rules.overcurrent import check_branch_ocpd
from checker.rules.ruleset import RulesetError, load_ruleset, rulesets_dir, select_ruleset

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "rulesets" / "examples" / "amendment-example.toml"
DEMO_CSV = ROOT / "fixtures" / "demo" / "northfield-pump-station.csv"

HEAD = """
schema_version = 1
id = "{id}"
extends = "{extends}"
title = "test amendment"

[amendment]
jurisdiction = "Testville (invented)"
reference = "Test bylaw 1 (invented)"
verification = "common practice"
verified_by = "invented for a test"
"""


def write(tmp_path: Path, body: str, name: str = "amend.toml", id: str = "cec-2015-test",
          extends: str = "cec-2015") -> Path:
    path = tmp_path / name
    path.write_text(HEAD.format(id=id, extends=extends) + body, encoding="utf-8")
    return path


def changes(ruleset) -> dict[str, tuple]:
    return {c["path"]: (c["old"], c["new"]) for c in ruleset.amendments}


# ---- the example file ---------------------------------------------------------------------------------

def test_example_amendment_loads_and_lists_its_changes():
    amended = load_ruleset(EXAMPLE)
    assert amended.extends == "cec-2015" and amended.id == "cec-2015-exampleton"
    listed = changes(amended)
    assert listed["checks.branch-ocpd.params.minimum_rating_a"] == (15, 20)
    assert listed["tables.table_29.rows.squirrel-cage-full-voltage.inverse-time-breaker"] == (250, 225)
    assert "checks.conductor-ampacity.citation" in listed
    assert "id" not in listed and "title" not in listed  # identity, not a code value
    assert any("INVENTED" in c for c in amended.cautions)


def test_example_is_clearly_invented():
    text = EXAMPLE.read_text(encoding="utf-8")
    assert "INVENTED EXAMPLE" in text.splitlines()[0]
    assert load_ruleset(EXAMPLE).amendment["verification"] == "from memory"


def test_base_is_untouched_by_an_amendment():
    load_ruleset(EXAMPLE)
    base = load_ruleset("cec-2015")
    assert base.table("table_29").get("squirrel-cage-full-voltage", "inverse-time-breaker") == 250
    assert base.check("branch-ocpd").params["minimum_rating_a"] == 15


def test_amended_values_drive_the_checks():
    # 54 A x 225 % = 121.5 A under the invented amendment (was 135 A): a 125 A breaker now fails.
    m = Motor("A", {"tag": "A", "fla_a": 54, "phase": 3, "starting": "full-voltage",
                    "ocpd": {"rating_a": 125, "device": "inverse-time-breaker"}}, SourceRef("t", 1))
    assert check_branch_ocpd(m, load_ruleset("cec-2015"), ReviewOptions())[0].status is Status.PASS
    amended = check_branch_ocpd(m, load_ruleset(EXAMPLE), ReviewOptions())[0]
    assert amended.status is Status.FAIL and amended.limit == pytest.approx(121.5)


def test_changed_values_are_counted_under_the_amendment_mark(tmp_path):
    path = write(tmp_path, '\n[override.tables.table_29.cells.dc]\ntime-delay-fuse = 175\n')
    amended = load_ruleset(path)
    assert amended.table("table_29").row_verification["dc"] == "common practice"
    assert "AMENDED by Test bylaw 1" in amended.table("table_29").verified_by
    base_counts, new_counts = load_ruleset("cec-2015").verification_counts(), amended.verification_counts()
    assert new_counts["published source"] == base_counts["published source"] - 3  # the dc row had 3 published cells
    assert new_counts["common practice"] == base_counts["common practice"] + 3


# ---- override syntax ------------------------------------------------------------------------------------

def test_whole_row_values_list_and_param_dict_merge(tmp_path):
    path = write(tmp_path, """
[override.tables.table_29.rows]
"wound-rotor" = [150, 150, 175]
[override.tables.table_13]
values = [15, 20, 25, 30, 35, 40, 45, 50, 60, 70, 80, 90, 100, 110, 125, 150, 175, 200, 225, 250, 275, 300]
[override.checks.motor-current.params]
basis = { overload = "nameplate-first" }
""")
    amended = load_ruleset(path)
    listed = changes(amended)
    assert listed["tables.table_29.rows.wound-rotor.inverse-time-breaker"] == (150, 175)
    assert "tables.table_29.rows.wound-rotor.time-delay-fuse" not in listed  # unchanged cells are not listed
    assert 275 in amended.table("table_13").values
    assert amended.table("table_13").row_verification["275"] == "common practice"
    basis = amended.check("motor-current").params["basis"]
    assert basis["overload"] == "nameplate-first" and basis["conductor"] == "nameplate-first"  # merged, not replaced
    assert listed["checks.motor-current.params.basis.overload"] == ("nameplate", "nameplate-first")


def test_new_table_and_check_are_added_in_full(tmp_path):
    path = write(tmp_path, """
[tables.local_list]
title = "t"
citation = "Test bylaw 1, Schedule A"
verification = "common practice"
verified_by = "invented"
values = [1, 2]
""")
    amended = load_ruleset(path)
    assert amended.table("local_list").values == (1.0, 2.0)
    assert changes(amended)["tables.local_list"][0] is None


def test_an_amendment_can_extend_another_by_path(tmp_path):
    first = write(tmp_path, '\n[override.checks.branch-ocpd.params]\nminimum_rating_a = 20\n', "a.toml", "first")
    second = write(tmp_path, '\n[override.checks.branch-ocpd.params]\nminimum_rating_a = 25\n', "b.toml", "second",
                   extends="a.toml")
    chained = load_ruleset(second)
    assert chained.extends == "first" and changes(chained)["checks.branch-ocpd.params.minimum_rating_a"] == (20, 25)
    assert load_ruleset(first).check("branch-ocpd").params["minimum_rating_a"] == 20


BAD = [
    ("unknown check", '\n[override.checks.nonesuch]\nrule = "1"\n', ["override.checks.nonesuch", "no such check"]),
    ("unknown table", '\n[override.tables.table_99.cells.x]\na = 1\n', ["table_99"]),
    ("unknown row", '\n[override.tables.table_29.cells.diesel]\ntime-delay-fuse = 1\n', ["'diesel'"]),
    ("unknown column", '\n[override.tables.table_29.cells.dc]\nthermal = 1\n', ["'thermal'", "time-delay-fuse"]),
    ("existing table under tables", ('\n[tables.table_13]\ntitle="t"\ncitation="c"\nverification="from memory"\n'
     'verified_by="v"\nvalues=[1]\n'), ["tables.table_13 already exists", "override"]),
    ("row of wrong length", '\n[override.tables.table_29.rows]\ndc = [1, 2]\n', ["table_29", "'dc'", "2 values"]),
    ("bad mark", '\n[override.checks.branch-ocpd]\nverification = "heard it"\n', ["heard it"]),
    ("bad key in override", '\n[override.checks.branch-ocpd]\nseverity = 3\n', ["severity", "not allowed"]),
    ("param breaks the merged ruleset", '\n[override.checks.branch-ocpd.params]\nminimum_rating_a = "x"\n',
     ["after applying it to cec-2015", "minimum_rating_a"]),
    ("param names a missing table", '\n[override.checks.branch-ocpd.params]\nmax_percent_table = "table_98"\n',
     ["table_98"]),
]


@pytest.mark.parametrize("body, words", [b[1:] for b in BAD], ids=[b[0] for b in BAD])
def test_bad_amendments_are_refused_in_one_line(tmp_path, body, words):
    path = write(tmp_path, body)
    with pytest.raises(RulesetError) as info:
        load_ruleset(path)
    message = str(info.value)
    assert "\n" not in message and str(path) in message
    for word in words:
        assert word in message, message


def test_amendment_block_is_required(tmp_path):
    path = tmp_path / "a.toml"
    path.write_text('schema_version = 1\nid = "x-1"\nextends = "cec-2015"\ntitle = "t"\n', encoding="utf-8")
    with pytest.raises(RulesetError, match="'amendment' is a required property"):
        load_ruleset(path)


def test_override_is_not_allowed_without_extends(tmp_path):
    text = (rulesets_dir() / "cec-2015.toml").read_text(encoding="utf-8")
    path = tmp_path / "full.toml"
    path.write_text(text + '\n[override.checks.branch-ocpd]\nrule = "x"\n', encoding="utf-8")
    with pytest.raises(RulesetError, match="override: this key is not allowed here"):
        load_ruleset(path)


@pytest.mark.parametrize("extends, words", [("nonesuch-1999", ["extends", "nonesuch-1999"]),
                                            ("missing.toml", ["not a file"])])
def test_missing_base_is_one_line(tmp_path, extends, words):
    path = write(tmp_path, "", extends=extends)
    with pytest.raises(RulesetError) as info:
        load_ruleset(path)
    assert all(w in str(info.value) for w in words) and "\n" not in str(info.value)


def test_same_id_as_base_is_refused(tmp_path):
    with pytest.raises(RulesetError, match="its own id"):
        load_ruleset(write(tmp_path, "", id="cec-2015"))


def test_extends_loop_is_refused(tmp_path):
    write(tmp_path, "", "a.toml", "loop-a", extends="b.toml")
    b = write(tmp_path, "", "b.toml", "loop-b", extends="a.toml")
    with pytest.raises(RulesetError, match="loops back"):
        load_ruleset(b)


# ---- selecting a ruleset and reporting it ------------------------------------------------------------------

def test_select_ruleset_rules():
    assert select_ruleset(None).id == "cec-2015"
    assert select_ruleset("nec-2023").id == "nec-2023"
    assert select_ruleset(None, EXAMPLE).id == "cec-2015-exampleton"
    assert select_ruleset("cec-2015", EXAMPLE).id == "cec-2015-exampleton"
    with pytest.raises(RulesetError, match="amends cec-2015, but the review is against nec-2023"):
        select_ruleset("nec-2023", EXAMPLE)
    with pytest.raises(RulesetError, match="not an amendments file"):
        select_ruleset(None, rulesets_dir() / "nec-2023.toml")


def test_review_lists_amendments_for_the_report():
    review = review_schedule(DEMO_CSV, code=None, amendments=EXAMPLE)
    assert review.code == "cec-2015-exampleton"
    assert review.ruleset["extends"] == "cec-2015"
    paths = [c["path"] for c in review.ruleset["amendments"]]
    assert "checks.branch-ocpd.params.minimum_rating_a" in paths
    assert review.ruleset["amendment"]["jurisdiction"] == "Exampleton (invented)"


def test_html_report_shows_amendments(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    html, js = tmp_path / "r.html", tmp_path / "r.json"
    assert main(["review", str(DEMO_CSV), "--amendments", str(EXAMPLE), "--html", str(html), "--json", str(js),
                 "--quiet"]) in (0, 1)
    page = html.read_text(encoding="utf-8")
    assert "Local amendments" in page and "checks.branch-ocpd.params.minimum_rating_a" in page
    assert json.loads(js.read_text(encoding="utf-8"))["ruleset"]["amendments"]


# ---- motorcheck.toml ---------------------------------------------------------------------------------------

def test_no_config_file_means_no_defaults(tmp_path):
    assert load_config(tmp_path) == ProjectConfig()


def test_config_values_and_relative_paths(tmp_path):
    (tmp_path / "motorcheck.toml").write_text(
        '[project]\ncode = "nec-2023"\namendments = "local/a.toml"\nassumptions = false\n', encoding="utf-8")
    config = load_config(tmp_path)
    assert config.code == "nec-2023" and config.assumptions is False
    assert config.amendments == (tmp_path / "local" / "a.toml").resolve()


@pytest.mark.parametrize("text, words", [
    ('[project]\ncode = 5\n', ["project.code", "text"]),
    ('[project]\nassumptions = "no"\n', ["project.assumptions", "true or false"]),
    ('[project]\ncolour = "red"\n', ["project.colour"]),
    ('[tool]\nx = 1\n', ["'tool'"]),
    ('[project\n', ["not valid TOML"]),
])
def test_bad_config_is_one_line(tmp_path, text, words):
    (tmp_path / "motorcheck.toml").write_text(text, encoding="utf-8")
    with pytest.raises(ConfigError) as info:
        load_config(tmp_path)
    assert "\n" not in str(info.value) and all(w in str(info.value) for w in words)


def test_command_line_overrides_the_project_file():
    config = ProjectConfig(code="nec-2023", amendments=Path("/x.toml"), assumptions=False)
    assert effective_settings(config, None, None, None) == ("nec-2023", Path("/x.toml"), True)
    assert effective_settings(config, "cec-2015", Path("/y.toml"), False) == ("cec-2015", Path("/y.toml"), False)
    assert effective_settings(ProjectConfig(), None, None, None) == (None, None, False)
    assert effective_settings(ProjectConfig(assumptions=True), None, None, True)[2] is True


def _run(tmp_path, monkeypatch, config_text, *extra):
    monkeypatch.chdir(tmp_path)
    if config_text is not None:
        (tmp_path / "motorcheck.toml").write_text(config_text, encoding="utf-8")
    js = tmp_path / "r.json"
    code = main(["review", str(DEMO_CSV), "--json", str(js), "--html", str(tmp_path / "r.html"), "--quiet", *extra])
    return code, (json.loads(js.read_text(encoding="utf-8")) if js.exists() else None)


def test_cli_uses_the_project_code_unless_overridden(tmp_path, monkeypatch):
    code, report = _run(tmp_path, monkeypatch, '[project]\ncode = "nec-2023"\n')
    assert code in (0, 1) and report["code"] == "nec-2023"
    code, report = _run(tmp_path, monkeypatch, None, "--code", "cec-2015")
    assert report["code"] == "cec-2015"


def test_cli_invalid_config_exits_2_with_one_line(tmp_path, monkeypatch, capsys):
    code, _ = _run(tmp_path, monkeypatch, '[project]\nassumptions = "maybe"\n')
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1 and "motorcheck.toml" in err


def test_cli_mismatched_amendments_exit_2(tmp_path, monkeypatch, capsys):
    code, _ = _run(tmp_path, monkeypatch, None, "--code", "nec-2023", "--amendments", str(EXAMPLE))
    assert code == 2 and "amends cec-2015" in capsys.readouterr().err
