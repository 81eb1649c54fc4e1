"""Heat over a duty: winding and cable temperatures, stage currents, bus and battery over a descent.

The electrical network settles within about a second of each switching event; the windings and
cables heat over minutes. So the electrical part is solved as a DC network at every evaluation of
the thermal equations (quasi-static) and the thermal equations are integrated with an adaptive
Dormand–Prince pair between the steps of the duty. Leaving the switch-on transients out overstates
the heat a little (the current is below its final value for ≈3τ): the safe side.

States: one temperature per stage (its coils are alike and share their current), one per cable
(its conductor), the charge drawn from the battery, the charge it has used weighted for its
discharge rate (Peukert's law), and the temperature of each stage's surroundings, which the rotors
heat while any stage is on (the rotor-heated coil zone, a first-order node:
dTz/dt = (Tz0 + rise·[any stage on] − Tz)/τ).

The whole duty runs under one stated set of conditions (:func:`duty_conditions`): the alternator
hot (its output less the hot derating), the battery from the duty's starting charge, its EMF and
resistance following its state of charge and temperature, the coils' surroundings rising with the
retardation, each coil's resistance at the low end of its tolerance (the most current and heat at
a given bus). A state that cannot physically go on is held where it stops: a conductor or winding at
its metal's melting point, the battery at flat; the times they get there are found on the solution.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from coilstage import tables
from coilstage.analysis.materials import metal
from coilstage.analysis.quasistatic import QuasiStatic, stage_thermal_resistance
from coilstage.analysis.tolerances import coil_tolerances, effective, tolerance_words, with_coil_tolerance
from coilstage.drawing.schema import Cable, Drawing, Duty, Fuse, Relay
from coilstage.drawing.switching import shipped_steps
from coilstage.physics.battery import (
    FLOODED_OCV_LINE,
    capacity_temperature_factor,
    internal_resistance,
    open_circuit_voltage,
    peukert_usable_charge,
)
from coilstage.physics.conductor import resistance_at_temperature
from coilstage.physics.numeric import bracketed_root, integrate_dopri
from coilstage.physics.thermal import (
    MELTING_POINT,
    cable_loss_coefficient,
    rotor_zone_rate,
    winding_heating_rate,
)


@dataclass(frozen=True)
class CableThermal:
    """What a cable sheds per metre as a function of its conductor temperature: from the still-air
    heat balance (``ht`` correlations) where its outside diameter is known, else from the linear model
    its table ampacity implies. ``q_shed(θ)`` is interpolated on a grid."""

    id: str
    c_per_m: float  # heat capacity of the conductor per metre [J/(m·K)]
    grid: np.ndarray  # conductor temperatures [°C]
    shed: np.ndarray  # [W/m]
    source: str

    def q_shed(self, theta: np.ndarray | float) -> np.ndarray | float:
        return np.interp(theta, self.grid, self.shed, right=None)


#: Lowest conductor temperature the network is solved at [°C] (below any vehicle ambient, above the
#: −234.5 °C where copper's linear resistance law would reach zero).
T_FLOOR = -100.0

#: Conductor rise over its zone at which the heat it sheds is tabulated [K] (denser near the zone).
RISE_GRID = np.concatenate([np.linspace(0.0, 100.0, 11), np.linspace(120.0, 600.0, 13)])


@lru_cache(maxsize=256)
def _shed_table(conductor_d: float, outer_d: float, k_ins: float, eps: float, t_zone: float) -> tuple[float, ...]:
    from coilstage.physics.cable_heat import heat_shed

    return tuple(heat_shed(t_zone + x, conductor_d, outer_d, k_ins, eps, t_zone) for x in RISE_GRID)


def cable_thermal(c: Cable) -> CableThermal | None:
    qc = metal(c.material).qc
    grid = c.zone_temperature + RISE_GRID
    fb = tables.bundle_factor(c.bundle)
    if c.outer_diameter is not None and c.conductor_diameter is not None:
        k_ins, mat = tables.cable_insulation(c.insulation_class)
        eps = tables.cable_emissivity()
        shed = np.array(_shed_table(c.conductor_diameter, c.outer_diameter, k_ins, eps, c.zone_temperature)) * fb * fb
        src = (
            f"still-air heat balance ({mat}, k = {k_ins:g} W/(m K); {c.diameter_source}); bundle factor "
            f"{fb:.2f} squared"
        )
    else:
        amp = tables.ampacity(c.awg, c.area, c.class_max, c.zone_temperature, c.bundle)
        if isinstance(amp, str) or amp.value <= 0:
            return None
        g = cable_loss_coefficient(amp.value, c.r20_per_m, c.alpha20, float(amp.column), c.zone_temperature)
        shed = g * (grid - c.zone_temperature)
        src = "linear loss implied by the table ampacity (no outside diameter known)"
    return CableThermal(c.id, qc * c.area, grid, shed, src)


# ---------------------------------------------------------------- conditions of the duty


@dataclass(frozen=True)
class DutyConditions:
    """The one set of conditions a duty runs under, with the words a report states them in."""

    zone_rise: float  # rise of the coils' surroundings while any stage is on [K]
    zone_time_constant: float  # [s]
    alternator_derating: float  # share of the alternator's output lost when hot [–]
    battery_temperature: float  # [°C]
    cells: int  # lead-acid cells in series
    ocv_offset: float  # shift of the flooded OCV line per cell (AGM/gel) [V]
    peukert: float  # Peukert exponent [–]
    rated_time: float  # the capacity's rated discharge time [s]
    capacity: float | None  # usable at the battery temperature, at the rated rate [C]
    resistance_coefficient: float  # b in R = R25·exp(b(25 − T)) [1/K]
    empty_factor: float  # R(flat)/R(full) [–]
    words: tuple[tuple[str, str], ...] = ()
    assumptions: tuple[str, ...] = ()
    #: stage id -> the fraction its coil's resistance is taken off its stated one (the low end of its
    #: tolerance: at a given bus the lowest resistance draws the most current and dissipates the most,
    #: V²/R, the worst case of every heating rule) [fraction]
    coil_tolerance: dict[str, float] = field(default_factory=dict)


def nominal_conditions(cond: DutyConditions) -> DutyConditions:
    """``cond`` with every coil at its stated resistance: the nominal beside the heating verdicts,
    which are decided at the low end of the coils' tolerance (:func:`duty_conditions`)."""
    words = tuple(("coils", "resistance as stated (nominal)") if k == "coils" else (k, v) for k, v in cond.words)
    return dataclasses.replace(cond, coil_tolerance={}, words=words)


