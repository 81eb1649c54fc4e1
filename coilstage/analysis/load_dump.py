"""What the ISO 16750-2 load dump does to each stage's suppressor: the pulse that applies (Test A
without central suppression, Test B with it), the bus peak a unidirectional suppressor must block,
and the energy and peak current a bidirectional clamp (TVS, varistor) across the coil takes; and the
voltage across a stage's contact that opens during the pulse (the bus, loaded by that stage, plus the
stage suppressor's voltage).

What applies follows ``Supply.load_dump_suppression``: "no" (no central suppression at the alternator:
Test A, the unclamped pulse), "yes" (Test B, clamped at U_s*), "not known" (Test A assumed: the severer;
the figures say so)."""

from __future__ import annotations

from dataclasses import dataclass

from coilstage import tables
from coilstage.drawing.schema import Drawing
from coilstage.physics.load_dump import (
    bus_peak,
    clamp_energy,
    clamp_peak_current,
    loaded_bus_peak,
    opening_contact_voltage,
    worst_clamp_energy,
)


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


#: ``Supply.load_dump_suppression`` values (and the older spellings) -> the test that applies.
_TEST = {"yes": "B", "central": "B", "no": "A", "none": "A", "not known": "A"}


def applicable_test(central: str) -> tuple[str, bool]:
    """The ISO 16750-2 load-dump test that applies and whether it is assumed: ("A", False) without
    central suppression, ("B", False) with it, ("A", True) where the drawing does not say."""
    c = central or "not known"
    if c not in _TEST:
        raise ValueError(f"load_dump_suppression {central!r}: expected yes, no or not known")
    return _TEST[c], c == "not known"


def stage_dumps(d: Drawing, central: str = "not known") -> dict[str, StageDump]:
    """Per suppressed stage, its load-dump figures; ``central`` is "yes", "no" or "not known" (also
    "central" / "none"); not known: Test A, the severer, is assumed."""
    test, assumed = applicable_test(central)
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
        out[s.id] = StageDump(s.id, test, assumed, peak, energy, i_pk, pairing)
    return out


@dataclass(frozen=True)
class ContactDump:
    """A stage's contact opening during the load dump that applies: the bus peak with that stage as
    the only load [V] (the pairing of U_s and R_i that gives it), the suppressor's voltage [V] and the
    sum across the opening contact [V]."""

    stage: str
    test: str
    assumed: bool
    load_resistance: float  # [Ω]
    bus_peak: float  # [V]
    pairing: str
    suppressor_voltage: float  # [V]
    contact_voltage: float  # [V]


def contact_dump(
    d: Drawing, stage: str, load_resistance: float, suppressor_voltage: float, central: str = "not known"
) -> ContactDump:
    """The voltage across ``stage``'s contact if it opens at the peak of the load dump that applies:
    the ISO 16750-2 generator (both pairings of U_s with R_i) loaded by ``load_resistance`` [Ω] (the
    stage with its feed), clamped at U_s* under Test B, plus ``suppressor_voltage`` [V]."""
    test, assumed = applicable_test(central)
    row = _row(test, d.supply.system_voltage)
    clamp = float(row["clamp"]) if test == "B" else None
    pairs = [(float(row["us_max"]), float(row["ri_max"])), (float(row["us_min"]), float(row["ri_min"]))]
    peaks = [(loaded_bus_peak(us, ri, load_resistance, clamp), us, ri) for us, ri in pairs]
    u, us, ri = max(peaks)
    words = f"U_s {us:g} V behind R_i {ri:g} ohm" + (f", clamped at {clamp:g} V" if clamp is not None else "")
    return ContactDump(
        stage,
        test,
        assumed,
        load_resistance,
        u,
        words,
        suppressor_voltage,
        opening_contact_voltage(u, suppressor_voltage),
    )
