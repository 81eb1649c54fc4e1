"""``coilstage size DRAWING -o NEW.toml``: write a coordinated design of the drawing's parts.

A command module: :data:`HELP`, :func:`add_arguments` and :func:`run` (exit 0 when the new design
fails no rule, 1 when some still fail — each listed with what holds it —, 2 for bad input).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from coilstage.sizing import SizeResult

HELP = "choose cable sizes, fuse ratings, relay ratings and suppressors that pass every rule; write a new drawing"

CAUTION = (
    "CAUTION: the new drawing is a design to check, not an installation instruction. Fit parts whose maker's "
    "ratings meet or exceed the written ones, follow the vehicle maker's instructions and local rules, and have "
    "the installation checked by a qualified installer; disconnect the battery negative before any work."
)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("drawing", type=Path, help="drawing file (TOML); never modified")
    parser.add_argument("-o", "--output", type=Path, required=True, help="where to write the new drawing")
    parser.add_argument("--force", action="store_true", help="replace the output file if it exists")
    parser.add_argument(
        "--parts",
        action="append",
        metavar="DIR",
        help="a parts library (a TOML file or a folder of them): its fuses, relays and suppressors are chosen "
        "where one passes every rule (smallest first), and bare part names resolve there; may be repeated",
    )


def run(args: argparse.Namespace) -> int:
    from coilstage import sizing
    from coilstage.errors import AnalysisError, DataError, DrawingError

    src: Path = args.drawing
    out: Path = args.output
    try:
        text = src.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        print(f"coilstage: cannot read {src}: {exc}", file=sys.stderr)
        return 2
    if out.resolve() == src.resolve():
        print("coilstage: --output would overwrite the drawing itself; choose another file", file=sys.stderr)
        return 2
    if out.exists() and not args.force:
        print(f"coilstage: {out} exists; give --force to replace it", file=sys.stderr)
        return 2
    try:
        result = sizing.size_drawing(text, str(src), src.parent, parts_dirs=tuple(getattr(args, "parts", None) or ()))
    except DrawingError as exc:
        print(f"coilstage: {exc.source}: {len(exc.problems)} problem(s)", file=sys.stderr)
        for p in exc.problems:
            print(f"  {p}", file=sys.stderr)
        return 2
    except (DataError, AnalysisError, sizing.SizingError) as exc:
        print(f"coilstage: {exc}", file=sys.stderr)
        if isinstance(exc, sizing.SizingError):
            # the loader's own list of problems
            from coilstage.drawing.load import parse_drawing

            try:
                parse_drawing(
                    sizing.prepare(text).loadable, str(src), src.parent, tuple(getattr(args, "parts", None) or ())
                )
            except DrawingError as err:
                for p in err.problems:
                    print(f"  {p}", file=sys.stderr)
        return 2
    try:
        out.write_text(result.text, encoding="utf-8")
    except OSError as exc:
        print(f"coilstage: cannot write {out}: {exc}", file=sys.stderr)
        return 2
    print(format_result(result, src, out))
    return 1 if any(r["status"] == "fail" for r in result.remaining) else 0


def format_result(result: SizeResult, src: Path, out: Path) -> str:
    """The change list, what still fails and why, and the new result, as plain text."""
    lines = [f"coilstage size {src} -> {out}", ""]
    if result.changes:
        lines.append(f"Changes ({len(result.changes)}):")
        width = max(len(f"{c.part}.{c.key}") for c in result.changes)
        for c in result.changes:
            lines.append(f"  {f'{c.part}.{c.key}':<{width}}  {c.old} → {c.new}")
            lines.append(f"  {'':<{width}}  because: {c.why}")
    else:
        lines.append("No change: every part the drawing lets sizing change already passes what it can.")
    if result.remaining:
        lines += ["", "Still failing or warning (what holds it):"]
        lines += [f"  {r['text']}" for r in result.remaining]
    counts: dict[str, int] = {}
    for v in result.verdicts:
        st = str(v.status.value if hasattr(v.status, "value") else v.status)
        counts[st] = counts.get(st, 0) + 1
    worst = "FAIL" if counts.get("fail") else "WARN" if counts.get("warn") else "PASS"
    lines += [
        "",
        f"NEW RESULT: {worst} — {counts.get('fail', 0)} fail, {counts.get('warn', 0)} warn, "
        f"{counts.get('pass', 0)} pass, {counts.get('not checked', 0)} not checked "
        f"(run `coilstage check {out}` for the full report)",
        f"  {result.rounds} round(s) to the fixed point; {result.evaluations.get('screen', 0)} screened and "
        f"{result.evaluations.get('full', 0)} fully checked candidates",
        "",
        CAUTION,
    ]
    return "\n".join(lines)


def main(argv: list[str] | None = None) -> int:
    """Run the command alone (``python -m coilstage.sizecmd``) until the CLI lists it."""
    p = argparse.ArgumentParser(prog="coilstage size", description=HELP)
    add_arguments(p)
    return run(p.parse_args(argv))


if __name__ == "__main__":
    raise SystemExit(main())
