r"""Joints, lugs, studs, connectors and fuse holders: their heat, their current rating against
temperature, and a lug's conductor range.

A joint is a lumped resistance R carrying the branch current I: its heat is P = I²R (Joule's law).
IEC 61238-1 judges a connector by its *resistance factor*, R_joint / R(conductor of equal length):
a sound joint is no more resistive, and no hotter, than the conductor it replaces.

A contact's current rating falls with its surrounding temperature. IEC 60512-5-2 (Test 5b) builds
the rating from the measured temperature rise ΔT(I): the base curve is the current at which
ambient + ΔT reaches the contact's upper limiting temperature (ULT), the derating curve 0.8 × the
base curve. With ΔT = a·Iⁿ (n = 2 for pure Joule heating; makers' points fit 1.8–2), a rating
I_r given at ambient T_r holds at ambient T as

.. math:: I(T) = I_r \left(\frac{T_{ULT} - T}{T_{ULT} - T_r}\right)^{1/n}, \quad T < T_{ULT}.

References
----------
.. [1] IEC 60512-5-2:2002, Connectors for electronic equipment — Tests and measurements — Part 5-2:
   Current-carrying capacity tests, Test 5b: current-temperature derating.
.. [2] IEC 61238-1-1:2018 (≤ 1 kV), Compression and mechanical connectors for power cables — test
   methods and requirements (resistance factor of a connector against its reference conductor).
.. [3] DIN 46235 (compression cable lugs): the barrel is marked with the one conductor cross-section
   it is made for.
"""

from __future__ import annotations


def joint_heat(current: float, resistance: float) -> float:
    r"""Heat of a joint carrying a current through its resistance [W].

    .. math:: P = I^2 R

    Parameters
    ----------
    current : float
        Current through the joint I. [A]
    resistance : float
        Resistance of the joint R at its working temperature. [Ω]

    Returns
    -------
    float
        Heat developed in the joint. [W]

    Notes
    -----
    Joule's law for a lumped resistance; valid for DC and for the rms value of a slowly varying
    current. The resistance is taken as given (its rise with temperature is the caller's).

    Examples
    --------
    Hand-worked: 214² = 45 796 A²; × 0.2 mΩ = 9.159 W.

    >>> round(joint_heat(214.0, 0.2e-3), 3)
    9.159

    References
    ----------
    Joule's first law; IEC 61238-1-1 [2]_ judges a connector by the same I²R against its conductor.
    """
    return current * current * resistance


def derated_current(
    rating: float, rated_ambient: float, ambient: float, upper_limiting: float, exponent: float = 2.0
) -> float:
    r"""Current a contact or joint may carry at an ambient, from its rating at another [A].

    .. math:: I(T) = I_r \left(\frac{T_{ULT} - T}{T_{ULT} - T_r}\right)^{1/n}

    Parameters
    ----------
    rating : float
        Rated current I_r at ``rated_ambient``. [A]
    rated_ambient : float
        Ambient the rating is stated for T_r, below ``upper_limiting``. [°C]
    ambient : float
        Ambient the contact works in T. [°C]
    upper_limiting : float
        Upper limiting temperature T_ULT of the contact (its materials and plating). [°C]
    exponent : float
        Exponent n of the rise ΔT = a·Iⁿ (2 for pure Joule heating). [-]

    Returns
    -------
    float
        Current that brings the contact to T_ULT at ``ambient``; the rating itself at or below the
        rated ambient (no credit taken for cold); 0 at and above the ULT. [A]

    Notes
    -----
    Valid for a rise that follows a·Iⁿ with the same a and n at both ambients (IEC 60512-5-2 base
    curve, before its 0.8 derating factor). ValueError where T_ULT ≤ T_r.

    Examples
    --------
    Hand-worked: 100 A at 25 °C, tin plating ULT 105 °C, zone 85 °C: √(20/80) = 0.5, so 50 A.

    >>> round(derated_current(100.0, 25.0, 85.0, 105.0), 6)
    50.0

    References
    ----------
    IEC 60512-5-2:2002, Test 5b (current-temperature derating, the base curve) [1]_.
    """
    if upper_limiting <= rated_ambient:
        raise ValueError("the upper limiting temperature must lie above the rated ambient")
    if ambient <= rated_ambient:
        return rating
    if ambient >= upper_limiting:
        return 0.0
    return rating * ((upper_limiting - ambient) / (upper_limiting - rated_ambient)) ** (1.0 / exponent)


