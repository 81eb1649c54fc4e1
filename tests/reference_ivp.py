"""An independent reference for the switching analysis: scipy.integrate.solve_ivp on the same
network, with the algebraic part solved at every step by the plain DC solver (current-limited
alternator included) and no eigen-decomposition or event logic of coilstage's own.

Used by tests/test_switching.py and benchmarks/bench_switching.py.
"""

from __future__ import annotations

import numpy as np
from scipy.integrate import solve_ivp

from coilstage.analysis.circuit import element_resistance
from coilstage.analysis.conditions import corner_sources
from coilstage.physics.network import Branches, LimitedSource, solve_mna, solve_with_limited_source


def stage_voltages(circuit, temps, src, on: tuple[str, ...], i: np.ndarray) -> tuple[np.ndarray, float]:
    """Stage terminal voltages and the bus voltage with the stage currents ``i`` injected."""
    d = circuit.drawing
    s = d.supply
    nd = circuit.nodes
    rows, vs, _own, cur, _r, alt_on, fixed = circuit.network_rows(temps, src, None, exclude={x.id for x in d.stages})
    cur = list(cur)
    for sid, ik in zip(on, i, strict=True):
        e = circuit.index[sid]
        cur.append((nd[e.a], nd[e.b], float(ik)))  # the stage carries ik from a to b
    n = len(nd)
    res, vsrc, isrc = Branches.of(rows), Branches.of(vs), Branches.of(cur)
    if alt_on and not fixed:
        ls = solve_with_limited_source(
            n,
            res,
            vsrc,
            isrc,
            LimitedSource(nd[s.alternator.node], src.alt_setpoint, s.alternator.source_resistance, src.alt_limit),
        )
        v = ls.dc.v
    else:
        v = solve_mna(n, res, vsrc, isrc).v
    out = np.array([v[nd[circuit.index[sid].a]] - v[nd[circuit.index[sid].b]] for sid in on])
    return out, float(v[nd[s.battery.node]])


def integrate(circuit, corner: str, events, t_end: float, times: np.ndarray, rtol=1e-10, atol=1e-10):
    """Stage currents at ``times`` for the switching ``events`` (switch-off through each stage's
    suppressor, integrated as L di/dt = -(R + Rs) i - U0 until the current reaches zero)."""
    d = circuit.drawing
    temps, src = corner_sources(d)[corner]
    ids = [x.id for x in d.stages]
    st = {x.id: x for x in d.stages}
    r = {sid: element_resistance(st[sid], temps[sid]) for sid in ids}
    L = {sid: st[sid].inductance for sid in ids}
    out = {sid: np.zeros_like(times) for sid in ids}
    state = dict.fromkeys(ids, 0.0)
    bounds = [e[0] for e in events] + [t_end]
    on: tuple[str, ...] = ()
    for (t0, new_on), t1 in zip(events, bounds[1:], strict=True):
        on = tuple(new_on)
        off = tuple(x for x in ids if x not in on)

        def rhs(t, y, on=on, off=off):
            i_on = y[: len(on)]
            v, _bus = stage_voltages(circuit, temps, src, on, i_on) if on else (np.zeros(0), 0.0)
            d_on = (v - np.array([r[x] for x in on]) * i_on) / np.array([L[x] for x in on]) if on else np.zeros(0)
            d_off = []
            for k, x in enumerate(off):
                ik = y[len(on) + k]
                sup = st[x].suppression
                if ik <= 0 or sup.kind == "none":
                    d_off.append(0.0)
                else:
                    d_off.append(-((r[x] + sup.r_series) * ik + sup.u0) / L[x])
            return np.concatenate([d_on, d_off])

        y0 = [state[x] for x in on] + [state[x] if st[x].suppression.kind != "none" else 0.0 for x in off]
        m = (times >= t0) & (times <= t1)

        def zero(t, y, k, on=on):
            return y[len(on) + k]

        evs = []
        for k in range(len(off)):
            f = lambda t, y, k=k: zero(t, y, k)  # noqa: E731
            f.terminal = False
            f.direction = -1
            evs.append(f)
        sol = solve_ivp(rhs, (t0, t1), y0, method="DOP853", rtol=rtol, atol=atol, dense_output=True, events=evs or None)
        if m.any():
            y = sol.sol(times[m])
            for k, x in enumerate(on):
                out[x][m] = y[k]
            for k, x in enumerate(off):
                out[x][m] = np.maximum(y[len(on) + k], 0.0)
        yend = sol.y[:, -1]
        for k, x in enumerate(on):
            state[x] = float(yend[k])
        for k, x in enumerate(off):
            state[x] = max(float(yend[len(on) + k]), 0.0)
    return out
