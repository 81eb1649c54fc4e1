"""Each rule at its own worst case: the largest and the smallest fault, the lowest bus and the largest
continuous current, built from the drawing and the shipped tolerance defaults
(``coilstage/data/tolerance_defaults.toml``, every row with its source and status).

* largest fault (breaking capacity): battery EMF of a surface-charged battery (2.2 V per cell), its
  resistance at the low end (0.9 × stated: new, full, warm), the alternator a current source at its
  rated output plus its cold excess, cables at the lowest ambient, the rest of the vehicle's loads
  disconnected (they would take current away from the fault), a bolted fault.
* smallest fault (disconnection, far-end clearing): battery EMF at the lowest state of charge
  (open-circuit voltage line), its resistance raised for that charge, the lowest ambient and age, the
  alternator off (a parked vehicle chafes too), cables at their zone temperature, the rest of the
  loads connected, and the fault's own resistance.
* lowest bus (sag, pick-up, braking): the hot corner's temperatures with the battery as in the
  smallest fault and the alternator at its idle output less its hot derating; for the braking that
  remains, also the coils at the high end of their resistance tolerance (less current).
* largest current (continuous duty): the cold corner with every coil at the low end of its resistance
  tolerance and the bus held at the regulator's highest end (tolerance plus temperature compensation
  with the regulator at the lowest ambient).
* duty sweep (a consistent vehicle state for the duty rules): the ambient swept over the drawing's
  range; at each ambient every zone stands at its stated temperature less (ambient_max − ambient) (the
  ratings' derating), the coils and the harness start cold at that ambient (the largest current: the
  coils at the low end of their tolerance; the cables reach their zone's temperature only as the coils
  warm) and the bus is at the regulator's highest end with the regulator at that ambient. A duty rule
  takes its margin at every point and is decided at the worst one.

Stated in the words of each view, so a verdict decided on it can say what decided it.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from coilstage import tables
from coilstage.analysis.circuit import Circuit, Solution, SourceState, element_resistance
from coilstage.analysis.conditions import Conditions, hot_alternator_limit, hot_temperatures, zone_at_ambient
from coilstage.analysis.corners import cold_duties
from coilstage.analysis.field import circuit_of
from coilstage.analysis.tolerances import (
    DRAWING_STATUS,
    battery_resistance,
    coil_tolerances,
    effective,
    lookup,
    tolerance_words,
    with_coil_tolerance,
)
from coilstage.analysis.tolerances import cells as _cells
from coilstage.drawing.schema import Cable, Drawing, Fuse, Stage, evolve
from coilstage.physics.battery import internal_resistance, open_circuit_voltage
from coilstage.physics.supply_limits import regulated_bus_range


@dataclass(frozen=True)
class FaultView:
    """Prospective fault currents under one set of worst-case conditions [A]."""

    name: str
    words: tuple[tuple[str, str], ...]
    at_fuse: dict[str, float]  # fuse id -> current at its load terminal [A]
    far_end: dict[str, float]  # protected cable id -> current of a fault at its far end [A]
    battery: float  # at the battery terminals [A]
    battery_emf: float  # [V]
    battery_resistance: float  # [Ω]
    fault_resistance: float  # [Ω]


@dataclass(frozen=True)
class BusView:
    """The network at the lowest bus."""

    name: str
    words: tuple[tuple[str, str], ...]
    solution: Solution
    bus_voltage: float  # at the battery terminals [V]


@dataclass(frozen=True)
class BrakingView:
    """The braking effort that remains at the lowest bus with the coils hot and at the high end of their
    resistance tolerance, over the cold corner's (the low-speed law T ∝ σB²ω: B² from the magnetic
    circuit, or (N·I)² where a coil has none)."""

    name: str
    words: tuple[tuple[str, str], ...]
    solution: Solution
    bus_voltage: float  # at the battery terminals [V]
    effort_cold: float  # relative effort of the cold corner, all stages on
    effort: float  # the same at the lowest bus
    ratio: float  # effort / effort_cold


def raised_battery_resistance(d: Drawing, tol: dict[str, dict], temperature: float) -> float:
    """The battery's resistance at the low end of its charge, aged, at ``temperature`` [°C]: the
    weakest battery its rating allows (:func:`coilstage.analysis.tolerances.battery_resistance`)
    raised by :func:`coilstage.physics.battery.internal_resistance`, or the drawing's stated high end
    where it gives one [Ω]."""
    b_temp = tol["supply.battery.resistance_temperature_coefficient"]["nominal"]
    bounds = battery_resistance(d, tol, b_temp)
    if bounds.stated_high is not None:
        return bounds.stated_high
    return internal_resistance(
        bounds.reference,
        tol["supply.battery.state_of_charge"]["low"],
        temperature,
        t_reference=25.0,
        temperature_coefficient=b_temp,
        empty_factor=tol["supply.battery.resistance_empty_factor"]["high"],
        age_factor=tol["supply.battery.age_factor"]["high"],
    )


def braking_drawing(d: Drawing, tol: dict[str, dict]) -> Drawing:
    """The drawing in the braking-retained state (one state of the vehicle): the battery at the low end
    of its charge and aged, its resistance taken at the highest ambient, which goes with hot coils (a
    battery at -30 °C beside windings in an 80 °C retarder zone is two vehicles), as the hot corner's
    battery; cables at the long end of their length tolerance; coils at the high end of their
    resistance tolerance; the alternator hot-derated. Its hot corner's windings
    (:func:`coilstage.analysis.conditions.hot_temperatures`) are solved again in this state (a lower
    bus heats them less); the braking view and the tolerance model's braking network both read it."""
    alt = d.supply.alternator
    derate = tol["supply.alternator.hot_derating"]["high"]
    emf_min = open_circuit_voltage(tol["supply.battery.state_of_charge"]["low"], cells=_cells(d))
    rb_hot = raised_battery_resistance(d, tol, d.environment.ambient_max)
    db = with_coil_tolerance(_with_cable_length(_with_battery(d, rb_hot), tol), coil_tolerances(d, tol, "high"))
    if alt is not None:
        alt_b = dataclasses.replace(
            alt, limit_idle=alt.limit_idle * (1 - derate), limit_rated=alt.limit_rated * (1 - derate)
        )
        db = dataclasses.replace(db, supply=dataclasses.replace(db.supply, alternator=alt_b))
    return dataclasses.replace(db, corners=dataclasses.replace(d.corners, hot_battery_emf=emf_min))


