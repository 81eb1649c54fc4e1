r"""Magnetic circuit of a coil pole: Ampère's law around the flux path, B-H curves, flux and inductance.

Around the path (iron of length l_fe and section A_fe, n_g air gaps of length g and pole-face area A):

.. math:: N I = H_{fe}(B_{fe})\,l_{fe} + n_g \frac{B g}{μ_0}, \qquad B_{fe} = B\,A/A_{fe}

with B the gap flux density, Φ = B·A the flux, λ = N·Φ the flux linkage; the apparent inductance is
λ/i and the incremental one dλ/di. Fringing and leakage are neglected.

References
----------
.. [1] Any text on magnetic circuits, e.g. A. E. Fitzgerald, C. Kingsley, S. D. Umans, *Electric
   Machinery*, 6th ed., McGraw-Hill, 2003, §1.1 (magnetic circuits, reluctance, L = N²/ℛ).
.. [2] Modelica Standard Library, Modelica.Magnetic.FluxTubes.Material.SoftMagnetic.mu_rApprox.
"""

from __future__ import annotations

import bisect
import functools
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from coilstage.physics.numeric import bracketed_root

MU0 = 4e-7 * math.pi  # [H/m] (the pre-2019 exact value; the 2019 SI value differs by 1e-10)
_KNEES: dict[tuple, float] = {}


@dataclass(frozen=True)
class BHCurve:
    """A monotone B-H curve given as points (H [A/m], B [T]) from the origin; beyond the last point
    B grows with slope μ0 (full saturation)."""

    name: str
    h: np.ndarray
    b: np.ndarray

    def h_of_b(self, b: float) -> float:
        """Field strength [A/m] at flux density ``b`` [T] (odd: H(−B) = −H(B))."""
        s = 1.0 if b >= 0 else -1.0
        x = abs(b)
        if x <= self.b[-1]:
            return s * float(np.interp(x, self.b, self.h))
        return s * float(self.h[-1] + (x - self.b[-1]) / MU0)

    def h_of_b_array(self, b: np.ndarray) -> np.ndarray:
        """:meth:`h_of_b` for an array of non-negative flux densities."""
        b = np.asarray(b, dtype=float)
        return np.where(b <= self.b[-1], np.interp(b, self.b, self.h), self.h[-1] + (b - self.b[-1]) / MU0)

    def b_of_h_array(self, h: np.ndarray) -> np.ndarray:
        """Flux density [T] at an array of non-negative field strengths ``h`` [A/m]."""
        h = np.asarray(h, dtype=float)
        return np.where(h <= self.h[-1], np.interp(h, self.h, self.b), self.b[-1] + MU0 * (h - self.h[-1]))

    def knee(self, slope: float = 0.2) -> float:
        """Flux density [T] where d(ln B)/d(ln H) first falls to ``slope`` (past the steep part)."""
        key = (self.name, id(self.h), slope)
        if key not in _KNEES:
            _KNEES[key] = self._knee(slope)
        return _KNEES[key]

    def _knee(self, slope: float) -> float:
        h = np.geomspace(max(self.h[1], 1e-3), self.h[-1], 4000)
        b = self.b_of_h_array(h)
        g = np.gradient(np.log(b), np.log(h))
        start = int(np.argmax(g))
        below = np.nonzero(g[start:] <= slope)[0]
        return float(b[start + below[0]]) if len(below) else float(b[-1])


