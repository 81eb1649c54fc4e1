"""The drawing's network for fast repeated DC solves at changing cable and coil temperatures (the
quasi-static electrical side of the heating: the network settles in about a second, the windings
heat over minutes), and a stage's thermal resistance to its surroundings."""

from __future__ import annotations

import math

import numpy as np

from coilstage.analysis.circuit import FIXED_RESISTANCE, Circuit
from coilstage.drawing.schema import Cable, Drawing, Stage
from coilstage.physics.conductor import resistance_at_temperature
from coilstage.physics.network import (
    SPARSE_THRESHOLD,
    Branches,
    Factorized,
    charging_source_state,
    conductance_pattern,
    mna_matrix,
)


class QuasiStatic:
    """The drawing's network for fast repeated DC solves at changing cable and coil temperatures.

    The fixed part of the network (fuses, relay contacts, joints, measured grounds, the battery's
    Norton equivalent, the base load) is stamped once by :func:`coilstage.physics.network.mna_matrix`,
    the one MNA assembly of the package; each solve adds the temperature-dependent conductances of the
    cables and energised stages and solves: below SPARSE_THRESHOLD unknowns onto the fixed part's dense
    matrix, summed once, at the places :func:`~coilstage.physics.network.conductance_pattern` gives
    (the same matrix :class:`~coilstage.physics.network.Factorized` would sum); above it through
    ``mna_matrix`` and a sparse LU.
    """

    def __init__(self, d: Drawing, battery_emf: float, alt_setpoint: float | None) -> None:
        self.d = d
        c = Circuit(d)
        self.nodes = nd = c.nodes
        self.n_nodes = len(nd)
        self.stages = d.stages
        self.cables = d.of_kind(Cable)
        self.stage_ix = {s.id: k for k, s in enumerate(self.stages)}
        fixed = [e for e in d.elements if isinstance(e, FIXED_RESISTANCE)]
        zero = [e for e in fixed if e.resistance == 0]
        s = d.supply
        self.bat = nd[s.battery.node]
        self.rb = s.battery.internal_resistance
        self.emf = battery_emf
        res = [(nd[e.a], nd[e.b], e.resistance) for e in fixed if e.resistance > 0]
        self.fixed_current = [(e.id, nd[e.a], nd[e.b], 1.0 / e.resistance) for e in fixed if e.resistance > 0]
        res.append((0, self.bat, self.rb))
        cur = [(0, self.bat, battery_emf / self.rb)]
        if s.base_load > 0:
            cur.append((nd[s.base_load_node], 0, s.base_load))
        self._vs = Branches.of([(nd[e.a], nd[e.b], 0.0) for e in zero])
        self.zero_ids = [e.id for e in zero]
        self.m = len(zero)
        self.r0, self.c0, self.v0, self.rhs0, n = mna_matrix(self.n_nodes, Branches.of(res), self._vs, Branches.of(cur))
        self.size = n + self.m
        self.alt = s.alternator
        self.alt_node = nd[s.alternator.node] if s.alternator else 0
        self.alt_set = alt_setpoint
        # variable elements: cables then stages
        self.var_a = np.array([nd[e.a] for e in [*self.cables, *self.stages]], dtype=np.int64)
        self.var_b = np.array([nd[e.b] for e in [*self.cables, *self.stages]], dtype=np.int64)
        self._none = Branches.of([])
        self.cable_r20 = np.array([e.r20_per_m * e.length for e in self.cables])
        self.cable_alpha = np.array([e.alpha20 for e in self.cables])
        # each stage's resistance at 20 degC (its coil's stated resistance referred by the one R(T) law)
        self.stage_r20 = np.array(
            [
                resistance_at_temperature(e.coil.r_ref, e.coil.t_ref, 20.0, e.coil.alpha20) * e.r_factor
                for e in self.stages
            ]
        )
        self.stage_alpha = np.array([e.coil.alpha20 for e in self.stages])
        self.mode = "regulating"
        #: further (rows, cols, values) triplets added to every matrix after the variable stamps, or None
        self.extra_rows: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None
        #: (the fixed part's dense matrix, flattened; where each variable stamp falls, its sign and its
        #: branch), made at the first dense solve
        self._dense_plan: tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray] | None = None

    def resistances(self, t_cables: np.ndarray, t_stages: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(cable resistances, stage resistances) [ohm] at these temperatures [degC]: the R(T) law of
        :func:`coilstage.physics.conductor.resistance_at_temperature` on arrays, from 20 degC."""
        rc = resistance_at_temperature(self.cable_r20, 20.0, t_cables, self.cable_alpha)
        rs = resistance_at_temperature(self.stage_r20, 20.0, t_stages, self.stage_alpha)
        return rc, rs

    def _solver(self, g: np.ndarray, extra: float):
        """A solve function for the matrix at variable conductances ``g`` [S] (cables then stages; 0 for
        an element that is off), plus ``extra`` [S] from the alternator node to the reference, plus
        the entries of ``extra_rows`` (a subclass's own stamps; none here).

        Below SPARSE_THRESHOLD unknowns the dense matrix is the fixed part's, summed once, with the
        variable stamps added entry by entry in the order :class:`Factorized` sums its triplets: the
        same matrix to the last bit, without assembling the fixed part again on every solve."""
        on = g > 0
        if self.size <= SPARSE_THRESHOLD:
            return self._dense_solver(g, on, extra)
        ga, gb, gv = self.var_a[on], self.var_b[on], 1.0 / g[on]
        if extra:
            ga, gb, gv = np.append(ga, self.alt_node), np.append(gb, 0), np.append(gv, 1.0 / extra)
        r, c, v, _rhs, _n = mna_matrix(self.n_nodes, Branches(ga, gb, gv), self._none, self._none)
        parts = [(self.r0, self.c0, self.v0), (r, c, v)]
        if self.extra_rows is not None:
            parts.append(self.extra_rows)
        return Factorized(*(np.concatenate(x) for x in zip(*parts, strict=True)), self.size).solve

    def _dense_solver(self, g: np.ndarray, on: np.ndarray, extra: float):
        size = self.size
        if self._dense_plan is None:
            fixed = np.bincount(self.r0 * size + self.c0, weights=self.v0, minlength=size * size)
            # every variable branch and the alternator's source conductance (the last branch), stamped
            # by the one statement of the stamps
            vr, vc, vs, ve = conductance_pattern(np.append(self.var_a, self.alt_node), np.append(self.var_b, 0))
            self._dense_plan = (fixed, vr * size + vc, vs, ve)
        fixed, flat, signs, branch = self._dense_plan
        # conductances as mna_matrix makes them from the resistances 1/g (so the values are its own)
        gfull = np.concatenate((1.0 / (1.0 / np.where(on, g, 1.0)), (1.0 / (1.0 / extra) if extra else 0.0,)))
        live = np.concatenate((on, (bool(extra),)))[branch]
        a = fixed.copy()
        np.add.at(a, flat[live], (signs * gfull[branch])[live])
        if self.extra_rows is not None:
            er, ec, ev = self.extra_rows
            np.add.at(a, er * size + ec, ev)
        dense = a.reshape(size, size)
        return lambda b: np.linalg.solve(dense, b)

    def solve(
        self, t_cables: np.ndarray, t_stages: np.ndarray, on: np.ndarray, alt_limit: float | None
    ) -> tuple[np.ndarray, np.ndarray, float, float, np.ndarray]:
        """(cable currents, stage currents, battery current, alternator current, node vector).

        The alternator's state is kept from the call before and changed where the solution leaves it
        (:func:`coilstage.physics.network.charging_source_state` of what its regulator would deliver)."""
        return self.solve_at(*self.resistances(t_cables, t_stages), on, alt_limit)

    def solve_at(
        self, rc: np.ndarray, rs: np.ndarray, on: np.ndarray, alt_limit: float | None
    ) -> tuple[np.ndarray, np.ndarray, float, float, np.ndarray]:
        """:meth:`solve` with the cables' and stages' resistances ``rc``, ``rs`` [ohm] given (as
        :meth:`resistances` makes them)."""
        g = np.concatenate([1.0 / rc, np.where(on, 1.0 / rs, 0.0)])
        rhs = self.rhs0
        i_alt = 0.0
        if self.alt is not None and alt_limit:
            node = self.alt_node - 1
            r_src = self.alt.source_resistance
            plain = None
            for _ in range(3):
                used = self.mode
                r2 = rhs.copy()
                if used == "regulating":
                    r2[node] += self.alt_set / r_src
                    x = self._solver(g, 1.0 / r_src)(r2)
                else:
                    if used == "current-limited":
                        r2[node] += alt_limit
                    plain = plain or self._solver(g, 0.0)
                    x = plain(r2)
                law = (self.alt_set - x[node]) / r_src  # what the regulator would deliver
                self.mode = charging_source_state(float(law), alt_limit)
                if self.mode == used:
                    break
            i_alt = law if used == "regulating" else alt_limit if used == "current-limited" else 0.0
        else:
            x = self._solver(g, 0.0)(rhs)
        v = np.concatenate(([0.0], x[: self.size - self.m]))
        dv = v[self.var_a] - v[self.var_b]
        i_var = dv * g
        n_c = len(self.cables)
        i_bat = (self.emf - v[self.bat]) / self.rb
        return i_var[:n_c], i_var[n_c:], i_bat, i_alt, x

    def device_currents(self, x: np.ndarray) -> dict[str, float]:
        v = np.concatenate(([0.0], x[: self.size - self.m]))
        out = {eid: (v[a] - v[b]) * g for eid, a, b, g in self.fixed_current}
        for k, eid in enumerate(self.zero_ids):
            out[eid] = float(x[self.size - self.m + k])
        return out


def stage_thermal_resistance(s: Stage, moving: bool) -> float:
    """A stage's thermal resistance to its surroundings [K/W]: its coils' in parallel."""
    co = s.coil
    if co.thermal_resistance is None:
        return math.nan
    r = co.thermal_resistance_moving if (moving and co.thermal_resistance_moving is not None) else co.thermal_resistance
    return r / s.count
