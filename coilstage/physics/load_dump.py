r"""Load dump: the ISO 16750-2 source model, the energy a clamp takes from it, and the voltage an
opening contact sees during it.

ISO 16750-2 (clause 4.6.4) models the alternator after a load dump as a voltage source behind an
internal resistance R_i. Its open-circuit voltage steps from the generator-operating voltage U_A to
U_A + (U_s − U_A) and decays back; t_d is the pulse duration. Here the decay is exponential,

.. math:: U(t) = U_A + ΔU\,e^{-t/τ_d}, \qquad ΔU = U_s - U_A, \qquad τ_d = \frac{t_d}{\ln(1/f)},

with t_d the time to fall to the fraction f = 0.1 of the step (the reading of t_d of the ISO 7637-2
pulse 5 that the load dump replaced; from memory). The rise (t_r ≤ 10 ms) is left out: the pulse
starts at its peak, which overstates the energy slightly (the safe side for a suppressor).

A clamp holding V_c across the supply (a TVS or varistor across a coil, or a central suppressor)
conducts while U(t) > V_c and takes i = (U(t) − V_c)/R_i; the load in parallel is left out, so all
the excess current is the clamp's (again the safe side: a load takes part of it). Test B adds a
central clamp at U_s*: a clamp at or above U_s* then takes nothing, one below it takes the same
energy as in Test A (it becomes the central suppression).

References
----------
.. [1] ISO 16750-2:2010 (and 2023), Road vehicles — Environmental conditions and testing for
   electrical and electronic equipment — Part 2: Electrical loads, 4.6.4 Load dump (Test A without,
   Test B with centralised load dump suppression).
.. [2] ISO 7637-2:2004, test pulse 5a/5b (the load dump pulse before it moved to ISO 16750-2).
"""

from __future__ import annotations

import math

#: t_d is read as the decay to this fraction of the step above U_A (from memory; see the module docstring).
DECAY_TO_FRACTION = 0.1


def decay_time_constant(t_d: float, fraction: float = DECAY_TO_FRACTION) -> float:
    r"""Time constant of the exponential decay that falls to a fraction of its step in t_d [s].

    .. math:: τ_d = \frac{t_d}{\ln(1/f)}

    Parameters
    ----------
    t_d : float
        Pulse duration t_d. [s]
    fraction : float
        Share f of the step above U_A left at t_d (0.1, :data:`DECAY_TO_FRACTION`). [-]

    Returns
    -------
    float
        Time constant τ_d of the decay. [s]

    Notes
    -----
    Valid for 0 < f < 1. The reading of t_d as the decay to 10 % of the step is from memory (see the
    module docstring); another reading changes τ_d in proportion to 1/ln(1/f).

    Examples
    --------
    Hand-worked: 0.350 s / ln 10 = 0.350 / 2.302585 = 0.152003 s.

    >>> round(decay_time_constant(0.350), 6)
    0.152003

    References
    ----------
    ISO 16750-2:2010, 4.6.4 (t_d) [1]_; ISO 7637-2:2004 pulse 5 (its drawing of t_d) [2]_.
    """
    return t_d / math.log(1.0 / fraction)


def clamp_peak_current(u_s: float, r_i: float, v_clamp: float) -> float:
    r"""Largest current into a clamp from the load-dump source at its peak [A].

    .. math:: I_{pk} = \frac{\max(U_s - V_c,\ 0)}{R_i}

    Parameters
    ----------
    u_s : float
        Pulse peak U_s. [V]
    r_i : float
        Source internal resistance R_i. [Ω]
    v_clamp : float
        The clamp's voltage while it conducts V_c. [V]

    Returns
    -------
    float
        Peak clamp current; 0 where the clamp lies at or above the peak. [A]

    Notes
    -----
    An ideal clamp (constant V_c) with the load left out, so all the excess current is the clamp's
    (the safe side); the rise t_r is left out (the pulse starts at its peak).

    Examples
    --------
    Hand-worked (Ohm's law): (202 − 93) V / 8 Ω = 13.625 A.

    >>> clamp_peak_current(202.0, 8.0, 93.0)
    13.625

    References
    ----------
    ISO 16750-2:2010, 4.6.4 (the source behind R_i) [1]_.
    """
    return max(u_s - v_clamp, 0.0) / r_i


