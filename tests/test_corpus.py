"""Broken and hostile submissions (issue 5): every corpus file ends in a clear refusal or a sound review.

``tests/corpus/make_corpus.py`` builds the files into a temporary directory and says what each
case must show; ``tests/corpus/run_cases.py`` runs ``motorcheck review FILE --json --html --csv``
on each in its own child process. Two runners with different ``PYTHONHASHSEED`` values run in
parallel, so every case expected to be reviewed is reviewed twice. For every case:

* a refusal is exit code 2 and exactly one stderr line (no traceback) matching the case;
  a review is exit 0/1 with the problem visible as a finding, note or skipped row;
* accounting: rows read = motors + skipped (+ feeder rows), each skipped row has a location and a
  reason, and every row of every sheet read appears exactly once;
* the input file's bytes and modification time are unchanged and nothing is written beside it;
* the JSON validates against the review schema and two runs give byte-identical JSON;
* the HTML shows submitted text escaped, loads nothing from anywhere, and its
  Content-Security-Policy allows only its own (hashed) style and script;
* the CSV export neutralises formula injection;
* every run ends within TIMEOUT_S of wall time; resource attacks within BOMB_CPU_S of CPU time
  (CPU, not wall, because the test machine may be shared); every run's peak memory stays
  under MEMORY_CEILING.
"""
from __future__ import annotations

import atexit
import base64
import csv
import dataclasses
import hashlib
import importlib.util
import io
import json
import os
import re
import resource
import shutil
import subprocess
import sys
import tempfile
from html.parser import HTMLParser
from pathlib import Path

import pytest

from checker.ingest import readers
from checker.report.json_report import validate

ROOT = Path(__file__).resolve().parents[1]
CORPUS_CODE = Path(__file__).resolve().parent / "corpus"
TIMEOUT_S = 30.0            # any run longer than this is a hang and fails its case
BOMB_CPU_S = 10.0           # stated bound: resource attacks are refused or read within this much CPU time
MEMORY_CEILING = 2**30      # stated bound: peak resident memory of one run (interpreter included)
FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")


