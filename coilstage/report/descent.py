"""Time series of a duty simulation: CSV, JSON and plots (PNG, SVG)."""

from __future__ import annotations

import csv
import json
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from coilstage.analysis.duty import DutyResult
    from coilstage.drawing.schema import Drawing

DESCENT_SCHEMA = "coilstage-descent-1"


def write_csv(r: DutyResult, path: Path) -> None:
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
                *([f"{s}_surroundings_degC" for s in r.stage_ids] if r.zone_temperature is not None else []),
                *(["battery_state_of_charge", "battery_emf_V"] if r.state_of_charge is not None else []),
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
                    *(f"{x:.4g}" for x in (r.zone_temperature[k] if r.zone_temperature is not None else ())),
                    *(
                        [f"{r.state_of_charge[k]:.4f}", f"{r.battery_emf[k]:.4f}"]
                        if r.state_of_charge is not None
                        else []
                    ),
                ]
            )


def write_json(r: DutyResult, path: Path, title: str) -> None:
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
    if r.zone_temperature is not None:
        doc["surroundings_temperature"] = {s: r.zone_temperature[:, k].tolist() for k, s in enumerate(r.stage_ids)}
    if r.state_of_charge is not None:
        doc["battery_state_of_charge"] = r.state_of_charge.tolist()
        doc["battery_emf"] = r.battery_emf.tolist()
    if r.conditions is not None:
        doc["conditions"] = {k: v for k, v in r.conditions.words}
        doc["assumptions"] = list(r.conditions.assumptions)
    path.write_text(json.dumps(doc, allow_nan=False) + "\n", encoding="utf-8")


def state_of_charge(r: DutyResult, d: Drawing) -> np.ndarray | None:
    """Battery state of charge over the duty [fraction], as the battery rule takes it: the simulated
    one (charge used weighted for its rate, held at 0 once flat) where the run carries it, else the
    start value less the charge drawn over the capacity; None without a capacity."""
    if getattr(r, "state_of_charge", None) is not None:
        return np.asarray(r.state_of_charge)
    cap = d.supply.battery.capacity
    if not cap or r.duty is None:
        return None
    start = d.duty.start_soc if d.duty is not None else 1.0
    return start - np.asarray(r.charge_drawn) / cap


