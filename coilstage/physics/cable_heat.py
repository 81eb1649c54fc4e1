r"""Steady heat balance of a single insulated wire in still air, with the ``ht`` library's correlations.

Per metre of wire, with the conductor at θc, the insulation surface at θs and the air at θa:

* heat made:    q' = I²R'20[1 + α20(θc − 20)]
* through the insulation (a cylindrical shell): θc − θs = q'·ln(D/d)/(2πk)   (``ht.R_cylinder``)
* from the surface: q' = πD[h(θs − θa) + εσ(Ts⁴ − Ta⁴)]   (``ht.q_rad`` for the radiation)
* natural convection from a horizontal isothermal cylinder, Churchill–Chu (1975)
  (``ht.Nu_horizontal_cylinder_Churchill_Chu``), air properties at the film temperature.

References
----------
.. [1] S. W. Churchill, H. H. S. Chu, "Correlating equations for laminar and turbulent free
   convection from a horizontal cylinder", Int. J. Heat Mass Transfer 18:1049-1053, 1975.
.. [2] F. M. White, *Viscous Fluid Flow*, 3rd ed., McGraw-Hill, 2006, Table 1-2 (Sutherland's law
   constants for air: μ0 = 1.716e-5 Pa·s, k0 = 0.0241 W/(m·K) at 273 K; S = 111 K for μ, 194 K for k).
.. [3] IEC 60287-2-1 uses the same cylindrical-shell insulation resistance (T1 = ρT/2π ln(1 + 2t/dc)).
"""

from __future__ import annotations

import math

from ht import Nu_horizontal_cylinder_Churchill_Chu, R_cylinder, q_rad

from coilstage.physics.numeric import bracketed_root

G0 = 9.80665  # standard gravity [m/s²]
R_AIR = 287.05  # specific gas constant of dry air [J/(kg·K)]
CP_AIR = 1006.0  # specific heat of dry air near room temperature [J/(kg·K)] (from memory; varies < 1 % to 400 K)
P_ATM = 101325.0  # [Pa]


def air_properties(t_k: float) -> tuple[float, float, float, float]:
    r"""Properties of dry air at 1 atm: density, viscosity, conductivity and Prandtl number [SI].

    .. math:: μ = μ_0 \left(\frac{T}{273}\right)^{3/2}\frac{273 + S_μ}{T + S_μ},\quad
              k = k_0 \left(\frac{T}{273}\right)^{3/2}\frac{273 + S_k}{T + S_k},\quad
              ρ = \frac{p}{R T},\quad Pr = \frac{c_p μ}{k}

    Parameters
    ----------
    t_k : float
        Air temperature (absolute). [K]

    Returns
    -------
    tuple of float
        (density [kg/m³], dynamic viscosity [Pa·s], thermal conductivity [W/(m·K)], Prandtl number [–]).

    Notes
    -----
    Sutherland's laws hold for air from about 200 K to 1000 K within about 2 % (White, Table 1-2);
    c_p is held at its room-temperature value (from memory; it varies by under 1 % to 400 K).

    Examples
    --------
    >>> [round(x, 4) for x in air_properties(300.0)][1:3]
    [0.0, 0.0262]

    References
    ----------
    F. M. White, *Viscous Fluid Flow*, 3rd ed., McGraw-Hill, 2006, Table 1-2 (Sutherland constants) [2]_.
    """
    mu = 1.716e-5 * (t_k / 273.0) ** 1.5 * (273.0 + 111.0) / (t_k + 111.0)
    k = 0.0241 * (t_k / 273.0) ** 1.5 * (273.0 + 194.0) / (t_k + 194.0)
    rho = P_ATM / (R_AIR * t_k)
    return rho, mu, k, CP_AIR * mu / k


