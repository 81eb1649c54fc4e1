"""The operating corners of a drawing as DC solutions: cold (duty), hot (what braking remains) and limit
(voltage ratings); and the largest current each element carries in the cold corner."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from coilstage.analysis.circuit import Circuit, Solution, SourceState
from coilstage.analysis.conditions import Conditions
from coilstage.analysis.linear import CaseNetwork, stage_injection, stage_system
from coilstage.drawing.schema import Drawing, Fuse
from coilstage.physics.network import SPARSE_THRESHOLD, Branches, mna_matrix


@dataclass(frozen=True)
class StageResult:
    id: str
    temperature: float  # winding [°C]
    resistance: float  # stage [Ω]
    current: float  # stage [A]
    coil_current: float  # one coil [A]
    terminal_voltage: float  # [V]
    power: float  # [W]
    ampere_turns: float  # one coil, N·I [A]
    drop: float  # battery terminals to stage terminals [V]
    drop_fraction: float  # of the nominal system voltage
    stored_energy: float  # ½ L I² of the stage [J]


@dataclass(frozen=True)
class CornerResult:
    name: str
    purpose: str
    conditions: dict[str, str]
    solution: Solution
    stages: list[StageResult]
    temperatures: dict[str, float]
    total_stage_current: float
    bus_voltage: float  # battery terminal voltage [V]
    battery_current: float
    alternator_current: float
    alternator_mode: str
    base_load: float


def stage_results(d: Drawing, sol: Solution, temps: dict[str, float]) -> list[StageResult]:
    """Each stage's figures in the solution ``sol`` with winding temperatures ``temps`` [°C]."""
    return _stage_results(d, sol, temps)


def _stage_results(d: Drawing, sol: Solution, temps: dict[str, float]) -> list[StageResult]:
    out = []
    v_bus = sol.v[d.supply.battery.node] - sol.v[d.supply.negative_node]
    for s in d.stages:
        i = sol.current[s.id]
        vt = sol.v[s.a] - sol.v[s.b]
        drop = v_bus - vt
        ic = i * s.coil_current_factor
        out.append(
            StageResult(
                s.id,
                temps[s.id],
                sol.resistance[s.id],
                i,
                ic,
                vt,
                vt * i,
                s.coil.turns * ic,
                drop,
                drop / d.supply.system_voltage,
                0.5 * s.inductance * i * i,
            )
        )
    return out


def solve_corner(circuit: Circuit, cond: Conditions) -> CornerResult:
    """The DC solution of one corner, with every stage's figures."""
    d = circuit.drawing
    temps = cond.temperatures
    sol = circuit.solve(temps, cond.sources)
    stages = _stage_results(d, sol, temps)
    return CornerResult(
        cond.name,
        cond.purpose,
        dict(cond.description),
        sol,
        stages,
        temps,
        sum(s.current for s in stages),
        sol.v[d.supply.battery.node] - sol.v[d.supply.negative_node],
        sol.battery_current,
        sol.alternator_current,
        sol.alternator_mode,
        d.supply.base_load,
    )


def cold_duty(net: CaseNetwork) -> tuple[dict[str, float], dict[str, str]]:
    """The largest current each element carries in the cold corner (``net``), with all stages on or
    with any one stage on alone, and which state gives it.

    A branch carries most when its stage is the only one on (no other stage's current drops the
    shared feed); a shared feed carries most with all on. The cold corner is linear (bus held,
    alternator at a fixed output), so one factorisation serves every state: with the stages as the
    RL system ``c − K·i`` of :class:`coilstage.analysis.linear.CaseNetwork`, stage k alone draws
    c_k/K_kk, all together K⁻¹c, and every element current is an affine read-out ``g·i + h``.
    """
    d = net.circuit.drawing
    ids = net.stage_ids
    lin = net.linear(ids, "fixed")
    elems = d.elements
    n = len(ids)
    g = np.zeros((len(elems), n))
    h = np.zeros(len(elems))
    for r, e in enumerate(elems):
        if e.id in lin.stages:
            g[r, lin.stages.index(e.id)] = 1.0
        else:
            g[r], h[r] = lin.readout[f"element:{e.id}"]
    return _duty_table(elems, ids, lin.rl.k, lin.rl.c, g, h)


def _duty_table(elems, ids, k: np.ndarray, c: np.ndarray, g: np.ndarray, h: np.ndarray):
    """:func:`cold_duty` from the stages' ``K``, ``c`` and every element's read-out ``(g, h)``."""
    n = len(ids)
    i_all = np.linalg.solve(k, c)
    i_alone = c / np.diag(k)  # stage j alone: c_j / K_jj
    all_on = np.abs(g @ i_all + h)  # (elements,)
    names = ["all stages"]
    if n > 1:
        alone = np.abs(g * i_alone[None, :] + h[:, None])  # (elements, stages): column j = stage j alone
        table = np.column_stack([all_on, alone])
        names += [f"{sid} alone" for sid in ids]
    else:
        table = all_on[:, None]
    top = table.max(axis=1)
    best = np.where(table[:, 0] >= top * (1 - 1e-12), 0, np.argmax(table, axis=1))  # a tie goes to all stages
    duty = {e.id: float(table[r, best[r]]) for r, e in enumerate(elems)}
    where = {e.id: names[best[r]] for r, e in enumerate(elems)}
    return duty, where


