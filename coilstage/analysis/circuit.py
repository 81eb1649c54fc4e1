"""The harness of a drawing as a DC network, solved at given element temperatures and source states."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from coilstage.drawing.schema import Cable, Drawing, Element, Fuse, Joint, Relay, Resistor, Stage
from coilstage.physics.conductor import resistance_at_temperature
from coilstage.physics.network import (
    Branches,
    LimitedSource,
    short_circuit_currents,
    solve_mna,
    solve_with_limited_source,
)

if TYPE_CHECKING:
    import numpy as np


@dataclass(frozen=True)
class SourceState:
    """What the sources do in one solve: battery EMF [V]; alternator set-point [V] and current limit
    [A], or ``alt_limit = None`` for an alternator that is not charging. ``hold_bus`` [V], where given,
    replaces both by an ideal source holding the battery terminals at that voltage (an envelope).
    ``alt_fixed`` makes the alternator a fixed current source of ``alt_limit`` (its full output), as it
    is with a held bus and, conservatively, in a fault."""

    battery_emf: float
    alt_setpoint: float | None
    alt_limit: float | None
    hold_bus: float | None = None
    alt_fixed: bool = False


@dataclass(frozen=True)
class Solution:
    """Node voltages [V], element currents [A] (from ``a`` to ``b``), element resistances [Ω] and
    the sources' shares."""

    v: dict[str, float]
    current: dict[str, float]
    resistance: dict[str, float]
    battery_current: float  # discharge positive [A]
    alternator_current: float  # [A]
    alternator_mode: str  # regulating | current-limited | off | absent
    fault_current: float | None = None  # current in an added short, where one was asked for [A]


#: Rows of a network: (node a, node b, value) per resistor [Ω], voltage source [V] or current source [A].
Rows = list[tuple[int, int, float]]

#: Elements whose resistance does not depend on temperature in the model: fuses, relay contacts, joints
#: and lugs, measured grounds and busbars.
FIXED_RESISTANCE = (Fuse, Relay, Resistor, Joint)


def element_resistance(e: Element, temperature: float) -> float:
    """Resistance of one harness element at its temperature [Ω] (cables and coils follow R(T);
    fuses, relay contacts, joints and measured grounds are fixed)."""
    if isinstance(e, Cable):
        return resistance_at_temperature(e.r20_per_m * e.length, 20.0, temperature, e.alpha20)
    if isinstance(e, Stage):
        c = e.coil
        return resistance_at_temperature(c.r_ref, c.t_ref, temperature, c.alpha20) * e.r_factor
    if isinstance(e, FIXED_RESISTANCE):
        return e.resistance
    raise TypeError(f"no resistance model for {type(e).__name__}")


