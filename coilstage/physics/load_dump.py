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
    r"""Time constant τ_d of the exponential decay that falls to ``fraction`` of its step in ``t_d`` [s].

    .. math:: τ_d = t_d / \ln(1/f)

    >>> round(decay_time_constant(0.350), 6)
    0.152003
    """
    return t_d / math.log(1.0 / fraction)


def source_voltage(t: float, u_a: float, u_s: float, t_d: float, fraction: float = DECAY_TO_FRACTION) -> float:
    """Open-circuit voltage of the load-dump source at ``t`` [s] after its peak [V].

    Parameters: t [s] (t ≥ 0), u_a generator-operating voltage U_A [V], u_s peak U_s [V], t_d pulse
    duration [s].
    """
    return u_a + (u_s - u_a) * math.exp(-t / decay_time_constant(t_d, fraction))


def clamp_conduction_time(
    u_a: float, u_s: float, t_d: float, v_clamp: float, fraction: float = DECAY_TO_FRACTION
) -> float:
    r"""How long a clamp at ``v_clamp`` [V] conducts during the pulse [s] (0 if it never does).

    .. math:: t_c = τ_d \ln\frac{U_s - U_A}{V_c - U_A}

    A clamp at or below U_A conducts for ever (it clamps the running system): ``inf``.
    """
    if v_clamp >= u_s:
        return 0.0
    if v_clamp <= u_a:
        return math.inf
    return decay_time_constant(t_d, fraction) * math.log((u_s - u_a) / (v_clamp - u_a))


def clamp_peak_current(u_s: float, r_i: float, v_clamp: float) -> float:
    """Largest current into a clamp at ``v_clamp`` [V] from the source at peak ``u_s`` [V] behind
    ``r_i`` [Ω] [A]: (U_s − V_c)/R_i, or 0 where the clamp lies above the peak."""
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
    r"""Energy a clamp at ``v_clamp`` takes from one load-dump pulse [J].

    .. math::

        E = \int_0^{t_c} V_c\,\frac{U(t) - V_c}{R_i}\,dt
          = \frac{V_c}{R_i}\left[τ_d\,(ΔU - (V_c - U_A)) - (V_c - U_A)\,t_c\right]

    using ΔU·(1 − e^{−t_c/τ_d}) = ΔU − (V_c − U_A).

    Parameters
    ----------
    u_a : generator-operating voltage U_A [V] (14 V / 28 V)
    u_s : pulse peak U_s [V] (Test A: 79–101 V on 12 V, 151–202 V on 24 V)
    r_i : source internal resistance R_i [Ω]
    t_d : pulse duration [s]
    v_clamp : the clamp's voltage while it conducts [V] (held constant: an ideal clamp)
    central_clamp : U_s* of Test B [V], or None for Test A (no central suppression). A clamp at or
        above U_s* takes nothing.

    Notes
    -----
    Valid for U_A < V_c. The parallel load is left out and the pulse starts at its peak (both the safe
    side). A clamp at or below U_A would conduct from the running system for ever: ValueError.

    >>> round(clamp_energy(28.0, 202.0, 8.0, 0.350, 93.0), 1)   # 24 V Test A, upper pairing
    79.5
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


def clamp_energy_linear(u_a: float, u_s: float, r_i: float, t_d: float, v_clamp: float) -> float:
    r"""Energy into a clamp for a *linear* decay from U_s to U_A over t_d [J] (a comparison shape):

    .. math:: E = \frac{V_c\,(U_s - V_c)^2\,t_d}{2 R_i\,(U_s - U_A)}

    >>> round(clamp_energy_linear(28.0, 202.0, 8.0, 0.350, 93.0), 1)
    138.9
    """
    if v_clamp >= u_s:
        return 0.0
    return v_clamp * (u_s - v_clamp) ** 2 * t_d / (2.0 * r_i * (u_s - u_a))


def worst_clamp_energy(
    u_a: float,
    us_range: tuple[float, float],
    ri_range: tuple[float, float],
    td_range: tuple[float, float],
    v_clamp: float,
    central_clamp: float | None = None,
) -> tuple[float, float, float, float]:
    """The larger clamp energy of the two pairings ISO 16750-2 allows, at the longest t_d:
    (E [J], U_s [V], R_i [Ω], t_d [s]).

    The standard pairs the upper U_s with the upper R_i, or the lower with the lower; t_d is free in
    its range and the energy grows with it. The lower pairing often gives more energy (a stiffer
    source), which is why both are evaluated.
    """
    t_d = td_range[1]
    cases = [(us_range[1], ri_range[1]), (us_range[0], ri_range[0])]
    best = max(cases, key=lambda c: clamp_energy(u_a, c[0], c[1], t_d, v_clamp, central_clamp))
    return clamp_energy(u_a, best[0], best[1], t_d, v_clamp, central_clamp), best[0], best[1], t_d


def bus_peak(u_s: float, central_clamp: float | None = None) -> float:
    """Highest supply voltage of the pulse with no clamp of the load's own [V]: U_s (Test A,
    open circuit, the safe side), or U_s* where central suppression holds it (Test B)."""
    return u_s if central_clamp is None else min(u_s, central_clamp)


def opening_contact_voltage(u_bus: float, u_suppressor: float) -> float:
    """Voltage across a contact that opens while the supply stands at ``u_bus`` [V], with the coil's
    suppressor holding ``u_suppressor`` [V] in the opposite sense at the other terminal [V].

    The coil keeps its current, so its far terminal swings below the return by the suppressor's
    voltage and the contact stands off the sum (Kirchhoff's voltage law around bus, contact, coil).
    Without suppression the sum is unbounded: the contact arcs.
    """
    return u_bus + u_suppressor


def loaded_bus_peak(u_s: float, r_i: float, r_load: float, central_clamp: float | None = None) -> float:
    r"""Peak supply voltage of the load-dump pulse with a resistive load on it [V].

    .. math:: U = U_s\,\frac{R_{load}}{R_{load} + R_i}, \quad \text{then at most } U_s^* \text{ (Test B)}

    The ISO 16750-2 generator is a source behind its internal resistance R_i; a load R_load on the bus
    (the stage whose contact opens, with its feed: the smallest load the contact can see, so the
    highest voltage) divides the open-circuit peak ``u_s``. Parameters: u_s [V], r_i [Ω], r_load [Ω],
    central_clamp U_s* [V] or None (Test A). Valid for the peak (the rise t_r left out).

    >>> round(loaded_bus_peak(151.0, 1.0, 0.53), 2)   # 24 V Test A, lower pairing, a 0.53 Ω stage
    52.31
    """
    u = u_s * r_load / (r_load + r_i)
    return u if central_clamp is None else min(u, central_clamp)
