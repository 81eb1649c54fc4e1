"""Switch-on and switch-off of the coil stages in the real network (feed, branches, returns, sources).

Between switching events the network is linear and is solved exactly (see
:mod:`coilstage.physics.transient`). The alternator of the hot corner is piecewise linear
(regulating, current-limited, off); a change of its state is an event too, found by root-finding on
the exact solution. A stage switched off leaves the network and decays through its suppressor.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from coilstage.analysis.circuit import Circuit, SourceState, element_resistance
from coilstage.analysis.corners import corner_sources
from coilstage.drawing.schema import Drawing, Stage
from coilstage.physics.network import Branches, Factorized, mna_matrix
from coilstage.physics.numeric import bracketed_root
from coilstage.physics.transient import ExactSolution, LinearRL, clamp_decay


@dataclass(frozen=True)
class Linear:
    """The network with a given set of energised stages and alternator state, as an RL system, and
    the affine read-outs ``value = g·i + h`` of the figures the report needs."""

    stages: tuple[str, ...]
    mode: str
    rl: LinearRL
    readout: dict[str, tuple[np.ndarray, float]]  # name -> (g, h)


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
    decay: object  # physics.transient.Decay
    current: object  # callable: time after the break -> current


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
            if seg.lin.stages:
                cur = seg.sol.at(tt)
                for j, sid in enumerate(seg.lin.stages):
                    out.setdefault(sid, np.zeros_like(times))[m] = cur[:, j]
            for k in names:
                g, h = seg.lin.readout[k]
                out[k][m] = seg.sol.linear(g, h, tt) if seg.lin.stages else h
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


def build_linear(
    circuit: Circuit,
    temps: dict[str, float],
    src: SourceState,
    stages: tuple[str, ...],
    mode: str,
    all_elements: bool = False,
) -> Linear:
    """The RL system of the network with ``stages`` energised and the alternator in ``mode``
    ("regulating", "current-limited", "off", or "fixed" where the corner fixes it). Read-outs
    ``element:<id>`` give the current of every fuse and relay, and of every element with
    ``all_elements``."""
    d = circuit.drawing
    s = d.supply
    nd = circuit.nodes
    all_stages = {x.id for x in d.stages}
    res_rows, vs_rows, vs_owner, is_rows, _r, alt_on, fixed = circuit._network(temps, src, None, exclude=all_stages)
    if alt_on and not fixed:
        a = s.alternator
        node = nd[a.node]
        if mode == "regulating":
            res_rows.append((0, node, a.source_resistance))
            is_rows.append((0, node, src.alt_setpoint / a.source_resistance))
        elif mode == "current-limited":
            is_rows.append((0, node, src.alt_limit))
    n = len(nd)
    rr, cc, xx, rhs, nn = mna_matrix(n, Branches.of(res_rows), Branches.of(vs_rows), Branches.of(is_rows))
    f = Factorized(rr, cc, xx, len(rhs))
    x0 = f.solve(rhs)
    elems = [circuit.index[sid] for sid in stages]
    b = np.zeros((len(rhs), len(elems)))
    for j, e in enumerate(elems):
        ia, ib = nd[e.a], nd[e.b]
        if ib > 0:
            b[ib - 1, j] += 1.0  # the stage delivers its current into node b ...
        if ia > 0:
            b[ia - 1, j] -= 1.0  # ... taking it from node a
    zx = f.solve(b).reshape(len(rhs), len(elems)) if elems else np.zeros((len(rhs), 0))

    def node_row(name: str) -> tuple[np.ndarray, float]:
        i = nd[name]
        if i == 0:
            return np.zeros(len(elems)), 0.0
        return zx[i - 1, :].copy(), float(x0[i - 1])

    dmat = np.zeros((len(elems), len(elems)))
    c = np.zeros(len(elems))
    for j, e in enumerate(elems):
        ga, ha = node_row(e.a)
        gb, hb = node_row(e.b)
        dmat[j, :] = ga - gb
        c[j] = ha - hb
    r_own = np.array([element_resistance(e, temps[e.id]) for e in elems])
    ind = np.array([e.inductance for e in elems])
    k = np.diag(r_own) - dmat
    readout: dict[str, tuple[np.ndarray, float]] = {}
    gbus, hbus = node_row(s.battery.node)
    readout["bus_voltage"] = (gbus, hbus)
    zero = np.zeros(len(elems))
    if src.hold_bus is not None:
        kb = nn + vs_owner.index("__bus__")
        readout["battery_current"] = (zx[kb, :].copy(), float(x0[kb]))
    else:
        rb = s.battery.internal_resistance
        readout["battery_current"] = (-gbus / rb, (src.battery_emf - hbus) / rb)
    if not alt_on:
        readout["alternator_current"] = (zero, 0.0)
    elif fixed or mode == "current-limited":
        readout["alternator_current"] = (zero, float(src.alt_limit))
    elif mode == "off":
        readout["alternator_current"] = (zero, 0.0)
    from coilstage.drawing.schema import Fuse, Relay

    for e in d.elements:  # element currents: every device, or every element when asked for
        if isinstance(e, (Fuse, Relay)) or (all_elements and e.id not in all_stages):
            if e.id in vs_owner:
                kb = nn + vs_owner.index(e.id)
                readout[f"element:{e.id}"] = (zx[kb, :].copy(), float(x0[kb]))
            else:
                r = element_resistance(e, temps.get(e.id, 20.0))
                ga_, ha_ = node_row(e.a)
                gb_, hb_ = node_row(e.b)
                readout[f"element:{e.id}"] = ((ga_ - gb_) / r, (ha_ - hb_) / r)
    if alt_on and not fixed:
        ga, ha = node_row(s.alternator.node)
        rs = s.alternator.source_resistance
        law = (-ga / rs, (src.alt_setpoint - ha) / rs)  # what the regulator would deliver
        readout["alternator_law"] = law
        if mode == "regulating":
            readout["alternator_current"] = law
    return Linear(tuple(stages), "fixed" if fixed else mode, LinearRL(ind, k, c), readout)


def _mode_at(circuit, temps, src, stages, x) -> str:
    """The alternator state consistent with the stage currents ``x`` (the network is algebraic)."""
    s = circuit.drawing.supply
    alt_on = s.alternator is not None and src.alt_limit is not None and src.alt_limit > 0
    if not alt_on or src.hold_bus is not None or src.alt_fixed:
        return "fixed"
    lin = build_linear(circuit, temps, src, stages, "regulating")
    g, h = lin.readout["alternator_law"]
    i = float(g @ x + h)
    if i > src.alt_limit:
        return "current-limited"
    if i < 0:
        return "off"
    return "regulating"


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
    circuit: Circuit, corner: str, name: str, events: list[tuple[float, tuple[str, ...]]], t_end: float
) -> Scenario:
    """Simulate ``events`` (time, set of energised stages) from a de-energised start up to ``t_end``."""
    d = circuit.drawing
    temps, src = corner_sources(d)[corner]
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
        mode = _mode_at(circuit, temps, src, on, x)
        for _ in range(20):  # alternator state changes within this interval
            lin = build_linear(circuit, temps, src, on, mode)
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
        current = {sid: float(x[j]) for j, sid in enumerate(on)}
    return scn


def _decay(stage: Stage, r_stage: float, i0: float, sup, fraction: float):
    if sup.kind == "none" or i0 <= 0:
        from coilstage.physics.transient import Decay

        w = 0.5 * stage.inductance * i0 * i0
        dec = Decay(i0, stage.inductance / r_stage, 0.0, 0.0, fraction, w, 0.0, math.inf if i0 > 0 else 0.0)
        return dec, (lambda t: np.zeros_like(np.asarray(t, dtype=float)))
    return clamp_decay(i0, r_stage, stage.inductance, sup.u0, sup.r_series, fraction)


@dataclass(frozen=True)
class StageSwitching:
    id: str
    corner: str
    tau: float  # L/R of the stage alone [s]
    t95_alone: float  # switched on alone, in the network [s]
    t95_all: float  # switched on with all the others [s]
    i_break: float  # current when its contact opens, all stages on (steady) [A]
    stored_energy: float  # ½ L I² at the break [J]
    decay: object  # Decay
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


def analyse_switching(d: Drawing, circuit: Circuit | None = None, corners=("cold", "hot")) -> SwitchingResult:
    """Every scenario in the cold and hot corners, and the per-stage switching figures."""
    circuit = circuit or Circuit(d)
    scen: dict[str, Scenario] = {}
    dips: dict[str, float] = {}
    events = scenario_events(d)
    for corner in corners:
        for name, ev in events.items():
            t_end = ev[-1][0] + (d.switching.duration - d.switching.off_at)
            sc = run(circuit, corner, name, ev, t_end)
            scen[f"{corner}:{name}"] = sc
            grid = np.linspace(0.0, t_end, 3001)
            bus = sc.sample(grid, [])["bus_voltage"]
            dips[f"{corner}:{name}"] = float(bus[0] - np.nanmin(bus))
    stages: dict[str, dict[str, StageSwitching]] = {}
    limit_bus = d.corners.limit_bus
    for corner in corners:
        temps, src = corner_sources(d)[corner]
        ids = tuple(s.id for s in d.stages)
        # T0.95: the exact solution of the switch-on, continued until each current gets there
        t95_all = _t95(circuit, temps, src, ids)
        per: dict[str, StageSwitching] = {}
        full = build_linear(circuit, temps, src, ids, _steady_mode(circuit, temps, src, ids))
        i_ss = full.rl.steady_state()
        for j, st in enumerate(d.stages):
            r_stage = element_resistance(st, temps[st.id])
            t95_alone = _t95(circuit, temps, src, (st.id,))[st.id]
            i0 = float(i_ss[j])
            dec, _fn = _decay(st, r_stage, i0, st.suppression, d.switching.release_fraction)
            cv = math.inf if st.suppression.kind == "none" else limit_bus + dec.u_suppressor_peak
            per[st.id] = StageSwitching(
                st.id,
                corner,
                st.inductance / r_stage,
                t95_alone,
                t95_all[st.id],
                i0,
                0.5 * st.inductance * i0 * i0,
                dec,
                cv,
            )
        stages[corner] = per
    return SwitchingResult(scen, stages, dips, bool(d.switching.positions))


def _steady_mode(circuit, temps, src, ids) -> str:
    """The alternator state at the steady state with ``ids`` energised (iterate the modes)."""
    mode = _mode_at(circuit, temps, src, ids, np.zeros(len(ids)))
    for _ in range(4):
        lin = build_linear(circuit, temps, src, ids, mode)
        nxt = _mode_at(circuit, temps, src, ids, lin.rl.steady_state())
        if nxt == mode:
            return mode
        mode = nxt
    return mode


def _switch_on_segments(circuit, temps, src, ids: tuple[str, ...]):
    """The exact, piecewise solution of switching ``ids`` on together from rest, with no switch-off,
    continued until the last alternator state change: [(t0, t_end or None, solution)]."""
    x = np.zeros(len(ids))
    t = 0.0
    segs = []
    mode = _mode_at(circuit, temps, src, ids, x)
    for _ in range(20):
        lin = build_linear(circuit, temps, src, ids, mode)
        sol = lin.rl.solution(x)
        leave = _leaves_mode(lin, sol, src, 60 * sol.slowest)
        segs.append((t, None if leave is None else t + leave[0], sol))
        if leave is None:
            break
        x = sol.at(leave[0])[0]
        t += leave[0]
        mode = leave[1]
    return segs


def _t95(circuit, temps, src, ids: tuple[str, ...]) -> dict[str, float]:
    """Time for each stage of ``ids``, switched on together, to reach 95 % of its final current [s]."""

    segs = _switch_on_segments(circuit, temps, src, ids)
    final = segs[-1][2].i_inf
    out = {}
    for j, sid in enumerate(ids):
        target = 0.95 * final[j]
        found = math.inf
        for t0, t1, sol in segs:
            span = (t1 - t0) if t1 is not None else 60 * sol.slowest
            grid = np.linspace(0.0, span, 2001)
            hit = np.nonzero(sol.at(grid)[:, j] >= target)[0]
            if len(hit):
                k = hit[0]
                if k == 0:
                    found = t0
                else:
                    found = t0 + bracketed_root(
                        lambda tt, sol=sol, j=j, target=target: float(sol.at(tt)[0, j] - target),
                        grid[k - 1],
                        grid[k],
                        xtol=1e-13,
                    )
                break
        out[sid] = float(found)
    return out
