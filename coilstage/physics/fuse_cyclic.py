r"""Cyclic heating of a fuse element: a first-order thermal model over repeated on-periods.

The element is one thermal node: heat capacity C, resistance R_e, thermal resistance R_th to its
surroundings, temperature rise θ above them,

.. math:: C\,\frac{dθ}{dt} = I^2 R_e - \frac{θ}{R_{th}}, \qquad τ = R_{th} C .

It melts at the rise θ_m. The smallest current that melts it at all is
I_min = √(θ_m / (R_e R_th)), so every figure can be written as a share of the melting rise,
θ/θ_m, with the steady share of a current I equal to (I/I_min)². From cold, a current I melts the
element after

.. math:: t(I) = -τ \ln\!\left(1 - (I_{min}/I)^2\right),

so each point of the fuse's melting (time-current) curve gives τ, and so does its adiabatic melting
integral: for short times t(I) → τ (I_min/I)², i.e. I²t_melt = τ·I_min².

Periodic duty (on for t_on at I, off for t_off, period T = t_on + t_off), from cold, cycle n:

.. math::

    θ_{max,n} = θ_{ss}\left(1 - a_{on}\right)\frac{1 - q^{n}}{1 - q}, \qquad
    a_{on} = e^{-t_{on}/τ},\ q = e^{-T/τ},

and in the steady-periodic state (n → ∞) θ_max = θ_ss(1 − e^{−t_on/τ})/(1 − e^{−T/τ}),
θ_min = θ_max·e^{−t_off/τ}. One node describes the element itself (milliseconds to seconds); the
body, terminals and holder are slower. The model does not replace a maker's cyclic rating: it says
how near the element's peak comes to melting, and how large its temperature swing is.

References
----------
.. [1] Any heat-transfer text, lumped-capacitance (Newtonian) heating and cooling: e.g.
   F. P. Incropera, D. P. DeWitt, *Fundamentals of Heat and Mass Transfer*, 6th ed., §5.2–5.3.
.. [2] Fuse makers' application guides: τ ≈ I²t_melt / I_min² for the element, and the cyclic-loading
   rule I_on ≤ B'₂·I_melt(t_on) (a semiconductor-fuse maker's guide).
"""

from __future__ import annotations

import itertools
import math


def steady_share(current: float, i_min: float) -> float:
    """Steady rise of the element at ``current`` [A] as a share of its melting rise: (I/I_min)² [-]."""
    return (current / i_min) ** 2


def time_constant_from_i2t(melting_i2t: float, i_min: float) -> float:
    """Element time constant from its adiabatic melting integral [s]: τ = I²t_melt / I_min².

    >>> time_constant_from_i2t(40000.0, 110.0) == 40000.0 / 110.0**2
    True
    """
    return melting_i2t / (i_min * i_min)


def time_constant_from_point(current: float, t_melt: float, i_min: float) -> float:
    r"""Element time constant that makes the model melt at ``current`` [A] after ``t_melt`` [s] [s].

    .. math:: τ = -t / \ln(1 - (I_{min}/I)^2)

    ``current`` must exceed ``i_min`` (below it the element never melts).
    """
    if current <= i_min:
        raise ValueError(f"{current:g} A does not melt an element whose threshold is {i_min:g} A")
    return -t_melt / math.log(1.0 - (i_min / current) ** 2)


def time_constants_from_gates(points, min_multiple: float) -> list[tuple[float, float]]:
    """The time constant each gate point implies: [(multiple, τ [s])], from the must-not-open time
    (``t_min``) of every point above ``min_multiple`` with a positive, finite time.

    ``points`` are (multiple of rating, t_min [s], t_max [s]). The must-not-open side is used because
    the shortest credible melting time gives the smallest τ, and the smallest τ gives the element the
    highest peak over a cycle (the safe side). A single node cannot match every point of a real
    curve: the spread of the values shows how far the model is from the fuse.
    """
    out = []
    for m, t_min, _t_max in points:
        if m > min_multiple and 0.0 < t_min < math.inf:
            out.append((float(m), time_constant_from_point(m, t_min, min_multiple)))
    return out


