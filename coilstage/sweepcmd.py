"""``coilstage sweep DRAWING [--samples N] [--seed S] -o DIR``: a Monte Carlo sweep of the drawing's
declared tolerances through its steady-state rules.

A command module: :data:`HELP`, :func:`add_arguments` and :func:`run`. Exit 0 when no sample fails a
rule, 1 when some sample fails one, 2 for bad input or output (a bad drawing, a bad option, a folder
that cannot be written). The drawing is never written; every file goes into DIR all or nothing
(:mod:`coilstage.outputs`).

Files in DIR: ``sweep.csv`` and ``sweep.json`` (one row per rule and subject: the shares of samples
that fail and warn with their 95 % Wilson intervals, the margin's mean, standard error and 1/50/99 %
quantiles, the nominal and the worst-case margin), and ``hist-<rule>-<subject>.png`` / ``.svg`` for
each tight rule (some sample fails or warns, or the 1 % quantile margin is under 10 %). How the
samples are drawn and the statistics kept: :mod:`coilstage.sweep`.
"""

from __future__ import annotations

import argparse
import csv
import json
import math
import sys
from pathlib import Path
from typing import Any

HELP = (
    "Monte Carlo over the drawing's declared tolerances: share of samples failing or warning each steady-state "
    "rule, margin quantiles, histograms; files into a folder (-o DIR)"
)

DEFAULT_SAMPLES = 10_000
DEFAULT_SEED = 0

CAUTION = (
    "CAUTION: the sweep draws only the tolerances listed in sweep.json (the drawing's own, else shipped defaults "
    "with their sources and status) through the steady-state rules; a share of 0 % is no proof that a part is "
    "safe, and the worst-case verdicts of `coilstage check` decide. Fuses, cables and coils can run hot and a "
    "battery short circuit releases great energy: follow the vehicle maker's instructions and local rules, have "
    "the installation checked by a qualified installer, and disconnect the battery negative before any work."
)

EXIT_OK, EXIT_FAIL, EXIT_BAD_INPUT = 0, 1, 2


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("drawing", help="the drawing file (TOML); never modified")
    parser.add_argument(
        "--samples",
        "-n",
        default=str(DEFAULT_SAMPLES),
        metavar="N",
        help=f"number of samples, a whole number from 1 to 10 000 000 (default: {DEFAULT_SAMPLES})",
    )
    parser.add_argument(
        "--seed",
        default=str(DEFAULT_SEED),
        metavar="S",
        help=f"seed of the random numbers, a whole number >= 0; the same seed gives the same numbers "
        f"(default: {DEFAULT_SEED})",
    )
    parser.add_argument(
        "--out",
        "-o",
        metavar="DIR",
        default="sweep",
        help="folder to write the files into; created if its parent exists (default: %(default)s)",
    )
    parser.add_argument(
        "--parts",
        action="append",
        metavar="DIR",
        help='a parts library (a TOML file or a folder of them) for part = "NAME" references; may be repeated',
    )
    parser.add_argument("--quiet", "-q", action="store_true", help="no progress bar")


def _whole(text: str, name: str, lo: int, hi: int | None) -> tuple[int | None, str | None]:
    t = str(text).strip().replace("_", "").replace(" ", "").replace("\u202f", "")
    try:
        v = int(t)
    except ValueError:
        try:
            f = float(t)
        except ValueError:
            return None, f"{name}: found {text!r}; expected a whole number"
        if not (math.isfinite(f) and f.is_integer()):
            return None, f"{name}: found {text!r}; expected a whole number"
        v = int(f)
    if v < lo or (hi is not None and v > hi):
        bound = f"from {lo:,} to {hi:,}".replace(",", " ") if hi is not None else f"of at least {lo}"
        return None, f"{name}: found {text}; expected a whole number {bound}"
    return v, None


def _err(text: str) -> None:
    from coilstage.report.safe import clean

    if sys.stderr is not None:
        print(clean(text, keep_newlines=True), file=sys.stderr)


def _pct(x: float | None, digits: int = 2) -> str:
    return "—" if x is None else f"{100 * x:.{digits}f}"


def _share(k: int, n: int, ci: tuple[float, float]) -> str:
    return f"{100 * k / n:.2f} [{100 * ci[0]:.2f}, {100 * ci[1]:.2f}]"


