"""The energised network of one operating case as an RL system with affine read-outs.

With the stages taken out, the rest of the harness (feed, branches, returns, sources) is a linear
resistive network. Each stage is a current source into it; the network gives every node voltage as an
affine map of the stage currents, so the stages obey ``L di/dt = c − K i``
(:class:`coilstage.physics.transient.LinearRL`) and every figure the report needs (bus voltage, source
currents, element currents) is a read-out ``g·i + h``.

The stage-free network does not depend on which stages are energised: it is assembled and factorised
once per alternator state (regulating, current-limited, off, or fixed where the case fixes it), solved
once for all stages together, and any set of energised stages is a selection of rows and columns.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from coilstage.analysis.circuit import Circuit, SourceState, element_resistance
from coilstage.analysis.conditions import Conditions
from coilstage.physics.network import Branches, Factorized, charging_source_state, mna_matrix
from coilstage.physics.transient import LinearRL


@dataclass(frozen=True)
class Linear:
    """The network with a given set of energised stages and alternator state, as an RL system, and
    the affine read-outs ``value = g·i + h`` of the figures the report needs."""

    stages: tuple[str, ...]
    mode: str
    rl: LinearRL
    readout: dict[str, tuple[np.ndarray, float]]  # name -> (g, h)


@dataclass(frozen=True)
class _Basis:
    """The factorised stage-free network in one alternator state, solved for every stage at once."""

    mode: str
    k: np.ndarray  # (n_stages, n_stages) [Ω]
    c: np.ndarray  # (n_stages,) [V]
    inductance: np.ndarray  # (n_stages,) [H]
    readout: dict[str, tuple[np.ndarray, float]]  # g over all stages


def stage_injection(nodes: dict[str, int], stages: list, size: int) -> np.ndarray:
    """The (size, stages) right-hand sides of a unit current through each stage: delivered into its
    node b, taken from its node a (node 0, the reference, has no row)."""
    b = np.zeros((size, len(stages)))
    for j, e in enumerate(stages):
        ia, ib = nodes[e.a], nodes[e.b]
        if ib > 0:
            b[ib - 1, j] += 1.0  # the stage delivers its current into node b ...
        if ia > 0:
            b[ia - 1, j] -= 1.0  # ... taking it from node a
    return b


def stage_system(
    nodes: dict[str, int], stages: list, temps: dict[str, float], x0: np.ndarray, zx: np.ndarray, nn: int
) -> tuple[np.ndarray, np.ndarray]:
    """(K [Ω], c [V]) of the stages' system ``c − K·i`` from the stage-free network's solution ``x0``
    and its responses ``zx`` to :func:`stage_injection` (``nn`` node unknowns first): c is the open
    voltage across each stage, K its own resistance less the network's transfer resistances."""
    ns = len(stages)
    ia_ = np.array([nodes[e.a] for e in stages], dtype=int)
    ib_ = np.array([nodes[e.b] for e in stages], dtype=int)
    zpad = np.vstack([np.zeros((1, ns)), zx[:nn, :]])  # node 0 is the reference
    xpad = np.concatenate(([0.0], x0[:nn]))
    dmat = zpad[ia_, :] - zpad[ib_, :]
    c = xpad[ia_] - xpad[ib_]
    r_own = np.array([element_resistance(e, temps[e.id]) for e in stages])
    return np.diag(r_own) - dmat, c


