"""Plot of gap flux density against ampere-turns with each corner's operating point (PNG, SVG)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from coilstage.analysis.field import circuit_of


def plot(a, paths: list[Path], title: str) -> bool:
    """One curve per coil type with a magnetic circuit; False if there is none to draw."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    d = a.drawing
    coils = {name: circuit_of(c) for name, c in d.coils.items()}
    coils = {k: v for k, v in coils.items() if v is not None}
    if not coils:
        return False
    fig, ax = plt.subplots(figsize=(8, 5.5))
    for name, circ in coils.items():
        ni_max = 1.3 * max(x.ampere_turns for per in a.field.stages.values() for x in per.values())
        ni = np.linspace(0, ni_max, 300)
        ax.plot(ni, [circ.gap_flux_density(x) for x in ni], lw=1.6, label=f"coil {name} ({circ.curve.name})")
        ax.plot(ni, 4e-7 * np.pi * ni / (circ.gaps * circ.gap), ":", lw=1, label=f"coil {name}, gaps only (μ0·N·I/g)")
        knee = circ.curve.knee()
        ax.axhline(knee * circ.iron_area / circ.area, color="grey", ls="--", lw=0.8)
        ax.text(ni_max * 0.02, knee * circ.iron_area / circ.area, " knee of the iron", va="bottom", fontsize=8)
    for corner, marker, colour in (("cold", "o", "tab:blue"), ("hot", "s", "tab:red")):
        for s in d.stages:
            x = a.field.stages[corner][s.id]
            if x.b_gap is not None:
                ax.plot(
                    x.ampere_turns,
                    x.b_gap,
                    marker,
                    ms=8,
                    mfc="none",
                    mec=colour,
                    mew=1.5,
                    label=f"{corner} corner" if s is d.stages[0] else None,
                )
    ax.set_xlabel("ampere-turns per coil [A]")
    ax.set_ylabel("gap flux density [T]")
    ax.set_ylim(0, None)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8)
    ax.set_title(
        f"{title}\nbraking field against ampere-turns; operating points of the cold and hot corners", fontsize=9
    )
    fig.tight_layout()
    for p in paths:
        fig.savefig(p, dpi=110)
    plt.close(fig)
    return True