def braking_effort(d: Drawing, currents: dict[str, float]) -> float:
    """Relative braking effort of all stages at the stage currents ``currents`` (stage id -> A): the sum
    over stages of B² in the gap at each coil's ampere-turns (the magnetic circuit), or (N·I)² for a
    coil without one (the same measure :func:`coilstage.analysis.field.analyse_field` uses)."""
    total = 0.0
    circs = {name: circuit_of(c) for name, c in d.coils.items()}
    for s in d.stages:
        ni = s.coil.turns * currents[s.id] * s.coil_current_factor
        circ = circs[s.coil.name]
        total += circ.gap_flux_density(ni) ** 2 if circ is not None else ni * ni
    return total


#: Number of ambients the duty sweep takes between the drawing's lowest and highest (ends included).
SWEEP_POINTS = 9


@dataclass(frozen=True)
class DutySweep:
    """The largest continuous current of every element at each ambient of the sweep (one consistent
    vehicle state per ambient; see the module docstring)."""

    ambients: tuple[float, ...]  # [°C], lowest first
    ambient_max: float  # [°C]
    bus: tuple[float, ...]  # bus held at the battery terminals at each ambient [V]
    currents: dict[str, tuple[float, ...]]  # element id -> current at each ambient [A]
    states: dict[str, tuple[str, ...]]  # element id -> "all stages" or "<stage> alone" at each ambient
    words: tuple[tuple[str, str], ...]

    def zone(self, stated: float, j: int) -> float:
        """Temperature of a zone stated at ``stated`` [°C] at the sweep's ``j``-th ambient."""
        return zone_at_ambient(stated, self.ambients[j], self.ambient_max)

    def point_words(self, j: int) -> str:
        """What the ``j``-th point is, in words."""
        return (
            f"ambient {self.ambients[j]:g} °C (worst of {len(self.ambients)} from {self.ambients[0]:g} to "
            f"{self.ambients[-1]:g} °C): zones at their stated temperature less "
            f"{self.ambient_max - self.ambients[j]:g} K, "
            f"coils and cables starting at {self.ambients[j]:g} °C, bus {self.bus[j]:.2f} V"
        )

    def worst(self, margin: Callable[[int], float | None]) -> int:
        """Index of the ambient with the smallest margin (``margin(j)``; None counts as the worst)."""
        ms = [margin(j) for j in range(len(self.ambients))]
        return min(range(len(ms)), key=lambda j: -math.inf if ms[j] is None else ms[j])


