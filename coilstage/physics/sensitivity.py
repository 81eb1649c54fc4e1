r"""Exact sensitivities of a linear network solve, and the vertices of a tolerance box.

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

from collections.abc import Sequence

import numpy as np

from coilstage.physics.network import PERMC_SPEC

#: Above this many unknowns the factorisation is a sparse LU (it costs an import of scipy.sparse).
SPARSE_THRESHOLD = 150


class Factors:
    """One factorisation of a square matrix A, solving ``A x = b`` and ``Aᵀ x̂ = c`` for one
    right-hand side or a matrix of them (one per column).

    Dense systems (up to :data:`SPARSE_THRESHOLD` unknowns) keep A⁻¹ (numpy only: a plain check must
    not import scipy.linalg); larger ones a sparse LU (``scipy.sparse.linalg.splu``, which solves
    with Aᵀ from the same factors)."""

    def __init__(self, a: np.ndarray | Sequence | object) -> None:
        if hasattr(a, "tocsc"):  # a scipy.sparse matrix
            from scipy.sparse.linalg import splu

            self.size = a.shape[0]
            try:
                self._lu = splu(a.tocsc(), permc_spec=PERMC_SPEC)
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
                self._lu = splu(csc_matrix(m), permc_spec=PERMC_SPEC)
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


def direct_sensitivities(
    a: np.ndarray | Factors, x: np.ndarray, d_a: np.ndarray, d_b: np.ndarray | None = None
) -> np.ndarray:
    r"""∂x/∂p of the solution of ``A x = b`` for every parameter (direct method) [units of x per unit of p].

    .. math::

       \frac{\partial x}{\partial p_k} = -A^{-1}\Bigl(\frac{\partial A}{\partial p_k} x
       - \frac{\partial b}{\partial p_k}\Bigr)

    Parameters
    ----------
    a : array (n, n) or Factors
        The system matrix, or its factorisation (an MNA matrix: conductances, and the ±1 of the
        voltage-source rows). [S, -]
    x : array (n,) or (n, s)
        The solution, one column per right-hand side (sample): node voltages and source currents. [V, A]
    d_a : array (P, n, n)
        ∂A/∂p for each of P parameters. [units of A per unit of p]
    d_b : array (P, n) or (P, n, s), optional
        ∂b/∂p for each parameter (per sample where 3-D); zero if omitted. [units of b per unit of p]

    Returns
    -------
    array (P, n) or (P, n, s)
        ∂x/∂p, one solve with P·s columns on the one factorisation. [units of x per unit of p]

    Notes
    -----
    Exact for a linear system (no truncation error); for a nonlinear element it holds inside the
    element's present state (implicit-function theorem), to be re-checked across a change of state.

    Examples
    --------
    E = 28 V behind Rs = 0.05 Ω into RL = 0.5 Ω (unknowns V1, V_L, I_E); hand-worked closed form
    dV_L/dRs = −E·RL/(Rs + RL)² = −14/0.3025 = −46.281 V/Ω:

    >>> g = 1 / 0.05
    >>> a = np.array([[g, -g, -1.0], [-g, g + 1 / 0.5, 0.0], [1.0, 0.0, 0.0]])
    >>> x = np.linalg.solve(a, np.array([0.0, 0.0, 28.0]))
    >>> u = np.array([1.0, -1.0, 0.0])
    >>> d_a = (-np.outer(u, u) / 0.05**2)[None]  # the resistor's stamp differentiated in R
    >>> round(float(direct_sensitivities(a, x, d_a)[0, 1]), 3)
    -46.281

    References
    ----------
    J. Vlach, K. Singhal, *Computer Methods for Circuit Analysis and Design*, 2nd ed., 1994, the
    chapter on sensitivity analysis [2]_.
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


