r"""Conductors: resistance against temperature, wire-gauge geometry, ampacity corrections.

All functions take and return floats (or numpy arrays) in SI units, temperatures in °C. The metals'
constants are data: coilstage/data/materials.toml (read by :mod:`coilstage.analysis.materials`).
"""

from __future__ import annotations

import math


def resistance_at_temperature(r_ref: float, t_ref: float, t: float, alpha20: float) -> float:
    r"""Resistance of a metallic conductor at temperature ``t``, linear law with α referred to 20 °C.

    .. math:: R(t) = R_{ref}\,\frac{1 + \alpha_{20}(t - 20)}{1 + \alpha_{20}(t_{ref} - 20)}

    Parameters
    ----------
    r_ref : float
        Resistance measured at ``t_ref``. [Ω]
    t_ref : float
        Temperature of that measurement. [°C]
    t : float
        Temperature wanted. [°C]
    alpha20 : float
        Temperature coefficient at 20 °C: 0.00393 for annealed copper (IEC 60028), 0.00403 for
        aluminium. [K⁻¹]

    Returns
    -------
    float
        Resistance at ``t``. [Ω]

    Notes
    -----
    Valid for copper from about −40 °C to 250 °C. The law is the same as the "inferred zero-resistance
    temperature" form R2/R1 = (β + t2)/(β + t1) with β = 1/α20 − 20 (234.5 °C for copper).

    References
    ----------
    .. [1] IEC 60028:1925, International standard of resistance for copper.
    .. [2] IEC 60287-1-1, clause 2.1.1 (R = R20 [1 + α20 (θ − 20)]).

    Examples
    --------
    >>> round(resistance_at_temperature(1.0, 20.0, 105.0, 0.00393), 4)
    1.334
    """
    return r_ref * (1.0 + alpha20 * (t - 20.0)) / (1.0 + alpha20 * (t_ref - 20.0))


def awg_diameter(n: int) -> float:
    r"""Diameter of a solid round conductor of AWG size ``n`` [m].

    .. math:: d_n = 0.127\,\mathrm{mm} \times 92^{(36 - n)/39}

    Parameters
    ----------
    n : int
        Gauge number; 1/0, 2/0, 3/0, 4/0 are n = 0, −1, −2, −3. [-]

    Returns
    -------
    float
        Diameter of the solid conductor. [m]

    Notes
    -----
    The defining formula of the gauge, exact for any n; the standard sizes run from 4/0 (n = −3) to
    40 AWG. A stranded conductor of the same gauge has about the same metal area, not this diameter.

    References
    ----------
    .. [1] ASTM B258-02, Standard Specification for Standard Nominal Diameters and Cross-Sectional
       Areas of AWG Sizes of Solid Round Wires Used as Electrical Conductors (defining formula).

    Examples
    --------
    >>> round(awg_diameter(10) * 1e3, 3)
    2.588
    """
    return 0.127e-3 * 92.0 ** ((36 - n) / 39.0)


def awg_area(n: int) -> float:
    r"""Cross-section of AWG size ``n`` [m²], the area of the gauge's solid round conductor.

    .. math:: A_n = \frac{π d_n^2}{4}

    Parameters
    ----------
    n : int
        Gauge number, as :func:`awg_diameter`. [-]

    Returns
    -------
    float
        Metal cross-section. [m²]

    Notes
    -----
    Valid for every gauge :func:`awg_diameter` accepts; the nominal area of a stranded conductor of
    that gauge (ASTM B8 / B174 strand it to the same area).

    Examples
    --------
    >>> round(awg_area(4) * 1e6, 2)
    21.15

    References
    ----------
    .. [1] ASTM B258-02 (defining formula of the diameter; area of a circle).
    """
    d = awg_diameter(n)
    return math.pi * d * d / 4.0


