"""What each relay's contact and coil see, worked out once when the analysis is built, so that the
switching rules (``coilstage.checks.switching``) only compare:

- the load a relay's contact breaks: the break current and stored energy of the stages it switches
  (cold corner) and the resistance they load the bus with, R = U_bus / I_break (Ohm's law);
- the voltage across that contact if it opens during the ISO 16750-2 load dump that applies
  (:func:`coilstage.analysis.load_dump.contact_dump`), with the cold corner's load and with the
  lightest load (:data:`~coilstage.analysis.conditions.LIGHTEST`: the least current loads the pulse's
  generator least, so its peak is highest);
- the arc at the contact where the relay's own coil suppression slows its opening
  (:func:`coilstage.analysis.relay_coil.arc_at_contact`, at the normal and the slowest release);
- the coil's pick-up in the hot corner and at the lowest bus, and its feed circuit at the highest
  bus (:mod:`coilstage.analysis.relay_coil`);
- each suppressed stage's load-dump figures under Test A and under Test B
  (:func:`coilstage.analysis.load_dump.stage_dumps`).

Each result names the model that made it.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

from coilstage.analysis.conditions import LARGEST
from coilstage.analysis.load_dump import ContactDump, StageDump, contact_dump, stage_dumps
from coilstage.analysis.relay_coil import (
    ArcAtContact,
    CoilAt,
    CoilCircuit,
    Opening,
    arc_at_contact,
    coil_at,
    coil_circuit,
    hot_temperature,
    opening,
)
from coilstage.analysis.switching import StageSwitching, SwitchingResult
from coilstage.drawing.schema import Drawing, Relay

#: A coil suppression slows the opening enough to be reported where its slow end exceeds this factor.
SLOWED_ABOVE = 1.5


def central_suppression(d: Drawing) -> str:
    """The drawing's statement on central load-dump suppression ("yes", "no" or "not known")."""
    return getattr(d.supply, "load_dump_suppression", "not known") or "not known"


def highest_bus(d: Drawing, bus_high: float) -> float:
    """The highest voltage the bus reaches in service [V]: the supply code's maximum (or the limit
    corner's bus) or the regulator's highest end ``bus_high`` [V], the higher."""
    code = max(d.supply.v_max, d.corners.limit_bus)
    return bus_high if bus_high > code else code


@dataclass(frozen=True)
class RelayFigures:
    """One relay's contact and coil (see the module docstring); None where a figure does not apply
    (no stage switched, switching not analysed, no coil data, the opening not slowed)."""

    relay: str
    stages: tuple[str, ...]  # the stages it switches
    i_break: float  # sum of their cold-corner break currents [A]
    stored_energy: float  # sum of their ½LI² at the break [J]
    suppressor_voltage: float  # highest suppressor voltage of its suppressed stages at the break [V]
    load_resistance: float | None  # U_bus (cold corner) / I_break [Ω]; inf for no current
    dump: ContactDump | None  # the contact opening during the load dump that applies (cold corner's load)
    opening: Opening
    arc_normal: ArcAtContact | None  # at the unsuppressed release (only where the opening is slowed)
    arc_slowed: ArcAtContact | None  # at the slowest release
    pickup_hot: CoilAt | None  # coil hot, hot-corner bus
    pickup_lowest: CoilAt | None  # coil hot, lowest bus
    coil: CoilCircuit | None  # the coil's feed at the highest bus
    #: the same opening at the lightest load (``analysis.conditions.LIGHTEST``: the load dump's generator loaded least,
    #: so its peak is highest), with the highest suppressor voltage of the cases; None as ``dump``
    dump_lightest: ContactDump | None = None
    model: str = (
        "Ohm's law R = U_bus/I_break; analysis.load_dump.contact_dump (ISO 16750-2 4.6.4); "
        "analysis.relay_coil (arc estimate, coil R(T) by physics.conductor.resistance_at_temperature)"
    )


@dataclass(frozen=True)
class Contacts:
    """Every relay's figures, and each suppressed stage's load-dump figures under Test A (``"none"``:
    no central suppression) and Test B (``"central"``)."""

    highest_bus: float  # [V]
    relays: dict[str, RelayFigures]
    stage_dumps: dict[str, dict[str, StageDump]]  # "none" / "central" -> stage id -> figures
    #: every relay's figures at the switch-off that breaks the most (the switching's
    #: :data:`~coilstage.analysis.conditions.LARGEST` case; empty where it was not analysed)
    largest: dict[str, RelayFigures] = field(default_factory=dict)
    model: str = "analysis.load_dump.stage_dumps (ISO 16750-2 4.6.4 Test A and Test B)"


