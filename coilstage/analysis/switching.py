"""Switch-on and switch-off of the coil stages in the real network (feed, branches, returns, sources).

Between switching events the network is linear and is solved exactly (see
:mod:`coilstage.physics.transient`). The alternator of the hot corner is piecewise linear
(regulating, current-limited, off); a change of its state is an event too, found by root-finding on
the exact solution. A stage switched off leaves the network and decays through its suppressor.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from coilstage.analysis.circuit import SourceState, element_resistance
from coilstage.analysis.conditions import LARGEST
from coilstage.analysis.linear import CaseNetwork, Linear
from coilstage.drawing.schema import Drawing, Stage
from coilstage.errors import AnalysisError
from coilstage.physics.numeric import bracketed_root
from coilstage.physics.transient import Decay, ExactSolution, clamp_decay

#: Most alternator state changes (regulating, current-limited, off) followed between two switching
#: events: the state is monotone in the stage currents, so a real switch-on makes two or three.
MAX_STATE_CHANGES = 20


@dataclass(frozen=True)
class Segment:
    t0: float
    t1: float
    lin: Linear
    sol: ExactSolution


@dataclass(frozen=True)
class Break:
    """A stage switched off at ``t``: the decay of its current through its suppressor."""

    stage: str
    t: float
    decay: Decay
    current: Callable[[np.ndarray], np.ndarray]  # times after the break [s] -> the stage's current [A]


@dataclass
class Scenario:
    name: str
    corner: str
    events: list[tuple[float, tuple[str, ...]]]
    t_end: float
    segments: list[Segment] = field(default_factory=list)
    breaks: list[Break] = field(default_factory=list)

    def sample(self, times: np.ndarray, stage_ids: list[str], extra: tuple[str, ...] = ()) -> dict[str, np.ndarray]:
        """Stage currents, bus voltage and source currents at ``times`` [s]; ``extra`` names more
        read-outs (``"element:F1"``: the current of fuse or relay F1)."""
        times = np.asarray(times, dtype=float)
        out = {s: np.zeros_like(times) for s in stage_ids}
        names = ("bus_voltage", "alternator_current", "battery_current", *extra)
        for k in names:
            out[k] = np.full_like(times, np.nan)
        for seg in self.segments:
            m = (times >= seg.t0) & ((times < seg.t1) | ((seg.t1 == self.t_end) & (times <= seg.t1)))
            if not m.any():
                continue
            tt = times[m] - seg.t0
            if not seg.lin.stages:
                for k in names:
                    out[k][m] = seg.lin.readout[k][1]
                continue
            if stage_ids:  # the stage currents, only where asked for (the read-outs do not need them)
                cur = seg.sol.at(tt)
                for j, sid in enumerate(seg.lin.stages):
                    out.setdefault(sid, np.zeros_like(times))[m] = cur[:, j]
            g = np.array([seg.lin.readout[k][0] for k in names])
            h = np.array([seg.lin.readout[k][1] for k in names])
            vals = seg.sol.linear_many(g, h, tt)  # every read-out from one exponential table
            for col, k in enumerate(names):
                out[k][m] = vals[:, col]
        for b in self.breaks:
            m = times >= b.t
            if m.any():
                energised_later = np.zeros_like(times, dtype=bool)
                for seg in self.segments:
                    if seg.t0 >= b.t and b.stage in seg.lin.stages:
                        energised_later |= times >= seg.t0
                mm = m & ~energised_later
                out.setdefault(b.stage, np.zeros_like(times))[mm] += b.current(times[mm] - b.t)
        return out


def _leaves_mode(lin: Linear, sol: ExactSolution, src: SourceState, span: float) -> tuple[float, str] | None:
    """First time in (0, span] at which the alternator leaves its present state, and the state it
    enters; None if it stays."""
    if lin.mode == "fixed" or "alternator_law" not in lin.readout or not lin.stages:
        return None
    g, h = lin.readout["alternator_law"]
    lim = float(src.alt_limit)
    tol = 1e-9 * max(1.0, lim)
    grid = np.unique(np.concatenate([np.geomspace(1e-9, max(span, 2e-9), 400), np.linspace(0, span, 400)]))
    grid = grid[grid <= span]
    law = sol.linear(g, h, grid)
    # each state's boundaries: (distance inside, as a function of the law; state beyond)
    if lin.mode == "regulating":
        bounds = [(lambda v: lim - v, "current-limited"), (lambda v: v, "off")]
    elif lin.mode == "current-limited":
        bounds = [(lambda v: v - lim, "regulating")]
    else:
        bounds = [(lambda v: -v, "regulating")]
    best: tuple[float, str] | None = None

    for dist, nxt in bounds:
        vals = dist(law)
        bad = np.nonzero(vals < -tol)[0]
        if len(bad) == 0:
            continue
        j = bad[0]
        inside = np.nonzero(vals[:j] >= 0)[0]
        if len(inside) == 0:
            t_cross = float(grid[0])
        else:
            t_cross = bracketed_root(
                lambda t, dist=dist: float(dist(sol.linear(g, h, t))[0]),
                grid[inside[-1]],
                grid[j],
                xtol=1e-15 + 1e-12 * sol.slowest,
            )
        if best is None or t_cross < best[0]:
            best = (t_cross, nxt)
    return best


_EMPTY = ExactSolution(np.zeros(0), np.zeros(0), np.zeros((0, 0)), np.zeros(0))


def run(
    net: CaseNetwork, corner: str, name: str, events: list[tuple[float, tuple[str, ...]]], t_end: float
) -> Scenario:
    """Simulate ``events`` (time, set of energised stages) from a de-energised start up to ``t_end``
    in the operating case ``net`` (named ``corner``)."""
    d = net.circuit.drawing
    temps, src = net.temperatures, net.sources
    stage_by_id = {s.id: s for s in d.stages}
    scn = Scenario(name, corner, events, t_end)
    current: dict[str, float] = {}  # currents of energised stages at the event
    decaying: dict[str, Break] = {}
    times = [e[0] for e in events] + [t_end]
    on: tuple[str, ...] = ()
    for (t_ev, new_on), t_next in zip(events, times[1:], strict=True):
        if t_ev >= t_end:
            break
        # stages switched off at this event start to decay
        for sid in on:
            if sid not in new_on:
                st = stage_by_id[sid]
                sup = st.suppression
                r_stage = element_resistance(st, temps[sid])
                i0 = current.get(sid, 0.0)
                decay, fn = _decay(st, r_stage, i0, sup, d.switching.release_fraction)
                br = Break(sid, t_ev, decay, fn)
                scn.breaks.append(br)
                decaying[sid] = br
        # stages switched on start from whatever current still circulates in them
        x0 = []
        for sid in new_on:
            if sid in on:
                x0.append(current[sid])
            elif sid in decaying:
                x0.append(float(decaying[sid].current(np.array([t_ev - decaying[sid].t]))[0]))
                del decaying[sid]
            else:
                x0.append(0.0)
        on = tuple(new_on)
        x = np.array(x0, dtype=float)
        t = t_ev
        mode = net.mode_at(on, x)
        for _ in range(MAX_STATE_CHANGES):  # alternator state changes within this interval
            lin = net.linear(on, mode)
            sol = lin.rl.solution(x) if on else _EMPTY
            leave = _leaves_mode(lin, sol, src, t_next - t)
            t1 = t_next if leave is None else t + leave[0]
            scn.segments.append(Segment(t, t1, lin, sol))
            if on:
                x = sol.at(t1 - t)[0]
            t = t1
            if leave is None:
                break
            mode = leave[1]
        else:
            raise AnalysisError(
                f"switching {corner}:{name}",
                f"the alternator changed state more than {MAX_STATE_CHANGES} times between two events",
            )
        current = {sid: float(x[j]) for j, sid in enumerate(on)}
    return scn


def _decay(stage: Stage, r_stage: float, i0: float, sup, fraction: float):
    if sup.kind == "none" or i0 <= 0:
        w = 0.5 * stage.inductance * i0 * i0
        dec = Decay(i0, stage.inductance / r_stage, 0.0, 0.0, fraction, w, 0.0, math.inf if i0 > 0 else 0.0)
        return dec, (lambda t: np.zeros_like(np.asarray(t, dtype=float)))
    return clamp_decay(i0, r_stage, stage.inductance, sup.u0, sup.r_series, fraction)


@dataclass(frozen=True)
class StageSwitching:
    id: str
    corner: str
    tau: float  # L/R of the stage alone [s]
    t95_alone: float | None  # switched on alone, in the network [s]; None: not made (no transients)
    t95_all: float | None  # switched on with all the others [s]; None as above
    i_break: float  # current when its contact opens, all stages on (steady) [A]
    stored_energy: float  # ½ L I² at the break [J]
    decay: Decay
    contact_voltage: float  # across the opening contact: highest bus + suppressor voltage [V] (inf: arc)


@dataclass(frozen=True)
class SwitchingResult:
    scenarios: dict[str, Scenario]  # "<corner>:<name>"
    stages: dict[str, dict[str, StageSwitching]]  # corner -> stage id -> figures
    bus_dip: dict[str, float]  # "<corner>:<name>" -> fall of the bus voltage below its start [V]
    sequence_given: bool


def scenario_events(d: Drawing) -> dict[str, list[tuple[float, tuple[str, ...]]]]:
    """The switching scenarios: one stage, all stages, and the drawing's sequence where given."""
    ids = tuple(s.id for s in d.stages)
    off = d.switching.off_at
    out = {
        "one stage": [(0.0, ids[:1]), (off, ())],
        "all stages": [(0.0, ids), (off, ())],
    }
    if d.switching.positions:
        ev = [(p.at, p.stages) for p in d.switching.positions]
        out["sequence"] = [*ev, (ev[-1][0] + off, ())]
    return out


