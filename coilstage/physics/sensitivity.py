r"""Exact sensitivities of a linear network solve, and the worst-case arithmetic built on them.

For a linear system :math:`A(p)\,x = b(p)` (a modified-nodal network: x holds the node voltages and
the currents of the voltage sources), differentiating gives the *direct* sensitivity

.. math::

   \frac{\partial x}{\partial p} = -A^{-1}\Bigl(\frac{\partial A}{\partial p}\,x
   - \frac{\partial b}{\partial p}\Bigr)

(one solve per parameter), and for a scalar read-out :math:`y = c^T x` the *adjoint* sensitivity

.. math::

   A^T \hat{x} = c, \qquad \frac{dy}{dp} = \hat{x}^T\Bigl(\frac{\partial b}{\partial p}
   - \frac{\partial A}{\partial p}\,x\Bigr)

(one extra solve per read-out, whatever the number of parameters). Both re-use one factorisation of
A, and both take many right-hand sides at once (columns of ``x``: one per sample or per case).

Element forms of the adjoint, with x and x̂ the node potentials of the solution and of the adjoint
solution (for the MNA stamps of :mod:`coilstage.physics.network`):

=================================================  ==========================================
parameter                                          dy/dp
=================================================  ==========================================
resistance R between nodes i, j                    (x_i − x_j)(x̂_i − x̂_j) / R²
conductance g = 1/R between i, j                   −(x_i − x_j)(x̂_i − x̂_j)
voltage source E on branch row k                   x̂_k
current source J driving from node i into node j    x̂_j − x̂_i
=================================================  ==========================================

A nonlinear element (the current-limited alternator) enters through its Jacobian at the solution,
which is the matrix of the linear network in the element's present state: the sensitivities hold
inside that state (implicit-function theorem) and must be re-checked across a change of state.

References
----------
.. [1] S. W. Director, R. A. Rohrer, "The generalized adjoint network and network sensitivities",
   IEEE Trans. Circuit Theory 16(3):318–323, 1969.
.. [2] J. Vlach, K. Singhal, *Computer Methods for Circuit Analysis and Design*, 2nd ed., Van
   Nostrand Reinhold, 1994, chapter on sensitivity analysis (adjoint network).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

#: Above this many unknowns the factorisation is a sparse LU (it costs an import of scipy.sparse).
SPARSE_THRESHOLD = 150


class Factors:
    """One factorisation of a square matrix A, solving ``A x = b`` and ``Aᵀ x̂ = c`` for one
    right-hand side or a matrix of them (one per column).

    Dense systems (up to :data:`SPARSE_THRESHOLD` unknowns) keep A⁻¹ (numpy only: a plain check must
    not import scipy.linalg); larger ones a sparse LU (``scipy.sparse.linalg.splu``, which solves
    with Aᵀ from the same factors)."""

    def __init__(self, a: np.ndarray | Sequence | object):
        if hasattr(a, "tocsc"):  # a scipy.sparse matrix
            from scipy.sparse.linalg import splu

            self.size = a.shape[0]
            try:
                self._lu = splu(a.tocsc())
            except RuntimeError:
                raise np.linalg.LinAlgError("singular network") from None
            self._inv = None
            return
        m = np.asarray(a, dtype=float)
        if m.ndim != 2 or m.shape[0] != m.shape[1]:
            raise ValueError("A must be a square matrix")
        self.size = m.shape[0]
        if self.size > SPARSE_THRESHOLD:
            from scipy.sparse import csc_matrix
            from scipy.sparse.linalg import splu

            try:
                self._lu = splu(csc_matrix(m))
            except RuntimeError:
                raise np.linalg.LinAlgError("singular network") from None
            self._inv = None
        else:
            self._inv = np.linalg.inv(m)
            self._lu = None

    def solve(self, b: np.ndarray) -> np.ndarray:
        """x with ``A x = b`` (``b`` of shape (n,) or (n, k))."""
        if self._inv is not None:
            return self._inv @ b
        return self._lu.solve(np.asarray(b, dtype=float))

    def solve_transposed(self, c: np.ndarray) -> np.ndarray:
        """x̂ with ``Aᵀ x̂ = c`` (``c`` of shape (n,) or (n, k))."""
        if self._inv is not None:
            return self._inv.T @ c
        return self._lu.solve(np.asarray(c, dtype=float), trans="T")


def _as_factors(a) -> Factors:
    return a if isinstance(a, Factors) else Factors(a)


def direct_sensitivities(a, x: np.ndarray, d_a: np.ndarray, d_b: np.ndarray | None = None) -> np.ndarray:
    r"""∂x/∂p of the solution of ``A x = b`` for every parameter (direct method).

    .. math::

       \frac{\partial x}{\partial p_k} = -A^{-1}\Bigl(\frac{\partial A}{\partial p_k} x
       - \frac{\partial b}{\partial p_k}\Bigr)

    Parameters
    ----------
    a : array (n, n) or Factors
        The system matrix, or its factorisation.
    x : array (n,) or (n, s)
        The solution, one column per right-hand side (sample).
    d_a : array (P, n, n)
        ∂A/∂p for each of P parameters.
    d_b : array (P, n) or (P, n, s), optional
        ∂b/∂p for each parameter (per sample where 3-D); zero if omitted.

    Returns
    -------
    array (P, n) or (P, n, s)
        ∂x/∂p in the units of x per unit of p.
    """
    f = _as_factors(a)
    x = np.asarray(x, dtype=float)
    d_a = np.asarray(d_a, dtype=float)
    rhs = -np.einsum("pij,j...->pi...", d_a, x)
    if d_b is not None:
        d_b = np.asarray(d_b, dtype=float)
        rhs = rhs + (d_b if d_b.ndim == rhs.ndim else d_b.reshape(d_b.shape + (1,) * (rhs.ndim - d_b.ndim)))
    p, n = rhs.shape[:2]
    flat = np.moveaxis(rhs, 0, 1).reshape(n, -1)  # (n, P·s): one multi-column solve
    out = f.solve(flat).reshape((n, p, *rhs.shape[2:]))
    return np.moveaxis(out, 1, 0)


def adjoint_solution(a, c: np.ndarray) -> np.ndarray:
    """x̂ with ``Aᵀ x̂ = c`` for one read-out (``c`` of shape (n,)) or several ((n, K))."""
    return _as_factors(a).solve_transposed(np.asarray(c, dtype=float))


def adjoint_sensitivities(
    a, x: np.ndarray, c: np.ndarray, d_a: np.ndarray, d_b: np.ndarray | None = None
) -> np.ndarray:
    r"""dy/dp of read-outs ``y = cᵀ x`` for every parameter (adjoint method: one solve per read-out).

    .. math::

       A^T\hat{x} = c,\qquad \frac{dy}{dp_k} = \hat{x}^T\Bigl(\frac{\partial b}{\partial p_k}
       - \frac{\partial A}{\partial p_k}x\Bigr)

    Parameters
    ----------
    a : array (n, n) or Factors
    x : array (n,) or (n, s)
        The solution of ``A x = b``, one column per right-hand side.
    c : array (n,) or (n, K)
        The read-out vector(s): e_k for node k, e_i − e_j for a voltage difference, e_row for a
        voltage source's current.
    d_a : array (P, n, n)
    d_b : array (P, n) or (P, n, s), optional

    Returns
    -------
    array
        dy/dp with shape (P,) for one c and one x; (P, K) for K read-outs; (P, s) or (P, K, s) with
        s right-hand sides.
    """
    f = _as_factors(a)
    x = np.asarray(x, dtype=float)
    c = np.asarray(c, dtype=float)
    xh = f.solve_transposed(c)  # (n,) or (n, K)
    d_a = np.asarray(d_a, dtype=float)
    ax = np.einsum("pij,j...->pi...", d_a, x)  # (P, n) or (P, n, s)
    if d_b is not None:
        d_b = np.asarray(d_b, dtype=float)
        if d_b.ndim < ax.ndim:
            d_b = d_b.reshape(d_b.shape + (1,) * (ax.ndim - d_b.ndim))
        r = d_b - ax
    else:
        r = -ax
    if xh.ndim == 1:
        return np.einsum("i,pi...->p...", xh, r)
    return np.einsum("ik,pi...->pk...", xh, r)


def resistance_sensitivity(
    x: np.ndarray, x_hat: np.ndarray, i: int | np.ndarray, j: int | np.ndarray, r: float | np.ndarray
) -> np.ndarray:
    r"""dy/dR of a resistor between nodes i and j from the solution and the adjoint solution [per Ω].

    .. math:: \frac{dy}{dR} = \frac{(x_i - x_j)(\hat{x}_i - \hat{x}_j)}{R^2}

    Node indices count as in the full node list with 0 the reference (potential 0); ``x`` and
    ``x_hat`` hold the unknowns of the MNA system, whose entry ``k − 1`` is node k. Vectorised over
    many resistors (arrays i, j, r) and over columns of ``x``.

    Examples
    --------
    Worked check: E = 28 V, Rs = 0.05 Ω into RL = 0.5 Ω; y = V_L; x̂_L = Rs‖RL (derived):

    >>> x = np.array([28.0, 28 * 0.5 / 0.55, 28 / 0.55]); xh = np.array([0.0, 0.05 * 0.5 / 0.55, 0.0])
    >>> round(float(resistance_sensitivity(x, xh, 1, 2, 0.05)), 3)
    -46.281
    """
    x = np.asarray(x, dtype=float)
    x_hat = np.asarray(x_hat, dtype=float)
    xz = np.concatenate([np.zeros((1, *x.shape[1:])), x])
    hz = np.concatenate([np.zeros((1, *x_hat.shape[1:])), x_hat])
    i = np.asarray(i)
    j = np.asarray(j)
    r = np.asarray(r, dtype=float)
    dv = xz[i] - xz[j]
    dh = hz[i] - hz[j]
    if dv.ndim > r.ndim:
        r = r.reshape(r.shape + (1,) * (dv.ndim - r.ndim))
    return dv * dh / (r * r)


def central_difference(
    func: Callable[[np.ndarray], np.ndarray | float], p: np.ndarray, step: float | np.ndarray = 1e-5
) -> np.ndarray:
    r"""∂f/∂p by central differences, one pair of evaluations per parameter.

    .. math:: \frac{\partial f}{\partial p_k} \approx \frac{f(p + h_k e_k) - f(p - h_k e_k)}{2 h_k}

    ``step`` is relative to |p_k| (absolute where p_k is 0 or below 1e-30). Truncation error O(h²), round-off
    about ε|f|/h: the default 1e-5 is near ε^(1/3), where the two balance. Used for what has no
    exact derivative (coupled heating, a change of source state) and to check the exact ones.

    Returns
    -------
    array (P,) + shape of f
    """
    p = np.asarray(p, dtype=float)
    h = np.asarray(step, dtype=float) * np.where(np.abs(p) > 1e-30, np.abs(p), 1.0)
    h = np.broadcast_to(h, p.shape)
    out = []
    for k in range(p.size):
        e = np.zeros_like(p)
        e.flat[k] = h.flat[k]
        out.append((np.asarray(func(p + e), dtype=float) - np.asarray(func(p - e), dtype=float)) / (2 * h.flat[k]))
    return np.array(out)


@dataclass(frozen=True)
class WorstCase:
    """A read-out's linearised spread over a tolerance box: nominal y, the linear worst-case shift
    (Σ|∂y/∂p|·Δp), the root-sum-square shift, each parameter's term (∂y/∂p·Δp, signed), the
    parameters in order of their term's size, and the vertex (each p at the end that raises y)."""

    nominal: float
    linear: float
    rss: float
    terms: np.ndarray
    order: np.ndarray
    vertex_signs: np.ndarray


