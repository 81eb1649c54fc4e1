"""Small numerical helpers that keep heavy imports out of a plain ``coilstage check`` run."""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # numpy is imported where it is used (the annotations are only names here)
    import numpy as np


def bracketed_root(f: Callable[[float], float], a: float, b: float, xtol: float = 1e-13, maxiter: int = 200) -> float:
    r"""A root of ``f`` in [a, b], where f(a) and f(b) differ in sign: the Illinois variant of regula
    falsi, which keeps the bracket (like bisection) and converges superlinearly.

    .. math:: c = b - f(b)\,\frac{b - a}{f(b) - f(a)},

    with the retained end's function value halved whenever the same end is kept twice in a row.

    Parameters
    ----------
    f : callable
        The function, of one float in the unit of ``a`` and ``b`` [x]; any unit of its own [f].
    a : float
        One end of the bracket [x].
    b : float
        The other end [x].
    xtol : float
        Absolute tolerance on the root [x].
    maxiter : int
        Most iterations before it gives up [–].

    Returns
    -------
    float
        The root, within ``xtol`` [x].

    Notes
    -----
    Needs f(a)·f(b) ≤ 0 (raises ValueError otherwise); any continuous f: the bracket always holds a
    root, so it cannot diverge.

    References
    ----------
    .. [1] M. Dowell, P. Jarratt, "A modified regula falsi method for computing the root of an
       equation", BIT 11:168-174, 1971.

    Examples
    --------
    >>> round(bracketed_root(lambda x: x * x - 2.0, 0.0, 2.0), 12)
    1.414213562373
    """
    fa, fb = f(a), f(b)
    if fa == 0:
        return a
    if fb == 0:
        return b
    if (fa > 0) == (fb > 0):
        raise ValueError("f(a) and f(b) must differ in sign")
    side = 0
    c = a
    for _ in range(maxiter):
        c = (a * fb - b * fa) / (fb - fa)
        if not (min(a, b) < c < max(a, b)):
            c = 0.5 * (a + b)
        fc = f(c)
        if fc == 0 or abs(b - a) < xtol + 4e-16 * abs(c):
            return c
        if (fc > 0) == (fb > 0):
            b, fb = c, fc
            if side == -1:
                fa *= 0.5
            side = -1
        else:
            a, fa = c, fc
            if side == 1:
                fb *= 0.5
            side = 1
    return c if math.isfinite(c) else 0.5 * (a + b)


# Dormand–Prince 5(4) coefficients (Dormand & Prince 1980; Hairer, Nørsett & Wanner, Solving ODEs I,
# Table 5.2).
_C = (0.0, 1 / 5, 3 / 10, 4 / 5, 8 / 9, 1.0, 1.0)
_A = (
    (),
    (1 / 5,),
    (3 / 40, 9 / 40),
    (44 / 45, -56 / 15, 32 / 9),
    (19372 / 6561, -25360 / 2187, 64448 / 6561, -212 / 729),
    (9017 / 3168, -355 / 33, 46732 / 5247, 49 / 176, -5103 / 18656),
    (35 / 384, 0.0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84),
)
_B = (35 / 384, 0.0, 500 / 1113, 125 / 192, -2187 / 6784, 11 / 84, 0.0)
_E = (71 / 57600, 0.0, -71 / 16695, 71 / 1920, -17253 / 339200, 22 / 525, -1 / 40)  # b - b*