def _load(name: str):
    spec = importlib.util.spec_from_file_location(f"corpus_{name}", CORPUS_CODE / f"{name}.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up while building the class
    spec.loader.exec_module(module)
    return module


make_corpus = _load("make_corpus")
# Built once at collection (the case list parametrizes the tests); removed when the session ends.
_WORK = Path(tempfile.mkdtemp(prefix="motorcheck-corpus-"))
atexit.register(shutil.rmtree, _WORK, True)
FILES = _WORK / "files"
CASES = {case.name: case for case in make_corpus.build(FILES)}
NAMES = sorted(CASES)
REVIEWABLE = [name for name in NAMES if CASES[name].outcome != "refuse"]  # refusals have no report to check


# --------------------------------------------------------------------------- running the corpus

def _fingerprint(path: Path) -> tuple[str, int, int]:
    stat = path.stat()
    return hashlib.sha256(path.read_bytes()).hexdigest(), stat.st_mtime_ns, stat.st_size


def _runs_twice(case) -> bool:
    return case.outcome == "review" or (case.outcome == "either" and not case.pdf)


def _plan() -> dict[int, list[str]]:
    """Case names per runner (hash seed): reviewed cases on both, the rest where the load is lighter."""
    jobs: dict[int, list[str]] = {1: [], 2: []}
    load = {1: 0, 2: 0}
    for case in sorted(CASES.values(), key=lambda c: (not c.bomb, c.name)):
        cost = 10 if case.bomb else 1
        seeds = (1, 2) if _runs_twice(case) else (min(load, key=load.get),)
        for seed in seeds:
            jobs[seed].append(case.name)
            load[seed] += cost
    return jobs


@dataclasses.dataclass
class Run:
    seed: int
    result: dict
    stem: Path

    def text(self, suffix: str) -> str:
        path = self.stem.with_name(self.stem.name + suffix)
        return path.read_text(encoding="utf-8") if path.exists() else ""

    def exists(self, suffix: str) -> bool:
        return self.stem.with_name(self.stem.name + suffix).exists()

    def report(self) -> dict:
        """The JSON report (parsed once; tests only read it)."""
        if not hasattr(self, "_report"):
            self._report = json.loads(self.text(".json"))
        return self._report


@dataclasses.dataclass
class Corpus:
    runs: dict[str, list[Run]]
    before: dict[str, tuple]
    after: dict[str, tuple]
    listing_before: list[str]
    listing_after: list[str]
    children_peak_bytes: int


@pytest.fixture(scope="session")
def corpus() -> Corpus:
    before = {name: _fingerprint(FILES / case.file) for name, case in CASES.items()}
    listing_before = sorted(os.listdir(FILES))
    jobs = _plan()
    env = {**os.environ, "PYTHONPATH": os.pathsep.join([str(ROOT), os.environ.get("PYTHONPATH", "")])}
    procs = {}
    for seed, names in jobs.items():
        manifest = _WORK / f"manifest-{seed}.json"
        manifest.write_text(json.dumps([dataclasses.asdict(CASES[n]) for n in names]), encoding="utf-8")
        out = _WORK / f"seed{seed}"
        procs[seed] = subprocess.Popen(
            [sys.executable, str(CORPUS_CODE / "run_cases.py"), str(manifest), str(out), str(out / "results.json"),
             str(TIMEOUT_S), str(FILES)],
            env={**env, "PYTHONHASHSEED": str(seed)}, cwd=_WORK, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    runs: dict[str, list[Run]] = {name: [] for name in CASES}
    for seed, proc in procs.items():
        _, err = proc.communicate(timeout=TIMEOUT_S * (len(jobs[seed]) + 2))
        assert proc.returncode == 0, err.decode(errors="replace")[-2000:]
        out = _WORK / f"seed{seed}"
        for name, result in json.loads((out / "results.json").read_text(encoding="utf-8")).items():
            runs[name].append(Run(seed, result, out / name))
    children_peak = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    children_peak *= 1 if sys.platform == "darwin" else 1024
    after = {name: _fingerprint(FILES / case.file) for name, case in CASES.items()}
    return Corpus(runs, before, after, listing_before, sorted(os.listdir(FILES)), children_peak)


def _reviewed(corpus: Corpus, name: str) -> list[Run]:
    runs = [run for run in corpus.runs[name] if run.result["exit"] in (0, 1)]
    if not runs:
        pytest.skip("refused: nothing to review")
    return runs


# --------------------------------------------------------------------------- the corpus itself

def test_corpus_has_the_issue_cases():
    assert len(CASES) >= 40
    words = " ".join(f"{c.name} {c.what}" for c in CASES.values()).lower()
    for needed in ("empty", "header", "csv text saved under an .xlsx", "workbook saved under a .csv", "truncated",
                   "password", ".xls", "opendocument", "cp1252", "byte-order mark", "';'", "tab", "quoted",
                   "ragged", "hidden sheet", "hidden in the workbook", "two sheets", "merged", "values the spreadsheet saved",
                   "without values", "dates", "same tag", "negative", "nan", "50 000", "5 000 hp", "kw",
                   "parse only in part", "1 mb", "chinese", "control characters", "<script>", "onerror",
                   "javascript:", "=hyperlink", "+cmd", "@sum", "zip", "billion-laughs", "pages",
                   "rectangles", "no text", "encrypted", "pdf-damaged", "vector strokes", "no table"):
        assert needed in words, needed
    assert {c.outcome for c in CASES.values()} <= {"refuse", "review", "either"}


def test_xml_hardening_is_active():
    """openpyxl parses through defusedxml only when it is installed; the readers refuse xlsx otherwise."""
    import openpyxl.xml

    assert openpyxl.xml.DEFUSEDXML is True


# --------------------------------------------------------------------------- per case

@pytest.mark.parametrize("name", NAMES)
def test_outcome_is_a_refusal_or_a_review(corpus, name):
    case = CASES[name]
    runs = corpus.runs[name]
    assert runs, "case was not run"
    for run in runs:
        result = run.result
        assert not result["timed_out"], f"no answer within {TIMEOUT_S} s"
        err = run.text(".err")
        assert "Traceback" not in err
        if result["exit"] == 2:
            lines = err.splitlines()
            assert len(lines) == 1 and lines[0].startswith("motorcheck: error: "), err[:500]
            assert case.outcome in ("refuse", "either"), f"refused: {err.strip()}"
            if case.refuse:
                assert re.search(case.refuse, lines[0], re.IGNORECASE), lines[0]
            assert not run.exists(".json") and not run.exists(".html") and not run.exists(".csv")
        else:
            assert result["exit"] in (0, 1), (result, err[:500])
            assert case.outcome in ("review", "either"), "expected a refusal, got a review"
            assert err == "", err[:500]


def _label_in(label: str, text: str) -> bool:
    return re.search(rf"(?<![\w!]){re.escape(label)}(?!\d)", text) is not None


def _findings(report: dict):
    for motor in report["motors"]:
        for found in motor["findings"]:
            yield motor, found


def _expectation_met(report: dict, run: Run, expect: dict) -> bool:
    [(kind, spec)] = expect.items()
    if kind == "motors":
        return report["summary"]["motors"] == spec
    if kind == "tag":
        return any(m["tag"] == spec for m in report["motors"])
    if kind == "note":
        return any(re.search(spec, note) for note in report["notes"])
    if kind == "record":
        motors = [m for m in report["motors"] if m["tag"] == spec["tag"]]
        return any(m["record"].get(spec["field"]) == spec["value"] for m in motors)
    if kind == "finding":
        for _, found in _findings(report):
            if found["status"] != spec["status"] or (spec.get("check") and found["check"] != spec["check"]):
                continue
            if not re.search(spec["message"], found["message"]):
                continue
            cell = spec.get("cell")
            if cell and not (_label_in(cell, found["message"]) or any(c["label"] == cell for c in found["cells"])):
                continue
            return True
        return False
    if kind == "no_finding":
        return not any(re.search(spec, found["message"]) for _, found in _findings(report))
    if kind == "skipped":
        return any(s["source"]["row"] == spec["row"] and re.search(spec["reason"], s["reason"])
                   for s in report["skipped"])
    if kind == "stdout_clean":
        out = run.text(".out")
        return bool(out) and not re.search(r"[\x00-\x08\x0b-\x1f\x7f\u202e]", out)
    if kind == "csv_neutralised":
        rows = list(csv.reader(io.StringIO(run.text(".csv").lstrip("\ufeff"))))
        return any(cell.startswith(("'=", "'+", "'-", "'@", "'\t")) for row in rows[1:] for cell in row)
    raise AssertionError(f"unknown expectation {kind}")


@pytest.mark.parametrize("name", REVIEWABLE)
def test_review_shows_the_problem(corpus, name):
    case = CASES[name]
    for run in _reviewed(corpus, name):
        report = run.report()
        missing = [expect for expect in case.expect if not _expectation_met(report, run, expect)]
        assert not missing, (missing, report["notes"],
                             [(m["tag"], f["check"], f["message"][:120]) for m, f in _findings(report)
                              if f["status"] != "pass"][:30])


@pytest.mark.parametrize("name", REVIEWABLE)
def test_every_row_is_accounted_for(corpus, name):
    case = CASES[name]
    for run in _reviewed(corpus, name):
        report = run.report()
        summary = report["summary"]
        feeders = [f for f in report.get("feeders", []) if f.get("feeder")]
        assert summary["rows_read"] == summary["motors"] + summary["skipped"] + summary.get("feeder_rows", 0)
        assert summary["motors"] == len(report["motors"]) and summary["skipped"] == len(report["skipped"])
        assert summary.get("feeder_rows", 0) == len(feeders)
        for row in report["skipped"]:
            assert row["reason"].strip() and row["source"]["label"].strip(), row
        if case.rows_read is not None:
            assert summary["rows_read"] == case.rows_read
        sources = ([m["source"] for m in report["motors"]] + [s["source"] for s in report["skipped"]]
                   + [f["feeder"]["source"] for f in feeders if f["feeder"].get("source")])
        if any("page" in s for s in sources):
            continue  # PDF tables are numbered per table and page; the sum above still holds
        by_sheet: dict[object, list[int]] = {}
        for source in sources:
            by_sheet.setdefault(source.get("sheet"), []).append(source["row"])
        for sheet, rows in by_sheet.items():
            assert sorted(rows) == list(range(1, max(rows) + 1)), f"sheet {sheet}: rows missing or repeated"


@pytest.mark.parametrize("name", NAMES)
def test_input_file_is_never_changed(corpus, name):
    assert corpus.after[name] == corpus.before[name]


def test_nothing_is_written_beside_the_inputs(corpus):
    assert corpus.listing_after == corpus.listing_before


@pytest.mark.parametrize("name", REVIEWABLE)
def test_json_validates_and_repeats_byte_for_byte(corpus, name):
    case = CASES[name]
    runs = _reviewed(corpus, name)
    for run in runs:
        assert validate(run.report()) == []
    if _runs_twice(case):
        assert len(runs) == 2 and {r.seed for r in runs} == {1, 2}
        assert runs[0].text(".json") == runs[1].text(".json")
        assert runs[0].text(".csv") == runs[1].text(".csv")


class _Page(HTMLParser):
    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict]] = []
        self.inline: dict[str, list[str]] = {"script": [], "style": []}
        self._open: str | None = None

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag in self.inline:
            self._open = tag
            self.inline[tag].append("")

    def handle_endtag(self, tag):
        if tag == self._open:
            self._open = None

    def handle_data(self, data):
        if self._open:
            self.inline[self._open][-1] += data