def linear_worst_case(nominal: float, gradient: np.ndarray, half_width: np.ndarray) -> WorstCase:
    r"""Linear worst case and RSS of a read-out from its gradient and the tolerance half-widths.

    .. math:: \Delta y_{lin} = \sum_k \left|\frac{\partial y}{\partial p_k}\right| \Delta p_k,\qquad
              \Delta y_{RSS} = \sqrt{\sum_k \left(\frac{\partial y}{\partial p_k}\Delta p_k\right)^2}

    The vertex that maximises y puts every p_k at ``p_k0 + sign(∂y/∂p_k)·Δp_k`` (its negative for
    the minimum); it is the true worst vertex where y is monotone in each parameter over the box,
    which must be confirmed by evaluating it (and the neighbours of a parameter whose sign flips).

    Examples
    --------
    >>> w = linear_worst_case(10.0, np.array([2.0, -0.5, 0.0]), np.array([0.1, 1.0, 5.0]))
    >>> round(w.linear, 3), round(w.rss, 4), w.order.tolist(), w.vertex_signs.tolist()
    (0.7, 0.5385, [1, 0, 2], [1.0, -1.0, 0.0])
    """
    g = np.asarray(gradient, dtype=float)
    dp = np.asarray(half_width, dtype=float)
    terms = g * dp
    a = np.abs(terms)
    return WorstCase(
        float(nominal),
        float(a.sum()),
        float(np.sqrt((terms * terms).sum())),
        terms,
        np.argsort(-a, kind="stable"),
        np.sign(g),
    )


