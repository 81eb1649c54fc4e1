"""Shared plotting set-up for the plot writers: matplotlib with text kept as text, titles wrapped,
curves that coincide named, and figures as SVG text for inlining in an HTML report.

matplotlib is imported only when a plot is made (it costs about half a second).
"""

from __future__ import annotations

import io
import re
import textwrap
from pathlib import Path
from types import ModuleType
from typing import Any

import numpy as np

#: Line styles and markers that keep curves apart in black and white.
STYLES = ("-", "--", "-.", ":")
MARKERS = ("o", "s", "^", "v", "D", "x", "+", "*")


def pyplot() -> ModuleType:
    """matplotlib.pyplot on the Agg backend, SVG text as text (not glyph outlines), no timestamps."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    matplotlib.rcParams.update(
        {
            "svg.fonttype": "none",
            "font.family": "DejaVu Sans",
            "axes.titlesize": 9,
            "axes.labelsize": 9,
            "legend.fontsize": 7.5,
            "xtick.labelsize": 8,
            "ytick.labelsize": 8,
        }
    )
    return plt


def literal(text: str) -> str:
    """Drawing text as literal plot text: control characters shown as escapes, no mathtext ($)."""
    try:
        from coilstage.report.safe import clean
    except ImportError:  # pragma: no cover - older tree without the terminal-safe helper
        clean = str
    return clean(text).replace("$", r"\$")


def wrap(text: str, width: int = 90) -> str:
    """A title broken into lines of at most ``width`` characters (so a long drawing title is not cut)."""
    return "\n".join(textwrap.fill(line, width) for line in text.splitlines())


def coinciding(curves: dict[str, list[np.ndarray]]) -> list[list[str]]:
    """Groups of names whose curves are equal (every array within 1e-9 relative, 1e-9 absolute),
    in first-seen order; a name alone is a group of one."""
    groups: list[list[str]] = []
    for name, arrs in curves.items():
        for g in groups:
            ref = curves[g[0]]
            if len(ref) == len(arrs) and all(
                a.shape == b.shape and np.allclose(a, b, rtol=1e-9, atol=1e-9) for a, b in zip(ref, arrs, strict=True)
            ):
                g.append(name)
                break
        else:
            groups.append([name])
    return groups


def group_label(names: list[str]) -> str:
    return names[0] if len(names) == 1 else " = ".join(names)


def coincide_note(groups: list[list[str]]) -> str:
    """``"S1, S3 and S4 coincide"`` for every group of more than one, or ''."""
    parts = []
    for g in groups:
        if len(g) > 1:
            parts.append((", ".join(g[:-1]) + " and " + g[-1]) + " coincide")
    return "; ".join(parts)


def save(fig: Any, paths: list[Path], dpi: int = 120) -> None:
    for p in paths:
        fig.savefig(p, dpi=dpi, metadata=_metadata(Path(p).suffix))


def _metadata(suffix: str) -> dict | None:
    if suffix.lower() == ".svg":
        return {"Date": None, "Creator": None, "Format": None, "Type": None}
    return None


_PROLOG = re.compile(r"<\?xml[^>]*\?>\s*|<!DOCTYPE[^>]*>\s*", re.S)
_METADATA = re.compile(r"<metadata>.*?</metadata>\s*", re.S)
_XMLNS = re.compile(r'\s+xmlns(?::\w+)?="[^"]*"')
_SIZE = re.compile(r'(<svg\b[^>]*?)\s+width="[^"]*"\s+height="[^"]*"')


def svg_text(fig: Any, salt: str) -> str:
    """The figure as an ``<svg>`` element for inlining in HTML: no XML prolog, no metadata, no
    namespace URIs (the HTML parser supplies them), ids salted so several plots can share a page,
    scaled to the width of its container."""
    import matplotlib

    buf = io.StringIO()
    with matplotlib.rc_context({"svg.hashsalt": salt}):
        fig.savefig(buf, format="svg", metadata=_metadata(".svg"))
    s = _PROLOG.sub("", buf.getvalue())
    s = _METADATA.sub("", s)
    s = _XMLNS.sub("", s)
    s = _SIZE.sub(r'\1 width="100%"', s, count=1)
    s = re.sub(
        r'id="(figure|axes|patch|line2d|text|legend|matplotlib\.axis|xtick|ytick|PathCollection)_',
        lambda m: f'id="{salt}-{m.group(1)}_',
        s,
    )
    return s.strip()
