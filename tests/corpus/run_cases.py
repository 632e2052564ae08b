"""Run ``motorcheck review`` on every corpus case, each in its own child process.

One interpreter imports motorcheck once, then forks a child per case that runs
the command line's ``main`` exactly as ``python -m checker`` does (stdout and
stderr go to files; an exception that escaped ``main`` would print a traceback
and exit 1, as Python does). The parent enforces a wall-clock timeout per case
(SIGKILL) and reads the child's own resource usage with ``os.wait4``: its exit
code, wall time and peak resident memory. Forking saves the ~0.5 s interpreter
start per run, which keeps the corpus test fast; two of these runners with
different ``PYTHONHASHSEED`` values give the two runs whose JSON must match.

Usage: ``python run_cases.py MANIFEST OUT_DIR RESULTS_JSON [TIMEOUT_S [CORPUS_DIR]]``
(Linux/macOS only: needs ``os.fork`` and ``os.wait4``).
"""
from __future__ import annotations

import importlib.util
import json
import os
import resource
import signal
import sys
import time
import traceback
from pathlib import Path

# Safety net for the machine, not the measured ceiling (the test asserts that from ru_maxrss):
# a runaway child gets MemoryError instead of pushing the host into swap.
ADDRESS_SPACE_CAP = 6 * 2**30


def _preload() -> None:
    """Import what every review needs, so that forked children start warm."""
    for module in ("checker.cli", "checker.report.build", "checker.report.csv_report", "checker.review",
                   "openpyxl", "python_calamine"):
        importlib.import_module(module)
    html = importlib.import_module("checker.report.html_report")
    html._environment().get_template(html.TEMPLATE_NAME)
    if importlib.util.find_spec("checker.ingest.pdf") is not None:
        importlib.import_module("checker.ingest.pdf")


def _warm_up(out_dir: Path) -> None:
    """One small review in the parent, so children inherit loaded rulesets, schemas and templates.

    A long-running process would have them loaded too; each child still runs the whole command.
    """
    import contextlib
    import io

    from checker.cli import main

    sample = out_dir / "warm-up.csv"
    sample.write_text("Tag,HP,Volts,FLA\nW-1,10,575/3,11\n", encoding="utf-8")
    with contextlib.redirect_stdout(io.StringIO()):
        main(["review", str(sample), "--json", str(out_dir / "warm-up.json"), "--html", str(out_dir / "warm-up.html"),
              "--csv", str(out_dir / "warm-up.out.csv")])


def _child(argv: list[str], stdout_path: Path, stderr_path: Path) -> None:
    """Runs in the forked child; never returns."""
    code = 1
    try:
        for fd, path in ((1, stdout_path), (2, stderr_path)):
            target = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o644)
            os.dup2(target, fd)
            os.close(target)
        try:
            _soft, hard = resource.getrlimit(resource.RLIMIT_AS)
            cap = ADDRESS_SPACE_CAP if hard == resource.RLIM_INFINITY else min(ADDRESS_SPACE_CAP, hard)
            resource.setrlimit(resource.RLIMIT_AS, (cap, hard))
        except (ValueError, OSError):
            pass
        from checker.cli import main
        try:
            code = main(argv)
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
        except BaseException:  # noqa: BLE001 - shown as the interpreter would show an escaped exception
            traceback.print_exc()
            code = 1
    finally:
        try:
            sys.stdout.flush()
            sys.stderr.flush()
        finally:
            os._exit(code if isinstance(code, int) else 1)


def run_one(argv: list[str], stdout_path: Path, stderr_path: Path, timeout_s: float) -> dict:
    """Fork, run, wait with a deadline; exit code, wall time and the child's peak RSS."""
    sys.stdout.flush()
    sys.stderr.flush()
    start = time.monotonic()
    pid = os.fork()
    if pid == 0:
        _child(argv, stdout_path, stderr_path)
    timed_out = False
    while True:
        done, status, usage = os.wait4(pid, os.WNOHANG)
        if done:
            break
        if time.monotonic() - start > timeout_s:
            timed_out = True
            os.kill(pid, signal.SIGKILL)
            _, status, usage = os.wait4(pid, 0)
            break
        time.sleep(0.005)
    wall_s = time.monotonic() - start
    # ru_maxrss is KiB on Linux, bytes on macOS.
    peak_bytes = usage.ru_maxrss if sys.platform == "darwin" else usage.ru_maxrss * 1024
    return {"exit": os.waitstatus_to_exitcode(status), "timed_out": timed_out, "wall_s": round(wall_s, 3),
            "peak_rss_bytes": peak_bytes, "cpu_s": round(usage.ru_utime + usage.ru_stime, 3)}


def main(argv: list[str]) -> int:
    manifest, out_dir, results_path = Path(argv[0]), Path(argv[1]), Path(argv[2])
    timeout_s = float(argv[3]) if len(argv) > 3 else 30.0
    cases = json.loads(manifest.read_text(encoding="utf-8"))
    corpus = Path(argv[4]) if len(argv) > 4 else manifest.parent
    out_dir.mkdir(parents=True, exist_ok=True)
    _preload()
    _warm_up(out_dir)
    results = {}
    for case in cases:
        stem = out_dir / case["name"]
        args = ["review", str(corpus / case["file"]), "--json", f"{stem}.json", "--html", f"{stem}.html",
                "--csv", f"{stem}.csv"]
        result = run_one(args, Path(f"{stem}.out"), Path(f"{stem}.err"), timeout_s)
        results[case["name"]] = result
    results_path.write_text(json.dumps(results, indent=1), encoding="utf-8")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
