"""The command line: ``coilstage check``, ``waveforms``, ``descent``, ``field``, ``tables``, ``rules``
and the commands other modules plug in through :data:`COMMAND_MODULES`.

Exit codes: 0 no failure; 1 at least one FAIL verdict; 2 a bad drawing, table, usage or output
(including an analysis that cannot finish within bounded work, a folder or full disk at ``-o``);
3 an internal error (a bug: please report it with the drawing). 130 after Ctrl-C.

``-o`` means a *file* for a command that writes one report (``check``) and a *folder* for a command
that writes several files (``waveforms``, ``descent``, ``field``). Every file is written all or
nothing (see :mod:`coilstage.outputs`) and never over the drawing or a table it reads.

A plug-in command is a module named in :data:`COMMAND_MODULES` that exposes ``HELP: str`` (one line
for ``--help``), ``add_arguments(parser)`` and ``run(args) -> int``. It is imported only when its
command runs (or for ``coilstage --help``), so keep heavy imports inside ``run``. Errors it raises
on purpose (:class:`coilstage.errors.CoilstageError` and its kinds) are reported here with exit 2.
"""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

EXIT_OK, EXIT_FAIL, EXIT_BAD_INPUT, EXIT_INTERNAL, EXIT_INTERRUPTED = 0, 1, 2, 3, 130

#: name -> module path of a plug-in command (``HELP``, ``add_arguments(parser)``, ``run(args) -> int``)
COMMAND_MODULES: dict[str, str] = {
    "size": "coilstage.sizecmd",
    "diff": "coilstage.report.diff",
    "import": "coilstage.importcmd",
    "export": "coilstage.exportcmd",
    "init": "coilstage.starter",
    "sweep": "coilstage.sweepcmd",
}

_OUT_FOLDER_HELP = "folder to write the files into; created if its parent exists (default: %(default)s)"


def _err(text: str) -> None:
    """A line on standard error, with terminal control characters made visible; silent if stderr is
    closed."""
    from coilstage.report.safe import clean

    if sys.stderr is None:
        return
    try:
        print(clean(text, keep_newlines=True), file=sys.stderr)
    except (OSError, ValueError):
        pass


def make_console(stream: Any, to_file: bool) -> Any:
    from rich.console import Console as RichConsole

    class Console(RichConsole):
        def on_broken_pipe(self) -> None:  # rich would exit 1; a reader that left is no failure
            raise BrokenPipeError

    common = {"markup": False, "emoji": False, "highlight": False}
    if to_file:
        return Console(file=stream, width=140, color_system=None, force_terminal=False, **common)
    return Console(file=stream, **common)


def protected_paths(drawing_path: Path) -> list[Path]:
    """The drawing and every existing file it names (its own tables): inputs no output may replace."""
    out = [drawing_path]
    try:
        import tomllib

        raw = tomllib.loads(drawing_path.read_text(encoding="utf-8-sig"))
    except Exception:  # an unreadable drawing is the loader's to report; protect the file itself
        return out
    base = drawing_path.parent

    def walk(x: Any, depth: int = 0) -> None:
        if depth > 50:
            return
        if isinstance(x, dict):
            for v in x.values():
                walk(v, depth + 1)
        elif isinstance(x, list):
            for v in x:
                walk(v, depth + 1)
        elif isinstance(x, str) and 0 < len(x) < 4096 and "\0" not in x:
            try:
                p = base / x
                if p.is_file():
                    out.append(p)
            except (OSError, ValueError):
                pass

    walk(raw)
    return out


def _load(drawing_path: Path, analyse: dict | None = None, parts: list[str] | None = None) -> tuple[Any, Any]:
    """The drawing (with the parts libraries of ``--parts``) and, with ``analyse`` keywords, its
    analysis. DrawingError, DataError and AnalysisError propagate to :func:`main`, which reports them
    (exit 2)."""
    from coilstage import load_drawing

    drawing = load_drawing(drawing_path, parts_dirs=tuple(parts or ()))
    if analyse is None:
        return drawing, None
    from coilstage.analysis.run import analyse as run_analysis

    return drawing, run_analysis(drawing, **analyse)


def _plot_title(title: str) -> str:
    """A drawing title as literal text for a matplotlib figure (no mathtext, no control characters)."""
    from coilstage.report.safe import clean

    return clean(title).replace("$", r"\$")


