"""A fleet in one run: many drawings checked at once, with a summary table.

``coilstage check DIR_OR_GLOB... --summary`` checks every drawing it is given (a folder stands for
its ``*.toml`` files, not counting wire-list bases ``*.base.toml``; a pattern such as
``"fleet/**/*.toml"`` is expanded, wire-list bases again left out; a file named
itself is always checked), in a pool of worker processes sized to the machine's cores,
with a progress bar on the terminal's error stream. One drawing's bad input never stops the
others: it appears in the summary as ``bad input`` with its problems.

The summary has one line per drawing: the drawing, its result (pass, warn, fail, bad input,
internal error), its numbers of FAIL and WARN verdicts, and its tightest margin with the rule and
subject it belongs to (the smallest headroom of any verdict, negative where a limit is exceeded).
It is printed as text, CSV or JSON (``--summary-format``). With ``-o DIR`` each drawing's report is
written into DIR (``NAME.txt``, ``NAME.json`` or ``NAME.md`` after ``--format``) beside the summary
in all three forms (``coilstage-summary.txt``, ``.csv``, ``.json``).

Exit code: the worst of the drawings: 3 (an internal error) > 2 (bad input) > 1 (a FAIL) > 0.
"""

from __future__ import annotations

import argparse
import csv
import glob
import io
import json
import math
import os
import sys
import time
from collections.abc import Callable
from dataclasses import asdict, dataclass, field
from pathlib import Path
from typing import TextIO

EXIT_OK, EXIT_FAIL, EXIT_BAD_INPUT, EXIT_INTERNAL = 0, 1, 2, 3
REPORT_EXT = {"text": "txt", "json": "json", "markdown": "md"}
SUMMARY_NAME = "coilstage-summary"
HELP = "check many drawings (folders, patterns) in parallel and print a summary table"


@dataclass
class Row:
    """One drawing's line in the summary."""

    drawing: str
    result: str  # pass | warn | fail | bad input | internal error
    fails: int = 0
    warns: int = 0
    passes: int = 0
    not_checked: int = 0
    margin: float | None = None  # tightest margin, fraction (negative: a limit exceeded)
    margin_rule: str = ""
    margin_subject: str = ""
    report: str | None = None  # where its report was written
    problems: list[str] = field(default_factory=list)
    seconds: float = 0.0

    @property
    def exit_code(self) -> int:
        return {"fail": EXIT_FAIL, "bad input": EXIT_BAD_INPUT, "internal error": EXIT_INTERNAL}.get(
            self.result, EXIT_OK
        )


# ---------------------------------------------------------------- which drawings


def expand(paths: list[str]) -> tuple[list[Path], list[str]]:
    """The drawing files named by ``paths`` (files, folders, glob patterns), in a stable order
    without repeats, and a message for each argument that names nothing."""
    out: list[Path] = []
    missing: list[str] = []
    seen: set[Path] = set()

    def add(p: Path) -> None:
        key = p.resolve()
        if key not in seen:
            seen.add(key)
            out.append(p)

    for arg in paths:
        p = Path(arg)
        if p.is_dir():
            found = sorted(x for x in p.glob("*.toml") if x.is_file() and not x.name.endswith(".base.toml"))
            if not found:
                missing.append(f"{arg}: a folder with no drawing (*.toml) in it")
            for x in found:
                add(x)
        elif p.is_file():
            add(p)
        elif any(ch in arg for ch in "*?["):
            found = sorted(
                Path(x) for x in glob.glob(arg, recursive=True) if Path(x).is_file() and not x.endswith(".base.toml")
            )
            if not found:
                missing.append(f"{arg}: a pattern that matches no file")
            for x in found:
                add(x)
        else:
            missing.append(f"{arg}: no such file or folder")
    return out, missing


def report_paths(drawings: list[Path], out_dir: Path, fmt: str) -> list[Path]:
    """One report file per drawing in ``out_dir``, named after the drawing (``-2``, ``-3`` … where
    two drawings share a name)."""
    ext = REPORT_EXT[fmt]
    used: set[str] = {f"{SUMMARY_NAME}.{e}" for e in ("txt", "csv", "json")}
    out = []
    for d in drawings:
        name, k = f"{d.stem}.{ext}", 2
        while name in used:
            name, k = f"{d.stem}-{k}.{ext}", k + 1
        used.add(name)
        out.append(out_dir / name)
    return out