def modelica_mu_r(b: float, mu_i: float, b_mumax: float, c_a: float, c_b: float, n: float) -> float:
    r"""Relative permeability of a soft-magnetic steel by the Modelica approximation [–].

    .. math:: μ_r(B) = 1 + \frac{μ_i - 1 + c_a B_N}{1 + c_b B_N + B_N^{\,n}}, \qquad B_N = |B| / B_{μ,max}

    Parameters
    ----------
    b : float
        Flux density in the iron. [T]
    mu_i : float
        Initial relative permeability. [–]
    b_mumax : float
        Flux density of the highest permeability. [T]
    c_a : float
        Fit coefficient. [–]
    c_b : float
        Fit coefficient. [–]
    n : float
        Exponent of the fall into saturation. [–]

    Returns
    -------
    float
        Relative permeability. [–]

    Notes
    -----
    A fitted approximation of measured curves, valid from 0 to about 2.2 T; above, it tends to 1
    slower than a real steel. The coefficients of each material are the library's records.

    References
    ----------
    .. [1] Modelica Standard Library, Modelica.Magnetic.FluxTubes.Material.SoftMagnetic.mu_rApprox
       (published code; record AISI_1008: μi 200, Bμmax 1.17 T, c_a 8100, c_b 2.59, n 10).

    Examples
    --------
    >>> round(modelica_mu_r(1.0, 200, 1.17, 8100, 2.59, 10), 1)
    2082.4
    """
    bn = abs(b) / b_mumax
    return 1 + (mu_i - 1 + c_a * bn) / (1 + c_b * bn + bn**n)


def curve_from_mu_r(name: str, mu_r: Callable[[float], float], b_max: float = 2.4, points: int = 600) -> BHCurve:
    r"""A B-H point table from a μr(B) law, on a dense grid of B.

    .. math:: H_k = \frac{B_k}{μ_0\,μ_r(B_k)}, \qquad B_k = k\,B_{max}/(points - 1)

    Parameters
    ----------
    name : str
        Name of the curve (for messages). [–]
    mu_r : callable
        μr(B), B in tesla. [–]
    b_max : float
        Largest flux density of the table. [T]
    points : int
        Points of the grid. [–]

    Returns
    -------
    BHCurve
        The table: H [A/m] against B [T], monotone.

    Notes
    -----
    Raises ValueError where the law gives a curve that is not monotone (a μr falling faster than 1/B).

    References
    ----------
    .. [1] B = μ0 μr H, as in Fitzgerald, Kingsley, Umans, *Electric Machinery*, 6th ed., §1.1.

    Examples
    --------
    >>> c = curve_from_mu_r("air", lambda b: 1.0, b_max=1.0, points=3)
    >>> round(float(c.h[-1]) * MU0, 12)
    1.0
    """
    b = np.linspace(0.0, b_max, points)
    h = np.concatenate(([0.0], b[1:] / (MU0 * np.array([mu_r(x) for x in b[1:]]))))
    if np.any(np.diff(h) <= 0):
        raise ValueError(f"B-H curve {name} is not monotone")
    return BHCurve(name, h, b)