def analyse_switching(
    d: Drawing,
    nets: dict[str, CaseNetwork],
    corners: tuple[str, ...] = ("cold", "hot"),
    largest: tuple[Drawing, CaseNetwork] | None = None,
    t95: bool = True,
) -> SwitchingResult:
    """Every scenario in the cold and hot corners (``nets``: corner -> its network), and the
    per-stage switching figures; with ``largest`` (the drawing with its coils at the ends of their
    tolerances that break the most, and its network at the largest continuous current), the per-stage
    figures there too, under :data:`~coilstage.analysis.conditions.LARGEST`; without ``t95`` the
    switch-on times T0.95 are not made (None: no rule reads them, the report shows them)."""
    scen: dict[str, Scenario] = {}
    dips: dict[str, float] = {}
    events = scenario_events(d)
    for corner in corners:
        for name, ev in events.items():
            t_end = ev[-1][0] + (d.switching.duration - d.switching.off_at)
            sc = run(nets[corner], corner, name, ev, t_end)
            scen[f"{corner}:{name}"] = sc
            grid = np.linspace(0.0, t_end, 3001)
            bus = sc.sample(grid, [])["bus_voltage"]
            dips[f"{corner}:{name}"] = float(bus[0] - np.nanmin(bus))
    stages = {corner: stage_figures(d, nets[corner], corner, t95) for corner in corners}
    if largest is not None:
        stages[LARGEST] = stage_figures(largest[0], largest[1], LARGEST, t95)
    return SwitchingResult(scen, stages, dips, bool(d.switching.positions))