def _relay(
    d: Drawing,
    r: Relay,
    ids: list[str],
    per: dict[str, StageSwitching] | None,
    bus: float,
    hot_bus: float,
    lowest_bus: float,
    u_hi: float,
    coil_of: RelayFigures | None = None,
) -> RelayFigures:
    """One relay's figures, its break from the stage figures ``per`` (one case of the switching, with
    its bus ``bus`` [V]; None where switching was not analysed); its coil's figures, which do not depend
    on the break, taken from ``coil_of`` where given (the same relay's figures in another case)."""
    stages = {s.id: s for s in d.stages}
    cold = per if per is not None else {}
    bare = [s for s in ids if stages[s].suppression.kind == "none"]
    u_sup = max((cold[s].decay.u_suppressor_peak for s in ids if s not in bare and s in cold), default=0.0)
    i_b = sum(cold[s].i_break for s in ids) if per is not None else 0.0
    stored = sum(cold[s].stored_energy for s in ids) if per is not None else 0.0
    r_load = dump = None
    if ids and per is not None:
        r_load = bus / i_b if i_b > 0 else float("inf")
        dump = contact_dump(d, ids[0], r_load, 0.0 if bare else u_sup, central_suppression(d))
    op = opening(r)
    arc_n = arc_s = None
    if ids and per is not None and op.slowed and op.factor[1] > SLOWED_ABOVE:
        arc_n = arc_at_contact(i_b, u_hi, stored, op.release)
        arc_s = arc_at_contact(i_b, u_hi, stored, op.release_slowest)
    hot_nom = hot_low = coil = None
    if coil_of is not None:
        hot_nom, hot_low, coil = coil_of.pickup_hot, coil_of.pickup_lowest, coil_of.coil
    elif r.coil is not None:
        hot_nom = coil_at(r, hot_bus, hot_temperature(r))
        hot_low = coil_at(r, lowest_bus, hot_temperature(r))
        coil = coil_circuit(d, r, u_hi)
    return RelayFigures(r.id, tuple(ids), i_b, stored, u_sup, r_load, dump, op, arc_n, arc_s, hot_nom, hot_low, coil)


def contacts(
    d: Drawing,
    switched: dict[str, list[str]],
    sw: SwitchingResult | None,
    cold_bus: float,
    hot_bus: float,
    lowest_bus: float,
    bus_high: float,
    largest_bus: float | None = None,
    lightest: tuple[float, dict[str, float]] | None = None,
) -> Contacts:
    """Every relay's figures (``switched``: relay id -> the stages it switches; ``cold_bus``,
    ``hot_bus``: the cold and hot corners' bus [V]; ``lowest_bus``: the lowest bus of the worst cases
    [V]; ``bus_high``: the regulator's highest end [V]; ``largest_bus``: the bus of the switching's
    largest-current case [V], where it has one; ``lightest``: the bus [V] and each stage's current [A]
    of the state that loads the bus least, :data:`LIGHTEST`) and the stages' load-dump figures."""
    u_hi = highest_bus(d, bus_high)
    cold = sw.stages["cold"] if sw is not None else None
    relays = {
        r.id: _relay(d, r, switched.get(r.id, []), cold, cold_bus, hot_bus, lowest_bus, u_hi) for r in d.of_kind(Relay)
    }
    largest: dict[str, RelayFigures] = {}
    if sw is not None and LARGEST in sw.stages and largest_bus is not None:
        per = sw.stages[LARGEST]
        largest = {
            r.id: _relay(d, r, switched.get(r.id, []), per, largest_bus, hot_bus, lowest_bus, u_hi, relays[r.id])
            for r in d.of_kind(Relay)
        }
    if lightest is not None and sw is not None:
        relays = {rid: _lightest_dump(d, f, largest.get(rid), lightest) for rid, f in relays.items()}
    return Contacts(u_hi, relays, {c: stage_dumps(d, c) for c in ("none", "central")}, largest)


def _lightest_dump(
    d: Drawing, f: RelayFigures, big: RelayFigures | None, lightest: tuple[float, dict[str, float]]
) -> RelayFigures:
    """``f`` with its contact's opening during the load dump at the lightest load: the stages it switches
    loading the generator with U_bus / ΣI of the state ``lightest`` (bus [V], stage id -> current [A]),
    and the highest suppressor voltage of the cases (the cold corner's or the largest break's)."""
    if f.dump is None or not f.stages:
        return f
    bus, current = lightest
    i = sum(abs(current.get(s, 0.0)) for s in f.stages)
    r_load = bus / i if i > 0 else float("inf")
    bare = any(st.suppression.kind == "none" for st in d.stages if st.id in f.stages)
    u_sup = 0.0 if bare else max(f.suppressor_voltage, big.suppressor_voltage if big is not None else 0.0)
    dump = contact_dump(d, f.stages[0], r_load, u_sup, central_suppression(d))
    return dataclasses.replace(f, dump_lightest=dump)