def rotor_zone_defaults() -> dict[str, dict]:
    """The shipped rotor-zone rows by key (coilstage/data/rotor_zone_defaults.toml)."""
    return {r["key"]: r for r in tables.shipped("rotor_zone_defaults.toml")["table"]["rows"]}


def duty_conditions(d: Drawing) -> DutyConditions:
    """The conditions every duty of drawing ``d`` runs under, each default named with its source.

    One vehicle state for the whole descent (and for the continuous run the time to the limit is read
    from): a long retardation on a hot day, so the alternator is hot (its output less the nominal hot
    derating), the battery is at the highest ambient, the coils' surroundings rise with the rotor heat,
    and the battery starts at the duty's stated charge."""
    env = d.environment
    rows = rotor_zone_defaults()
    assumptions: list[str] = []
    rise, tau = env.rotor_zone_rise, env.rotor_zone_time_constant
    for key, value, unit in (
        ("environment.rotor_zone_rise", rise, "K"),
        ("environment.rotor_zone_time_constant", tau, "s"),
    ):
        if value is None:
            row = rows[key]
            assumptions.append(
                f"duty default {key} = {float(row['value']):g} {unit}: {row['quantity']}; source: {row['source']}; "
                f"status: {row['status']}"
            )
    rise = float(rows["environment.rotor_zone_rise"]["value"]) if rise is None else rise
    tau = float(rows["environment.rotor_zone_time_constant"]["value"]) if tau is None else tau
    tol = effective(d)
    b = d.supply.battery
    alt = d.supply.alternator
    derate = float(tol["supply.alternator.hot_derating"]["nominal"]) if alt else 0.0
    if alt:
        r = tol["supply.alternator.hot_derating"]
        assumptions.append(
            f"duty: alternator output less {derate:.0%} when hot ({r['quantity']}; source: {r['source']}; "
            f"status: {r['status']})"
        )
    cells = 12 if d.supply.system_voltage == 24 else 6
    bat_data = tables.shipped("battery_lead_acid.toml")
    offset = 0.0
    if b.chemistry in ("agm", "gel"):
        offset = float(bat_data["agm"]["full_per_cell"]) - FLOODED_OCV_LINE[-1][1]
    if b.peukert is not None:
        k = b.peukert
    else:  # the row of the battery's chemistry (analysis.tolerances), or the one the drawing states
        r = tol["supply.battery.peukert_exponent"]
        k = float(r["nominal"])
        assumptions.append(
            f"duty default supply.battery.peukert = {k:g} ({b.chemistry}): {r['quantity']}; source: {r['source']}; "
            f"status: {r['status']}"
        )
    t_bat = env.ambient_max
    # a warm battery is not credited with more than its rating (the safe side)
    share = min(
        1.0, float(capacity_temperature_factor(t_bat, float(bat_data["capacity_temperature"]["coefficient_long"])))
    )
    cap = b.capacity * share if b.capacity else None
    # C20 (20 h to 10.5 V at 25 °C, EN 50342-1); the table's key sits inside its last array row as written
    rated_h = bat_data.get("rated_time_h", bat_data["peukert_exponents"][-1].get("rated_time_h", 20.0))
    rated_time = float(rated_h) * 3600.0
    coef = float(tol["supply.battery.resistance_temperature_coefficient"]["nominal"])
    empty = float(tol["supply.battery.resistance_empty_factor"]["nominal"])
    r_tol = coil_tolerances(d, tol, "low")
    words = [
        ("coils", f"resistance {tolerance_words(r_tol)} (the low end of its tolerance: the most current and heat)"),
        ("coils' surroundings", f"stated zone + {rise:g} K while any stage is on, time constant {tau / 60:g} min"),
        ("alternator", "absent" if alt is None else f"output less {derate:.0%} (hot)"),
        (
            "battery",
            f"from {d.duty.start_soc:.0%} charge, at {t_bat:g} °C (highest ambient); EMF from its open-circuit "
            f"line ({b.chemistry}), resistance rising as it empties (×{empty:g} flat); Peukert k = {k:g}"
            if d.duty is not None
            else "as stated",
        ),
    ]
    if b.capacity:
        assumptions.append(
            f"duty: battery at {t_bat:g} °C (the highest ambient): capacity × {share:g} (IEC 60896-11 line "
            f"{bat_data['capacity_temperature']['coefficient_long']:g}/K, capped at its rating; "
            f"{bat_data['capacity_temperature']['status']})"
        )
    return DutyConditions(
        rise,
        tau,
        derate,
        t_bat,
        cells,
        offset,
        k,
        rated_time,
        cap,
        coef,
        empty,
        tuple(words),
        tuple(assumptions),
        r_tol,
    )


