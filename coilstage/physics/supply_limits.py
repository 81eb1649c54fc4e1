r"""The ends of a vehicle's supply: the regulator's set-point with its tolerance and temperature
compensation, and the ends of the regulated bus that follow.

Pure functions on SI floats: voltages [V], temperatures [°C], gradients [V/K].
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


def regulator_setpoint(
    temperature: float | np.ndarray,
    setpoint: float,
    gradient: float | np.ndarray,
    t_reference: float = 25.0,
    limit: float | None = None,
) -> float | np.ndarray:
    r"""Regulated voltage of a temperature-compensated regulator [V].

    .. math:: U(\theta) = U_{set} + \operatorname{clip}\big(g\,(\theta - \theta_{ref}),\,-\Delta U_c,\,+\Delta U_c\big)

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
    limit : float, optional
        ΔU_c, the most the compensation moves the set-point either way, where the regulator's maker
        gives it (None: linear over any temperature). [V]

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
    >>> round(regulator_setpoint(-30.0, 28.2, -0.020, limit=0.6), 2)
    28.8
    """
    shift = gradient * (np.asarray(temperature, dtype=float) - t_reference)
    if limit is not None:
        shift = np.clip(shift, -limit, limit)
    u = setpoint + shift
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
    compensation_limit: float | None = None,
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
    compensation_limit : float, optional
        The most the compensation moves the set-point either way, if its maker gives it (as
        :func:`regulator_setpoint`'s ``limit``). [V]

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
    values = [float(regulator_setpoint(t, setpoint, g, t_reference, compensation_limit)) for t, g in corners]
    i_hi = int(np.argmax(values))
    i_lo = int(np.argmin(values))
    high = values[i_hi] + tolerance
    if ceiling is not None:
        high = min(high, ceiling)
    low = values[i_lo] - tolerance
    return RegulatedRange(low, high, corners[i_lo][0], corners[i_hi][0], corners[i_lo][1], corners[i_hi][1])