# ---------------------------------------------------------------- one drawing (runs in a worker)


def _render(doc: dict, fmt: str, record: dict | None = None, parts: dict | None = None) -> str:
    """One drawing's report, with the record block (and in JSON the parts block) a single check writes."""
    if fmt == "json":
        from coilstage.report import jsonout

        return jsonout.render(doc, record, parts)
    if fmt == "markdown":
        from coilstage.report import markdown

        return markdown.render(doc, record=record)
    from rich.console import Console

    from coilstage.report import text

    buf = io.StringIO()
    text.render(doc, Console(file=buf, width=140, color_system=None, force_terminal=False), record=record)
    return buf.getvalue()


def check_one(path: str, fmt: str = "text", report: str | None = None, run: dict | None = None) -> Row:
    """Load, check and (with ``report``) write the report of one drawing; never raises.

    ``run``: what the whole run shares, found once by the parent process: ``argv`` (the command
    line the record block names), ``revision`` (the source revision, asked of git once, not per
    drawing) and ``parts_dirs`` (the parts libraries of ``--parts``)."""
    run = run or {}
    from coilstage.errors import AnalysisError, DataError, DrawingError

    t0 = time.perf_counter()
    row = Row(drawing=path, result="internal error")
    try:
        import coilstage
        from coilstage.checks.base import Status

        drawing = coilstage.load_drawing(path, parts_dirs=tuple(run.get("parts_dirs", ())))
        analysis, verdicts = coilstage.check(drawing)
        row.fails = sum(v.status is Status.FAIL for v in verdicts)
        row.warns = sum(v.status is Status.WARN for v in verdicts)
        row.passes = sum(v.status is Status.PASS for v in verdicts)
        row.not_checked = sum(v.status is Status.NOT_CHECKED for v in verdicts)
        row.result = "fail" if row.fails else "warn" if row.warns else "pass"
        with_margin = [v for v in verdicts if v.margin is not None and v.status is not Status.NOT_CHECKED]
        if with_margin:
            tight = min(with_margin, key=lambda v: v.margin)
            row.margin, row.margin_rule, row.margin_subject = tight.margin, tight.rule, tight.subject
        if report is not None:
            from coilstage.report import document, parts, record
            from coilstage.wirelist import write_atomic

            rec = record.build(drawing, argv=run.get("argv"), revision=run.get("revision"))
            listed = parts.build(drawing) if fmt == "json" else None
            write_atomic(Path(report), _render(document.build(analysis, verdicts), fmt, rec, listed))
            row.report = report
    except (DrawingError, DataError) as exc:
        row.result = "bad input"
        row.problems = [str(p) for p in exc.problems] or [str(exc)]
    except AnalysisError as exc:
        row.result = "bad input"
        row.problems = [exc.reason]
    except Exception as exc:  # a bug: reported on its row, the other drawings go on
        row.result = "internal error"
        row.problems = [f"{type(exc).__name__}: {exc}"]
    row.seconds = time.perf_counter() - t0
    return row


def _check_job(job: tuple[str, str, str | None, dict | None]) -> Row:
    return check_one(*job)


# ---------------------------------------------------------------- the pool


