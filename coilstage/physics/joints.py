r"""Joints, lugs, studs, connectors and fuse holders: their heat, their resistance against the
conductor they join, their current rating against temperature, and a lug's conductor range.

A joint is a lumped resistance R carrying the branch current I: its heat is P = I²R (Joule's law).
IEC 61238-1 judges a connector by its *resistance factor*, R_joint / R(conductor of equal length):
a sound joint is no more resistive, and no hotter, than the conductor it replaces.

A contact's current rating falls with its surrounding temperature. IEC 60512-5-2 (Test 5b) builds
the rating from the measured temperature rise ΔT(I): the base curve is the current at which
ambient + ΔT reaches the contact's upper limiting temperature (ULT), the derating curve 0.8 × the
base curve. With ΔT = a·Iⁿ (n = 2 for pure Joule heating; makers' points fit 1.8–2), a rating
I_r given at ambient T_r holds at ambient T as

.. math:: I(T) = I_r \left(\frac{T_{ULT} - T}{T_{ULT} - T_r}\right)^{1/n}, \quad T < T_{ULT}.

References
----------
.. [1] IEC 60512-5-2:2002, Connectors for electronic equipment — Tests and measurements — Part 5-2:
   Current-carrying capacity tests, Test 5b: current-temperature derating.
.. [2] IEC 61238-1-1:2018 (≤ 1 kV), Compression and mechanical connectors for power cables — test
   methods and requirements (resistance factor of a connector against its reference conductor).
.. [3] DIN 46235 (compression cable lugs): the barrel is marked with the one conductor cross-section
   it is made for.
"""

from __future__ import annotations

import math


def joint_heat(current: float, resistance: float) -> float:
    """Heat of a joint carrying ``current`` [A] through ``resistance`` [Ω] [W]: P = I²R.

    >>> round(joint_heat(214.0, 0.2e-3), 2)
    9.16
    """
    return current * current * resistance


def joint_voltage_drop(current: float, resistance: float) -> float:
    """Voltage across a joint [V]: U = I·R (Ohm's law)."""
    return current * resistance


def conductor_equivalent_length(resistance: float, r_per_m: float) -> float:
    """Length of conductor [m] with the same resistance as a joint of ``resistance`` [Ω], for a
    conductor of ``r_per_m`` [Ω/m] at the same temperature."""
    return resistance / r_per_m


def resistance_factor(resistance: float, r_per_m: float, length: float) -> float:
    """IEC 61238-1 resistance factor of a joint [-]: its resistance over that of the ``length`` [m] of
    conductor (``r_per_m`` [Ω/m]) it occupies. 1: as good as the conductor."""
    return resistance / (r_per_m * length)


def crimp_resistance(r_per_m: float, barrel_length: float, factor: float = 1.0) -> float:
    """Resistance of a crimped barrel [Ω]: ``factor`` × the conductor's resistance over the barrel
    length (a sound crimp: factor 1, IEC 61238-1).

    >>> round(crimp_resistance(0.386e-3, 0.03) * 1e6, 1)   # 50 mm² class 5 (IEC 60228: 0.386 mΩ/m), 30 mm
    11.6
    """
    return factor * r_per_m * barrel_length


def joint_temperature_rise(heat: float, thermal_resistance: float) -> float:
    """Steady temperature rise of a joint above its surroundings [K]: ΔT = P·R_th (``heat`` [W],
    ``thermal_resistance`` [K/W])."""
    return heat * thermal_resistance


