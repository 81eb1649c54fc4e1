"""The ``[[harness]]`` list: each element's kind, id and ends, dispatched to the parser of its kind."""

from __future__ import annotations

from dataclasses import dataclass

from .cables import CABLE_KEYS, read_cable_fields
from .fuses import read_fuse
from .joints import check_joint_cables, read_joint
from .reader import MISSING, Reader, suggest
from .relays import read_relay
from .schema import (
    Cable,
    CoilType,
    Element,
    Environment,
    Resistor,
    Stage,
    Supply,
)
from .stages import read_suppression

_COMMON = {"id", "kind", "from", "to", "note"}
ELEMENT_KEYS = {
    "cable": _COMMON | CABLE_KEYS | {"role"},
    "ground": _COMMON | CABLE_KEYS | {"resistance"},
    "joint": _COMMON
    | {
        "cable",
        "conductor_range",
        "derating",
        "joint",
        "rated_ambient",
        "rating",
        "resistance",
        "zone",
    },
    "busbar": _COMMON | {"resistance"},
    "fuse": _COMMON
    | {
        "type",
        "rating",
        "voltage_rating",
        "breaking_capacity",
        "zone",
        "resistance",
        "protects",
        "gates",
        "melting_i2t",
        "cyclic_factor",
        "cyclic_cycles",
    },
    "relay": _COMMON
    | {
        "rating_12v",
        "rating_24v",
        "rated_ambient",
        "derating",
        "max_ambient",
        "voltage_rating",
        "zone",
        "resistance",
        "categories",
        "inductive_break",
        "coil",
    },
    "stage": _COMMON | {"coil", "count", "connection", "suppression"},
}


@dataclass(frozen=True)
class Link:
    """The two ends of a harness entry, kept even when its other values are wrong, so that one bad
    value does not make its neighbours look unconnected."""

    id: str
    kind: str | None
    a: str
    b: str
    where: str
    role_given: bool = False  # a cable whose drawing states its role


def read_harness(
    r: Reader,
    raw: dict,
    env: Environment | None,
    coils: dict[str, CoilType] | None,
    default_mm2: str,
    supply: Supply | None,
    links: list[Link],
) -> list[Element] | None:
    h = raw.get("harness", MISSING)
    if h is MISSING or not isinstance(h, list) or not h:
        r.problem("harness", MISSING if h is MISSING else h, "one or more [[harness]] elements")
        return None
    out: list[Element] = []
    seen: dict[str, str] = {}
    system = supply.system_voltage if supply else None
    for i, e in enumerate(h):
        where = f"harness[{i}]"
        if not isinstance(e, dict):
            r.problem(where, e, "a [[harness]] table")
            continue
        kind = r.text(e, "kind", where, choices=sorted(ELEMENT_KEYS))
        eid = r.text(e, "id", where)
        a = r.text(e, "from", where)
        b = r.text(e, "to", where)
        if eid is not None:
            where = f"harness[{i}] ({eid})"
            if eid in seen:
                r.problem(f"{where}.id", eid, f"an id not used before (also {seen[eid]})")
            seen[eid] = where
        if a is not None and a == b:
            r.problem(f"{where}.to", b, "a node other than its 'from' node")
        if a is not None and b is not None:
            links.append(Link(eid or f"#{i}", kind, a, b, where, "role" in e))
        if kind is None:
            continue
        r.unknown(e, ELEMENT_KEYS[kind], where)
        common = dict(id=eid, kind=kind, a=a, b=b, where=where)
        el = None
        if kind == "cable" or (kind == "ground" and "resistance" not in e):
            f = read_cable_fields(r, e, where, env, default_mm2)
            role = (
                "return" if kind == "ground" else r.text(e, "role", where, default="feed", choices=["feed", "return"])
            )
            if f is not None and role is not None:
                el = Cable(**common, **f, role=role)
        elif kind == "joint":
            el = read_joint(r, e, where, env, common)
        elif kind in ("ground", "busbar"):
            res = r.quantity(e, "resistance", where, "resistance", nonnegative=True)
            if res is not None:
                el = Resistor(**common, resistance=res)
        elif kind == "fuse":
            el = read_fuse(r, e, where, env, common)
        elif kind == "relay":
            el = read_relay(r, e, where, env, common, system)
        elif kind == "stage":
            cname = r.text(e, "coil", where)
            count = r.integer(e, "count", where, default=1)
            conn = r.text(e, "connection", where, default="series", choices=["series", "parallel"])
            if count is not None and count > 1 and "connection" not in e:
                r.problem(f"{where}.connection", MISSING, f'"series" or "parallel" for {count} coils')
            coil = None
            if cname is not None and coils is not None:
                coil = coils.get(cname)
                if coil is None and not (isinstance(raw.get("coils"), dict) and cname in raw["coils"]):
                    r.problem(
                        f"{where}.coil",
                        cname,
                        f"one of the coil types {', '.join(sorted(coils)) or '(none)'}{suggest(cname, set(coils))}",
                    )
            sup = read_suppression(r, e, where)
            if None not in (coil, count, conn, sup):
                el = Stage(**common, coil=coil, count=count, connection=conn, suppression=sup)
        if el is not None and None not in (eid, a, b):
            out.append(el)
    check_joint_cables(r, out)
    if not any(isinstance(e, Stage) for e in out) and not r.problems:
        r.problem("harness", MISSING, 'at least one element of kind = "stage"')
    return out