def summary(result: Any, drawing_path: Path, title: str, out: Path) -> str:
    """The text summary: the drawing, N, seed, the parameters and the table, rules with a nonzero
    fail or warn share first."""
    from coilstage import sweep
    from coilstage.report.safe import clean

    lines = [
        f"coilstage sweep {drawing_path}",
        f"  {title}",
        f"  {result.samples} sample{'s' * (result.samples != 1)}, seed {result.seed}, "
        f"{len(result.parameters)} declared parameters "
        f"(see {out / 'sweep.json'}); the steady-state rules only",
        "",
    ]
    head = (
        "rule",
        "subject",
        "fail % [95 % CI]",
        "warn % [95 % CI]",
        "mean %",
        "1 %",
        "50 %",
        "99 %",
        "nominal %",
        "worst case %",
    )
    body = []
    for r in result.rules:
        body.append(
            (
                clean(r.rule),
                clean(r.subject),
                _share(r.fail, r.samples, r.fail_ci),
                _share(r.warn, r.samples, r.warn_ci),
                _pct(r.mean),
                _pct(r.q01),
                _pct(r.q50),
                _pct(r.q99),
                _pct(r.nominal_margin),
                _pct(r.corner_margin),
            )
        )
    width = [max(len(h), *(len(b[k]) for b in body)) if body else len(h) for k, h in enumerate(head)]
    right = set(range(2, len(head)))

    def fmt(row: tuple[str, ...]) -> str:
        return "  ".join(c.rjust(width[k]) if k in right else c.ljust(width[k]) for k, c in enumerate(row)).rstrip()

    lines.append("Margin (headroom as a % of each rule's limit, positive on the safe side) over the samples:")
    lines.append(fmt(head))
    n_bad = sum(1 for r in result.rules if r.fail + r.warn)
    lines += [fmt(b) for b in body]
    if not body:
        lines.append("  (no rule depends on the declared parameters)")
    tight = result.tight()
    bad = [r for r in result.rules if r.fail]
    lines += [
        "",
        f"{n_bad} of {len(result.rules)} rule subjects fail or warn in some sample ({len(bad)} fail); "
        f"{len(tight)} tight (some sample fails or warns, or the 1 % quantile margin is under "
        f"{100 * sweep.TIGHT_MARGIN:.0f} %): histograms written for them.",
        f"Worst case: {result.rules[0].corner_note if result.rules else 'not known'}.",
        "Quantiles are read from a histogram of the margins: each within 'quantile_resolution' (sweep.json) of the "
        "ceil(qN)-th smallest sample.",
        "",
        CAUTION,
    ]
    return "\n".join(lines)


def _json_value(x: Any) -> Any:
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


def document(result: Any, drawing_path: Path, title: str, stems: dict[tuple[str, str], str]) -> dict[str, Any]:
    from coilstage import sweep

    rows = []
    for row, r in zip(sweep.table_rows(result), result.rules, strict=True):
        rows.append(
            {
                **{k: _json_value(v) for k, v in row.items()},
                "nominal_status": sweep.status_word(r.nominal_status),
                "worst_case_status": sweep.status_word(r.corner_status),
                "histogram": {
                    "margin_edges": [_json_value(e) for e in r.hist_edges],
                    "counts": list(r.hist_counts),
                },
                "plots": [f"{stems[(r.rule, r.subject)]}.{e}" for e in ("png", "svg")]
                if (r.rule, r.subject) in stems
                else [],
            }
        )
    return {
        "drawing": str(drawing_path),
        "title": title,
        "samples": result.samples,
        "seed": result.seed,
        "chunk": result.chunk,
        "method": {
            "random_numbers": (
                f"numpy PCG64, one stream per block of {sweep.BLOCK} samples: "
                "Generator(PCG64(SeedSequence(seed, spawn_key=(block,)))); a sample depends only on the seed "
                "and its index"
            ),
            "uniform": "evenly between low and high",
            "normal": "mean at the middle of [low, high], the ends at ±3 sigma, truncated at the ends",
            "shares": "fraction of the samples; 95 % Wilson score interval (Wilson 1927, JASA 22:209-212)",
            "margin": "headroom as a fraction of the rule's limit, positive on the safe side",
            "quantiles": (
                f"from a histogram of at most {sweep.HIST_BINS} cells: within quantile_resolution of the "
                "ceil(qN)-th smallest sample (Hyndman and Fan 1996, definition 1)"
            ),
            "worst_case": result.rules[0].corner_note if result.rules else "",
            "tight": f"some sample fails or warns, or the 1 % quantile margin is under {sweep.TIGHT_MARGIN:g}",
        },
        "parameters": [{k: _json_value(v) for k, v in p.items()} for p in result.parameters],
        "rules": rows,
        "caution": CAUTION,
    }