def resistance_per_length(rho: float, area: float) -> float:
    r"""Resistance per unit length of a uniform conductor [Ω/m].

    .. math:: R' = \frac{ρ}{A}

    Parameters
    ----------
    rho : float
        Resistivity at the conductor's temperature. [Ω·m]
    area : float
        Conducting cross-section. [m²]

    Returns
    -------
    float
        Resistance per metre. [Ω/m]

    Notes
    -----
    Valid for direct current (no skin effect) in a conductor of uniform section; a stranded
    conductor's lay adds a few per cent (a stranding factor, applied by the caller).

    Examples
    --------
    >>> round(resistance_per_length(1 / 58 * 1e-6, 2.5e-6) * 1e3, 3)
    6.897

    References
    ----------
    .. [1] IEC 60028:1925 (resistivity of annealed copper, the ρ usually passed).
    """
    return rho / area


def ampacity_ambient_factor(t_rating: float, t_ambient: float, t_reference: float = 30.0) -> float:
    r"""Ambient-temperature correction of a conductor ampacity, capped at 1.

    .. math:: F = \sqrt{\frac{T_c - T_a}{T_c - T_{ref}}}

    With the conductor at its rating temperature ``t_rating``, I²R equals the heat carried away,
    which is proportional to the conductor's rise over ambient; so the allowable current scales with
    the square root of that rise. The law reproduces NEC Table 310.15(B)(2)(a) (0.58/0.75/0.82 for
    60/75/90 °C insulation at 46–50 °C). A zone cooler than the table's reference is not credited
    (common practice): the factor is capped at 1. At or above the rating temperature the factor is 0.

    Parameters
    ----------
    t_rating : float
        Insulation temperature rating of the table column. [°C]
    t_ambient : float
        Temperature of the zone. [°C]
    t_reference : float
        Ambient temperature of the table, 30 °C for 33 CFR 183.425 Table 5. [°C]

    Returns
    -------
    float
        Factor on the table's ampacity, 0 to 1. [-]

    Notes
    -----
    Valid while the conductor's heat leaves in proportion to its rise over ambient (convection and
    radiation near the rating temperature); below the table's reference no credit is given.

    Examples
    --------
    >>> round(ampacity_ambient_factor(105.0, 50.0), 3)
    0.856

    References
    ----------
    .. [1] NFPA 70 (NEC) 2017, Table 310.15(B)(2)(a), ambient temperature correction factors (the
       square-root law reproduces them; the law itself is derived from the heat balance above).
    """
    if t_ambient >= t_rating:
        return 0.0
    return min(1.0, math.sqrt((t_rating - t_ambient) / (t_rating - t_reference)))


def interpolate_loglog(x: float, x0: float, y0: float, x1: float, y1: float) -> float:
    r"""Interpolate ``y`` at ``x`` on the straight line through (x0, y0), (x1, y1) in log-log axes.

    .. math:: y = y_0 \left(\frac{x}{x_0}\right)^{s}, \quad s = \frac{\ln(y_1/y_0)}{\ln(x_1/x_0)}

    Used for the ampacity of metric sizes between two AWG rows: ampacity grows as a power of the
    cross-section (about A^0.6 for a wire cooled from its surface), so a straight line in log-log
    axes follows the table closely, where a linear interpolation would bow.

    Parameters
    ----------
    x : float
        Where to interpolate (a cross-section, say). [unit of x0, > 0]
    x0 : float
        First table point's abscissa. [unit of x, > 0]
    y0 : float
        First table point's value. [unit of y, > 0]
    x1 : float
        Second table point's abscissa. [unit of x, > 0]
    y1 : float
        Second table point's value. [unit of y0, > 0]

    Returns
    -------
    float
        Interpolated value. [unit of y0]

    Notes
    -----
    Valid for positive values; between the points it is an interpolation, outside them an
    extrapolation of the same power law. Coincident abscissae return ``y0``.

    Examples
    --------
    >>> round(interpolate_loglog(4.0, 1.0, 10.0, 16.0, 40.0), 6)
    20.0

    References
    ----------
    .. [1] Power-law interpolation (a straight line in log-log axes); the A^0.6 growth follows from
       the heat balance of a surface-cooled wire (I²R' = h·πD·Δθ with R' ∝ 1/A).
    """
    if x0 == x1:
        return y0
    s = (math.log(y1) - math.log(y0)) / (math.log(x1) - math.log(x0))
    return math.exp(math.log(y0) + s * (math.log(x) - math.log(x0)))
