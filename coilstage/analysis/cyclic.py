"""Cyclic duty of each fuse's element over the drawing's duty profile: the on-periods the fuse sees,
the element's peak rise over the profile repeated (first-order element model,
:mod:`coilstage.physics.fuse_cyclic`), and each on-current against the cyclic limit
B'2(N) x I_melt(t_on) at the drawing's number of switchings N: the fuse maker's cyclic derating where
the drawing states it (the fuse's ``cyclic_factor``, with ``cyclic_cycles`` the switchings it is rated
for), else the shipped default of ``data/fuse_cyclic_derating.toml``.

The element model: I_min (the smallest current that melts it) = the shipped minimum melting multiple
x rating x the fuse's rerating at its zone temperature; τ from the fuse's melting I²t where given
(τ = I²t / I_min²), else the smallest τ its gates' must-not-open points imply (the safe side).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from coilstage import tables
from coilstage.analysis.duty import DutyResult
from coilstage.drawing.schema import Drawing, Fuse
from coilstage.physics.fuse_cyclic import (
    interpolate_cyclic_fraction,
    melting_current,
    rise_share_at,
    time_constant_from_i2t,
    time_constants_from_gates,
)

_TABLE = "fuse_cyclic_derating.toml"
#: a fuse is "on" while it carries more than this fraction of its rating (common practice, no source)
ON_FRACTION = 0.01
#: profile repetitions simulated at most for the steady-periodic peak
MAX_REPEATS = 200


@dataclass(frozen=True)
class OnPeriod:
    start: float  # [s] from the start of the profile
    duration: float  # [s]
    current: float  # largest current through the fuse in the period [A]
    melting_current: float  # I_melt(t_on) of the element model [A]
    limit: float  # B'2(N) x I_melt(t_on) [A]


@dataclass(frozen=True)
class FuseCycling:
    fuse: str
    i_min: float  # element's smallest melting current [A]
    tau: float  # element time constant [s]
    tau_words: str
    cycles: int  # switchings over the fuse's life
    fraction: float  # B'2(N)
    fraction_words: str
    makers: bool  # the factor is the fuse maker's (the drawing's cyclic_factor), not the shipped default
    rated_cycles: int | None  # switchings the maker's factor is rated for, where stated
    periods: tuple[OnPeriod, ...]
    peak_share: float  # steady-periodic peak rise over the repeated profile / melting rise [-]
    repeats: int  # profile repetitions simulated to reach it


def cyclic_table() -> dict:
    return tables.shipped(_TABLE)["table"]


def element_model(f: Fuse) -> tuple[float, float, str] | str:
    """(I_min [A], τ [s], words) of the fuse's element, or why it cannot be made."""
    tab = cyclic_table()
    mult = float(tab["min_melting_multiple"])
    i_min = mult * f.rating * tables.fuse_rerating(f.zone_temperature)
    if f.melting_i2t:
        tau = time_constant_from_i2t(f.melting_i2t, i_min)
        return i_min, tau, f"τ = I²t_melt / I_min² = {f.melting_i2t:g} A²s / ({i_min:.1f} A)² = {tau:.3g} s"
    if f.gates:
        # in multiples of the rating: the rerating scales I_min and the gates alike, so τ is unchanged
        taus = time_constants_from_gates(f.gates, mult)
        if taus:
            m_at, tau = min(taus, key=lambda x: x[1])
            return i_min, tau, f"τ = {tau:.3g} s, the smallest the gates' must-not-open points give ({m_at:g} x rating)"
    return "neither a melting I²t nor time-current gates are given for this fuse"


def step_currents(descent: DutyResult, fuse_id: str) -> list[tuple[float, float, float]]:
    """(start, end, current [A]) of each step of the profile: the largest sampled current inside the
    step, or the current interpolated at its middle where no sample falls inside."""
    t = descent.t
    i = np.abs(descent.device_current[fuse_id])
    out = []
    for start, end, _f in descent.segments:
        inside = (t > start) & (t < end)
        cur = float(i[inside].max()) if inside.any() else float(np.interp(0.5 * (start + end), t, i))
        out.append((float(start), float(end), cur))
    return out


