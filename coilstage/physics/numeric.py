"""Small numerical helpers that keep heavy imports out of a plain ``coilstage check`` run."""

from __future__ import annotations

import math
from collections.abc import Callable


def bracketed_root(f: Callable[[float], float], a: float, b: float, xtol: float = 1e-13, maxiter: int = 200) -> float:
    """A root of ``f`` in [a, b], where f(a) and f(b) differ in sign: the Illinois variant of regula
    falsi, which keeps the bracket (like bisection) and converges superlinearly.

    References
    ----------
    .. [1] M. Dowell, P. Jarratt, "A modified regula falsi method for computing the root of an
       equation", BIT 11:168-174, 1971.

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
