"""Regulator-failure overvoltage as a duty case: ISO 16750-2 clause 4.3.1 (long-term overvoltage), the
bus held at 18 V on 12 V systems and 36 V on 24 V systems for 60 min at T_max - 20 °C.

Which temperatures: the failure happens while driving, so the coils start from the test temperature
(T_max - 20 °C, the standard's own), not from a hot start: cool coils draw the most current, which
decides the fuses and cables; the coils' own temperature is then taken to its steady state at that
voltage (self-limiting: the resistance rises with it), and where that lies above the class limit, the
time to reach it at the starting power (constant resistance, so the safe side: earlier than real).

Which parts: the rules are decided with each coil at the low end of its resistance tolerance (the most
current through the fuses and cables and the most power in the winding at a held bus), the stated
coils beside it as the nominal; the cable lengths stay as drawn (their tolerance only lengthens
them, which lowers every current).
"""

from __future__ import annotations

import math
import weakref
from dataclasses import dataclass

from coilstage.analysis.circuit import Circuit, SourceState, element_resistance
from coilstage.analysis.tolerances import coil_tolerances, effective, tolerance_words, with_coil_tolerance
from coilstage.drawing.schema import Cable, Drawing, Fuse, Stage
from coilstage.physics.thermal import winding_steady_temperature

#: ISO 16750-2 4.3.1 long-term overvoltage [V] by nominal system voltage, its duration [s] and the
#: test temperature below the highest operating temperature [K]. From memory of the standard's text
#: (the clause "4.3.1 Long term overvoltage" is listed in the published table of contents of the 2010
#: and 2023 editions; the values were not confirmed from a published excerpt).
OVERVOLTAGE = {12: 18.0, 24: 36.0}
DURATION = 3600.0
BELOW_TMAX = 20.0
STATUS = "from memory (ISO 16750-2 4.3.1; clause confirmed in the published contents, values not)"
#: the conditions the overvoltage rules are decided at (the nominal beside them is "overvoltage")
WORST = "overvoltage with the coils at their low resistance"


@dataclass(frozen=True)
class CoilAtOvervoltage:
    stage: str
    coil_voltage: float  # across one coil at the start [V]
    start_temperature: float  # [°C]
    steady_temperature: float | None  # [°C]; None: no thermal resistance given
    limit: float  # class limit [°C]
    time_to_limit: float | None  # [s] at the starting power; None where not reached or not known
    how: str


@dataclass(frozen=True)
class OvervoltageCase:
    bus: float  # [V]
    normal_bus: float  # the regulator's set-point the ratio is taken against [V]
    temperature: float  # T_max - 20 °C
    current: dict[str, float]  # element id -> |current| at the start [A]
    normal_current: dict[str, float]  # the same at the set-point and the same temperatures [A]
    coils: dict[str, CoilAtOvervoltage]
    words: str
    #: fuse id -> the stages whose current falls below 1 % when that fuse is opened (solved with the
    #: fuse's resistance set to 1 GΩ): a fuse protects a coil only where it carries its current
    cuts: dict[str, tuple[str, ...]]


def temperatures(d: Drawing, t: float) -> dict[str, float]:
    return {e.id: t for e in d.elements if isinstance(e, (Cable, Stage))}


