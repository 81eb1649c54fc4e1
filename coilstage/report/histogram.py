"""Histograms of a tolerance sweep's margins, one per tight rule, as PNG and SVG.

Each plot shows how the samples' margin spreads (as a percentage of the rule's limit, positive on the
safe side), the limit itself (margin 0, where the rule fails), the nominal margin and the worst-case
margin of the declared tolerances where it is known. The counts come from the sweep's own streaming
histogram (:class:`coilstage.sweep.Histogram`), so no sample is held to draw them. matplotlib runs on
the Agg backend (non-interactive) and is imported only when a plot is made.
"""

from __future__ import annotations

import re
from collections.abc import Iterable
from pathlib import Path
from typing import Any

import numpy as np


def file_stem(rule: str, subject: str, taken: set[str] | None = None) -> str:
    """A file name stem for a rule and subject: ``hist-fuse.continuous-F-MAIN`` (characters other than
    letters, digits, dot, dash and underscore become ``_``; a clash gets ``-2``, ``-3``...).

    >>> file_stem("fuse.continuous", "F/MAIN 1")
    'hist-fuse.continuous-F_MAIN_1'
    """
    base = "hist-" + re.sub(r"[^A-Za-z0-9._-]", "_", f"{rule}-{subject}")[:150]
    if taken is None:
        return base
    stem, k = base, 2
    while stem.lower() in taken:
        stem, k = f"{base}-{k}", k + 1
    taken.add(stem.lower())
    return stem


def stems(rows: Iterable[Any]) -> list[str]:
    """One distinct file stem per row (in order)."""
    taken: set[str] = set()
    return [file_stem(r.rule, r.subject, taken) for r in rows]


def _pct(x: float | None) -> float | None:
    return None if x is None else 100.0 * x


def figure(row: Any, title: str, samples: int, seed: int) -> Any:
    """The histogram of one rule's margin (a :class:`coilstage.sweep.RuleStats`)."""
    from coilstage.report import svgplot

    plt = svgplot.pyplot()
    fig, ax = plt.subplots(figsize=(8.5, 4.0))
    edges = 100.0 * np.asarray(row.hist_edges, dtype=float)
    counts = np.asarray(row.hist_counts, dtype=float)
    if counts.size:
        ax.stairs(counts, edges, fill=True, color="0.75", edgecolor="0.25", linewidth=0.6, label="samples")
    lo = float(edges.min()) if edges.size else 0.0
    hi = float(edges.max()) if edges.size else 1.0
    ax.axvline(0.0, color="black", linewidth=1.6, label="limit (margin 0;\nthe rule fails below)")
    nom = _pct(row.nominal_margin)
    if nom is not None:
        ax.axvline(nom, color="black", linestyle="--", linewidth=1.0, label=f"nominal {nom:.2f} %")
    worst = _pct(row.corner_margin)
    if worst is not None:
        ax.axvline(worst, color="black", linestyle=":", linewidth=1.2, label=f"worst case {worst:.2f} %")
    span = [v for v in (lo, hi, 0.0, nom, worst) if v is not None]
    pad = 0.04 * (max(span) - min(span) or 1.0)
    left = min(span) - pad
    ax.set_xlim(left, max(span) + pad)
    if left < 0.0:  # the failing side of the limit
        ax.axvspan(left, 0.0, color="0.92", zorder=0, linewidth=0)
    ax.set_xlabel("margin, % of the limit (positive: on the safe side)")
    ax.set_ylabel("samples per bin")
    share = (
        f"fail {100 * row.fail_share:.2f} % (95 % CI {100 * row.fail_ci[0]:.2f}–{100 * row.fail_ci[1]:.2f} %), "
        f"warn {100 * row.warn_share:.2f} %"
    )
    q = ""
    if row.q01 is not None:
        q = f"; margin 1/50/99 %: {100 * row.q01:.2f} / {100 * row.q50:.2f} / {100 * row.q99:.2f} %"
    head = svgplot.literal(f"{row.rule} — {row.subject}")
    fig.suptitle(
        svgplot.wrap(svgplot.literal(title), 100) + f"\n{head}: {samples} samples, seed {seed}\n" + share + q,
        fontsize=8.5,
    )
    ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), borderaxespad=0.0)
    fig.tight_layout()
    return fig


def plot(row: Any, paths: list[Path], title: str, samples: int, seed: int) -> None:
    """:func:`figure` written to each of ``paths`` (PNG, SVG by suffix)."""
    from coilstage.report import svgplot

    fig = figure(row, title, samples, seed)
    try:
        svgplot.save(fig, paths, dpi=110)
    finally:
        svgplot.pyplot().close(fig)
