r"""Short-circuit withstand of conductors (adiabatic heating) and the material constant K.

References
----------
.. [1] IEC 60949:1988, Calculation of thermally permissible short-circuit currents, taking into
   account non-adiabatic heating effects (adiabatic equation, clause 3).
.. [2] IEC 60364-5-54 Annex A / IEC 60364-4-43, k-factors for protective conductors (K = 226 Cu).
"""

from __future__ import annotations

import math

#: Volumetric heat capacity of copper at 20 °C [J/(K·m³)], IEC 60949 (3.45e-3 J/(K·mm³)).
QC_COPPER = 3.45e6
#: Reciprocal temperature coefficient of copper [K] (IEC 60949: β = 234.5).
BETA_COPPER = 234.5
#: Aluminium: Qc = 2.5e-3 J/(K·mm³), β = 228 (IEC 60949).
QC_ALUMINIUM = 2.5e6
BETA_ALUMINIUM = 228.0


def material_k(qc: float, beta: float, rho20: float) -> float:
    r"""Material constant K = √(Qc(β + 20)/ρ20) of the adiabatic equation [A·s^½/m²].

    For copper (Qc = 3.45 J/(K·cm³), β = 234.5 K, ρ20 = 1.7241e-8 Ω·m) K = 225.7e6 A·s^½/m², i.e.
    the 226 A·s^½/mm² of IEC 60949.

    >>> round(material_k(3.45e6, 234.5, 1/58*1e-6) / 1e6, 1)
    225.7
    """
    return math.sqrt(qc * (beta + 20.0) / rho20)


def k_factor(k_material: float, beta: float, theta_i: float, theta_f: float) -> float:
    r"""k = K·√ln((β + θf)/(β + θi)) [A·s^½/m²] for a conductor heated from θi to θf [°C].

    >>> round(k_factor(226e6, 234.5, 70, 160) / 1e6, 1)
    115.0
    """
    return k_material * math.sqrt(math.log((beta + theta_f) / (beta + theta_i)))


def adiabatic_final_temperature(i2t: float, area: float, k_material: float, beta: float, theta_i: float) -> float:
    r"""Conductor temperature after a Joule integral ``i2t`` [A²·s] with no heat lost [°C].

    Inverting I²t = K²S² ln((θf + β)/(θi + β)):

    .. math:: θ_f = (θ_i + β)\,\exp\!\left(\frac{I^2t}{K^2 S^2}\right) - β

    Parameters: i2t [A²·s], area S [m²], k_material K [A·s^½/m²], beta [K], theta_i [°C].
    Valid for faults up to about 5 s (IEC 60949); longer, the real conductor loses heat and ends
    cooler, so the figure stays on the safe side.
    """
    return (theta_i + beta) * math.exp(i2t / (k_material * area) ** 2) - beta


def adiabatic_heating_rate(j: float, rho: float, qc: float) -> float:
    """dθ/dt = J²ρ/(γc) of a conductor at current density ``j`` [A/m²], resistivity ``rho`` [Ω·m] and
    volumetric heat capacity ``qc`` [J/(K·m³)] [K/s] (energy balance of a unit volume)."""
    return j * j * rho / qc
