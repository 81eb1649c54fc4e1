"""The braking field per stage: ampere-turns, gap flux density, flux, saturation, inductance; what the
hot corner and the sagging bus leave of it; a saturating switch-on; an AC supply for comparison."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from coilstage import tables
from coilstage.analysis.circuit import Solution
from coilstage.analysis.conditions import LARGEST
from coilstage.analysis.corners import CornerResult
from coilstage.analysis.linear import CaseNetwork
from coilstage.drawing.schema import CoilType, Drawing, Stage
from coilstage.physics.magnetic import BHCurve, MagneticCircuit, ac_current, kloss_torque
from coilstage.physics.numeric import integrate_dopri
from coilstage.physics.transient import t95

#: Geometry-derived and stated inductance may differ by this much before a warning (common
#: practice: a lumped reluctance model leaves out fringing and leakage, worth tens of percent).
INDUCTANCE_TOLERANCE = 0.25


def circuit_of(coil: CoilType) -> MagneticCircuit | None:
    m = coil.magnetic
    if m is None:
        return None
    curve = (
        tables.bh_curve(m.curve_name)
        if not m.curve_h
        else BHCurve(m.curve_name, np.array(m.curve_h), np.array(m.curve_b))
    )
    return MagneticCircuit(coil.turns, m.pole_area, m.gaps, m.gap, m.iron_length, m.iron_area, curve)


@dataclass(frozen=True)
class StageField:
    id: str
    corner: str
    coil_current: float  # [A]
    ampere_turns: float  # per coil [A]
    b_gap: float | None  # [T]
    flux: float | None  # per pole [Wb]
    b_iron: float | None  # [T]
    knee: float | None  # [T] of the iron
    l_apparent: float | None  # per coil [H]
    l_incremental: float | None  # per coil [H]
    effort: float  # relative braking effort of the stage ∝ B² (∝ (NI)² without geometry)


@dataclass(frozen=True)
class SwitchOn:
    """Switch-on of one stage alone in the cold corner, saturating against linear."""

    stage: str
    t95_saturating: float  # [s]
    t95_linear: float  # [s], with the stated inductance
    energy_saturating: float  # ∫ i dλ at the final current [J]
    energy_linear: float  # ½ L I² [J]
    t: np.ndarray = field(repr=False, default=None)
    i_saturating: np.ndarray = field(repr=False, default=None)
    i_linear: np.ndarray = field(repr=False, default=None)


@dataclass(frozen=True)
class ACResult:
    coil: str
    voltage: float
    frequency: float
    impedance: float
    i_ac: float  # RMS [A]
    i_dc: float  # [A] at the same voltage
    ni_ac: float  # RMS ampere-turns
    ni_dc: float
    b_ac: float | None  # gap flux density at the RMS ampere-turns [T]
    b_dc: float | None


@dataclass(frozen=True)
class FieldResult:
    stages: dict[str, dict[str, StageField]]  # corner -> stage id -> figures
    ratio_corners: float  # braking effort hot / cold (all stages)
    ratio_temperature: float  # the same for hot windings alone, at the cold bus
    ratio_bus: float  # the same for the lowest bus alone, cold windings
    torque: dict[str, float] | None  # corner -> estimated braking torque [N·m]
    torque_speed: dict[str, list[tuple[float, float]]] | None  # corner -> (speed rad/s, torque)
    inductance_check: dict[str, tuple[float, float]]  # coil -> (stated, from geometry) [H]
    switch_on: list[SwitchOn]
    ac: list[ACResult]
    modelled: bool  # any coil with geometry


def _stage_field(s: Stage, corner: str, i_stage: float, circ: MagneticCircuit | None) -> StageField:
    ic = i_stage * s.coil_current_factor
    ni = s.coil.turns * ic
    if circ is None:
        return StageField(s.id, corner, ic, ni, None, None, None, None, None, None, ni * ni)
    b = circ.gap_flux_density(ni)
    return StageField(
        s.id,
        corner,
        ic,
        ni,
        b,
        b * circ.area,
        circ.iron_flux_density(b),
        circ.curve.knee(tables.knee_slope()),
        circ.apparent_inductance(ic),
        circ.incremental_inductance(ic),
        b * b,
    )


def analyse_field(
    d: Drawing,
    corners: dict[str, CornerResult],
    cold: CaseNetwork,
    largest: Solution | None = None,
    switch_on: bool = True,
) -> FieldResult:
    """The field per stage in the cold and hot corners (and, with ``largest``, the network at the
    largest continuous current: the most ampere-turns the supply can drive), what the hot corner leaves
    of the braking effort, the saturating switch-on (in the cold network ``cold``; left out, an empty
    list, without ``switch_on``) and the AC comparison."""
    circs = {name: circuit_of(c) for name, c in d.coils.items()}
    per: dict[str, dict[str, StageField]] = {}
    for corner in ("cold", "hot"):
        per[corner] = {
            st.id: _stage_field(s, corner, st.current, circs[s.coil.name])
            for s, st in zip(d.stages, corners[corner].stages, strict=True)
        }
    if largest is not None:
        per[LARGEST] = {
            s.id: _stage_field(s, LARGEST, abs(largest.current[s.id]), circs[s.coil.name]) for s in d.stages
        }
    cold_net = cold
    cold, hot = corners["cold"], corners["hot"]

    def effort(currents: list[float]) -> float:
        total = 0.0
        for s, i in zip(d.stages, currents, strict=True):
            ni = s.coil.turns * i * s.coil_current_factor
            circ = circs[s.coil.name]
            total += circ.gap_flux_density(ni) ** 2 if circ is not None else ni * ni
        return total

    e_cold = effort([st.current for st in cold.stages])
    e_hot = effort([st.current for st in hot.stages])
    # the two causes apart (Ohm's law at each stage's terminals)
    i_t = [c.current * c.resistance / h.resistance for c, h in zip(cold.stages, hot.stages, strict=True)]
    i_v = [c.current * h.terminal_voltage / c.terminal_voltage for c, h in zip(cold.stages, hot.stages, strict=True)]
    ratio = e_hot / e_cold if e_cold else math.nan
    torque = torque_speed = None
    rt = d.retarder
    if rt.rated_torque is not None and rt.rated_current is not None:
        e_rated = effort([rt.rated_current] * len(d.stages))
        torque = {"cold": rt.rated_torque * e_cold / e_rated, "hot": rt.rated_torque * e_hot / e_rated}
        if rt.critical_speed is not None:
            w = rt.critical_speed
            torque_speed = {
                k: [(f * w, kloss_torque(f * w, v, w)) for f in (0.25, 0.5, 1.0, 2.0, 4.0)] for k, v in torque.items()
            }
    check = {}
    for name, c in d.coils.items():
        if circs[name] is not None:
            check[name] = (c.inductance, circs[name].unsaturated_inductance())
    return FieldResult(
        per,
        ratio,
        effort(i_t) / e_cold if e_cold else math.nan,
        effort(i_v) / e_cold if e_cold else math.nan,
        torque,
        torque_speed,
        check,
        [x for x in (_switch_on(cold_net, s, circs[s.coil.name]) for s in _one_per_coil(d)) if x] if switch_on else [],
        _ac(d, corners["cold"], circs),
        any(c is not None for c in circs.values()),
    )


def _one_per_coil(d: Drawing) -> list[Stage]:
    """The first stage of each coil type and connection: the saturating switch-on of the others
    differs only by their few milliohms of branch."""
    seen, out = set(), []
    for s in d.stages:
        key = (s.coil.name, s.count, s.connection)
        if key not in seen:
            seen.add(key)
            out.append(s)
    return out


def _switch_on(net: CaseNetwork, s: Stage, circ: MagneticCircuit | None) -> SwitchOn | None:
    """One stage alone, cold corner: dλ/dt = c − K·i(λ) on its Thévenin equivalent in the network."""
    if circ is None:
        return None
    lin = net.linear((s.id,), "fixed")
    k, c = float(lin.rl.k[0, 0]), float(lin.rl.c[0])
    i_final = c / k
    n = s.count
    # the stage's flux linkage against its current: coils in series add linkage; in parallel share current
    i_grid = np.linspace(0.0, 1.2 * i_final, 400)
    ni_tab, b_tab = circ.mmf_table(circ.gap_flux_density(circ.turns * 1.25 * i_final * s.coil_current_factor))
    per_coil = circ.turns * circ.area * np.interp(circ.turns * i_grid * s.coil_current_factor, ni_tab, b_tab)
    lam = per_coil * (n if s.connection == "series" else 1.0)
    l_lin = s.inductance
    tau = l_lin / k
    t_end = 12 * tau * max(1.0, lam[-1] / (l_lin * i_grid[-1]))

    def rhs(_t, y):
        return np.array([c - k * float(np.interp(y[0], lam, i_grid))])

    ts, ys = integrate_dopri(rhs, 0.0, t_end, [0.0], rtol=1e-7, atol=1e-9, source=f"saturating switch-on of {s.id}")
    t = np.array(ts)
    i_sat = np.interp(np.array([y[0] for y in ys]), lam, i_grid)
    i_lin = i_final * (1 - np.exp(-t / tau))
    target = 0.95 * i_final
    j = int(np.nonzero(i_sat >= target)[0][0])
    t95_sat = float(np.interp(target, i_sat[j - 1 : j + 1], t[j - 1 : j + 1])) if j else float(t[0])
    lam_f = float(np.interp(i_final, i_grid, lam))
    # W = ∫ i dλ from 0 to λ_final (co-energy's complement), by the trapezoid rule on the table
    m = lam <= lam_f
    w = float(np.trapezoid(i_grid[m], lam[m]) + (lam_f - lam[m][-1]) * 0.5 * (i_grid[m][-1] + i_final))
    return SwitchOn(s.id, t95_sat, t95(tau), w, 0.5 * l_lin * i_final**2, t, i_sat, i_lin)


def _ac(d: Drawing, cold_corner: CornerResult, circs) -> list[ACResult]:
    ac = d.ac_comparison
    if ac is None:
        return []
    out = []
    cold = {st.id: st for st in cold_corner.stages}
    for name, coil in d.coils.items():
        s = next((x for x in d.stages if x.coil.name == name), None)
        if s is None:
            continue
        r = cold[s.id].resistance / s.r_factor  # one coil, at the cold corner's temperature
        i_ac, z = ac_current(ac.voltage, r, coil.inductance, ac.frequency)
        i_dc = ac.voltage / r
        circ = circs[name]
        out.append(
            ACResult(
                name,
                ac.voltage,
                ac.frequency,
                z,
                i_ac,
                i_dc,
                coil.turns * i_ac,
                coil.turns * i_dc,
                circ.gap_flux_density(coil.turns * i_ac) if circ else None,
                circ.gap_flux_density(coil.turns * i_dc) if circ else None,
            )
        )
    return out
