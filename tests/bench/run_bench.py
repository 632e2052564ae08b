"""Speed benchmark: motorcheck against the cost of merely reading the same file.

For every generated input (see ``generate.py``) two whole processes are run,
alternating, several times:

* the *floor*: the fastest available reader loading the file into memory and
  doing nothing else (``pandas.read_excel(engine="calamine")``,
  ``pandas.read_csv``, pdfplumber extracting the tables of every page);
* ``python -m checker review FILE --json X --html Y --quiet``.

Medians are reported with the ratio, the peak memory of the review (its
processes together), the report sizes, and the scaling exponent ``k`` between sizes
(time ~ n^k). Also timed: ``motorcheck --help`` and the review of the bundled
demo; and, when a Chromium is installed, how long the 10 000-motor HTML report
takes to lay out and to re-filter in a headless browser.

Not part of the pass/fail tests (pytest does not collect this file). Run::

    python tests/bench/run_bench.py                 # all sizes; writes tests/bench/results/latest.json
    python tests/bench/run_bench.py --sizes 1000 --reps 3 --no-browser   # a quick look
"""
from __future__ import annotations

import argparse
import compileall
import contextlib
import datetime as dt
import json
import math
import os
import platform
import re
import shutil
import statistics
import subprocess
import sys
import threading
import time
from itertools import pairwise
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]
sys.path.insert(0, str(HERE))

import generate

RESULTS = HERE / "results" / "latest.json"
OUT_DIR = HERE / "out"
README = ROOT / "README.md"
README_START, README_END = "<!-- bench:start -->", "<!-- bench:end -->"
PY = sys.executable

FLOOR_CODE = {
    "xlsx": "import sys, pandas; pandas.read_excel(sys.argv[1], engine='calamine', header=None, sheet_name=None)",
    "csv": "import sys, pandas; pandas.read_csv(sys.argv[1], header=None, dtype=str, keep_default_na=False, "
           "encoding='utf-8-sig')",
    "pdf": "import sys, pdfplumber\nwith pdfplumber.open(sys.argv[1]) as pdf:\n"
           "    [page.extract_tables() for page in pdf.pages]",
}

# Targets of issue 6 (median wall seconds on the benchmark machine).
TARGETS = {
    "ratio_10k": 3.0, "seconds_100k": 30.0, "peak_rss_100k_mib": 1024.0, "k_10k_100k": 1.05,
    "ratio_pdf": 1.3, "help_s": 0.25, "demo_s": 1.5, "html_bytes_per_motor": 2048.0,
}


# --------------------------------------------------------------------------- process timing

TIME_BIN = shutil.which("time") if Path("/usr/bin/time").exists() else None
_TIME_MARK = "@@bench-maxrss-kib "


def _tree_pids(pid: int) -> list[int]:
    """``pid`` and every process descended from it (Linux /proc; [pid] elsewhere)."""
    pids, index = [pid], 0
    while index < len(pids):
        try:
            with open(f"/proc/{pids[index]}/task/{pids[index]}/children") as stream:
                pids.extend(int(child) for child in stream.read().split())
        except OSError:
            pass
        index += 1
    return pids


def _pss_kib(pid: int) -> int:
    """Proportional set size: a page shared by n processes counts 1/n in each (Linux /proc)."""
    try:
        with open(f"/proc/{pid}/smaps_rollup") as stream:
            for line in stream:
                if line.startswith("Pss:"):
                    return int(line.split()[1])
    except (OSError, ValueError):
        pass
    return 0


def _watch_tree_memory(pid: int, alone: int, peak: list[float], done: threading.Event) -> None:
    """Keep in ``peak[0]`` the largest summed PSS (MiB) of the process tree while the command has a
    process of its own (a review that forks a second process uses the memory of both).
    ``alone``: processes in the tree when it has none (the command's own peak RSS covers that).

    Reading PSS walks every page of a process (~13 ms for 600 MB): samples are spaced at least
    ten times their own cost apart, so this harness takes at most a tenth of one processor from
    the two the review uses (memory plateaus last seconds at that size).
    """
    wait = 0.05
    while not done.wait(wait):
        pids = _tree_pids(pid)
        if len(pids) > alone:
            started = time.perf_counter()
            peak[0] = max(peak[0], sum(_pss_kib(p) for p in pids) / 1024)
            wait = max(0.05, 10 * (time.perf_counter() - started))