def convection_coefficient(diameter: float, t_surface: float, t_air: float) -> float:
    r"""Natural-convection coefficient of a horizontal isothermal cylinder in still air [W/(m²·K)].

    .. math:: h = \frac{k}{D}\,Nu(Pr, Gr),\qquad Gr = \frac{g β (T_s - T_a) D^3}{ν^2},\ β = 1/T_f

    with Nu from the Churchill–Chu correlation (``ht.Nu_horizontal_cylinder_Churchill_Chu``) and the air's
    properties at the film temperature T_f = (T_s + T_a)/2.

    Parameters
    ----------
    diameter : float
        Outside diameter of the cylinder D. [m]
    t_surface : float
        Surface temperature. [°C]
    t_air : float
        Temperature of the still air far from it. [°C]

    Returns
    -------
    float
        Convection coefficient; 0 when the surface is not above the air. [W/(m²·K)]

    Notes
    -----
    Churchill and Chu fitted Ra from 1e-5 to 1e12; a single wire in free air, no forced flow.

    Examples
    --------
    >>> round(convection_coefficient(3e-3, 60.0, 25.0), 2)
    14.34

    References
    ----------
    S. W. Churchill, H. H. S. Chu, Int. J. Heat Mass Transfer 18:1049-1053, 1975 [1]_;
    docs/references.md#insulated-wire-heat-balance.
    """
    ts, ta = t_surface + 273.15, t_air + 273.15
    if ts <= ta:
        return 0.0
    tf = 0.5 * (ts + ta)
    rho, mu, k, pr = air_properties(tf)
    nu = mu / rho
    gr = G0 * (1.0 / tf) * (ts - ta) * diameter**3 / (nu * nu)
    return Nu_horizontal_cylinder_Churchill_Chu(pr, gr) * k / diameter


def surface_loss(outer_d: float, t_surface: float, t_air: float, emissivity: float) -> float:
    r"""Heat lost per metre from an insulation surface by convection and radiation [W/m].

    .. math:: q' = πD\,[h\,(θ_s - θ_a) + εσ(T_s^4 - T_a^4)]

    Parameters
    ----------
    outer_d : float
        Outside diameter of the insulation D. [m]
    t_surface : float
        Surface temperature θs. [°C]
    t_air : float
        Air and surroundings temperature θa. [°C]
    emissivity : float
        Emissivity of the insulation surface ε. [–]

    Returns
    -------
    float
        Heat lost per metre of wire. [W/m]

    Notes
    -----
    Radiation to surroundings at the air's temperature (a wire in a large enclosure); convection as
    :func:`convection_coefficient`.

    Examples
    --------
    >>> round(surface_loss(3e-3, 60.0, 25.0, 0.9), 3)
    6.855

    References
    ----------
    Incropera et al., *Fundamentals of Heat and Mass Transfer*, §1.2 (Stefan–Boltzmann exchange, via
    ``ht.q_rad``) and §9.6 (Churchill–Chu); docs/references.md#insulated-wire-heat-balance.
    """
    h = convection_coefficient(outer_d, t_surface, t_air)
    rad = q_rad(emissivity, t_surface + 273.15, t_air + 273.15)
    return math.pi * outer_d * (h * (t_surface - t_air) + rad)


def insulation_resistance(conductor_d: float, outer_d: float, k_insulation: float) -> float:
    r"""Thermal resistance of a cylindrical insulation shell per metre of wire [K·m/W].

    .. math:: R' = \frac{\ln(D/d)}{2πk}

    Parameters
    ----------
    conductor_d : float
        Inside (conductor) diameter d. [m]
    outer_d : float
        Outside diameter D. [m]
    k_insulation : float
        Thermal conductivity of the insulation k. [W/(m·K)]

    Returns
    -------
    float
        Thermal resistance per metre. [K·m/W]

    Notes
    -----
    Steady radial conduction through a homogeneous shell (``ht.R_cylinder`` for one metre).

    Examples
    --------
    >>> round(insulation_resistance(2e-3, 3e-3, 0.17), 4)
    0.3796

    References
    ----------
    IEC 60287-2-1, clause 4.1.2 (T1 = ρT/2π ln(1 + 2t/dc)) [3]_; docs/references.md#insulated-wire-heat-balance.
    """
    return R_cylinder(conductor_d, outer_d, k_insulation, 1.0)


