"""The parts list: every element of the drawing as it was read, with its resolved values and units.

Each value says where it came from, so the drawing can be held against the vehicle at the bench:

- ``drawing``: written in the drawing file;
- ``default``: not written; the loader put a default in (the report's assumptions say which);
- ``table``: looked up in a data table from what the drawing wrote (a size's area and resistance,
  a class letter's temperature, a fuse type's breaking capacity);
- ``absent``: not written and nothing put in its place (a check that needs it says NOT CHECKED).

Which keys a drawing wrote is read from the element's ``defaults`` where the loader records them,
else from the drawing file's own keys (TOML, read again, values not interpreted), else from the
loader's assumptions.
"""

from __future__ import annotations

import math
import re
import tomllib
from pathlib import Path
from typing import Any

PARTS_VERSION = "1"

_PREFIX = [(1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ")]


def _num(x: float, digits: int = 4) -> str:
    """A number to ``digits`` significant figures without exponent noise: 0.0025 -> '0.0025'."""
    if x == 0 or not math.isfinite(x):
        return f"{x:g}"
    return f"{x:.{digits}g}" if 1e-4 <= abs(x) < 1e6 else f"{x:.{digits}e}"


def _scaled(x: float, unit: str) -> str:
    if x == 0:
        return f"0 {unit}"
    mag = abs(x)
    for scale, p in _PREFIX:
        if mag >= scale or scale == _PREFIX[-1][0]:
            return f"{_num(x / scale)} {p}{unit}"
    return f"{_num(x)} {unit}"


def show(value: Any, unit: str) -> str:
    """A resolved SI value as a person reads it on a parts list."""
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, str):
        return value
    if isinstance(value, (tuple, list)):
        return ", ".join(map(str, value)) if value else "—"
    x = float(value)
    if not math.isfinite(x):
        return "none" if x > 0 else str(x)
    if unit == "m^2":
        return f"{_num(x * 1e6)} mm²"
    if unit == "m":
        return f"{_num(x * 1e3)} mm" if abs(x) < 0.1 else f"{_num(x)} m"
    if unit == "degC":
        return f"{_num(x)} °C"
    if unit == "K":
        return f"{_num(x)} K"
    if unit == "K/W":
        return f"{_num(x)} K/W"
    if unit == "J/K":
        return f"{_num(x / 1e3)} kJ/K" if abs(x) >= 1e3 else f"{_num(x)} J/K"
    if unit == "ohm/m":
        return f"{_num(x * 1e3)} mΩ/m"
    if unit == "ohm":
        return _scaled(x, "Ω")
    if unit == "A*h":
        return f"{_num(x / 3600)} A·h"
    if unit == "1/K":
        return f"{_num(x)} K⁻¹"
    if unit == "%":
        return f"{_num(x * 100, 3)} %"
    if unit == "s":
        return _scaled(x, "s") if x < 60 else f"{_num(x / 60, 3)} min"
    if unit == "rad/s":
        return f"{_num(x * 60 / (2 * math.pi))} rpm"
    if unit in ("V", "A", "H", "J", "A^2s", "N*m", "T", "Hz"):
        u = {"A^2s": "A²s", "N*m": "N·m"}.get(unit, unit)
        return _scaled(x, u)
    if unit in ("", "1", "count"):
        return _num(x)
    return f"{_num(x)} {unit}"


def _v(
    key: str,
    label: str,
    value: Any,
    unit: str = "",
    origin: str | None = None,
    note: str = "",
    otherwise: str = "default",
) -> dict:
    """One row of a part. ``origin`` None: decided from the drawing's keys (:func:`_resolve`); a
    value present though its key was not written is ``otherwise`` (a default, or derived/table)."""
    return {
        "key": key,
        "label": label,
        "value": value,
        "unit": unit,
        "origin": origin,
        "note": note,
        "otherwise": otherwise,
    }


def _finite(x: Any) -> Any:
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


# ---------------------------------------------------------------- what the drawing wrote


def _raw(drawing: Any, raw: dict | None) -> dict | None:
    if raw is not None:
        return raw
    p = Path(getattr(drawing, "path", "") or "")
    if not p.is_file():
        return None
    try:
        return tomllib.loads(p.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError):
        return None


_INDEX = re.compile(r"harness\[(\d+)\]")


def _harness_keys(raw: dict | None, where: str) -> set[str] | None:
    m = _INDEX.match(where)
    if raw is None or m is None:
        return None
    h = raw.get("harness")
    k = int(m.group(1))
    if not isinstance(h, list) or k >= len(h) or not isinstance(h[k], dict):
        return None
    return set(h[k])


def _section_keys(raw: dict | None, *path: str) -> set[str] | None:
    node: Any = raw
    for p in path:
        if not isinstance(node, dict) or p not in node:
            return None if raw is None else set()
        node = node[p]
    return set(node) if isinstance(node, dict) else set()


def _assumed(drawing: Any, where: str) -> set[str]:
    """Keys under ``where`` the loader's assumptions say it filled in."""
    out = set()
    for a in getattr(drawing, "assumptions", ()):
        head = a.split(" not given", 1)[0]
        if head.startswith(where + "."):
            out.add(head[len(where) + 1 :])
    return out


def _resolve(rows: list[dict], given: set[str] | None, assumed: set[str], recorded: Any = None) -> str:
    """Fill each row's origin; returns how the origins were found."""
    top_assumed = {a.split(".", 1)[0] for a in assumed}
    for r in rows:
        if r["origin"] is not None:
            continue
        full = r.get("lookup") or r["key"]
        key = full.split(".", 1)[0]
        empty = r["value"] in (None, (), "")
        if full in assumed:  # a default inside a given table, e.g. suppression.forward_voltage
            r["origin"] = "default"
        elif recorded is not None:
            defaulted = full in recorded or key in recorded
            r["origin"] = "default" if defaulted else ("absent" if empty else "drawing")
        elif given is not None:
            r["origin"] = "drawing" if key in given else ("absent" if empty else r["otherwise"])
        else:
            r["origin"] = "default" if key in top_assumed else ("absent" if empty else "drawing")
    if recorded is not None:
        return "recorded by the loader"
    return "the drawing file's keys" if given is not None else "the loader's assumptions only"


# ---------------------------------------------------------------- one part per element


def _cable(c) -> list[dict]:
    return [
        _v("size", "size", c.size_label),
        _v("size.area", "conducting area", c.area, "m^2", "table", c.r20_source),
        _v("conductor_table", "resistance at 20 °C", c.r20_per_m, "ohm/m", None, c.r20_source, otherwise="table"),
        _v("material", "conductor", c.material, otherwise="table"),
        _v("length", "length", c.length, "m"),
        _v("insulation", "insulation class (ISO 6722)", c.insulation_class),
        _v("insulation.max", "class temperature", c.class_max, "degC", "table"),
        _v("zone", "zone", c.zone),
        _v(
            "zone.temperature", "zone temperature", c.zone_temperature, "degC", "table" if c.zone != "ambient" else None
        ),
        _v("bundle", "loaded conductors in the bundle", c.bundle, "count"),
        _v(
            "role",
            "role",
            c.role,
            "",
            "derived" if c.kind == "ground" else None,
            "a ground is a return" if c.kind == "ground" else "",
        ),
        _v("sheathed", "sheathed", c.sheathed),
        _v("outer_diameter", "outer diameter", c.outer_diameter, "m", None, c.diameter_source, otherwise="table"),
    ]


def _fuse(f) -> list[dict]:
    bc_origin = "drawing" if f.breaking_source == "given in the drawing" else "table"
    return [
        _v("type", "type (ISO 8820)", f"{f.fuse_type} ({f.part})"),
        _v("rating", "rating", f.rating, "A"),
        _v("voltage_rating", "voltage rating", f.voltage_rating, "V"),
        _v("breaking_capacity", "breaking capacity", f.breaking_capacity, "A", bc_origin, f.breaking_source),
        _v("zone", "zone", f.zone),
        _v(
            "zone.temperature", "zone temperature", f.zone_temperature, "degC", "table" if f.zone != "ambient" else None
        ),
        _v("resistance", "resistance", f.resistance, "ohm"),
        _v(
            "protects",
            "protects",
            f.protects if f.protects is not None else "found from the topology",
            otherwise="derived",
        ),
        _v(
            "gates",
            "time-current gates",
            f.gates_source,
            "",
            "drawing" if f.gates_source.endswith("drawing") else "table",
        ),
        _v("melting_i2t", "melting I²t", f.melting_i2t, "A^2s"),
    ]


def _relay(r) -> list[dict]:
    rows = [
        _v("rating_12v", "contact rating, 12 V", r.rating_12v, "A"),
        _v("rating_24v", "contact rating, 24 V", r.rating_24v, "A"),
        _v("rated_ambient", "ratings stated at", r.rated_ambient, "degC"),
        _v(
            "derating",
            "derating",
            None if r.derated is None else f"{r.derated[0]:.0%} at {r.derated[1]:g} °C",
        ),
        _v("max_ambient", "highest surrounding temperature", r.max_ambient, "degC"),
        _v("voltage_rating", "switching voltage rating", r.voltage_rating, "V"),
        _v("zone", "zone", r.zone),
        _v(
            "zone.temperature", "zone temperature", r.zone_temperature, "degC", "table" if r.zone != "ambient" else None
        ),
        _v("resistance", "contact resistance", r.resistance, "ohm"),
        _v("categories", "utilization categories (IEC 60947)", r.categories),
        _v(
            "inductive_break",
            "inductive break rating",
            None
            if r.inductive_break is None
            else f"{show(r.inductive_break[0], 'A')} at L/R {show(r.inductive_break[1], 's')}",
        ),
    ]
    c = r.coil
    if c is None:
        rows.append(_v("coil", "coil", None))
    else:
        rows += [
            _v("coil.voltage", "coil voltage", c.voltage, "V", "drawing"),
            _v("coil.resistance", "coil resistance", f"{show(c.r_ref, 'ohm')} at {c.t_ref:g} °C", "", "drawing"),
            _v("coil.operate_voltage", "must-operate voltage", c.operate_voltage, "V", "drawing"),
            _v("coil.feed_resistance", "control feed resistance", c.feed_resistance, "ohm", "drawing"),
            _v("coil.rise", "coil rise above its zone", c.rise, "K", "drawing"),
        ]
    return rows


def _stage(s) -> list[dict]:
    sp = s.suppression
    rows = [
        _v("coil", "coil type", s.coil.name),
        _v("count", "coils", s.count, "count"),
        _v("connection", "connection", s.connection),
        _v("inductance", "stage inductance (coils uncoupled)", s.inductance, "H", "table"),
        _v("suppression", "suppression", sp.kind),
    ]
    if sp.kind != "none":
        rows += [
            _v("suppression.u0", "suppressor holding voltage", sp.u0, "V"),
            _v("suppression.resistance", "suppressor series resistance", sp.r_series, "ohm", "drawing"),
            _v("suppression.peak_current", "suppressor peak current", sp.peak_current, "A", "drawing"),
            _v("suppression.reverse_voltage", "suppressor reverse / stand-off voltage", sp.reverse_voltage, "V"),
            _v("suppression.energy_rating", "suppressor energy per event", sp.energy_rating, "J"),
        ]
        for r in rows[-5:]:
            r["origin"] = None if r["value"] is not None else "absent"
            r["lookup"] = "suppression"
        if sp.kind in ("diode", "diode_zener", "diode_resistor"):
            rows[-5]["lookup"] = "suppression.forward_voltage"
    return rows


def _resistor(x) -> list[dict]:
    return [_v("resistance", "resistance", x.resistance, "ohm")]


def _joint(j) -> list[dict]:
    """A joint that states more than its resistance: what it is, its rating and the conductors it takes."""
    if not (j.joint_kind or j.rating is not None or j.conductor_range is not None or j.cable is not None):
        return _resistor(j)
    rng = j.conductor_range
    return [
        _v("joint", "what it is", j.joint_kind.replace("_", " ") or None),
        _v("resistance", "resistance", j.resistance, "ohm"),
        _v("rating", "continuous current rating", j.rating, "A"),
        _v("rated_ambient", "rating stated at", j.rated_ambient, "degC"),
        _v("derating", "derating", None if j.derated is None else f"{j.derated[0]:.0%} at {j.derated[1]:g} °C"),
        _v("zone", "zone", j.zone),
        _v(
            "zone.temperature", "zone temperature", j.zone_temperature, "degC", "table" if j.zone != "ambient" else None
        ),
        _v(
            "conductor_range",
            "conductors it takes",
            None if rng is None else f"{show(rng[0], 'm^2')} to {show(rng[1], 'm^2')}",
        ),
        _v("cable", "cable it terminates", j.cable),
    ]


def _coil_type(c) -> list[dict]:
    rows = [
        _v("metal", "winding metal", c.metal),
        _v(
            "resistance",
            "resistance of one coil",
            f"{show(c.r_ref, 'ohm')} at {c.t_ref:g} °C",
            "",
            None,
            c.resistance_source,
        ),
        _v("metal.alpha20", "temperature coefficient at 20 °C", c.alpha20, "1/K", "table"),
        _v("inductance", "inductance of one coil", c.inductance, "H"),
        _v("turns", "turns", c.turns, "count"),
        _v("insulation_class", "insulation class (IEC 60085)", c.insulation_class, "degC"),
        _v("insulation_class.allowance", "hot-spot allowance", c.class_allowance, "K", "table"),
        _v(
            "hot_temperature",
            "hot-corner winding temperature",
            c.hot_temperature,
            "degC",
            None,
            c.hot_temperature_source,
            otherwise="derived",
        ),
        _v("thermal_resistance", "thermal resistance, standing", c.thermal_resistance, "K/W"),
        _v("thermal_resistance_moving", "thermal resistance, moving", c.thermal_resistance_moving, "K/W"),
        _v("heat_capacity", "heat capacity", c.heat_capacity, "J/K", None, c.heat_capacity_source, otherwise="derived"),
        _v("zone", "zone", c.zone),
        _v(
            "zone.temperature", "zone temperature", c.zone_temperature, "degC", "table" if c.zone != "ambient" else None
        ),
    ]
    m = c.magnetic
    if m is None:
        rows.append(_v("pole_area", "magnetic circuit", None))
    else:
        rows += [
            _v("pole_area", "pole area", m.pole_area, "m^2"),
            _v("gaps", "air gaps in the path", m.gaps, "count"),
            _v("gap_length", "each gap", m.gap, "m"),
            _v("iron_length", "iron path length", m.iron_length, "m"),
            _v("iron_area", "iron path area", m.iron_area, "m^2"),
            _v("bh_curve", "B-H curve", m.curve_name, "", None, m.curve_source),
        ]
    return rows


def _element_rows(e) -> list[dict]:
    from coilstage.drawing.schema import Cable, Fuse, Joint, Relay, Resistor, Stage

    if isinstance(e, Joint):
        return _joint(e)
    if isinstance(e, Cable):
        return _cable(e)
    if isinstance(e, Fuse):
        return _fuse(e)
    if isinstance(e, Relay):
        return _relay(e)
    if isinstance(e, Stage):
        return _stage(e)
    if isinstance(e, Resistor):
        return _resistor(e)
    return []


def _mark_library(rows: list[dict], where: str, provenance: Any) -> None:
    """Rows whose value came from a parts library (``part = "file.toml#NAME"``): origin ``library``
    and the part, its source and status as the row's note. A suppression part's keys are relative
    to the stage's ``suppression`` table."""
    for rec in provenance:
        if rec.where == where:
            prefix = ""
        elif rec.where == f"{where}.suppression":
            prefix = "suppression."
        else:
            continue
        keys = {prefix + k for k in rec.from_library}
        if prefix:
            keys |= {"suppression"} if "suppression.kind" in keys else set()
        for r in rows:
            full = r.get("lookup") or r["key"]
            if r["key"] in keys or full in keys or full.split(".", 1)[0] in keys:
                r["origin"] = "library"
                r["note"] = f"from parts library {rec.ref} ({rec.status}; source: {rec.source})"


def _finish(part: dict, how: set[str]) -> dict:
    for r in part["values"]:
        r["value"] = _finite(r["value"])
        r["shown"] = show(r["value"], r["unit"])
    part["defaults"] = [r["key"] for r in part["values"] if r["origin"] == "default"]
    return part


def build(drawing: Any, raw: dict | None = None) -> dict[str, Any]:
    """Every part of ``drawing``: the battery, the alternator, each coil type and each harness
    element, in drawing order. ``raw`` is the drawing's TOML as a dict (read from ``drawing.path``
    when not given)."""
    raw = _raw(drawing, raw)
    how: set[str] = set()
    parts: list[dict] = []
    s = drawing.supply
    b = s.battery
    rows = [
        _v("emf", "open-circuit voltage", b.emf, "V"),
        _v("internal_resistance", "internal resistance", b.internal_resistance, "ohm"),
        _v("capacity", "capacity", b.capacity, "A*h"),
    ]
    how.add(_resolve(rows, _section_keys(raw, "supply", "battery"), _assumed(drawing, "supply.battery")))
    parts.append(
        {
            "section": "supply",
            "id": "battery",
            "kind": "battery",
            "from": b.node,
            "to": s.negative_node,
            "where": "supply.battery",
            "values": rows,
        }
    )
    a = s.alternator
    if a is not None:
        rows = [
            _v("setpoint", "regulation set-point", a.setpoint, "V"),
            _v("tolerance", "set-point tolerance", a.tolerance, "V"),
            _v("source_resistance", "source resistance", a.source_resistance, "ohm"),
            _v("limit_idle", "output at idle", a.limit_idle, "A"),
            _v("limit_rated", "output at rated speed", a.limit_rated, "A"),
        ]
        if a.compensation_limit is not None:
            rows.append(_v("compensation_limit", "temperature compensation at most", a.compensation_limit, "V"))
        how.add(_resolve(rows, _section_keys(raw, "supply", "alternator"), _assumed(drawing, "supply.alternator")))
        parts.append(
            {
                "section": "supply",
                "id": "alternator",
                "kind": "alternator",
                "from": a.node,
                "to": s.negative_node,
                "where": "supply.alternator",
                "values": rows,
            }
        )
    rows = [
        _v("system", "system voltage", float(s.system_voltage), "V"),
        _v("code", "supply voltage code (ISO 16750-2)", s.code),
        _v("code.limits", "operating limits", f"{s.v_min:g}–{s.v_max:g} V", "", "table", s.limits_source),
        _v("base_load", "rest of the vehicle", s.base_load, "A"),
    ]
    how.add(_resolve(rows, _section_keys(raw, "supply"), _assumed(drawing, "supply")))
    parts.append(
        {
            "section": "supply",
            "id": "bus",
            "kind": "supply",
            "from": s.base_load_node,
            "to": s.negative_node,
            "where": "supply",
            "values": rows,
        }
    )
    for name, c in drawing.coils.items():
        where = f"coils.{name}"
        rows = _coil_type(c)
        how.add(_resolve(rows, _section_keys(raw, "coils", name), _assumed(drawing, where)))
        parts.append(
            {"section": "coils", "id": name, "kind": "coil type", "from": "", "to": "", "where": where, "values": rows}
        )
    provenance = getattr(drawing, "provenance", ()) or ()
    for e in drawing.elements:
        rows = _element_rows(e)
        recorded = getattr(e, "defaults", None)
        how.add(_resolve(rows, _harness_keys(raw, e.where), _assumed(drawing, e.where), recorded))
        _mark_library(rows, e.where, provenance)
        parts.append(
            {"section": "harness", "id": e.id, "kind": e.kind, "from": e.a, "to": e.b, "where": e.where, "values": rows}
        )
    return {
        "parts_version": PARTS_VERSION,
        "defaults_from": sorted(how),
        "parts": [_finish(p, how) for p in parts],
    }


ORIGIN_WORDS = {
    "drawing": "as drawn",
    "default": "DEFAULT",
    "table": "from table",
    "absent": "not given",
    "derived": "derived",
    "library": "from library",
}