def _csp_hash(text: str) -> str:
    return "'sha256-" + base64.b64encode(hashlib.sha256(text.encode("utf-8")).digest()).decode() + "'"


@pytest.mark.parametrize("name", REVIEWABLE)
def test_html_is_escaped_and_self_contained(corpus, name):
    for run in _reviewed(corpus, name):
        page = run.text(".html")
        for planted in make_corpus.MARKUP:
            assert planted not in page, planted
        parsed = _Page()
        parsed.feed(page)
        allowed = {"html", "head", "meta", "title", "style", "script", "body", "header", "main", "section", "footer",
                   "nav", "div", "span", "p", "h1", "h2", "h3", "h4", "table", "thead", "tbody", "tr", "th", "td",
                   "ul", "ol", "li", "dl", "dt", "dd", "code", "pre", "a", "button", "details", "summary", "strong",
                   "em", "small", "br", "caption", "colgroup", "col", "abbr", "sup", "sub", "b", "i", "label",
                   "figure", "figcaption", "article", "aside", "time", "hr", "wbr", "mark", "kbd", "var", "q"}
        assert {tag for tag, _ in parsed.tags} <= allowed, {tag for tag, _ in parsed.tags} - allowed
        for tag, attrs in parsed.tags:
            for key, value in attrs.items():
                assert not key.startswith("on"), (tag, key)
                assert key not in ("src", "srcset", "action", "formaction", "background", "poster", "xlink:href",
                                   "style"), (tag, key)
                if key == "href":
                    assert (value or "").startswith("#"), value
        assert len(parsed.inline["script"]) == 1 and all(not attrs.get("src") for t, attrs in parsed.tags
                                                        if t == "script")
        csp = [a["content"] for t, a in parsed.tags if t == "meta" and a.get("http-equiv") == "Content-Security-Policy"]
        assert len(csp) == 1
        directives = {part.split()[0]: part.split()[1:] for part in csp[0].split(";") if part.strip()}
        assert directives["default-src"] == ["'none'"]
        assert directives["script-src"] == [_csp_hash(text) for text in parsed.inline["script"]]
        assert sorted(directives["style-src"]) == sorted(_csp_hash(text) for text in parsed.inline["style"])
        assert directives.get("base-uri") == ["'none'"] and directives.get("form-action") == ["'none'"]
        for style in parsed.inline["style"]:
            assert "url(" not in style and "@import" not in style


