"""Heat over a duty: winding and cable temperatures, stage currents, bus and battery over a descent.

The electrical network settles within about a second of each switching event; the windings and
cables heat over minutes. So the electrical part is solved as a DC network at every evaluation of
the thermal equations (quasi-static) and the thermal equations are integrated with an adaptive
Dormand–Prince pair between the steps of the duty. Leaving the switch-on transients out overstates
the heat a little (the current is below its final value for ≈3τ): the safe side.

States: one temperature per stage (its coils are alike and share their current), one per cable
(its conductor), and the charge drawn from the battery.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from coilstage import tables
from coilstage.analysis.materials import metal
from coilstage.analysis.quasistatic import QuasiStatic, stage_thermal_resistance
from coilstage.drawing.schema import Cable, Drawing, Duty, Fuse, Relay
from coilstage.physics.numeric import integrate_dopri
from coilstage.physics.thermal import cable_loss_coefficient, winding_heating_rate


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

    def q_shed(self, theta: np.ndarray | float):
        return np.interp(theta, self.grid, self.shed, right=None)


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

    def state(self, j: int) -> np.ndarray:
        """The integrator's state at recorded point ``j``: cable and winding temperatures, charge."""
        return np.concatenate([self.cable_temperature[j], self.stage_temperature[j], [self.charge_drawn[j]]])

    def time_to(self, k: int, limit: float, tol: float = 1e-3) -> float:
        """First time stage ``k``'s winding reaches ``limit`` [s] (inf: never within the duty).

        The crossing lies within one accepted step of the integrator; it is found on the solution
        itself, not on a straight line between recorded points: the step is integrated again from its
        start to a trial end (Dormand–Prince, rtol 1e-10), and the trial end is bracketed by bisection
        until the bracket is narrower than ``tol`` [s]."""
        y = self.stage_temperature[:, k]
        hit = np.nonzero(y >= limit)[0]
        if len(hit) == 0:
            return math.inf
        j = int(hit[0])
        if j == 0 or y[j] == y[j - 1]:
            return float(self.t[j])
        a, b = float(self.t[j - 1]), float(self.t[j])
        seg = next((f for t0, t1, f in self.segments if t0 <= a and b <= t1), None)
        if seg is None:  # no model kept: the recorded points are all there is
            return float(np.interp(limit, y[j - 1 : j + 1], self.t[j - 1 : j + 1]))
        y0 = self.state(j - 1)
        col = len(self.cable_ids) + k
        t_lo, t_hi = a, b
        while t_hi - t_lo > tol:
            mid = 0.5 * (t_lo + t_hi)
            _ts, ys = integrate_dopri(seg, a, mid, y0, rtol=1e-10, atol=1e-8, source="time to the limit")
            if ys[-1][col] >= limit:
                t_hi = mid
            else:
                t_lo = mid
        return 0.5 * (t_lo + t_hi)