def figure(r: DutyResult, d: Drawing, title: str) -> Figure:
    """Four panels against time: winding and hottest cable temperatures with the winding limit and
    those cables' class temperatures; currents; the bus voltage with its lowest operating value; the
    battery's state of charge with its floor. Equal curves are drawn once and named together."""
    from coilstage.report import svgplot

    plt = svgplot.pyplot()
    tm = r.t / 60.0
    fig, ax = plt.subplots(4, 1, figsize=(8.6, 11.0), sharex=True)
    st = {s: [r.stage_temperature[:, k]] for k, s in enumerate(r.stage_ids)}
    groups = svgplot.coinciding(st)
    for n, g in enumerate(groups):
        k = r.stage_ids.index(g[0])
        ax[0].plot(
            tm,
            r.stage_temperature[:, k],
            svgplot.STYLES[n % 4],
            lw=1.5,
            label=f"{svgplot.group_label(g)} winding",
        )
    if r.zone_temperature is not None:
        zg = svgplot.coinciding({s: [r.zone_temperature[:, k]] for k, s in enumerate(r.stage_ids)})
        for g in zg:
            k = r.stage_ids.index(g[0])
            lab = f"{svgplot.group_label(g)} surroundings"
            ax[0].plot(tm, r.zone_temperature[:, k], color="tab:gray", lw=1.0, label=lab)
    for lim in sorted({s.coil.limit_temperature for s in d.stages}):
        ax[0].axhline(lim, color="tab:red", ls=":", lw=1)
        ax[0].annotate(
            f"winding limit {lim:g} °C",
            (0.01, lim),
            xycoords=("axes fraction", "data"),
            va="bottom",
            fontsize=7,
            color="tab:red",
        )
    order = [int(k) for k in np.argsort(r.cable_temperature.max(axis=0))[::-1]]
    cgroups = svgplot.coinciding({r.cable_ids[k]: [r.cable_temperature[:, k]] for k in order})[:3]
    cls = {c.id: c.class_max for c in d.elements if hasattr(c, "class_max")}
    shown = [cid for g in cgroups for cid in g]
    drawn_class = set()
    for n, g in enumerate(cgroups):
        k = r.cable_ids.index(g[0])
        ax[0].plot(
            tm,
            r.cable_temperature[:, k],
            "--",
            lw=1.1,
            marker=svgplot.MARKERS[n],
            markevery=0.1,
            ms=4,
            label=f"{svgplot.group_label(g)} conductor",
        )
        c_lim = cls.get(g[0])
        if c_lim is not None and c_lim not in drawn_class:
            drawn_class.add(c_lim)
            ax[0].axhline(c_lim, color="tab:purple", ls="-.", lw=0.9)
            ax[0].annotate(
                f"cable class {c_lim:g} °C ({', '.join(x for x in shown if cls.get(x) == c_lim)})",
                (0.99, c_lim),
                xycoords=("axes fraction", "data"),
                ha="right",
                va="bottom",
                fontsize=7,
                color="tab:purple",
            )
    ax[0].set_ylabel("temperature [°C]")
    ax[0].legend(fontsize=7, ncol=2, loc="lower right")
    cur = {s: [r.stage_current[:, k]] for k, s in enumerate(r.stage_ids)}
    for n, g in enumerate(svgplot.coinciding(cur)):
        k = r.stage_ids.index(g[0])
        ax[1].plot(tm, r.stage_current[:, k], svgplot.STYLES[n % 4], lw=1.3, label=svgplot.group_label(g))
    ax[1].plot(tm, r.battery_current, "k--", lw=1.1, label="battery (discharge +)")
    ax[1].plot(tm, r.alternator_current, "k:", lw=1.1, label="alternator")
    ax[1].set_ylabel("current [A]")
    ax[1].legend(fontsize=7, ncol=3)
    ax[2].plot(tm, r.bus_voltage, "k", lw=1.3, label="bus at the battery")
    ax[2].axhline(d.supply.v_min, color="tab:red", ls=":", lw=1.1)
    ax[2].annotate(
        f"lowest operating bus {d.supply.v_min:g} V",
        (0.01, d.supply.v_min),
        xycoords=("axes fraction", "data"),
        va="bottom",
        fontsize=7,
        color="tab:red",
    )
    ax[2].set_ylabel("bus voltage [V]")
    soc = state_of_charge(r, d)
    if soc is not None:
        label = (
            "state of charge (Peukert-weighted)"
            if getattr(r, "state_of_charge", None) is not None
            else ("state of charge (charge balance)")
        )
        ax[3].plot(tm, 100 * soc, "k", lw=1.3, label=label)
        flat = r.time_to_charge(0.0) if hasattr(r, "time_to_charge") else float("inf")
        if np.isfinite(flat):
            ax[3].axvline(flat / 60.0, color="tab:red", ls="--", lw=1.0)
            ax[3].annotate(
                f"flat after {flat / 60:.1f} min",
                (flat / 60.0, 0.5),
                xycoords=("data", "axes fraction"),
                ha="left",
                fontsize=7,
                color="tab:red",
            )
        floor = d.duty.min_soc if d.duty is not None else None
        if floor is not None:
            ax[3].axhline(100 * floor, color="tab:red", ls=":", lw=1.1)
            ax[3].annotate(
                f"floor {100 * floor:g} %",
                (0.01, 100 * floor),
                xycoords=("axes fraction", "data"),
                va="bottom",
                fontsize=7,
                color="tab:red",
            )
        ax[3].set_ylabel("battery state of charge [%]")
    else:
        ax[3].plot(tm, r.charge_drawn / 3600, "k", lw=1.3, label="charge drawn")
        ax[3].set_ylabel("battery charge drawn [A·h]")
        ax[3].set_title("no battery capacity in the drawing: state of charge not known", fontsize=8)
    ax[3].legend(fontsize=7)
    ax[3].set_xlabel("time [min]")
    for a in ax:
        a.grid(alpha=0.3)
    sub = f"{r.duty.name} duty: {r.duty.description}"
    note = svgplot.coincide_note(groups)
    if note:
        sub += f"\n{note} (drawn once)"
    fig.suptitle(svgplot.wrap(title, 100) + "\n" + svgplot.wrap(sub, 110), fontsize=9)
    fig.tight_layout()
    return fig


def plot(r: DutyResult, d: Drawing, paths: list[Path], title: str) -> None:
    """:func:`figure` written to each of ``paths`` (PNG, SVG by suffix)."""
    from coilstage.report import svgplot

    fig = figure(r, d, title)
    svgplot.save(fig, paths, dpi=110)
    svgplot.pyplot().close(fig)