@dataclass(frozen=True)
class WorstCases:
    largest_fault: FaultView
    smallest_fault: FaultView
    lowest_bus: BusView
    largest_current: dict[str, float]  # element id -> current [A]
    largest_current_words: tuple[tuple[str, str], ...]
    bus_high: float  # the regulator's highest end [V]
    assumptions: tuple[str, ...] = ()  # each tolerance default used, with its value, source and status
    largest_current_solution: Solution | None = None  # the network at the largest continuous current
    largest_break: BreakCase | None = None  # the same state, the coils' inductance at its high end
    duty_sweep: DutySweep | None = None  # the duty rules' consistent vehicle states over the ambient range
    duty_sweep_nominal: DutySweep | None = None  # the same states with nominal parts and the nominal bus
    braking: BrakingView | None = None  # braking retained at the lowest bus, hot coils at +tolerance


# The shipped defaults the worst cases take, with the end each one uses (``None``: the nominal value).
_USED: tuple[tuple[str, str], ...] = (
    ("supply.battery.surface_charge_per_cell", "high"),
    ("supply.battery.resistance_min_factor", "low"),
    ("supply.alternator.cold_excess", "high"),
    ("supply.battery.state_of_charge", "low"),
    ("supply.battery.resistance_temperature_coefficient", "nominal"),
    ("supply.battery.resistance_empty_factor", "high"),
    ("supply.battery.age_factor", "high"),
    ("tolerances.fault_resistance", "high"),
    ("supply.alternator.hot_derating", "high"),
    ("coils.*.resistance_tolerance", "low"),
    ("coils.*.inductance_tolerance", "high"),
    ("tolerances.cable_length", "high"),
)


def _fmt(row: dict, end: str) -> str:
    """A default's value in the words of its unit (fractions as percent, factors as ×, ohms in mΩ)."""
    v, unit, key = float(row[end]), row["unit"], row["key"]
    if unit == "1" and key.endswith("_factor"):
        return f"× {v:g}"
    if unit == "1":
        return f"{v * 100:+g} %" if key.endswith("_tolerance") else f"{v * 100:g} %"
    if unit == "ohm":
        return f"{v * 1e3:g} mΩ"
    if unit == "V/K":
        return f"{v * 1e3:g} mV/K"
    return f"{v:g} {unit}"


def used_defaults(tol: dict[str, dict], cells: int, alternator: bool = True) -> tuple[str, ...]:
    """One line per tolerance default the worst cases use: key, what it is, the value taken (and which
    end of its range), its source and its status."""
    g = "supply.alternator.compensation_24v" if cells == 12 else "supply.alternator.compensation_12v"
    out = []
    for key, end in (*_USED, (g, "nominal")):
        if not alternator and key.startswith("supply.alternator."):
            continue
        row = tol[key]
        which = "" if end == "nominal" else f" ({end} end of {_fmt(row, 'low')} to {_fmt(row, 'high')})"
        out.append(
            f"worst-case default {key} = {_fmt(row, end)}{which}: {row['quantity']}; "
            f"source: {row['source']}; status: {row['status']}"
        )
    return tuple(out)


def defaults() -> dict[str, dict]:
    """The shipped tolerance defaults by key."""
    return {r["key"]: r for r in tables.shipped("tolerance_defaults.toml")["table"]["rows"]}


