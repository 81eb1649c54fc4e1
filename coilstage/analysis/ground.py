"""The return path: what happens when one return (a stage's ground cable, the shared return, a housing
bonding strap, a chassis path) is lost — a loose or corroded ground stud, a broken strap.

The network is solved again with that return open, through the public Circuit API (its resistance
overridden to OPEN_RESISTANCE, so that a node it alone held, such as the chassis, stays defined; the same
temperatures and sources), and compared with the intact network: which
elements now carry more current (where the current goes: through the chassis, a bonding strap, the
housing, another stage's return), which stages lose their current (their braking drops out), and the
voltage the lost return leaves across its gap (the ground offset a fitter measures). Kirchhoff's laws
on the intact and the broken network; no new physics.

The intact return's ground offset: the voltage between each stage's return terminal (and the chassis)
and the battery negative, read from the solved network's node voltages. The returns are a resistance
shared by every stage that uses them, so each stage's offset carries its neighbours' currents too; it
lowers the coil's voltage and lifts the ground of other equipment bonded at that point.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from coilstage import tables
from coilstage.analysis.circuit import Circuit, Solution, SourceState
from coilstage.drawing.schema import Cable, Drawing, Element, Stage
from coilstage.physics.network import PERMC_SPEC, Branches, mna_matrix


def returns(d: Drawing) -> list[Element]:
    """The return elements of the harness: ground cables and straps, cables whose role is return, and
    measured ground paths (kind "ground" with a resistance)."""
    return [e for e in d.elements if e.kind == "ground" or (isinstance(e, Cable) and e.role == "return")]


#: The resistance an open return is given [Ω]: far above any harness path, so it carries nothing.
OPEN_RESISTANCE = 1e9
#: A path "takes" the lost return's current where its own rises by more than this share of it (smaller
#: changes are the shared feed's drop redistributing).
SHARE = 0.01


@dataclass(frozen=True)
class Reroute:
    """One element whose current changed when the return was lost: before and after [A]."""

    element: str
    kind: str
    before: float
    after: float


@dataclass(frozen=True)
class LostReturn:
    """The network with one return lost: the elements whose current rose (largest rise first), the
    stages whose current fell (with before and after), and the voltage across the open return [V]."""

    lost: str
    carried: float  # what the lost return carried before [A]
    rerouted: tuple[Reroute, ...]
    stages: tuple[Reroute, ...]
    gap_voltage: float
    solution: Solution


def lose_return(
    d: Drawing, element_id: str, temperatures: dict[str, float], sources: SourceState, intact: Solution | None = None
) -> LostReturn:
    """Solve the drawing with ``element_id`` open and compare with the intact network (``intact``, or
    solved here), at ``temperatures`` [°C] and ``sources``."""
    full = Circuit(d)
    before = intact or full.solve(temperatures, sources)
    after = full.solve(temperatures, sources, overrides={element_id: OPEN_RESISTANCE})
    return _compare(d, element_id, before, after)


#: above this many unknowns every return is lost on one factorisation of the intact network (a rank-one
#: update each); up to it each is solved afresh (as small networks always were)
LOW_RANK_ABOVE = 60
#: refinement steps of each rank-one update against the broken network's own residual
REFINE = 2


def lose_returns(
    d: Drawing, ids: list[str], temperatures: dict[str, float], sources: SourceState, intact: Solution | None = None
) -> dict[str, LostReturn | Exception]:
    r""":func:`lose_return` for each of ``ids`` (a network that cannot be solved: its exception).

    Above :data:`LOW_RANK_ABOVE` unknowns, where the network is linear (the bus held, or the
    alternator a fixed source or off), the intact MNA matrix A is factorised once (sparse LU) and each
    return's loss is the rank-one change of its conductance g to 1/OPEN_RESISTANCE, A' = A + Δg·u·uᵀ
    with u = e_a − e_b, solved by the Sherman–Morrison formula [1]_

    .. math:: x' = x - w\,\frac{Δg\,u^T x}{1 + Δg\,u^T w},\qquad A w = u,

    then refined against A' itself (:data:`REFINE` steps of x' += A'⁻¹(b − A'x'), each through the same
    formula): O(n) per return instead of a factorisation each. ``tests/test_ground.py`` holds it equal
    to a fresh ``numpy.linalg.solve`` of the broken network.

    References
    ----------
    .. [1] J. Sherman, W. J. Morrison, "Adjustment of an inverse matrix corresponding to a change in
       one element of a given matrix", Ann. Math. Statist. 21(1):124–127, 1950.
    """
    circuit = Circuit(d)
    res_rows, vs_rows, vs_owner, is_rows, resistance, alt_on, fixed = circuit.network_rows(temperatures, sources, None)
    size = len(circuit.nodes) - 1 + len(vs_rows)
    row_of = {}
    for e in d.elements:  # the resistor rows are the elements with a resistance, in order
        if resistance[e.id] > 0:
            row_of[e.id] = len(row_of)
    linear = not (alt_on and not fixed)
    if size <= LOW_RANK_ABOVE or not linear or not all(i in row_of for i in ids):
        out: dict[str, LostReturn | Exception] = {}
        for i in ids:
            try:
                out[i] = lose_return(d, i, temperatures, sources, intact)
            except (ValueError, ArithmeticError) as exc:
                out[i] = exc
        return out
    from scipy.sparse import csc_matrix
    from scipy.sparse.linalg import splu

    before = intact or circuit.solve(temperatures, sources)
    r, c, v, rhs, n = mna_matrix(len(circuit.nodes), Branches.of(res_rows), Branches.of(vs_rows), Branches.of(is_rows))
    a = csc_matrix((v, (r, c)), shape=(size, size))
    try:
        lu = splu(a, permc_spec=PERMC_SPEC)
    except RuntimeError as exc:
        err = np.linalg.LinAlgError(f"singular network ({exc})")
        return {i: err for i in ids}
    u = np.zeros((size, len(ids)))
    for k, i in enumerate(ids):
        na, nb = res_rows[row_of[i]][0], res_rows[row_of[i]][1]
        if na > 0:
            u[na - 1, k] += 1.0
        if nb > 0:
            u[nb - 1, k] -= 1.0
    w = lu.solve(u)
    out = {}
    for k, i in enumerate(ids):
        uk, wk = u[:, k], w[:, k]
        dg = 1.0 / OPEN_RESISTANCE - 1.0 / res_rows[row_of[i]][2]
        den = 1.0 + dg * (uk @ wk)

        def solve_broken(b, uk=uk, wk=wk, dg=dg, den=den):
            y = lu.solve(b)
            return y - wk * (dg * (uk @ y) / den)

        x = solve_broken(rhs)
        for _ in range(REFINE):
            x = x + solve_broken(rhs - (a @ x + dg * uk * (uk @ x)))
        resid = rhs - (a @ x + dg * uk * (uk @ x))
        # the update loses its digits where the lost return was a node's only path (den -> 0): there,
        # or wherever the broken network's residual is not down to round-off, solve it afresh
        if (
            abs(den) < 1e-6
            or not np.all(np.isfinite(x))
            or np.linalg.norm(resid) > 1e-9 * max(1.0, float(np.linalg.norm(rhs)))
        ):
            try:
                out[i] = lose_return(d, i, temperatures, sources, intact)
            except (ValueError, ArithmeticError) as exc:
                out[i] = exc
            continue
        overrides = dict(resistance)
        overrides[i] = OPEN_RESISTANCE
        out[i] = _compare(d, i, before, _solution(circuit, sources, x, n, vs_owner, overrides, alt_on))
    return out


def _solution(circuit: Circuit, sources: SourceState, x: np.ndarray, n: int, vs_owner, resistance, alt_on) -> Solution:
    """The :class:`Solution` of an MNA solution vector x (node voltages, then the voltage sources'
    currents), read by ``Circuit.read_solution`` as ``Circuit.solve`` reads its own (a linear
    network: no limited source)."""
    if alt_on:
        mode, i_alt = "full output", float(sources.alt_limit)
    else:
        mode, i_alt = ("off" if circuit.drawing.supply.alternator is not None else "absent"), 0.0
    return circuit.read_solution(sources, np.concatenate(([0.0], x[:n])), x[n:], vs_owner, resistance, mode, i_alt)


def _compare(d: Drawing, element_id: str, before: Solution, after: Solution) -> LostReturn:
    gone = next(e for e in d.elements if e.id == element_id)
    carried = abs(before.current[element_id])
    rer, stg = [], []
    for e in d.elements:
        if e.id == element_id:
            continue
        b, a = abs(before.current[e.id]), abs(after.current[e.id])
        if isinstance(e, Stage):
            if a < b - 1e-6 * max(b, 1.0):
                stg.append(Reroute(e.id, e.kind, b, a))
        elif a - b > SHARE * carried and a > 1e-3:
            rer.append(Reroute(e.id, e.kind, b, a))
    rer.sort(key=lambda r: r.after - r.before, reverse=True)
    return LostReturn(
        element_id,
        carried,
        tuple(rer),
        tuple(stg),
        abs(after.v[gone.a] - after.v[gone.b]),
        after,
    )


_OFFSET_TABLE = "ground_offset_iso16750-2.toml"


@dataclass(frozen=True)
class ReturnOffset:
    """The ground offset at one point of the return: V(node) − V(negative) in a solved network [V].

    ``subject`` is the stage whose return terminal it is (or the chassis node); ``stage_voltage`` the
    voltage across that stage [V] (None for the chassis); ``feed_voltage`` V(stage's supply end) −
    V(negative) [V]; ``drops`` the return elements on the ways down in potential from the point to the
    negative, each (id, current [A], drop [V]), largest drop first."""

    subject: str
    node: str
    offset: float
    stage_voltage: float | None
    feed_voltage: float | None
    drops: tuple[tuple[str, float, float], ...]


def offset_limit(d: Drawing) -> tuple[float, str]:
    """The shipped ground-offset limit for the drawing's system [V], with its source words."""
    tab = tables.shipped(_OFFSET_TABLE)["table"]
    row = next(r for r in tab["rows"] if int(r["system"]) == int(d.supply.system_voltage))
    return float(row["offset"]), f"{tab['standard']}, {row['status']}"


def return_offsets(d: Drawing, solution: Solution) -> list[ReturnOffset]:
    """The ground offset at each stage's return terminal and at the chassis node (where it is not the
    negative node itself) in ``solution``: Ohm's law on the solved node voltages, no new physics."""
    v = solution.v
    neg = d.supply.negative_node
    v0 = v[neg]
    ret = returns(d)

    by_node: dict[str, list[Element]] = {}
    for e in ret:
        by_node.setdefault(e.a, []).append(e)
        by_node.setdefault(e.b, []).append(e)

    def path_down(node: str) -> tuple[tuple[str, float, float], ...]:
        """Return elements on every way down in potential from ``node`` to the negative."""
        seen: dict[str, tuple[str, float, float]] = {}
        todo = [node]
        while todo:
            n = todo.pop()
            for e in by_node.get(n, []):
                other = e.b if e.a == n else e.a
                drop = v[n] - v[other]
                if e.id not in seen and drop > 1e-9:
                    seen[e.id] = (e.id, abs(solution.current[e.id]), drop)
                    todo.append(other)
        return tuple(sorted(seen.values(), key=lambda x: x[2], reverse=True))

    out = []
    for s in d.elements:
        if not isinstance(s, Stage):
            continue
        off = v[s.b] - v0
        out.append(ReturnOffset(s.id, s.b, off, v[s.a] - v[s.b], v[s.a] - v0, path_down(s.b)))
    ch = d.supply.chassis_node
    if ch != neg and ch in v:
        off = v[ch] - v0
        out.append(ReturnOffset(ch, ch, off, None, None, path_down(ch)))
    return out