def cold_duties(
    circuit: Circuit, cases: list[tuple[dict[str, float], SourceState]]
) -> list[tuple[dict[str, float], dict[str, str]]]:
    """:func:`cold_duty` of ``CaseNetwork(circuit, temperatures, sources)`` for each case of ``cases``
    (the ambient sweep: one network, its resistances and bus changed), the same figures to the last
    bit: each stage-free network assembled as :class:`coilstage.analysis.linear.CaseNetwork` assembles
    it, the dense systems of all cases solved in one stacked call (the same LAPACK solve per case),
    the read-outs of all elements at once instead of one by one. Falls back to a network per case
    where a case is not a fixed-alternator one, a network is above the dense size, or the cases
    differ in their zero-ohm parts."""
    d = circuit.drawing
    stages = d.stages
    ids = tuple(s.id for s in stages)
    nd = circuit.nodes
    ns = len(ids)

    def one_by_one():
        return [cold_duty(CaseNetwork(circuit, t, src)) for t, src in cases]

    if not cases or ns == 0:
        return one_by_one()
    built = []
    for temps, src in cases:
        res_rows, vs_rows, vs_owner, is_rows, res, alt_on, fixed = circuit.network_rows(
            temps, src, None, exclude=set(ids)
        )
        if alt_on and not fixed:  # the alternator may change state: the piecewise network
            return one_by_one()
        rr, cc, xx, rhs, nn = mna_matrix(len(nd), Branches.of(res_rows), Branches.of(vs_rows), Branches.of(is_rows))
        built.append((rr, cc, xx, rhs, nn, vs_owner, res))
    size = len(built[0][3])
    if size > SPARSE_THRESHOLD or any(len(b[3]) != size or b[5] != built[0][5] for b in built):
        return one_by_one()
    dense = np.stack(
        [
            np.bincount(
                np.asarray(rr, dtype=np.int64) * size + np.asarray(cc, dtype=np.int64),
                weights=xx,
                minlength=size * size,
            ).reshape(size, size)
            for rr, cc, xx, _, _, _, _ in built
        ]
    )
    rhs = np.stack([b[3] for b in built])
    inject = stage_injection(nd, stages, size)
    x0s = np.linalg.solve(dense, rhs[:, :, None])[:, :, 0]
    zxs = np.linalg.solve(dense, np.broadcast_to(inject, (len(built), size, ns)))
    nn = built[0][4]
    vs_owner = built[0][5]
    elems = d.elements
    col = {sid: j for j, sid in enumerate(ids)}
    through_vs = [(r, nn + vs_owner.index(e.id)) for r, e in enumerate(elems) if e.id not in col and e.id in vs_owner]
    resistive = [r for r, e in enumerate(elems) if e.id not in col and e.id not in vs_owner]
    ea = np.array([nd[elems[r].a] for r in resistive], dtype=int)
    eb = np.array([nd[elems[r].b] for r in resistive], dtype=int)
    out = []
    for (temps, _src), x0, zx, b in zip(cases, x0s, zxs, built, strict=True):
        k, c = stage_system(nd, stages, temps, x0, zx, nn)
        zpad = np.vstack([np.zeros((1, ns)), zx[:nn, :]])  # node 0 is the reference
        xpad = np.concatenate(([0.0], x0[:nn]))
        g = np.zeros((len(elems), ns))
        h = np.zeros(len(elems))
        for r, e in enumerate(elems):
            if e.id in col:
                g[r, col[e.id]] = 1.0
        for r, kb in through_vs:
            g[r], h[r] = zx[kb, :], x0[kb]
        if resistive:
            res = np.array([b[6][elems[r].id] for r in resistive])
            g[resistive] = (zpad[ea, :] - zpad[eb, :]) / res[:, None]
            h[resistive] = (xpad[ea] - xpad[eb]) / res
        out.append(_duty_table(elems, ids, k, c, g, h))
    return out


def fault_currents(
    circuit: Circuit, fault: Conditions, protected: dict[str, list[str]]
) -> tuple[dict[str, float], dict[str, float], float]:
    """Prospective bolted-short currents [A] from one factorisation of the fault case: at each fuse's
    load terminal (fuse id -> A), at the far end of each protected cable (cable id -> A), and at the
    battery terminals."""
    d = circuit.drawing
    fuses = d.of_kind(Fuse)
    by_id = circuit.index
    far = {cid: by_id[cid].b for ids in protected.values() for cid in ids if cid in by_id}
    places = [d.supply.battery.node, *(f.b for f in fuses), *far.values()]
    at = circuit.fault_currents(fault.temperatures, fault.sources, places)
    return {f.id: at[f.b] for f in fuses}, {cid: at[node] for cid, node in far.items()}, at[d.supply.battery.node]