def integrate_dopri(
    f: Callable[[float, np.ndarray], np.ndarray],
    t0: float,
    t1: float,
    y0: np.ndarray | Sequence[float],
    rtol: float = 1e-6,
    atol: float = 1e-6,
    h0: float | None = None,
    max_step: float = float("inf"),
    max_steps: int = 100_000,
    source: str = "integration",
) -> tuple[list[float], list[np.ndarray]]:
    r"""Integrate y' = f(t, y) from t0 to t1 with the adaptive Dormand–Prince 5(4) pair.

    .. math:: y_{n+1} = y_n + h \sum_i b_i k_i,\qquad
              \mathrm{err} = h \sum_i (b_i - b^*_i) k_i,\qquad
              h_{new} = h \cdot \min(5, \max(0.2, 0.9\,\|\mathrm{err}\|^{-1/5}))

    Error control as in Hairer, Nørsett & Wanner II.4 (mixed absolute/relative norm, safety 0.9, step
    ratio 0.2-5). Used for the thermal system of a duty: smooth, mildly stiff at most, and it keeps
    scipy.integrate (about 0.8 s to import) off the path of a plain ``coilstage check``.

    Parameters
    ----------
    f : callable
        The right-hand side f(t, y) [y/s].
    t0 : float
        Start time [s].
    t1 : float
        End time [s].
    y0 : array
        Initial state [y].
    rtol : float
        Relative tolerance per step [–].
    atol : float
        Absolute tolerance per step [y].
    h0 : float, optional
        First trial step (None: chosen from the tolerances) [s].
    max_step : float
        Largest step [s].
    max_steps : int
        Most trial steps before it gives up [–].
    source : str
        Name of the integration in an error message [–].

    Returns
    -------
    (ts, ys)
        The accepted points (lists; ys[k] a numpy array), t1 included [s], [y].

    Notes
    -----
    Explicit: for non-stiff or mildly stiff systems (the windings' and cables' heating, time
    constants seconds to hours). Checked against scipy.integrate.solve_ivp in the tests.

    Raises
    ------
    coilstage.errors.AnalysisError
        (named ``source``) when the state or its derivative becomes non-finite, when the step size
        falls below the resolution of t, or after ``max_steps`` trial steps: bounded work on any input.

    References
    ----------
    .. [1] J. R. Dormand, P. J. Prince, "A family of embedded Runge-Kutta formulae", J. Comput. Appl.
       Math. 6(1):19-26, 1980.
    .. [2] E. Hairer, S. P. Nørsett, G. Wanner, *Solving Ordinary Differential Equations I*, 2nd ed.,
       Springer, 1993, §II.4 (step size control) and Table 5.2.

    Examples
    --------
    >>> import math
    >>> ts, ys = integrate_dopri(lambda t, y: -y, 0.0, 1.0, [1.0], rtol=1e-10, atol=1e-12)
    >>> bool(abs(ys[-1][0] - math.exp(-1.0)) < 1e-9)
    True
    """
    import numpy as np

    from coilstage.errors import AnalysisError

    t = float(t0)
    y = np.asarray(y0, dtype=float).copy()
    ts, ys = [t], [y.copy()]
    if t1 <= t0:
        return ts, ys
    k1 = np.asarray(f(t, y), dtype=float)
    if not (np.all(np.isfinite(y)) and np.all(np.isfinite(k1))):
        raise AnalysisError(source, f"non-finite state or rate at the start (t = {t:g} s)")
    if h0 is None:
        scale = atol + rtol * np.abs(y)
        d0 = np.sqrt(np.mean((y / scale) ** 2))
        d1 = np.sqrt(np.mean((k1 / scale) ** 2))
        h0 = 0.01 * d0 / d1 if d0 > 1e-5 and d1 > 1e-5 else 1e-3
    h = min(h0, t1 - t0, max_step)
    for _ in range(max_steps):
        if t >= t1:
            break
        h = min(h, t1 - t, max_step)
        if h <= 1e-14 * max(1.0, abs(t)):
            raise AnalysisError(
                source, f"the step size fell to {h:.3g} s at t = {t:g} s (a stiff or non-finite rate of change)"
            )
        k = [k1]
        for i in range(1, 7):
            yi = y + h * sum(a * kk for a, kk in zip(_A[i], k, strict=False))
            k.append(np.asarray(f(t + _C[i] * h, yi), dtype=float))
        y_new = y + h * sum(b * kk for b, kk in zip(_B, k, strict=True))
        err = h * sum(e * kk for e, kk in zip(_E, k, strict=True))
        scale = atol + rtol * np.maximum(np.abs(y), np.abs(y_new))
        en = float(np.sqrt(np.mean((err / scale) ** 2))) if len(y) else 0.0
        if en <= 1.0:
            t = t + h if t + h < t1 - 1e-12 * max(1.0, abs(t1)) else t1
            y = y_new
            k1 = k[6]  # first-same-as-last
            if not (np.all(np.isfinite(y)) and np.all(np.isfinite(k1))):
                raise AnalysisError(source, f"the state became non-finite at t = {t:g} s")
            ts.append(t)
            ys.append(y.copy())
        fac = 0.9 * en ** (-0.2) if en > 0 else 5.0
        h = h * min(5.0, max(0.2, fac))
    else:
        if t < t1:
            raise AnalysisError(source, f"the step budget of {max_steps} steps ran out at t = {t:g} s of {t1:g} s")
    return ts, ys
