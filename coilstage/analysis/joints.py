"""Joints, lugs, studs, connectors and fuse holders: the current each carries (from the network, by its
element id; where the network does not hold it, the current of the cable it terminates), its rating
derated for its zone, its I²R heat, and a lug's conductor range against its cable.

The derating is the maker's where the drawing gives one (a fraction at a temperature, linear from the
rated ambient); otherwise the contact's rise ΔT ∝ Iⁿ up to its upper limiting temperature (IEC 60512-5-2
Test 5b reading; the tin-plated ULT and the exponent are shipped defaults in
data/joints_common_practice.toml with their status). The heat limits per joint are common practice
(no source) from the same file.
"""

from __future__ import annotations

from dataclasses import dataclass

from coilstage import tables
from coilstage.drawing.schema import Cable, Drawing, Joint
from coilstage.physics.joints import derated_current, derated_linear, joint_heat, lug_fits, lug_mismatch


def _table() -> dict:
    return tables.shipped("joints_common_practice.toml")["table"]


@dataclass(frozen=True)
class JointLimits:
    """The shipped limits of the joint rules, each with its status."""

    heat_pass: float  # [W]
    heat_fail: float  # [W]
    heat_status: str
    upper_limiting: float  # [°C] tin-plated contact, where the maker gives none
    upper_limiting_status: str
    exponent: float
    exponent_status: str


def limits() -> JointLimits:
    t = _table()
    ult = dict(t["upper_limiting"])
    return JointLimits(
        float(t["heat_pass"]),
        float(t["heat_fail"]),
        t["heat_status"],
        float(ult["tin"]),
        t["upper_limiting_status"],
        float(t["derating_exponent"]),
        t["derating_exponent_status"],
    )


@dataclass(frozen=True)
class JointCurrent:
    """The current a joint carries [A] at the nominal largest (cold corner) and the worst largest
    continuous current, and where it was read (the joint's own element, or the cable it terminates)."""

    joint: str
    nominal: float
    worst: float
    source: str


def joint_current(j: Joint, duty: dict[str, float], worst: dict[str, float] | None) -> JointCurrent | None:
    """The joint's current from the network's largest currents by element id (``duty`` nominal,
    ``worst`` at the largest-current case); where the joint is not in them, its cable's; None where
    neither is known."""
    worst = worst or {}
    if j.id in duty:
        return JointCurrent(j.id, abs(duty[j.id]), abs(worst.get(j.id, duty[j.id])), "the network (its own branch)")
    if j.cable is not None and j.cable in duty:
        c = j.cable
        return JointCurrent(
            j.id,
            abs(duty[c]),
            abs(worst.get(c, duty[c])),
            f"the cable it terminates, {c} (the joint is not in the network)",
        )
    return None


@dataclass(frozen=True)
class JointRating:
    """A joint's current rating at its zone temperature [A] and how it was derated."""

    joint: str
    rating: float
    at_zone: float
    words: str


def joint_rating(j: Joint) -> JointRating | None:
    """The joint's rating derated to its zone temperature, or None without a rating."""
    if j.rating is None:
        return None
    t = j.zone_temperature
    if j.derated is not None:
        frac, at = j.derated
        i = derated_linear(j.rating, j.rated_ambient, frac, at, t)
        words = (
            f"{j.rating:g} A at {j.rated_ambient:g} °C, derated linearly to {frac:.0%} at {at:g} °C (maker's): "
            f"{i:.1f} A at its {t:g} °C zone"
        )
        return JointRating(j.id, j.rating, i, words)
    lim = limits()
    if lim.upper_limiting <= j.rated_ambient:
        return JointRating(j.id, j.rating, j.rating, f"{j.rating:g} A as stated (rated at or above the ULT)")
    i = derated_current(j.rating, j.rated_ambient, t, lim.upper_limiting, lim.exponent)
    words = (
        f"{j.rating:g} A at {j.rated_ambient:g} °C, no derating given: rise ∝ I^{lim.exponent:g} to a "
        f"{lim.upper_limiting:g} °C upper limiting temperature (tin plating; {lim.upper_limiting_status}): "
        f"{i:.1f} A at its {t:g} °C zone"
    )
    return JointRating(j.id, j.rating, i, words)


def heat(current: float, resistance: float) -> float:
    """I²R of a joint [W]."""
    return joint_heat(current, resistance)


def degraded_resistance(j: Joint) -> tuple[float, str] | None:
    """The shipped resistance of a loosened or corroded joint of the kind [Ω], with its source."""
    row_name = {"lug": "lug_on_stud", "stud": "junction_post", "connector": "connector_contact"}.get(
        j.joint_kind, "fuse_holder_strip" if j.joint_kind == "fuse_holder" else None
    )
    for row in _table()["rows"]:
        if row["kind"] == row_name and "degraded" in row:
            return float(row["degraded"]), f"{row['name']}, degraded ({row['status']})"
    return None


@dataclass(frozen=True)
class LugFit:
    joint: str
    cable: str
    area: float  # [m²]
    low: float  # [m²]
    high: float  # [m²]
    fits: bool
    mismatch: float  # fraction outside the nearer end (negative: too small a conductor)


def lug_fit(d: Drawing, j: Joint) -> LugFit | None:
    """A lug's conductor range against its cable's area; None where either is not stated."""
    if j.conductor_range is None or j.cable is None:
        return None
    c = next((e for e in d.of_kind(Cable) if e.id == j.cable), None)
    if c is None:
        return None
    lo, hi = j.conductor_range
    return LugFit(j.id, c.id, c.area, lo, hi, lug_fits(c.area, lo, hi), lug_mismatch(c.area, lo, hi))


@dataclass(frozen=True)
class JointFigures:
    """A joint's figures for the joint rules, made once with the analysis: its current (nominal and at
    the largest continuous current), its rating at its zone, its I²R heat at both currents (and, where
    the kind has a shipped loosened or corroded resistance above its own, at that resistance and the
    largest current), and a lug's fit on its cable. None where a figure cannot be made."""

    joint: str
    current: JointCurrent | None
    rating: JointRating | None
    heat_nominal: float | None  # [W]
    heat_worst: float | None  # [W]
    degraded: tuple[float, str] | None  # [Ω], its source; only where above the joint's own resistance
    heat_degraded: float | None  # [W] at the largest continuous current
    lug: LugFit | None
    model: str = "physics.joints.joint_heat (Joule's law I²R); physics.joints.derated_current / derated_linear"


def joint_figures(d: Drawing, duty: dict[str, float], worst: dict[str, float]) -> dict[str, JointFigures]:
    """Every joint's figures (``duty``: element id -> nominal current [A]; ``worst``: element id ->
    current at the largest-current case [A])."""
    out = {}
    for j in d.of_kind(Joint):
        cur = joint_current(j, duty, worst)
        deg = degraded_resistance(j)
        if deg is not None and not deg[0] > j.resistance:
            deg = None
        h_nom = h_worst = h_deg = None
        if cur is not None:
            h_nom, h_worst = heat(cur.nominal, j.resistance), heat(cur.worst, j.resistance)
            h_deg = heat(cur.worst, deg[0]) if deg is not None else None
        out[j.id] = JointFigures(j.id, cur, joint_rating(j), h_nom, h_worst, deg, h_deg, lug_fit(d, j))
    return out