def adjoint_sensitivities(
    a: np.ndarray | Factors, x: np.ndarray, c: np.ndarray, d_a: np.ndarray, d_b: np.ndarray | None = None
) -> np.ndarray:
    r"""dy/dp of read-outs ``y = cᵀ x`` for every parameter (adjoint method) [units of y per unit of p].

    .. math::

       A^T\hat{x} = c,\qquad \frac{dy}{dp_k} = \hat{x}^T\Bigl(\frac{\partial b}{\partial p_k}
       - \frac{\partial A}{\partial p_k}x\Bigr)

    Parameters
    ----------
    a : array (n, n) or Factors
        The system matrix, or its factorisation (an MNA matrix: conductances, and the ±1 of the
        voltage-source rows). [S, -]
    x : array (n,) or (n, s)
        The solution of ``A x = b``, one column per right-hand side: node voltages and source
        currents. [V, A]
    c : array (n,) or (n, K)
        The read-out vector(s): e_k for node k, e_i − e_j for a voltage difference, e_row for a
        voltage source's current. [-]
    d_a : array (P, n, n)
        ∂A/∂p for each of P parameters. [units of A per unit of p]
    d_b : array (P, n) or (P, n, s), optional
        ∂b/∂p for each parameter (per sample where 3-D); zero if omitted. [units of b per unit of p]

    Returns
    -------
    array
        dy/dp with shape (P,) for one c and one x; (P, K) for K read-outs; (P, s) or (P, K, s) with
        s right-hand sides. [units of y per unit of p]

    Notes
    -----
    One transposed solve per read-out, whatever the number of parameters; exact for a linear system,
    inside the present state of a nonlinear element (as :func:`direct_sensitivities`).

    Examples
    --------
    The series circuit of :func:`direct_sensitivities`, read at the load node: the same −46.281 V/Ω
    (hand-worked closed form −E·RL/(Rs + RL)²):

    >>> g = 1 / 0.05
    >>> a = np.array([[g, -g, -1.0], [-g, g + 1 / 0.5, 0.0], [1.0, 0.0, 0.0]])
    >>> x = np.linalg.solve(a, np.array([0.0, 0.0, 28.0]))
    >>> u = np.array([1.0, -1.0, 0.0])
    >>> dy = adjoint_sensitivities(a, x, np.array([0.0, 1.0, 0.0]), (-np.outer(u, u) / 0.05**2)[None])
    >>> round(float(dy[0]), 3)
    -46.281

    References
    ----------
    S. W. Director, R. A. Rohrer, "The generalized adjoint network and network sensitivities",
    IEEE Trans. Circuit Theory 16(3):318–323, 1969 [1]_.
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


def all_vertices(n: int) -> np.ndarray:
    r"""Every corner of an n-parameter tolerance box as signs, 2ⁿ rows of ±1 [-].

    .. math:: s_{r,k} = 2\,\Bigl\lfloor \frac{r}{2^{\,n-1-k}} \Bigr\rfloor \bmod 2 - 1,
              \qquad r = 0 \dots 2^n - 1

    Parameters
    ----------
    n : int
        Number of parameters, at most 20. [-]

    Returns
    -------
    array (2ⁿ, n)
        Row r holds the bits of r (most significant first) as −1 / +1. [-]

    Notes
    -----
    For brute-force confirmation of a sensitivity-directed vertex on a drawing with few parameters;
    more than 20 parameters (a million rows) is refused with ValueError.

    Examples
    --------
    The four corners of a square, counted in binary (00, 01, 10, 11):

    >>> all_vertices(2).tolist()
    [[-1.0, -1.0], [-1.0, 1.0], [1.0, -1.0], [1.0, 1.0]]

    References
    ----------
    The vertex method of worst-case analysis over a tolerance box: Vlach & Singhal, 2nd ed., 1994,
    the chapter on sensitivity and tolerance analysis [2]_.
    """
    if n > 20:
        raise ValueError("more than 2**20 vertices: use the sensitivity-directed vertex")
    idx = np.arange(2**n)[:, None]
    bits = (idx >> np.arange(n - 1, -1, -1)[None, :]) & 1
    return np.where(bits == 1, 1.0, -1.0)
