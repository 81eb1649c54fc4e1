"""Plot of gap flux density against ampere-turns with each corner's operating point (PNG, SVG)."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from coilstage.analysis.field import circuit_of

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from coilstage.analysis.run import Analysis


def figure(a: Analysis, title: str) -> Figure | None:
    """One curve per coil type with a magnetic circuit, the knee, and each corner's operating
    points (stages at the same point are named together); None if no coil has a circuit."""
    from coilstage.report import svgplot

    d = a.drawing
    coils = {name: circuit_of(c) for name, c in d.coils.items()}
    coils = {k: v for k, v in coils.items() if v is not None}
    if not coils:
        return None
    plt = svgplot.pyplot()
    fig, ax = plt.subplots(figsize=(8, 5.6))
    ni_max = 1.3 * max(x.ampere_turns for per in a.field.stages.values() for x in per.values())
    for n, (name, circ) in enumerate(coils.items()):
        ni = np.linspace(0, ni_max, 300)
        ax.plot(
            ni,
            [circ.gap_flux_density(x) for x in ni],
            svgplot.STYLES[n % 4],
            lw=1.6,
            label=f"coil {name} ({circ.curve.name})",
        )
        ax.plot(ni, 4e-7 * np.pi * ni / (circ.gaps * circ.gap), ":", lw=1, label=f"coil {name}, gaps only (μ0·N·I/g)")
        knee = circ.curve.knee()
        ax.axhline(knee * circ.iron_area / circ.area, color="grey", ls="--", lw=0.8)
        ax.annotate(
            " knee of the iron",
            (0.01, knee * circ.iron_area / circ.area),
            xycoords=("axes fraction", "data"),
            va="bottom",
            fontsize=7,
        )
    notes = []
    b_top = max((x.b_gap for per in a.field.stages.values() for x in per.values() if x.b_gap is not None), default=1.0)
    for corner, marker, colour in (("cold", "o", "tab:blue"), ("hot", "s", "tab:red")):
        # stages whose points lie within 1 % of the axes of each other are drawn and named as one
        clusters: list[list] = []
        for s in d.stages:
            x = a.field.stages[corner][s.id]
            if x.b_gap is None:
                continue
            for c in clusters:
                if abs(c[0] - x.ampere_turns) <= 0.01 * ni_max and abs(c[1] - x.b_gap) <= 0.01 * b_top:
                    c[2].append(s.id)
                    break
            else:
                clusters.append([x.ampere_turns, x.b_gap, [s.id]])
        for k, (ni_, b, ids) in enumerate(clusters):
            ax.plot(ni_, b, marker, ms=8, mfc="none", mec=colour, mew=1.5, label=f"{corner} corner" if k == 0 else None)
            order = [s.id for s in d.stages]
            run = order[order.index(ids[0]) : order.index(ids[0]) + len(ids)] == ids
            name = f"{ids[0]}–{ids[-1]}" if len(ids) > 2 and run else svgplot.group_label(ids)
            ax.annotate(
                name,
                (ni_, b),
                textcoords="offset points",
                xytext=(7, -12 if corner == "hot" else 7),
                fontsize=7.5,
                color=colour,
            )
            if len(ids) > 1:
                notes.append(f"{corner}: {svgplot.coincide_note([ids])} (within 1 %)")
    ax.set_xlabel("ampere-turns per coil [A-turns]")
    ax.set_ylabel("gap flux density [T]")
    ax.set_ylim(0, None)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=7.5, loc="lower right")
    sub = "braking field against ampere-turns; operating points of the cold (circles) and hot (squares) corners"
    if notes:
        sub += "\n" + "; ".join(notes)
    ax.set_title(svgplot.wrap(title, 95) + "\n" + svgplot.wrap(sub, 105), fontsize=8.5)
    fig.tight_layout()
    return fig


def plot(a: Analysis, paths: list[Path], title: str) -> bool:
    """:func:`figure` written to each of ``paths``; False if there is none to draw."""
    from coilstage.report import svgplot

    fig = figure(a, title)
    if fig is None:
        return False
    svgplot.save(fig, paths, dpi=110)
    svgplot.pyplot().close(fig)
    return True
