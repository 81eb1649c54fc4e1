r"""Lead-acid starter batteries: open-circuit voltage against state of charge, internal resistance
against charge and temperature, resistance bounds from a rated cranking or short-circuit current,
usable charge at a discharge current (Peukert's law) and capacity against temperature.

Pure functions on SI floats: voltages [V], resistances [Ω], currents [A], charge [C] (A·h × 3600),
times [s], temperatures [°C], state of charge as a fraction 0…1. A 24 V system is two 12 V blocks
(six cells each) in series; the functions count cells so one call serves 6, 12 or 24 V.

The shipped values these functions are fed with (OCV line, cranking-test end voltages, resistance
factors, Peukert exponents) are data in ``coilstage/data/battery_lead_acid.toml`` with their sources
and status; the defaults in the signatures below are the same values, named where they are used.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Sequence

import numpy as np

#: Cells in a 12 V lead-acid block.
CELLS_PER_12V_BLOCK = 6

#: Open-circuit voltage of a flooded lead-acid cell at rest, about 25 °C, against state of charge:
#: (state of charge [–], OCV per cell [V]). 12 V block values 11.89 / 12.06 / 12.24 / 12.45 / 12.65 V
#: at 0 / 25 / 50 / 75 / 100 % divided by six (table of OCV and acid specific gravity against state of
#: charge, realexposer.com/2009/11/what-does-terminal-voltage-tell.html; a second public table,
#: motorhome.com "Checking & maintaining batteries", gives 12.66 / 12.45 / 12.30 / 12.15 V).
FLOODED_OCV_LINE: tuple[tuple[float, float], ...] = (
    (0.00, 11.89 / 6),
    (0.25, 12.06 / 6),
    (0.50, 12.24 / 6),
    (0.75, 12.45 / 6),
    (1.00, 12.65 / 6),
)

#: End-of-test voltage of a 12 V block in each cold-cranking test, all at −18 °C on a fully charged
#: battery at its rated current: (end voltage [V], time at which it is read [s]).
CRANKING_TESTS: dict[str, tuple[float, float]] = {
    "SAE J537": (7.2, 30.0),  # SAE J537 (CCA): ≥ 7.2 V after 30 s
    "EN 50342-1": (7.5, 10.0),  # EN 50342-1: ≥ 7.5 V after 10 s
    "DIN 43539-2": (9.0, 30.0),  # DIN 43539-2 (withdrawn): U30 ≥ 9.0 V
    "IEC 60095-1": (8.4, 60.0),  # IEC 60095-1 (old IEC 95-1): ≥ 8.4 V after 60 s
}


@functools.lru_cache(maxsize=64)
def _line_arrays(line: tuple[tuple[float, float], ...]) -> tuple[np.ndarray, np.ndarray]:
    """The OCV line's states of charge and volts per cell as arrays, checked to ascend (made once per
    line: a duty simulation reads the line at every step of its integrator)."""
    xs = np.array([p[0] for p in line], dtype=float)
    ys = np.array([p[1] for p in line], dtype=float)
    if np.any(np.diff(xs) <= 0):
        raise ValueError("the OCV line must ascend in state of charge")
    xs.flags.writeable = False
    ys.flags.writeable = False
    return xs, ys


def open_circuit_voltage(
    soc: float | np.ndarray,
    cells: int = CELLS_PER_12V_BLOCK,
    line: Sequence[tuple[float, float]] = FLOODED_OCV_LINE,
    offset_per_cell: float = 0.0,
) -> float | np.ndarray:
    r"""Open-circuit (rest) voltage of a lead-acid battery at a state of charge [V].

    .. math:: U_0 = n_{cells}\,\bigl(u_{cell}(SOC) + \Delta u\bigr)

    with :math:`u_{cell}` interpolated linearly in ``line`` (a published OCV–SOC table) and held at
    its end values outside it.

    Parameters
    ----------
    soc : float or array
        State of charge, 0 (flat) … 1 (full). [–]
    cells : int
        Cells in series: 6 for a 12 V block, 12 for a 24 V pair. [–]
    line : sequence of (soc, volts per cell)
        The OCV line, ascending in state of charge. Default :data:`FLOODED_OCV_LINE` (flooded cell). [–, V]
    offset_per_cell : float
        Shift of the whole line per cell [V]: an AGM/gel (VRLA) battery reads higher when full (about
        2.13–2.17 V per cell against 2.108, from memory); pass its difference here or give its own line.

    Returns
    -------
    float or array
        Open-circuit voltage of the battery. [V]

    Notes
    -----
    Valid for a battery at rest (no current for some hours) at about 25 °C. Just off the charger a
    cell reads about 2.2 V (surface charge) and settles within 12–24 h; the temperature coefficient of
    the OCV (about +0.2 mV/K per cell, from memory) is left out (< 0.15 V on a 24 V pair over 60 K).

    References
    ----------
    .. [1] OCV and specific gravity against state of charge, 12 V and 6 V lead-acid batteries,
       realexposer.com/2009/11/what-does-terminal-voltage-tell.html (stored public page).

    Examples
    --------
    >>> round(open_circuit_voltage(0.5), 2), round(open_circuit_voltage(0.5, cells=12), 2)
    (12.24, 24.48)
    """
    xs, ys = _line_arrays(tuple(map(tuple, line)))
    u = cells * (np.interp(soc, xs, ys) + offset_per_cell)
    return float(u) if np.ndim(u) == 0 else u


def resistance_bound_from_cranking_current(
    i_cranking: float, standard: str = "SAE J537", u0: float = 12.7, blocks: int = 1
) -> float:
    r"""Upper bound of a battery's effective internal resistance implied by its cold-cranking rating [Ω].

    A battery rated ``i_cranking`` under a standard keeps at least the standard's end voltage
    :math:`U_{end}` at that current (at −18 °C, fully charged), so

    .. math:: R \le \frac{U_0 - U_{end}}{I_{cc}}

    per 12 V block, times the number of blocks in series.

    Parameters
    ----------
    i_cranking : float
        Rated cold-cranking current of one 12 V block under ``standard``. [A]
    standard : str
        ``"SAE J537"`` (7.2 V after 30 s), ``"EN 50342-1"`` (7.5 V after 10 s), ``"DIN 43539-2"``
        (9.0 V after 30 s) or ``"IEC 60095-1"`` (8.4 V after 60 s); see :data:`CRANKING_TESTS`. [–]
    u0 : float
        Open-circuit voltage of the charged block at the start of the test. [V]
    blocks : int
        12 V blocks in series (2 for a 24 V pair). [–]

    Returns
    -------
    float
        Effective resistance bound at −18 °C, fully charged. [Ω]

    Notes
    -----
    The bound is an *effective* resistance that includes 10–60 s of polarisation; the ohmic
    resistance (1 kHz or a 10 ms pulse) is lower, typically 0.4–0.7 of it (from memory). It is the
    right end for sag and pick-up (a high resistance), not for the largest fault current.

    References
    ----------
    .. [1] SAE J537 (revised SEP2023), Storage batteries: cold cranking test.
    .. [2] EN 50342-1, Lead-acid starter batteries, Part 1: general requirements and methods of test
       (cold cranking test).

    Examples
    --------
    >>> round(resistance_bound_from_cranking_current(1000.0) * 1e3, 2)
    5.5
    """
    if standard not in CRANKING_TESTS:
        raise ValueError(f"unknown cranking standard {standard!r}; one of {', '.join(CRANKING_TESTS)}")
    if i_cranking <= 0:
        raise ValueError("the cranking current must be positive")
    u_end = CRANKING_TESTS[standard][0]
    return blocks * (u0 - u_end) / i_cranking


def resistance_from_short_circuit_current(ocv: float, i_short_circuit: float) -> float:
    r"""Internal resistance from a stated short-circuit current [Ω].

    .. math:: R_i = U_0 / I_{sc}

    Parameters
    ----------
    ocv : float
        Open-circuit voltage the short-circuit current was stated at (the full battery's). [V]
    i_short_circuit : float
        The maker's short-circuit current. [A]

    Returns
    -------
    float
        Internal resistance. [Ω]

    Notes
    -----
    The low end of the resistance range (a new, full, warm battery): the end the breaking-capacity
    check needs. The same parameterisation (Ri = OCVmax/Isc) is used by the battery model of the
    Modelica Standard Library's electrical examples.

    References
    ----------
    .. [1] IEC 60896-11, Stationary lead-acid batteries, Part 11: vented types, the short-circuit
       current and d.c. internal resistance determination (Isc = U0/Ri; clause from memory).

    Examples
    --------
    >>> round(resistance_from_short_circuit_current(12.7, 2540.0) * 1e3, 3)
    5.0
    """
    if i_short_circuit <= 0:
        raise ValueError("the short-circuit current must be positive")
    return ocv / i_short_circuit


def internal_resistance(
    r_reference: float,
    soc: float | np.ndarray = 1.0,
    temperature: float | np.ndarray = 25.0,
    t_reference: float = 25.0,
    temperature_coefficient: float = math.log(1.5) / 48.0,
    empty_factor: float = 1.4,
    age_factor: float = 1.0,
) -> float | np.ndarray:
    r"""Internal resistance of a lead-acid battery at a state of charge and temperature [Ω].

    .. math:: R = R_{ref}\; e^{\,b\,(\theta_{ref} - \theta)}\;\bigl[1 + (f_0 - 1)(1 - SOC)\bigr]\; f_{age}

    The resistance rises as the temperature falls (exponential in the temperature difference) and
    as the charge falls (linear from ×1 full to ×f0 flat), and with age.

    Parameters
    ----------
    r_reference : float
        Resistance of the new, full battery at ``t_reference``. [Ω]
    soc : float or array
        State of charge, 0 … 1. [–]
    temperature : float or array
        Battery (electrolyte) temperature. [°C]
    t_reference : float
        Temperature ``r_reference`` is stated at. [°C]
    temperature_coefficient : float
        b [K⁻¹]. Default ln(1.5)/48 K = 0.00845 /K: "about a 50 % increase" from +30 °C to −18 °C
        (an energy-storage company's published note; a maker claim).
    empty_factor : float
        f0, resistance of the flat battery over the full one: up to 1.4 (same note). [–]
    age_factor : float
        f_age, ageing and sulfation: 1.5–2 at end of life (from memory). [–]

    Returns
    -------
    float or array
        Internal resistance. [Ω]

    Notes
    -----
    An engineering envelope, not an electrochemical model: valid from −30 °C to +50 °C and for a
    battery at rest or in steady discharge. Below −18 °C the exponential is an extrapolation (it
    gives ×1.59 at −30 °C against 25 °C; ×1.8–2.0 is quoted from memory). Right after charging the
    resistance is higher than the line says; the minimum is found near mid charge in some data.

    References
    ----------
    .. [1] D. Linden, T. B. Reddy (eds.), *Handbook of Batteries*, 3rd ed., McGraw-Hill, 2002, ch. 23
       (lead-acid SLI batteries: resistance rising at low temperature and low charge; from memory).
       The default coefficients are the figures named under Parameters.

    Examples
    --------
    >>> round(internal_resistance(1.0, 1.0, -18.0, t_reference=30.0), 3)
    1.5
    >>> round(internal_resistance(1.0, 0.0, 25.0), 3)
    1.4
    """
    f_t = np.exp(temperature_coefficient * (t_reference - np.asarray(temperature, dtype=float)))
    f_soc = 1.0 + (empty_factor - 1.0) * (1.0 - np.minimum(np.maximum(soc, 0.0), 1.0))
    r = r_reference * f_t * f_soc * age_factor
    return float(r) if np.ndim(r) == 0 else r


def peukert_usable_charge(
    current: float | np.ndarray,
    capacity: float,
    rated_time: float,
    exponent: float,
    cap_at_rated: bool = True,
) -> float | np.ndarray:
    r"""Charge a battery delivers to its end voltage at a constant discharge current [C] (Peukert).

    .. math:: C_I = I\,t = C_H \left(\frac{I_H}{I}\right)^{k-1}, \qquad I_H = C_H / H

    Parameters
    ----------
    current : float or array
        Constant discharge current, > 0. [A]
    capacity : float
        Rated capacity C_H. [C]
    rated_time : float
        H, the rated discharge time (20 h for C20). [s]
    exponent : float
        Peukert exponent k ≥ 1. [–]
    cap_at_rated : bool
        Hold the usable charge at C_H for currents below I_H: the law would promise more charge than
        the battery holds (default, the safe side). [–]

    Returns
    -------
    float or array
        Usable charge. [C]

    Notes
    -----
    Peukert's law in its charge form (the discharge time is t = C_I / I = H (C_H/(I H))^k). k is
    fitted between two rates: the law is inaccurate above about 1C and knows no temperature or
    recovery in rest. At I = I_H it returns C_H.

    References
    ----------
    .. [1] W. Peukert, "Über die Abhängigkeit der Kapazität von der Entladestromstärke bei
       Bleiakkumulatoren", Elektrotechnische Zeitschrift 18 (1897) 287–288 (citation from memory).

    Examples
    --------
    >>> round(peukert_usable_charge(109.0, 225 * 3600.0, 20 * 3600.0, 1.25) / (225 * 3600.0), 3)
    0.567
    """
    if exponent < 1.0:
        raise ValueError("a Peukert exponent is at least 1")
    i = np.asarray(current, dtype=float)
    if np.any(i <= 0):
        raise ValueError("the discharge current must be positive")
    i_h = capacity / rated_time
    ratio = i_h / i
    if cap_at_rated:
        ratio = np.minimum(ratio, 1.0)
    q = capacity * ratio ** (exponent - 1.0)
    return float(q) if np.ndim(q) == 0 else q


def capacity_temperature_factor(
    temperature: float | np.ndarray, coefficient: float = 0.01, t_reference: float = 25.0
) -> float | np.ndarray:
    r"""Capacity at a battery temperature over the capacity at the reference temperature [–].

    .. math:: C(\theta)/C(\theta_{ref}) = 1 + \lambda(\theta - \theta_{ref})

    Parameters
    ----------
    temperature : float or array
        Battery temperature. [°C]
    coefficient : float
        λ [K⁻¹]: 0.006 for discharges of 3 h and longer, 0.01 for about 1 h (IEC 60896-11, from
        memory).
    t_reference : float
        Temperature the rated capacity is stated at. [°C]

    Returns
    -------
    float or array
        Capacity factor. [–]

    Notes
    -----
    Held at zero below the temperature where the line reaches it. λ = 0.01 gives 0.57 at −18 °C,
    close to "half the nominal capacity at 0 °F" quoted by battery distributors.

    References
    ----------
    .. [1] IEC 60896-11, Stationary lead-acid batteries, Part 11: vented types (capacity correction
       with temperature; the coefficients from memory).

    Examples
    --------
    >>> round(capacity_temperature_factor(-18.0), 2)
    0.57
    """
    f = np.maximum(1.0 + coefficient * (np.asarray(temperature, dtype=float) - t_reference), 0.0)
    return float(f) if np.ndim(f) == 0 else f
