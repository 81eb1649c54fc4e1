"""Time series of the switching scenarios: CSV, JSON and plots (PNG, SVG)."""

from __future__ import annotations

import csv
import json
from pathlib import Path
from typing import Any

import numpy as np

from coilstage.analysis.corners import Analysis

WAVEFORM_SCHEMA = "coilstage-waveforms-1"


def series(a: Analysis, step: float) -> list[dict[str, Any]]:
    """Every scenario sampled every ``step`` seconds: stage currents, bus voltage, source currents."""
    ids = [s.id for s in a.drawing.stages]
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


def plot(rows: list[dict[str, Any]], paths: list[Path], title: str) -> None:
    """One column per scenario; stage currents above, bus voltage below; cold solid, hot dashed."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    names = list(dict.fromkeys(r["scenario"] for r in rows))
    fig, axes = plt.subplots(2, len(names), figsize=(4.2 * len(names), 6.2), sharex="col", squeeze=False)
    colours = plt.rcParams["axes.prop_cycle"].by_key()["color"]
    for j, name in enumerate(names):
        top, bottom = axes[0][j], axes[1][j]
        for r in (x for x in rows if x["scenario"] == name):
            style = "-" if r["corner"] == "cold" else "--"
            for k, (sid, cur) in enumerate(r["stages"].items()):
                top.plot(
                    r["t"],
                    cur,
                    style,
                    color=colours[k % len(colours)],
                    lw=1.4,
                    label=f"{sid} {r['corner']}" if j == 0 else None,
                )
            bottom.plot(r["t"], r["bus_voltage"], style, color="black", lw=1.2, label=r["corner"])
        top.set_title(name)
        top.set_ylabel("stage current [A]")
        bottom.set_ylabel("bus voltage at the battery [V]")
        bottom.set_xlabel("time [s]")
        top.grid(alpha=0.3)
        bottom.grid(alpha=0.3)
        bottom.legend(loc="best", fontsize=8)
    axes[0][0].legend(loc="best", fontsize=7, ncol=2)
    fig.suptitle(f"{title}\nswitch-on and switch-off; cold corner solid, hot corner dashed", fontsize=10)
    fig.tight_layout()
    for p in paths:
        fig.savefig(p, dpi=120)
    plt.close(fig)