def normalised_sensitivity(y: float | np.ndarray, p: float | np.ndarray, dy_dp: float | np.ndarray):
    r"""Relative sensitivity S = (p/y)·dy/dp [–]: the per-cent change of y per per-cent of p.

    >>> round(float(normalised_sensitivity(25.4545, 0.05, -46.281)), 4)
    -0.0909
    """
    return np.asarray(p) / np.asarray(y) * np.asarray(dy_dp)


def all_vertices(n: int) -> np.ndarray:
    """Every corner of an n-parameter tolerance box as signs (2ⁿ rows of ±1), for brute-force
    confirmation of a sensitivity-directed vertex on a drawing with few parameters.

    >>> all_vertices(2).tolist()
    [[-1.0, -1.0], [-1.0, 1.0], [1.0, -1.0], [1.0, 1.0]]
    """
    if n > 20:
        raise ValueError("more than 2**20 vertices: use the sensitivity-directed vertex")
    idx = np.arange(2**n)[:, None]
    bits = (idx >> np.arange(n - 1, -1, -1)[None, :]) & 1
    return np.where(bits == 1, 1.0, -1.0)


@dataclass(frozen=True)
class VertexResult:
    """The worst vertex found: signs (±1 per parameter), its value, the parameters whose sign at the
    found vertex differs from the seed's (the read-out is not monotone in them over the box: their
    effect changes sign inside it), and the number of evaluations."""

    signs: np.ndarray
    value: float
    not_monotone: tuple[int, ...]
    evaluations: int


