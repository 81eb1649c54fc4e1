"""The declared parameters of a drawing, and a vectorised model of the steady-state rules' margins.

:func:`parameters` lists every quantity a drawing's tolerances and operating ranges let vary (coil
resistance per coil type, cable length for the whole harness and per cable where the drawing states
one, regulator set-point, temperature compensation and temperature, the alternator's hot derating and
cold excess, the battery's state of charge, ageing, low-end resistance and surface charge, the
ambient, the fault's own resistance), each with its nominal value, its ends and its distribution,
from :func:`coilstage.analysis.tolerances.effective` (the shipped defaults with the drawing's own rows
laid over them).

:func:`evaluate` takes N parameter vectors (rows of X, columns in the order of :func:`parameters`) and
returns, for each steady-state rule and subject, the margin and status of every sample, with the same
limits and thresholds as the rules in ``coilstage.checks``. It is pure in X, so a sweep can feed it
in chunks. Each sample is one consistent state of the vehicle, solved in five networks:

* **duty** (``fuse.continuous``, ``cable.ampacity``, ``relay.contact_rating``,
  ``circuit.voltage_drop``): coils and cables at the ambient, the bus held at the regulator's
  voltage (set-point with its tolerance, compensated to the regulator's temperature), the
  alternator a fixed current source of its rated output plus its cold excess; each element's
  largest current with all stages on or any one stage alone (as ``analysis.corners.cold_duty``);
  the voltage drop with all stages on.
* **low bus** (``supply.bus_minimum``): the battery's EMF on its open-circuit voltage line at the
  sample's state of charge, its resistance raised for charge, ambient and age
  (``physics.battery``), the alternator regulating at the compensated set-point with its hot-corner
  output less its hot derating (regulating, current-limited or off, decided per sample as
  ``physics.network.solve_with_limited_source`` does), cables at their zone temperatures and
  windings at the hot corner's temperatures (the nominal drawing's: held, not re-solved per sample).
  The same bus feeds each relay's coil (``relay.coil_pickup``): it gets U_bus·R/(R + R_feed) against
  :data:`~coilstage.analysis.relay_coil.PICKUP_MARGIN` × the voltage it needs, the coil at its zone
  plus its own rise (as the rule).
* **braking** (``field.braking_retained``): the low bus with every cable at its zone and every
  winding at its steady state in the braking-retained state (``analysis.worst.braking_drawing``),
  each less the sample's ambient shortfall from the highest (the zones follow the ambient; a winding
  keeps its rise), so a cold battery does not meet the hottest windings (the regulator's temperature
  stays a parameter of its own); the braking effort Σ B² of the stages' ampere-turns over the cold corner's
  (:meth:`Model.braking_ratio`, the measure of ``analysis.worst.braking_effort``).
* **largest fault** (``fuse.breaking_capacity``): a surface-charged battery at its low-end
  resistance, the alternator a current source of its rated output plus its cold excess, coils and
  cables at the ambient, the other loads disconnected, a bolted short from each fuse's load
  terminal to chassis (Thévenin: U_oc / Z_kk, as ``physics.network.short_circuit_currents``).
* **smallest fault** (``fuse.cable_short_circuit``): the battery as in the low bus (EMF on its
  open-circuit line at the sample's charge, resistance raised for charge, ambient and age), the
  alternator off, cables at their zone temperatures and coils at the cold corner's (held, as
  ``analysis.worst``), the other loads connected, a short at the far end of each protected cable
  through the fault's own resistance (Thévenin: U_oc / (Z_kk + R_f)); the fuse's latest clearing time
  at that current from its time-current gates (:func:`gate_t_max`, the interpolation of
  ``tables.FuseGates.t_max`` over arrays) and the conductor's adiabatic final temperature
  (``physics.fault.adiabatic_final_temperature``, IEC 60949) against its insulation's short-circuit
  limit, on the kelvin scale. A short the fuse need not clear, or one that heats the conductor past
  its melting point, is given :data:`MELTING_POINT` (the rule fails it with no figure).

Where the drawing states the battery's resistance as a range (``supply.battery.internal_resistance``)
its low end serves the largest fault and its high end the low bus and the smallest fault, as in
``analysis.worst``.

Every network is assembled by stamping the element conductances of all samples at once
(``A[N] = G[N, R] · S[R, n²]`` with S the modified-nodal stamps of [1]_) and solved by one batched
``numpy.linalg.solve``; there is no Python loop over samples. Element resistances come from
:func:`coilstage.analysis.circuit.element_resistance` (vectorised over temperature and scaled by the
sample's tolerance: R is proportional to a coil's reference resistance and a cable's length).

References
----------
.. [1] C.-W. Ho, A. E. Ruehli, P. A. Brennan, "The modified nodal approach to network analysis",
   IEEE Trans. Circuits and Systems 22(6):504–509, 1975.
"""

from __future__ import annotations

import dataclasses
import functools
import math
import weakref
from collections.abc import Collection
from dataclasses import dataclass

import numpy as np

from coilstage import tables
from coilstage.analysis.circuit import Circuit, element_resistance
from coilstage.analysis.conditions import (
    cold_temperatures,
    corner_sources,
    hot_alternator_limit,
    hot_temperatures,
    zone_at_ambient,
)
from coilstage.analysis.field import circuit_of
from coilstage.analysis.insulation import short_circuit_limit
from coilstage.analysis.materials import metal
from coilstage.analysis.ratings import cable_rating, fuse_gates, relay_contact
from coilstage.analysis.relay_coil import PICKUP_MARGIN, coil_at, hot_temperature
from coilstage.analysis.tolerances import battery_resistance, effective, element_key, lookup
from coilstage.analysis.tolerances import cells as _cells
from coilstage.analysis.topology import protected_cables
from coilstage.analysis.worst import braking_drawing, braking_effort
from coilstage.drawing.schema import Cable, Drawing, Fuse, Relay, Stage
from coilstage.physics.battery import internal_resistance, open_circuit_voltage
from coilstage.physics.conductor import resistance_at_temperature
from coilstage.physics.fault import adiabatic_final_temperature
from coilstage.physics.network import PERMC_SPEC, Branches, charging_source_codes, conductance_pattern, mna_matrix
from coilstage.physics.supply_limits import regulator_setpoint

#: status codes of :class:`Evaluated`
PASS, WARN, FAIL = 0, 1, 2

#: the rules :func:`evaluate` models
RULES = (
    "fuse.continuous",
    "cable.ampacity",
    "relay.contact_rating",
    "circuit.voltage_drop",
    "supply.bus_minimum",
    "fuse.breaking_capacity",
    "fuse.cable_short_circuit",
    "relay.coil_pickup",
    "field.braking_retained",
)

#: the network each modelled rule reads (:func:`evaluate` solves only those a call asks for)
NETWORKS = {
    "duty": ("fuse.continuous", "cable.ampacity", "relay.contact_rating", "circuit.voltage_drop"),
    "low bus": ("supply.bus_minimum", "relay.coil_pickup"),
    "largest fault": ("fuse.breaking_capacity",),
    "smallest fault": ("fuse.cable_short_circuit",),
    "braking": ("field.braking_retained",),
}

#: A conductor's melting point [°C] (CRC Handbook of Chemistry and Physics: copper 1084.62 °C,
#: aluminium 660.32 °C; from memory). Where a far-end short is not cleared within the fuse's gates, or
#: heats the conductor past this point, the rule fails with no figure to compare (the conductor is
#: destroyed); the model gives those samples this figure instead, so that every margin is finite for the
#: corner search, the sweep and the corner decision (status FAIL, as the rule's).
MELTING_POINT = {"copper": 1084.62, "aluminium": 660.32}

#: relay contacts warn above this share of their rating (common practice; checks.protection reads it too)
RELAY_WARN_SHARE = 0.9


