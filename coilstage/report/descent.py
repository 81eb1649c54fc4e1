"""Time series of a duty simulation: CSV, JSON and plots (PNG, SVG)."""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np

DESCENT_SCHEMA = "coilstage-descent-1"


def write_csv(r, path: Path) -> None:
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(
            [
                "t_s",
                *[f"{s}_winding_degC" for s in r.stage_ids],
                *[f"{s}_A" for s in r.stage_ids],
                *[f"{c}_conductor_degC" for c in r.cable_ids],
                "bus_V",
                "battery_A",
                "alternator_A",
                "battery_Ah",
            ]
        )
        for k, t in enumerate(r.t):
            w.writerow(
                [
                    f"{t:.3f}",
                    *(f"{x:.4g}" for x in r.stage_temperature[k]),
                    *(f"{x:.4g}" for x in r.stage_current[k]),
                    *(f"{x:.4g}" for x in r.cable_temperature[k]),
                    f"{r.bus_voltage[k]:.4f}",
                    f"{r.battery_current[k]:.4g}",
                    f"{r.alternator_current[k]:.4g}",
                    f"{r.charge_drawn[k] / 3600:.4f}",
                ]
            )


def write_json(r, path: Path, title: str) -> None:
    doc = {
        "schema": DESCENT_SCHEMA,
        "drawing": title,
        "duty": {"name": r.duty.name, "description": r.duty.description, "duration_s": r.duty.duration},
        "units": {"t": "s", "temperatures": "degC", "currents": "A", "bus_voltage": "V", "battery_charge": "A*h"},
        "t": r.t.tolist(),
        "stages": {
            s: {"winding_temperature": r.stage_temperature[:, k].tolist(), "current": r.stage_current[:, k].tolist()}
            for k, s in enumerate(r.stage_ids)
        },
        "cables": {
            c: {"conductor_temperature": r.cable_temperature[:, k].tolist(), "current": r.cable_current[:, k].tolist()}
            for k, c in enumerate(r.cable_ids)
        },
        "bus_voltage": r.bus_voltage.tolist(),
        "battery_current": r.battery_current.tolist(),
        "alternator_current": r.alternator_current.tolist(),
        "battery_charge": (r.charge_drawn / 3600).tolist(),
    }
    path.write_text(json.dumps(doc, allow_nan=False) + "\n", encoding="utf-8")


def plot(r, d, paths: list[Path], title: str) -> None:
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    tm = r.t / 60.0
    fig, ax = plt.subplots(3, 1, figsize=(9, 9), sharex=True)
    for k, s in enumerate(r.stage_ids):
        ax[0].plot(tm, r.stage_temperature[:, k], lw=1.5, label=f"{s} winding")
    lims = sorted({st.coil.limit_temperature for st in d.stages})
    for lim in lims:
        ax[0].axhline(lim, color="red", ls=":", lw=1)
        ax[0].text(tm[0], lim, f" winding limit {lim:g} °C", color="red", va="bottom", fontsize=8)
    hottest = np.argsort(r.cable_temperature.max(axis=0))[::-1][:3]
    for k in hottest:
        ax[0].plot(tm, r.cable_temperature[:, k], "--", lw=1.1, label=f"{r.cable_ids[k]} conductor")
    ax[0].set_ylabel("temperature [°C]")
    ax[0].legend(fontsize=8, ncol=2)
    for k, s in enumerate(r.stage_ids):
        ax[1].plot(tm, r.stage_current[:, k], lw=1.3, label=s)
    ax[1].plot(tm, r.battery_current, "k--", lw=1.1, label="battery (discharge +)")
    ax[1].plot(tm, r.alternator_current, "k:", lw=1.1, label="alternator")
    ax[1].set_ylabel("current [A]")
    ax[1].legend(fontsize=8, ncol=3)
    ax[2].plot(tm, r.bus_voltage, "k", lw=1.3)
    ax[2].set_ylabel("bus voltage at the battery [V]")
    ax[2].set_xlabel("time [min]")
    for a in ax:
        a.grid(alpha=0.3)
    fig.suptitle(f"{title}\n{r.duty.name} duty: {r.duty.description}", fontsize=9)
    fig.tight_layout()
    for p in paths:
        fig.savefig(p, dpi=110)
    plt.close(fig)