def _write_csv(result: Any, path: Path) -> None:
    from coilstage import sweep

    rows = sweep.table_rows(result)
    fields = list(rows[0]) if rows else ["rule", "subject"]
    with open(path, "w", encoding="utf-8", newline="") as fh:
        w = csv.DictWriter(fh, fieldnames=fields)
        w.writeheader()
        for r in rows:
            w.writerow({k: ("" if v is None else (f"{v:.10g}" if isinstance(v, float) else v)) for k, v in r.items()})


def run(args: argparse.Namespace) -> int:
    from coilstage import load_drawing, outputs, sweep
    from coilstage.errors import AnalysisError

    problems = []
    n, p1 = _whole(args.samples, "--samples", 1, sweep.MAX_SAMPLES)
    seed, p2 = _whole(args.seed, "--seed", 0, 2**63 - 1)
    problems += [p for p in (p1, p2) if p]
    if problems:
        for p in problems:
            _err(f"coilstage: {p}")
        return EXIT_BAD_INPUT
    assert n is not None and seed is not None
    drawing_path = Path(args.drawing)
    out = Path(args.out)
    outputs.check_folder(out)
    drawing = load_drawing(drawing_path, parts_dirs=tuple(getattr(args, "parts", None) or ()))
    from coilstage.analysis import params, sensitivities

    m = params.model(drawing)
    if m.net.size(True) > sensitivities.MAX_UNKNOWNS:
        raise AnalysisError(
            str(drawing_path),
            f"the network has {m.net.size(True)} unknowns; the sweep's vectorised model takes at most "
            f"{sensitivities.MAX_UNKNOWNS}",
        )
    import numpy as np

    try:
        result = _sweep(drawing, n, seed, quiet=getattr(args, "quiet", False))
    except np.linalg.LinAlgError as exc:
        raise AnalysisError(
            str(drawing_path), f"a sampled network cannot be solved ({exc}); check the parts' resistances"
        ) from None

    from coilstage.cli import protected_paths
    from coilstage.report import histogram
    from coilstage.report.safe import clean

    title = clean(drawing.title)
    tight = result.tight()
    stem_list = histogram.stems(tight)
    stems = {(r.rule, r.subject): s for r, s in zip(tight, stem_list, strict=True)}
    names = ["sweep.csv", "sweep.json"] + [f"{s}.{e}" for s in stem_list for e in ("png", "svg")]
    doc = document(result, drawing_path, title, stems)
    with outputs.folder_outputs(out, names, protected_paths(drawing_path)) as tmp:
        _write_csv(result, tmp[0])
        with open(tmp[1], "w", encoding="utf-8", newline="") as fh:
            json.dump(doc, fh, indent=1, ensure_ascii=False, allow_nan=False)
            fh.write("\n")
        for k, r in enumerate(tight):
            histogram.plot(r, tmp[2 + 2 * k : 4 + 2 * k], drawing.title, result.samples, result.seed)
    if sys.stdout is not None:
        print(summary(result, drawing_path, title, out))
        print(f"\nwrote {out / 'sweep.csv'}, {out / 'sweep.json'} and {len(tight)} histograms (PNG, SVG) in {out}")
        sys.stdout.flush()
    return EXIT_FAIL if any(r.fail for r in result.rules) else EXIT_OK


def _sweep(drawing: Any, n: int, seed: int, quiet: bool) -> Any:
    from coilstage import sweep

    stream = sys.stderr
    show = not quiet and stream is not None and hasattr(stream, "isatty") and stream.isatty()
    if not show:
        return sweep.sweep_drawing(drawing, n, seed)
    from rich.console import Console
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

    console = Console(file=stream, markup=False, emoji=False, highlight=False)
    with Progress(
        TextColumn("sweeping"),
        BarColumn(),
        MofNCompleteColumn(),
        TextColumn("samples"),
        TimeElapsedColumn(),
        console=console,
        transient=True,
    ) as bar:
        task = bar.add_task("sweep", total=n)
        return sweep.sweep_drawing(drawing, n, seed, progress=lambda done, total: bar.update(task, completed=done))


def main(argv: list[str] | None = None) -> int:
    """Run the command alone (``python -m coilstage.sweepcmd DRAWING ...``): the same exit codes and
    error messages as through ``coilstage sweep``."""
    from coilstage.errors import CoilstageError

    p = argparse.ArgumentParser(prog="coilstage sweep", description=HELP)
    add_arguments(p)
    args = p.parse_args(argv)
    try:
        return run(args)
    except CoilstageError as exc:
        from coilstage.cli import report_error

        report_error(exc)
        return EXIT_BAD_INPUT


if __name__ == "__main__":
    raise SystemExit(main())
