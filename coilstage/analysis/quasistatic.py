"""The drawing's network for fast repeated DC solves at changing cable and coil temperatures (the
quasi-static electrical side of the heating: the network settles in about a second, the windings
heat over minutes), and a stage's thermal resistance to its surroundings."""

from __future__ import annotations

import math

import numpy as np

from coilstage.analysis.circuit import Circuit
from coilstage.drawing.schema import Cable, Drawing, Fuse, Relay, Resistor, Stage
from coilstage.physics.network import SPARSE_THRESHOLD, Factorized, charging_source_state


class QuasiStatic:
    """The drawing's network for fast repeated DC solves at changing cable and coil temperatures.

    The fixed part of the MNA matrix is assembled once; each solve adds the temperature-dependent
    conductances of cables and energised stages, and solves a dense system.
    """

    def __init__(self, d: Drawing, battery_emf: float, alt_setpoint: float | None):
        self.d = d
        c = Circuit(d)
        self.nodes = c.nodes
        n = len(c.nodes) - 1
        self.stages = d.stages
        self.cables = d.of_kind(Cable)
        self.stage_ix = {s.id: k for k, s in enumerate(self.stages)}
        zero = [e for e in d.elements if isinstance(e, (Fuse, Relay, Resistor)) and e.resistance == 0]
        self.m = len(zero)
        self.size = n + self.m
        a0 = np.zeros((self.size, self.size))
        rhs0 = np.zeros(self.size)

        def stamp(mat, i, j, g):
            for (p, q), s in (((i, i), g), ((j, j), g), ((i, j), -g), ((j, i), -g)):
                if p > 0 and q > 0:
                    mat[p - 1, q - 1] += s

        nd = c.nodes
        self.fixed_current: list[tuple[str, int, int, float]] = []
        for e in d.elements:
            if isinstance(e, (Fuse, Relay, Resistor)) and e.resistance > 0:
                stamp(a0, nd[e.a], nd[e.b], 1.0 / e.resistance)
                self.fixed_current.append((e.id, nd[e.a], nd[e.b], 1.0 / e.resistance))
        self.zero_ids = [e.id for e in zero]
        for k, e in enumerate(zero):
            row = n + k
            for node, sgn in ((nd[e.a], 1.0), (nd[e.b], -1.0)):
                if node > 0:
                    a0[node - 1, row] += sgn
                    a0[row, node - 1] -= sgn
        s = d.supply
        self.bat = nd[s.battery.node]
        self.rb = s.battery.internal_resistance
        self.emf = battery_emf
        stamp(a0, 0, self.bat, 1.0 / self.rb)
        rhs0[self.bat - 1] += battery_emf / self.rb
        if s.base_load > 0 and nd[s.base_load_node] > 0:
            rhs0[nd[s.base_load_node] - 1] -= s.base_load
        self.a0, self.rhs0 = a0, rhs0
        self.r0, self.c0 = np.nonzero(a0)  # the fixed part as triplets, for the sparse path
        self.v0 = a0[self.r0, self.c0]
        self.alt = s.alternator
        self.alt_node = nd[s.alternator.node] if s.alternator else 0
        self.alt_set = alt_setpoint
        # variable elements: cables then stages
        self.var_a = np.array([nd[e.a] for e in [*self.cables, *self.stages]], dtype=int)
        self.var_b = np.array([nd[e.b] for e in [*self.cables, *self.stages]], dtype=int)
        self.cable_r20 = np.array([e.r20_per_m * e.length for e in self.cables])
        self.cable_alpha = np.array([e.alpha20 for e in self.cables])
        st_r20 = []
        for e in self.stages:
            co = e.coil
            st_r20.append(co.r_ref / (1 + co.alpha20 * (co.t_ref - 20.0)) * e.r_factor)
        self.stage_r20 = np.array(st_r20)
        self.stage_alpha = np.array([e.coil.alpha20 for e in self.stages])
        # flat scatter indices for the 4 stamps of each variable conductance
        ia, ib = self.var_a - 1, self.var_b - 1
        rows = np.concatenate([ia, ib, ia, ib])
        cols = np.concatenate([ia, ib, ib, ia])
        self.sign = np.concatenate([np.ones(len(ia)), np.ones(len(ia)), -np.ones(len(ia)), -np.ones(len(ia))])
        self.keep = (rows >= 0) & (cols >= 0)
        self.flat = (rows * self.size + cols)[self.keep]
        self.which = np.tile(np.arange(len(ia)), 4)[self.keep]
        self.mode = "regulating"

    def resistances(self, t_cables: np.ndarray, t_stages: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        rc = self.cable_r20 * (1 + self.cable_alpha * (t_cables - 20.0))
        rs = self.stage_r20 * (1 + self.stage_alpha * (t_stages - 20.0))
        return rc, rs

    def _solver(self, g: np.ndarray, extra: float):
        """A solve function for the matrix at variable conductances ``g`` [S], plus ``extra`` [S] at
        the alternator node: dense below SPARSE_THRESHOLD unknowns, sparse LU above."""
        node = self.alt_node - 1
        if self.size <= SPARSE_THRESHOLD:
            a = self.a0 + np.bincount(
                self.flat, weights=(self.sign[self.keep] * g[self.which]), minlength=self.size * self.size
            ).reshape(self.size, self.size)
            if extra:
                a[node, node] += extra
            return lambda r: np.linalg.solve(a, r)
        rows = [self.r0, self.flat // self.size]
        cols = [self.c0, self.flat % self.size]
        vals = [self.v0, self.sign[self.keep] * g[self.which]]
        if extra:
            rows.append(np.array([node]))
            cols.append(np.array([node]))
            vals.append(np.array([extra]))
        return Factorized(np.concatenate(rows), np.concatenate(cols), np.concatenate(vals), self.size).solve

    def solve(self, t_cables: np.ndarray, t_stages: np.ndarray, on: np.ndarray, alt_limit: float | None):
        """(cable currents, stage currents, battery current, alternator current, node vector).

        The alternator's state is kept from the call before and changed where the solution leaves it
        (:func:`coilstage.physics.network.charging_source_state` of what its regulator would deliver)."""
        rc, rs = self.resistances(t_cables, t_stages)
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