# ---------------------------------------------------------------------------------------------------- check


def _check_arguments(c: argparse.ArgumentParser) -> None:
    c.add_argument(
        "drawing",
        nargs="+",
        help="the drawing file (TOML); with --summary also several files, folders or patterns such as 'fleet/*.toml'",
    )
    c.add_argument(
        "--format", "-f", choices=["text", "json", "markdown", "html"], default="text", help="report format (text)"
    )
    c.add_argument(
        "--output",
        "-o",
        metavar="FILE",
        help="write the report to FILE instead of the terminal; written all or nothing. With --summary: a FOLDER "
        "for each drawing's report and the summary",
    )
    c.add_argument("--details", "-d", action="store_true", help="text report: show the reasoning of every verdict")
    c.add_argument(
        "--parts",
        action="append",
        metavar="DIR",
        help='a parts library (a TOML file or a folder of them) for part = "NAME" references; may be repeated',
    )
    c.add_argument(
        "--brief",
        action="store_true",
        help="text, Markdown, HTML: only the result, the action list and the cautions (JSON always holds everything)",
    )
    c.add_argument(
        "--no-suggest",
        dest="suggest",
        action="store_const",
        const="none",
        help="leave out what would pass (by default each failure says which checked part size or rating clears it)",
    )
    c.add_argument(
        "--suggest",
        dest="suggest",
        action="store_const",
        const="all",
        help="say what would pass for the warnings too (each candidate is checked, so this takes longer)",
    )
    c.set_defaults(suggest="failures")
    c.add_argument(
        "--no-effects",
        dest="effects",
        action="store_false",
        help="leave out what each tolerance takes from the verdicts outside the tolerance model (by default each "
        "is found by analysing the drawing again with that tolerance removed; up to 16 stages)",
    )
    c.add_argument(
        "--duty-effects",
        action="store_true",
        help="also find the tolerances' effects on the rules that read the duty simulation (each re-analysis then "
        "simulates the duty: seconds rather than a fraction of one)",
    )
    c.add_argument(
        "--summary", action="store_true", help="fleet mode: check many drawings and print one summary line each"
    )
    c.add_argument(
        "--summary-format",
        choices=["text", "csv", "json"],
        default="text",
        help="fleet mode: form of the printed summary (text)",
    )
    c.add_argument("--jobs", "-j", type=int, metavar="N", help="fleet mode: worker processes (default: the cores)")


def _render(
    doc: dict[str, Any],
    fmt: str,
    stream: Any,
    to_file: bool,
    details: bool,
    extra: Any = None,
    *,
    brief: bool = False,
    record: dict[str, Any] | None = None,
    parts: dict[str, Any] | None = None,
) -> None:
    if fmt == "html":
        stream.write(extra())
    elif fmt == "json":
        from coilstage.report import jsonout

        stream.write(jsonout.render(doc, record, parts))
    elif fmt == "markdown":
        from coilstage.report import markdown

        stream.write(markdown.render(doc, brief=brief, record=record))
    else:
        from coilstage.report import text

        text.render(doc, make_console(stream, to_file), details=details, brief=brief, record=record)