def simulate(d: Drawing, duty: Duty | None = None, progress=None, rtol: float = 1e-6) -> DutyResult:
    """Run a duty profile from the surroundings' temperatures. ``progress(done, total)`` is called
    after each step of the profile (seconds of duty simulated, of the total)."""
    duty = duty or d.duty
    alt = d.supply.alternator
    net = QuasiStatic(d, d.corners.hot_battery_emf, alt.setpoint if alt else None)
    n_s, n_c = len(net.stages), len(net.cables)
    models = {c.id: cable_thermal(c) for c in net.cables}
    cab_c = np.array([models[c.id].c_per_m if models[c.id] else 1.0 for c in net.cables])
    cab_zone = np.array([c.zone_temperature for c in net.cables])
    st_zone = np.array([s.coil.zone_temperature for s in net.stages])
    st_cap = np.array([(s.coil.heat_capacity or 1.0) * s.count for s in net.stages])
    modelled = np.array([s.coil.has_thermal_model for s in net.stages])
    r20c = net.cable_r20 / np.array([c.length for c in net.cables]) if n_c else np.zeros(0)
    has_cab = np.array([models[c.id] is not None for c in net.cables], dtype=bool)
    # every cable's shed heat tabulated on the same rise grid: one vectorised interpolation per call
    shed = np.array([models[c.id].shed if models[c.id] else np.zeros(len(RISE_GRID)) for c in net.cables])
    shed = shed.reshape(n_c, len(RISE_GRID))
    rows = np.arange(n_c)

    def q_shed(tc: np.ndarray) -> np.ndarray:
        rise = np.clip(tc - cab_zone, 0.0, RISE_GRID[-1])
        j = np.clip(np.searchsorted(RISE_GRID, rise, side="right") - 1, 0, len(RISE_GRID) - 2)
        f = (rise - RISE_GRID[j]) / (RISE_GRID[j + 1] - RISE_GRID[j])
        return shed[rows, j] * (1 - f) + shed[rows, j + 1] * f

    def rhs_factory(on: np.ndarray, limit: float | None, rth: np.ndarray):
        def rhs(_t, y):
            tc, ts = y[:n_c], y[n_c : n_c + n_s]
            i_c, i_s, i_bat, _ia, _x = net.solve(tc, ts, on, limit)
            _rc, rs = net.resistances(tc, ts)
            p = i_s * i_s * rs
            dts = np.where(modelled, winding_heating_rate(p, ts, st_zone, np.where(modelled, rth, 1.0), st_cap), 0.0)
            q = i_c * i_c * r20c * (1 + net.cable_alpha * (tc - 20.0))
            dtc = np.where(has_cab, (q - q_shed(tc)) / cab_c, 0.0)
            return np.concatenate([dtc, dts, [i_bat]])

        return rhs

    y = np.concatenate([cab_zone, st_zone, [0.0]])
    ts_all, ys_all, on_all, lim_all, segments = [], [], [], [], []
    t0 = 0.0
    total = duty.duration
    for step in duty.steps:
        on = np.array([s.id in step.stages for s in net.stages], dtype=bool)
        limit = (alt.limit_idle if step.engine == "idle" else alt.limit_rated) if alt else None
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
    # the electrical figures at the recorded points
    cur_s = np.zeros((len(t), n_s))
    cur_c = np.zeros((len(t), n_c))
    bus = np.zeros(len(t))
    ib = np.zeros(len(t))
    ia = np.zeros(len(t))
    dev: dict[str, list[float]] = {e.id: [] for e in d.elements if isinstance(e, (Fuse, Relay))}
    for k in range(len(t)):
        i_c, i_s, i_bat, i_alt, x = net.solve(ymat[k, :n_c], ymat[k, n_c : n_c + n_s], on_all[k], lim_all[k])
        cur_s[k], cur_c[k], ib[k], ia[k] = i_s, i_c, i_bat, i_alt
        bus[k] = x[net.bat - 1]
        dc = net.device_currents(x)
        for eid in dev:
            dev[eid].append(dc.get(eid, 0.0))
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
        ymat[:, -1],
        {k: np.array(v) for k, v in dev.items()},
        [s.id for s in net.stages],
        [c.id for c in net.cables],
        {cid: (m.source if m else "no heat model: no ampacity in its zone") for cid, m in models.items()},
        [s.id for s in net.stages if s.coil.has_thermal_model],
        segments,
    )


def continuous_duty(d: Drawing) -> Duty:
    """The shipped continuous profile (all stages on, driving, until thermal steady state), with the
    drawing's battery figures."""
    from coilstage.drawing.schema import DutyStep
    from coilstage.units import parse_quantity

    row = tables.duty_profiles()["continuous"]
    steps = tuple(
        DutyStep(parse_quantity(dur, "time"), tuple(s.id for s in d.stages), eng, mov, f"step {k + 1}")
        for k, (dur, _stg, eng, mov) in enumerate(row["steps"])
    )
    du = d.duty
    return Duty("continuous", row["description"], steps, du.start_soc if du else 1.0, du.min_soc if du else 0.5)