def run_process(args: list[str], cwd: Path = ROOT) -> tuple[float, float, int, str]:
    """(wall seconds, peak memory MiB, exit code, stderr tail) of one whole child process.

    Peak memory is the larger of the command's peak RSS and the peak summed PSS of it and any
    process it starts (sampled; Linux). Linux hands a forked child its parent's peak RSS, so a
    child of this (large) harness would report at least the harness's; GNU time, small itself,
    runs the command and reports its own.
    """
    wrapped = ["/usr/bin/time", "-f", _TIME_MARK + "%M", *args] if TIME_BIN else args
    start = time.perf_counter()
    proc = subprocess.Popen(wrapped, cwd=cwd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    peak, done = [0.0], threading.Event()
    watcher = threading.Thread(target=_watch_tree_memory, args=(proc.pid, 2 if TIME_BIN else 1, peak, done),
                               daemon=True)
    watcher.start()
    stderr = proc.stderr.read().decode("utf-8", "replace")
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - start
    done.set()
    watcher.join()
    code = os.waitstatus_to_exitcode(status)
    rss_mib = usage.ru_maxrss / 1024  # Linux reports KiB
    if TIME_BIN and _TIME_MARK in stderr:
        stderr, _, tail = stderr.rpartition(_TIME_MARK)
        rss_mib = int(tail.split()[0]) / 1024
        stderr = "\n".join(line for line in stderr.splitlines() if not line.startswith("Command exited"))
    return wall, max(rss_mib, peak[0]), code, stderr[-400:]


def report_summary(json_path: Path) -> dict:
    """The report's summary, read from its own line (the report may be hundreds of MB)."""
    with json_path.open(encoding="utf-8") as stream:
        for line in stream:
            if line.startswith('  "summary": '):
                return json.loads(line[len('  "summary": '):].rstrip().rstrip(","))
    return json.loads(json_path.read_text(encoding="utf-8"))["summary"]


# checker/ingest/readers.py refuses sheets of more than MAX_SHEET_ROWS rows (hostile-input limit);
# a 100 000-motor schedule has ~113 000 rows, within it. A size whose CSV has more rows than the
# limit runs the same command line with the limit raised, and the results say so ("row_limit_raised").
_RAISED_LIMIT = ("import sys; from checker.ingest import readers; readers.MAX_SHEET_ROWS = 1_048_576; "
                 "from checker.cli import main; sys.exit(main(sys.argv[1:]))")


def sheet_row_limit() -> int:
    sys.path.insert(0, str(ROOT))
    from checker.ingest import readers

    return readers.MAX_SHEET_ROWS


def review_args(path: Path, json_path: Path, html_path: Path, raise_limit: bool = False) -> list[str]:
    head = [PY, "-c", _RAISED_LIMIT] if raise_limit else [PY, "-m", "checker"]
    return [*head, "review", str(path), "--json", str(json_path), "--html", str(html_path), "--quiet"]


def measure_case(kind: str, path: Path, reps: int, raise_limit: bool = False) -> dict:
    """Alternate floor and motorcheck ``reps`` times (after one untimed warm-up of each)."""
    OUT_DIR.mkdir(parents=True, exist_ok=True)
    json_path, html_path = OUT_DIR / f"{path.stem}.json", OUT_DIR / f"{path.stem}.html"
    floor_args = [PY, "-c", FLOOR_CODE[kind], str(path)]
    mc_args = review_args(path, json_path, html_path, raise_limit)
    floor_s, mc_s, rss, floor_rss = [], [], [], []
    for rep in range(reps + 1):
        f_wall, f_rss, f_code, f_err = run_process(floor_args)
        m_wall, m_rss, m_code, m_err = run_process(mc_args)
        if f_code != 0:
            raise SystemExit(f"floor reader failed on {path.name}: {f_err}")
        if m_code not in (0, 1):
            raise SystemExit(f"motorcheck failed on {path.name} (exit {m_code}): {m_err}")
        if rep == 0:
            continue  # warm-up: file cache, .pyc files
        floor_s.append(f_wall)
        mc_s.append(m_wall)
        rss.append(m_rss)
        floor_rss.append(f_rss)
    summary = report_summary(json_path)
    motors = summary["motors"]
    json_bytes, html_bytes = json_path.stat().st_size, html_path.stat().st_size
    floor, mc = statistics.median(floor_s), statistics.median(mc_s)
    return {
        "kind": kind, "file": path.name, "input_bytes": path.stat().st_size, "motors": motors,
        "rows_read": summary["rows_read"],
        "floor_s": round(floor, 3), "motorcheck_s": round(mc, 3), "ratio": round(mc / floor, 2),
        "floor_runs_s": [round(x, 3) for x in floor_s], "motorcheck_runs_s": [round(x, 3) for x in mc_s],
        "peak_rss_mib": round(max(rss), 1), "floor_peak_rss_mib": round(max(floor_rss), 1),
        "json_bytes": json_bytes, "html_bytes": html_bytes,
        "json_bytes_per_motor": round(json_bytes / motors) if motors else None,
        "html_bytes_per_motor": round(html_bytes / motors) if motors else None,
        "html_path": str(html_path),
        "row_limit_raised": raise_limit,
    }


def median_wall(args: list[str], reps: int) -> tuple[float, list[float]]:
    run_process(args)  # warm-up
    runs = []
    for _ in range(reps):
        wall, _, code, err = run_process(args)
        if code not in (0, 1):
            raise SystemExit(f"{' '.join(args)} failed (exit {code}): {err}")
        runs.append(wall)
    return statistics.median(runs), runs


def exponents(cases: list[dict], key: str) -> dict[str, float]:
    """k between consecutive sizes of one kind: time ~ n^k."""
    out = {}
    for a, b in pairwise(cases):
        if a["motors"] and b["motors"] and a[key] > 0:
            k = math.log(b[key] / a[key]) / math.log(b["motors"] / a["motors"])
            out[f"{a['motors']}->{b['motors']}"] = round(k, 3)
    return out


# --------------------------------------------------------------------------- browser check

_PROBE = """<script>
(function () {
  var t0 = performance.now(); void document.body.offsetHeight; var laid = performance.now();
  function filter(name) {
    var s = performance.now(); document.body.setAttribute("data-filter", name);
    void document.body.offsetHeight; return performance.now() - s;
  }
  var out = {layout_ms: laid, dom_elements: document.getElementsByTagName("*").length,
             open_details: document.querySelectorAll("details[open]").length,
             filter_fail_ms: filter("fail"), filter_pass_ms: filter("pass"), filter_all_ms: filter("all")};
  var pre = document.createElement("pre"); pre.id = "bench-probe"; pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
}());
</script>"""


def browser_check(html_path: Path) -> dict | None:
    """Layout and filter times of a report in headless Chromium (None when no Chromium).

    A copy of the page gets a probe script (and loses its CSP, which would block it);
    ``layout_ms`` is from navigation start to the first full layout.
    """
    exe = shutil.which("chromium") or shutil.which("chromium-browser") or shutil.which("google-chrome")
    if exe is None:
        return None
    text = html_path.read_text(encoding="utf-8")
    text = re.sub(r'<meta http-equiv="Content-Security-Policy"[^>]*>', "", text, count=1)
    probe = html_path.resolve().with_name(html_path.stem + ".probe.html")
    probe.write_text(text.replace("</body>", _PROBE + "</body>"), encoding="utf-8")
    start = time.perf_counter()
    proc = subprocess.run([exe, "--headless", "--no-sandbox", "--disable-gpu", "--dump-dom", probe.as_uri()],
                          capture_output=True, text=True, timeout=300, check=False)
    wall = time.perf_counter() - start
    match = re.search(r'<pre id="bench-probe">(.*?)</pre>', proc.stdout, re.DOTALL)
    if not match:
        return {"error": "probe did not run", "wall_s": round(wall, 2)}
    result = {k: round(v, 1) if isinstance(v, float) else v for k, v in json.loads(match.group(1)).items()}
    result["browser_process_s"] = round(wall, 2)
    result["browser"] = Path(exe).name
    return result


# --------------------------------------------------------------------------- machine and output

def machine_info() -> dict:
    cpu = ""
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    mem_gib = None
    try:
        mem_kib = int(re.search(r"MemTotal:\s+(\d+)", Path("/proc/meminfo").read_text()).group(1))
        mem_gib = round(mem_kib / 1024 / 1024, 1)
    except (OSError, AttributeError):
        pass
    from importlib.metadata import PackageNotFoundError, version

    versions = {}
    for name in ("pandas", "python-calamine", "openpyxl", "pdfplumber", "jinja2"):
        with contextlib.suppress(PackageNotFoundError):  # a missing package is just not listed
            versions[name] = version(name)
    return {"nproc": os.cpu_count(), "cpu_model": cpu or platform.processor(), "memory_gib": mem_gib,
            "python": platform.python_version(), "platform": platform.platform(), "packages": versions}


def pdf_reader_available() -> bool:
    return (ROOT / "checker" / "ingest" / "pdf.py").exists()


def targets_verdict(results: dict) -> list[tuple[str, str, bool | None]]:
    """(target, measured, met?) lines; None when not measured."""
    out = []
    by = {(c["kind"], c["motors"]): c for c in results["cases"]}
    for kind in ("xlsx", "csv"):
        c10 = next((c for c in results["cases"] if c["kind"] == kind and 9_000 <= c["motors"] <= 11_000), None)
        c100 = next((c for c in results["cases"] if c["kind"] == kind and c["motors"] >= 90_000), None)
        out.append((f"{kind} 10k: motorcheck <= {TARGETS['ratio_10k']:g}x floor",
                    f"{c10['ratio']:.2f}x" if c10 else "not run", c10["ratio"] <= TARGETS["ratio_10k"] if c10 else None))
        out.append((f"{kind} 100k: <= {TARGETS['seconds_100k']:g} s", f"{c100['motorcheck_s']:.1f} s" if c100 else "not run",
                    c100["motorcheck_s"] <= TARGETS["seconds_100k"] if c100 else None))
        out.append((f"{kind} 100k: peak memory <= 1 GiB", f"{c100['peak_rss_mib']:.0f} MiB" if c100 else "not run",
                    c100["peak_rss_mib"] <= TARGETS["peak_rss_100k_mib"] if c100 else None))
        k = results["scaling"].get(kind, {}).get("motorcheck", {})
        k_val = next((v for key, v in k.items() if key.endswith("->" + str(c100["motors"]))), None) if c100 else None
        out.append((f"{kind} k(10k->100k) <= {TARGETS['k_10k_100k']}", f"{k_val}" if k_val is not None else "not run",
                    k_val <= TARGETS["k_10k_100k"] if k_val is not None else None))
    pdf = next((c for c in results["cases"] if c["kind"] == "pdf"), None)
    out.append((f"PDF {generate.PDF_PAGES} pages <= {TARGETS['ratio_pdf']}x pdfplumber floor",
                f"{pdf['ratio']:.2f}x" if pdf else results.get("pdf_status", "not run"),
                pdf["ratio"] <= TARGETS["ratio_pdf"] if pdf else None))
    help_s, demo_s = results.get("help_s"), results.get("demo_s")
    out.append((f"--help <= {TARGETS['help_s']} s", f"{help_s:.3f} s" if help_s else "not run",
                help_s <= TARGETS["help_s"] if help_s else None))
    out.append((f"demo review <= {TARGETS['demo_s']} s", f"{demo_s:.2f} s" if demo_s else "not run",
                demo_s <= TARGETS["demo_s"] if demo_s else None))
    worst_html = max((c["html_bytes_per_motor"] or 0 for c in results["cases"] if c["kind"] != "pdf"), default=None)
    out.append(("HTML <= 2 KB per motor", f"{worst_html} B (largest case)" if worst_html else "not run",
                worst_html <= TARGETS["html_bytes_per_motor"] if worst_html else None))
    del by
    return out


def markdown_table(results: dict) -> str:
    m = results["machine"]
    lines = [
        (f"Measured {results['date']} on {m['nproc']} CPU ({m['cpu_model']}), {m['memory_gib']} GiB, "
         f"Python {m['python']}; medians of {results['reps']} alternating whole-process runs"
         + (f" ({results['reps_large']} for 50,000 motors or more)."
            if results.get("reps_large", results["reps"]) != results["reps"] else ".")),
        "",
        "| Input | Motors | Floor s | motorcheck s | Ratio | Peak memory MiB | JSON MB | HTML MB | HTML B/motor | k |",
        "|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|",
    ]
    for c in results["cases"]:
        k = results["scaling"].get(c["kind"], {}).get("motorcheck", {})
        k_here = next((v for key, v in k.items() if key.endswith("->" + str(c["motors"]))), None)
        lines.append(
            f"| {c['kind']} | {c['motors']:,} | {c['floor_s']:.2f} | {c['motorcheck_s']:.2f} | {c['ratio']:.2f} | "
            f"{c['peak_rss_mib']:.0f} | {c['json_bytes'] / 1e6:.2f} | {c['html_bytes'] / 1e6:.2f} | "
            f"{c['html_bytes_per_motor']} | {'' if k_here is None else f'{k_here:.2f}'} |")
    if not any(c["kind"] == "pdf" for c in results["cases"]):
        lines.append(f"| pdf ({generate.PDF_PAGES} pages) | | | | {results.get('pdf_status', 'not run')} | | | | | |")
    lines.append("")
    lines.append(f"`motorcheck --help`: {results.get('help_s', 0):.3f} s; demo review: {results.get('demo_s', 0):.2f} s.")
    browser = results.get("browser")
    if browser and "layout_ms" in browser:
        lines.append(f"HTML report of {browser['motors']:,} motors in headless {browser['browser']}: first layout "
                     f"{browser['layout_ms']:.0f} ms, {browser['dom_elements']:,} elements, "
                     f"{browser['open_details']:,} motors open; filter toggles {browser['filter_fail_ms']:.0f} / "
                     f"{browser['filter_pass_ms']:.0f} / {browser['filter_all_ms']:.0f} ms (fail / pass / all).")
    raised = [c for c in results["cases"] if c.get("row_limit_raised")]
    if raised:
        sizes = ", ".join(sorted({f"{c['motors']:,}" for c in raised}))
        lines.append(f"The {sizes}-motor cases have more rows than "
                     f"the {results.get('sheet_row_limit', 0):,}-row limit of checker/ingest/readers.py; they were "
                     f"run with that limit raised (same command line otherwise).")
    lines.append("")
    lines.append("k is the scaling exponent from the previous size (time ~ n^k). Targets:")
    lines.append("")
    for target, measured, ok in targets_verdict(results):
        mark = "met" if ok else ("NOT met" if ok is False else "not measured")
        lines.append(f"- {target}: {measured} ({mark})")
    return "\n".join(lines)


def update_readme(table: str) -> bool:
    text = README.read_text(encoding="utf-8")
    if README_START not in text or README_END not in text:
        return False
    head, rest = text.split(README_START, 1)
    _, tail = rest.split(README_END, 1)
    README.write_text(f"{head}{README_START}\n{table}\n{README_END}{tail}", encoding="utf-8")
    return True


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--sizes", default=",".join(str(n) for n in generate.SIZES),
                        help="motor counts, comma-separated (default %(default)s)")
    parser.add_argument("--kinds", default="xlsx,csv,pdf", help="input kinds (default %(default)s)")
    parser.add_argument("--reps", type=int, default=5, help="timed repetitions per case (default %(default)s)")
    parser.add_argument("--reps-large", type=int, default=3,
                        help="repetitions for cases of 50 000 motors or more (default %(default)s)")
    parser.add_argument("--no-browser", action="store_true", help="skip the headless-browser check")
    parser.add_argument("--out", type=Path, default=RESULTS, help="results JSON (default %(default)s)")
    parser.add_argument("--update-readme", action="store_true",
                        help="replace the table between the bench markers in README.md")
    args = parser.parse_args(argv)
    sizes = tuple(int(s) for s in args.sizes.split(",") if s)
    kinds = [k for k in args.kinds.split(",") if k]
    pdf_ok = "pdf" in kinds and pdf_reader_available()
    inputs = generate.ensure_inputs(sizes, pdf=pdf_ok)

    row_limit = sheet_row_limit()
    # An installed package has its bytecode compiled; a checkout run with PYTHONDONTWRITEBYTECODE set
    # would otherwise compile every module on every run (~0.2 s), which no user pays.
    compileall.compile_dir(str(ROOT / "checker"), quiet=1)
    results: dict = {"date": dt.date.today().isoformat(), "reps": args.reps, "reps_large": args.reps_large,
                     "machine": machine_info(),
                     "cases": [], "scaling": {}, "sheet_row_limit": row_limit}
    for kind in ("xlsx", "csv"):
        if kind not in kinds:
            continue
        for n in sizes:
            reps = args.reps_large if n >= 50_000 else args.reps
            print(f"{kind} {n:>7,} motors ...", end=" ", flush=True)
            rows = sum(1 for _ in inputs[f"csv-{n}"].open("rb")) if f"csv-{n}" in inputs else n
            case = measure_case(kind, inputs[f"{kind}-{n}"], reps, raise_limit=rows > row_limit)
            results["cases"].append(case)
            print(f"floor {case['floor_s']:.2f} s, motorcheck {case['motorcheck_s']:.2f} s, "
                  f"ratio {case['ratio']:.2f}, {case['peak_rss_mib']:.0f} MiB", flush=True)
    if "pdf" in kinds:
        if pdf_ok:
            print(f"pdf {generate.PDF_PAGES} pages ...", end=" ", flush=True)
            try:
                case = measure_case("pdf", inputs[f"pdf-{generate.PDF_PAGES}"], args.reps)
            except SystemExit as exc:
                results["pdf_status"] = f"failed: {str(exc)[:160]}"
                print(results["pdf_status"])
            else:
                results["cases"].append(case)
                print(f"floor {case['floor_s']:.2f} s, motorcheck {case['motorcheck_s']:.2f} s, "
                      f"ratio {case['ratio']:.2f}")
        else:
            results["pdf_status"] = "not available (checker/ingest/pdf.py missing)"
            print(f"pdf: {results['pdf_status']}")
    for kind in ("xlsx", "csv"):
        cases = [c for c in results["cases"] if c["kind"] == kind]
        results["scaling"][kind] = {"motorcheck": exponents(cases, "motorcheck_s"), "floor": exponents(cases, "floor_s")}

    help_s, help_runs = median_wall([PY, "-m", "checker", "--help"], max(args.reps, 7))
    results["help_s"], results["help_runs_s"] = round(help_s, 3), [round(x, 3) for x in help_runs]
    demo = ROOT / "fixtures" / "demo" / "northfield-pump-station.xlsx"
    OUT_DIR.mkdir(parents=True, exist_ok=True)
    demo_s, demo_runs = median_wall(review_args(demo, OUT_DIR / "demo.json", OUT_DIR / "demo.html"), args.reps)
    results["demo_s"], results["demo_runs_s"] = round(demo_s, 3), [round(x, 3) for x in demo_runs]

    if not args.no_browser:
        target = next((c for c in results["cases"] if c["kind"] == "xlsx" and 9_000 <= c["motors"] <= 11_000),
                      next((c for c in results["cases"] if c["kind"] != "pdf"), None))
        if target is not None:
            check = browser_check(Path(target["html_path"]))
            if check is not None:
                check["motors"] = target["motors"]
                results["browser"] = check
    for case in results["cases"]:
        case.pop("html_path", None)

    table = markdown_table(results)
    results["verdict"] = [{"target": t, "measured": m, "met": ok} for t, m, ok in targets_verdict(results)]
    args.out.parent.mkdir(parents=True, exist_ok=True)
    args.out.write_text(json.dumps(results, indent=2) + "\n", encoding="utf-8")
    print()
    print(table)
    print(f"\nresults: {args.out}")
    if args.update_readme:
        print("README.md updated" if update_readme(table) else "README.md has no bench markers; not updated")
    return 0


if __name__ == "__main__":
    sys.exit(main())