@pytest.mark.parametrize("name", REVIEWABLE)
def test_csv_export_neutralises_formulas(corpus, name):
    for run in _reviewed(corpus, name):
        text = run.text(".csv")
        assert text.startswith("\ufeff")
        rows = list(csv.reader(io.StringIO(text[1:])))
        assert rows[0] == ["tag", "location", "check", "rule", "status", "limit", "provided", "unit", "message"]
        findings = sum(len(m["findings"]) for m in run.report()["motors"])
        findings += sum(len(f["findings"]) for f in run.report().get("feeders", []))
        assert len(rows) - 1 == findings
        for row in rows[1:]:
            for column, cell in zip(rows[0], row):
                if column not in ("limit", "provided"):
                    assert not cell.startswith(FORMULA_TRIGGERS), (column, cell)


@pytest.mark.parametrize("name", NAMES)
def test_runs_are_bounded_in_time_and_memory(corpus, name):
    case = CASES[name]
    for run in corpus.runs[name]:
        result = run.result
        assert result["wall_s"] < TIMEOUT_S
        if case.bomb:
            assert result["cpu_s"] < BOMB_CPU_S, result
        assert result["peak_rss_bytes"] < MEMORY_CEILING, result


def test_all_children_stayed_under_the_memory_ceiling(corpus):
    """RUSAGE_CHILDREN: the largest peak of any waited-for descendant (runners and every case run)."""
    assert 0 < corpus.children_peak_bytes < MEMORY_CEILING


