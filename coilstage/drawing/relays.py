"""A ``[[harness]]`` element of kind "relay": contact ratings, derating, categories and its coil."""

from __future__ import annotations

from typing import Any

from coilstage import tables
from coilstage.units import (
    QuantityError,
    parse_cable_size,
    parse_dimensionless,
    parse_pair,
    parse_resistance_at,
    parse_temperature,
)

from .defaults import default
from .environment import read_zone
from .reader import MISSING, Reader
from .schema import (
    Environment,
    Relay,
    RelayCoil,
)

#: key path -> the keys allowed there
KEYS = {
    "relay_coil": {
        "feed_resistance",
        "fuse",
        "operate_voltage",
        "resistance",
        "rise",
        "suppression",
        "voltage",
        "wire_size",
    },
}
#: what sits across a relay's own coil
COIL_SUPPRESSION = ("none", "diode", "diode_zener", "resistor", "varistor")


def read_relay(
    r: Reader, e: dict, where: str, env: Environment | None, common: dict, system: int | None
) -> Relay | None:
    r12 = r.quantity(e, "rating_12v", where, "current", default=None, positive=True)
    r24 = r.quantity(e, "rating_24v", where, "current", default=None, positive=True)
    if "rating_12v" not in e and "rating_24v" not in e:
        r.problem(where, MISSING, "a contact rating: rating_12v and/or rating_24v")
    zone, zt = read_zone(r, e, where, env)
    ra = r.temperature(e, "rated_ambient", where, default=None)
    if ra is None and "rated_ambient" not in e:
        ra = default("relay.rated_ambient")
        r.assume(
            f"{where}.rated_ambient not given: the contact ratings are taken as stated at {ra:g} °C "
            "(usual datasheet reference)"
        )
    derated = None
    if "derating" in e:
        d = r.value(
            e,
            "derating",
            where,
            lambda t: _fraction_at(t),
            expected='a fraction at a temperature, e.g. "67 % @ 85 degC"',
        )
        if d is not None:
            derated = d
    ma = r.temperature(e, "max_ambient", where, default=None)
    vr = r.quantity(e, "voltage_rating", where, "voltage", default=None, positive=True)
    res = r.quantity(e, "resistance", where, "resistance", default=None, nonnegative=True)
    if res is None and "resistance" not in e:
        res = default("relay.resistance")
        r.assume(f"{where}.resistance not given: the contact is taken as 0 ohm")
    cats: tuple[str, ...] = ()
    known = [row["category"] for row in tables.utilization_categories()]
    cat_ratings: list[tuple[str, float, float]] = []
    if "categories" in e:
        c = e["categories"]
        want = (
            "a list of rated categories from "
            + ", ".join(known)
            + ', each a name or { category = "DC-13", current = "2.5 A", voltage = "24 V" }'
        )
        names = []
        if not isinstance(c, list):
            r.problem(f"{where}.categories", c, want)
        else:
            for i, x in enumerate(c):
                wi = f"{where}.categories[{i}]"
                if isinstance(x, str) and x in known:
                    names.append(x)
                elif (
                    isinstance(x, dict) and x.get("category") in known and set(x) <= {"category", "current", "voltage"}
                ):
                    ie = r.quantity(x, "current", wi, "current", positive=True)
                    ue = r.quantity(x, "voltage", wi, "voltage", positive=True)
                    names.append(x["category"])
                    if ie is not None and ue is not None:
                        cat_ratings.append((x["category"], ie, ue))
                else:
                    r.problem(wi, x, want)
            cats = tuple(names)
    ib = r.value(e, "inductive_break", where, lambda t: parse_pair(t, "current", "time"), default=None)
    if ib is not None and not (ib[0] > 0 and ib[1] > 0):
        r.problem(
            f"{where}.inductive_break",
            e["inductive_break"],
            'a current and a time constant above zero, e.g. "60 A @ 15 ms"',
        )
        ib = None
    coil = _relay_coil(r, e, where)
    if None in (zone, zt, ra, res) or (r12 is None and r24 is None) or coil is False:
        return None
    return Relay(
        **common,
        rating_12v=r12,
        rating_24v=r24,
        rated_ambient=ra,
        derated=derated,
        max_ambient=ma,
        voltage_rating=vr,
        zone=zone,
        zone_temperature=zt,
        resistance=res,
        categories=cats,
        inductive_break=ib,
        coil=coil,
        category_ratings=tuple(cat_ratings),
    )


def _relay_coil(r: Reader, e: dict, where: str):
    """The relay's coil data (for the pick-up check): None when not given, False when wrong."""
    if "coil" not in e:
        return None
    c = e["coil"]
    cw = f"{where}.coil"
    if not isinstance(c, dict):
        r.problem(cw, c, 'a table { voltage = "24 V", resistance = "320 ohm @ 20 degC", operate_voltage = "16.8 V" }')
        return False
    r.unknown(c, KEYS["relay_coil"], cw)
    v = r.quantity(c, "voltage", cw, "voltage", positive=True)
    rt = r.value(c, "resistance", cw, parse_resistance_at)
    op = r.quantity(c, "operate_voltage", cw, "voltage", positive=True)
    feed = r.quantity(c, "feed_resistance", cw, "resistance", default=0.0, nonnegative=True)
    rise = r.difference(c, "rise", cw, default=None)
    if rise is None and "rise" not in c:
        rise = default("relay.coil.rise")
        r.assume(f"{cw}.rise not given: the relay coil is taken at its zone temperature (no self-heating)")
    sup = r.text(c, "suppression", cw, default=None, choices=list(COIL_SUPPRESSION))
    fuse = r.quantity(c, "fuse", cw, "current", default=None, positive=True)
    area = _wire_area(r, c, cw) if "wire_size" in c else None
    if rt is not None and not rt[0] > 0:
        r.problem(f"{cw}.resistance", c["resistance"], "a resistance greater than zero")
        return False
    if None in (v, rt, op, feed, rise):
        return False
    if any(k in c and x is None for k, x in (("suppression", sup), ("fuse", fuse), ("wire_size", area))):
        return False
    return RelayCoil(
        v,
        rt[0],
        rt[1],
        op,
        feed,
        rise,
        suppression=sup or default("relay.coil.suppression"),
        fuse_rating=fuse,
        wire_area=area,
    )


def _wire_area(r: Reader, c: dict, cw: str) -> float | None:
    """The conducting area [m²] of the coil circuit's wire: a size of the default conductor table of
    its system (ISO 6722-1 for mm², ASTM B258 for AWG)."""
    size = r.value(c, "wire_size", cw, parse_cable_size, expected="a conductor size")
    if size is None:
        return None
    name = tables.DEFAULT_MM2_TABLE if size.system == "mm2" else tables.DEFAULT_AWG_TABLE
    table = tables.conductor_table(name)
    row = table.rows.get(float(size.nominal))
    if row is None:
        r.problem(f"{cw}.wire_size", c["wire_size"], f"a size listed in {table.title}: {', '.join(table.sizes())}")
        return None
    return row.area


def _fraction_at(text: Any) -> tuple[float, float]:
    if not isinstance(text, str) or "@" not in text:
        raise QuantityError('a fraction at a temperature, e.g. "67 % @ 85 degC"')
    left, right = text.split("@", 1)
    f = parse_dimensionless(left.strip())
    if not 0 < f <= 1.5:
        raise QuantityError('a fraction between 0 and 150 %, e.g. "67 % @ 85 degC"')
    return f, parse_temperature(right)