def _check(args: argparse.Namespace) -> int:
    from coilstage import outputs

    paths = list(args.drawing)
    if args.summary or len(paths) > 1 or Path(paths[0]).is_dir() or any(ch in paths[0] for ch in "*?["):
        if not args.summary:
            _err("coilstage: several drawings, a folder or a pattern need --summary (one summary line per drawing)")
            return EXIT_BAD_INPUT
        if args.jobs is not None and args.jobs < 1:
            _err("coilstage: --jobs: expected a whole number of at least 1")
            return EXIT_BAD_INPUT
        if args.format == "html":
            _err("coilstage: --summary: the reports can be text, json or markdown")
            return EXIT_BAD_INPUT
        from coilstage import fleet

        return fleet.run_many(
            paths, args.format, args.output, args.jobs, args.summary_format, parts_dirs=tuple(args.parts or ())
        )
    drawing_path = Path(paths[0])
    if args.output:
        outputs.check_target(args.output, [drawing_path])
    elif sys.stdout is None:
        raise outputs.OutputError("standard output", "it is closed; write the report to a file with -o FILE")
    drawing, analysis = _load(drawing_path, {}, args.parts)
    from coilstage.checks import run_checks

    verdicts = run_checks(analysis)
    if args.effects:
        from coilstage.effects import with_effects

        verdicts = with_effects(analysis, verdicts, duty=args.duty_effects)
    from coilstage.report import document

    doc = document.build(analysis, verdicts)
    wanted = ("fail", "warn") if args.suggest == "all" else ("fail",)
    if args.suggest != "none" and any(v["status"] in wanted for v in doc["verdicts"]):
        doc = _with_suggestions(
            doc, (drawing, analysis, verdicts), drawing_path, args.parts, warnings=args.suggest == "all"
        )

    from coilstage.report import parts, record

    rec = record.build(drawing)
    listed = parts.build(drawing) if args.format in ("json", "html") else None

    def html_page() -> str:
        from coilstage.report import html

        plots = None if args.brief else html.make_plots(analysis)
        return html.render(doc, rec, listed, plots=plots, brief=args.brief)

    how = {"brief": args.brief, "record": rec, "parts": listed}
    if args.output:
        with outputs.staged([args.output], protected_paths(drawing_path)) as (tmp,):
            with open(tmp, "w", encoding="utf-8", newline="") as fh:
                _render(doc, args.format, fh, True, args.details, html_page, **how)
    else:
        _render(doc, args.format, sys.stdout, False, args.details, html_page, **how)
        sys.stdout.flush()
    summ = doc["summary"]
    if args.output or args.format != "text":
        _err(
            f"coilstage: {summ['result'].upper()} — {summ['fail']} fail, {summ['warn']} warn, {summ['pass']} pass, "
            f"{summ['not_checked']} not checked" + (f"; report written to {args.output}" if args.output else "")
        )
    return EXIT_FAIL if summ["fail"] else EXIT_OK


def _with_suggestions(
    doc: dict[str, Any],
    checked: tuple[Any, Any, Any],
    drawing_path: Path,
    parts: list[str] | None = None,
    warnings: bool = True,
) -> dict[str, Any]:
    """The document with each verdict's ``suggestion`` (the text of a checked part that would clear
    it, or None) and ``suggested`` (its details), from :func:`coilstage.sizing.suggestions` given the
    check already made (``checked``: drawing, analysis, verdicts). Where sizing cannot run the report
    goes out without suggestions and stderr says why (the check itself stands)."""
    from coilstage import sizing

    verdicts = checked[2]
    try:
        found = sizing.suggestions(
            drawing_path.read_text(encoding="utf-8-sig"),
            str(drawing_path),
            drawing_path.parent,
            checked=checked,
            parts_dirs=tuple(parts or ()),
            warnings=warnings,
        )
    except (sizing.SizingError, ArithmeticError, ValueError, RuntimeError, KeyError, OSError) as exc:
        _err(f"coilstage: no suggestions of what would pass ({exc}); the check itself stands")
        return doc
    by = sizing.suggestions_by_verdict(verdicts, found)
    rows = []
    for v in doc["verdicts"]:
        s = by.get((v["rule"], v["subject"])) if v["status"] in ("fail", "warn") else None
        detail = None
        if s:
            keep = ("part", "kind", "key", "today", "suggested", "next_smaller", "next_smaller_fails", "blocked")
            detail = {k: s[k] for k in (*keep, "fits", "needs", "missing", "checked", "text") if k in s}
        rows.append({**v, "suggestion": s["text"] if s else None, "suggested": detail})
    return {**doc, "verdicts": rows}


# ---------------------------------------------------------------------------------------------------- waveforms


def _waveforms_arguments(w: argparse.ArgumentParser) -> None:
    w.add_argument("drawing", help="the drawing file (TOML)")
    w.add_argument("--out", "-o", metavar="DIR", default="waveforms", help=_OUT_FOLDER_HELP)
    w.add_argument("--step", default="1 ms", help='sampling step, e.g. "1 ms" (default)')


def _announce(files: list[Path]) -> None:
    if sys.stdout is None:
        return
    for f in files:
        print(f"wrote {f}")