@dataclass(frozen=True)
class BreakCase:
    """The switch-off that breaks the most: the drawing with each coil at the low end of its resistance
    tolerance and the high end of its inductance tolerance, at the largest continuous current's
    temperatures and sources (the largest break current, the most stored energy ½LI² and the slowest
    decay L/R at once; each of the switching rules takes its figure here)."""

    drawing: Drawing
    temperatures: dict[str, float]
    sources: SourceState
    words: tuple[tuple[str, str], ...]


def _with_cable_length(d: Drawing, tol: dict[str, dict]) -> Drawing:
    """The drawing with every cable at the long end of its length tolerance (its own row where the
    drawing states one, else the harness's)."""
    out = []
    for e in d.elements:
        if isinstance(e, Cable):
            e = evolve(e, length=e.length * (1 + float(lookup(tol, "tolerances.cable_length", e.id)["high"])))
        out.append(e)
    return evolve(d, elements=tuple(out))


def regulator_tolerance(d: Drawing, tol: dict[str, dict]) -> float:
    """The regulator's set-point tolerance [V]: the drawing's relative row where it states one
    (``supply.alternator.tolerance``, high end × set-point), else the alternator's stated tolerance."""
    alt = d.supply.alternator
    if alt is None:
        return 0.0
    row = tol.get("supply.alternator.tolerance")
    if row is not None and row.get("status") == DRAWING_STATUS:
        return alt.setpoint * float(row["high"])
    return alt.tolerance


def _with_battery(d: Drawing, r: float, base_load: float | None = None) -> Drawing:
    s = d.supply
    supply = dataclasses.replace(s, battery=dataclasses.replace(s.battery, internal_resistance=r))
    if base_load is not None:
        supply = dataclasses.replace(supply, base_load=base_load)
    return dataclasses.replace(d, supply=supply)


def _faults(circuit: Circuit, temps, src: SourceState, protected: dict[str, list[str]], r_fault: float):
    d = circuit.drawing
    by_id = circuit.index
    far = {cid: by_id[cid].b for ids in protected.values() for cid in ids if cid in by_id}
    places = [d.supply.battery.node, *(f.b for f in d.of_kind(Fuse)), *far.values()]
    bolted = circuit.fault_currents(temps, src, places)
    if r_fault > 0:  # Thévenin: I = U_oc / (U_oc / I_bolted + R_f)
        pre = circuit.solve(temps, src)
        ref = pre.v[d.supply.chassis_node]
        u = {n: pre.v[n] - ref for n in bolted}
        bolted = {n: (u[n] / (u[n] / i + r_fault) if i > 0 and u[n] > 0 else 0.0) for n, i in bolted.items()}
    return (
        {f.id: bolted[f.b] for f in d.of_kind(Fuse)},
        {cid: bolted[n] for cid, n in far.items()},
        bolted[d.supply.battery.node],
    )


