"""The command line: ``coilstage check``, ``coilstage tables``, ``coilstage rules``.

Exit codes: 0 no failure; 1 at least one FAIL verdict; 2 a bad drawing, table or usage; 3 an internal
error (a bug: please report it with the drawing).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

EXIT_OK, EXIT_FAIL, EXIT_BAD_INPUT, EXIT_INTERNAL = 0, 1, 2, 3


def _parser() -> argparse.ArgumentParser:
    from coilstage import __version__

    p = argparse.ArgumentParser(
        prog="coilstage",
        description="Check the DC supply of a retarder's coil stages: currents, bus, cables, fuses, relays.",
    )
    p.add_argument("--version", action="version", version=f"coilstage {__version__}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    c = sub.add_parser("check", help="solve a drawing and give the verdicts")
    c.add_argument("drawing", help="the drawing file (TOML)")
    c.add_argument("--format", "-f", choices=["text", "json", "markdown"], default="text", help="report format (text)")
    c.add_argument("--output", "-o", metavar="FILE", help="write the report to FILE instead of the terminal")
    c.add_argument("--details", "-d", action="store_true", help="text report: show the reasoning of every verdict")
    w = sub.add_parser("waveforms", help="write the switching time series (CSV, JSON) and plots (PNG, SVG)")
    w.add_argument("drawing", help="the drawing file (TOML)")
    w.add_argument("--out", "-o", metavar="DIR", default="waveforms", help="folder to write into (default: waveforms)")
    w.add_argument("--step", default="1 ms", help='sampling step, e.g. "1 ms" (default)')
    ds = sub.add_parser("descent", help="simulate a duty: winding and cable heating, currents, bus and battery")
    ds.add_argument("drawing", help="the drawing file (TOML)")
    ds.add_argument("--out", "-o", metavar="DIR", default="descent", help="folder to write into (default: descent)")
    ds.add_argument("--profile", help="a shipped profile instead of the drawing's duty: continuous or endurance")
    fl = sub.add_parser("field", help="plot the braking field against ampere-turns with the corners' operating points")
    fl.add_argument("drawing", help="the drawing file (TOML)")
    fl.add_argument("--out", "-o", metavar="DIR", default="field", help="folder to write into (default: field)")
    sub.add_parser("tables", help="list the shipped data tables and their sources")
    sub.add_parser("rules", help="list the rules with the clauses they rest on")
    return p


def _console(stream, to_file: bool):
    from rich.console import Console

    if to_file:
        return Console(file=stream, width=140, color_system=None, force_terminal=False)
    return Console(file=stream)


def _print_problems(source: str, problems, kind: str = "drawing") -> None:
    print(
        f"coilstage: {source}: the {kind} cannot be used ({len(problems)} problem{'s' * (len(problems) != 1)}):",
        file=sys.stderr,
    )
    for p in problems:
        print(f"  {p}", file=sys.stderr)


def _load(drawing_path: Path, analyse: dict | None = None):
    """The drawing (and, with ``analyse`` keywords, its analysis), or an exit code after printing
    every problem."""
    from coilstage.errors import DataError, DrawingError

    try:
        from coilstage import load_drawing

        drawing = load_drawing(drawing_path)
        if analyse is None:
            return drawing, None
        from coilstage.analysis.corners import analyse as run_analysis

        return drawing, run_analysis(drawing, **analyse)
    except DrawingError as exc:
        _print_problems(exc.source, exc.problems)
    except DataError as exc:
        _print_problems(exc.source, exc.problems, "table")
    return EXIT_BAD_INPUT


def _output_files(out: str, drawing_path: Path, what: str, exts: tuple[str, ...]) -> list[Path] | int:
    """The files a command writes into ``out``; an exit code if one of them would be the drawing."""
    folder = Path(out)
    files = [folder / f"{drawing_path.stem}-{what}.{ext}" for ext in exts]
    if any(f.resolve() == drawing_path.resolve() for f in files):
        print("coilstage: the output would overwrite the drawing itself", file=sys.stderr)
        return EXIT_BAD_INPUT
    folder.mkdir(parents=True, exist_ok=True)
    return files


def _check(args: argparse.Namespace) -> int:
    drawing_path = Path(args.drawing)
    if args.output and Path(args.output).resolve() == drawing_path.resolve():
        print("coilstage: --output would overwrite the drawing itself; choose another file", file=sys.stderr)
        return EXIT_BAD_INPUT
    loaded = _load(drawing_path, {})
    if isinstance(loaded, int):
        return loaded
    _drawing, analysis = loaded
    from coilstage.checks import run_checks

    verdicts = run_checks(analysis)
    from coilstage.report import document

    doc = document.build(analysis, verdicts)
    out = open(args.output, "w", encoding="utf-8") if args.output else sys.stdout
    try:
        if args.format == "json":
            from coilstage.report import jsonout

            out.write(jsonout.render(doc))
        elif args.format == "markdown":
            from coilstage.report import markdown

            out.write(markdown.render(doc))
        else:
            from coilstage.report import text

            text.render(doc, _console(out, bool(args.output)), details=args.details)
    finally:
        if args.output:
            out.close()
    summ = doc["summary"]
    if args.output or args.format != "text":
        print(
            f"coilstage: {summ['result'].upper()} — {summ['fail']} fail, {summ['warn']} warn, {summ['pass']} pass, "
            f"{summ['not_checked']} not checked" + (f"; report written to {args.output}" if args.output else ""),
            file=sys.stderr,
        )
    return EXIT_FAIL if summ["fail"] else EXIT_OK


def _waveforms(args: argparse.Namespace) -> int:
    from coilstage.units import QuantityError, parse_quantity

    try:
        step = parse_quantity(args.step, "time")
    except QuantityError as exc:
        print(f"coilstage: --step: expected {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    if not 1e-6 <= step <= 1.0:
        print("coilstage: --step: expected a step between 1 µs and 1 s", file=sys.stderr)
        return EXIT_BAD_INPUT
    drawing_path = Path(args.drawing)
    loaded = _load(drawing_path, {"heating": False})
    if isinstance(loaded, int):
        return loaded
    drawing, analysis = loaded
    from coilstage.report import waveforms

    files = _output_files(args.out, drawing_path, "waveforms", ("csv", "json", "png", "svg"))
    if isinstance(files, int):
        return files
    rows = waveforms.series(analysis, step)
    ids = [s.id for s in drawing.stages]
    waveforms.write_csv(rows, files[0], ids)
    waveforms.write_json(rows, files[1], step, drawing.title)
    waveforms.plot(rows, files[2:], drawing.title)
    for f in files:
        print(f"wrote {f}")
    return EXIT_OK


def _descent(args: argparse.Namespace) -> int:
    drawing_path = Path(args.drawing)
    loaded = _load(drawing_path)
    if isinstance(loaded, int):
        return loaded
    drawing, _ = loaded
    import dataclasses

    from coilstage import tables
    from coilstage.analysis.duty import continuous_duty, simulate

    duty = drawing.duty
    if args.profile:
        if args.profile not in tables.duty_profiles():
            print(f"coilstage: --profile: expected one of {', '.join(tables.duty_profiles())}", file=sys.stderr)
            return EXIT_BAD_INPUT
        duty = continuous_duty(drawing)
        if args.profile != "continuous":
            from coilstage.units import parse_quantity

            row = tables.duty_profiles()[args.profile]
            steps = tuple(
                dataclasses.replace(duty.steps[0], duration=parse_quantity(dur, "time"), engine=eng, moving=mov)
                for dur, _stg, eng, mov in row["steps"]
            )
            duty = dataclasses.replace(duty, name=args.profile, description=row["description"], steps=steps)
    missing = [s.id for s in drawing.stages if not s.coil.has_thermal_model]
    if missing:
        print(
            f"coilstage: note: no thermal model for the coils of {', '.join(missing)}; their windings are held at "
            "their surroundings",
            file=sys.stderr,
        )
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    with Progress(
        TextColumn("simulating {task.description}"),
        BarColumn(),
        TextColumn("{task.percentage:>3.0f} %"),
        TimeElapsedColumn(),
        console=_console(sys.stderr, False),
        transient=True,
    ) as bar:
        task = bar.add_task(f"{duty.name} ({duty.duration / 60:.0f} min)", total=duty.duration)
        result = simulate(drawing, duty, progress=lambda done, total: bar.update(task, completed=done))
    from coilstage.report import descent

    files = _output_files(args.out, drawing_path, "descent", ("csv", "json", "png", "svg"))
    if isinstance(files, int):
        return files
    descent.write_csv(result, files[0])
    descent.write_json(result, files[1], drawing.title)
    descent.plot(result, drawing, files[2:], drawing.title)
    for k, s in enumerate(result.stage_ids):
        print(
            f"{s}: winding peaks at {result.stage_temperature[:, k].max():.0f} °C "
            f"(limit {drawing.stages[k].coil.limit_temperature:g} °C), ends at {result.stage_current[-1, k]:.1f} A"
        )
    print(f"battery: {result.charge_drawn.max() / 3600:.1f} A·h drawn at most")
    for f in files:
        print(f"wrote {f}")
    return EXIT_OK


def _field(args: argparse.Namespace) -> int:
    drawing_path = Path(args.drawing)
    loaded = _load(drawing_path, {"switching": False})
    if isinstance(loaded, int):
        return loaded
    drawing, analysis = loaded
    from coilstage.report import field_plot

    files = _output_files(args.out, drawing_path, "field", ("png", "svg"))
    if isinstance(files, int):
        return files
    if not field_plot.plot(analysis, files, drawing.title):
        print(
            "coilstage: no coil in this drawing has a magnetic circuit (pole_area, gap_length, iron_length): "
            "nothing to plot",
            file=sys.stderr,
        )
        return EXIT_BAD_INPUT
    for f in files:
        print(f"wrote {f}")
    return EXIT_OK


def _tables() -> int:
    from coilstage.tables import list_tables

    c = _console(sys.stdout, False)
    c.print("[bold]Shipped tables[/bold] (coilstage/data)\n")
    for row in list_tables():
        c.print(f"[bold]{row['file']}[/bold]  ({row['kind']}, {row['rows']} rows, {row['status']})")
        c.print(f"    {row['title']}")
        c.print(f"    source: {row['standard']}", style="dim")
    c.print(
        "\nEach row carries its own status (published, from memory, common practice, derived). A drawing may "
        'point a cable at its own conductor table: conductor_table = "my-cables.toml" (same format as the '
        "shipped conductors_*.toml files)."
    )
    return EXIT_OK


def _rules() -> int:
    from coilstage.checks import RULES

    c = _console(sys.stdout, False)
    c.print("[bold]Rules[/bold]\n")
    for r in RULES:
        c.print(f"[bold]{r.id}[/bold]  {r.title}")
        c.print(f"    clause: {r.clause}", style="dim")
    return EXIT_OK


def main(argv: list[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    try:
        if args.command == "check":
            return _check(args)
        if args.command == "waveforms":
            return _waveforms(args)
        if args.command == "descent":
            return _descent(args)
        if args.command == "field":
            return _field(args)
        if args.command == "tables":
            return _tables()
        return _rules()
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:
        return EXIT_OK
    except Exception as exc:  # a bug, not bad input: say so plainly
        print(
            f"coilstage: internal error ({type(exc).__name__}: {exc}). Please report it with the drawing.",
            file=sys.stderr,
        )
        if "--debug" in sys.argv or __import__("os").environ.get("COILSTAGE_DEBUG"):
            raise
        return EXIT_INTERNAL