def vertex_search(
    func: Callable[[np.ndarray], float],
    nominal: np.ndarray,
    half_width: np.ndarray,
    seed_signs: np.ndarray,
    maximise: bool = True,
    max_passes: int = 20,
) -> VertexResult:
    r"""Worst vertex of a tolerance box, from a seed (the sensitivity signs), confirmed by search.

    Starting at ``nominal + seed_signs·half_width``, flip one parameter at a time to its other end
    while that makes the read-out worse (larger for ``maximise``, else smaller), until no single
    flip does (a local optimum over the vertices, reached in a few passes of n evaluations). Where
    the read-out is monotone in every parameter the seed is already the worst vertex and one pass
    confirms it; where it is not (a battery that passes from charging to discharging, an alternator
    that leaves regulation), the search moves and the parameters it flipped are reported.

    Parameters
    ----------
    func : callable
        Read-out at a parameter vector.
    nominal, half_width : array (n,)
    seed_signs : array (n,)
        ±1 (0 for a parameter without effect: it stays at nominal).
    maximise : bool
    max_passes : int

    Returns
    -------
    VertexResult
    """
    p0 = np.asarray(nominal, dtype=float)
    dp = np.asarray(half_width, dtype=float)
    signs = np.asarray(seed_signs, dtype=float).copy()
    better = (lambda a, b: a > b) if maximise else (lambda a, b: a < b)
    best = float(func(p0 + signs * dp))
    evaluations = 1
    for _ in range(max_passes):
        moved = False
        for k in range(p0.size):
            if dp[k] == 0:
                continue
            trial = signs.copy()
            trial[k] = -1.0 if signs[k] > 0 else 1.0
            v = float(func(p0 + trial * dp))
            evaluations += 1
            if better(v, best):
                signs, best, moved = trial, v, True
        if not moved:
            break
    seed = np.asarray(seed_signs, dtype=float)
    flipped = tuple(int(k) for k in np.flatnonzero((signs != seed) & (seed != 0)))
    return VertexResult(signs, best, flipped, evaluations)
