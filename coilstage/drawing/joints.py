"""A ``[[harness]]`` element of kind "joint": a lug, stud, splice, connector or fuse holder with its
resistance, current rating and derating, zone, part, a lug's conductor range and the cable it
terminates. A joint that states only its resistance reads as it always has."""

from __future__ import annotations

from coilstage import tables
from coilstage.units import QuantityError, parse_cable_size

from .defaults import default
from .environment import read_zone
from .reader import Reader
from .relays import _fraction_at
from .schema import Cable, Element, Environment, Joint

#: what a joint is
JOINT_KINDS = ("connector", "fuse_holder", "lug", "splice", "stud")
#: joint kind -> the row of joints_common_practice.toml whose resistance it takes when the drawing
#: states none (a splice's crimp depends on its conductor: the drawing states it)
_RESISTANCE_ROW = {
    "lug": "lug_on_stud",
    "stud": "junction_post",
    "connector": "connector_contact",
    "fuse_holder": "fuse_holder_strip",
}


def _area(text) -> float:
    size = parse_cable_size(text)
    if size.system == "awg":
        from coilstage.physics.conductor import awg_area

        return awg_area(int(size.nominal))
    return size.nominal * 1e-6


def _default_resistance(kind: str) -> tuple[float, str] | None:
    name = _RESISTANCE_ROW.get(kind)
    if name is None:
        return None
    for row in tables.shipped("joints_common_practice.toml")["table"]["rows"]:
        if row["kind"] == name and "resistance" in row:
            return float(row["resistance"]), f"{row['name']}: {row['source']} ({row['status']})"
    return None


def read_joint(r: Reader, e: dict, where: str, env: Environment | None, common: dict) -> Joint | None:
    kind = r.text(e, "joint", where, default=None, choices=list(JOINT_KINDS))
    bad = "joint" in e and kind is None
    fallback = _default_resistance(kind) if kind is not None and "resistance" not in e else None
    if fallback is not None:
        res = r.quantity(e, "resistance", where, "resistance", default=fallback[0], positive=True)
        r.assume(
            f"{where}.resistance not given: {fallback[0] * 1e6:g} µΩ, a sound new {kind.replace('_', ' ')} "
            f"(joints_common_practice.toml, {fallback[1]})"
        )
    else:
        # a joint stating its resistance only keeps today's rule (zero allowed: a link taken as ideal)
        res = r.quantity(e, "resistance", where, "resistance", nonnegative=kind is None, positive=kind is not None)
    rating = r.quantity(e, "rating", where, "current", default=None, positive=True)
    ra = r.temperature(e, "rated_ambient", where, default=None)
    if ra is None and "rated_ambient" not in e:
        ra = default("joint.rated_ambient")
        if rating is not None:
            r.assume(f"{where}.rated_ambient not given: the rating is taken as stated at {ra:g} °C")
    derated = None
    if "derating" in e:
        derated = r.value(
            e, "derating", where, _fraction_at, expected='a fraction at a temperature, e.g. "80 % @ 85 degC"'
        )
        bad |= derated is None
    zone, zt = ("ambient", env.ambient_max) if env is not None else (None, None)
    if "zone" in e or rating is not None:
        zone, zt = read_zone(r, e, where, env)  # where the rating is checked, a missing zone is an assumption
    crange = None
    if "conductor_range" in e:
        crange = _conductor_range(r, e, where)
        bad |= crange is None
    cable = r.text(e, "cable", where, default=None)
    bad |= "cable" in e and cable is None
    if bad or None in (res, ra, zone, zt) or (rating is None and "rating" in e):
        return None
    return Joint(
        **common,
        resistance=res,
        joint_kind=kind or "",
        rating=rating,
        rated_ambient=ra,
        derated=derated,
        zone=zone,
        zone_temperature=zt,
        conductor_range=crange,
        cable=cable,
    )


def _conductor_range(r: Reader, e: dict, where: str) -> tuple[float, float] | None:
    w = f"{where}.conductor_range"
    value = e["conductor_range"]
    want = 'the smallest and largest conductor it takes, e.g. ["25 mm^2", "35 mm^2"]'
    if not isinstance(value, list) or len(value) != 2:
        r.problem(w, value, want)
        return None
    ends = []
    for i, x in enumerate(value):
        try:
            ends.append(_area(x))
        except QuantityError as exc:
            r.problem(f"{w}[{i}]", x, f"{exc} ({want})")
    if len(ends) != 2:
        return None
    if not 0 < ends[0] <= ends[1]:
        r.problem(w, value, f"a smallest size no larger than the largest ({want})")
        return None
    return ends[0], ends[1]


def check_joint_cables(r: Reader, elements: list[Element]) -> None:
    """A joint's ``cable`` names a cable of the harness that ends on one of the joint's nodes."""
    cables = {c.id: c for c in elements if isinstance(c, Cable)}
    for j in elements:
        if not isinstance(j, Joint) or j.cable is None:
            continue
        c = cables.get(j.cable)
        if c is None:
            names = ", ".join(sorted(cables)) or "(none)"
            r.problem(f"{j.where}.cable", j.cable, f"the id of a cable in the harness: {names}")
        elif not {c.a, c.b} & {j.a, j.b}:
            r.problem(
                f"{j.where}.cable",
                j.cable,
                f"a cable ending on {j.a} or {j.b} (the joint's nodes); {c.id} runs {c.a} to {c.b}",
            )