@dataclass(frozen=True)
class MagneticCircuit:
    """One coil's pole circuit: ``turns``, pole-face ``area`` [m²], ``gaps`` air gaps of ``gap`` [m],
    iron path ``iron_length`` [m] of section ``iron_area`` [m²] on ``curve``."""

    turns: int
    area: float
    gaps: int
    gap: float
    iron_length: float
    iron_area: float
    curve: BHCurve

    def mmf(self, b: float) -> float:
        """Ampere-turns [A] that drive the gap flux density ``b`` [T]."""
        b_fe = b * self.area / self.iron_area
        return self.curve.h_of_b(b_fe) * self.iron_length + self.gaps * b * self.gap / MU0

    @functools.cached_property
    def _mmf_knots(self) -> tuple[list[float], list[float]]:
        """(gap flux densities [T], ampere-turns [A]) at the points of the curve (and at B = 0):
        between them the iron's H is linear in B, so the mmf is too."""
        k = self.area / self.iron_area
        b = sorted({0.0, *(float(x) / k for x in self.curve.b if x > 0)})
        return b, [self.mmf(x) for x in b]

    def gap_flux_density(self, ni: float) -> float:
        r"""Gap flux density [T] at ``ni`` ampere-turns [A]: the root of mmf(B) = NI.

        The curve is linear between its points (:meth:`BHCurve.h_of_b`), so the mmf is piecewise linear
        and increasing in B, and its root is found exactly on the segment that holds it (beyond the
        curve's last point the iron's slope is μ0, the mmf's :math:`k\,l_{Fe}/\mu_0 + n_g g/\mu_0`
        with :math:`k` = pole area / iron area). Odd in ``ni``."""
        if ni == 0:
            return 0.0
        s = 1.0 if ni > 0 else -1.0
        target = abs(ni)
        b, m = self._mmf_knots
        if target < m[0]:  # a curve that does not start at the origin: no root on its first segment
            hi = MU0 * target / (self.gaps * self.gap)
            return s * bracketed_root(lambda x: self.mmf(x) - target, 0.0, hi, xtol=1e-13)
        j = bisect.bisect_left(m, target)
        if j == len(m):  # beyond the curve: full saturation
            slope = (self.area / self.iron_area * self.iron_length + self.gaps * self.gap) / MU0
            return s * (b[-1] + (target - m[-1]) / slope)
        if m[j] == target:  # on a point of the curve (j = 0 only here: target >= m[0] above)
            return s * b[j]
        return s * (b[j - 1] + (b[j] - b[j - 1]) * (target - m[j - 1]) / (m[j] - m[j - 1]))

    def gap_flux_density_array(self, ni: np.ndarray) -> np.ndarray:
        r"""Gap flux density [T] at each of the ampere-turns ``ni`` [A]: :meth:`gap_flux_density` over an
        array, without a Python loop where the curve starts at the origin.

        The same segment solve: on the curve, the linear interpolation of B between the knots of the
        piecewise-linear mmf(B) (``numpy.interp``); beyond its last point the slope of full saturation,
        :math:`k\,l_{Fe}/\mu_0 + n_g g/\mu_0`. A curve whose first point lies above the origin is solved
        point by point by :meth:`gap_flux_density` below that point. Odd in ``ni``.

        Parameters
        ----------
        ni : numpy.ndarray
            Ampere-turns (any shape). [A]

        Returns
        -------
        numpy.ndarray
            Gap flux density, of the shape of ``ni``. [T]

        Examples
        --------
        >>> iron = BHCurve("linear", np.array([0.0, 1e3]), np.array([0.0, 1.0]))
        >>> m = MagneticCircuit(100, 1e-2, 2, 1e-3, 0.2, 1e-2, iron)
        >>> bool(np.allclose(m.gap_flux_density_array(np.array([-300.0, 0.0, 900.0])),
        ...                  [m.gap_flux_density(x) for x in (-300.0, 0.0, 900.0)], rtol=1e-13, atol=0))
        True
        """
        ni = np.asarray(ni, dtype=float)
        target = np.abs(ni)
        b, m = (np.asarray(v) for v in self._mmf_knots)
        slope = (self.area / self.iron_area * self.iron_length + self.gaps * self.gap) / MU0
        out = np.where(target > m[-1], b[-1] + (target - m[-1]) / slope, np.interp(target, m, b))
        low = (target > 0) & (target < m[0])
        if np.any(low):  # no root on the first segment of such a curve: the scalar solve
            out[low] = [abs(self.gap_flux_density(float(t))) for t in target[low]]
        return np.sign(ni) * out

    def mmf_table(self, b_max: float, points: int = 2000) -> tuple[np.ndarray, np.ndarray]:
        """(ampere-turns, gap flux density) on a grid of B from 0 to ``b_max``: monotone, so it also
        serves as B(NI) by interpolation."""
        b = np.linspace(0.0, b_max, points)
        ni = self.curve.h_of_b_array(b * self.area / self.iron_area) * self.iron_length + self.gaps * b * self.gap / MU0
        return ni, b

    def flux(self, current: float) -> float:
        """Flux Φ = B·A [Wb] at coil ``current`` [A]."""
        return self.gap_flux_density(self.turns * current) * self.area

    def linkage(self, current: float) -> float:
        """Flux linkage λ = N·Φ [Wb] (a turn links the whole pole flux; leakage neglected)."""
        return self.turns * self.flux(current)

    def apparent_inductance(self, current: float) -> float:
        """λ/i [H]; at zero current the unsaturated (incremental) value."""
        if current == 0:
            return self.incremental_inductance(0.0)
        return self.linkage(current) / current

    def incremental_inductance(self, current: float, rel: float = 1e-4) -> float:
        """dλ/di [H] by a central difference."""
        h = max(abs(current) * rel, 1e-3)
        return (self.linkage(current + h) - self.linkage(current - h)) / (2 * h)

    def unsaturated_inductance(self) -> float:
        """L = N²/ℛ with ℛ = n_g·g/(μ0·A) + l_fe/(μ0·μr,i·A_fe), μr,i the curve's initial slope [1]_."""
        mu_i = self.curve.b[1] / (MU0 * self.curve.h[1])
        rel = self.gaps * self.gap / (MU0 * self.area) + self.iron_length / (MU0 * mu_i * self.iron_area)
        return self.turns**2 / rel

    def iron_flux_density(self, b_gap: float) -> float:
        return b_gap * self.area / self.iron_area