class _DutyNetwork(QuasiStatic):
    """The quasi-static network with the battery's EMF and resistance set per solve (they follow its
    state of charge): the stated resistance stamped by the base class is cancelled by its negative and
    the present one stamped beside the variable elements."""

    def __init__(self, d: Drawing, battery_emf: float, alt_setpoint: float | None):
        super().__init__(d, battery_emf, alt_setpoint)
        self._rb0 = self.rb
        self._rhs_base = self.rhs0.copy()
        self._rhs_base[self.bat - 1] -= battery_emf / self.rb

    def set_battery(self, emf: float, resistance: float) -> None:
        self.emf, self.rb = emf, resistance
        rhs = self._rhs_base.copy()
        rhs[self.bat - 1] += emf / resistance
        self.rhs0 = rhs
        dg = 1.0 / resistance - 1.0 / self._rb0  # the battery's conductance less the one stamped [S]
        if dg == 0.0:
            self.extra_rows = None
        else:  # one diagonal entry: the battery lies between its node and the reference (node 0, dropped)
            k = np.array([self.bat - 1], dtype=np.int64)
            self.extra_rows = (k, k, np.array([dg]))


# ---------------------------------------------------------------- duty simulation


@dataclass
class DutyResult:
    duty: Duty
    t: np.ndarray  # [s]
    stage_temperature: np.ndarray  # (nt, n_stages) [°C]
    cable_temperature: np.ndarray  # (nt, n_cables) [°C]
    stage_current: np.ndarray  # (nt, n_stages) [A]
    cable_current: np.ndarray
    bus_voltage: np.ndarray  # [V]
    battery_current: np.ndarray  # discharge positive [A]
    alternator_current: np.ndarray
    charge_drawn: np.ndarray  # [C]
    device_current: dict[str, np.ndarray] = field(default_factory=dict)
    stage_ids: list[str] = field(default_factory=list)
    cable_ids: list[str] = field(default_factory=list)
    cable_models: dict[str, str] = field(default_factory=dict)  # cable id -> how it sheds heat
    modelled_stages: list[str] = field(default_factory=list)
    # (start [s], end [s], y' = f(t, y)) of each step of the profile: the crossing is found on these
    segments: list[tuple[float, float, object]] = field(default_factory=list, repr=False)
    zone_temperature: np.ndarray | None = None  # (nt, n_stages) the coils' surroundings [°C]
    state_of_charge: np.ndarray | None = None  # (nt,) rate-weighted, held at 0 once flat [–]; None: no capacity
    battery_emf: np.ndarray | None = None  # [V]
    battery_resistance: np.ndarray | None = None  # [Ω]
    conditions: DutyConditions | None = None
    states: np.ndarray | None = field(default=None, repr=False)  # (nt, n_state) the integrator's states
    melting_point: dict[str, float] = field(default_factory=dict)  # element id -> its metal's [°C]
    _crossings: dict = field(default_factory=dict, repr=False)

    @property
    def assumptions(self) -> tuple[str, ...]:
        return self.conditions.assumptions if self.conditions else ()

    def state(self, j: int) -> np.ndarray:
        """The integrator's full state at recorded point ``j``."""
        if self.states is not None:
            return self.states[j]
        return np.concatenate([self.cable_temperature[j], self.stage_temperature[j], [self.charge_drawn[j]]])

    def crossing(self, col: int, level: float, rising: bool = True, tol: float = 1e-3) -> float:
        """First time state ``col`` reaches ``level`` [s] (rising or falling; inf: not within the duty).

        The crossing lies within one accepted step of the integrator; it is found on the solution
        itself, not on a straight line between recorded points: the step is integrated again from its
        start to a trial end (Dormand–Prince, rtol 1e-10), and the trial end is found by a bracketed
        root search (Illinois) to ``tol`` [s]."""
        key = (col, level, rising)
        if key in self._crossings:
            return self._crossings[key]
        y = (
            self.states[:, col]
            if self.states is not None
            else np.array([self.state(j)[col] for j in range(len(self.t))])
        )
        sgn = 1.0 if rising else -1.0
        hit = np.nonzero(sgn * (y - level) >= 0)[0]
        out = math.inf
        if len(hit):
            j = int(hit[0])
            out = float(self.t[j])
            if j > 0 and y[j] != y[j - 1]:
                a, b = float(self.t[j - 1]), float(self.t[j])
                seg = next((f for t0, t1, f in self.segments if t0 <= a and b <= t1), None)
                if seg is None:  # no model kept: the recorded points are all there is
                    out = float(np.interp(sgn * level, sgn * y[j - 1 : j + 1], self.t[j - 1 : j + 1]))
                else:
                    # the step again at a fine tolerance: its accepted points bracket the crossing closely
                    fine = self._crossings.get(("fine", j))
                    if fine is None:  # one fine pass per step, shared by every state that crosses in it
                        fine = integrate_dopri(seg, a, b, self.state(j - 1), rtol=1e-10, atol=1e-8, source="crossing")
                        self._crossings[("fine", j)] = fine
                    fts, fys = fine
                    fy = np.array([sgn * (yy[col] - level) for yy in fys])
                    m = int(np.nonzero(fy >= 0)[0][0]) if np.any(fy >= 0) else len(fts) - 1
                    lo = max(m - 1, 0)
                    ta, ya = float(fts[lo]), fys[lo]

                    def g(tt: float) -> float:
                        if tt <= ta:
                            return float(sgn * (ya[col] - level))
                        _ts, ys = integrate_dopri(seg, ta, tt, ya, rtol=1e-10, atol=1e-8, source="crossing time")
                        return float(sgn * (ys[-1][col] - level))

                    tb = float(fts[m])
                    out = tb if m == lo else self._refine(seg, g, ta, ya, tb, fys[m], col, sgn, level, tol)
        self._crossings[key] = out
        return out

    @staticmethod
    def _refine(seg, g, ta, ya, tb, yb, col, sgn, level, tol) -> float:
        """The crossing of ``level`` inside one fine step [ta, tb]: first the root of the cubic Hermite
        interpolant of the state through both ends with their derivatives (dense output of the step),
        kept where the solution itself confirms it (g changes sign across ±tol of it); otherwise, as
        where the step holds a kink (a conductor held at its melting point), a bracketed root of g."""
        h = tb - ta
        fa, fb = np.asarray(seg(ta, ya))[col], np.asarray(seg(tb, yb))[col]
        p0, p1 = sgn * (ya[col] - level), sgn * (yb[col] - level)
        m0, m1 = sgn * fa * h, sgn * fb * h
        # p(s) = (2s³ − 3s² + 1)p0 + (s³ − 2s² + s)m0 + (−2s³ + 3s²)p1 + (s³ − s²)m1, s in [0, 1]
        coef = [2 * p0 + m0 - 2 * p1 + m1, -3 * p0 - 2 * m0 + 3 * p1 - m1, m0, p0]
        roots = [float(r.real) for r in np.roots(coef) if abs(r.imag) < 1e-12 and -1e-9 <= r.real <= 1 + 1e-9]
        if roots:
            est = ta + min(roots) * h
            lo, hi = max(ta, est - tol), min(tb, est + tol)
            if (lo == ta or g(lo) < 0) and g(hi) >= 0:
                return est
        return bracketed_root(g, ta, tb, xtol=tol)

    def time_to(self, k: int, limit: float, tol: float = 1e-3) -> float:
        """First time stage ``k``'s winding reaches ``limit`` [s] (inf: never within the duty)."""
        return self.crossing(len(self.cable_ids) + k, limit, True, tol)

    def cable_time_to(self, k: int, limit: float, tol: float = 1e-3) -> float:
        """First time cable ``k``'s conductor reaches ``limit`` [s] (inf: never within the duty)."""
        return self.crossing(k, limit, True, tol)

    @property
    def soc_column(self) -> int:
        return len(self.cable_ids) + len(self.stage_ids) + 1

    def time_to_charge(self, soc: float, tol: float = 1e-3) -> float:
        """First time the battery's state of charge falls to ``soc`` [s] (inf: not within the duty or no
        capacity known). The state integrated is the rate-weighted charge used, so the level is the
        charge used at that state of charge."""
        if self.state_of_charge is None or self.conditions is None or not self.conditions.capacity:
            return math.inf
        used = (self.duty.start_soc - soc) * self.conditions.capacity
        return self.crossing(self.soc_column, used, True, tol)