@dataclass(frozen=True)
class Parameter:
    """One declared parameter: its tolerance ``key`` (``coils.RC4.resistance_tolerance``,
    ``tolerances.cable_length``, ...), ``words`` for a reader, the ``nominal`` value and the ends
    ``low`` and ``high`` (in ``unit``; relative tolerances as fractions: -0.05 is -5 %), the sweep's
    ``distribution`` (``uniform``, or ``normal`` with the ends at ±3 σ), the ``elements`` it applies
    to (element ids; empty for a supply or environment quantity), and the row's ``source`` and
    ``status``."""

    key: str
    words: str
    nominal: float
    low: float
    high: float
    unit: str
    distribution: str
    elements: tuple[str, ...] = ()
    source: str = ""
    status: str = ""

    def change_words(self, change: float) -> str:
        """A move of this parameter in words: ``-5 %`` for a relative one, ``+20 K`` for a temperature,
        ``-3 mV/K``, ``+0.5 mΩ``, ``× 1.5`` reached for a factor."""
        if self.unit == "1" and self.key.endswith("_factor"):
            return f"× {self.nominal + change:.3g}"
        if self.unit == "1":
            return f"{change * 100:+.3g} %"
        if self.unit == "degC":
            return f"{change:+.3g} K"
        if self.unit == "V/K":
            return f"{change * 1e3:+.3g} mV/K"
        if self.unit == "ohm":
            return f"{change * 1e3:+.3g} mΩ"
        return f"{change:+.3g} {self.unit}"


@dataclass(frozen=True)
class Evaluated:
    """One rule and subject over N samples: ``margin`` (as the rule's: headroom over its limit, a
    fraction, positive on the safe side), ``status`` (0 pass, 1 warn, 2 fail), ``value`` (the figure
    the rule compares, in ``unit``) and the ``limit`` it is compared with; ``toward_worst`` (optional)
    a read-out whose fall the rule itself takes as the way to its worst case (a far-end short's current:
    the rule is decided at the smallest fault), which seeds the corner search where the margin does not
    move at the nominal point (a fuse clearing at constant I²t leaves the conductor's heating flat in
    the current)."""

    margin: np.ndarray
    status: np.ndarray
    value: np.ndarray
    limit: float | np.ndarray  # (N,) where it follows the sample's ambient
    unit: str
    toward_worst: np.ndarray | None = None


def _row_param(row: dict, key: str, words: str, elements: tuple[str, ...] = ()) -> Parameter:
    return Parameter(
        key,
        words,
        float(row["nominal"]),
        float(row["low"]),
        float(row["high"]),
        str(row["unit"]),
        str(row.get("distribution", "uniform")),
        elements,
        str(row.get("source", "")),
        str(row.get("status", "")),
    )


def _stated(d: Drawing, key: str) -> bool:
    return key in d.tolerances


def coil_parameters(d: Drawing, key: str, words: str) -> list[Parameter]:
    """One parameter per coil type of the drawing for the generic coil tolerance ``key``
    (``coils.*.resistance_tolerance`` or ``coils.*.inductance_tolerance``): the type's own row where the
    drawing states one, else the generic row; ``words`` names it ("coil resistance" -> "coil
    resistance (RC4)"). Parameters whose ends coincide are kept (:func:`parameters` drops them)."""
    tol = effective(d)
    by_type: dict[str, list[str]] = {}
    for s in d.of_kind(Stage):
        by_type.setdefault(s.coil.name, []).append(s.id)
    return [
        _row_param(lookup(tol, key, name), element_key(key, name), f"{words} ({name})", tuple(ids))
        for name, ids in by_type.items()
    ]


def parameters(d: Drawing) -> list[Parameter]:
    """The declared parameters of a drawing, in the column order :func:`evaluate` takes.

    A parameter whose ends coincide (no tolerance) is left out. Without an alternator its five
    parameters are left out. The set-point tolerance is the drawing's ``supply.alternator.tolerance``
    [V] as a fraction of its set-point unless the drawing's tolerances state the key; the regulator
    runs from the lowest ambient to the alternator cable's zone temperature; the ambient from the
    environment's lowest to its highest (nominal 25 °C held within them)."""
    tol = effective(d)
    out: list[Parameter] = coil_parameters(d, "coils.*.resistance_tolerance", "coil resistance")
    cables = d.of_kind(Cable)
    own = [c for c in cables if element_key("tolerances.cable_length", c.id) in tol]
    rest = tuple(c.id for c in cables if c not in own)
    if rest:
        out.append(_row_param(tol["tolerances.cable_length"], "tolerances.cable_length", "cable length", rest))
    for c in own:
        key = element_key("tolerances.cable_length", c.id)
        out.append(_row_param(tol[key], key, f"length of {c.id}", (c.id,)))
    alt = d.supply.alternator
    if alt is not None:
        key = "supply.alternator.tolerance"
        row = dict(tol[key])
        if not _stated(d, key):
            rel = alt.tolerance / alt.setpoint if alt.setpoint > 0 else 0.0
            row.update(
                nominal=0.0,
                low=-rel,
                high=rel,
                source="drawing: supply.alternator.tolerance",
                status="stated in the drawing",
            )
        out.append(_row_param(row, key, "regulator set-point"))
        g = "supply.alternator.compensation_24v" if _cells(d) == 12 else "supply.alternator.compensation_12v"
        out.append(_row_param(tol[g], g, "regulator compensation"))
        key = "supply.alternator.regulator_temperature"
        row = dict(tol[key])
        if not _stated(d, key):
            feed = [c for c in cables if alt.node in (c.a, c.b)]
            lo = d.environment.ambient_min
            hi = max([c.zone_temperature for c in feed] or [d.environment.ambient_max])
            row.update(nominal=min(max(25.0, lo), hi), low=lo, high=max(hi, lo))
        out.append(_row_param(row, key, "regulator temperature"))
        out.append(
            _row_param(
                tol["supply.alternator.hot_derating"], "supply.alternator.hot_derating", "alternator hot derating"
            )
        )
        out.append(
            _row_param(tol["supply.alternator.cold_excess"], "supply.alternator.cold_excess", "alternator cold excess")
        )
    for key, words in (
        ("supply.battery.state_of_charge", "battery state of charge"),
        ("supply.battery.age_factor", "battery ageing"),
        ("supply.battery.resistance_min_factor", "battery resistance, low end"),
        ("supply.battery.surface_charge_per_cell", "battery surface charge"),
    ):
        out.append(_row_param(tol[key], key, words))
    env = d.environment
    out.append(
        Parameter(
            "environment.ambient",
            "ambient",
            min(max(25.0, env.ambient_min), env.ambient_max),
            env.ambient_min,
            env.ambient_max,
            "degC",
            "uniform",
            (),
            "drawing: environment.ambient_min, ambient_max",
            "stated in the drawing",
        )
    )
    out.append(_row_param(tol["tolerances.fault_resistance"], "tolerances.fault_resistance", "fault resistance"))
    return [p for p in out if p.high > p.low]


def nominal(params: list[Parameter]) -> np.ndarray:
    """The nominal parameter vector (P,)."""
    return np.array([p.nominal for p in params])


# ---------------------------------------------------------------------------------------- the model


#: above this many unknowns the batched networks are solved sparse (block-diagonal LU); below it one
#: batched dense solve is faster (measured with benchmarks/bench_growth.py)
BATCH_SPARSE_ABOVE = 60


