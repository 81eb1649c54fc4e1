"""What the ISO 16750-2 load dump does to each stage's suppressor: the pulse that applies (Test A
without central suppression, Test B with it), the bus peak a unidirectional suppressor must block,
and the energy and peak current a bidirectional clamp (TVS, varistor) across the coil takes."""

from __future__ import annotations

from dataclasses import dataclass

from coilstage import tables
from coilstage.drawing.schema import Drawing
from coilstage.physics.load_dump import bus_peak, clamp_energy, clamp_peak_current, worst_clamp_energy


@dataclass(frozen=True)
class StageDump:
    stage: str
    test: str  # "A" or "B"
    assumed: bool  # True: central suppression not stated, Test A assumed
    bus_peak: float  # [V]
    energy: float | None  # clamp energy per pulse [J] (bidirectional suppressors), None otherwise
    peak_current: float | None  # [A]
    pairing: str  # the U_s, R_i, t_d used for the energy


def _row(test: str, system: int) -> dict:
    rows = tables.shipped("load_dump_iso16750-2.toml")["table"]["rows"]
    return next(r for r in rows if r["test"] == test and r["system"] == system)


def stage_dumps(d: Drawing, central: str = "not known") -> dict[str, StageDump]:
    """Per suppressed stage, its load-dump figures; ``central`` is "central", "none" or "not known"
    (not known: Test A, the severer, is assumed)."""
    test = "B" if central == "central" else "A"
    row = _row(test, d.supply.system_voltage)
    clamp = float(row["clamp"]) if test == "B" else None
    peak = bus_peak(float(row["us_max"]), clamp)
    out = {}
    for s in d.stages:
        sup = s.suppression
        if sup.kind == "none":
            continue
        energy = i_pk = None
        pairing = ""
        if sup.bidirectional and sup.u0 > float(row["u_a"]):
            energy, us, ri, td = worst_clamp_energy(
                float(row["u_a"]),
                (float(row["us_min"]), float(row["us_max"])),
                (float(row["ri_min"]), float(row["ri_max"])),
                (float(row["td_min"]), float(row["td_max"])),
                sup.u0,
                clamp,
            )
            i_pk = max(
                clamp_peak_current(float(row["us_max"]), float(row["ri_max"]), sup.u0),
                clamp_peak_current(float(row["us_min"]), float(row["ri_min"]), sup.u0),
            )
            if clamp is not None and clamp <= sup.u0:
                i_pk = 0.0
            pairing = f"U_s {us:g} V, R_i {ri:g} ohm, t_d {td * 1e3:g} ms"
            energy = clamp_energy(float(row["u_a"]), us, ri, td, sup.u0, clamp)
        out[s.id] = StageDump(s.id, test, central == "not known", peak, energy, i_pk, pairing)
    return out
