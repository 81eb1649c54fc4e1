r"""The ends of a vehicle's supply: the alternator's output against its temperature, the regulator's
set-point with its tolerance and temperature compensation, and the smallest and largest bus voltage
that follow.

Pure functions on SI floats: voltages [V], currents [A], resistances [Ω], temperatures [°C],
gradients [V/K].
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Ambient temperature at which an alternator's output is rated [°C]: ISO 8854:2012 tests at
#: (23 ± 5) °C.
ISO8854_RATING_AMBIENT = 23.0


def alternator_output_factor(
    temperature: float | np.ndarray,
    hot_temperature: float,
    hot_derating: float,
    rated_temperature: float = ISO8854_RATING_AMBIENT,
    cold_temperature: float | None = None,
    cold_excess: float = 0.0,
) -> float | np.ndarray:
    r"""Alternator output at a temperature over its rated output [–].

    Linear between the rating point and the hot point, and (optionally) between the rating point and
    a cold point; held at the end values beyond them:

    .. math::

       f(\theta) = 1 - d_{hot}\,\frac{\theta - \theta_R}{\theta_{hot} - \theta_R}\quad(\theta \ge \theta_R),\qquad
       f(\theta) = 1 + e_{cold}\,\frac{\theta_R - \theta}{\theta_R - \theta_{cold}}\quad(\theta < \theta_R)

    Parameters
    ----------
    temperature : float or array
        The alternator's cooling-air (intake) temperature. [°C]
    hot_temperature : float
        Temperature at which the output has fallen by ``hot_derating`` (the hot test: the highest
        engine-bay temperature the alternator breathes). [°C]
    hot_derating : float
        Fraction of the rated output lost hot: 0.15–0.35 on published hot and cold curves of a small
        marine alternator (hot 16 / 41 / 48 A against cold 24 / 50 A). [–]
    rated_temperature : float
        The rating's ambient, 23 °C (ISO 8854:2012). [°C]
    cold_temperature : float, optional
        Temperature at which a cold alternator gives ``cold_excess`` more than its rating (None: no
        cold end). [°C]
    cold_excess : float
        A cold alternator briefly gives more than its rating (+10–20 %, from memory). Default: no
        excess (the rating is the cold end, the safe side for a sag check; take the excess for the
        largest fault current). [–]

    Returns
    -------
    float or array
        Output over rated output. [–]

    Notes
    -----
    An envelope, not a machine model: a maker's hot curve replaces it. The output curves of
    ISO 8854 are taken after thermal stabilisation; "hot" here means the machine at the highest
    intake temperature of its zone after a long run.

    References
    ----------
    .. [1] ISO 8854:2012, Road vehicles — Alternators with regulators — Test methods and general
       requirements (ambient (23 ± 5) °C).

    Examples
    --------
    >>> round(alternator_output_factor(105.0, 105.0, 0.25), 3), round(alternator_output_factor(64.0, 105.0, 0.25), 3)
    (0.75, 0.875)
    """
    if not 0.0 <= hot_derating < 1.0:
        raise ValueError("the hot derating is a fraction 0 ≤ d < 1")
    if hot_temperature <= rated_temperature:
        raise ValueError("the hot temperature must lie above the rating temperature")
    t = np.asarray(temperature, dtype=float)
    hot = 1.0 - hot_derating * np.clip((t - rated_temperature) / (hot_temperature - rated_temperature), 0.0, 1.0)
    if cold_temperature is not None and cold_excess:
        if cold_temperature >= rated_temperature:
            raise ValueError("the cold temperature must lie below the rating temperature")
        cold = 1.0 + cold_excess * np.clip((rated_temperature - t) / (rated_temperature - cold_temperature), 0.0, 1.0)
        f = np.where(t < rated_temperature, cold, hot)
    else:
        f = hot
    return float(f) if np.ndim(f) == 0 else f


def regulator_setpoint(
    temperature: float | np.ndarray, setpoint: float, gradient: float, t_reference: float = 25.0
) -> float | np.ndarray:
    r"""Regulated voltage of a temperature-compensated regulator [V].

    .. math:: U(\theta) = U_{set} + g\,(\theta - \theta_{ref})

    Parameters
    ----------
    temperature : float or array
        The regulator's (or its sensor's) temperature. [°C]
    setpoint : float
        Set-point at ``t_reference``. [V]
    gradient : float
        g, negative for a compensated regulator: −3.5 ± 2 mV/K on one 14.55 V car alternator's
        specification; about −10 to −16 mV/K in service specifications of 12 V regulators; double
        for 24 V (derived). [V/K]
    t_reference : float
        Temperature the set-point is stated at. [°C]

    Returns
    -------
    float or array
        Regulated voltage. [V]

    Notes
    -----
    Linear compensation, as regulators implement it over their working range; a regulator's own
    upper and lower limits (where its maker gives them) bound it (see :func:`regulated_bus_range`).

    References
    ----------
    .. [1] ISO 8854:2012, Road vehicles — Alternators with regulators — Test methods and general
       requirements (regulated voltage against temperature; the gradients named above are makers'
       and service figures).

    Examples
    --------
    >>> round(regulator_setpoint(-30.0, 28.2, -0.020), 2)
    29.3
    """
    u = setpoint + gradient * (np.asarray(temperature, dtype=float) - t_reference)
    return float(u) if np.ndim(u) == 0 else u


@dataclass(frozen=True)
class RegulatedRange:
    """Ends of the regulated bus [V] and the conditions that make them."""

    low: float  # [V]
    high: float  # [V]
    low_temperature: float  # regulator temperature of the low end [°C]
    high_temperature: float  # regulator temperature of the high end [°C]
    low_gradient: float  # gradient of the low end [V/K]
    high_gradient: float  # gradient of the high end [V/K]


def regulated_bus_range(
    setpoint: float,
    tolerance: float,
    gradient: float,
    t_min: float,
    t_max: float,
    t_reference: float = 25.0,
    gradient_tolerance: float = 0.0,
    ceiling: float | None = None,
) -> RegulatedRange:
    r"""Smallest and largest regulated voltage over a regulator temperature range and its tolerances.

    .. math::

       U_{max} = \max_{\theta, g}\; U_{set} + \Delta U + g(\theta - \theta_{ref}),\qquad
       U_{min} = \min_{\theta, g}\; U_{set} - \Delta U + g(\theta - \theta_{ref})

    over θ ∈ [θmin, θmax] and g ∈ [g − Δg, g + Δg]. The expression is bilinear in θ and g, so the
    extremes lie at the four corners, which are all evaluated. For a negative gradient the highest
    voltage comes with the coldest regulator (the first minutes after a cold start).

    Parameters
    ----------
    setpoint : float
        Set-point at ``t_reference``. [V]
    tolerance : float
        Its ± tolerance (±2 % on one maker's specification). [V]
    gradient : float
        Temperature compensation. [V/K]
    t_min : float
        Lowest regulator temperature. [°C]
    t_max : float
        Highest regulator temperature. [°C]
    t_reference : float
        Temperature the set-point is stated at. [°C]
    gradient_tolerance : float
        ± tolerance of the gradient. [V/K]
    ceiling : float, optional
        The regulator's own upper limit, if its maker gives one. [V]

    Returns
    -------
    RegulatedRange
        ``low`` and ``high`` [V] with the temperatures [°C] and gradients [V/K] that make them.

    Notes
    -----
    Steady regulation only: the failed-regulator overvoltage (ISO 16750-2 4.3.1) and load dump are
    separate cases.

    References
    ----------
    .. [1] ISO 8854:2012 (regulated voltage and its temperature dependence, as for
       :func:`regulator_setpoint`).

    Examples
    --------
    24 V: 28.2 ± 0.4 V, −20 mV/K, regulator from −30 °C (derived worked example):

    >>> r = regulated_bus_range(28.2, 0.4, -0.020, -30.0, 80.0)
    >>> round(r.high, 2), r.high_temperature, round(r.low, 2), r.low_temperature
    (29.7, -30.0, 26.7, 80.0)
    """
    if t_max < t_min:
        raise ValueError("t_max must not lie below t_min")
    corners = [(t, g) for t in (t_min, t_max) for g in (gradient - gradient_tolerance, gradient + gradient_tolerance)]
    values = [setpoint + g * (t - t_reference) for t, g in corners]
    i_hi = int(np.argmax(values))
    i_lo = int(np.argmin(values))
    high = values[i_hi] + tolerance
    if ceiling is not None:
        high = min(high, ceiling)
    low = values[i_lo] - tolerance
    return RegulatedRange(low, high, corners[i_lo][0], corners[i_hi][0], corners[i_lo][1], corners[i_hi][1])


def bus_voltage(
    demand: float | np.ndarray,
    battery_emf: float,
    battery_resistance: float,
    alternator_limit: float,
    regulated: float,
    alternator_resistance: float = 0.0,
) -> float | np.ndarray:
    r"""Bus voltage at the battery terminals for a constant-current demand [V].

    The alternator holds ``regulated`` behind ``alternator_resistance`` until it reaches its limit;
    beyond it, it is a current source of the limit and the battery supplies the rest through its
    resistance; a regulated voltage below the battery's EMF leaves the battery in charge of the bus.
    With the Norton form of both sources (regulating) or the battery alone (limited):

    .. math::

       U_{reg} = \frac{E/R_b + U_{set}/R_a - I}{1/R_b + 1/R_a},\qquad
       U_{lim} = E - (I - I_{lim})\,R_b

    and the state is the one whose alternator current lies in [0, I_lim].

    Parameters
    ----------
    demand : float or array
        Current the loads draw from the bus. [A]
    battery_emf : float
        Battery EMF (open-circuit voltage). [V]
    battery_resistance : float
        Battery internal resistance. [Ω]
    alternator_limit : float
        Output the alternator can give at its speed and temperature (0: not charging). [A]
    regulated : float
        The regulator's voltage at this end of its range. [V]
    alternator_resistance : float
        Source resistance of the regulating alternator (0: ideal regulation). [Ω]

    Returns
    -------
    float or array
        Bus voltage. [V]

    Notes
    -----
    A constant-current demand is the conservative form for a sag check (resistive coils draw less
    as the bus falls). The network solve in the analysis replaces this for a drawing; this closed
    form is its check value.

    References
    ----------
    .. [1] Superposition of two Norton sources (any circuit text, e.g. Hughes, *Electrical and
       Electronic Technology*, network theorems chapter; from memory); the alternator as a regulated
       source with a current limit as in ISO 8854:2012.

    Examples
    --------
    Hot alternator (100 A × 0.75), 250 A demand, half-charged 24 V pair at 30 mΩ:

    >>> round(bus_voltage(250.0, 24.48, 0.030, 75.0, 27.6), 2)
    19.23
    """
    i = np.asarray(demand, dtype=float)
    rb, ra = battery_resistance, alternator_resistance
    if alternator_limit <= 0:
        u = battery_emf - i * rb
    else:
        if ra > 0:
            u_reg = (battery_emf / rb + regulated / ra - i) / (1.0 / rb + 1.0 / ra)
            i_alt = (regulated - u_reg) / ra
        else:
            u_reg = np.full_like(i, regulated)
            i_alt = i + (regulated - battery_emf) / rb  # the alternator feeds the load and charges
        u_lim = battery_emf - (i - alternator_limit) * rb
        u_off = battery_emf - i * rb
        u = np.where(i_alt > alternator_limit, u_lim, np.where(i_alt < 0, u_off, u_reg))
    return float(u) if np.ndim(u) == 0 else u


def largest_bus(regulated_high: float, alternator_present: bool, battery_emf_max: float) -> float:
    r"""Highest bus in service [V].

    .. math:: U_{max} = \max(U_{reg,high}, E_{max})\ \text{with an alternator},\qquad U_{max} = E_{max}\ \text{without}

    Parameters
    ----------
    regulated_high : float
        The regulator's highest voltage (:func:`regulated_bus_range`). [V]
    alternator_present : bool
        Whether an alternator charges the bus. [–]
    battery_emf_max : float
        The battery's highest EMF: a surface-charged battery, 2.2 V per cell (a derived figure). [V]

    Returns
    -------
    float
        Highest bus voltage in service. [V]

    Notes
    -----
    A failed regulator (long-term overvoltage, ISO 16750-2 4.3.1) and load dump are separate cases,
    not this one.

    References
    ----------
    .. [1] ISO 16750-2:2010, Road vehicles — Environmental conditions and testing for electrical and
       electronic equipment — Part 2: Electrical loads (supply voltage ranges).

    Examples
    --------
    >>> largest_bus(29.7, True, 26.4), largest_bus(29.7, False, 26.4)
    (29.7, 26.4)
    """
    return max(regulated_high, battery_emf_max) if alternator_present else battery_emf_max
