r"""Heating of conductors and windings (lumped, first-order models).

The cable model here is the one a conductor table implies: at its ampacity I_a in a zone at θz the
conductor settles at its rating temperature θc, so the heat it sheds per metre per kelvin is
G' = I_a² R'(θc)/(θc − θz). With the conductor's heat capacity per metre C' (copper only: the
insulation's share is left out, which heats the model faster, the safe side) and R'(θ) = R'20[1 +
α(θ − 20)], a constant current I gives the linear equation

.. math:: C' \frac{dθ}{dt} = I^2 R'_{20}[1 + α(θ - 20)] - G'(θ - θ_z) = k_0 + k_1 θ,

solved in closed form. The winding model is the same first-order balance with one thermal resistance
to the surroundings (lumped capacitance); the surroundings of a retarder's coils are themselves a
first-order node heated by the rotors while the retarder works.

References
----------
.. [1] F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, *Fundamentals of Heat and Mass
   Transfer*, 6th ed., Wiley, 2007, §5.3 (the lumped capacitance method, its first-order solution).
.. [2] IEC 60287-1-1:2006, clause 1.4 (the conductor's I²R(θ) with R(θ) = R20[1 + α20(θ − 20)]).
.. [3] CRC Handbook of Chemistry and Physics, "Melting, boiling, triple and critical points of the
   elements" (copper 1084.62 °C, aluminium 660.32 °C; the ITS-90 fixed points of those metals).
"""

from __future__ import annotations

import math

import numpy as np

#: Melting point of each conductor metal [°C] (CRC Handbook of Chemistry and Physics, [3]_; copper's and
#: aluminium's freezing points are ITS-90 defining fixed points). A conductor heated to it melts and opens.
MELTING_POINT: dict[str, float] = {"copper": 1084.62, "aluminium": 660.32}