def clamp_energy(
    u_a: float,
    u_s: float,
    r_i: float,
    t_d: float,
    v_clamp: float,
    central_clamp: float | None = None,
    fraction: float = DECAY_TO_FRACTION,
) -> float:
    r"""Energy a clamp takes from one load-dump pulse [J].

    .. math::

        E = \int_0^{t_c} V_c\,\frac{U(t) - V_c}{R_i}\,dt
          = \frac{V_c}{R_i}\left[τ_d\,(ΔU - (V_c - U_A)) - (V_c - U_A)\,t_c\right],
        \qquad t_c = τ_d \ln\frac{ΔU}{V_c - U_A}

    using ΔU·(1 − e^{−t_c/τ_d}) = ΔU − (V_c − U_A).

    Parameters
    ----------
    u_a : float
        Generator-operating voltage U_A (14 V / 28 V). [V]
    u_s : float
        Pulse peak U_s (Test A: 79–101 V on 12 V, 151–202 V on 24 V). [V]
    r_i : float
        Source internal resistance R_i. [Ω]
    t_d : float
        Pulse duration t_d. [s]
    v_clamp : float
        The clamp's voltage while it conducts V_c (held constant: an ideal clamp). [V]
    central_clamp : float or None
        U_s* of Test B, or None for Test A (no central suppression); a clamp at or above U_s* takes
        nothing. [V]
    fraction : float
        Share of the step left at t_d (:func:`decay_time_constant`). [-]

    Returns
    -------
    float
        Energy into the clamp over the pulse; 0 for a clamp at or above the peak. [J]

    Notes
    -----
    Valid for U_A < V_c. The parallel load is left out and the pulse starts at its peak (both the safe
    side). A clamp at or below U_A would conduct from the running system for ever: ValueError.

    Examples
    --------
    24 V Test A, upper pairing (U_s 202 V, R_i 8 Ω, t_d 350 ms), a 93 V clamp. Hand-worked:
    τ_d = 0.152003 s, ΔU = 174 V, V_c − U_A = 65 V, t_c = 0.152003 × ln(174/65) = 0.149673 s,
    E = 93/8 × (0.152003 × 109 − 65 × 0.149673) = 79.51 J; and against scipy.integrate.quad of the
    clamp power over the decay written out here:

    >>> round(clamp_energy(28.0, 202.0, 8.0, 0.350, 93.0), 2)
    79.51
    >>> from scipy.integrate import quad
    >>> u = lambda t: 28.0 + 174.0 * math.exp(-t / (0.350 / math.log(10.0)))
    >>> ref, _err = quad(lambda t: 93.0 * max(u(t) - 93.0, 0.0) / 8.0, 0.0, 0.149673, limit=200)
    >>> abs(clamp_energy(28.0, 202.0, 8.0, 0.350, 93.0) - ref) < 1e-3
    True

    References
    ----------
    ISO 16750-2:2010, 4.6.4, Test A and Test B [1]_ (the source model); the integral is worked here.
    """
    if v_clamp <= u_a:
        raise ValueError(f"a clamp at {v_clamp:g} V conducts from the {u_a:g} V running system: no finite pulse energy")
    if central_clamp is not None and central_clamp <= v_clamp:
        return 0.0
    if v_clamp >= u_s:
        return 0.0
    tau = decay_time_constant(t_d, fraction)
    over = v_clamp - u_a
    t_c = tau * math.log((u_s - u_a) / over)
    return v_clamp / r_i * (tau * ((u_s - u_a) - over) - over * t_c)


def worst_clamp_energy(
    u_a: float,
    us_range: tuple[float, float],
    ri_range: tuple[float, float],
    td_range: tuple[float, float],
    v_clamp: float,
    central_clamp: float | None = None,
) -> tuple[float, float, float, float]:
    r"""The larger clamp energy of the two pairings ISO 16750-2 allows, at the longest t_d [J].

    .. math:: E_{worst} = \max\bigl(E(U_{s,max}, R_{i,max}),\ E(U_{s,min}, R_{i,min})\bigr)\big|_{t_{d,max}}

    Parameters
    ----------
    u_a : float
        Generator-operating voltage U_A. [V]
    us_range : tuple of float
        (lowest, highest) pulse peak U_s of the test. [V]
    ri_range : tuple of float
        (lowest, highest) internal resistance R_i of the test. [Ω]
    td_range : tuple of float
        (shortest, longest) pulse duration t_d of the test. [s]
    v_clamp : float
        The clamp's voltage while it conducts V_c. [V]
    central_clamp : float or None
        U_s* of Test B, or None for Test A. [V]

    Returns
    -------
    tuple of float
        (E [J], U_s [V], R_i [Ω], t_d [s]) of the worse pairing. [J, V, Ω, s]

    Notes
    -----
    The standard pairs the upper U_s with the upper R_i, or the lower with the lower; t_d is free in
    its range and the energy grows with it (the integral of a positive power over a longer decay).
    The lower pairing often gives more energy (a stiffer source), which is why both are evaluated.
    Same validity as :func:`clamp_energy`.

    Examples
    --------
    24 V Test A (U_s 151–202 V, R_i 1–8 Ω, t_d 100–350 ms), a 93 V clamp. Hand-worked for the lower
    pairing: t_c = 0.152003 × ln(123/65) = 0.096947 s, E = 93/1 × (0.152003 × 58 − 65 × 0.096947)
    = 233.86 J, three times the upper pairing's 79.51 J (:func:`clamp_energy`):

    >>> e, us, ri, td = worst_clamp_energy(28.0, (151.0, 202.0), (1.0, 8.0), (0.100, 0.350), 93.0)
    >>> round(e, 2), us, ri, td
    (233.86, 151.0, 1.0, 0.35)

    References
    ----------
    ISO 16750-2:2010, 4.6.4, the parameter ranges of Test A and Test B [1]_.
    """
    t_d = td_range[1]
    cases = [(us_range[1], ri_range[1]), (us_range[0], ri_range[0])]
    best = max(cases, key=lambda c: clamp_energy(u_a, c[0], c[1], t_d, v_clamp, central_clamp))
    return clamp_energy(u_a, best[0], best[1], t_d, v_clamp, central_clamp), best[0], best[1], t_d