class Circuit:
    """Node numbering and element list of one drawing, reused for every solve."""

    def __init__(self, drawing: Drawing) -> None:
        self.drawing = drawing
        s = drawing.supply
        names = [s.negative_node, s.battery.node]
        for e in drawing.elements:
            names += [e.a, e.b]
        if s.alternator is not None:
            names.append(s.alternator.node)
        names += [s.base_load_node, s.chassis_node]
        self.nodes: dict[str, int] = {}
        for n in names:
            self.nodes.setdefault(n, len(self.nodes))
        self.index = {e.id: e for e in drawing.elements}

    def network_rows(
        self,
        temperatures: dict[str, float],
        sources: SourceState,
        overrides: dict[str, float] | None,
        exclude: set[str] | frozenset[str] = frozenset(),
    ) -> tuple[Rows, Rows, list[str], Rows, dict[str, float], bool, bool]:
        """Rows of the network for one solve, and which voltage source belongs to which element
        (elements in ``exclude`` are left out: the switching analysis puts its stages in itself)."""
        d = self.drawing
        s = d.supply
        nd = self.nodes
        res_rows: list[tuple[int, int, float]] = []
        vs_rows: list[tuple[int, int, float]] = []
        vs_owner: list[str] = []
        resistance: dict[str, float] = {}
        for e in d.elements:
            if e.id in exclude:
                continue
            r = element_resistance(e, temperatures.get(e.id, 20.0))
            if overrides and e.id in overrides:
                r = overrides[e.id]
            resistance[e.id] = r
            if r > 0:
                res_rows.append((nd[e.a], nd[e.b], r))
            else:  # a zero-ohm part: a 0 V source, whose current comes out of the solution
                vs_rows.append((nd[e.a], nd[e.b], 0.0))
                vs_owner.append(e.id)
        bat = nd[s.battery.node]
        rb = s.battery.internal_resistance
        is_rows: list[tuple[int, int, float]] = []
        if sources.hold_bus is None:  # battery as its Norton equivalent
            res_rows.append((0, bat, rb))
            is_rows.append((0, bat, sources.battery_emf / rb))
        else:
            vs_rows.append((0, bat, sources.hold_bus))
            vs_owner.append("__bus__")
        if s.base_load > 0:
            is_rows.append((nd[s.base_load_node], 0, s.base_load))
        alt_on = s.alternator is not None and sources.alt_limit is not None and sources.alt_limit > 0
        fixed = alt_on and (sources.hold_bus is not None or sources.alt_fixed)
        if fixed:
            is_rows.append((0, nd[s.alternator.node], sources.alt_limit))
        return res_rows, vs_rows, vs_owner, is_rows, resistance, alt_on, fixed

    def solve(
        self,
        temperatures: dict[str, float],
        sources: SourceState,
        short_at: str | None = None,
        overrides: dict[str, float] | None = None,
    ) -> Solution:
        """Solve the network.

        Parameters
        ----------
        temperatures : dict
            Element id -> temperature [°C] (cables and stages; others are ignored).
        sources : SourceState
        short_at : str, optional
            A node to short to the chassis node with a 0 Ω link (for prospective fault current).
        overrides : dict, optional
            Element id -> resistance [Ω] replacing the computed one.
        """
        d = self.drawing
        s = d.supply
        nd = self.nodes
        res_rows, vs_rows, vs_owner, is_rows, resistance, alt_on, fixed = self.network_rows(
            temperatures, sources, overrides
        )
        if short_at is not None:
            vs_rows.append((nd[short_at], nd[s.chassis_node], 0.0))
            vs_owner.append("__short__")
        n = len(nd)
        R, V, cur = Branches.of(res_rows), Branches.of(vs_rows), Branches.of(is_rows)
        if alt_on and not fixed:
            src = LimitedSource(
                nd[s.alternator.node], sources.alt_setpoint, s.alternator.source_resistance, sources.alt_limit
            )
            ls = solve_with_limited_source(n, R, V, cur, src)
            dc, mode, i_alt = ls.dc, ls.mode, ls.i_source
        else:
            dc = solve_mna(n, R, V, cur)
            if alt_on:
                mode, i_alt = "full output", float(sources.alt_limit)
            else:
                mode, i_alt = ("off" if s.alternator is not None else "absent"), 0.0
        return self.read_solution(sources, dc.v, dc.i_vsource, vs_owner, resistance, mode, i_alt)

    def read_solution(
        self,
        sources: SourceState,
        node_v: np.ndarray,
        i_vsource: np.ndarray,
        vs_owner: list[str],
        resistance: dict[str, float],
        mode: str,
        i_alt: float,
    ) -> Solution:
        """The :class:`Solution` of a solved MNA system: ``node_v`` by node number (0 the reference),
        the voltage sources' currents ``i_vsource`` in the order of ``vs_owner`` (element ids, or
        ``__short__`` / ``__bus__``), the element resistances the system was built with, and the
        alternator's state."""
        d = self.drawing
        s = d.supply
        v = {name: float(node_v[i]) for name, i in self.nodes.items()}
        current: dict[str, float] = {}
        fault = None
        i_held = 0.0
        for owner, i_vs in zip(vs_owner, i_vsource, strict=True):
            if owner == "__short__":
                fault = float(i_vs)
            elif owner == "__bus__":
                i_held = float(i_vs)
            else:
                current[owner] = float(i_vs)
        for e in d.elements:
            if e.id not in current:
                current[e.id] = (v[e.a] - v[e.b]) / resistance[e.id]
        if sources.hold_bus is not None:
            i_bat = i_held  # the held source stands for the battery (and the regulation holding it)
        else:
            i_bat = (sources.battery_emf - v[s.battery.node]) / s.battery.internal_resistance
        return Solution(v, current, resistance, float(i_bat), float(i_alt), mode, fault)

    def fault_currents(
        self, temperatures: dict[str, float], sources: SourceState, nodes: list[str]
    ) -> dict[str, float]:
        """Prospective current of a bolted short from each of ``nodes`` to the chassis node [A], from one
        factorisation of the network (see :func:`coilstage.physics.network.short_circuit_currents`).

        The network must be linear: ``sources.alt_fixed`` (or no alternator) and no held bus."""
        if sources.hold_bus is not None:
            raise ValueError("a fault cannot be solved with the bus held")
        res_rows, vs_rows, _owner, is_rows, _r, alt_on, fixed = self.network_rows(temperatures, sources, None)
        if alt_on and not fixed:
            raise ValueError("fault currents need the alternator as a fixed current source (alt_fixed=True)")
        nd = self.nodes
        out = short_circuit_currents(
            len(nd),
            Branches.of(res_rows),
            Branches.of(vs_rows),
            Branches.of(is_rows),
            [nd[x] for x in nodes],
            nd[self.drawing.supply.chassis_node],
        )
        return {x: abs(float(i)) for x, i in zip(nodes, out, strict=True)}
