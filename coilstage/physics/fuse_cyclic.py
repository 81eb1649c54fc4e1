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
θ_min = θ_max·e^{−t_off/τ}; a duty of any shape is followed step by step (:func:`rise_share_at`).
One node describes the element itself (milliseconds to seconds); the body, terminals and holder are
slower. The model does not replace a maker's cyclic rating: it says
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
from collections.abc import Iterable, Sequence


def time_constant_from_i2t(melting_i2t: float, i_min: float) -> float:
    r"""Element time constant from its adiabatic melting integral [s].

    .. math:: τ = \frac{I^2t_{melt}}{I_{min}^2}

    Parameters
    ----------
    melting_i2t : float
        The fuse's melting integral I²t_melt (the maker's pre-arcing figure). [A²s]
    i_min : float
        Smallest current that melts the element at all I_min. [A]

    Returns
    -------
    float
        Time constant τ of the one-node element model. [s]

    Notes
    -----
    The short-time limit of the melting time t(I) = −τ ln(1 − (I_min/I)²) → τ(I_min/I)², so valid
    where the maker's I²t is an adiabatic figure (melting within a few milliseconds).

    Examples
    --------
    Hand-worked: 40 000 A²s / (110 A)² = 40 000 / 12 100 = 3.3058 s.

    >>> round(time_constant_from_i2t(40000.0, 110.0), 4)
    3.3058

    References
    ----------
    Fuse makers' application guides (τ ≈ I²t_melt / I_min²) [2]_; the lumped model of [1]_.
    """
    return melting_i2t / (i_min * i_min)


def time_constant_from_point(current: float, t_melt: float, i_min: float) -> float:
    r"""Element time constant that makes the model melt at a current after a given time [s].

    .. math:: τ = \frac{-t_{melt}}{\ln\bigl(1 - (I_{min}/I)^2\bigr)}

    Parameters
    ----------
    current : float
        A current of the melting curve I, above ``i_min``. [A]
    t_melt : float
        Its melting time from cold. [s]
    i_min : float
        Smallest current that melts the element at all I_min. [A]

    Returns
    -------
    float
        Time constant τ. [s]

    Notes
    -----
    Valid for I > I_min (below it the element never melts: ValueError). One node cannot fit a whole
    real curve: different points give different τ.

    Examples
    --------
    Hand-worked: at twice I_min after 1 s, τ = −1/ln(1 − 1/4) = 1/0.287682 = 3.4761 s.

    >>> round(time_constant_from_point(200.0, 1.0, 100.0), 4)
    3.4761

    References
    ----------
    Lumped-capacitance heating from cold, Incropera & DeWitt §5.2–5.3 [1]_.
    """
    if current <= i_min:
        raise ValueError(f"{current:g} A does not melt an element whose threshold is {i_min:g} A")
    return -t_melt / math.log(1.0 - (i_min / current) ** 2)


def time_constants_from_gates(
    points: Iterable[tuple[float, float, float]], min_multiple: float
) -> list[tuple[float, float]]:
    r"""The time constant each gate point of a fuse implies: [(multiple, τ)] [-, s].

    .. math:: τ_k = \frac{-t_{min,k}}{\ln\bigl(1 - (m_{min}/m_k)^2\bigr)},\quad m_k > m_{min}

    Parameters
    ----------
    points : iterable of (float, float, float)
        Gate points (multiple of rating m [-], must-not-open time t_min [s], must-open time t_max [s]).
        [-, s, s]
    min_multiple : float
        Melting threshold as a multiple of the rating m_min (I_min / I_n). [-]

    Returns
    -------
    list of (float, float)
        (multiple [-], τ [s]) for every point above ``min_multiple`` with a positive, finite t_min.
        [-, s]

    Notes
    -----
    The must-not-open side is used because the shortest credible melting time gives the smallest τ,
    and the smallest τ gives the element the highest peak over a cycle (the safe side). A single node
    cannot match every point of a real curve: the spread of the values shows how far the model is
    from the fuse.

    Examples
    --------
    Hand-worked: threshold 1.10, point 2.0 × at 0.15 s: −0.15/ln(1 − (1.1/2)²) = 0.15/0.360260 =
    0.41637 s; the threshold's own point gives none.

    >>> [(m, round(t, 5)) for m, t in time_constants_from_gates([(1.10, 3.6e5, math.inf), (2.0, 0.15, 5.0)], 1.10)]
    [(2.0, 0.41637)]

    References
    ----------
    ISO 8820-1/-3 time-current gates (the shipped table, from memory); the model of [1]_.
    """
    out = []
    for m, t_min, _t_max in points:
        if m > min_multiple and 0.0 < t_min < math.inf:
            out.append((float(m), time_constant_from_point(m, t_min, min_multiple)))
    return out