def repeated_peak(steps: list[tuple[float, float, float]], i_min: float, tau: float) -> tuple[float, int]:
    """Peak rise share of the element over the profile ``steps`` [(start, end, current [A])] repeated
    from cold until it repeats itself (steady-periodic, within 1e-9), and the repetitions that took.

    Each step is a constant current: the rise moves monotonically towards the step's steady share
    (I/I_min)², so the profile's extreme lies at the end of a step."""
    share0, peak, reps = 0.0, 0.0, 0
    for reps in range(1, MAX_REPEATS + 1):
        s, p = share0, 0.0
        for start, end, cur in steps:
            s = rise_share_at(end - start, (cur / i_min) ** 2, s, tau)
            p = max(p, s)
        if abs(p - peak) <= 1e-9 * max(p, 1e-12) and abs(s - share0) <= 1e-9:
            return p, reps
        peak, share0 = p, s
    return peak, reps


def cyclic_fraction(f: Fuse, cycles: int) -> tuple[float, str]:
    """B'2 for the fuse at ``cycles`` switchings, with words: the maker's cyclic derating where the
    drawing gives it (``cyclic_factor``, used as stated: the maker rates it, no curve is laid over it),
    else the shipped default interpolated at ``cycles``."""
    if f.cyclic_factor is not None:
        rated = f" (rated for {f.cyclic_cycles:,} switchings)" if f.cyclic_cycles is not None else ""
        return f.cyclic_factor, f"maker's cyclic derating {f.cyclic_factor:.2f}{rated}, at {cycles:,} switchings"
    tab = cyclic_table()
    pts = [(float(r["cycles"]), float(r["fraction"])) for r in tab["rows"]]
    frac = interpolate_cyclic_fraction(cycles, pts)
    return frac, (
        f"shipped default {frac:.2f}, common practice, at {cycles:,} switchings (the fuse maker's cyclic "
        "derating was not given: state it as the fuse's cyclic_factor)"
    )


def fuse_cycling(d: Drawing, descent: DutyResult, f: Fuse) -> FuseCycling | str:
    """The fuse's cyclic duty over the profile ``descent``, or why it could not be computed."""
    if f.id not in descent.device_current:
        return "the duty simulation gives no current through this fuse"
    model = element_model(f)
    if isinstance(model, str):
        return model
    i_min, tau, tau_words = model
    frac, frac_words = cyclic_fraction(f, int(d.switching.cycles))
    steps = step_currents(descent, f.id)
    periods: list[OnPeriod] = []
    run: list[tuple[float, float, float]] = []
    for s in [*steps, None]:
        if s is not None and s[2] > ON_FRACTION * f.rating:
            run.append(s)
            continue
        if run:
            t_on = run[-1][1] - run[0][0]
            i_on = max(x[2] for x in run)
            im = melting_current(t_on, i_min, tau)
            periods.append(OnPeriod(run[0][0], t_on, i_on, im, frac * im))
            run = []
    peak, reps = repeated_peak(steps, i_min, tau)
    n = int(d.switching.cycles)
    return FuseCycling(
        f.id,
        i_min,
        tau,
        tau_words,
        n,
        frac,
        frac_words,
        f.cyclic_factor is not None,
        f.cyclic_cycles,
        tuple(periods),
        peak,
        reps,
    )


def all_fuses(d: Drawing, descent: DutyResult | None) -> dict[str, FuseCycling | str]:
    """Every fuse's cyclic duty, or why it could not be computed."""
    out: dict[str, FuseCycling | str] = {}
    for f in d.of_kind(Fuse):
        if descent is None:
            out[f.id] = "the drawing gives no duty profile"
        elif not math.isfinite(f.rating) or f.rating <= 0:
            out[f.id] = "no rating"
        else:
            out[f.id] = fuse_cycling(d, descent, f)
    return out
