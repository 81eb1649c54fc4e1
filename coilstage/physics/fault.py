r"""Short-circuit withstand of conductors (adiabatic heating) and the material constant K.

References
----------
.. [1] IEC 60949:1988, Calculation of thermally permissible short-circuit currents, taking into
   account non-adiabatic heating effects (adiabatic equation, clause 3).
.. [2] IEC 60364-5-54 Annex A / IEC 60364-4-43, k-factors for protective conductors (K = 226 Cu).
"""

from __future__ import annotations

import math
import sys

import numpy as np

#: Largest argument of math.exp that stays finite (ln of the largest double, 709.78).
_EXP_MAX = math.log(sys.float_info.max)


def material_k(qc: float, beta: float, rho20: float) -> float:
    r"""Material constant K of the adiabatic short-circuit equation [A·s^½/m²].

    .. math:: K = \sqrt{\frac{Q_c(β + 20)}{ρ_{20}}}

    Parameters
    ----------
    qc : float
        Volumetric heat capacity of the conductor at 20 °C. [J/(K·m³)]
    beta : float
        Reciprocal temperature coefficient of resistance at 0 °C. [K]
    rho20 : float
        Resistivity at 20 °C. [Ω·m]

    Returns
    -------
    float
        K. [A·s^½/m²]

    Notes
    -----
    Valid with the IEC 60949 constants of a conductor metal; copper (Qc = 3.45 J/(K·cm³),
    β = 234.5 K, ρ20 = 1.7241e-8 Ω·m) gives K = 225.7e6 A·s^½/m², the 226 A·s^½/mm² of the standard.

    References
    ----------
    IEC 60949:1988, clause 3 and table I.

    Examples
    --------
    >>> round(material_k(3.45e6, 234.5, 1/58*1e-6) / 1e6, 1)
    225.7
    """
    return math.sqrt(qc * (beta + 20.0) / rho20)


def adiabatic_final_temperature(
    i2t: float | np.ndarray, area: float, k_material: float, beta: float, theta_i: float
) -> float | np.ndarray:
    r"""Conductor temperature after a Joule integral ``i2t`` with no heat lost [°C].

    Inverting the adiabatic equation I²t = K²S² ln((θf + β)/(θi + β)) of IEC 60949:1988, clause 3
    (equation (1)):

    .. math:: θ_f = (θ_i + β)\,\exp\!\left(\frac{I^2t}{K^2 S^2}\right) - β

    Parameters
    ----------
    i2t : float or array
        Joule integral of the fault current (an array: one final temperature per entry) [A²·s].
    area : float
        Conductor cross-section S [m²].
    k_material : float
        Material constant K of :func:`material_k` [A·s^½/m²].
    beta : float
        Reciprocal temperature coefficient of resistance at 0 °C [K].
    theta_i : float
        Conductor temperature at the start of the fault [°C].

    Returns
    -------
    float or array
        Final temperature θf [°C] (an array for an array ``i2t``); ``math.inf`` where the exponent
        or the product with θi + β is beyond what a float can hold (I²t above about 709·K²S²: a
        thin conductor behind a large fuse, far past melting). A caller reports that as "exceeds"
        the limit, never as a figure.

    Notes
    -----
    Valid for faults up to about 5 s (IEC 60949); longer, the real conductor loses heat and ends
    cooler, so the figure stays on the safe side. Above the melting point (1083 °C for copper) the
    figure only says that the conductor is destroyed.

    Examples
    --------
    1000 A for (115·2.5/1000)² s on 2.5 mm² with k = 115 takes PVC from 70 °C to 160 °C:

    >>> import math
    >>> k = 115e6 / math.sqrt(math.log((234.5 + 160) / (234.5 + 70)))
    >>> round(adiabatic_final_temperature(1000**2 * (115e6 * 2.5e-6 / 1000) ** 2, 2.5e-6, k, 234.5, 70), 6)
    160.0
    >>> adiabatic_final_temperature(1500**2 * 5.0, 0.5e-6, 226e6, 234.5, 105)
    inf

    An array of Joule integrals gives each its own figure (the same law, element by element):

    >>> import numpy as np
    >>> adiabatic_final_temperature(np.array([0.0, 1500**2 * 5.0]), 0.5e-6, 226e6, 234.5, 105).tolist()
    [105.0, inf]

    References
    ----------
    IEC 60949:1988, clause 3, equation (1).
    """
    if isinstance(i2t, np.ndarray):
        x = i2t / (k_material * area) ** 2
        with np.errstate(over="ignore"):
            return (theta_i + beta) * np.exp(np.minimum(x, _EXP_MAX)) - beta + np.where(x > _EXP_MAX, np.inf, 0.0)
    x = i2t / (k_material * area) ** 2
    if x > _EXP_MAX:
        return math.inf
    return (theta_i + beta) * math.exp(x) - beta