def _waveforms(args: argparse.Namespace) -> int:
    from coilstage import outputs
    from coilstage.units import QuantityError, parse_quantity

    try:
        step = parse_quantity(args.step, "time")
    except QuantityError as exc:
        _err(f"coilstage: --step: expected {exc}")
        return EXIT_BAD_INPUT
    if not 1e-6 <= step <= 1.0:
        _err("coilstage: --step: expected a step between 1 µs and 1 s")
        return EXIT_BAD_INPUT
    drawing_path = Path(args.drawing)
    outputs.check_folder(args.out)
    drawing, analysis = _load(drawing_path, {"heating": False})
    from coilstage.report import waveforms

    waveforms.check_size(analysis, step)
    rows = waveforms.series(analysis, step)
    ids = [s.id for s in drawing.stages]
    names = [f"{drawing_path.stem}-waveforms.{ext}" for ext in ("csv", "json", "png", "svg")]
    with outputs.folder_outputs(args.out, names, protected_paths(drawing_path)) as tmp:
        waveforms.write_csv(rows, tmp[0], ids)
        waveforms.write_json(rows, tmp[1], step, drawing.title)
        waveforms.plot(rows, tmp[2:], _plot_title(drawing.title))
    _announce([Path(args.out) / n for n in names])
    return EXIT_OK


# ---------------------------------------------------------------------------------------------------- descent


def _descent_arguments(ds: argparse.ArgumentParser) -> None:
    ds.add_argument("drawing", help="the drawing file (TOML)")
    ds.add_argument("--out", "-o", metavar="DIR", default="descent", help=_OUT_FOLDER_HELP)
    ds.add_argument("--profile", help="a shipped profile instead of the drawing's duty: continuous or endurance")


def _descent(args: argparse.Namespace) -> int:
    from coilstage import outputs

    drawing_path = Path(args.drawing)
    outputs.check_folder(args.out)
    drawing, _ = _load(drawing_path)
    from coilstage.analysis.duty import shipped_duty, simulate

    duty = drawing.duty
    if args.profile is not None:
        try:
            duty = shipped_duty(drawing, args.profile)
        except ValueError as exc:
            _err(f"coilstage: --profile: {exc}")
            return EXIT_BAD_INPUT
        total = sum(st.duration for st in duty.steps)
        if total > drawing.limits.max_duty:
            _err(
                f"coilstage: --profile {args.profile}: a duty of {total:g} s is longer than the drawing allows "
                f'({drawing.limits.max_duty:g} s); raise it with [limits] max_duty = "{total:g} s"'
            )
            return EXIT_BAD_INPUT
    if duty is None:
        _err("coilstage: the drawing gives no duty ([duty]); choose a shipped one with --profile")
        return EXIT_BAD_INPUT
    missing = [s.id for s in drawing.stages if not s.coil.has_thermal_model]
    if missing:
        _err(
            f"coilstage: note: no thermal model for the coils of {', '.join(missing)}; their windings are held at "
            "their surroundings"
        )
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    from coilstage.report.safe import clean

    with Progress(
        TextColumn("simulating {task.description}"),
        BarColumn(),
        TextColumn("{task.percentage:>3.0f} %"),
        TimeElapsedColumn(),
        console=make_console(sys.stderr, False),
        transient=True,
        disable=sys.stderr is None,
    ) as bar:
        task = bar.add_task(f"{clean(duty.name)} ({duty.duration / 60:.0f} min)", total=duty.duration)
        result = simulate(drawing, duty, progress=lambda done, total: bar.update(task, completed=done))
    from coilstage.report import descent

    names = [f"{drawing_path.stem}-descent.{ext}" for ext in ("csv", "json", "png", "svg")]
    with outputs.folder_outputs(args.out, names, protected_paths(drawing_path)) as tmp:
        descent.write_csv(result, tmp[0])
        descent.write_json(result, tmp[1], drawing.title)
        descent.plot(result, drawing, tmp[2:], _plot_title(drawing.title))
    if sys.stdout is not None:
        for k, s in enumerate(result.stage_ids):
            print(
                clean(
                    f"{s}: winding peaks at {result.stage_temperature[:, k].max():.0f} °C "
                    f"(limit {drawing.stages[k].coil.limit_temperature:g} °C), ends at "
                    f"{result.stage_current[-1, k]:.1f} A"
                )
            )
        print(f"battery: {result.charge_drawn.max() / 3600:.1f} A·h drawn at most")
    _announce([Path(args.out) / n for n in names])
    return EXIT_OK


# ---------------------------------------------------------------------------------------------------- field


def _field_arguments(fl: argparse.ArgumentParser) -> None:
    fl.add_argument("drawing", help="the drawing file (TOML)")
    fl.add_argument("--out", "-o", metavar="DIR", default="field", help=_OUT_FOLDER_HELP)


