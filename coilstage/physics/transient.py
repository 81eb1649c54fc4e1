r"""Switching of RL coil stages: the exact solution of a linear RL network, and suppression decay.

A harness with its stages switched on is a resistive network with one inductance per stage. With
each stage current i_k as a state, the network (fed by its sources) gives the stage voltages as an
affine map of the currents, so

.. math:: L\,\frac{di}{dt} = c - K\,i,

with L the diagonal of stage inductances, K = PᵀZP + R symmetric positive definite (Z the network's
nodal impedance matrix, reciprocal, so symmetric; R the stages' own resistances) and c the stage
voltages the sources would drive with no stage current. Scaling by S = L^{1/2} makes the state
matrix symmetric, B = −L^{-1/2} K L^{-1/2} = U Λ Uᵀ, and the exact solution is

.. math:: i(t) = i_∞ + L^{-1/2} U e^{Λt} Uᵀ L^{1/2} (i_0 − i_∞), \qquad i_∞ = K^{-1} c.

References
----------
.. [1] C.-T. Chen, *Linear System Theory and Design*, 3rd ed., Oxford University Press, 1999,
   §4.2 (solution of x' = Ax + b by the matrix exponential; diagonalisation).
.. [2] Any circuits text for the single RL branch: i(t) = (V/R)(1 − e^{−tR/L}), τ = L/R.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

#: Time for a first-order rise to reach 95 % of its final value, in time constants: ln 20.
LN20 = math.log(20.0)


def t95(tau: float) -> float:
    r"""Time to 95 % of the final current of a first-order rise [s].

    .. math:: i(t) = I_\infty (1 - e^{-t/\tau}) = 0.95\,I_\infty \iff t_{95} = \tau \ln 20 \approx 2.996\,\tau

    Parameters
    ----------
    tau : float
        Time constant L/R of the rise. [s]

    Returns
    -------
    float
        Time to 95 % of the final value. [s]

    Notes
    -----
    A single time constant from zero current; a stage in a network with others has several (the
    switching analysis finds its crossing on the network's exact solution instead).

    References
    ----------
    .. [1] C. K. Alexander, M. N. O. Sadiku, *Fundamentals of Electric Circuits*, 5th ed., McGraw-Hill,
       2013, §7.6 (step response of an RL circuit).

    Examples
    --------
    >>> round(t95(0.2), 4)
    0.5991
    """
    return tau * LN20


def time_constant_from_t95(t95_time: float) -> float:
    r"""The time constant of a first-order rise that reaches 95 % of its final value in ``t95_time``
    [s]: the inverse of :func:`t95`.

    .. math:: \tau = \frac{T_{0.95}}{\ln 20}

    Parameters
    ----------
    t95_time : float
        Time to 95 % of the final value. [s]

    Returns
    -------
    float
        Time constant L/R. [s]

    Notes
    -----
    IEC 60947-5-1 states the DC-13 test load by its T0.95 (6 ms per watt of U_e·I_e, capped at
    300 ms); the switching rules compare time constants L/R.

    References
    ----------
    .. [1] C. K. Alexander, M. N. O. Sadiku, *Fundamentals of Electric Circuits*, 5th ed., McGraw-Hill,
       2013, §7.6 (step response of an RL circuit).

    Examples
    --------
    >>> round(time_constant_from_t95(0.3), 5)
    0.10014
    """
    return t95_time / LN20


@dataclass(frozen=True)
class Decay:
    """A stage current decaying through its suppressor after its contact opens.

    ``t_zero`` [s] is the time to zero current (``inf`` for a pure exponential), ``t_release`` [s]
    the time to ``fraction`` of the break current, ``e_suppressor`` and ``e_coil`` [J] the energy
    taken by the suppressor and by the coil's own resistance (their sum is ½·L·I0²).
    """

    i0: float
    tau: float
    t_zero: float
    t_release: float
    fraction: float
    e_suppressor: float
    e_coil: float
    u_suppressor_peak: float  # voltage across the suppressor (and the coil) at the break [V]


def clamp_decay(
    i0: float, r: float, inductance: float, u0: float, r_series: float = 0.0, fraction: float = 0.05
) -> tuple[Decay, Callable[[float | np.ndarray], np.ndarray]]:
    r"""Decay of a stage current through a clamp after its contact opens.

    The suppressor across the coil holds a voltage U0 + R_s·i (a diode: U0 = U_F; a diode and zener:
    U0 = U_Z + U_F; a TVS or varistor: its clamp voltage; a diode and resistor: U0 = U_F, R_s = R).
    With R_t = R + R_s and τ' = L/R_t:

    .. math:: i(t) = \left(I_0 + \frac{U_0}{R_t}\right) e^{-t/τ'} - \frac{U_0}{R_t}, \qquad
              t_0 = τ' \ln\left(1 + \frac{I_0 R_t}{U_0}\right)

    The suppressor takes U0·∫i dt + R_s·∫i² dt, with ∫i dt = τ'I0 − (U0/R_t)t0 and, by the energy
    balance ½LI0² = R_t∫i² + U0∫i, ∫i² dt = (½LI0² − U0∫i)/R_t. For R_s = 0 this is the usual
    E_c = U_c(τI0 − U_c t0/R).

    Parameters
    ----------
    i0 : float
        Current at the break [A].
    r : float
        Coil (stage) resistance [Ω].
    inductance : float
        Stage inductance [H].
    u0 : float
        Constant part of the suppressor voltage [V]; 0 for a pure resistor path.
    r_series : float
        Resistance in the suppressor path [Ω].
    fraction : float
        The release time is the time to ``fraction``·I0 [–].

    Returns
    -------
    (Decay, callable)
        The figures (times [s], energies [J], peak suppressor voltage [V]) and i(t) [A].

    Notes
    -----
    A linear coil (no saturation, no eddy currents in the iron) and a clamp of constant voltage plus
    a series resistance; with U0 = 0 and R_s = 0 the decay is the coil's own exponential, which has
    no end (t0 = inf): an unsuppressed break is an arc at the contact, not this model.

    References
    ----------
    .. [1] First-order circuit with a constant source: C. K. Alexander, M. N. O. Sadiku, *Fundamentals
       of Electric Circuits*, 5th ed., McGraw-Hill, 2013, §7.6 (step response of an RL circuit); the
       clamp energy follows from the energy balance above.

    Examples
    --------
    A 0.1 H, 0.6 Ω stage breaking 40 A into a diode (U0 = 1 V): t0 = τ' ln(1 + I0 R / U0).

    >>> d, i = clamp_decay(40.0, 0.6, 0.1, 1.0)  # t0 = (0.1/0.6)·ln 25 = 0.5365 s; ½LI0² = 80 J
    >>> round(d.t_zero, 4), round(d.e_suppressor + d.e_coil, 6)
    (0.5365, 80.0)
    """
    rt = r + r_series
    tau = inductance / rt
    a = u0 / rt
    w = 0.5 * inductance * i0 * i0
    if u0 > 0:
        t0 = tau * math.log(1 + i0 / a)
        int_i = tau * i0 - a * t0
        t_rel = tau * math.log((i0 + a) / (fraction * i0 + a))
    else:
        t0 = math.inf
        int_i = tau * i0
        t_rel = tau * math.log(1 / fraction)
    int_i2 = (w - u0 * int_i) / rt
    e_sup = u0 * int_i + r_series * int_i2
    e_coil = r * int_i2

    def current(t: float | np.ndarray) -> np.ndarray:
        t = np.asarray(t, dtype=float)
        out = (i0 + a) * np.exp(-t / tau) - a
        return np.where((t >= 0) & (t < t0), out, np.where(t < 0, i0, 0.0))

    return Decay(i0, tau, t0, t_rel, fraction, e_sup, e_coil, u0 + r_series * i0), current


@dataclass(frozen=True)
class LinearRL:
    """The RL network ``L di/dt = c − K i`` (see the module docstring)."""

    inductance: np.ndarray  # (n,) [H]
    k: np.ndarray  # (n, n) [Ω], symmetric positive definite
    c: np.ndarray  # (n,) [V]

    def steady_state(self) -> np.ndarray:
        """Final currents i∞ = K⁻¹c [A]."""
        return np.linalg.solve(self.k, self.c)

    def solution(self, i0: np.ndarray) -> ExactSolution:
        """The exact solution from the initial currents ``i0`` [A]."""
        s = np.sqrt(self.inductance)
        b = -(self.k / s[:, None]) / s[None, :]
        b = 0.5 * (b + b.T)  # symmetric by reciprocity; remove rounding
        lam, u = np.linalg.eigh(b)
        i_inf = self.steady_state()
        w = u.T @ (s * (np.asarray(i0, float) - i_inf))
        return ExactSolution(i_inf, lam, (u / s[:, None]), w)


@dataclass(frozen=True)
class ExactSolution:
    """i(t) = i∞ + Φ (e^{λt} ∘ w), Φ = L^{-1/2} U: evaluates at any times in one product."""

    i_inf: np.ndarray
    lam: np.ndarray  # eigenvalues [1/s], all < 0
    phi: np.ndarray  # (n, n)
    w: np.ndarray  # (n,)

    def at(self, t: float | np.ndarray) -> np.ndarray:
        """Currents at times ``t`` [s] (0 = start of the segment): shape (len(t), n)."""
        t = np.atleast_1d(np.asarray(t, dtype=float))
        return self.i_inf[None, :] + (np.exp(np.outer(t, self.lam)) * self.w[None, :]) @ self.phi.T

    def linear(self, g: np.ndarray, h: float, t: float | np.ndarray) -> np.ndarray:
        """g·i(t) + h at times ``t``, for any linear read-out g of the currents (bus voltage …)."""
        t = np.atleast_1d(np.asarray(t, dtype=float))
        return g @ self.i_inf + h + np.exp(np.outer(t, self.lam)) @ (self.w * (g @ self.phi))

    def component(self, k: int, t: float) -> float:
        """Current ``k`` at one time ``t`` [s] (one row of :meth:`at`, in O(n))."""
        return float(self.i_inf[k] + self.phi[k] @ (np.exp(self.lam * t) * self.w))

    def linear_many(self, g: np.ndarray, h: np.ndarray, t: float | np.ndarray) -> np.ndarray:
        """Several read-outs at once: ``g`` (k, n), ``h`` (k,); returns shape (len(t), k), column j
        equal to ``linear(g[j], h[j], t)`` (one table of exponentials serves them all)."""
        t = np.atleast_1d(np.asarray(t, dtype=float))
        g = np.atleast_2d(g)
        return (g @ self.i_inf + h)[None, :] + np.exp(np.outer(t, self.lam)) @ (self.w[:, None] * (self.phi.T @ g.T))

    @property
    def slowest(self) -> float:
        """The slowest time constant of the network [s]."""
        return float(-1.0 / self.lam.max())
