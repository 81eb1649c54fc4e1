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
    """Dry air at ``t_k`` [K] and 1 atm: (density [kg/m³], viscosity [Pa·s], conductivity [W/(m·K)],
    Prandtl number [-]) by Sutherland's laws with White's constants [2]_.

    >>> [round(x, 4) for x in air_properties(300.0)][1:3]
    [0.0, 0.0262]
    """
    mu = 1.716e-5 * (t_k / 273.0) ** 1.5 * (273.0 + 111.0) / (t_k + 111.0)
    k = 0.0241 * (t_k / 273.0) ** 1.5 * (273.0 + 194.0) / (t_k + 194.0)
    rho = P_ATM / (R_AIR * t_k)
    return rho, mu, k, CP_AIR * mu / k


def convection_coefficient(diameter: float, t_surface: float, t_air: float) -> float:
    """Natural-convection coefficient h [W/(m²·K)] of a horizontal cylinder of ``diameter`` [m] with
    its surface at ``t_surface`` and the air at ``t_air`` [°C] (Churchill–Chu via ``ht``)."""
    ts, ta = t_surface + 273.15, t_air + 273.15
    if ts <= ta:
        return 0.0
    tf = 0.5 * (ts + ta)
    rho, mu, k, pr = air_properties(tf)
    nu = mu / rho
    gr = G0 * (1.0 / tf) * (ts - ta) * diameter**3 / (nu * nu)
    return Nu_horizontal_cylinder_Churchill_Chu(pr, gr) * k / diameter


def surface_loss(outer_d: float, t_surface: float, t_air: float, emissivity: float) -> float:
    """Heat lost per metre from the insulation surface [W/m]: convection plus radiation (``ht.q_rad``)."""
    h = convection_coefficient(outer_d, t_surface, t_air)
    rad = q_rad(emissivity, t_surface + 273.15, t_air + 273.15)
    return math.pi * outer_d * (h * (t_surface - t_air) + rad)


def insulation_resistance(conductor_d: float, outer_d: float, k_insulation: float) -> float:
    """Thermal resistance of the insulation per metre [K·m/W]: ln(D/d)/(2πk) (``ht.R_cylinder``)."""
    return R_cylinder(conductor_d, outer_d, k_insulation, 1.0)


def heat_shed(
    t_conductor: float, conductor_d: float, outer_d: float, k_insulation: float, emissivity: float, t_air: float
) -> float:
    """Heat a cable sheds per metre [W/m] with its conductor at ``t_conductor`` [°C]: the surface
    temperature is found where the insulation passes exactly what the surface loses."""
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
    """Current [A] that holds the conductor at ``t_conductor`` [°C] in still air at ``t_air``:
    I = √(q'_shed / R'(θc))."""
    q = heat_shed(t_conductor, conductor_d, outer_d, k_insulation, emissivity, t_air)
    return math.sqrt(q / (r20_per_m * (1 + alpha20 * (t_conductor - 20.0))))