def simulate(
    d: Drawing,
    duty: Duty | None = None,
    progress: Callable[[float, float], object] | None = None,
    rtol: float = 1e-6,
    conditions: DutyConditions | None = None,
) -> DutyResult:
    """Run a duty profile from the surroundings' temperatures under ``conditions`` (default
    :func:`duty_conditions` of the drawing). ``progress(done, total)`` is called after each step of
    the profile (seconds of duty simulated, of the total)."""
    duty = duty or d.duty
    cond = conditions or duty_conditions(d)
    d = with_coil_tolerance(d, cond.coil_tolerance)  # the coils as the conditions take them
    alt = d.supply.alternator
    b = d.supply.battery
    net = _DutyNetwork(d, d.corners.hot_battery_emf, alt.setpoint if alt else None)
    n_s, n_c = len(net.stages), len(net.cables)
    models = {c.id: cable_thermal(c) for c in net.cables}
    cab_c = np.array([models[c.id].c_per_m if models[c.id] else 1.0 for c in net.cables])
    cab_zone = np.array([c.zone_temperature for c in net.cables])
    st_zone = np.array([s.coil.zone_temperature for s in net.stages])
    st_cap = np.array([(s.coil.heat_capacity or 1.0) * s.count for s in net.stages])
    modelled = np.array([s.coil.has_thermal_model for s in net.stages])
    r20c = net.cable_r20 / np.array([c.length for c in net.cables]) if n_c else np.zeros(0)
    has_cab = np.array([models[c.id] is not None for c in net.cables], dtype=bool)
    cab_melt = np.array([MELTING_POINT[c.material] for c in net.cables])
    st_melt = np.array([MELTING_POINT[s.coil.metal] for s in net.stages])
    # every cable's shed heat tabulated on the same rise grid: one vectorised interpolation per call
    shed = np.array([models[c.id].shed if models[c.id] else np.zeros(len(RISE_GRID)) for c in net.cables])
    shed = shed.reshape(n_c, len(RISE_GRID))
    rows = np.arange(n_c)
    cap = cond.capacity
    start_soc = duty.start_soc
    i_rated = b.capacity / cond.rated_time if b.capacity else 0.0

    def q_shed(tc: np.ndarray) -> np.ndarray:
        # (np.minimum(np.maximum(...)) is np.clip's value up to the sign of a zero, at a ufunc's cost on
        # these short arrays)
        rise = np.minimum(np.maximum(tc - cab_zone, 0.0), RISE_GRID[-1])
        j = np.minimum(np.maximum(np.searchsorted(RISE_GRID, rise, side="right") - 1, 0), len(RISE_GRID) - 2)
        f = (rise - RISE_GRID[j]) / (RISE_GRID[j + 1] - RISE_GRID[j])
        return shed[rows, j] * (1 - f) + shed[rows, j + 1] * f

    def soc_of(used: float) -> float:
        return min(1.0, max(0.0, start_soc - used / cap))

    last = [math.nan]

    def set_battery(used: float) -> None:
        if not cap or used == last[0]:  # no capacity: the stated EMF and resistance throughout
            return
        last[0] = used
        soc = soc_of(used)
        emf = open_circuit_voltage(soc, cond.cells, offset_per_cell=cond.ocv_offset)
        r = internal_resistance(
            b.internal_resistance,
            soc,
            cond.battery_temperature,
            temperature_coefficient=cond.resistance_coefficient,
            empty_factor=cond.empty_factor,
        )
        net.set_battery(float(emf), float(r))

    def rate_weight(i_bat: float) -> float:
        """Charge used per charge drawn at this current: C_H / C_I (Peukert), 1 below the rated rate
        and while charging (charge returned at full efficiency: the optimistic side, stated)."""
        if not b.capacity or i_bat <= i_rated:
            return 1.0
        return b.capacity / float(peukert_usable_charge(i_bat, b.capacity, cond.rated_time, cond.peukert))

    iz = n_c + n_s + 2  # first zone-temperature column

    def rhs_factory(on: np.ndarray, limit: float | None, rth: np.ndarray):
        any_on = bool(np.any(on))

        def rhs(_t, y):
            # a trial stage of the integrator may lie outside what a conductor can be (its error control
            # rejects such a step); the network is solved within that range so it stays solvable
            tc = np.minimum(np.maximum(y[:n_c], T_FLOOR), cab_melt)
            ts = np.minimum(np.maximum(y[n_c : n_c + n_s], T_FLOOR), st_melt)
            tz = y[iz:]
            set_battery(float(y[n_c + n_s + 1]))
            rc, rs = net.resistances(tc, ts)
            i_c, i_s, i_bat, _ia, _x = net.solve_at(rc, rs, on, limit)
            p = i_s * i_s * rs
            dts = np.where(modelled, winding_heating_rate(p, ts, tz, np.where(modelled, rth, 1.0), st_cap), 0.0)
            # heat per metre: I^2 R'(T), R'(T) = R'20 times the R(T) law's ratio R(T)/R20 (written so, the
            # product keeps the order of its factors and the figures stay the same to the last bit)
            q = i_c * i_c * r20c * resistance_at_temperature(1.0, 20.0, tc, net.cable_alpha)
            dtc = np.where(has_cab, (q - q_shed(tc)) / cab_c, 0.0)
            # a conductor cannot heat past its melting point: it is held there (and would open)
            dtc = np.where(tc >= cab_melt, np.minimum(dtc, 0.0), dtc)
            dts = np.where(ts >= st_melt, np.minimum(dts, 0.0), dts)
            dtz = rotor_zone_rate(tz, st_zone, cond.zone_rise, any_on, cond.zone_time_constant)
            ib = float(i_bat)
            return np.concatenate([dtc, dts, [ib, ib * rate_weight(ib)], dtz])

        return rhs

    y = np.concatenate([cab_zone, st_zone, [0.0, 0.0], st_zone])
    ts_all, ys_all, on_all, lim_all, segments = [], [], [], [], []
    t0 = 0.0
    total = duty.duration
    hot = 1.0 - cond.alternator_derating
    for step in duty.steps:
        on = np.array([s.id in step.stages for s in net.stages], dtype=bool)
        limit = hot * (alt.limit_idle if step.engine == "idle" else alt.limit_rated) if alt else None
        rth = np.array([stage_thermal_resistance(s, step.moving) for s in net.stages])
        f = rhs_factory(on, limit, rth)
        segments.append((t0, t0 + step.duration, f))
        ts, ys = integrate_dopri(
            f,
            t0,
            t0 + step.duration,
            y,
            rtol=rtol,
            atol=1e-4,
            source=f"duty {duty.name}, {step.label}",
        )
        # the first point of a step repeats the last of the one before: the temperatures carry over,
        # the currents jump, so the series keeps both
        ts_all += ts
        ys_all += ys
        on_all += [on] * len(ts)
        lim_all += [limit] * len(ts)
        y = ys[-1] if ys else y
        t0 += step.duration
        if progress is not None:
            progress(t0, total)
    t = np.array(ts_all)
    ymat = np.array(ys_all)
    # the hold at the melting point acts from the step after it is reached: the record is held there too
    ymat[:, :n_c] = np.minimum(ymat[:, :n_c], cab_melt)
    ymat[:, n_c : n_c + n_s] = np.minimum(ymat[:, n_c : n_c + n_s], st_melt)
    # the electrical figures at the recorded points
    cur_s = np.zeros((len(t), n_s))
    cur_c = np.zeros((len(t), n_c))
    bus = np.zeros(len(t))
    ib = np.zeros(len(t))
    ia = np.zeros(len(t))
    emf = np.zeros(len(t))
    rb = np.zeros(len(t))
    dev: dict[str, list[float]] = {e.id: [] for e in d.elements if isinstance(e, (Fuse, Relay))}
    for k in range(len(t)):
        set_battery(float(ymat[k, n_c + n_s + 1]))
        i_c, i_s, i_bat, i_alt, x = net.solve(ymat[k, :n_c], ymat[k, n_c : n_c + n_s], on_all[k], lim_all[k])
        cur_s[k], cur_c[k], ib[k], ia[k] = i_s, i_c, i_bat, i_alt
        emf[k], rb[k] = net.emf, net.rb
        bus[k] = x[net.bat - 1]
        dc = net.device_currents(x)
        for eid in dev:
            dev[eid].append(dc.get(eid, 0.0))
    soc = np.clip(start_soc - ymat[:, n_c + n_s + 1] / cap, 0.0, 1.0) if cap else None
    melt = {c.id: float(MELTING_POINT[c.material]) for c in net.cables}
    melt.update({s.id: float(MELTING_POINT[s.coil.metal]) for s in net.stages})
    return DutyResult(
        duty,
        t,
        ymat[:, n_c : n_c + n_s],
        ymat[:, :n_c],
        cur_s,
        cur_c,
        bus,
        ib,
        ia,
        ymat[:, n_c + n_s],
        {k: np.array(v) for k, v in dev.items()},
        [s.id for s in net.stages],
        [c.id for c in net.cables],
        {cid: (m.source if m else "no heat model: no ampacity in its zone") for cid, m in models.items()},
        [s.id for s in net.stages if s.coil.has_thermal_model],
        segments,
        ymat[:, iz:],
        soc,
        emf,
        rb,
        cond,
        ymat,
        melt,
    )