def derated_linear(rating: float, rated_ambient: float, fraction: float, at: float, ambient: float) -> float:
    r"""Current by a maker's linear derating between two ambients [A].

    .. math:: I(T) = I_r \max\Bigl(0,\ 1 + (f - 1)\frac{T - T_r}{T_f - T_r}\Bigr),\quad T > T_r

    Parameters
    ----------
    rating : float
        Rated current I_r, held up to ``rated_ambient``. [A]
    rated_ambient : float
        Ambient up to which the rating holds T_r. [°C]
    fraction : float
        Share f of the rating the maker gives at ``at``. [-]
    at : float
        Ambient T_f of that share, above ``rated_ambient``. [°C]
    ambient : float
        Ambient the part works in T. [°C]

    Returns
    -------
    float
        Derated current, the rating at or below T_r, never below 0. [A]

    Notes
    -----
    The straight line through the maker's two points, extended beyond T_f until it reaches zero:
    valid between the two points; beyond them it is an extrapolation of the maker's chart.

    Examples
    --------
    Hand-worked: 45 A at 23 °C falling to 30 A (f = 2/3) at 85 °C; at 54 °C, halfway, 37.5 A.

    >>> round(derated_linear(45.0, 23.0, 30.0 / 45.0, 85.0, 54.0), 6)
    37.5

    References
    ----------
    The maker's derating chart of the part (a relay or holder data sheet); the line through its two
    points (common practice, no source).
    """
    if ambient <= rated_ambient:
        return rating
    k = 1.0 + (fraction - 1.0) * (ambient - rated_ambient) / (at - rated_ambient)
    return rating * max(k, 0.0)


def lug_fits(conductor_area: float, lug_min: float, lug_max: float, rel_tol: float = 1e-6) -> bool:
    r"""Whether a lug takes a conductor of a given cross-section [-].

    .. math:: A_{min}(1 - ε) \le A \le A_{max}(1 + ε)

    Parameters
    ----------
    conductor_area : float
        Nominal cross-section of the conductor A. [m²]
    lug_min : float
        Smallest cross-section the lug is made for. [m²]
    lug_max : float
        Largest cross-section the lug is made for (equal to ``lug_min`` for a compression lug). [m²]
    rel_tol : float
        Relative tolerance ε on the comparison (floating-point sizes). [-]

    Returns
    -------
    bool
        True where the conductor lies in the lug's range. [-]

    Notes
    -----
    Nominal sizes only: it does not check the barrel's bore against a conductor's real diameter.

    Examples
    --------
    A DIN 46235 lug marked 50 mm² takes 50 mm² and not 35 mm² (one size per barrel):

    >>> lug_fits(50e-6, 50e-6, 50e-6), lug_fits(35e-6, 50e-6, 50e-6)
    (True, False)

    References
    ----------
    DIN 46235 (compression cable lugs, one conductor cross-section per barrel) [3]_.
    """
    return lug_min * (1.0 - rel_tol) <= conductor_area <= lug_max * (1.0 + rel_tol)


def lug_mismatch(conductor_area: float, lug_min: float, lug_max: float) -> float:
    r"""How far a conductor lies outside a lug's range, as a fraction of the nearer end [-].

    .. math:: m = A/A_{min} - 1\ (A < A_{min}),\qquad m = A/A_{max} - 1\ (A > A_{max}),\qquad 0 \text{ inside}

    Parameters
    ----------
    conductor_area : float
        Nominal cross-section of the conductor A. [m²]
    lug_min : float
        Smallest cross-section the lug is made for. [m²]
    lug_max : float
        Largest cross-section the lug is made for. [m²]

    Returns
    -------
    float
        Negative: smaller than the lug's smallest size (a loose crimp); positive: larger (it does not
        enter the barrel); 0 inside the range. [-]

    Notes
    -----
    Nominal sizes only, as :func:`lug_fits`.

    Examples
    --------
    Hand-worked: 35 mm² in a 50 mm² lug is 35/50 − 1 = −0.3; 70 mm² is 70/50 − 1 = +0.4.

    >>> round(lug_mismatch(35e-6, 50e-6, 50e-6), 6), round(lug_mismatch(70e-6, 50e-6, 50e-6), 6)
    (-0.3, 0.4)

    References
    ----------
    DIN 46235 (compression cable lugs) [3]_.
    """
    if conductor_area < lug_min:
        return conductor_area / lug_min - 1.0
    if conductor_area > lug_max:
        return conductor_area / lug_max - 1.0
    return 0.0