def melting_time(current: float, i_min: float, tau: float) -> float:
    """Time the model's element takes to melt from cold at ``current`` [A] [s] (inf at or below I_min)."""
    if current <= i_min:
        return math.inf
    return -tau * math.log(1.0 - (i_min / current) ** 2)


def melting_current(t: float, i_min: float, tau: float) -> float:
    r"""Current that melts the element from cold in ``t`` [s] [A]: I_min / √(1 − e^{−t/τ})."""
    return i_min / math.sqrt(-math.expm1(-t / tau))


def periodic_peak_share(share: float, t_on: float, t_off: float, tau: float, cycles: float = math.inf) -> float:
    r"""Peak rise of the element over a periodic duty, as a share of its melting rise [-].

    Parameters
    ----------
    share : steady share (I/I_min)² of the on-current [-]
    t_on, t_off : on- and off-time of each cycle [s]
    tau : element time constant [s]
    cycles : peak at the end of the n-th on-period from cold; inf: the steady-periodic peak

    .. math:: θ_{max,n}/θ_m = s\,(1 - e^{-t_{on}/τ})\,\frac{1 - e^{-nT/τ}}{1 - e^{-T/τ}}

    >>> round(periodic_peak_share(0.25, 60.0, 60.0, 1.0), 6)   # on and off long against τ: the steady share
    0.25
    """
    a_on = -math.expm1(-t_on / tau)  # 1 − e^{−t_on/τ}
    period = t_on + t_off
    one_minus_q = -math.expm1(-period / tau)
    growth = 1.0 if math.isinf(cycles) else -math.expm1(-cycles * period / tau)
    return share * a_on * growth / one_minus_q


def periodic_trough_share(share: float, t_on: float, t_off: float, tau: float) -> float:
    """Lowest rise of the steady-periodic duty (end of each off-period), as a share of the melting rise [-]."""
    return periodic_peak_share(share, t_on, t_off, tau) * math.exp(-t_off / tau)


def periodic_swing_share(share: float, t_on: float, t_off: float, tau: float) -> float:
    """Peak-to-trough swing of the steady-periodic rise, as a share of the melting rise [-]: the
    excursion that fatigues the element (fuse makers' cyclic-loading guides)."""
    return periodic_peak_share(share, t_on, t_off, tau) - periodic_trough_share(share, t_on, t_off, tau)


def equivalent_steady_current(current: float, t_on: float, t_off: float, tau: float) -> float:
    """The constant current whose steady rise equals the steady-periodic peak of the duty [A].

    I_eq = I·√((1 − e^{−t_on/τ})/(1 − e^{−T/τ})): between the rms current (T ≪ τ) and the
    on-current itself (t_on ≫ τ).
    """
    return current * math.sqrt(periodic_peak_share(1.0, t_on, t_off, tau))


def rise_share_at(t: float, share: float, start_share: float, tau: float) -> float:
    """Rise share after ``t`` [s] at a constant current of steady share ``share``, from
    ``start_share``: s + (s0 − s)·e^{−t/τ} [-] (one step of a duty of any shape)."""
    return share + (start_share - share) * math.exp(-t / tau)


def cyclic_limit_current(melting_current_on: float, fraction: float) -> float:
    """Largest repeated on-current by a maker's cyclic factor [A]: B'₂ × I_melt(t_on)."""
    return fraction * melting_current_on


def interpolate_cyclic_fraction(cycles: float, table: list[tuple[float, float]]) -> float:
    """Cyclic factor B'₂ for ``cycles`` [-] from (cycles, factor) points, linear in log10(cycles),
    held flat beyond the ends. Below the first count the first factor applies: fewer cycles would
    allow a larger factor, so holding it is the safe side; beyond the last count the last factor.

    >>> round(interpolate_cyclic_fraction(10**4.5, [(1e4, 0.45), (1e5, 0.35)]), 6)
    0.4
    """
    pts = sorted(table)
    if cycles <= pts[0][0]:
        return float(pts[0][1])
    if cycles >= pts[-1][0]:
        return float(pts[-1][1])
    x = math.log10(cycles)
    for (n0, f0), (n1, f1) in itertools.pairwise(pts):
        if n0 <= cycles <= n1:
            u = (x - math.log10(n0)) / (math.log10(n1) - math.log10(n0))
            return float(f0 + u * (f1 - f0))
    return float(pts[-1][1])