class _NothingToPlot(Exception):
    pass


def _field(args: argparse.Namespace) -> int:
    from coilstage import outputs

    drawing_path = Path(args.drawing)
    outputs.check_folder(args.out)
    drawing, analysis = _load(drawing_path, {"switching": False})
    from coilstage.report import field_plot

    names = [f"{drawing_path.stem}-field.{ext}" for ext in ("png", "svg")]
    try:
        with outputs.folder_outputs(args.out, names, protected_paths(drawing_path)) as tmp:
            if not field_plot.plot(analysis, tmp, _plot_title(drawing.title)):
                raise _NothingToPlot
    except _NothingToPlot:
        _err(
            "coilstage: no coil in this drawing has a magnetic circuit (pole_area, gap_length, iron_length): "
            "nothing to plot"
        )
        return EXIT_BAD_INPUT
    _announce([Path(args.out) / n for n in names])
    return EXIT_OK


# ---------------------------------------------------------------------------------------------------- listings


def _tables(args: argparse.Namespace) -> int:
    from rich.text import Text

    from coilstage.outputs import OutputError
    from coilstage.tables import list_tables

    if sys.stdout is None:
        raise OutputError("standard output", "it is closed")
    c = make_console(sys.stdout, False)
    c.print(Text.assemble(("Shipped tables", "bold"), " (coilstage/data)\n"))
    for row in list_tables():
        c.print(Text.assemble((row["file"], "bold"), f"  ({row['kind']}, {row['rows']} rows, {row['status']})"))
        c.print(f"    {row['title']}")
        c.print(f"    source: {row['standard']}", style="dim")
    c.print(
        "\nEach row carries its own status (published, from memory, common practice, derived). A drawing may "
        'point a cable at its own conductor table: conductor_table = "my-cables.toml" (same format as the '
        "shipped conductors_*.toml files)."
    )
    sys.stdout.flush()
    return EXIT_OK


def _rules(args: argparse.Namespace) -> int:
    from rich.text import Text

    from coilstage.checks import RULES
    from coilstage.outputs import OutputError

    if sys.stdout is None:
        raise OutputError("standard output", "it is closed")
    c = make_console(sys.stdout, False)
    c.print(Text("Rules\n", style="bold"))
    from coilstage.analysis.laws import rule_laws

    for r in RULES:
        c.print(Text.assemble((r.id, "bold"), f"  {r.title}"))
        c.print(f"    clause: {r.clause}", style="dim")
        for law in rule_laws(getattr(r, "laws", ())):
            c.print(f"    physics: {law.name} — {law.summary}")
            for ref in law.references:
                c.print(f"      source: {ref}", style="dim")
    sys.stdout.flush()
    return EXIT_OK


# ---------------------------------------------------------------------------------------------------- registry


@dataclass(frozen=True)
class Command:
    """What a command needs: its one-line help, its arguments and what it does (an exit code)."""

    HELP: str
    add_arguments: Callable[[argparse.ArgumentParser], None]
    run: Callable[[argparse.Namespace], int]


BUILTIN: dict[str, Command] = {
    "check": Command(
        "solve a drawing and give the verdicts (-o FILE: the report file); --summary checks a fleet (-o DIR)",
        _check_arguments,
        _check,
    ),
    "waveforms": Command(
        "write the switching time series (CSV, JSON) and plots (PNG, SVG) into a folder (-o DIR)",
        _waveforms_arguments,
        _waveforms,
    ),
    "descent": Command(
        "simulate a duty: winding and cable heating, currents, bus and battery; files into a folder (-o DIR)",
        _descent_arguments,
        _descent,
    ),
    "field": Command(
        "plot the braking field against ampere-turns with the corners' operating points; files into -o DIR",
        _field_arguments,
        _field,
    ),
    "tables": Command("list the shipped data tables and their sources", lambda p: None, _tables),
    "rules": Command("list the rules with the clauses and the physics they rest on", lambda p: None, _rules),
}


def command(name: str) -> Any:
    """The command called ``name``: a built-in or the imported module of :data:`COMMAND_MODULES`."""
    if name in BUILTIN:
        return BUILTIN[name]
    import importlib

    return importlib.import_module(COMMAND_MODULES[name])