def default_jobs() -> int:
    """Worker processes: the cores this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on every platform
        return max(1, os.cpu_count() or 1)


def check_all(
    drawings: list[Path],
    fmt: str = "text",
    reports: list[Path] | None = None,
    jobs: int | None = None,
    progress: Callable[[int, int, Row], object] | None = None,
    run: dict | None = None,
) -> list[Row]:
    """Check every drawing, ``jobs`` at a time in worker processes; rows in the drawings' order.
    ``progress(done, total, row)`` is called as each finishes; ``run`` as for :func:`check_one`."""
    jobs_list = [(str(d), fmt, str(reports[k]) if reports else None, run) for k, d in enumerate(drawings)]
    n = min(jobs or default_jobs(), len(jobs_list)) or 1
    rows: list[Row | None] = [None] * len(jobs_list)
    done = 0
    if n == 1:
        for k, job in enumerate(jobs_list):
            rows[k] = _check_job(job)
            done += 1
            if progress:
                progress(done, len(jobs_list), rows[k])
        return rows  # type: ignore[return-value]
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor, as_completed
    from concurrent.futures.process import BrokenProcessPool

    # forkserver: workers start from a clean, warm server (no fork of a threaded parent)
    ctx = multiprocessing.get_context("forkserver" if "forkserver" in multiprocessing.get_all_start_methods() else None)
    if ctx.get_start_method() == "forkserver":
        ctx.set_forkserver_preload(["coilstage.fleet", "coilstage.analysis.corners", "coilstage.checks"])
    with ProcessPoolExecutor(max_workers=n, mp_context=ctx) as pool:
        futures = {pool.submit(_check_job, job): k for k, job in enumerate(jobs_list)}
        for fut in as_completed(futures):
            k = futures[fut]
            try:
                rows[k] = fut.result()
            except BrokenProcessPool as exc:
                rows[k] = Row(jobs_list[k][0], "internal error", problems=[f"the worker process died ({exc})"])
            except Exception as exc:  # e.g. a result that could not be sent back
                rows[k] = Row(jobs_list[k][0], "internal error", problems=[f"{type(exc).__name__}: {exc}"])
            done += 1
            if progress:
                progress(done, len(jobs_list), rows[k])
    return rows  # type: ignore[return-value]


# ---------------------------------------------------------------- the summary

SUMMARY_COLUMNS = ["drawing", "result", "fails", "warns", "tightest margin", "rule", "subject"]


def _margin_text(m: float | None) -> str:
    return "" if m is None or not math.isfinite(m) else f"{m * 100:+.1f} %"


def summary_text(rows: list[Row]) -> str:
    """A plain aligned table, then the problems of every drawing that could not be checked."""
    cells = [
        [
            r.drawing,
            r.result.upper(),
            str(r.fails),
            str(r.warns),
            _margin_text(r.margin),
            r.margin_rule,
            r.margin_subject,
        ]
        for r in rows
    ]
    widths = [max(len(h), *(len(c[i]) for c in cells)) if cells else len(h) for i, h in enumerate(SUMMARY_COLUMNS)]
    right = {2, 3, 4}

    def line(c: list[str]) -> str:
        return "  ".join(
            x.rjust(w) if i in right else x.ljust(w) for i, (x, w) in enumerate(zip(c, widths, strict=True))
        ).rstrip()

    out = [line(SUMMARY_COLUMNS), line(["-" * w for w in widths])]
    out += [line(c) for c in cells]
    n = {k: sum(r.result == k for r in rows) for k in ("pass", "warn", "fail", "bad input", "internal error")}
    out.append("")
    out.append(
        f"{len(rows)} drawing(s): {n['pass']} pass, {n['warn']} warn, {n['fail']} fail, {n['bad input']} bad input"
        + (f", {n['internal error']} internal error" if n["internal error"] else "")
    )
    for r in rows:
        if r.problems:
            out.append(f"{r.drawing} ({r.result}):")
            out += [f"  {p}" for p in r.problems]
    return "\n".join(out) + "\n"


def summary_csv(rows: list[Row]) -> str:
    buf = io.StringIO(newline="")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(
        [
            "drawing",
            "result",
            "fails",
            "warns",
            "passes",
            "not_checked",
            "tightest_margin",
            "rule",
            "subject",
            "report",
            "problems",
        ]
    )
    for r in rows:
        w.writerow(
            [
                r.drawing,
                r.result,
                r.fails,
                r.warns,
                r.passes,
                r.not_checked,
                "" if r.margin is None else f"{r.margin:.6g}",
                r.margin_rule,
                r.margin_subject,
                r.report or "",
                " | ".join(r.problems),
            ]
        )
    return buf.getvalue()


def summary_json(rows: list[Row], exit_code: int) -> str:
    data = {
        "drawings": [{k: v for k, v in asdict(r).items() if k != "seconds"} for r in rows],
        "exit_code": exit_code,
        "counts": {
            k: sum(r.result == k for r in rows) for k in ("pass", "warn", "fail", "bad input", "internal error")
        },
    }
    return json.dumps(data, indent=2, ensure_ascii=False) + "\n"


# ---------------------------------------------------------------- the command


def run_many(
    paths: list[str],
    fmt: str = "text",
    out_dir: str | None = None,
    jobs: int | None = None,
    summary_format: str = "text",
    stdout: TextIO | None = None,
    stderr: TextIO | None = None,
    progress: bool = True,
    parts_dirs: tuple = (),
) -> int:
    """Check every drawing named by ``paths`` and print the summary; the worst exit code.
    ``parts_dirs``: the parts libraries given to the run (``--parts``)."""
    stdout = stdout or sys.stdout
    stderr = stderr or sys.stderr
    drawings, missing = expand(paths)
    for m in missing:
        print(f"coilstage: {m}", file=stderr)
    if not drawings:
        print("coilstage: no drawing to check", file=stderr)
        return EXIT_BAD_INPUT
    if fmt not in REPORT_EXT:
        print(f"coilstage: --format: expected one of {', '.join(REPORT_EXT)}", file=stderr)
        return EXIT_BAD_INPUT
    reports = None
    folder = Path(out_dir) if out_dir else None
    if folder is not None:
        if folder.exists() and not folder.is_dir():
            print(f"coilstage: -o {folder}: expected a folder for the reports", file=stderr)
            return EXIT_BAD_INPUT
        reports = report_paths(drawings, folder, fmt)
        from coilstage.wirelist import _same_file

        inputs = {d.resolve() for d in drawings}
        if any(r.resolve() in inputs or (r.exists() and any(_same_file(r, d) for d in drawings)) for r in reports):
            print("coilstage: a report would overwrite a drawing; choose another folder", file=stderr)
            return EXIT_BAD_INPUT
        folder.mkdir(parents=True, exist_ok=True)
    run: dict = {"argv": list(sys.argv), "revision": None, "parts_dirs": tuple(parts_dirs)}
    if reports is not None:
        from coilstage.report import record

        run["revision"] = record.source_revision()  # once for the run; each report's record names it
    t0 = time.perf_counter()
    if progress:
        from rich.console import Console
        from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

        with Progress(
            TextColumn("checking"),
            BarColumn(),
            MofNCompleteColumn(),
            TextColumn("{task.description}"),
            TimeElapsedColumn(),
            console=Console(file=stderr),
            transient=True,
        ) as bar:
            task = bar.add_task("", total=len(drawings))
            rows = check_all(
                drawings,
                fmt,
                reports,
                jobs,
                lambda done, total, row: bar.update(task, completed=done, description=Path(row.drawing).name),
                run,
            )
    else:
        rows = check_all(drawings, fmt, reports, jobs, run=run)
    elapsed = time.perf_counter() - t0
    code = max((r.exit_code for r in rows), default=EXIT_OK)
    if missing:
        code = max(code, EXIT_BAD_INPUT)
    text_form = summary_text(rows)
    forms = {"text": text_form, "csv": summary_csv(rows), "json": summary_json(rows, code)}
    stdout.write(forms[summary_format])
    if folder is not None:
        from coilstage.wirelist import write_atomic

        for ext, key in (("txt", "text"), ("csv", "csv"), ("json", "json")):
            write_atomic(folder / f"{SUMMARY_NAME}.{ext}", forms[key])
        print(f"coilstage: reports and {SUMMARY_NAME}.txt/.csv/.json written to {folder}", file=stderr)
    print(f"coilstage: {len(rows)} drawing(s) checked in {elapsed:.1f} s; exit code {code}", file=stderr)
    return code


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("paths", nargs="+", metavar="DRAWING_DIR_OR_GLOB", help="drawings, folders of drawings, patterns")
    p.add_argument("--summary", action="store_true", help="one summary line per drawing (always on here)")
    p.add_argument("--format", "-f", choices=list(REPORT_EXT), default="text", help="format of each report (text)")
    p.add_argument("--output", "-o", metavar="DIR", help="write each drawing's report and the summary into DIR")
    p.add_argument(
        "--summary-format", choices=["text", "csv", "json"], default="text", help="form of the printed summary (text)"
    )
    p.add_argument(
        "--jobs", "-j", type=int, metavar="N", help=f"worker processes (default: the cores, {default_jobs()})"
    )


def run(args: argparse.Namespace) -> int:
    jobs = getattr(args, "jobs", None)
    if jobs is not None and jobs < 1:
        print("coilstage: --jobs: expected a whole number of at least 1", file=sys.stderr)
        return EXIT_BAD_INPUT
    return run_many(
        list(args.paths),
        getattr(args, "format", "text"),
        getattr(args, "output", None),
        jobs,
        getattr(args, "summary_format", "text"),
    )