def overvoltage_case(d: Drawing, circuit: Circuit, r_tol: dict[str, float] | None = None) -> OvervoltageCase | None:
    """The network solved with the bus held at the long-term overvoltage; None for a system voltage
    the clause gives no figure for. ``r_tol``: stage id -> a fraction, each coil's resistance taken at
    (1 + fraction) × its stated one (the stated coils where None or all zero)."""
    u = OVERVOLTAGE.get(d.supply.system_voltage)
    if u is None:
        return None
    parts = ""
    if r_tol and any(r_tol.values()):
        d = with_coil_tolerance(d, r_tol)
        circuit = Circuit(d)
        parts = f", coil resistance {tolerance_words(r_tol)} (tolerance)"
    failed = u
    cut = d.supply.overvoltage_cutout
    if cut is not None and cut < u:
        u = cut  # the controller drops its stages above its cut-out: they see at most the cut-out voltage
    t = d.environment.ambient_max - BELOW_TMAX
    temps = temperatures(d, t)
    alt = d.supply.alternator
    rated = alt.limit_rated if alt else None
    sol = circuit.solve(temps, SourceState(u, u if alt else None, rated, hold_bus=u))
    normal = alt.setpoint if alt else d.supply.battery.emf
    sol_n = circuit.solve(temps, SourceState(normal, normal if alt else None, rated, hold_bus=normal))
    coils = {}
    for s in d.of_kind(Stage):
        c = s.coil
        r_coil = element_resistance(s, t) / s.r_factor
        i_stage = abs(sol.current[s.id])
        i_coil = i_stage if s.connection == "series" else i_stage / s.count
        v_coil = i_coil * r_coil
        if c.thermal_resistance is None:
            coils[s.id] = CoilAtOvervoltage(
                s.id, v_coil, t, None, c.limit_temperature, None, "no thermal resistance given for the coil"
            )
            continue
        ta = max(c.zone_temperature, t)
        steady = float(winding_steady_temperature(v_coil, c.r_ref, c.t_ref, c.alpha20, c.thermal_resistance, ta))
        ttl = None
        how = f"steady state at {v_coil:.2f} V per coil, surroundings {ta:g} °C, R_th {c.thermal_resistance:g} K/W"
        if steady > c.limit_temperature and c.heat_capacity:
            p0 = v_coil * v_coil / r_coil
            rise = p0 * c.thermal_resistance
            need = c.limit_temperature - t
            if need <= 0:
                ttl = 0.0
            elif need < rise:
                ttl = -c.thermal_resistance * c.heat_capacity * math.log(1.0 - need / rise)
            how += (
                f"; time to the limit at the starting power {p0:.0f} W, C {c.heat_capacity:g} J/K "
                "(constant resistance: earlier than the real, self-limiting heating)"
            )
        coils[s.id] = CoilAtOvervoltage(s.id, v_coil, t, steady, c.limit_temperature, ttl, how)
    words = (
        f"bus held at {u:g} V for {DURATION / 60:g} min (ISO 16750-2 4.3.1 regulator failure, {STATUS}), "
        f"cables and coils starting at T_max - 20 °C = {t:g} °C{parts}"
    )
    if u < failed:
        words = (
            f"a failed regulator holds the bus at {failed:g} V (ISO 16750-2 4.3.1, {STATUS}); the retarder's "
            f"controller drops its stages above its stated {u:g} V cut-out (supply.overvoltage_cutout), so the "
            f"stages run at most at {u:g} V for {DURATION / 60:g} min, cables and coils starting at "
            f"T_max - 20 °C = {t:g} °C{parts}"
        )
    cur = {k: abs(v) for k, v in sol.current.items()}
    cur_n = {k: abs(v) for k, v in sol_n.current.items()}
    cuts = {}
    for f in d.of_kind(Fuse):
        opened = circuit.solve(temps, SourceState(u, u if alt else None, rated, hold_bus=u), overrides={f.id: 1e9})
        cuts[f.id] = tuple(s.id for s in d.of_kind(Stage) if abs(opened.current[s.id]) < 0.01 * max(cur[s.id], 1e-12))
    return OvervoltageCase(u, normal, t, cur, cur_n, coils, words, cuts)


_CASES: dict[tuple[int, bool], tuple[weakref.ref, weakref.ref, OvervoltageCase | None]] = {}


def overvoltage_case_of(d: Drawing, circuit: Circuit, worst: bool = False) -> OvervoltageCase | None:
    """:func:`overvoltage_case` made once per (drawing, circuit) and kept while both live: the three
    overvoltage rules of one analysis read the same case (it costs a solve per fuse). With ``worst``,
    the case the rules are decided at (:data:`WORST`: each coil at the low end of its resistance
    tolerance); without, the stated coils (the nominal beside it)."""
    hit = _CASES.get((id(circuit), worst))
    if hit is not None and hit[0]() is circuit and hit[1]() is d:
        return hit[2]
    case = overvoltage_case(d, circuit, coil_tolerances(d, effective(d), "low") if worst else None)
    for k in [k for k, v in _CASES.items() if v[0]() is None or v[1]() is None]:
        del _CASES[k]
    _CASES[(id(circuit), worst)] = (weakref.ref(circuit), weakref.ref(d), case)
    return case