def _names() -> list[str]:
    return list(BUILTIN) + [n for n in COMMAND_MODULES if n not in BUILTIN]


def _parser(selected: str | None = None) -> argparse.ArgumentParser:
    """The argument parser; with ``selected``, only that command's module is imported."""
    from coilstage import __version__

    p = argparse.ArgumentParser(
        prog="coilstage",
        description="Check the DC supply of a retarder's coil stages: currents, bus, cables, fuses, relays.",
        epilog=(
            "-o is a file for a command that writes one file (check, diff, size, import, export, init) and a folder "
            "for a command that writes several files (waveforms, descent, field, check --summary). Files are "
            "written all or nothing and never over the drawing. Exit codes: 0 no failure, 1 a failed check, "
            "2 bad input or output, 3 a bug."
        ),
    )
    p.add_argument("--version", action="version", version=f"coilstage {__version__}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for name in _names():
        if selected is not None and name != selected:
            sub.add_parser(name, help="", add_help=False)
            continue
        cmd = command(name)
        sp = sub.add_parser(name, help=cmd.HELP, description=cmd.HELP)
        cmd.add_arguments(sp)
    return p


def _selected(argv: list[str]) -> str | None:
    for a in argv:
        if a in ("-h", "--help", "--version"):
            return None
        if not a.startswith("-"):
            return a if a in _names() else None
    return None


def report_error(exc: BaseException) -> None:
    from coilstage.errors import AnalysisError, DataError, DrawingError
    from coilstage.outputs import OutputError

    if isinstance(exc, DrawingError | DataError):
        kind = "drawing" if isinstance(exc, DrawingError) else "table"
        n = len(exc.problems)
        _err(f"coilstage: {exc.source}: the {kind} cannot be used ({n} problem{'s' * (n != 1)}):")
        for pr in exc.problems:
            _err(f"  {pr}")
    elif isinstance(exc, AnalysisError):
        _err(f"coilstage: {exc.source}: the analysis cannot be completed: {exc.reason}")
    elif isinstance(exc, OutputError):
        _err(f"coilstage: cannot write {exc.path}: {exc.reason}; nothing was written")
    else:
        _err(f"coilstage: {exc}")


def _stdout_gone() -> None:
    """After a broken pipe: point standard output at the null device so the interpreter's final
    flush cannot fail again (as the Python documentation on SIGPIPE advises)."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, AttributeError, ValueError):
        pass


def _install_sigterm() -> None:
    """SIGTERM behaves as Ctrl-C, so temporary outputs are removed on the way out."""
    import signal
    import threading

    if threading.current_thread() is not threading.main_thread():
        return

    def handler(signum, frame):
        raise KeyboardInterrupt

    try:
        signal.signal(signal.SIGTERM, handler)
    except (ValueError, OSError):
        pass


def main(argv: list[str] | None = None) -> int:
    """Run one command; the exit code (0, 1, 2, 3 or 130)."""
    if argv is None:
        argv = sys.argv[1:]
        _install_sigterm()
    from coilstage.errors import CoilstageError

    try:
        args = _parser(_selected(argv)).parse_args(argv)
        return int(command(args.command).run(args))
    except KeyboardInterrupt:
        _err("coilstage: interrupted; nothing was written")
        return EXIT_INTERRUPTED
    except BrokenPipeError:  # the reader went away (| head): not a failure
        _stdout_gone()
        return EXIT_OK
    except CoilstageError as exc:
        report_error(exc)
        return EXIT_BAD_INPUT
    except OSError as exc:
        if sys.stdout is not None and _is_stdout_error(exc):
            from coilstage.outputs import describe

            _stdout_gone()
            _err(f"coilstage: cannot write to standard output: {describe(exc)}")
            return EXIT_BAD_INPUT
        return _internal(exc)
    except Exception as exc:  # a bug, not bad input: say so plainly
        return _internal(exc)


def _is_stdout_error(exc: OSError) -> bool:
    import errno

    return exc.errno in (errno.EBADF, errno.ENOSPC, errno.EIO, errno.EPIPE, errno.EDQUOT) and exc.filename is None


def _internal(exc: BaseException) -> int:
    _err(f"coilstage: internal error ({type(exc).__name__}: {exc}). Please report it with the drawing.")
    if "--debug" in sys.argv or os.environ.get("COILSTAGE_DEBUG"):
        raise exc
    return EXIT_INTERNAL