def melting_current(t: float, i_min: float, tau: float) -> float:
    r"""Current that melts the element from cold in a given time [A].

    .. math:: I_{melt}(t) = \frac{I_{min}}{\sqrt{1 - e^{-t/τ}}}

    Parameters
    ----------
    t : float
        Time to melt, above 0. [s]
    i_min : float
        Smallest current that melts the element at all I_min. [A]
    tau : float
        Element time constant τ. [s]

    Returns
    -------
    float
        Melting current; it tends to I_min for t ≫ τ. [A]

    Notes
    -----
    The inverse of t(I) = −τ ln(1 − (I_min/I)²); one node only (the element, not its terminals).

    Examples
    --------
    Hand-worked: after t = τ ln(4/3), 1 − e^{−t/τ} = 1/4, so the current is 2 I_min:

    >>> round(melting_current(math.log(4.0 / 3.0), 100.0, 1.0), 9)
    200.0

    References
    ----------
    Lumped-capacitance heating from cold, Incropera & DeWitt §5.2–5.3 [1]_.
    """
    return i_min / math.sqrt(-math.expm1(-t / tau))


def rise_share_at(t: float, share: float, start_share: float, tau: float) -> float:
    r"""Rise of the element after a time at a constant current, as a share of its melting rise [-].

    .. math:: s(t) = s_\infty + (s_0 - s_\infty)\,e^{-t/τ}

    Parameters
    ----------
    t : float
        Time at the current. [s]
    share : float
        Steady share s∞ = (I/I_min)² of the current (0 while the current is off). [-]
    start_share : float
        Share s0 at the start of the step. [-]
    tau : float
        Element time constant τ. [s]

    Returns
    -------
    float
        Share of the melting rise after ``t``. [-]

    Notes
    -----
    One step of a duty of any shape (on- and off-periods chained); valid while the element is solid
    (share below 1).

    Examples
    --------
    One time constant from cold towards the melting rise reaches 1 − e^{−1} = 63.21 % of it (the
    first-order step response):

    >>> round(rise_share_at(1.0, 1.0, 0.0, 1.0), 4)
    0.6321

    References
    ----------
    Lumped-capacitance heating and cooling, Incropera & DeWitt §5.2–5.3 [1]_.
    """
    return share + (start_share - share) * math.exp(-t / tau)


def interpolate_cyclic_fraction(cycles: float, table: Sequence[tuple[float, float]]) -> float:
    r"""Cyclic factor B'₂ for a number of cycles from (cycles, factor) points [-].

    .. math:: B'_2(N) = f_0 + (f_1 - f_0)\frac{\log_{10} N - \log_{10} N_0}{\log_{10} N_1 - \log_{10} N_0}

    Parameters
    ----------
    cycles : float
        Number of on-periods over the fuse's life N. [-]
    table : sequence of (float, float)
        (cycles [-], factor [-]) points of the maker's cyclic-loading rule. [-, -]

    Returns
    -------
    float
        The factor B'₂, held flat beyond the ends of the table. [-]

    Notes
    -----
    Linear in log10(N) between points. Below the first count the first factor applies: fewer cycles
    would allow a larger factor, so holding it is the safe side; beyond the last count the last factor.

    Examples
    --------
    Hand-worked: 10^4.5 cycles lies halfway (in log10) between 0.45 at 10⁴ and 0.35 at 10⁵: 0.40.

    >>> round(interpolate_cyclic_fraction(10**4.5, [(1e4, 0.45), (1e5, 0.35)]), 6)
    0.4

    References
    ----------
    A semiconductor-fuse maker's cyclic-loading rule I_on ≤ B'₂·I_melt(t_on) [2]_ (the shipped
    table, ``fuse_cyclic_derating``, says where its values were read).
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