def bus_peak(u_s: float, central_clamp: float | None = None) -> float:
    r"""Highest supply voltage of the pulse with no clamp of the load's own [V].

    .. math:: U_{pk} = U_s \ \text{(Test A)},\qquad U_{pk} = \min(U_s, U_s^*)\ \text{(Test B)}

    Parameters
    ----------
    u_s : float
        Pulse peak U_s. [V]
    central_clamp : float or None
        U_s* of Test B, or None for Test A. [V]

    Returns
    -------
    float
        The peak the bus reaches. [V]

    Notes
    -----
    Open circuit (no load on the bus): the safe side; :func:`loaded_bus_peak` takes a load into account.

    Examples
    --------
    Test A 24 V upper peak 202 V; Test B holds it at U_s* = 58 V:

    >>> bus_peak(202.0), bus_peak(202.0, 58.0)
    (202.0, 58.0)

    References
    ----------
    ISO 16750-2:2010, 4.6.4, Test A (no central suppression) and Test B (U_s*) [1]_.
    """
    return u_s if central_clamp is None else min(u_s, central_clamp)


def opening_contact_voltage(u_bus: float, u_suppressor: float) -> float:
    r"""Voltage across a contact that opens an inductive stage [V].

    .. math:: U_{contact} = U_{bus} + U_{sup}

    Parameters
    ----------
    u_bus : float
        Supply voltage at the instant the contact opens. [V]
    u_suppressor : float
        Voltage the coil's suppressor holds, in the opposite sense, at the coil's far terminal. [V]

    Returns
    -------
    float
        Voltage the opening contact stands off. [V]

    Notes
    -----
    The coil keeps its current, so its terminal at the contact swings below the return by the
    suppressor's voltage and the contact stands off the sum (Kirchhoff's voltage law around bus,
    contact, coil). Without suppression the sum is unbounded: the contact arcs.

    Examples
    --------
    Hand-worked (KVL): a 32 V bus and a 24 V zener + 0.9 V diode across the coil: 56.9 V.

    >>> round(opening_contact_voltage(32.0, 24.9), 6)
    56.9

    References
    ----------
    Kirchhoff's voltage law; the clamp's switch-off of docs/references.md#clamp-decay.
    """
    return u_bus + u_suppressor


def loaded_bus_peak(u_s: float, r_i: float, r_load: float, central_clamp: float | None = None) -> float:
    r"""Peak supply voltage of the load-dump pulse with a resistive load on it [V].

    .. math:: U = U_s\,\frac{R_{load}}{R_{load} + R_i}, \quad \text{then at most } U_s^* \text{ (Test B)}

    Parameters
    ----------
    u_s : float
        Open-circuit pulse peak U_s. [V]
    r_i : float
        Source internal resistance R_i. [Ω]
    r_load : float
        Resistance of the load on the bus (the stage whose contact opens, with its feed: the smallest
        load the contact can see, so the highest voltage). [Ω]
    central_clamp : float or None
        U_s* of Test B, or None for Test A. [V]

    Returns
    -------
    float
        Peak bus voltage under the load. [V]

    Notes
    -----
    Valid for the peak (the rise t_r left out) and a resistive load; an inductive stage holds its
    current at the instant of the step, which this static divider does not model.

    Examples
    --------
    Hand-worked (voltage divider): 24 V Test A lower pairing, a 0.53 Ω stage: 151 × 0.53/1.53 = 52.31 V.

    >>> round(loaded_bus_peak(151.0, 1.0, 0.53), 2)
    52.31

    References
    ----------
    ISO 16750-2:2010, 4.6.4 (the generator behind R_i) [1]_.
    """
    u = u_s * r_load / (r_load + r_i)
    return u if central_clamp is None else min(u, central_clamp)
