r"""DC network solution by modified nodal analysis (MNA), with a current-limited charging source.

The network is given as arrays: node 0 is the reference (the battery negative); resistors
``(a, b, R)``; voltage sources ``(a, b, V)`` with V(b) − V(a) = V; current sources ``(a, b, I)``
driving I from a to b through the source (into node b). A zero-ohm element is written as a 0 V
voltage source so that its current comes out of the solution directly.

References
----------
.. [1] C.-W. Ho, A. E. Ruehli, P. A. Brennan, "The modified nodal approach to network analysis",
   IEEE Trans. Circuits and Systems 22(6):504–509, 1975.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

#: Above this many unknowns the sparse solver is used (it costs an import of scipy.sparse).
SPARSE_THRESHOLD = 150

#: The column ordering of every sparse LU of an MNA matrix (SuperLU's ``permc_spec``): minimum degree
#: on the structure of A + Aᵀ, which suits a structurally symmetric matrix as MNA's is (the stamps
#: of [1]_ are symmetric in structure). On the 64-stage benchmark drawing's heating network (259
#: unknowns) it factorises in half the time of the default COLAMD with a third of the fill (measured:
#: 91 µs and 1 546 non-zeros against 183 µs and 4 336); partial pivoting is unchanged, so the result
#: is the same to round-off (tests/physics/test_network.py holds it against numpy.linalg.solve).
PERMC_SPEC = "MMD_AT_PLUS_A"


@dataclass(frozen=True)
class Branches:
    """Elements of one kind: from-nodes ``a``, to-nodes ``b`` and a value each (arrays)."""

    a: np.ndarray
    b: np.ndarray
    value: np.ndarray

    @staticmethod
    def of(rows: list[tuple[int, int, float]]) -> Branches:
        if not rows:
            z = np.zeros(0, dtype=np.int64)
            return Branches(z, z, np.zeros(0))
        a, b, v = zip(*rows, strict=True)
        return Branches(np.asarray(a, dtype=np.int64), np.asarray(b, dtype=np.int64), np.asarray(v, float))


@dataclass(frozen=True)
class DCSolution:
    """Node voltages ``v`` [V] (``v[0] == 0``) and voltage-source currents ``i_vsource`` [A].

    ``i_vsource[k]`` flows from ``a`` to ``b`` through source k (out of its + terminal into b).
    """

    v: np.ndarray
    i_vsource: np.ndarray


def mna_matrix(
    n_nodes: int, resistors: Branches, vsources: Branches, isources: Branches
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, int]:
    r"""The MNA system ``A x = rhs`` of a network (node 0 dropped), as COO triplets and a dense rhs.

    Stamps of [1]_: each conductance g adds g to (a,a) and (b,b) and −g to (a,b) and (b,a); each
    voltage source adds a row and column for its current:

    .. math:: A = \begin{pmatrix} G & B \\ B^T & 0 \end{pmatrix},\qquad
              G_{aa} \mathrel{+}= g,\; G_{bb} \mathrel{+}= g,\; G_{ab} = G_{ba} \mathrel{-}= g

    Parameters
    ----------
    n_nodes : int
        Number of nodes including the reference node 0. [–]
    resistors : Branches
        Resistances (inf for an open branch: it stamps 0). [Ω]
    vsources : Branches
        Ideal voltage sources, V(b) − V(a) = value. [V]
    isources : Branches
        Ideal current sources, driving value from a to b. [A]

    Returns
    -------
    (rows, cols, vals, rhs, n)
        Triplets of A (conductances [S] and the ±1 of the sources [–]), the right-hand side (currents
        [A] and source voltages [V]) and ``n``, the number of node unknowns [–].

    Notes
    -----
    The one assembly of the package: the DC solves, the switching network and the heating network
    all stamp through it. Duplicate triplets add (a COO matrix), so parallel branches need no care.

    References
    ----------
    .. [1] C.-W. Ho, A. E. Ruehli, P. A. Brennan (1975), see the module references.

    Examples
    --------
    >>> r, c, v, rhs, n = mna_matrix(2, Branches.of([(1, 0, 2.0)]), Branches.of([]), Branches.of([(0, 1, 3.0)]))
    >>> n, [float(x) for x in v], [float(x) for x in rhs]
    (1, [0.5], [3.0])
    """
    n = n_nodes - 1
    m = len(vsources.value)
    nodes = (resistors.a, resistors.b, vsources.a, vsources.b)
    rows, cols, take, sign = _stamp_plan(n, *(np.asarray(x, dtype=np.int64).tobytes() for x in nodes))
    # each stamp's value: a conductance of its branch, or the +-1 of a source (the 1 after the last)
    x = sign * np.append(1.0 / resistors.value, 1.0)[take]
    rhs = np.zeros(n + m)
    ia, ib = isources.a, isources.b
    np.add.at(rhs, ia[ia > 0] - 1, -isources.value[ia > 0])
    np.add.at(rhs, ib[ib > 0] - 1, isources.value[ib > 0])
    rhs[n:] = vsources.value
    return rows, cols, x, rhs, n


@functools.lru_cache(maxsize=512)
def _stamp_plan(
    n: int, ra: bytes, rb: bytes, va: bytes, vb: bytes
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Where the stamps of :func:`mna_matrix` fall for one network structure (its node arrays as
    bytes), and what each takes: (rows, cols, the branch whose conductance it is, or the branch count
    for a source's 1, and its sign). A heating or switching analysis solves one structure hundreds of
    times with new values; the structure is worked out once."""
    a, b = np.frombuffer(ra, dtype=np.int64), np.frombuffer(rb, dtype=np.int64)
    va_, vb_ = np.frombuffer(va, dtype=np.int64) - 1, np.frombuffer(vb, dtype=np.int64) - 1
    m = len(va_)
    gr, gc, gs, ge = conductance_pattern(a, b)
    k = np.arange(m) + n
    ones = np.ones(m)
    one = np.full(4 * m, len(a), dtype=np.int64)
    r = np.concatenate([gr, va_, k, vb_, k])
    c = np.concatenate([gc, k, va_, k, vb_])
    take = np.concatenate([ge, one])
    sign = np.concatenate([gs, ones, -ones, -ones, ones])
    keep = (r >= 0) & (c >= 0)
    plan = (r[keep], c[keep], take[keep], sign[keep])
    for arr in plan:
        arr.setflags(write=False)  # shared by every call of this structure
    return plan


