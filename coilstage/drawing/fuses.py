"""A ``[[harness]]`` element of kind "fuse": ISO 8820 type, rating, breaking capacity, time-current gates
and the maker's cyclic derating."""

from __future__ import annotations

import itertools
import math

from coilstage import tables
from coilstage.units import (
    parse_dimensionless,
    parse_quantity,
)

from .defaults import default
from .environment import read_zone
from .reader import Reader
from .schema import (
    Environment,
    Fuse,
)

#: key path -> the keys allowed there
KEYS = {
    "gate": {"max", "min", "multiple"},
}


def read_fuse(r: Reader, e: dict, where: str, env: Environment | None, common: dict) -> Fuse | None:
    ftype = r.text(e, "type", where, choices=sorted(tables.fuse_types()))
    rating = r.quantity(e, "rating", where, "current", positive=True)
    zone, zt = read_zone(r, e, where, env)
    row = tables.fuse_types().get(ftype) if ftype else None
    vr = r.quantity(e, "voltage_rating", where, "voltage", default=None, positive=True)
    if vr is None and "voltage_rating" not in e and row is not None:
        vr = float(min(row["voltages"]))
        r.assume(f"{where}.voltage_rating not given: {vr:g} V, the lowest rating of {row['part']} type {ftype}")
    bc = r.quantity(e, "breaking_capacity", where, "current", default=None, positive=True)
    bsrc = "given in the drawing"
    if bc is None and "breaking_capacity" not in e and row is not None:
        bc = float(row["breaking_capacity"])
        bsrc = f"{row['part']} scope ({row['status']})"
    res = r.quantity(e, "resistance", where, "resistance", default=None, nonnegative=True)
    if res is None and "resistance" not in e:
        res = default("fuse.resistance")
        r.assume(f"{where}.resistance not given: the fuse is taken as 0 ohm (its own drop is left out)")
    if row is not None and rating is not None and rating > row["max_rating"]:
        r.problem(f"{where}.rating", e["rating"], f"at most {row['max_rating']} A for {row['part']} type {ftype}")
    protects = None
    if "protects" in e:
        p = e["protects"]
        if not isinstance(p, list) or not all(isinstance(x, str) for x in p):
            r.problem(f"{where}.protects", p, "a list of cable ids")
        else:
            protects = tuple(p)
    melt = r.quantity(e, "melting_i2t", where, "joule_integral", default=None, positive=True)
    gates, gsrc = _gates(r, e, where, ftype)
    # the maker's cyclic derating (I_on <= factor x I_melt(t_on)) and the switchings it is rated for
    cyc = r.share(e, "cyclic_factor", where, default=None, low_open=True)
    cyc_n = r.integer(e, "cyclic_cycles", where, default=None, maximum=100_000_000)
    if "cyclic_cycles" in e and "cyclic_factor" not in e:
        r.problem(f"{where}.cyclic_cycles", e["cyclic_cycles"], "given with the cyclic_factor it is rated for")
    if None in (ftype, rating, zone, zt, vr, bc, res, row):
        return None
    return Fuse(
        **common,
        fuse_type=ftype,
        part=row["part"],
        rating=rating,
        voltage_rating=vr,
        breaking_capacity=bc,
        breaking_source=bsrc,
        series=tuple(float(x) for x in row["series"]),
        zone=zone,
        zone_temperature=zt,
        resistance=res,
        protects=protects,
        gates=gates,
        gates_source=gsrc,
        melting_i2t=melt,
        cyclic_factor=cyc,
        cyclic_cycles=cyc_n,
    )


def _gates(r: Reader, e: dict, where: str, ftype: str | None):
    """The fuse's time-current gates: the drawing's own (a maker's curve) or the shipped ones."""
    if "gates" not in e:
        g = tables.shipped_gates(ftype) if ftype else None
        return (g.points, g.source) if g else (None, "no gates shipped for this type")
    raw = e["gates"]
    if not isinstance(raw, list) or not raw:
        r.problem(f"{where}.gates", raw, 'a list of { multiple = 1.35, min = "60 s", max = "30 min" } points')
        return None, ""
    pts = []
    for k, g in enumerate(raw):
        gw = f"{where}.gates[{k}]"
        if not isinstance(g, dict):
            r.problem(gw, g, 'a table { multiple = 2.0, min = "1 s", max = "60 s" }')
            continue
        r.unknown(g, KEYS["gate"], gw)
        m = r.value(g, "multiple", gw, parse_dimensionless)

        def t_or_none(text, inf):
            if text in ("none", ""):
                return inf
            return parse_quantity(text, "time")

        tmin = r.value(g, "min", gw, lambda t: t_or_none(t, 0.0), default=0.0)
        tmax = r.value(g, "max", gw, lambda t: t_or_none(t, math.inf), default=math.inf)
        if None not in (m, tmin, tmax):
            if m <= 1 or tmin < 0 or tmin > tmax:
                r.problem(gw, g, "a multiple above 1 and 0 <= min <= max")
            else:
                pts.append((m, tmin, tmax))
    pts.sort()
    for (m0, lo0, hi0), (m1, lo1, hi1) in itertools.pairwise(pts):
        if m1 == m0 or lo1 > lo0 or hi1 > hi0:
            r.problem(
                f"{where}.gates",
                f"{m1:g} x rating",
                "one point per multiple, and times that do not rise as the multiple rises (a fuse opens faster "
                "at a higher current)",
            )
            return None, ""
    return tuple(pts), "time-current gates given in the drawing"