def derated_current(
    rating: float, rated_ambient: float, ambient: float, upper_limiting: float, exponent: float = 2.0
) -> float:
    r"""Current a contact or joint rated ``rating`` [A] at ``rated_ambient`` [°C] may carry at
    ``ambient`` [°C], given its upper limiting temperature ``upper_limiting`` [°C] [A].

    .. math:: I(T) = I_r \left(\frac{T_{ULT} - T}{T_{ULT} - T_r}\right)^{1/n}

    Zero at and above the ULT. Below the rated ambient the stated rating is kept (no credit taken for
    cold). ``exponent`` n: the rise grows as Iⁿ.

    >>> round(derated_current(100.0, 25.0, 85.0, 105.0), 1)   # 100 A at 25 °C, tin ULT 105 °C, zone 85 °C
    50.0
    """
    if upper_limiting <= rated_ambient:
        raise ValueError("the upper limiting temperature must lie above the rated ambient")
    if ambient <= rated_ambient:
        return rating
    if ambient >= upper_limiting:
        return 0.0
    return rating * ((upper_limiting - ambient) / (upper_limiting - rated_ambient)) ** (1.0 / exponent)


def derated_linear(rating: float, rated_ambient: float, fraction: float, at: float, ambient: float) -> float:
    """Current by a maker's linear derating: ``rating`` [A] up to ``rated_ambient`` [°C], falling
    linearly to ``fraction`` × rating at ``at`` [°C], extended beyond it and never below 0 [A]."""
    if ambient <= rated_ambient:
        return rating
    k = 1.0 + (fraction - 1.0) * (ambient - rated_ambient) / (at - rated_ambient)
    return rating * max(k, 0.0)


def connector_derating(base_current: float, factor: float = 0.8) -> float:
    """Derating curve of IEC 60512-5-2 from its base curve [A]: ``factor`` × base (0.8).

    >>> round(connector_derating(15.8), 2)
    12.64
    """
    return factor * base_current


def rise_fit(points: list[tuple[float, float]]) -> tuple[float, float]:
    r"""Fit ΔT = a·Iⁿ to measured (current [A], rise [K]) points in log-log axes: (a, n).

    Least squares on ln ΔT = ln a + n ln I (IEC 60512-5-2 measures the rise at several currents).
    """
    if len(points) < 2:
        raise ValueError("two or more (current, rise) points are needed")
    xs = [math.log(i) for i, _ in points]
    ys = [math.log(d) for _, d in points]
    mx, my = sum(xs) / len(xs), sum(ys) / len(ys)
    sxx = sum((x - mx) ** 2 for x in xs)
    if sxx == 0:
        raise ValueError("the points need two different currents")
    n = sum((x - mx) * (y - my) for x, y in zip(xs, ys, strict=True)) / sxx
    return math.exp(my - n * mx), n


def base_current(a: float, n: float, ambient: float, upper_limiting: float) -> float:
    r"""IEC 60512-5-2 base-curve current at ``ambient`` [°C]: the current whose rise a·Iⁿ brings the
    contact to ``upper_limiting`` [°C] [A]: ((T_ULT − T)/a)^{1/n}; 0 at or above the ULT."""
    if ambient >= upper_limiting:
        return 0.0
    return ((upper_limiting - ambient) / a) ** (1.0 / n)


def lug_fits(conductor_area: float, lug_min: float, lug_max: float, rel_tol: float = 1e-6) -> bool:
    """Whether a lug made for conductors of ``lug_min``..``lug_max`` [m²] takes a conductor of
    ``conductor_area`` [m²] (a compression lug made for one size: lug_min = lug_max)."""
    return lug_min * (1.0 - rel_tol) <= conductor_area <= lug_max * (1.0 + rel_tol)


def lug_mismatch(conductor_area: float, lug_min: float, lug_max: float) -> float:
    """How far a conductor lies outside a lug's range, as a fraction of the nearer end [-]
    (negative: smaller than the lug's smallest size, a loose crimp; positive: larger, it does not
    enter the barrel; 0 inside)."""
    if conductor_area < lug_min:
        return conductor_area / lug_min - 1.0
    if conductor_area > lug_max:
        return conductor_area / lug_max - 1.0
    return 0.0


def stud_current_limit(thread: float, table: list[tuple[float, float]]) -> float | None:
    """Continuous current a stud of metric ``thread`` diameter [mm] is usually given, from
    (thread [mm], current [A]) rows: the row of the largest thread not above it; None below the table."""
    rows = sorted(table)
    fit = [i for d, i in rows if d <= thread + 1e-9]
    return float(fit[-1]) if fit else None