class CaseNetwork:
    """The network of a drawing in one operating case (element temperatures and source states), with
    one factorisation per alternator state reused for every set of energised stages."""

    def __init__(self, circuit: Circuit, temperatures: dict[str, float], sources: SourceState) -> None:
        self.circuit = circuit
        self.temperatures = temperatures
        self.sources = sources
        d = circuit.drawing
        self.stage_ids = tuple(s.id for s in d.stages)
        self._col = {sid: j for j, sid in enumerate(self.stage_ids)}
        alt = d.supply.alternator
        self.alt_on = alt is not None and sources.alt_limit is not None and sources.alt_limit > 0
        self.fixed = self.alt_on and (sources.hold_bus is not None or sources.alt_fixed)
        self._bases: dict[str, _Basis] = {}

    @property
    def piecewise(self) -> bool:
        """True where the alternator regulates and may change state (the hot corner)."""
        return self.alt_on and not self.fixed

    def _basis(self, mode: str) -> _Basis:
        key = mode if self.piecewise else "fixed"
        hit = self._bases.get(key)
        if hit is None:
            hit = self._bases[key] = self._build(key)
        return hit

    def _build(self, mode: str) -> _Basis:
        circuit, temps, src = self.circuit, self.temperatures, self.sources
        d = circuit.drawing
        s = d.supply
        nd = circuit.nodes
        all_stages = set(self.stage_ids)
        res_rows, vs_rows, vs_owner, is_rows, _r, alt_on, fixed = circuit.network_rows(
            temps, src, None, exclude=all_stages
        )
        if self.piecewise:
            a = s.alternator
            node = nd[a.node]
            if mode == "regulating":
                res_rows.append((0, node, a.source_resistance))
                is_rows.append((0, node, src.alt_setpoint / a.source_resistance))
            elif mode == "current-limited":
                is_rows.append((0, node, src.alt_limit))
        rr, cc, xx, rhs, nn = mna_matrix(len(nd), Branches.of(res_rows), Branches.of(vs_rows), Branches.of(is_rows))
        f = Factorized(rr, cc, xx, len(rhs))
        x0 = f.solve(rhs)
        elems = d.stages
        ns = len(elems)
        b = stage_injection(nd, elems, len(rhs))
        zx = f.solve(b).reshape(len(rhs), ns) if ns else np.zeros((len(rhs), 0))

        def node_row(name: str) -> tuple[np.ndarray, float]:
            i = nd[name]
            if i == 0:
                return np.zeros(ns), 0.0
            return zx[i - 1, :].copy(), float(x0[i - 1])

        k, c = stage_system(nd, elems, temps, x0, zx, nn)
        ind = np.array([e.inductance for e in elems])
        readout: dict[str, tuple[np.ndarray, float]] = {}
        gbus, hbus = node_row(s.battery.node)
        readout["bus_voltage"] = (gbus, hbus)
        zero = np.zeros(ns)
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
        for e in d.elements:  # the current of every element that is not a stage
            if e.id in all_stages:
                continue
            if e.id in vs_owner:
                kb = nn + vs_owner.index(e.id)
                readout[f"element:{e.id}"] = (zx[kb, :].copy(), float(x0[kb]))
            else:
                r = element_resistance(e, temps.get(e.id, 20.0))
                ga_, ha_ = node_row(e.a)
                gb_, hb_ = node_row(e.b)
                readout[f"element:{e.id}"] = ((ga_ - gb_) / r, (ha_ - hb_) / r)
        if self.piecewise:
            ga, ha = node_row(s.alternator.node)
            rs = s.alternator.source_resistance
            law = (-ga / rs, (src.alt_setpoint - ha) / rs)  # what the regulator would deliver
            readout["alternator_law"] = law
            if mode == "regulating":
                readout["alternator_current"] = law
        return _Basis("fixed" if fixed else mode, k, c, ind, readout)

    def linear(self, stages: tuple[str, ...], mode: str = "fixed") -> Linear:
        """The RL system with ``stages`` energised and the alternator in ``mode`` ("regulating",
        "current-limited", "off", or "fixed" where the case fixes it). Read-outs ``element:<id>`` give
        the current of every element that is not a stage."""
        base = self._basis(mode)
        ix = np.array([self._col[sid] for sid in stages], dtype=int)
        rl = LinearRL(base.inductance[ix], base.k[np.ix_(ix, ix)], base.c[ix])
        readout = {name: (g[ix], h) for name, (g, h) in base.readout.items()}
        return Linear(tuple(stages), "fixed" if self.fixed else mode, rl, readout)

    def mode_at(self, stages: tuple[str, ...], x: np.ndarray) -> str:
        """The alternator state consistent with the stage currents ``x`` [A] (the network is algebraic):
        :func:`coilstage.physics.network.charging_source_state` of what the regulator would deliver."""
        if not self.piecewise:
            return "fixed"
        g, h = self.linear(stages, "regulating").readout["alternator_law"]
        return charging_source_state(float(g @ x + h), float(self.sources.alt_limit))

    def steady_mode(self, stages: tuple[str, ...]) -> str:
        """The alternator state at the steady state with ``stages`` energised (iterate the states)."""
        mode = self.mode_at(stages, np.zeros(len(stages)))
        for _ in range(4):
            nxt = self.mode_at(stages, self.linear(stages, mode).rl.steady_state())
            if nxt == mode:
                return mode
            mode = nxt
        return mode


def case_networks(circuit: Circuit, cases: dict[str, Conditions]) -> dict[str, CaseNetwork]:
    """The network of each corner (every case but the fault, which is solved by
    :meth:`coilstage.analysis.circuit.Circuit.fault_currents`)."""
    return {name: CaseNetwork(circuit, c.temperatures, c.sources) for name, c in cases.items() if name != "fault"}