def worst_cases(
    d: Drawing, cases: dict[str, Conditions], protected: dict[str, list[str]], duty: dict[str, float]
) -> WorstCases:
    """The worst-case views of a drawing (see the module docstring); ``duty`` is the nominal largest
    current of each element [A], scaled here by the ratio of its all-stages-on current at the worst
    and at the nominal cold case."""
    tol = effective(d)
    s = d.supply
    alt = s.alternator
    cells = _cells(d)
    t_min = d.environment.ambient_min
    rb = s.battery.internal_resistance
    cold_t = cases["cold"].temperatures

    # ---- largest fault
    emf_max = cells * tol["supply.battery.surface_charge_per_cell"]["high"]
    b_temp = tol["supply.battery.resistance_temperature_coefficient"]["nominal"]
    bounds = battery_resistance(d, tol, b_temp)
    rb_row = bounds.stated_low is not None  # the drawing states the range
    factor_low = tol["supply.battery.resistance_min_factor"]["low"]
    rb_sc = bounds.rated_low
    rb_min = float(bounds.lowest(factor_low))
    if rb_row:
        rb_min_words = f"{rb_min * 1e3:.2f} mΩ (the low end of the drawing's range)"
    elif rb_sc is not None and rb_sc < rb * factor_low:
        rb_min_words = f"{rb_min * 1e3:.2f} mΩ (its rated short-circuit current: R = U0/Isc at full charge)"
    else:
        rb_min_words = f"{rb_min * 1e3:.2f} mΩ ({factor_low:g} × stated)"
    excess = tol["supply.alternator.cold_excess"]["high"]
    alt_max = alt.limit_rated * (1 + excess) if alt else None
    dmax = _with_battery(d, rb_min, base_load=0.0)
    cmax = Circuit(dmax)
    src = SourceState(emf_max, alt.setpoint if alt else None, alt_max, alt_fixed=True)
    at, far, bat = _faults(cmax, cold_t, src, protected, 0.0)
    largest = FaultView(
        "largest fault",
        (
            ("battery", f"EMF {emf_max:.1f} V (2.2 V per cell, just off charge); {rb_min_words}"),
            ("alternator", "absent" if alt is None else f"current source {alt_max:.0f} A (rated + {excess:.0%} cold)"),
            ("cables", f"{t_min:g} °C (lowest ambient)"),
            ("other loads", "disconnected"),
            ("fault", "bolted"),
        ),
        at,
        far,
        bat,
        emf_max,
        rb_min,
        0.0,
    )

    # ---- smallest fault
    soc = tol["supply.battery.state_of_charge"]["low"]
    age = tol["supply.battery.age_factor"]["high"]
    emf_min = open_circuit_voltage(soc, cells=cells)

    rb_ref = bounds.reference  # the weakest battery its rating allows
    rb_ref_words = (
        f"{rb_ref * 1e3:.1f} mΩ at 25 °C, full (its cold-cranking rating allows that much; {rb * 1e3:.1f} mΩ stated)"
        if rb_ref > rb
        else f"stated {rb * 1e3:.1f} mΩ at 25 °C, full"
    )

    rb_max = raised_battery_resistance(d, tol, t_min)
    r_fault = tol["tolerances.fault_resistance"]["high"]
    dmin = _with_cable_length(_with_battery(d, rb_max), tol)
    cmin = Circuit(dmin)
    zone_t = dict(cold_t)
    zone_t.update({c.id: c.zone_temperature for c in d.of_kind(Cable)})
    src_min = SourceState(emf_min, None, None, alt_fixed=True)
    at, far, bat = _faults(cmin, zone_t, src_min, protected, r_fault)
    battery_words = f"EMF {emf_min:.2f} V (open-circuit voltage at {soc:.0%} charge); " + (
        f"{rb_max * 1e3:.1f} mΩ (the high end of the drawing's range)"
        if rb_row
        else f"{rb_max * 1e3:.1f} mΩ ({rb_ref_words}, raised for {soc:.0%} charge, {t_min:g} °C and age × {age:g})"
    )
    len_hi = float(tol["tolerances.cable_length"]["high"])
    smallest = FaultView(
        "smallest fault",
        (
            ("battery", battery_words),
            ("alternator", "off (engine stopped)"),
            ("cables", f"at their zone temperatures, lengths at the long end of their tolerance ({len_hi:+.0%})"),
            ("other loads", "connected"),
            ("fault", f"{r_fault * 1e3:g} mΩ of its own (chafe or loose contact; from memory)"),
        ),
        at,
        far,
        bat,
        emf_min,
        rb_max,
        r_fault,
    )

    # ---- lowest bus
    hot = cases["hot"]
    derate = tol["supply.alternator.hot_derating"]["high"]
    if alt is not None:
        hot_limit = hot.sources.alt_limit
        limit = hot_limit * (1 - derate) if hot_limit is not None else None
        src_low = SourceState(emf_min, alt.setpoint, limit)
        alt_words = (
            "off" if limit is None else f"set-point {alt.setpoint:.2f} V, output {limit:.0f} A (hot: −{derate:.0%})"
        )
    else:
        src_low = SourceState(emf_min, None, None)
        alt_words = "absent"
    sol = cmin.solve(hot.temperatures, src_low)
    lowest = BusView(
        "lowest bus",
        (
            ("battery", battery_words),
            ("alternator", alt_words),
            ("coils and cables", f"as the hot corner, cable lengths {len_hi:+.0%}"),
        ),
        sol,
        sol.v[s.battery.node],
    )

    # ---- braking retained: the lowest bus with the hot coils at the high end of their tolerance
    r_hi = coil_tolerances(d, tol, "high")
    # one state of the vehicle: the hot coils go with the highest ambient, so the battery's resistance is
    # raised for its charge and age but taken at that ambient, not at the lowest one (a battery at
    # -30 °C beside windings in an 80 °C retarder zone is two vehicles)
    t_hot = d.environment.ambient_max
    db = braking_drawing(d, tol)
    rb_hot = db.supply.battery.internal_resistance  # its battery, raised at the highest ambient
    b_temps = hot_temperatures(db)
    bsol = Circuit(db).solve(b_temps, SourceState(emf_min, alt.setpoint if alt else None, hot_alternator_limit(db)))
    circuit = Circuit(d)
    cold_sol = circuit.solve(cold_t, cases["cold"].sources)  # also the nominal of the largest current below
    e_cold = braking_effort(d, {st.id: abs(cold_sol.current[st.id]) for st in d.stages})
    e_low = braking_effort(d, {st.id: abs(bsol.current[st.id]) for st in d.stages})
    braking = BrakingView(
        "lowest bus",
        (
            (
                "battery",
                f"EMF {emf_min:.2f} V (open-circuit voltage at {soc:.0%} charge); {rb_hot * 1e3:.1f} mΩ "
                f"({rb_ref_words}, raised for {soc:.0%} charge and age × {age:g}, at the highest "
                f"ambient {t_hot:g} °C that goes with hot coils)",
            ),
            ("alternator", alt_words),
            (
                "coils",
                f"resistance {tolerance_words(r_hi)} (tolerance), at their steady state in this state: "
                + ", ".join(f"{st.id} {b_temps[st.id]:.0f} °C" for st in d.stages),
            ),
            ("cables", f"at their zone temperatures, lengths {len_hi:+.0%}"),
            ("reference", "the cold corner's effort, all stages on"),
        ),
        bsol,
        bsol.v[s.battery.node],
        e_cold,
        e_low,
        e_low / e_cold if e_cold else math.nan,
    )

    # ---- largest continuous current
    r_tol = coil_tolerances(d, tol, "low")
    g = tol["supply.alternator.compensation_24v" if cells == 12 else "supply.alternator.compensation_12v"]["nominal"]
    cold = cases["cold"]
    if alt is not None:
        reg_tol = regulator_tolerance(d, tol)
        hi = regulated_bus_range(
            alt.setpoint, reg_tol, g, t_min, max(t_min, 25.0), compensation_limit=alt.compensation_limit
        ).high
        bus_high = max(hi, cold.sources.hold_bus or 0.0)
        reg_words = (
            f"held at {bus_high:.2f} V: set-point {alt.setpoint:.2f} V + {reg_tol:.2f} V tolerance + "
            f"{abs(g) * 1e3:g} mV/K compensation at {t_min:g} °C (from 25 °C)"
            + (f", at most {alt.compensation_limit:g} V" if alt.compensation_limit is not None else "")
        )
    else:
        bus_high = cold.sources.hold_bus or cold.sources.battery_emf
        reg_words = f"held at {bus_high:.2f} V"
    src_hi = dataclasses.replace(cold.sources, hold_bus=bus_high, battery_emf=bus_high)
    if src_hi.alt_setpoint is not None:
        src_hi = dataclasses.replace(src_hi, alt_setpoint=bus_high)
    overrides = {e.id: element_resistance(e, cold_t.get(e.id, 20.0)) * (1 + r_tol[e.id]) for e in d.of_kind(Stage)}
    nominal = cold_sol  # the cold corner's solve, made once
    worst = circuit.solve(cold_t, src_hi, overrides=overrides)
    largest_current = {
        k: i * (abs(worst.current[k]) / abs(nominal.current[k]) if abs(nominal.current[k]) > 1e-12 else 1.0)
        for k, i in duty.items()
    }
    words = (
        ("coils", f"{t_min:g} °C, resistance {tolerance_words(r_tol)} (tolerance)"),
        ("bus", reg_words),
    )
    l_hi = coil_tolerances(d, tol, "high", "coils.*.inductance_tolerance")
    largest_break = BreakCase(
        with_coil_tolerance(d, r_tol, l_hi),
        cold_t,
        src_hi,
        (
            (
                "coils",
                f"{t_min:g} °C, resistance {tolerance_words(r_tol)}, inductance {tolerance_words(l_hi)} (tolerances)",
            ),
            ("bus", reg_words),
        ),
    )
    return WorstCases(
        largest,
        smallest,
        lowest,
        largest_current,
        words,
        bus_high,
        used_defaults(tol, cells, alt is not None),
        worst,
        largest_break,
        duty_sweep(d, cases, r_tol, g, regulator_tolerance(d, tol)),
        duty_sweep(d, cases, {}, 0.0),
        braking,
    )