#: Compressed-column patterns of the sparse MNA matrices seen so far, by (size, rows, cols): the slot
#: of each triplet (duplicates share one: COO adds them), the row indices and the column pointers. A
#: heating integration factorises one pattern hundreds of times with new values; the pattern is made
#: once. Cleared when it holds more than ``_PATTERNS_KEPT``.
_PATTERNS: dict[tuple[int, bytes, bytes], tuple[np.ndarray, np.ndarray, np.ndarray, int]] = {}
_PATTERNS_KEPT = 64


def _csc(rows: np.ndarray, cols: np.ndarray, vals: np.ndarray, size: int):
    """The matrix of COO triplets (duplicates summed) in compressed-column form, its pattern cached."""
    from scipy.sparse import csc_matrix

    rows = np.asarray(rows, dtype=np.int64)
    cols = np.asarray(cols, dtype=np.int64)
    key = (size, rows.tobytes(), cols.tobytes())
    pat = _PATTERNS.get(key)
    if pat is None:
        uniq, slot = np.unique(cols * size + rows, return_inverse=True)  # column-major order
        indices = (uniq % size).astype(np.int32)
        indptr = np.searchsorted(uniq // size, np.arange(size + 1)).astype(np.int32)
        if len(_PATTERNS) >= _PATTERNS_KEPT:
            _PATTERNS.clear()
        pat = _PATTERNS[key] = (slot, indices, indptr, len(uniq))
    slot, indices, indptr, nnz = pat
    data = np.bincount(slot, weights=vals, minlength=nnz)
    return csc_matrix((data, indices, indptr), shape=(size, size))


def conductance_pattern(a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    r"""Where the conductance stamps of branches from nodes ``a`` to ``b`` fall in the MNA matrix
    (node 0 dropped, so node k is row k − 1): per stamp entry its row, column, sign and branch.

    .. math:: G_{aa} \mathrel{+}= g,\; G_{bb} \mathrel{+}= g,\; G_{ab} = G_{ba} \mathrel{-}= g

    Parameters
    ----------
    a : numpy.ndarray
        From-node of each branch (0 the reference). [–]
    b : numpy.ndarray
        To-node of each branch. [–]

    Returns
    -------
    (rows, cols, signs, branch)
        Arrays of the stamp entries, those on the reference row or column left out: the matrix gets
        ``signs * g[branch]`` at ``(rows, cols)`` (duplicates add). [–]

    Notes
    -----
    The one statement of the stamps: :func:`mna_matrix` assembles with it, and the batched
    tolerance model (analysis.params) takes its pattern once and scales it per sample.

    References
    ----------
    .. [1] C.-W. Ho, A. E. Ruehli, P. A. Brennan (1975), see the module references.

    Examples
    --------
    >>> r, c, s, e = conductance_pattern(np.array([1]), np.array([2]))
    >>> r.tolist(), c.tolist(), s.tolist(), e.tolist()
    ([0, 1, 0, 1], [0, 1, 1, 0], [1.0, 1.0, -1.0, -1.0], [0, 0, 0, 0])
    """
    ra, rb = np.asarray(a, dtype=np.int64) - 1, np.asarray(b, dtype=np.int64) - 1
    n = len(ra)
    e = np.arange(n)
    rows = np.concatenate([ra, rb, ra, rb])
    cols = np.concatenate([ra, rb, rb, ra])
    signs = np.concatenate([np.ones(n), np.ones(n), -np.ones(n), -np.ones(n)])
    branch = np.concatenate([e, e, e, e])
    keep = (rows >= 0) & (cols >= 0)
    return rows[keep], cols[keep], signs[keep], branch[keep]


class Factorized:
    """A factorised MNA matrix: dense for small systems, sparse LU above SPARSE_THRESHOLD.
    ``solve(b)`` takes one right-hand side or a matrix of them (one per column)."""

    def __init__(self, rows: np.ndarray, cols: np.ndarray, vals: np.ndarray, size: int) -> None:
        self.size = size
        if size > SPARSE_THRESHOLD:
            from scipy.sparse.linalg import splu

            try:
                self._lu = splu(_csc(rows, cols, vals, size), permc_spec=PERMC_SPEC)
            except RuntimeError:  # "Factor is exactly singular"
                raise np.linalg.LinAlgError("singular network") from None
            self._dense = None
        else:
            flat = np.asarray(rows, dtype=np.int64) * size + np.asarray(cols, dtype=np.int64)
            self._dense = np.bincount(flat, weights=vals, minlength=size * size).reshape(size, size)

    def solve(self, b: np.ndarray) -> np.ndarray:
        if self._dense is not None:
            return np.linalg.solve(self._dense, b)
        out = self._lu.solve(np.asarray(b, dtype=float))
        if not np.all(np.isfinite(out)):
            raise np.linalg.LinAlgError("singular network")
        return out


def solve_mna(n_nodes: int, resistors: Branches, vsources: Branches, isources: Branches) -> DCSolution:
    r"""Solve a linear DC network by modified nodal analysis.

    .. math:: \begin{pmatrix} G & B \\ B^T & 0 \end{pmatrix}
              \begin{pmatrix} v \\ i_V \end{pmatrix} = \begin{pmatrix} i_S \\ e \end{pmatrix}

    Parameters
    ----------
    n_nodes : int
        Number of nodes including the reference node 0. [–]
    resistors : Branches
        Resistances, each > 0. [Ω]
    vsources : Branches
        Ideal voltage sources, V(b) − V(a) = value. [V]
    isources : Branches
        Ideal current sources, driving value from a to b. [A]

    Returns
    -------
    DCSolution
        Node voltages [V] and voltage-source currents [A].

    Notes
    -----
    Any linear resistive network with a path to the reference from every node; dense below
    SPARSE_THRESHOLD unknowns, sparse LU above.

    References
    ----------
    .. [1] C.-W. Ho, A. E. Ruehli, P. A. Brennan (1975), see the module references.

    Examples
    --------
    A 12 V source across two 1 Ω resistors in series: 12 V / 2 Ω = 6 A, and 6 V at the middle node.

    >>> sol = solve_mna(3, Branches.of([(1, 2, 1.0), (2, 0, 1.0)]), Branches.of([(0, 1, 12.0)]), Branches.of([]))
    >>> round(float(sol.v[2]), 9), round(abs(float(sol.i_vsource[0])), 9)
    (6.0, 6.0)

    Raises
    ------
    numpy.linalg.LinAlgError
        If the network is singular (a floating node or a loop of voltage sources).
    """
    r, c, x, rhs, n = mna_matrix(n_nodes, resistors, vsources, isources)
    sol = Factorized(r, c, x, len(rhs)).solve(rhs)
    return DCSolution(np.concatenate(([0.0], sol[:n])), sol[n:])


def short_circuit_currents(
    n_nodes: int, resistors: Branches, vsources: Branches, isources: Branches, nodes: list[int], ref: int
) -> np.ndarray:
    r"""Current into a bolted (0 Ω) short from each of ``nodes`` to node ``ref`` [A], one at a time.

    For a linear network the short-circuit current at a port is its open-circuit voltage over its
    Thévenin impedance (Thévenin's theorem; IEC 60909-0 uses the same principle, an equivalent source
    at the fault location):

    .. math:: I_k = \frac{V_k - V_{ref}}{Z_{kk}}, \quad Z_{kk} = (e_k - e_{ref})^T A^{-1} (e_k - e_{ref})

    with A the MNA matrix of the pre-fault network (all its sources set to zero for Z). One
    factorisation serves every node, so N fault locations cost one solve with N right-hand sides.

    Parameters
    ----------
    n_nodes : int
        Number of nodes including the reference node 0. [–]
    resistors : Branches
        Resistances, each > 0. [Ω]
    vsources : Branches
        Ideal voltage sources, V(b) − V(a) = value. [V]
    isources : Branches
        Ideal current sources, driving value from a to b. [A]
    nodes : list of int
        The fault locations. [–]
    ref : int
        The node each fault returns to (the chassis). [–]

    Returns
    -------
    numpy.ndarray
        Prospective current of each fault, positive into the short. [A]

    Notes
    -----
    Linear networks only: an alternator must be given as a fixed current source (its full output),
    as the fault views do. A bolted fault; the fault's own resistance is added by the caller in
    series with Z_kk.

    References
    ----------
    .. [1] IEC 60909-0:2016, Short-circuit currents in three-phase a.c. systems — Part 0: Calculation
       of currents (the equivalent voltage source at the fault location; the same principle in DC).
    .. [2] C.-W. Ho, A. E. Ruehli, P. A. Brennan (1975), see the module references.

    Examples
    --------
    A 24 V source behind 10 mΩ, a 20 mΩ cable to node 2: a short at node 2 draws 24 / 0.03 = 800 A.

    >>> r = Branches.of([(0, 1, 0.010), (1, 2, 0.020)])
    >>> i = Branches.of([(0, 1, 24.0 / 0.010)])
    >>> round(float(short_circuit_currents(3, r, Branches.of([]), i, [2], 0)[0]), 6)
    800.0
    """
    rr, cc, xx, rhs, n = mna_matrix(n_nodes, resistors, vsources, isources)
    f = Factorized(rr, cc, xx, len(rhs))
    pre = f.solve(rhs)
    v = np.concatenate(([0.0], pre[:n]))
    b = np.zeros((len(rhs), len(nodes)))
    for j, k in enumerate(nodes):
        if k > 0:
            b[k - 1, j] += 1.0
        if ref > 0:
            b[ref - 1, j] -= 1.0
    z_cols = f.solve(b)
    z_cols = z_cols.reshape(len(rhs), len(nodes))
    out = np.empty(len(nodes))
    for j, k in enumerate(nodes):
        zk = (z_cols[k - 1, j] if k > 0 else 0.0) - (z_cols[ref - 1, j] if ref > 0 else 0.0)
        out[j] = (v[k] - v[ref]) / zk if zk > 0 else np.inf
    return out


def charging_source_state(i_regulating: float, i_limit: float, tol: float = 0.0) -> str:
    r"""The state of a current-limited charging source (an alternator) whose regulator, holding its
    set-point, would deliver ``i_regulating``.

    .. math:: I = \operatorname{clamp}\bigl((v_{set} - V)/r_{source},\; 0,\; i_{limit}\bigr)

    Parameters
    ----------
    i_regulating : float
        What the regulator would deliver holding its set-point, (v_set − V)/r_source. [A]
    i_limit : float
        The source's output limit at its speed and temperature. [A]
    tol : float
        Widens the regulating range against rounding. [A]

    Returns
    -------
    str
        ``"current-limited"`` above ``i_limit``, ``"off"`` below zero (its rectifier blocks reverse
        current), else ``"regulating"``. [–]

    Notes
    -----
    A regulated source with an output current limit and a blocking rectifier (the output
    characteristic ISO 8854 tests an alternator with regulator for, taken at one speed); the one
    place the program decides the state (DC solve, switching, heating).

    References
    ----------
    .. [1] ISO 8854:2012, Road vehicles — Alternators with regulators — Test methods and general
       requirements (output current characteristic).

    Examples
    --------
    >>> charging_source_state(120.0, 100.0), charging_source_state(-1.0, 100.0), charging_source_state(50.0, 100.0)
    ('current-limited', 'off', 'regulating')
    """
    return SOURCE_STATES[int(charging_source_codes(np.asarray(i_regulating), np.asarray(i_limit), tol))]


#: the states of :func:`charging_source_state` by the codes of :func:`charging_source_codes`
SOURCE_STATES = ("regulating", "current-limited", "off")


def charging_source_codes(i_regulating: np.ndarray, i_limit: np.ndarray, tol: np.ndarray | float = 0.0) -> np.ndarray:
    r"""The state of :func:`charging_source_state` for arrays of samples, as codes: 0 regulating,
    1 current-limited, 2 off (:data:`SOURCE_STATES`); the one decision of the state, which the scalar
    form and the vectorised tolerance model (analysis.params) both call.

    .. math:: \text{code} = \begin{cases} 1 & i_{reg} > i_{limit} + tol \\ 2 & i_{reg} < -tol \\ 0 &
              \text{otherwise} \end{cases}

    Parameters
    ----------
    i_regulating : numpy.ndarray
        What the regulator would deliver holding its set-point, per sample. [A]
    i_limit : numpy.ndarray
        The source's output limit per sample (or one for all). [A]
    tol : numpy.ndarray or float
        Widens the regulating range against rounding. [A]

    Returns
    -------
    numpy.ndarray
        The state code per sample (integers). [–]

    Notes
    -----
    As :func:`charging_source_state`, elementwise.

    References
    ----------
    .. [1] ISO 8854:2012, Road vehicles — Alternators with regulators — Test methods and general
       requirements (output current characteristic).

    Examples
    --------
    >>> charging_source_codes(np.array([120.0, -1.0, 50.0]), np.array(100.0)).tolist()
    [1, 2, 0]
    """
    return np.where(i_regulating > i_limit + tol, 1, np.where(i_regulating < -tol, 2, 0))


@dataclass(frozen=True)
class LimitedSource:
    """A charging source: set-point ``v_set`` [V] behind ``r_source`` [Ω] until it delivers
    ``i_limit`` [A], then a current source of ``i_limit``; it cannot take current back (its rectifier
    blocks). Connected between ``node`` and the reference."""

    node: int
    v_set: float
    r_source: float
    i_limit: float


@dataclass(frozen=True)
class LimitedSolution:
    """A DC solution with the state of the limited source: ``mode`` is ``"regulating"``,
    ``"current-limited"`` or ``"off"``; ``i_source`` [A] is its output current."""

    dc: DCSolution
    mode: str
    i_source: float


def solve_with_limited_source(
    n_nodes: int, resistors: Branches, vsources: Branches, isources: Branches, source: LimitedSource
) -> LimitedSolution:
    r"""Solve a network that also holds one current-limited charging source (an alternator).

    The source's output is I = clamp((v_set − V)/r_source, 0, i_limit), where V is its node voltage.
    That characteristic is monotone and the rest of the network is linear and passive as seen from
    the node, so there is exactly one consistent operating point. It is found by solving the linear
    network in each of the three states in turn and keeping the one whose result lies inside that
    state's own range (a regulating solution with 0 ≤ I ≤ i_limit, a limited one whose node voltage
    leaves (v_set − V)/r_source ≥ i_limit, an off one with V ≥ v_set).

    .. math:: I_{src} = \operatorname{clamp}\bigl((v_{set} - V_{node})/r_{source},\; 0,\; i_{limit}\bigr)

    Parameters
    ----------
    n_nodes : int
        Number of nodes including the reference node 0. [–]
    resistors : Branches
        Resistances, each > 0. [Ω]
    vsources : Branches
        Ideal voltage sources, V(b) − V(a) = value. [V]
    isources : Branches
        Ideal current sources, driving value from a to b. [A]
    source : LimitedSource
        The charging source (set-point [V], source resistance [Ω], limit [A]). [–]

    Returns
    -------
    LimitedSolution
        The DC solution, the source's state and its current [A].

    Notes
    -----
    One source only; the states are decided by :func:`charging_source_state`.

    References
    ----------
    .. [1] C.-W. Ho, A. E. Ruehli, P. A. Brennan (1975), see the module references.
    .. [2] ISO 8854:2012 (the alternator's output characteristic).

    Examples
    --------
    A 28 V set-point behind 10 mΩ, limited at 100 A, into 0.2 Ω: regulating would need 138 A, so it
    delivers 100 A and the node sits at 20 V.

    >>> r = Branches.of([(1, 0, 0.2)])
    >>> none = Branches.of([])
    >>> s = solve_with_limited_source(2, r, none, none, LimitedSource(1, 28.0, 0.01, 100.0))
    >>> s.mode, round(float(s.dc.v[1]), 9)
    ('current-limited', 20.0)
    """

    def with_sources(extra_r: list[tuple[int, int, float]], extra_i: list[tuple[int, int, float]]):
        res = Branches(
            np.concatenate([resistors.a, [e[0] for e in extra_r]]).astype(np.int64),
            np.concatenate([resistors.b, [e[1] for e in extra_r]]).astype(np.int64),
            np.concatenate([resistors.value, [e[2] for e in extra_r]]),
        )
        cur = Branches(
            np.concatenate([isources.a, [e[0] for e in extra_i]]).astype(np.int64),
            np.concatenate([isources.b, [e[1] for e in extra_i]]).astype(np.int64),
            np.concatenate([isources.value, [e[2] for e in extra_i]]),
        )
        return solve_mna(n_nodes, res, vsources, cur)

    s = source
    # Regulating: Norton form of v_set behind r_source.
    dc = with_sources([(0, s.node, s.r_source)], [(0, s.node, s.v_set / s.r_source)])
    i = (s.v_set - dc.v[s.node]) / s.r_source
    state = charging_source_state(float(i), s.i_limit, 1e-9 * max(1.0, s.i_limit))
    if state == "regulating":
        return LimitedSolution(dc, "regulating", float(i))
    if state == "current-limited":
        dc = with_sources([], [(0, s.node, s.i_limit)])
        return LimitedSolution(dc, "current-limited", float(s.i_limit))
    dc = with_sources([], [])
    return LimitedSolution(dc, "off", 0.0)
