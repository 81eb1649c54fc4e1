"""A relay's own coil circuit: the voltage its coil gets at a given bus and temperature (pick-up), the
current it draws at the cold corner against its feed fuse, its feed wire's ampacity against that fuse,
and what the coil's own suppression does to the opening of the main contact.

Pick-up: a coil operates at the same ampere-turns at any temperature, so the voltage it needs scales
with its resistance, U_need(T) = U_op(T_ref)·R(T)/R(T_ref); it gets U_bus·R(T)/(R(T) + R_feed) through
its control wiring. R(T) is copper's linear law (IEC 60028 α).

Coil suppression: a plain diode across a relay's or contactor's own coil keeps the coil current
circulating after the coil is switched off, so the armature releases late and moves slowly; the relay
maker's application note "Coil suppression can reduce relay life" reads the release as 5 to 10 times
slower than unsuppressed, the main contacts part slowly and the arc between them lasts longer
(values shipped in data/utilization_tests_iec60947.toml with their status). A diode with a zener,
a resistor or a varistor lets the coil current fall against a higher voltage and the release stays
close to the unsuppressed one (same note).
"""

from __future__ import annotations

from dataclasses import dataclass

from coilstage import tables
from coilstage.analysis.materials import metal
from coilstage.drawing.schema import Drawing, Relay
from coilstage.physics.conductor import resistance_at_temperature

#: Energise a relay at no less than 110 % of its must-operate voltage (California Department of
#: Transportation, electrical quality standards, Electric-08 "Relays"): the margin of the pick-up rule
#: (``relay.coil_pickup`` passes at it and warns between 100 % and it), shared with the tolerance model
#: of :mod:`coilstage.analysis.params`.
PICKUP_MARGIN = 1.10


@dataclass(frozen=True)
class CoilAt:
    """A relay coil at one bus voltage [V] and coil temperature [°C]: its resistance [Ω], the voltage it
    needs to operate and the voltage it gets [V], and the current it draws [A]."""

    relay: str
    bus: float
    temperature: float
    resistance: float
    need: float
    have: float
    current: float


def coil_at(r: Relay, bus: float, temperature: float) -> CoilAt:
    """The coil of ``r`` fed from ``bus`` [V] through its feed resistance, at ``temperature`` [°C]."""
    c = r.coil
    if c is None:
        raise ValueError(f"relay {r.id} has no coil data")
    rc = resistance_at_temperature(c.r_ref, c.t_ref, temperature, metal("copper").alpha20)
    need = c.operate_voltage * rc / c.r_ref
    have = bus * rc / (rc + c.feed_resistance)
    return CoilAt(r.id, bus, temperature, rc, need, have, bus / (rc + c.feed_resistance))


def hot_temperature(r: Relay) -> float:
    """Coil temperature in service: its zone's highest temperature plus its own rise [°C]."""
    assert r.coil is not None
    return r.zone_temperature + r.coil.rise


def _tests_table() -> dict:
    return tables.shipped("utilization_tests_iec60947.toml")["table"]


@dataclass(frozen=True)
class Opening:
    """How the relay's coil suppression affects the opening of its main contact: the release time
    without coil suppression [s] and the factor range (low, high) by which the suppression slows it
    [-], with the source and status of each."""

    suppression: str
    release: float
    release_source: str
    factor: tuple[float, float]
    factor_source: str

    @property
    def slowed(self) -> bool:
        return self.factor[1] > 1.0

    @property
    def release_slowest(self) -> float:
        """The release at the slow end of the range [s]."""
        return self.release * self.factor[1]


def opening(r: Relay) -> Opening:
    """The main contact's opening as the relay's own coil suppression leaves it."""
    t = _tests_table()
    sup = "none" if r.coil is None else r.coil.suppression
    rows = {row[0]: (float(row[1]), float(row[2])) for row in t["coil_suppression_release_factor"]}
    factor = rows.get(sup, (1.0, 1.0))
    return Opening(
        sup,
        float(t["release_time_unsuppressed"]),
        t["release_time_unsuppressed_status"],
        factor,
        t["coil_suppression_release_factor_status"],
    )


@dataclass(frozen=True)
class ArcAtContact:
    """An estimate of the arc at an opening main contact that breaks ``current`` [A] with no
    suppressor across the stage: it lasts at least as long as the contacts take to part, ``duration``
    [s], while the bus keeps driving the current through it, and then takes the stage's stored energy:
    E ≈ U_bus·I·t_open + ½LI² [J]. Common practice (an estimate, not a standard method)."""

    current: float
    duration: float
    energy: float
    stored: float


def arc_at_contact(current: float, bus: float, stored_energy: float, duration: float) -> ArcAtContact:
    """The arc estimate (see :class:`ArcAtContact`): ``current`` [A] at ``bus`` [V] for ``duration`` [s],
    plus ``stored_energy`` [J]."""
    return ArcAtContact(current, duration, bus * current * duration + stored_energy, stored_energy)


@dataclass(frozen=True)
class CoilCircuit:
    """A relay coil's feed: its cold current at the highest bus [A] (coil at the lowest ambient), its
    feed fuse [A] and wire [m²] as the drawing gives them, and the wire's ampacity in the relay's zone
    (a tables.Ampacity, or the reason there is none, or None when no wire is stated); the insulation
    class the ampacity assumes."""

    relay: str
    cold: CoilAt
    fuse_rating: float | None
    wire_area: float | None
    wire_ampacity: tables.Ampacity | str | None
    wire_class: str
    wire_class_max: float


#: Insulation class assumed for a coil's feed wire where the drawing does not state one: ISO 6722 class
#: A (85 °C), the lowest, so the ampacity is the smallest a vehicle cable of that size carries.
COIL_WIRE_CLASS = "A"


def coil_circuit(d: Drawing, r: Relay, bus_high: float) -> CoilCircuit:
    """The coil circuit of ``r``: cold current at ``bus_high`` [V] and the lowest ambient, and its wire's
    ampacity (33 CFR 183.425 table, class A insulation, the relay's zone, alone in its run)."""
    cold = coil_at(r, bus_high, d.environment.ambient_min)
    c = r.coil
    assert c is not None
    cls_max = float(tables.cable_class_rows()[COIL_WIRE_CLASS]["max"])
    amp = None
    if c.wire_area is not None:
        amp = tables.ampacity(None, c.wire_area, cls_max, r.zone_temperature, 1)
    return CoilCircuit(r.id, cold, c.fuse_rating, c.wire_area, amp, COIL_WIRE_CLASS, cls_max)