def cable_loss_coefficient(
    i_amp: float, r20_per_m: float, alpha20: float, theta_rating: float, theta_zone: float
) -> float:
    r"""Heat a conductor sheds per metre per kelvin of rise, implied by its ampacity [W/(m·K)].

    .. math:: G' = \frac{I_a^2\, R'_{20}\,[1 + α_{20}(θ_c - 20)]}{θ_c - θ_z}

    Parameters
    ----------
    i_amp : float
        Ampacity I_a that brings the conductor to ``theta_rating`` in the zone. [A]
    r20_per_m : float
        Conductor resistance per metre at 20 °C. [Ω/m]
    alpha20 : float
        Temperature coefficient of resistance at 20 °C. [1/K]
    theta_rating : float
        Conductor temperature the ampacity is stated for θc. [°C]
    theta_zone : float
        Temperature of the surroundings θz, below ``theta_rating``. [°C]

    Returns
    -------
    float
        Heat shed per metre per kelvin of conductor rise. [W/(m·K)]

    Notes
    -----
    Linear in the rise: the loss of a table rating read as a constant conductance, valid near the
    rating; real convection and radiation grow faster than linearly, so far above the rating it
    understates the heat shed (the safe side).

    Examples
    --------
    >>> round(cable_loss_coefficient(100.0, 1e-3, 0.00393, 105.0, 30.0), 4)
    0.1779

    References
    ----------
    IEC 60287-1-1:2006 clause 1.4 for R(θ); the steady balance of Incropera et al. §5.3 [1]_.
    """
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
    r"""Conductor temperature after a time at a constant current, closed form [°C].

    .. math:: θ(t) = θ_\infty + (θ_0 - θ_\infty)\,e^{k_1 t},\quad
              k_1 = \frac{I^2 R'_{20} α - G'}{C'},\quad
              θ_\infty = -\frac{k_0}{k_1},\quad
              k_0 = \frac{I^2 R'_{20}(1 - 20α) + G' θ_z}{C'}

    Parameters
    ----------
    t : float
        Time at the current. [s]
    current : float
        The constant current I. [A]
    r20_per_m : float
        Conductor resistance per metre at 20 °C. [Ω/m]
    alpha20 : float
        Temperature coefficient of resistance at 20 °C. [1/K]
    g_loss : float
        Heat shed per metre per kelvin G' (:func:`cable_loss_coefficient`). [W/(m·K)]
    c_per_m : float
        Heat capacity of the conductor per metre C'. [J/(m·K)]
    theta_zone : float
        Temperature of the surroundings θz. [°C]
    theta_start : float
        Conductor temperature at t = 0. [°C]

    Returns
    -------
    float
        Conductor temperature; ``inf`` beyond thermal runaway (I²R'20α ≥ G': heating grows faster
        with temperature than cooling does, so no steady state exists). [°C]

    Notes
    -----
    Valid while the conductor is solid and the linear loss holds (see :func:`cable_loss_coefficient`).

    Examples
    --------
    >>> g = cable_loss_coefficient(100.0, 1e-3, 0.00393, 105.0, 30.0)
    >>> round(conductor_temperature(1e6, 100.0, 1e-3, 0.00393, g, 300.0, 30.0, 30.0), 6)
    105.0

    References
    ----------
    The first-order (lumped capacitance) solution of Incropera et al. §5.3 [1]_.
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
    r"""Steady temperature of a winding on a constant voltage: the root of its heat balance [°C].

    With x = θ − θa, the balance V²/R(θ) = x/R_th and R(θ) = R20[1 + α(θ − 20)] give
    αx² + bx − k = 0, b = 1 + α(θa − 20), k = V²R_th/R20, so

    .. math:: x = \frac{-b + \sqrt{b^2 + 4αk}}{2α}

    Parameters
    ----------
    voltage : float or array
        Voltage across the winding V. [V]
    r_ref : float or array
        Winding resistance at ``t_ref``. [Ω]
    t_ref : float or array
        Temperature ``r_ref`` is stated at. [°C]
    alpha20 : float or array
        Temperature coefficient of resistance at 20 °C, > 0. [1/K]
    r_th : float or array
        Thermal resistance from the winding to its surroundings. [K/W]
    t_surroundings : float or array
        Temperature of the surroundings θa. [°C]

    Returns
    -------
    float or array
        Steady winding temperature (element-wise for arrays). [°C]

    Notes
    -----
    The self-limiting effect: P = V²/R(θ) falls as θ rises, so the steady state lies below the
    constant-resistance estimate θa + V²R_th/R20. Valid for one uniform winding temperature and a
    thermal resistance that does not change with temperature (see :func:`winding_heating_rate`).

    Examples
    --------
    >>> round(winding_steady_temperature(28.0, 0.60, 20.0, 0.00393, 0.10, 20.0), 2)
    115.11

    References
    ----------
    Derived from the lumped balance of Incropera et al. §5.3 [1]_ with R(θ) of IEC 60287-1-1 [2]_;
    worked values in docs/references.md#winding-first-order-thermal.
    """
    r20 = r_ref / (1 + alpha20 * (t_ref - 20.0))
    b = 1 + alpha20 * (t_surroundings - 20.0)
    k = voltage * voltage * r_th / r20
    disc = b * b + 4 * alpha20 * k
    root = np.sqrt(disc) if isinstance(disc, np.ndarray) else math.sqrt(disc)
    x = (-b + root) / (2 * alpha20)
    return t_surroundings + x


def winding_heating_rate(
    power: float | np.ndarray,
    theta: float | np.ndarray,
    theta_surroundings: float | np.ndarray,
    r_th: float | np.ndarray,
    heat_capacity: float | np.ndarray,
) -> float | np.ndarray:
    r"""Rate of change of a lumped winding's temperature: its heat balance [K/s].

    .. math:: C \frac{dθ}{dt} = P - \frac{θ - θ_a}{R_{th}}

    One temperature for the whole winding (and the iron heated with it), heat to the surroundings
    through one thermal resistance: the first-order thermal model of a machine winding. With
    P = V²/R(θ) its zero is :func:`winding_steady_temperature`.

    Parameters
    ----------
    power : float or array
        Heat P dissipated in the winding. [W]
    theta : float or array
        Winding temperature θ. [°C]
    theta_surroundings : float or array
        Temperature of its surroundings θa. [°C]
    r_th : float or array
        Thermal resistance to the surroundings. [K/W]
    heat_capacity : float or array
        Heat capacity C of the winding and the iron heated with it. [J/K]

    Returns
    -------
    float or array
        dθ/dt (element-wise for arrays). [K/s]

    Notes
    -----
    Valid while the winding's temperature is nearly uniform (Biot number well below 1) and its
    thermal resistance does not depend on temperature.

    Examples
    --------
    >>> winding_heating_rate(1000.0, 20.0, 20.0, 0.1, 5000.0)
    0.2

    References
    ----------
    F. P. Incropera et al., *Fundamentals of Heat and Mass Transfer*, 6th ed., §5.3, the lumped
    capacitance method [1]_; docs/references.md#winding-first-order-thermal.
    """
    return (power - (theta - theta_surroundings) / r_th) / heat_capacity


def rotor_zone_rate(
    theta_zone: float | np.ndarray,
    theta_stated: float | np.ndarray,
    rise: float,
    retarding: bool,
    time_constant: float,
) -> float | np.ndarray:
    r"""Rate of change of the temperature of a retarder coil's surroundings heated by its rotors [K/s].

    .. math:: \frac{dθ_z}{dt} = \frac{θ_{z0} + Δθ\,[\text{retarding}] - θ_z}{τ}

    A first-order (lumped) node: while the retarder works its surroundings tend to the stated zone
    temperature plus the rise, and back to the stated temperature when it stops, with one time constant.

    Parameters
    ----------
    theta_zone : float or array
        Present temperature of the surroundings θz. [°C]
    theta_stated : float or array
        The zone temperature the drawing states θz0 (without rotor heat). [°C]
    rise : float
        Rise Δθ of the surroundings under retardation, at steady state. [K]
    retarding : bool
        Whether any stage is on (the rotors dissipate the braking power). [–]
    time_constant : float
        τ of the rise and of the fall, > 0. [s]

    Returns
    -------
    float or array
        dθz/dt. [K/s]

    Notes
    -----
    A stand-in for the rotor → stator heat path (radiation across the gap, air pumped by the rotor
    fins, conduction through the housing), for which no published treatment in an eddy-current
    retarder was found; the rise and time constant are the drawing's or a shipped default marked as
    invented. From a constant start under constant retardation it gives
    θz(t) = θz0 + Δθ(1 − e^(−t/τ)).

    Examples
    --------
    >>> rotor_zone_rate(80.0, 80.0, 40.0, True, 600.0)
    0.06666666666666667
    >>> rotor_zone_rate(100.0, 80.0, 40.0, False, 600.0) * 600.0
    -20.0

    References
    ----------
    The lumped capacitance method of Incropera et al. §5.3 [1]_ applied to the stator node;
    docs/references.md#winding-first-order-thermal.
    """
    target = theta_stated + (rise if retarding else 0.0)
    return (target - theta_zone) / time_constant