def duty_sweep(
    d: Drawing, cases: dict[str, Conditions], r_tol: dict[str, float], g: float, reg_tol: float | None = None
) -> DutySweep:
    """The largest continuous current of every element at each ambient of the sweep (module docstring):
    one linear network per ambient, every all-on and one-stage-alone state from its factorisation
    (:func:`coilstage.analysis.corners.cold_duty`). ``r_tol``: stage id -> its coil's resistance
    tolerance end [fraction]. With ``r_tol = {}`` and ``g = 0``: nominal parts and the cold corner's bus
    at every ambient."""
    env = d.environment
    alt = d.supply.alternator
    lo, hi = env.ambient_min, env.ambient_max
    ambients = tuple(float(x) for x in np.unique(np.linspace(lo, hi, SWEEP_POINTS))) if hi > lo else (float(lo),)
    cold = cases["cold"].sources
    # a cold-corner bus the drawing states itself (not the default set-point + tolerance) stays the floor
    if alt is not None and reg_tol is None:
        reg_tol = alt.tolerance
    stated_bus = alt is None or abs(d.corners.cold_bus - (alt.setpoint + alt.tolerance)) > 1e-9
    circuit = Circuit(with_coil_tolerance(d, r_tol) if any(r_tol.values()) else d)
    currents: dict[str, list[float]] = {e.id: [] for e in d.elements}
    states: dict[str, list[str]] = {e.id: [] for e in d.elements}
    buses = []
    nets = []
    for t in ambients:
        if alt is not None and g != 0.0:
            bus = regulated_bus_range(alt.setpoint, reg_tol, g, t, t, compensation_limit=alt.compensation_limit).high
            if stated_bus:
                bus = max(bus, d.corners.cold_bus)
        elif alt is not None:
            bus = d.corners.cold_bus
        else:
            bus = cold.hold_bus or cold.battery_emf
        buses.append(bus)
        temps = {e.id: t for e in d.elements if isinstance(e, (Cable, Stage))}
        src = dataclasses.replace(
            cold, battery_emf=bus, hold_bus=bus, alt_setpoint=bus if cold.alt_setpoint is not None else None
        )
        nets.append((temps, src))
    for duty, where in cold_duties(circuit, nets):  # every ambient's network solved in one stacked call
        for k in currents:
            currents[k].append(duty[k])
            states[k].append(where[k])
    if alt is None:
        bus_words = "held by the battery"
    elif g != 0.0:
        bus_words = (
            f"regulator's highest end with the regulator at the ambient (set-point {alt.setpoint:.2f} V + "
            f"{reg_tol:.2f} V tolerance, {abs(g) * 1e3:g} mV/K compensation from 25 °C)"
        )
    else:
        bus_words = f"held at {d.corners.cold_bus:.2f} V (the cold corner's)"
    words = (
        (
            "coils",
            f"and cables starting at the ambient, coil resistance {tolerance_words(r_tol)} (tolerance)"
            if any(r_tol.values())
            else "and cables starting at the ambient, stated coil resistance",
        ),
        ("zones", "stated temperature less (ambient_max − ambient): they follow the ambient (common practice)"),
        ("bus", bus_words),
    )
    return DutySweep(
        ambients,
        hi,
        tuple(buses),
        {k: tuple(v) for k, v in currents.items()},
        {k: tuple(v) for k, v in states.items()},
        words,
    )