def ac_current(v_rms: float, r: float, inductance: float, frequency: float) -> tuple[float, float]:
    r"""RMS current [A] and impedance [Ω] of an RL coil on a sinusoidal supply.

    .. math:: Z = \sqrt{R^2 + (2πfL)^2}, \qquad I = V/Z

    Parameters
    ----------
    v_rms : float
        RMS supply voltage. [V]
    r : float
        Coil resistance. [Ω]
    inductance : float
        Coil inductance (linear). [H]
    frequency : float
        Supply frequency. [Hz]

    Returns
    -------
    (float, float)
        RMS current [A] and impedance magnitude [Ω].

    Notes
    -----
    A linear inductance; iron losses and saturation are left out (the AC cross-check of the
    inductance a workshop measures with a mains transformer).

    References
    ----------
    .. [1] Phasor analysis of an RL circuit: Alexander, Sadiku, *Fundamentals of Electric Circuits*,
       5th ed., ch. 9.

    Examples
    --------
    >>> i, z = ac_current(28.0, 0.6, 0.1, 50.0)
    >>> round(i, 3), round(z, 2)
    (0.891, 31.42)
    """
    z = math.hypot(r, 2 * math.pi * frequency * inductance)
    return v_rms / z, z


def kloss_torque(omega: float, t_max: float, omega_cr: float) -> float:
    r"""Eddy-current braking torque against speed [N·m] (Kloss' form); 0 at standstill.

    .. math:: T(ω) = \frac{2\,T_{max}}{ω/ω_{cr} + ω_{cr}/ω}

    Parameters
    ----------
    omega : float
        Rotor speed. [rad/s]
    t_max : float
        Largest torque, reached at the critical speed. [N·m]
    omega_cr : float
        Critical speed. [rad/s]

    Returns
    -------
    float
        Braking torque. [N·m]

    Notes
    -----
    A shape, not a field solution: linear at low speed, falling as 1/ω far above the critical speed
    (the skin effect in the rotor). The torque scales with the square of the gap flux density.

    References
    ----------
    .. [1] Modelica Standard Library, Modelica.Mechanics.Rotational.Sources.EddyCurrentTorque
       (published code).
    .. [2] J. H. Wouterse, "Critical torque and speed of eddy current brake with widely separated soft
       iron poles", IEE Proc. B 138(4), 1991 (from memory).

    Examples
    --------
    >>> [round(kloss_torque(w, 100.0, 10.0), 6) for w in (5, 10, 20)]
    [80.0, 100.0, 80.0]
    """
    if omega <= 0:
        return 0.0
    return 2 * t_max / (omega / omega_cr + omega_cr / omega)