def stage_figures(d: Drawing, net: CaseNetwork, corner: str, t95: bool = True) -> dict[str, StageSwitching]:
    """Each stage's switching figures in the network ``net`` of the drawing ``d`` (its coils' resistance
    and inductance as ``d`` states them, at the network's temperatures): L/R, T0.95 alone and with all
    the others, the break current with all stages on (steady), ½LI² and the decay through its
    suppressor (:func:`coilstage.physics.transient.clamp_decay`); without ``t95`` the T0.95 are None."""
    limit_bus = d.corners.limit_bus
    temps = net.temperatures
    ids = net.stage_ids
    # T0.95: the exact solution of the switch-on, continued until each current gets there
    t95_all: dict[str, float] | None = switch_on_t95(net, ids) if t95 else None
    per: dict[str, StageSwitching] = {}
    full = net.linear(ids, net.steady_mode(ids))
    i_ss = full.rl.steady_state()
    for j, st in enumerate(d.stages):
        r_stage = element_resistance(st, temps[st.id])
        t95_alone = switch_on_t95(net, (st.id,))[st.id] if t95 else None
        i0 = float(i_ss[j])
        dec, _fn = _decay(st, r_stage, i0, st.suppression, d.switching.release_fraction)
        cv = math.inf if st.suppression.kind == "none" else limit_bus + dec.u_suppressor_peak
        per[st.id] = StageSwitching(
            st.id,
            corner,
            st.inductance / r_stage,
            t95_alone,
            None if t95_all is None else t95_all[st.id],
            i0,
            0.5 * st.inductance * i0 * i0,
            dec,
            cv,
        )
    return per


def _switch_on_segments(net: CaseNetwork, ids: tuple[str, ...]):
    """The exact, piecewise solution of switching ``ids`` on together from rest, with no switch-off,
    continued until the last alternator state change: [(t0, t_end or None, solution)]."""
    x = np.zeros(len(ids))
    t = 0.0
    segs = []
    mode = net.mode_at(ids, x)
    for _ in range(MAX_STATE_CHANGES):
        lin = net.linear(ids, mode)
        sol = lin.rl.solution(x)
        leave = _leaves_mode(lin, sol, net.sources, 60 * sol.slowest)
        segs.append((t, None if leave is None else t + leave[0], sol))
        if leave is None:
            break
        x = sol.at(leave[0])[0]
        t += leave[0]
        mode = leave[1]
    else:
        raise AnalysisError(
            "switch-on", f"the alternator changed state more than {MAX_STATE_CHANGES} times during a switch-on"
        )
    return segs


def switch_on_t95(net: CaseNetwork, ids: tuple[str, ...]) -> dict[str, float]:
    """Time for each stage of ``ids``, switched on together in the network ``net`` from rest, to reach
    95 % of its final current [s] (T0.95 of the exact piecewise solution; for one stage alone on a
    stiff supply it is τ·ln 20, :func:`coilstage.physics.transient.t95`)."""

    segs = _switch_on_segments(net, ids)
    final = segs[-1][2].i_inf
    tables = []  # each segment's currents on its grid, computed once for every stage
    for t0, t1, sol in segs:
        span = (t1 - t0) if t1 is not None else 60 * sol.slowest
        grid = np.linspace(0.0, span, 2001)
        tables.append((t0, sol, grid, sol.at(grid)))
    out = {}
    for j, sid in enumerate(ids):
        target = 0.95 * final[j]
        found = math.inf
        for t0, sol, grid, cur in tables:
            hit = np.nonzero(cur[:, j] >= target)[0]
            if len(hit):
                k = hit[0]
                if k == 0:
                    found = t0
                else:
                    found = t0 + bracketed_root(
                        lambda tt, sol=sol, j=j, target=target: sol.component(j, tt) - target,
                        grid[k - 1],
                        grid[k],
                        xtol=1e-13,
                    )
                break
        out[sid] = float(found)
    return out