def shipped_duty(d: Drawing, name: str) -> Duty:
    """The shipped duty profile ``name`` for this drawing, with the drawing's battery figures; its steps
    are :func:`coilstage.drawing.switching.shipped_steps` (the loader's expansion, stage column
    included). Raises ValueError where ``name`` is no shipped profile or a step names no stage or
    switching position of the drawing."""
    steps = shipped_steps(name, [s.id for s in d.stages], d.switching)
    du = d.duty
    return Duty(
        name,
        tables.duty_profiles()[name]["description"],
        steps,
        du.start_soc if du else 1.0,
        du.min_soc if du else 0.5,
    )


def continuous_duty(d: Drawing) -> Duty:
    """The shipped continuous profile (full retardation, driving, until thermal steady state; the stages
    its stage column names), with the drawing's battery figures."""
    return shipped_duty(d, "continuous")


def simulate_profiles(d: Drawing, profiles: list[Duty], conditions: DutyConditions) -> list[DutyResult]:
    """:func:`simulate` of each profile under ``conditions``, each distinct run made once: a profile with
    the same steps and starting charge as one before it (a drawing whose own duty is the shipped
    continuous profile) gets that run's result with its own profile named on it (nothing else of a
    profile reaches a figure of the simulation, its name only labels an integrator's error, so the
    figures are the same to the last bit; the two share the cache of the crossings found on that one
    trajectory, and the network those crossings integrate again)."""
    done: list[tuple[Duty, DutyResult]] = []
    out = []
    for duty in profiles:
        same = next((r for du, r in done if du.steps == duty.steps and du.start_soc == duty.start_soc), None)
        result = simulate(d, duty, conditions=conditions) if same is None else dataclasses.replace(same, duty=duty)
        done.append((duty, result))
        out.append(result)
    return out