def heat_shed(
    t_conductor: float, conductor_d: float, outer_d: float, k_insulation: float, emissivity: float, t_air: float
) -> float:
    r"""Heat a single insulated wire in still air sheds per metre at a conductor temperature [W/m].

    .. math:: q' = \frac{θ_c - θ_s}{R'_{ins}} = πD\,[h(θ_s - θ_a) + εσ(T_s^4 - T_a^4)]

    solved for the surface temperature θs (bracketed root between θa and θc).

    Parameters
    ----------
    t_conductor : float
        Conductor temperature θc. [°C]
    conductor_d : float
        Conductor diameter d. [m]
    outer_d : float
        Outside diameter of the insulation D. [m]
    k_insulation : float
        Thermal conductivity of the insulation. [W/(m·K)]
    emissivity : float
        Emissivity of the insulation surface. [–]
    t_air : float
        Still-air temperature θa. [°C]

    Returns
    -------
    float
        Heat shed per metre; 0 when the conductor is not above the air. [W/m]

    Notes
    -----
    One horizontal wire, far from others and from surfaces; see :func:`convection_coefficient` for
    the range of the correlation. Bundles are corrected outside (the bundle factor).

    Examples
    --------
    >>> round(heat_shed(105.0, 2e-3, 3e-3, 0.17, 0.9, 25.0), 2)
    16.77

    References
    ----------
    Churchill and Chu (1975) [1]_ and IEC 60287-2-1 [3]_; worked values in
    docs/references.md#insulated-wire-heat-balance.
    """
    if t_conductor <= t_air:
        return 0.0
    r_ins = insulation_resistance(conductor_d, outer_d, k_insulation)

    def mismatch(ts: float) -> float:
        return (t_conductor - ts) / r_ins - surface_loss(outer_d, ts, t_air, emissivity)

    ts = bracketed_root(mismatch, t_air, t_conductor, xtol=1e-9)
    return (t_conductor - ts) / r_ins


def computed_ampacity(
    t_conductor: float,
    r20_per_m: float,
    alpha20: float,
    conductor_d: float,
    outer_d: float,
    k_insulation: float,
    emissivity: float,
    t_air: float,
) -> float:
    r"""Current that holds a single insulated wire's conductor at a temperature in still air [A].

    .. math:: I = \sqrt{\frac{q'_{shed}(θ_c)}{R'_{20}[1 + α_{20}(θ_c - 20)]}}

    Parameters
    ----------
    t_conductor : float
        Conductor temperature held θc. [°C]
    r20_per_m : float
        Conductor resistance per metre at 20 °C. [Ω/m]
    alpha20 : float
        Temperature coefficient of resistance at 20 °C. [1/K]
    conductor_d : float
        Conductor diameter. [m]
    outer_d : float
        Outside diameter of the insulation. [m]
    k_insulation : float
        Thermal conductivity of the insulation. [W/(m·K)]
    emissivity : float
        Emissivity of the insulation surface. [–]
    t_air : float
        Still-air temperature. [°C]

    Returns
    -------
    float
        The steady current (a computed ampacity). [A]

    Notes
    -----
    As :func:`heat_shed`; an isolated wire in still air, not a regulation's rating (which carries
    margin for real installations).

    Examples
    --------
    >>> round(computed_ampacity(105.0, 7.6e-3, 0.00393, 2e-3, 3e-3, 0.17, 0.9, 25.0), 1)
    40.7

    References
    ----------
    IEC 60287-1-1 clause 1.4 for R(θ); docs/references.md#insulated-wire-heat-balance (40.7 A worked with ht 1.2.0).
    """
    q = heat_shed(t_conductor, conductor_d, outer_d, k_insulation, emissivity, t_air)
    return math.sqrt(q / (r20_per_m * (1 + alpha20 * (t_conductor - 20.0))))
