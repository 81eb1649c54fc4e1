"""Time series of the switching scenarios: CSV, JSON and plots (PNG, SVG)."""

from __future__ import annotations

import csv
import json
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from coilstage.analysis.run import Analysis
from coilstage.errors import AnalysisError

if TYPE_CHECKING:
    from matplotlib.figure import Figure

WAVEFORM_SCHEMA = "coilstage-waveforms-1"

#: Most time points written over all scenarios together (each point holds every stage current, the
#: bus voltage and both source currents; the CSV runs to about 100 bytes a point). Two million points
#: are some 200 MB of CSV: past that a request is refused before any memory is taken.
MAX_SAMPLES = 2_000_000


def sample_count(a: Analysis, step: float) -> int:
    """Time points that :func:`series` would make at ``step`` [s], over every scenario."""
    if not step > 0:
        raise AnalysisError(a.drawing.path, f"a sampling step must be greater than zero (found {step!r} s)")
    total = 0.0
    for sc in a.switching.scenarios.values():
        total += sc.t_end / step + 1
    return int(min(total, 1e18))


def check_size(a: Analysis, step: float) -> None:
    """Refuse, before anything is allocated, a request over :data:`MAX_SAMPLES` time points."""
    n = sample_count(a, step)
    if n > MAX_SAMPLES:
        span = sum(sc.t_end for sc in a.switching.scenarios.values())
        need = span / (MAX_SAMPLES - len(a.switching.scenarios))
        raise AnalysisError(
            a.drawing.path,
            f"the waveforms would hold {n:,} time points ({span:g} s of scenarios every {step:g} s), over the "
            f"limit of {MAX_SAMPLES:,} (about {MAX_SAMPLES * 100 / 1e6:.0f} MB of CSV); choose a step of at least "
            f"{need:.3g} s, or a shorter switching.duration",
        )


def series(a: Analysis, step: float) -> list[dict[str, Any]]:
    """Every scenario sampled every ``step`` seconds: stage currents, bus voltage, source currents.

    Raises AnalysisError (before allocating) when that would be more than :data:`MAX_SAMPLES` points."""
    check_size(a, step)
    ids = [s.id for s in a.drawing.stages]
    v_min = a.drawing.supply.v_min
    out = []
    for sc in a.switching.scenarios.values():
        n = round(sc.t_end / step) + 1
        t = np.linspace(0.0, (n - 1) * step, n)
        data = sc.sample(t, ids)
        out.append(
            {
                "corner": sc.corner,
                "scenario": sc.name,
                "events": [{"at_s": ev[0], "stages": list(ev[1])} for ev in sc.events],
                "t": t,
                "stages": {sid: data[sid] for sid in ids},
                "bus_voltage": data["bus_voltage"],
                "alternator_current": data["alternator_current"],
                "battery_current": data["battery_current"],
                "bus_minimum": v_min,
            }
        )
    return out


def write_csv(rows: list[dict[str, Any]], path: Path, ids: list[str]) -> None:
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(["corner", "scenario", "t_s", *[f"{s}_A" for s in ids], "bus_V", "alternator_A", "battery_A"])
        for r in rows:
            cols = [r["stages"][s] for s in ids] + [r["bus_voltage"], r["alternator_current"], r["battery_current"]]
            for k, t in enumerate(r["t"]):
                w.writerow([r["corner"], r["scenario"], f"{t:.6f}", *(f"{c[k]:.6g}" for c in cols)])


def write_json(rows: list[dict[str, Any]], path: Path, step: float, title: str) -> None:
    doc = {
        "schema": WAVEFORM_SCHEMA,
        "drawing": title,
        "step": {"value": step, "unit": "s"},
        "units": {"t": "s", "stages": "A", "bus_voltage": "V", "alternator_current": "A", "battery_current": "A"},
        "series": [
            {
                "corner": r["corner"],
                "scenario": r["scenario"],
                "events": r["events"],
                "t": r["t"].tolist(),
                "stages": {k: v.tolist() for k, v in r["stages"].items()},
                "bus_voltage": r["bus_voltage"].tolist(),
                "alternator_current": r["alternator_current"].tolist(),
                "battery_current": r["battery_current"].tolist(),
            }
            for r in rows
        ],
    }
    path.write_text(json.dumps(doc, allow_nan=False) + "\n", encoding="utf-8")


def figure(rows: list[dict[str, Any]], title: str) -> Figure:
    """One column per scenario; stage currents above, bus voltage below; cold solid, hot dashed.

    Stages whose curves are equal are drawn once and named together ("S1 = S3 = S4"), with a note;
    the lowest operating bus voltage the bus rule uses is drawn on the voltage panel."""
    from coilstage.report import svgplot

    plt = svgplot.pyplot()
    names = list(dict.fromkeys(r["scenario"] for r in rows))
    fig, axes = plt.subplots(2, len(names), figsize=(3.9 * len(names), 6.4), sharex="col", squeeze=False)
    colours = plt.rcParams["axes.prop_cycle"].by_key()["color"]
    notes = []
    v_min = next((r.get("bus_minimum") for r in rows if r.get("bus_minimum") is not None), None)
    for j, name in enumerate(names):
        top, bottom = axes[0][j], axes[1][j]
        mine = [x for x in rows if x["scenario"] == name]
        ids = list(mine[0]["stages"])
        groups = svgplot.coinciding({sid: [r["stages"][sid] for r in mine] for sid in ids})
        note = svgplot.coincide_note(groups)
        if note:
            notes.append(f"{name}: {note}")
        for r in mine:
            style = "-" if r["corner"] == "cold" else "--"
            for k, g in enumerate(groups):
                t = r["t"]
                top.plot(
                    t,
                    r["stages"][g[0]],
                    style,
                    color=colours[k % len(colours)],
                    lw=1.4,
                    marker=svgplot.MARKERS[k % len(svgplot.MARKERS)],
                    markevery=(0.04 * k + 0.02, 0.2),
                    ms=4,
                    label=f"{svgplot.group_label(g)} {r['corner']}",
                )
            bottom.plot(r["t"], r["bus_voltage"], style, color="black", lw=1.2, label=f"{r['corner']} corner")
        if v_min is not None:
            bottom.axhline(v_min, color="tab:red", ls=":", lw=1.1)
            bottom.annotate(
                f"lowest operating bus {v_min:g} V",
                (0.01, v_min),
                xycoords=("axes fraction", "data"),
                va="bottom",
                fontsize=7,
                color="tab:red",
            )
        top.set_title(svgplot.wrap(name, 40))
        top.set_ylabel("stage current [A]")
        bottom.set_ylabel("bus voltage at the battery [V]")
        bottom.set_xlabel("time [s]")
        top.grid(alpha=0.3)
        bottom.grid(alpha=0.3)
        top.legend(loc="best", fontsize=6.5)
        bottom.legend(loc="best", fontsize=7)
    sub = "switch-on and switch-off; cold corner solid, hot corner dashed"
    if notes:
        sub += "\n" + "; ".join(dict.fromkeys(notes)) + " (drawn once)"
    fig.suptitle(svgplot.wrap(title, 110) + "\n" + sub, fontsize=9)
    fig.tight_layout()
    return fig


def plot(rows: list[dict[str, Any]], paths: list[Path], title: str) -> None:
    """:func:`figure` written to each of ``paths`` (PNG, SVG by suffix)."""
    from coilstage.report import svgplot

    fig = figure(rows, title)
    svgplot.save(fig, paths, dpi=120)
    svgplot.pyplot().close(fig)