class _Stamps:
    """The modified-nodal conductance stamps of R resistor rows in a ``size`` × ``size`` matrix, held as
    the U distinct entries they touch (``pos``, flat indices) and the (R, U) map from conductances to
    those entries (±1): ``g @ stamps`` assembles the flat matrices (…, size²) of conductances g (…, R)
    in O(R·U) per sample instead of O(R·size²)."""

    __array_ufunc__ = None  # ndarray @ _Stamps defers to __rmatmul__

    def __init__(self, rows: list[tuple[int, int]], size: int) -> None:
        self.ab = np.array(rows, dtype=np.int64).reshape(-1, 2)  # (R, 2) node numbers, 0 the reference
        # the stamps as physics.network states them (the one statement, which mna_matrix assembles with)
        r, c, sign, branch = conductance_pattern(self.ab[:, 0], self.ab[:, 1])
        flat = r * size + c
        pos, first, slot = np.unique(flat, return_index=True, return_inverse=True)
        order = np.argsort(first, kind="stable")  # the entries in the order the stamps first touch them
        rank = np.empty_like(order)
        rank[order] = np.arange(len(order))
        self.size = size
        self.pos = pos[order]
        self.map = np.zeros((len(rows), len(pos)))
        np.add.at(self.map, (branch, rank[slot]), sign)
        self._map_t = None
        self._const: tuple | None = None  # the constant part last assembled, and its nonzero entries

    def entries(self, g: np.ndarray) -> np.ndarray:
        """The U stamped entries (..., U) of conductances g (..., R), through the map held sparse (each
        resistor touches at most four entries: O(R) per sample, where the dense (R, U) map is O(R·U))."""
        if self._map_t is None:
            from scipy.sparse import csr_matrix

            self._map_t = csr_matrix(self.map.T)
        flat = g.reshape(-1, g.shape[-1])
        return np.asarray((self._map_t @ flat.T).T).reshape((*g.shape[:-1], len(self.pos)))

    def matrix(self, g: np.ndarray, const: np.ndarray):
        """The sparse matrix (CSC) g · stamps + const of one sample's conductances g (R,)."""
        from scipy.sparse import csc_matrix

        size = self.size
        if self._const is None or self._const[0] is not const:
            ci, cj = np.nonzero(const)
            self._const = (const, ci, cj)
        _c, ci, cj = self._const
        vals = np.concatenate([self.entries(g[None])[0], const[ci, cj]])
        rows = np.concatenate([self.pos // size, ci])
        cols = np.concatenate([self.pos % size, cj])
        return csc_matrix((vals, (rows, cols)), shape=(size, size))

    def times(self, dg: np.ndarray, x: np.ndarray) -> np.ndarray:
        """(∂A/∂p) x for every p: dg (P, R) the conductances' derivatives, x (size,) -> (P, size). A
        resistor row (a, b) adds dg·(x_a − x_b) at a and its negative at b (the stamp times x), O(P·R)."""
        v = np.concatenate([[0.0], x])
        a, b = self.ab[:, 0], self.ab[:, 1]
        w = dg * (v[a] - v[b])  # (P, R)
        out = np.zeros((dg.shape[0], self.size + 1))
        np.add.at(out.T, a, w.T)
        np.add.at(out.T, b, -w.T)
        out[:, 0] = 0.0
        return out[:, 1:]

    def __rmatmul__(self, g: np.ndarray) -> np.ndarray:
        out = np.zeros((*g.shape[:-1], self.size * self.size))
        out[..., self.pos] = g @ self.map
        return out

    def solve_blocks(self, g: np.ndarray, const: np.ndarray, b: np.ndarray) -> np.ndarray:
        """x (N, size, k) of the N systems (g[s] · stamps + const) x = b[s] at once: one block-diagonal
        sparse matrix, one sparse LU (scipy.sparse.linalg.splu), one solve of every right-hand side."""
        from scipy.sparse import csc_matrix
        from scipy.sparse.linalg import splu

        n, size = g.shape[0], self.size
        ci, cj = np.nonzero(const)
        vals = np.concatenate([self.entries(g), np.broadcast_to(const[ci, cj], (n, len(ci)))], axis=1)
        r0 = np.concatenate([self.pos // size, ci])
        c0 = np.concatenate([self.pos % size, cj])
        off = (np.arange(n) * size)[:, None]
        m = csc_matrix(
            (vals.ravel(), ((r0[None, :] + off).ravel(), (c0[None, :] + off).ravel())), shape=(n * size, n * size)
        )
        x = splu(m, permc_spec=PERMC_SPEC).solve(np.ascontiguousarray(b.reshape(n * size, -1)))
        return x.reshape(n, size, -1)


class _Net:
    """The drawing's network with a fixed structure (resistor rows, 0 V parts, sources), assembled
    and solved for many samples at once."""

    def __init__(self, d: Drawing):
        c = Circuit(d)
        self.d = d
        self.nd = nd = c.nodes
        self.n = len(nd) - 1  # node unknowns (node 0 is the reference, the battery negative)
        self.elements = d.elements
        nominal_r = [element_resistance(e, 20.0) for e in d.elements]
        self.res_el = [k for k, r in enumerate(nominal_r) if r > 0]
        self.zero_el = [k for k, r in enumerate(nominal_r) if r <= 0]
        s = d.supply
        self.bat = nd[s.battery.node]
        self.chassis = nd[s.chassis_node]
        self.base_node = nd[s.base_load_node]
        self.alt_node = nd[s.alternator.node] if s.alternator is not None else 0
        self.ea = np.array([nd[e.a] for e in d.elements], dtype=np.int64)
        self.eb = np.array([nd[e.b] for e in d.elements], dtype=np.int64)

    def size(self, held: bool) -> int:
        return self.n + len(self.zero_el) + (1 if held else 0)

    def stamps(self, rows: list[tuple[int, int]], size: int) -> _Stamps:
        """The conductance stamps of resistor rows (a, b), held by the entries they touch."""
        return _Stamps(rows, size)

    def vsource_block(self, held: bool, size: int) -> np.ndarray:
        """The constant part of A: the rows and columns of the 0 V parts (and of the held bus)."""
        rows = [(int(self.ea[k]), int(self.eb[k]), 0.0) for k in self.zero_el]
        if held:
            rows.append((0, self.bat, 0.0))
        # the voltage sources' rows and columns as physics.network.mna_matrix stamps them
        r, c, x, _rhs, _n = mna_matrix(self.n + 1, Branches.of([]), Branches.of(rows), Branches.of([]))
        m = np.zeros((size, size))
        np.add.at(m, (r, c), x)
        return m

    def inject(self, rhs: np.ndarray, node: int, current: np.ndarray) -> None:
        """A current ``current`` (per sample) driven into ``node`` from the reference."""
        if node > 0:
            rhs[..., node - 1] += current

    def solve(self, g_rows: np.ndarray, stamps: _Stamps, const: np.ndarray, rhs: np.ndarray) -> np.ndarray:
        """x of ``A x = rhs`` for every sample: A = g_rows · stamps + const; ``rhs`` (..., size) or
        (..., size, k). Up to :data:`BATCH_SPARSE_ABOVE` unknowns one batched dense solve; above it the
        samples' matrices as the blocks of one block-diagonal sparse matrix, factorised once by sparse
        LU (scipy.sparse.linalg.splu): the cost then grows with the number of entries, not with n³."""
        size = const.shape[0]
        lead = g_rows.shape[:-1]
        flat = np.ascontiguousarray(g_rows).reshape(-1, g_rows.shape[-1])
        vec = rhs.ndim == len(lead) + 1
        if size > BATCH_SPARSE_ABOVE:
            b = rhs.reshape(flat.shape[0], size, -1)
            x = stamps.solve_blocks(flat, const, b)
            return x.reshape(rhs.shape)
        a = (flat @ stamps).reshape((*lead, size, size))
        a += const
        if vec:
            return np.linalg.solve(a, rhs[..., None])[..., 0]
        return np.linalg.solve(a, rhs)

    def element_currents(self, x: np.ndarray, g_el: np.ndarray) -> np.ndarray:
        """Current of every element from a to b (..., E), from the solution and the element
        conductances (..., E) (0 V parts: their source current)."""
        v = np.concatenate([np.zeros((*x.shape[:-1], 1)), x[..., : self.n]], axis=-1)
        out = (np.take(v, self.ea, axis=-1) - np.take(v, self.eb, axis=-1)) * g_el
        for q, k in enumerate(self.zero_el):
            out[..., k] = x[..., self.n + q]
        return out


@dataclass(frozen=True)
class _Limits:
    """The limits of the duty rules as functions of the ambient (their zones follow it one for one,
    :func:`coilstage.analysis.conditions.zone_at_ambient`, as the rules' duty sweep): each tabulated
    on ``grid`` (ambients [°C], 2.5 K apart with the ends, the nominal and each relay's derating knee
    among them) and read by linear interpolation."""

    grid: np.ndarray  # ambients [°C]
    fuse_limit: dict[str, np.ndarray]  # continuous: frac × rating × rerating at each grid ambient [A]
    fuse_frac: float
    cable_limit: dict[str, np.ndarray]  # ampacity at each grid ambient [A]
    relay_limit: dict[str, tuple[np.ndarray, np.ndarray]]  # limit [A], warn-only (no derating above rated ambient)
    drop_pass: float
    drop_warn: float
    v_min: float
    breaking: dict[str, float]


def _relay_limit(r: Relay, system: int) -> tuple[float, bool] | None:
    """The relay's contact limit [A] in its zone, and whether a pass is held to a warn (a zone above
    the rated ambient with no derating given); None where the rule fails whatever the current (no
    rating for the system, zone above the highest ambient): :func:`coilstage.analysis.ratings.relay_contact`,
    the figures relay.contact_rating compares."""
    c = relay_contact(r, system)
    if c.limit is None:
        return None
    return c.limit, c.held_to_warn


#: spacing of the ambient grid the duty limits are tabulated on [K]
GRID_STEP = 2.5


def _grid(d: Drawing) -> np.ndarray:
    env = d.environment
    lo, hi = env.ambient_min, env.ambient_max
    n = max(2, int(np.ceil((hi - lo) / GRID_STEP)) + 1)
    knees = [r.rated_ambient + (hi - r.zone_temperature) for r in d.of_kind(Relay)]  # zone at its rated ambient
    pts = [*np.linspace(lo, hi, n), min(max(25.0, lo), hi), *(t for t in knees if lo < t < hi)]
    return np.unique(np.array(pts, dtype=float))


@functools.lru_cache(maxsize=4096)
def _cable_row(c: Cable, grid: tuple[float, ...], amb_max: float) -> tuple[float, ...] | None:
    """A cable's ampacity at each grid ambient (its zone following the ambient), or None where some
    ambient leaves it none. Cached on the (frozen) cable: sizing's candidates share all but one part."""
    vals = []
    for t in grid:
        amp = cable_rating(dataclasses.replace(c, zone_temperature=zone_at_ambient(c.zone_temperature, t, amb_max)))
        if isinstance(amp.ampacity, str) or amp.ampacity.value <= 0:
            return None
        vals.append(float(amp.ampacity.value))
    return tuple(vals)


@functools.lru_cache(maxsize=4096)
def _relay_row(
    r: Relay, grid: tuple[float, ...], amb_max: float, system: int
) -> tuple[tuple[float, ...], tuple[bool, ...]] | None:
    """A relay's contact limit and warn-only flag at each grid ambient, or None where some ambient
    leaves it no limit (cached as :func:`_cable_row`)."""
    lims = [
        _relay_limit(dataclasses.replace(r, zone_temperature=zone_at_ambient(r.zone_temperature, t, amb_max)), system)
        for t in grid
    ]
    if not all(lim is not None and lim[0] > 0 for lim in lims):
        return None
    return tuple(lim[0] for lim in lims), tuple(lim[1] for lim in lims)


def _limits(d: Drawing) -> _Limits:
    """The duty limits of every fuse, cable and relay on the ambient grid. A cable or relay that has no
    limit at some ambient of the range (no ampacity left, no rating for the system, a zone above its
    highest ambient) is left out: the rule itself decides it whatever the current."""
    frac = float(tables.fuse_rules()["continuous_fraction"])
    grid = _grid(d)
    amb_max = d.environment.ambient_max
    fuses = d.of_kind(Fuse)
    key = tuple(float(t) for t in grid)
    cab = {}
    for c in d.of_kind(Cable):
        row = _cable_row(c, key, amb_max)
        if row is not None:
            cab[c.id] = np.array(row)
    rel = {}
    for r in d.of_kind(Relay):
        row = _relay_row(r, key, amb_max, d.supply.system_voltage)
        if row is not None:
            rel[r.id] = (np.array(row[0]), np.array(row[1]))
    return _Limits(
        grid,
        {
            f.id: np.array(
                [frac * f.rating * tables.fuse_rerating(zone_at_ambient(f.zone_temperature, t, amb_max)) for t in grid]
            )
            for f in fuses
        },
        frac,
        cab,
        rel,
        d.limits.drop_pass,
        d.limits.drop_warn,
        d.supply.v_min,
        {f.id: float(f.breaking_capacity) for f in fuses if f.breaking_capacity > 0},
    )


def _distinct_rows(a: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The distinct rows of a 2-D array in the order they first appear, and the index of each row's
    copy among them (as ``np.unique(a, axis=0, return_inverse=True)`` up to that order, found by the
    rows' bytes instead of a lexicographic sort: O(N) where the samples are many and wide). Rows equal
    but for the sign of a zero or holding NaN count as distinct: at most an extra solve, never a
    wrong merge."""
    a = np.ascontiguousarray(a)
    slot: dict[bytes, int] = {}
    keep: list[int] = []  # the first row of each distinct one
    inv = np.empty(len(a), dtype=np.int64)
    for r, row in enumerate(a):
        j = slot.setdefault(row.tobytes(), len(keep))
        if j == len(keep):
            keep.append(r)
        inv[r] = j
    return a[keep], inv


class _ResistanceLaw:
    """The element resistances of :meth:`Model.resistances` for N samples at once:
    :func:`coilstage.analysis.circuit.element_resistance` (R(T) of
    :func:`coilstage.physics.conductor.resistance_at_temperature` for cables and coils, times a
    stage's resistance factor; the others fixed) on arrays of every element's constants: the one law
    on arrays, elementwise, so each figure is that function's to the last bit
    (``tests/test_params.py`` holds the two equal)."""

    def __init__(self, d: Drawing, params: list[Parameter], el_ix: dict[str, int]) -> None:
        elems = d.elements
        self.ids = [e.id for e in elems]
        self.thermal = np.array([j for j, e in enumerate(elems) if isinstance(e, (Cable, Stage))], dtype=np.int64)
        ref, t_ref, alpha, factor = [], [], [], []
        for j in self.thermal:
            e = elems[j]
            if isinstance(e, Cable):
                ref.append(e.r20_per_m * e.length)
                t_ref.append(20.0)
                alpha.append(e.alpha20)
                factor.append(1.0)
            else:
                ref.append(e.coil.r_ref)
                t_ref.append(e.coil.t_ref)
                alpha.append(e.coil.alpha20)
                factor.append(e.r_factor)
        self.r_ref = np.array(ref, dtype=float)
        self.alpha = np.array(alpha, dtype=float)
        self.t_ref = np.array(t_ref, dtype=float)
        self.factor = np.array(factor, dtype=float)
        self.fixed = np.array(
            [0.0 if isinstance(e, (Cable, Stage)) else element_resistance(e, 20.0) for e in elems], dtype=float
        )
        self.thermal_ids = [self.ids[j] for j in self.thermal]
        # each parameter's columns, in the parameters' order (a later one replaces an earlier one's scale)
        self.scaled = [
            (k, np.array([el_ix[eid] for eid in p.elements], dtype=np.int64))
            for k, p in enumerate(params)
            if p.elements
        ]

    def __call__(
        self, x: np.ndarray, temps: dict[str, float] | np.ndarray, shift: np.ndarray | None = None
    ) -> np.ndarray:
        n = x.shape[0]
        out = np.empty((n, len(self.ids)))
        out[:] = self.fixed
        if isinstance(temps, np.ndarray):
            t = temps if shift is None else temps + shift
            t = np.broadcast_to(t[:, None], (n, len(self.thermal)))
        else:
            t = np.array([temps.get(eid, 20.0) for eid in self.thermal_ids], dtype=float)
            t = np.broadcast_to(t, (n, len(self.thermal))) if shift is None else t[None, :] + shift[:, None]
        out[:, self.thermal] = resistance_at_temperature(self.r_ref, self.t_ref, t, self.alpha) * self.factor
        scale = np.ones((n, len(self.ids)))
        for k, cols in self.scaled:
            scale[:, cols] = (1.0 + x[:, k])[:, None]
        return out * scale


class Model:
    """The vectorised model of one drawing (built once per drawing; :func:`model` caches it)."""

    def __init__(self, d: Drawing) -> None:
        self.d = d
        self.params = parameters(d)
        self.index = {p.key: k for k, p in enumerate(self.params)}
        self.net = _Net(d)
        self.el_ix = {e.id: j for j, e in enumerate(d.elements)}
        self.limits = _limits(d)
        self.tol = effective(d)
        self.stages = [k for k, e in enumerate(d.elements) if isinstance(e, Stage)]
        self._resistance_law = _ResistanceLaw(d, self.params, self.el_ix)
        self.hot_t = hot_temperatures(d)
        self.hot_limit = hot_alternator_limit(d)
        # the battery's stated range, or its rated short-circuit current (the low end, where lower) and
        # cold-cranking current (the reference of the raised end, where higher): analysis.worst's reading
        self.rb = battery_resistance(d, self.tol, self.fixed("supply.battery.resistance_temperature_coefficient"))
        # the smallest fault: cables at their zones, coils at the cold corner (analysis.worst)
        self.zone_t = dict(cold_temperatures(d))
        self.zone_t.update({c.id: c.zone_temperature for c in d.of_kind(Cable)})
        cables = {c.id: c for c in d.of_kind(Cable)}
        protected = protected_cables(d)
        self.shorts: list[tuple[Fuse, Cable]] = [
            (f, cables[cid])
            for f in d.of_kind(Fuse)
            for cid in protected.get(f.id, [])
            if cid in cables and fuse_gates(f) is not None and cables[cid].material in MELTING_POINT
        ]
        self.far_nodes = sorted({self.net.nd[c.b] for _f, c in self.shorts})
        self.short_groups = ShortGroup.of(self.shorts)
        # each relay coil at its hot temperature: (share of the bus it gets, the voltage it needs) [-, V]
        self.pickups: dict[str, tuple[float, float]] = {}
        for r in d.of_kind(Relay):
            if r.coil is not None:
                at = coil_at(r, 1.0, hot_temperature(r))
                if at.need > 0:
                    self.pickups[r.id] = (at.have, at.need)
        net = self.net
        # resistor rows of the three networks: the elements, then the battery's resistance (Norton
        # networks) and the alternator's source resistance (the regulating low-bus network)
        el_rows = [(int(net.ea[k]), int(net.eb[k])) for k in net.res_el]
        self.st_duty = net.stamps(el_rows, net.size(True))
        self.c_duty = net.vsource_block(True, net.size(True))
        norton = [*el_rows, (0, net.bat)]
        self.st_fault = net.stamps(norton, net.size(False))
        self.st_low = net.stamps([*norton, (0, net.alt_node)], net.size(False))
        self.c_open = net.vsource_block(False, net.size(False))
        # the stages as ports of the duty network: p_k = e_a − e_b (None where a node is reached only
        # through stages: the stage-free network would float it)
        others = {int(v) for j in range(len(d.elements)) if j not in self.stages for v in (net.ea[j], net.eb[j])}
        touched = {int(v) for j in self.stages for v in (net.ea[j], net.eb[j])}
        self.ports = None
        self._port_a = np.array([int(net.ea[j]) for j in self.stages], dtype=np.int64)
        self._port_b = np.array([int(net.eb[j]) for j in self.stages], dtype=np.int64)
        if touched <= others | {0}:
            self.ports = np.zeros((net.size(True), len(self.stages)))
            for q, j in enumerate(self.stages):
                if net.ea[j] > 0:
                    self.ports[net.ea[j] - 1, q] += 1.0
                if net.eb[j] > 0:
                    self.ports[net.eb[j] - 1, q] -= 1.0

    @functools.cached_property
    def braking(self) -> tuple[float, float, list[tuple[int, float, object]], dict[str, float]] | None:
        """What ``field.braking_retained`` is judged on, made at its first use (a sizing screen or a
        sweep that does not ask for the rule does not pay for it): the cold corner's effort (all
        stages on) as the reference, the drawing's minimum ratio, each stage's (element, ampere-turns
        per ampere, magnetic circuit or None: (N·I)², as analysis.worst.braking_effort), and the
        windings' steady state in the braking-retained state (analysis.worst's view; held over the
        samples, as the low bus holds the hot corner's). None without a minimum or a cold effort."""
        d = self.d
        min_ratio = d.retarder.min_braking_ratio
        if min_ratio is None or not d.stages:
            return None
        cold_t, cold_src = corner_sources(d)["cold"]
        cold = Circuit(d).solve(cold_t, cold_src)
        e_cold = braking_effort(d, {st.id: abs(cold.current[st.id]) for st in d.stages})
        if e_cold <= 0:
            return None
        circs = {name: circuit_of(c) for name, c in d.coils.items()}
        per = [(self.el_ix[st.id], st.coil.turns * st.coil_current_factor, circs[st.coil.name]) for st in d.stages]
        return e_cold, float(min_ratio), per, hot_temperatures(braking_drawing(d, self.tol))

    # ---- the sample's inputs
    def column(self, x: np.ndarray, key: str, default: float) -> np.ndarray:
        k = self.index.get(key)
        return x[:, k] if k is not None else np.full(x.shape[0], default)

    def fixed(self, key: str, end: str = "nominal") -> float:
        return float(self.tol[key][end])

    def resistances(
        self, x: np.ndarray, temps: dict[str, float] | np.ndarray, shift: np.ndarray | None = None
    ) -> np.ndarray:
        """(N, E) element resistances [Ω]: at ``temps`` (element id -> °C, or (N,) one temperature for
        every cable and stage), raised by ``shift`` (N,) [K] where given, with each coil's and cable's
        tolerance applied (:class:`_ResistanceLaw`)."""
        return self._resistance_law(x, temps, shift)

    def regulated(self, x: np.ndarray) -> np.ndarray:
        """(N,) the regulator's voltage [V]: set-point with its tolerance, compensated to its temperature."""
        alt = self.d.supply.alternator
        g_key = "supply.alternator.compensation_24v" if _cells(self.d) == 12 else "supply.alternator.compensation_12v"
        u_set = alt.setpoint * (1.0 + self.column(x, "supply.alternator.tolerance", 0.0))
        g = self.column(x, g_key, self.fixed(g_key))
        t = self.column(
            x, "supply.alternator.regulator_temperature", self.fixed("supply.alternator.regulator_temperature")
        )
        return regulator_setpoint(
            t, u_set, g, self.fixed("supply.alternator.compensation_reference"), alt.compensation_limit
        )

    def ambient(self, x: np.ndarray) -> np.ndarray:
        env = self.d.environment
        return self.column(x, "environment.ambient", min(max(25.0, env.ambient_min), env.ambient_max))

    # ---- the three networks
    def duty(self, x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(each element's largest current over the stage states (N, E) [A] (magnitude), the solution
        with every stage on (N, size), the bus (N,)). The states: every stage on, and each stage alone
        (only where there are two or more)."""
        net = self.net
        n = x.shape[0]
        r = self.resistances(x, self.ambient(x))
        g = np.divide(1.0, r, out=np.zeros_like(r), where=r > 0)  # a 0 Ω part is a 0 V source instead
        s_count = len(self.stages)
        states = [np.ones(s_count, dtype=bool)]
        if s_count > 1:
            states += [np.arange(s_count) == k for k in range(s_count)]
        on = np.ones((len(states), len(self.d.elements)))
        for q, st in enumerate(states):
            on[q, self.stages] = st
        size = net.size(True)
        rhs = np.zeros((n, size))
        alt = self.d.supply.alternator
        if alt is not None:
            bus = self.regulated(x)
            net.inject(
                rhs, net.alt_node, alt.limit_rated * (1.0 + self.column(x, "supply.alternator.cold_excess", 0.0))
            )
        else:
            bus = np.full(n, self.d.corners.cold_bus)
        base = self.d.supply.base_load
        if base > 0:
            net.inject(rhs, net.base_node, np.full(n, -base))
        rhs[:, size - 1] = bus
        if self.ports is None or s_count < 2:
            g_el = g[:, None, :] * on[None, :, :]  # (N, Q, E)
            rhs_q = np.broadcast_to(rhs[:, None, :], (n, len(states), size))
            xs = net.solve(g_el[..., net.res_el], self.st_duty, self.c_duty, rhs_q)
            return np.max(np.abs(net.element_currents(xs, g_el)), axis=1), xs[:, 0], bus
        # Stages as ports of the stage-free network (one solve per sample with 1 + S right-hand sides):
        # A0 v = b − P i, stage k: R_k i_k = p_kᵀ v, so (diag R + K) i = c with Z = A0⁻¹P, K = PᵀZ,
        # c = Pᵀ A0⁻¹ b (the RL reduction of analysis.linear, here at DC and for every sample at once)
        g0 = g.copy()
        g0[:, self.stages] = 0.0
        sol = self._solve(
            g0[:, net.res_el],
            self.st_duty,
            self.c_duty,
            np.concatenate([rhs[:, :, None], np.broadcast_to(self.ports, (n, *self.ports.shape))], axis=2),
        )
        xb, z = sol[:, :, 0], sol[:, :, 1:]
        # pᵀ y of each port by its two terminals (a port column holds +1 and −1 only: the same sums as
        # the product with the port matrix, without its O(size·S) zeros per read-out)
        c = self._port_read(xb)  # (N, S)
        k = self._port_read(np.swapaxes(z, 1, 2))  # (N, S, S): k[:, s, t] = p_tᵀ z_s
        k = np.swapaxes(k, 1, 2)
        rs = r[:, self.stages]
        i_all = np.linalg.solve(k + rs[:, :, None] * np.eye(s_count), c[:, :, None])[:, :, 0]
        i_alone = c / (rs + np.einsum("nss->ns", k))
        # all on: x_b − Z i_all; stage k alone: x_b − i_k z_k (one column each: O(S·size) per sample,
        # where the product with the diagonal i_q would be O(S²·size)); each element's largest current
        # over the states is reduced a block of states at a time (no (N, states, E) array)
        x_all = xb - np.einsum("ns,nzs->nz", i_all, z)
        duty = np.abs(net.element_currents(x_all, g))
        step = max(1, 4096 // max(1, len(self.d.elements)))
        for q0 in range(0, s_count, step):
            q1 = min(s_count, q0 + step)
            xq = xb[:, None, :] - np.swapaxes(z[:, :, q0:q1] * i_alone[:, None, q0:q1], 1, 2)
            np.maximum(duty, np.max(np.abs(net.element_currents(xq, g[:, None, :])), axis=1), out=duty)
        # the stages' own currents: all on, and alone (zero in the other states)
        duty[:, self.stages] = np.maximum(np.abs(i_all), np.abs(i_alone))
        return duty, x_all, bus

    def _solve(self, g: np.ndarray, stamps: _Stamps, const: np.ndarray, rhs: np.ndarray) -> np.ndarray:
        """x (N, size, k) of ``net.solve`` for rhs (N, size, k). Above :data:`BATCH_SPARSE_ABOVE`
        unknowns each distinct network (row of g) is solved once: a network's conductances move with a
        few parameters only (cable lengths, coil tolerances, the ambient, the battery's resistance), so
        the samples of a corner search or a gradient, one or a few parameters changed at a time, share
        a few. The right-hand sides equal for every sample (unit injections, the stage ports) are
        solved once per network; the others are nonzero in a few entries (the sources), so each is its
        sample's values times the solutions for those unit vectors."""
        net = self.net
        if const.shape[0] <= BATCH_SPARSE_ABOVE or len(g) < 2:
            return net.solve(g, stamps, const, rhs)
        uniq, inv = _distinct_rows(g)
        if len(uniq) == len(g):
            return net.solve(g, stamps, const, rhs)
        n, size, k = rhs.shape
        same = np.all(rhs == rhs[:1], axis=(0, 1))
        vary = np.flatnonzero(~same)
        live = np.flatnonzero(np.any(rhs[:, :, vary] != 0.0, axis=(0, 2)))
        units = np.zeros((size, len(live)))
        units[live, np.arange(len(live))] = 1.0
        cols = np.concatenate([units, rhs[0][:, same]], axis=1)
        sol = net.solve(uniq, stamps, const, np.ascontiguousarray(np.broadcast_to(cols, (len(uniq), *cols.shape))))
        out = np.empty((n, size, k))
        out[:, :, same] = sol[inv, :, len(live) :]
        if len(vary):
            out[:, :, vary] = np.einsum("nzl,nlc->nzc", sol[inv, :, : len(live)], rhs[:, live][:, :, vary])
        return out

    def _port_read(self, y: np.ndarray) -> np.ndarray:
        """p_kᵀ y for every stage port k: y (..., size) -> (..., S), from the ports' two terminals."""
        out = np.zeros((*y.shape[:-1], len(self.stages)))
        pos = self._port_a > 0
        if pos.any():
            out[..., pos] += y[..., self._port_a[pos] - 1]
        pos = self._port_b > 0
        if pos.any():
            out[..., pos] -= y[..., self._port_b[pos] - 1]
        return out

    def battery_low(self, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(EMF, resistance) of the battery for the low bus (N,) each."""
        soc = self.column(x, "supply.battery.state_of_charge", self.fixed("supply.battery.state_of_charge"))
        age = self.column(x, "supply.battery.age_factor", self.fixed("supply.battery.age_factor"))
        emf = open_circuit_voltage(soc, cells=_cells(self.d))
        if self.rb.stated_high is not None:  # the drawing's stated high end, as analysis.worst
            return np.asarray(emf, dtype=float) * np.ones(x.shape[0]), np.full(x.shape[0], self.rb.stated_high)
        rb = internal_resistance(
            self.rb.reference,
            soc,
            self.ambient(x),
            t_reference=25.0,
            temperature_coefficient=self.fixed("supply.battery.resistance_temperature_coefficient"),
            empty_factor=self.fixed("supply.battery.resistance_empty_factor", "high"),
            age_factor=1.0,
        )
        return np.asarray(emf, dtype=float) * np.ones(x.shape[0]), rb * age

    def low_bus(self, x: np.ndarray, r: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
        """(x of the network (N, size), the alternator's mode per sample: 0 regulating, 1
        current-limited, 2 off, -1 absent), with the element resistances ``r`` (N, E) where given (by
        default the hot corner's temperatures)."""
        net = self.net
        n = x.shape[0]
        if r is None:
            r = self.resistances(x, self.hot_t)
        emf, rb = self.battery_low(x)
        size = net.size(False)
        rhs = np.zeros((n, size))
        net.inject(rhs, net.bat, emf / rb)
        base = self.d.supply.base_load
        if base > 0:
            net.inject(rhs, net.base_node, np.full(n, -base))
        g_el = 1.0 / r[:, net.res_el]
        alt = self.d.supply.alternator
        if alt is None or self.hot_limit is None:
            g = np.concatenate([g_el, 1.0 / rb[:, None], np.zeros((n, 1))], axis=1)
            return net.solve(g, self.st_low, self.c_open, rhs), np.full(n, -1)
        limit = self.hot_limit * (1.0 - self.column(x, "supply.alternator.hot_derating", 0.0))
        u_set = self.regulated(x)
        r_src = alt.source_resistance
        # the three states of the source from one solve of the network without it, for the injection
        # and a unit current at its node (z): limited x = x_b + L z, off x = x_b, regulating by the
        # Sherman–Morrison update for its conductance G = 1/r_src to the reference,
        # x = y − G z (eᵀy)/(1 + G eᵀz) with y = x_b + (u/r_src) z; each sample keeps the state
        # consistent with it (physics.network.charging_source_codes, with the same rounding allowance)
        g_off = np.concatenate([g_el, 1.0 / rb[:, None], np.zeros((n, 1))], axis=1)
        unit = np.zeros((n, size))
        net.inject(unit, net.alt_node, np.ones(n))
        sol = self._solve(g_off, self.st_low, self.c_open, np.stack([rhs, unit], axis=2))
        xb, z = sol[:, :, 0], sol[:, :, 1]
        k = net.alt_node - 1
        y = xb + (u_set / r_src)[:, None] * z
        x_reg = y - (z * (y[:, k] / (r_src + z[:, k]))[:, None])
        i_reg = (u_set - x_reg[:, k]) / r_src
        slack = 1e-9 * np.maximum(1.0, limit)
        mode = charging_source_codes(i_reg, limit, slack)
        x_lim = xb + limit[:, None] * z
        out = np.where((mode == 0)[:, None], x_reg, np.where((mode == 1)[:, None], x_lim, xb))
        return out, mode

    def braking_ratio(self, x: np.ndarray) -> np.ndarray:
        """(N,) braking effort at the lowest bus over the cold corner's (``field.braking_retained``).

        The low-bus network (battery and alternator as there) in one state of the vehicle: every cable
        at its zone temperature and every winding at its steady state in the braking-retained state
        (:func:`~coilstage.analysis.worst.braking_drawing`, as the rule's own view), each less the
        sample's ambient shortfall from the highest (the zones follow the ambient,
        :func:`~coilstage.analysis.conditions.zone_at_ambient`; a winding keeps its rise), so that
        cold air, a cold weak battery and hot coils are not taken together. The regulator's
        temperature is a parameter of its own (under the bonnet it does not follow the ambient).
        The effort is the sum over stages of B² in the gap at each coil's ampere-turns
        (:meth:`~coilstage.physics.magnetic.MagneticCircuit.gap_flux_density_array`),
        or (N·I)², as :func:`coilstage.analysis.worst.braking_effort`."""
        e_cold, _lim, per, temps = self.braking
        shift = self.ambient(x) - self.d.environment.ambient_max
        r = self.resistances(x, temps, shift)
        xl, _mode = self.low_bus(x, r)
        net = self.net
        v = np.concatenate([np.zeros((x.shape[0], 1)), xl[:, : net.n]], axis=1)
        total = np.zeros(x.shape[0])
        for j, at_per_amp, circ in per:
            ni = np.abs(v[:, net.ea[j]] - v[:, net.eb[j]]) / r[:, j] * at_per_amp
            b = circ.gap_flux_density_array(ni) if circ is not None else ni
            total += b * b
        return total / e_cold

    def largest_fault(self, x: np.ndarray) -> dict[str, np.ndarray]:
        """Fuse id -> (N,) bolted-short current at its load terminal at the largest fault [A]."""
        net = self.net
        d = self.d
        n = x.shape[0]
        fuses = d.of_kind(Fuse)
        if not fuses:
            return {}
        r = self.resistances(x, self.ambient(x))
        per_cell = self.column(
            x, "supply.battery.surface_charge_per_cell", self.fixed("supply.battery.surface_charge_per_cell", "high")
        )
        emf = _cells(d) * per_cell
        rb = self.rb.lowest(
            self.column(
                x, "supply.battery.resistance_min_factor", self.fixed("supply.battery.resistance_min_factor", "low")
            )
        )
        size = net.size(False)
        cols = 1 + len(fuses)
        rhs = np.zeros((n, cols, size))
        net.inject(rhs[:, 0], net.bat, emf / rb)
        alt = d.supply.alternator
        if alt is not None:
            net.inject(
                rhs[:, 0], net.alt_node, alt.limit_rated * (1.0 + self.column(x, "supply.alternator.cold_excess", 0.0))
            )
        nodes = [net.nd[f.b] for f in fuses]
        for j, k in enumerate(nodes):
            net.inject(rhs[:, 1 + j], k, np.ones(n))
            net.inject(rhs[:, 1 + j], net.chassis, -np.ones(n))
        g = np.concatenate([1.0 / r[:, net.res_el], 1.0 / rb[:, None]], axis=1)
        sol = self._solve(g, self.st_fault, self.c_open, np.swapaxes(rhs, 1, 2))  # (N, size, cols)
        u, z = self._thevenin(sol, nodes)
        current = np.abs(np.where(z > 0, u / np.where(z > 0, z, 1.0), np.inf))
        return {f.id: current[:, j] for j, f in enumerate(fuses)}

    def _thevenin(self, sol: np.ndarray, nodes: list[int]) -> tuple[np.ndarray, np.ndarray]:
        """(open-circuit voltage, driving-point impedance Z_kk) (N, F) of a short from each node of
        ``nodes`` to chassis, from the solution ``sol`` (N, size, 1 + F): column 0 the network with its
        sources, column 1 + j a unit current into node j and out of the chassis. Node k is row k − 1;
        the reference, node 0, reads 0 V."""
        pick = np.array([*nodes, self.net.chassis], dtype=np.int64)
        v = sol[:, np.maximum(pick - 1, 0), :]  # (N, F + 1, cols): only the rows read
        v[:, pick == 0, :] = 0.0
        f = len(nodes)
        col = np.arange(1, 1 + f)
        return v[:, :f, 0] - v[:, f, 0][:, None], v[:, np.arange(f), col] - v[:, f, col]

    def smallest_fault(self, x: np.ndarray) -> dict[int, np.ndarray]:
        """Node index -> (N,) current of a short from each protected cable's far end to chassis through
        the fault's own resistance at the smallest fault [A] (U_oc / (Z_kk + R_f), as
        ``analysis.worst``: 0 where the open-circuit voltage is not positive)."""
        net = self.net
        d = self.d
        n = x.shape[0]
        if not self.far_nodes:
            return {}
        r = self.resistances(x, self.zone_t)
        emf, rb = self.battery_low(x)
        size = net.size(False)
        rhs = np.zeros((n, 1 + len(self.far_nodes), size))
        net.inject(rhs[:, 0], net.bat, emf / rb)
        base = d.supply.base_load
        if base > 0:
            net.inject(rhs[:, 0], net.base_node, np.full(n, -base))
        for j, k in enumerate(self.far_nodes):
            net.inject(rhs[:, 1 + j], k, np.ones(n))
            net.inject(rhs[:, 1 + j], net.chassis, -np.ones(n))
        g = np.concatenate([1.0 / r[:, net.res_el], 1.0 / rb[:, None]], axis=1)
        sol = self._solve(g, self.st_fault, self.c_open, np.swapaxes(rhs, 1, 2))  # (N, size, cols)
        rf = self.column(x, "tolerances.fault_resistance", self.fixed("tolerances.fault_resistance", "high"))[:, None]
        u, z = self._thevenin(sol, self.far_nodes)
        zs = np.where(z > 0, z, 1.0)
        bolted = np.where(z > 0, np.abs(u) / zs, np.inf)
        through = np.where((u > 0) & (z > 0), u / (zs + rf), 0.0)
        current = np.where(rf > 0, through, bolted)
        return {k: current[:, j] for j, k in enumerate(self.far_nodes)}


def gate_t_max(points: tuple[tuple[float, float, float], ...], m: np.ndarray) -> np.ndarray:
    """The latest clearing time [s] of a fuse at ``m`` (N,) × its rating from its gates (multiple, min
    time, max time): the interpolation of :meth:`coilstage.tables.FuseGates.t_max` over an array (log-log
    between points, linear in time where a gate is zero, constant I²t beyond the last point, inf below
    the first point with a finite time: the fuse need not open). ``tests/test_params.py`` holds the two
    equal point by point."""
    m = np.asarray(m, dtype=float)
    first = next((i for i, q in enumerate(points) if math.isfinite(q[2])), None)
    if first is None:
        return np.full(m.shape, np.inf)
    xs = np.array([q[0] for q in points[first:]])
    ys = np.array([q[2] for q in points[first:]])
    live = m >= xs[0]
    beyond = m >= xs[-1]
    out = np.full(m.shape, np.inf)
    safe = np.where(live, m, xs[0])
    out = np.where(beyond, ys[-1] * (xs[-1] / safe) ** 2, out)
    if len(xs) >= 2:
        j = np.clip(np.searchsorted(xs, safe, side="left") - 1, 0, len(xs) - 2)
        x0, x1, y0, y1 = xs[j], xs[j + 1], ys[j], ys[j + 1]
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            f = np.log(safe / x0) / np.log(x1 / x0)
            loglog = np.exp(np.log(y0) + f * (np.log(y1) - np.log(y0)))
            lin = y0 + f * (y1 - y0)
        val = np.where((y0 > 0) & (y1 > 0), loglog, lin)
        infs = np.isinf(y0) | np.isinf(y1)
        val = np.where(infs, np.where(safe < x1, np.maximum(y0, y1), y1), val)
        out = np.where(live & ~beyond, val, out)
    return out


@dataclass(frozen=True)
class ShortGroup:
    """The far-end shorts (fuse, protected cable) whose fuses have equal gate points (ISO 8820 or the
    maker's own, whatever their type), with each short's constants as arrays for
    :func:`short_circuit_figures`."""

    shorts: tuple[tuple[Fuse, Cable], ...]
    points: tuple[tuple[float, float, float], ...]
    rating: np.ndarray  # fuse rating [A]
    area: np.ndarray  # conductor cross-section [m²]
    k: np.ndarray  # material constant K [A·s^½/m²]
    beta: np.ndarray  # [K]
    start: np.ndarray  # conductor temperature at the start of the fault: its class maximum [°C]
    melt: np.ndarray  # melting point [°C]
    limit: np.ndarray  # insulation's short-circuit limit [°C]

    @classmethod
    def of(cls, shorts: list[tuple[Fuse, Cable]]) -> list[ShortGroup]:
        """The shorts grouped by their fuses' gates, in the order each set of gates first appears."""
        by: dict[tuple, list[tuple[Fuse, Cable]]] = {}
        for f, c in shorts:
            gates = fuse_gates(f)
            assert gates is not None
            by.setdefault(gates.points, []).append((f, c))
        out = []
        for points, group in by.items():
            mts = [metal(c.material) for _f, c in group]
            out.append(
                cls(
                    tuple(group),
                    points,
                    np.array([f.rating for f, _c in group], dtype=float),
                    np.array([c.area for _f, c in group], dtype=float),
                    np.array([mt.k for mt in mts], dtype=float),
                    np.array([mt.beta for mt in mts], dtype=float),
                    np.array([c.class_max for _f, c in group], dtype=float),
                    np.array([MELTING_POINT[c.material] for _f, c in group], dtype=float),
                    np.array([short_circuit_limit(c).limit for _f, c in group], dtype=float),
                )
            )
        return out


def short_circuit_figures(g: ShortGroup, current: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The far-end shorts of one group at ``current`` (N, S) [A] (a column per short): each conductor's
    final temperature [°C] (its melting point where the fuse need not clear it or it melts) and the
    fuse's latest clearing time [s] (inf: need not open); the figures of
    ``analysis.ratings.far_end_short`` and ``checks.fuse_timing`` over an array (the gates read by
    :func:`gate_t_max`, the heating by :func:`coilstage.physics.fault.adiabatic_final_temperature`)."""
    t = gate_t_max(g.points, current / g.rating)
    opened = np.isfinite(t)
    i2t = current * current * np.where(opened, t, 0.0)
    theta = np.asarray(adiabatic_final_temperature(i2t, g.area, g.k, g.beta, g.start))
    value = np.where(opened & (theta < g.melt), theta, g.melt)
    return value, t


_CACHE: dict[int, tuple[weakref.ref, Model]] = {}


def model(d: Drawing) -> Model:
    """The model of a drawing, built once per drawing object."""
    hit = _CACHE.get(id(d))
    if hit is not None and hit[0]() is d:
        return hit[1]
    m = Model(d)
    _CACHE[id(d)] = (weakref.ref(d), m)
    return m


def _ceiling(value: np.ndarray, limit: float) -> np.ndarray:
    return (limit - value) / limit


def evaluate(d: Drawing, X: np.ndarray, rules: Collection[str] | None = None) -> dict[tuple[str, str], Evaluated]:
    """Margins and statuses of the steady-state rules for N samples of the declared parameters.

    Parameters
    ----------
    d : Drawing
    X : array (N, P)
        One row per sample, columns in the order of ``parameters(d)``, in each parameter's unit.
    rules : collection of str, optional
        Only these rules (of :data:`RULES`), solving only the networks they read (:data:`NETWORKS`);
        each sample's figures are those of the whole evaluation. Default: every rule.

    Returns
    -------
    dict
        (rule id, subject) -> :class:`Evaluated` with arrays of N, for the rules in :data:`RULES`;
        a subject whose verdict does not depend on the parameters (no ampacity left, no contact rating
        for the system) is left out.
    """
    m = model(d)
    x = np.atleast_2d(np.asarray(X, dtype=float))
    if x.shape[1] != len(m.params):
        raise ValueError(f"X has {x.shape[1]} columns; the drawing declares {len(m.params)} parameters")
    lim = m.limits
    out: dict[tuple[str, str], Evaluated] = {}
    el = {e.id: j for j, e in enumerate(d.elements)}
    want = None if rules is None else frozenset(rules)

    def wanted(network: str) -> bool:  # a network is solved only where a rule asked for reads it
        return want is None or not want.isdisjoint(NETWORKS[network])

    net = m.net
    if wanted("duty"):
        duty, x_on, _bus = m.duty(x)  # (N, E) largest over the stage states; (N, size) all stages on
        amb = m.ambient(x)

        def at_ambient(table: np.ndarray) -> np.ndarray:
            return np.interp(amb, lim.grid, table)

        for f in d.of_kind(Fuse):
            i = duty[:, el[f.id]]
            limit = at_ambient(lim.fuse_limit[f.id])
            st = np.where(i <= limit, PASS, np.where(i <= limit / lim.fuse_frac, WARN, FAIL))
            out[("fuse.continuous", f.id)] = Evaluated(_ceiling(i, limit), st, i, limit, "A")
        for c in d.of_kind(Cable):
            if c.id in lim.cable_limit:
                i = duty[:, el[c.id]]
                limit = at_ambient(lim.cable_limit[c.id])
                out[("cable.ampacity", c.id)] = Evaluated(
                    _ceiling(i, limit), np.where(i <= limit, PASS, FAIL), i, limit, "A"
                )
        for r in d.of_kind(Relay):
            if r.id in lim.relay_limit:
                i = duty[:, el[r.id]]
                table, held_at = lim.relay_limit[r.id]
                limit = at_ambient(table)
                held = np.interp(amb, lim.grid, held_at.astype(float)) > 0.5
                st = np.where(
                    i <= RELAY_WARN_SHARE * limit, np.where(held, WARN, PASS), np.where(i <= limit, WARN, FAIL)
                )
                out[("relay.contact_rating", r.id)] = Evaluated(_ceiling(i, limit), st, i, limit, "A")
        v0 = np.concatenate([np.zeros((x.shape[0], 1)), x_on[:, : net.n]], axis=1)  # all stages on
        for s in d.of_kind(Stage):
            j = el[s.id]
            vt = v0[:, net.ea[j]] - v0[:, net.eb[j]]
            f = (v0[:, net.bat] - vt) / d.supply.system_voltage
            st = np.where(f <= lim.drop_pass, PASS, np.where(f <= lim.drop_warn, WARN, FAIL))
            out[("circuit.voltage_drop", s.id)] = Evaluated(
                _ceiling(f, lim.drop_pass), st, f * 100, lim.drop_pass * 100, "%"
            )
    if wanted("low bus"):
        xl, _mode = m.low_bus(x)
        vb = xl[:, net.bat - 1] if net.bat > 0 else np.zeros(x.shape[0])
    if lim.v_min > 0 and wanted("low bus"):
        out[("supply.bus_minimum", "bus")] = Evaluated(
            (vb - lim.v_min) / lim.v_min, np.where(vb >= lim.v_min, PASS, FAIL), vb, lim.v_min, "V"
        )
    for fid, i in (m.largest_fault(x) if wanted("largest fault") else {}).items():
        if fid in lim.breaking:
            bc = lim.breaking[fid]
            out[("fuse.breaking_capacity", fid)] = Evaluated(_ceiling(i, bc), np.where(i <= bc, PASS, FAIL), i, bc, "A")
    for rid, (share, need) in m.pickups.items() if wanted("low bus") else ():
        have = vb * share
        limit = PICKUP_MARGIN * need
        st = np.where(have >= limit, PASS, np.where(have >= need, WARN, FAIL))
        out[("relay.coil_pickup", rid)] = Evaluated((have - limit) / limit, st, have, limit, "V")
    if m.shorts and wanted("smallest fault"):
        fault = m.smallest_fault(x)
        rows = {}
        for g in m.short_groups:
            current = np.stack([fault[net.nd[c.b]] for _f, c in g.shorts], axis=1)
            theta, _t = short_circuit_figures(g, current)
            for q, (f, c) in enumerate(g.shorts):
                rows[(f.id, c.id)] = (theta[:, q], float(g.limit[q]), current[:, q])
        for f, c in m.shorts:  # in the shorts' order
            theta, limit, i = rows[(f.id, c.id)]
            out[("fuse.cable_short_circuit", f"{f.id} → {c.id}")] = Evaluated(
                _ceiling(theta + 273.15, limit + 273.15), np.where(theta <= limit, PASS, FAIL), theta, limit, "degC", i
            )
    if wanted("braking") and m.braking is not None:
        ratio = m.braking_ratio(x)
        lim_b = m.braking[1]
        out[("field.braking_retained", "retarder")] = Evaluated(
            (ratio - lim_b) / lim_b, np.where(ratio >= lim_b, PASS, FAIL), ratio, lim_b, "1"
        )
    if want is not None:
        out = {k: v for k, v in out.items() if k[0] in want}
    return out