# --------------------------------------------------------------------------- the limits, one by one


def _info(name: str, size: int, packed: int):
    import zipfile

    info = zipfile.ZipInfo(name)
    info.file_size, info.compress_size = size, packed
    return info


def test_archive_limits_name_the_limit():
    readers.check_archive([_info("xl/worksheets/sheet1.xml", 50 * 2**20, 2**20)], "ok.xlsx")  # 50:1 passes
    readers.check_archive([_info("small.xml", 2**20, 10)], "ok.xlsx")  # at the ratio floor: not checked
    with pytest.raises(readers.InputError, match=r"compressed 101 to 1, beyond the 100 to 1 limit"):
        readers.check_archive([_info("a.xml", 50 * 2**20 + 1, (50 * 2**20) // 101)], "bomb.xlsx")
    with pytest.raises(readers.InputError, match=r"would unpack to 101 MiB, more than the 100 MiB limit"):
        readers.check_archive([_info(f"m{i}", 2**20, 2**19) for i in range(101)], "big.xlsx")
    with pytest.raises(readers.InputError, match=r"10,001 parts, more than the 10,000 limit"):
        readers.check_archive([_info(f"m{i}", 1, 1) for i in range(10_001)], "many.xlsx")


def test_cell_scan_counts_exactly_across_chunk_boundaries():
    import zipfile

    # Cells straddle the 1 MiB read chunks at every offset; prefixed and unprefixed tags both count.
    cells = [b'<c r="A%d"><v>1</v></c>' % i if i % 3 else b'<x:c r="A%d"/>' % i for i in range(1, 150_001)]
    xml = b"<worksheet><sheetData><row>" + b"".join(cells) + b"</row></sheetData><col/><cols/></worksheet>"
    buffer = io.BytesIO()
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("s.xml", xml)
        archive.writestr("f.xml", xml.replace(b"<v>1</v>", b"<f>A1</f>", 1))
    with zipfile.ZipFile(buffer) as archive:
        assert len(xml) > 3 * 2**20
        assert readers._scan_part(archive, "s.xml", 10**9) == (150_000, False)
        assert readers._scan_part(archive, "f.xml", 10**9) == (150_000, True)
        count, _ = readers._scan_part(archive, "s.xml", 1000)
        assert 1000 < count < 150_000  # stops soon after the budget


def test_formulas_without_value_are_marked_by_both_xlsx_paths():
    case = CASES["formulas-no-cache"]
    data = (FILES / case.file).read_bytes()
    slow = readers._read_workbook(data, case.file, None)
    fast = readers.read_grids(FILES / case.file)
    for grids in (slow, fast):
        # E4, E5 and C6 as 0-based (row, column): the formulas openpyxl wrote without saved results
        assert grids[0].formula_cells == frozenset({(3, 4), (4, 4), (5, 2)})
        assert grids[0].rows[3][4] == "" and grids[0].rows[3][0] == "P-101"
    cached = readers._read_workbook((FILES / CASES["formulas-cached"].file).read_bytes(), "c.xlsx", None)
    assert cached[0].formula_cells == frozenset() and cached[0].rows[3][4] == "27"


def test_csv_row_limit_is_checked_while_reading():
    text = "Tag,HP\n" + "R-1,1\n" * (readers.MAX_SHEET_ROWS + 5)
    with pytest.raises(readers.InputError, match=r"rows up to 150,001, more than the 150,000 rows"):
        readers._csv_records(text, ",", "rows.csv")


def test_a_sheet_reaching_far_is_refused_before_a_grid_is_built():
    with pytest.raises(readers.InputError, match=r"spans 60,000 rows x 40 columns, more than the 2,000,000 cells"):
        readers._check_area("wide.xlsx", "Motors", 60_000, 40)
    readers._check_area("ok.xlsx", "Motors", 50_000, 40)
