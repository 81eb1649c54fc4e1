r"""Heating of conductors and windings (lumped, first-order models).

The cable model here is the one a conductor table implies: at its ampacity I_a in a zone at θz the
conductor settles at its rating temperature θc, so the heat it sheds per metre per kelvin is
G' = I_a² R'(θc)/(θc − θz). With the conductor's heat capacity per metre C' (copper only: the
insulation's share is left out, which heats the model faster, the safe side) and R'(θ) = R'20[1 +
α(θ − 20)], a constant current I gives the linear equation

.. math:: C' \frac{dθ}{dt} = I^2 R'_{20}[1 + α(θ - 20)] - G'(θ - θ_z) = k_0 + k_1 θ,

solved in closed form. The winding model is the same first-order balance with one thermal resistance
to the surroundings (lumped capacitance).

References
----------
.. [1] F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, *Fundamentals of Heat and Mass
   Transfer*, 6th ed., Wiley, 2007, §5.3 (the lumped capacitance method, its first-order solution).
.. [2] IEC 60287-1-1:2006, clause 1.4 (the conductor's I²R(θ) with R(θ) = R20[1 + α20(θ − 20)]).
"""

from __future__ import annotations

import math

import numpy as np


def cable_loss_coefficient(
    i_amp: float, r20_per_m: float, alpha20: float, theta_rating: float, theta_zone: float
) -> float:
    """Heat shed per metre per kelvin G' [W/(m·K)] implied by an ampacity ``i_amp`` [A] that brings
    the conductor to ``theta_rating`` [°C] in a zone at ``theta_zone`` [°C]."""
    r = r20_per_m * (1 + alpha20 * (theta_rating - 20.0))
    return i_amp * i_amp * r / (theta_rating - theta_zone)


def conductor_temperature(
    t: float,
    current: float,
    r20_per_m: float,
    alpha20: float,
    g_loss: float,
    c_per_m: float,
    theta_zone: float,
    theta_start: float,
) -> float:
    """Conductor temperature [°C] after ``t`` [s] at a constant ``current`` [A] (closed form).

    Parameters: r20_per_m [Ω/m], alpha20 [K⁻¹], g_loss G' [W/(m·K)], c_per_m C' [J/(m·K)],
    theta_zone and theta_start [°C]. Returns ``inf`` if the current is beyond thermal runaway
    (I²R'20α ≥ G': heating grows faster with temperature than cooling does).
    """
    i2r = current * current * r20_per_m
    k1 = (i2r * alpha20 - g_loss) / c_per_m
    k0 = (i2r * (1 - 20.0 * alpha20) + g_loss * theta_zone) / c_per_m
    if k1 >= 0:
        return math.inf
    theta_inf = -k0 / k1
    return theta_inf + (theta_start - theta_inf) * math.exp(k1 * t)


def winding_steady_temperature(
    voltage: float, r_ref: float, t_ref: float, alpha20: float, r_th: float, t_surroundings: float
) -> float:
    r"""Steady temperature of a winding on a constant ``voltage`` [°C]: the root of its heat balance.

    With x = θ − θa, the balance V²/R(θ) = x/R_th and R(θ) = R20[1 + α(θ − 20)] give
    αx² + bx − k = 0, b = 1 + α(θa − 20), k = V²R_th/R20, so

    .. math:: x = \frac{-b + \sqrt{b^2 + 4αk}}{2α}

    (derived from the balance of [1]_; the self-limiting effect: P falls as θ rises).

    Parameters: voltage [V], r_ref [Ω] at t_ref [°C], alpha20 [K⁻¹], r_th to the surroundings
    [K/W], t_surroundings [°C]; floats, or numpy arrays of one value per winding (element-wise).

    >>> round(winding_steady_temperature(28.0, 0.60, 20.0, 0.00393, 0.10, 20.0), 2)
    115.11
    """
    r20 = r_ref / (1 + alpha20 * (t_ref - 20.0))
    b = 1 + alpha20 * (t_surroundings - 20.0)
    k = voltage * voltage * r_th / r20
    disc = b * b + 4 * alpha20 * k
    root = np.sqrt(disc) if isinstance(disc, np.ndarray) else math.sqrt(disc)
    x = (-b + root) / (2 * alpha20)
    return t_surroundings + x


def winding_heating_rate(power, theta, theta_surroundings, r_th, heat_capacity):
    r"""Rate of change of a lumped winding's temperature [K/s]: its heat balance.

    .. math:: C \frac{dθ}{dt} = P - \frac{θ - θ_a}{R_{th}}

    One temperature for the whole winding (and the iron heated with it), heat to the surroundings
    through one thermal resistance: the first-order thermal model of a machine winding
    (IEC 60034-1 thermal equivalent; F. P. Incropera et al., *Fundamentals of Heat and Mass Transfer*,
    6th ed., §5.3, the lumped capacitance method). With P = V²/R(θ) its zero is
    :func:`winding_steady_temperature`.

    Parameters: power P dissipated in the winding [W], theta θ [°C], theta_surroundings θa [°C],
    r_th to the surroundings [K/W], heat_capacity C [J/K]; floats or numpy arrays (element-wise).

    Valid while the winding's temperature is nearly uniform (Biot number well below 1) and its
    thermal resistance does not depend on temperature.

    >>> winding_heating_rate(1000.0, 20.0, 20.0, 0.1, 5000.0)
    0.2
    """
    return (power - (theta - theta_surroundings) / r_th) / heat_capacity
