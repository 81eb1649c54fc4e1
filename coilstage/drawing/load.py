"""Read a drawing file (TOML) into a :class:`~coilstage.drawing.schema.Drawing`.

Every problem is collected before anything is raised: one :class:`~coilstage.errors.DrawingError`
lists them all, each with its TOML key path, the value found and what was expected. The file is
only ever read.
"""

from __future__ import annotations

import difflib
import math
import re
import tomllib
from collections import defaultdict
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from coilstage import tables
from coilstage.errors import DataError, DrawingError, Problem
from coilstage.graph import Graph, UnionFind
from coilstage.physics.conductor import awg_area
from coilstage.units import (
    QuantityError,
    parse_cable_size,
    parse_dimensionless,
    parse_pair,
    parse_quantity,
    parse_resistance_at,
    parse_temperature,
)

from .schema import (
    Alternator,
    Battery,
    Cable,
    CoilType,
    CornerSettings,
    Drawing,
    Duty,
    DutyStep,
    Element,
    Environment,
    Fuse,
    Limits,
    Position,
    Relay,
    RelayCoil,
    Resistor,
    Stage,
    Supply,
    Suppression,
    Switching,
)

_MISSING = object()

TOP_KEYS = {
    "drawing",
    "tables",
    "supply",
    "environment",
    "coils",
    "corners",
    "limits",
    "harness",
    "switching",
    "duty",
    "retarder",
    "ac_comparison",
}
KEYS = {
    "drawing": {"title", "note", "format"},
    "tables": {"conductors"},
    "supply": {
        "system",
        "code",
        "limits",
        "battery",
        "alternator",
        "base_load",
        "base_load_node",
        "negative",
        "chassis",
    },
    "supply.limits": {"min", "max"},
    "supply.battery": {"emf", "internal_resistance", "node", "capacity"},
    "supply.alternator": {"setpoint", "tolerance", "source_resistance", "limit_idle", "limit_rated", "node"},
    "environment": {"ambient_min", "ambient_max", "zones"},
    "coil": {
        "metal",
        "resistance",
        "turns",
        "mean_turn_length",
        "wire_size",
        "inductance",
        "insulation_class",
        "hot_temperature",
        "thermal_resistance",
        "thermal_resistance_moving",
        "heat_capacity",
        "conductor_mass",
        "iron_mass",
        "iron_share",
        "zone",
        "pole_area",
        "gaps",
        "gap_length",
        "iron_length",
        "iron_area",
        "bh_curve",
    },
    "retarder": {"rated_torque", "rated_current", "critical_speed", "min_braking_ratio"},
    "ac_comparison": {"voltage", "frequency"},
    "duty": {"profile", "steps", "state_of_charge", "min_state_of_charge"},
    "duty_step": {"duration", "stages", "engine", "moving"},
    "corners": {"cold", "hot", "limit"},
    "corners.cold": {"ambient", "bus_voltage"},
    "corners.hot": {"battery_emf", "alternator"},
    "corners.limit": {"bus_voltage"},
    "limits": {"voltage_drop_pass", "voltage_drop_warn"},
    "switching": {"positions", "duration", "off_at", "release_limit", "release_fraction", "cycles"},
    "position": {"name", "at", "stages"},
    "suppression": {
        "kind",
        "forward_voltage",
        "zener_voltage",
        "clamp_voltage",
        "resistance",
        "peak_current",
        "reverse_voltage",
        "energy_rating",
    },
    "relay_coil": {"voltage", "resistance", "operate_voltage", "feed_resistance", "rise"},
    "gate": {"multiple", "min", "max"},
}
SUPPRESSION_KINDS = ["none", "diode", "diode_zener", "diode_resistor", "tvs", "varistor"]
#: Forward voltage of a freewheel diode when the drawing gives none (common practice: 0.7-1 V).
DEFAULT_FORWARD_VOLTAGE = 0.8
_COMMON = {"id", "kind", "from", "to", "note"}
_CABLE = {
    "size",
    "length",
    "insulation",
    "zone",
    "bundle",
    "material",
    "conductor_table",
    "sheathed",
    "outer_diameter",
    "wall",
}
ELEMENT_KEYS = {
    "cable": _COMMON | _CABLE | {"role"},
    "ground": _COMMON | _CABLE | {"resistance"},
    "joint": _COMMON | {"resistance"},
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
_INSULATION_LETTERS = {"Y": 90, "A": 105, "E": 120, "B": 130, "F": 155, "H": 180, "N": 200, "R": 220}


def _suggest(word: str, choices: set[str] | list[str]) -> str:
    close = difflib.get_close_matches(word, sorted(choices), n=1, cutoff=0.6)
    return f' (did you mean "{close[0]}"?)' if close else ""


def _show(value: Any) -> str:
    text = repr(value) if not isinstance(value, str) else f'"{value}"'
    return text if len(text) <= 60 else text[:57] + "..."


class _Reader:
    """Walks the raw TOML dict, turning values into SI floats and collecting problems."""

    def __init__(self, path: str, base_dir: Path):
        self.path = path
        self.base_dir = base_dir
        self.problems: list[Problem] = []
        self.assumptions: list[str] = []

    # -- generic helpers
    def problem(self, where: str, found: Any, expected: str) -> None:
        self.problems.append(Problem(where, "" if found is _MISSING else _show(found), expected))

    def table(self, raw: dict, key: str, where: str, required: bool = True) -> dict | None:
        value = raw.get(key, _MISSING)
        if value is _MISSING:
            if required:
                self.problem(where, _MISSING, f"a [{where}] table")
            return None
        if not isinstance(value, dict):
            self.problem(where, value, f"a [{where}] table")
            return None
        return value

    def unknown(self, raw: dict, allowed: set[str], where: str) -> None:
        for key in raw:
            if key not in allowed:
                path = f"{where}.{key}" if where else key
                self.problem(
                    path, _MISSING, f"no such key here{_suggest(key, allowed)}; allowed: {', '.join(sorted(allowed))}"
                )

    def value(self, raw: dict, key: str, where: str, parse, expected: str | None = None, default=_MISSING):
        """Parse ``raw[key]`` with ``parse``; a missing key gives ``default`` (or a problem)."""
        path = f"{where}.{key}"
        if key not in raw:
            if default is _MISSING:
                self.problem(path, _MISSING, f"a value ({expected or 'required'})")
                return None
            return default
        try:
            return parse(raw[key])
        except QuantityError as exc:
            self.problem(path, raw[key], str(exc))
        except (TypeError, ValueError) as exc:
            self.problem(path, raw[key], expected or str(exc))
        return None

    def quantity(self, raw, key, where, dim, default=_MISSING, positive=False, nonnegative=False):
        v = self.value(raw, key, where, lambda t: parse_quantity(t, dim), default=default)
        if isinstance(v, float):
            if positive and not v > 0:
                self.problem(f"{where}.{key}", raw[key], f"a {dim} greater than zero")
                return None
            if nonnegative and v < 0:
                self.problem(f"{where}.{key}", raw[key], f"a {dim} of zero or more")
                return None
        return v

    def temperature(self, raw, key, where, default=_MISSING):
        return self.value(raw, key, where, parse_temperature, default=default)

    def text(self, raw, key, where, default=_MISSING, choices=None):
        def parse(t):
            if not isinstance(t, str) or not t.strip():
                raise ValueError("a text")
            if choices is not None and t not in choices:
                raise ValueError(f"one of {', '.join(map(str, choices))}{_suggest(t, list(map(str, choices)))}")
            return t

        return self.value(raw, key, where, parse, expected="a text", default=default)

    def integer(self, raw, key, where, default=_MISSING, minimum=1):
        def parse(t):
            if isinstance(t, bool) or not isinstance(t, int) or t < minimum:
                raise ValueError(f"a whole number of at least {minimum}")
            return t

        return self.value(raw, key, where, parse, default=default)

    def assume(self, text: str) -> None:
        self.assumptions.append(text)


def load_drawing(path: str | Path) -> Drawing:
    """Read and check the drawing at ``path``; raise DrawingError listing every problem."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except OSError as exc:
        raise DrawingError(str(p), [Problem(str(p), "", f"a readable drawing file ({exc.strerror})")]) from None
    except UnicodeDecodeError:
        raise DrawingError(str(p), [Problem(str(p), "", "a UTF-8 text file")]) from None
    return parse_drawing(text, str(p), p.parent)


_TOML_LINE = re.compile(r"\(at line (\d+), column (\d+)\)")


def parse_drawing(text: str, source: str = "<drawing>", base_dir: Path | None = None) -> Drawing:
    """Parse drawing text (TOML); see :func:`load_drawing`."""
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = _TOML_LINE.search(msg)
        where = f"line {m.group(1)}, column {m.group(2)}" if m else "TOML"
        raise DrawingError(source, [Problem(where, "", f"valid TOML ({_TOML_LINE.sub('', msg).strip()})")]) from None
    r = _Reader(source, base_dir or Path("."))
    drawing = _build(r, raw)
    if r.problems or drawing is None:
        raise DrawingError(source, r.problems)
    return drawing


# ---------------------------------------------------------------- sections


def _build(r: _Reader, raw: dict) -> Drawing | None:
    r.unknown(raw, TOP_KEYS, "")
    head = r.table(raw, "drawing", "drawing", required=False) or {}
    r.unknown(head, KEYS["drawing"], "drawing")
    title = r.text(head, "title", "drawing", default="(untitled drawing)")
    note = r.text(head, "note", "drawing", default="")
    if "format" in head and head["format"] != 1:
        r.problem("drawing.format", head["format"], "1 (the only drawing format so far)")

    tabs = r.table(raw, "tables", "tables", required=False) or {}
    r.unknown(tabs, KEYS["tables"], "tables")
    default_mm2 = tabs.get("conductors", tables.DEFAULT_MM2_TABLE)

    supply = _supply(r, raw)
    env = _environment(r, raw)
    coils = _coils(r, raw, env)
    links: list[_Link] = []
    elements = _harness(r, raw, env, coils, default_mm2, supply, links)
    corners = _corners(r, raw, supply, env)
    limits = _limits(r, raw)
    stage_ids = [x.id for x in links if x.kind == "stage"]
    switching = _switching(r, raw, set(stage_ids))
    duty = _duty(r, raw, stage_ids, switching)
    retarder, ac = _retarder(r, raw)
    if supply is not None and elements is not None:
        _topology(r, supply, links, elements)
    if r.problems or None in (supply, env, coils, elements, corners, limits, switching, duty):
        return None
    return Drawing(
        title=title or "",
        note=note or "",
        path=r.path,
        supply=supply,
        environment=env,
        coils=coils,
        elements=tuple(elements),
        corners=corners,
        limits=limits,
        switching=switching,
        duty=duty,
        retarder=retarder,
        ac_comparison=ac,
        assumptions=tuple(r.assumptions),
    )


def _supply(r: _Reader, raw: dict) -> Supply | None:
    s = r.table(raw, "supply", "supply")
    if s is None:
        return None
    r.unknown(s, KEYS["supply"], "supply")
    system = r.quantity(s, "system", "supply", "voltage")
    if system is not None and round(system) not in (12, 24):
        r.problem("supply.system", s["system"], '"12 V" or "24 V"')
        system = None
    negative = r.text(s, "negative", "supply", default="B-")
    chassis = r.text(s, "chassis", "supply", default=negative)

    b = r.table(s, "battery", "supply.battery")
    battery = None
    if b is not None:
        r.unknown(b, KEYS["supply.battery"], "supply.battery")
        emf = r.quantity(b, "emf", "supply.battery", "voltage", positive=True)
        rint = r.quantity(b, "internal_resistance", "supply.battery", "resistance", positive=True)
        node = r.text(b, "node", "supply.battery", default="B+")
        cap = r.quantity(b, "capacity", "supply.battery", "charge", default=None, positive=True)
        if None not in (emf, rint, node):
            battery = Battery(emf, rint, node, cap)

    alternator = None
    a = r.table(s, "alternator", "supply.alternator", required=False)
    if a is not None:
        r.unknown(a, KEYS["supply.alternator"], "supply.alternator")
        setpoint = r.quantity(a, "setpoint", "supply.alternator", "voltage", positive=True)
        tol = r.quantity(a, "tolerance", "supply.alternator", "voltage", default=None, nonnegative=True)
        if tol is None and "tolerance" not in a:
            tol = 0.0
            r.assume("supply.alternator.tolerance not given: the cold corner uses the set-point itself")
        rs = r.quantity(a, "source_resistance", "supply.alternator", "resistance", positive=True)
        idle = r.quantity(a, "limit_idle", "supply.alternator", "current", positive=True)
        rated = r.quantity(a, "limit_rated", "supply.alternator", "current", positive=True)
        node = r.text(a, "node", "supply.alternator", default=battery.node if battery else "B+")
        if idle is not None and rated is not None and idle > rated:
            r.problem("supply.alternator.limit_idle", a["limit_idle"], "no more than limit_rated")
        if None not in (setpoint, tol, rs, idle, rated, node):
            alternator = Alternator(setpoint, tol, rs, idle, rated, node)
    elif "alternator" not in s:
        r.assume("no alternator in the drawing: the battery alone feeds the bus")

    base = r.quantity(s, "base_load", "supply", "current", default=None, nonnegative=True)
    if base is None and "base_load" not in s:
        base = 0.0
        r.assume("supply.base_load not given: the rest of the vehicle draws nothing")
    base_node = r.text(s, "base_load_node", "supply", default=battery.node if battery else "B+")

    code = None
    v_min = v_max = None
    limits_source = ""
    if "code" in s:
        code = r.text(s, "code", "supply", choices=sorted(tables.supply_codes()))
        if code is not None:
            row = tables.supply_codes()[code]
            if system is not None and row["system"] != round(system):
                r.problem("supply.code", code, f"a code for a {round(system)} V system")
            v_min, v_max = float(row["min"]), float(row["max"])
            limits_source = f"ISO 16750-2:2010 code {code}"
    lim = r.table(s, "limits", "supply.limits", required=False)
    if lim is not None:
        r.unknown(lim, KEYS["supply.limits"], "supply.limits")
        lo = r.quantity(lim, "min", "supply.limits", "voltage", positive=True)
        hi = r.quantity(lim, "max", "supply.limits", "voltage", positive=True)
        if lo is not None and hi is not None:
            if lo >= hi:
                r.problem("supply.limits.min", lim["min"], "a minimum below the maximum")
            v_min, v_max = lo, hi
            limits_source = "supply.limits in the drawing"
    if v_min is None and "code" not in s and lim is None:
        r.problem("supply", _MISSING, 'an ISO 16750-2 supply code (code = "F") or [supply.limits] min and max')
    if None in (system, battery, base, base_node, negative, v_min, v_max):
        return None
    if battery.node == negative:
        r.problem("supply.battery.node", battery.node, "a node other than the negative node")
        return None
    return Supply(
        round(system),
        code,
        v_min,
        v_max,
        limits_source,
        battery,
        alternator,
        base,
        base_node,
        negative,
        chassis or negative,
    )


def _environment(r: _Reader, raw: dict) -> Environment | None:
    e = r.table(raw, "environment", "environment")
    if e is None:
        return None
    r.unknown(e, KEYS["environment"], "environment")
    lo = r.temperature(e, "ambient_min", "environment")
    hi = r.temperature(e, "ambient_max", "environment")
    if lo is not None and hi is not None and lo > hi:
        r.problem("environment.ambient_min", e["ambient_min"], "no more than ambient_max")
    zones: dict[str, float] = {}
    zraw = r.table(e, "zones", "environment.zones", required=False) or {}
    for name, value in zraw.items():
        t = r.value(zraw, name, "environment.zones", parse_temperature)
        if t is not None:
            if hi is not None and t < hi:
                r.problem(
                    f"environment.zones.{name}", value, f"a highest temperature of at least ambient_max ({hi:g} °C)"
                )
            zones[name] = t
    if lo is None or hi is None:
        return None
    zones.setdefault("ambient", hi)
    return Environment(lo, hi, zones)


def _insulation_class(value: Any) -> int:
    if isinstance(value, str) and value.strip().upper() in _INSULATION_LETTERS:
        return _INSULATION_LETTERS[value.strip().upper()]
    if isinstance(value, str) and value.strip().isdigit():
        value = int(value.strip())
    if isinstance(value, int) and not isinstance(value, bool) and value in tables.insulation_classes():
        return value
    raise ValueError(
        "an IEC 60085 thermal class: "
        + ", ".join(map(str, tables.insulation_classes()))
        + " or a letter Y A E B F H N R"
    )


def _coils(r: _Reader, raw: dict, env: Environment | None) -> dict[str, CoilType] | None:
    c = r.table(raw, "coils", "coils")
    if c is None:
        return None
    out: dict[str, CoilType] = {}
    for name, body in c.items():
        where = f"coils.{name}"
        if not isinstance(body, dict):
            r.problem(where, body, f"a [coils.{name}] table")
            continue
        r.unknown(body, KEYS["coil"], where)
        metal = r.text(body, "metal", where, default="copper", choices=sorted(tables.materials()))
        if "metal" not in body:
            r.assume(f"{where}.metal not given: copper")
        ins = r.value(body, "insulation_class", where, _insulation_class, expected="an IEC 60085 class")
        inductance = r.quantity(body, "inductance", where, "inductance", positive=True)
        turns = r.integer(body, "turns", where)
        r_ref = t_ref = None
        rsource = ""
        if "resistance" in body:
            rt = r.value(body, "resistance", where, parse_resistance_at)
            if rt is not None:
                r_ref, t_ref = rt
                if not r_ref > 0:
                    r.problem(f"{where}.resistance", body["resistance"], "a resistance greater than zero")
                    r_ref = None
                rsource = "resistance given in the drawing"
        elif metal is not None:
            mtl = r.quantity(body, "mean_turn_length", where, "length", positive=True)
            size = r.value(body, "wire_size", where, parse_cable_size, expected="a wire size")
            if "mean_turn_length" not in body or "wire_size" not in body:
                pass  # already reported
            if mtl is not None and size is not None and turns is not None:
                area = awg_area(int(size.nominal)) if size.system == "awg" else size.nominal * 1e-6
                rho = tables.material(metal)["rho20"]
                r_ref, t_ref = rho * turns * mtl / area, 20.0
                rsource = f"computed: rho20 x {turns} turns x {mtl:g} m / {size.label}"
        hot = None
        hot_src = ""
        if ins is not None:
            allowance = float(tables.insulation_classes()[ins]["allowance"])
            if "hot_temperature" in body:
                hot = r.temperature(body, "hot_temperature", where)
                hot_src = "given in the drawing"
            else:
                hot = ins - allowance
                hot_src = f"class {ins} limit less {allowance:g} K hot-spot allowance (not given)"
                if "thermal_resistance" not in body:  # with a thermal model the hot corner computes it
                    r.assume(
                        f"{where}.hot_temperature not given: the hot corner runs the winding at {hot:g} °C ({hot_src})"
                    )
        thermal = _coil_thermal(r, body, where, metal, env)
        magnetic = _coil_magnetic(r, body, where)
        if None in (metal, ins, inductance, turns, r_ref, t_ref, hot) or thermal is None or magnetic is False:
            continue
        thermal["magnetic"] = magnetic
        out[name] = CoilType(
            name,
            metal,
            float(tables.material(metal)["alpha20"]),
            r_ref,
            t_ref,
            inductance,
            turns,
            ins,
            float(tables.insulation_classes()[ins]["allowance"]),
            hot,
            hot_src,
            rsource,
            **thermal,
        )
    if not c:
        r.problem("coils", _MISSING, "at least one [coils.NAME] table")
    return out


def _coil_thermal(r: _Reader, body: dict, where: str, metal: str | None, env: Environment | None) -> dict | None:
    """The winding's lumped thermal model (all optional): thermal resistance to its surroundings,
    standing and moving, and its heat capacity (given, or conductor mass x c + a share of the iron)."""
    out: dict = {}
    rth = r.quantity(body, "thermal_resistance", where, "thermal_resistance", default=None, positive=True)
    rthm = r.quantity(body, "thermal_resistance_moving", where, "thermal_resistance", default=None, positive=True)
    cap = r.quantity(body, "heat_capacity", where, "heat_capacity", default=None, positive=True)
    mc = r.quantity(body, "conductor_mass", where, "mass", default=None, positive=True)
    mi = r.quantity(body, "iron_mass", where, "mass", default=0.0, nonnegative=True)
    share = r.value(body, "iron_share", where, parse_dimensionless, default=None)
    src = ""
    if cap is not None:
        src = "heat capacity given in the drawing"
        if "conductor_mass" in body:
            r.problem(f"{where}.conductor_mass", body["conductor_mass"], "either heat_capacity or the masses, not both")
    elif mc is not None and metal is not None and mi is not None:
        c_metal = float(tables.material(metal)["specific_heat"])
        c_iron = float(tables.shipped("materials.toml")["table"]["iron_specific_heat"])
        if share is None:
            share = 0.5 if mi else 0.0
            if mi:
                r.assume(f"{where}.iron_share not given: half the iron's heat capacity counts (common practice)")
        cap = mc * c_metal + share * mi * c_iron
        src = f"{mc:g} kg {metal} x {c_metal:g} J/(kg K) + {share:.0%} of {mi:g} kg iron x {c_iron:g} J/(kg K)"
    if rthm is not None and rth is None:
        r.problem(f"{where}.thermal_resistance_moving", body["thermal_resistance_moving"], "thermal_resistance too")
    zone_name, zt = "ambient", env.ambient_max if env else 40.0
    if "zone" in body and env is not None:
        zone_name, zt = _zone(r, body, where, env)
        if zone_name is None:
            return None
    out.update(
        thermal_resistance=rth,
        thermal_resistance_moving=rthm,
        heat_capacity=cap,
        heat_capacity_source=src,
        zone=zone_name,
        zone_temperature=zt,
    )
    return out


_MAGNETIC_KEYS = ("pole_area", "gaps", "gap_length", "iron_length", "iron_area", "bh_curve")


def _coil_magnetic(r: _Reader, body: dict, where: str):
    """The coil's pole circuit: None when not given, False when wrong, else a MagneticSpec."""
    if not any(k in body for k in _MAGNETIC_KEYS):
        return None
    area = r.quantity(body, "pole_area", where, "area", positive=True)
    gap = r.quantity(body, "gap_length", where, "length", positive=True)
    gaps = r.integer(body, "gaps", where, default=2)
    il = r.quantity(body, "iron_length", where, "length", positive=True)
    ia = r.quantity(body, "iron_area", where, "area", default=None, positive=True)
    if ia is None and "iron_area" not in body:
        ia = area
        if area is not None:
            r.assume(f"{where}.iron_area not given: the iron path has the pole-face area")
    name = body.get("bh_curve", "steel-1010")
    if "bh_curve" not in body:
        r.assume(f"{where}.bh_curve not given: the shipped steel-1010 curve")
    curve = None
    if isinstance(name, str) and name.endswith(".toml"):
        try:
            curve = tables.user_bh_curve((r.base_dir / name).resolve())
        except DataError as exc:
            for p in exc.problems:
                r.problem(f"{where}.bh_curve ({exc.source}) {p.where}", p.found, p.expected)
            return False
    elif isinstance(name, str) and name in tables.bh_curve_names():
        curve = tables.bh_curve(name)
    else:
        r.problem(
            f"{where}.bh_curve", name, "a shipped curve (" + ", ".join(tables.bh_curve_names()) + ") or a .toml table"
        )
        return False
    if None in (area, gap, gaps, il, ia):
        return False
    from .schema import MagneticSpec

    return MagneticSpec(area, gaps, gap, il, ia, curve.name, tuple(curve.h), tuple(curve.b), curve_source(curve.name))


def curve_source(name: str) -> str:
    return next(
        (row["status"] for row in tables.shipped("bh_curves.toml")["table"]["rows"] if row["name"] == name),
        "the drawing's own B-H table",
    )


def _retarder(r: _Reader, raw: dict):
    from .schema import ACComparison, Retarder

    rt = r.table(raw, "retarder", "retarder", required=False) or {}
    r.unknown(rt, KEYS["retarder"], "retarder")
    torque = r.quantity(rt, "rated_torque", "retarder", "torque", default=None, positive=True)
    cur = r.quantity(rt, "rated_current", "retarder", "current", default=None, positive=True)
    if (torque is None) != (cur is None) and ("rated_torque" in rt or "rated_current" in rt):
        r.problem("retarder", _MISSING, "rated_torque and rated_current together")
    ws = r.quantity(rt, "critical_speed", "retarder", "angular_speed", default=None, positive=True)
    ratio = r.value(rt, "min_braking_ratio", "retarder", parse_dimensionless, default=None)
    ac = r.table(raw, "ac_comparison", "ac_comparison", required=False)
    acc = None
    if ac is not None:
        r.unknown(ac, KEYS["ac_comparison"], "ac_comparison")
        v = r.quantity(ac, "voltage", "ac_comparison", "voltage", positive=True)
        f = r.quantity(ac, "frequency", "ac_comparison", "frequency", positive=True)
        if v is not None and f is not None:
            acc = ACComparison(v, f)
    return Retarder(torque, cur, ws, ratio), acc


def _zone(r: _Reader, e: dict, where: str, env: Environment | None) -> tuple[str | None, float | None]:
    if env is None:
        return None, None
    if "zone" not in e:
        r.assume(f"{where}.zone not given: placed at the highest ambient ({env.ambient_max:g} °C)")
        return "ambient", env.ambient_max
    name = e["zone"]
    if not isinstance(name, str) or name not in env.zones:
        r.problem(
            f"{where}.zone",
            name,
            f"one of the zones {', '.join(sorted(env.zones))}{_suggest(str(name), set(env.zones))}",
        )
        return None, None
    return name, env.zones[name]


def _conductor(r: _Reader, e: dict, where: str, size, default_mm2: str):
    """Resolve a cable size in its conductor table: (area, r20 per metre, source) or None."""
    name = e.get("conductor_table", default_mm2 if size.system == "mm2" else tables.DEFAULT_AWG_TABLE)
    key = f"{where}.conductor_table" if "conductor_table" in e else where
    try:
        if isinstance(name, str) and name.endswith(".toml"):
            table = tables.user_conductor_table((r.base_dir / name).resolve())
        elif name in tables.conductor_table_names():
            table = tables.conductor_table(name)
        else:
            r.problem(
                key,
                name,
                "a shipped conductor table ("
                + ", ".join(tables.conductor_table_names())
                + ") or a path to a .toml table",
            )
            return None
    except DataError as exc:
        for p in exc.problems:
            r.problem(f"{key} ({exc.source}) {p.where}", p.found, p.expected)
        return None
    if table.size_system != size.system:
        r.problem(f"{where}.size", e["size"], f"a {table.size_system} size for table {table.name}")
        return None
    row = table.rows.get(float(size.nominal))
    if row is None:
        r.problem(f"{where}.size", e["size"], f"a size listed in {table.title}: {', '.join(table.sizes())}")
        return None
    return row.area, row.r20_per_m, f"{table.standard} [{row.status}]", table.material


def _cable_diameters(r: _Reader, e: dict, where: str, size, ins: str | None) -> dict:
    """Conductor and outside diameter for the heat balance: the drawing's outer_diameter, or the
    shipped ISO 6722 dimensions (from memory) by size and wall."""
    wall = e.get("wall", None)
    if wall is not None and wall not in ("thin", "thick"):
        r.problem(f"{where}.wall", wall, '"thin" or "thick"')
        wall = None
    od = r.quantity(e, "outer_diameter", where, "length", default=None, positive=True)
    if size is None:
        return {}
    row = tables.cable_dimensions().get(float(size.nominal)) if size.system == "mm2" else None
    if size.system == "awg":
        d = awg_area(int(size.nominal)) ** 0.5 * (4 / math.pi) ** 0.5 * 1.10  # stranded: ~10 % over solid (CP)
    elif row is not None:
        d = row["conductor"] * 1e-3
    else:
        d = math.sqrt(4 * size.nominal * 1e-6 / math.pi) * 1.10
    if od is not None:
        if od <= d:
            r.problem(f"{where}.outer_diameter", e["outer_diameter"], f"more than the conductor's {d * 1e3:.2f} mm")
            return {}
        return {"conductor_diameter": d, "outer_diameter": od, "diameter_source": "outer diameter given in the drawing"}
    if row is None:
        return {
            "conductor_diameter": d,
            "outer_diameter": None,
            "diameter_source": "no outer diameter known for this size",
        }
    w = wall or "thin"
    return {
        "conductor_diameter": d,
        "outer_diameter": row[w] * 1e-3,
        "diameter_source": f"ISO 6722 {w}-wall dimensions ({row['status']})",
    }


def _cable_fields(r: _Reader, e: dict, where: str, env, default_mm2: str) -> dict | None:
    size = r.value(e, "size", where, parse_cable_size, expected="a conductor size")
    length = r.quantity(e, "length", where, "length", positive=True)
    ins = r.text(e, "insulation", where, choices=sorted(tables.cable_classes()))
    zone, zt = _zone(r, e, where, env)
    bundle = r.integer(e, "bundle", where, default=1)
    sheathed = e.get("sheathed", False)
    if not isinstance(sheathed, bool):
        r.problem(f"{where}.sheathed", sheathed, "true or false")
    cond = _conductor(r, e, where, size, default_mm2) if size is not None else None
    if "material" in e and cond is not None and e["material"] != cond[3]:
        r.problem(f"{where}.material", e["material"], f"{cond[3]}, the metal of the conductor table used")
    if None in (size, length, ins, zone, zt, bundle, cond):
        return None
    area, r20, src, metal = cond
    dia = _cable_diameters(r, e, where, size, ins)
    return dict(
        size_label=size.label,
        area=area,
        awg=int(size.nominal) if size.system == "awg" else None,
        length=length,
        r20_per_m=r20,
        r20_source=src,
        alpha20=float(tables.material(metal)["alpha20"]),
        material=metal,
        insulation_class=ins,
        class_max=tables.cable_classes()[ins],
        zone=zone,
        zone_temperature=zt,
        bundle=bundle,
        sheathed=bool(sheathed),
        **dia,
    )


@dataclass(frozen=True)
class _Link:
    """The two ends of a harness entry, kept even when its other values are wrong, so that one bad
    value does not make its neighbours look unconnected."""

    id: str
    kind: str | None
    a: str
    b: str
    where: str


def _harness(r, raw, env, coils, default_mm2, supply, links: list[_Link]) -> list[Element] | None:
    h = raw.get("harness", _MISSING)
    if h is _MISSING or not isinstance(h, list) or not h:
        r.problem("harness", _MISSING if h is _MISSING else h, "one or more [[harness]] elements")
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
            links.append(_Link(eid or f"#{i}", kind, a, b, where))
        if kind is None:
            continue
        r.unknown(e, ELEMENT_KEYS[kind], where)
        common = dict(id=eid, kind=kind, a=a, b=b, where=where)
        el = None
        if kind == "cable" or (kind == "ground" and "resistance" not in e):
            f = _cable_fields(r, e, where, env, default_mm2)
            role = (
                "return" if kind == "ground" else r.text(e, "role", where, default="feed", choices=["feed", "return"])
            )
            if f is not None and role is not None:
                el = Cable(**common, **f, role=role)
        elif kind in ("ground", "joint", "busbar"):
            res = r.quantity(e, "resistance", where, "resistance", nonnegative=True)
            if res is not None:
                el = Resistor(**common, resistance=res)
        elif kind == "fuse":
            el = _fuse(r, e, where, env, common)
        elif kind == "relay":
            el = _relay(r, e, where, env, common, system)
        elif kind == "stage":
            cname = r.text(e, "coil", where)
            count = r.integer(e, "count", where, default=1)
            conn = r.text(e, "connection", where, default="series", choices=["series", "parallel"])
            if count is not None and count > 1 and "connection" not in e:
                r.problem(f"{where}.connection", _MISSING, f'"series" or "parallel" for {count} coils')
            coil = None
            if cname is not None and coils is not None:
                coil = coils.get(cname)
                if coil is None and cname not in (raw.get("coils") or {}):
                    r.problem(
                        f"{where}.coil",
                        cname,
                        f"one of the coil types {', '.join(sorted(coils)) or '(none)'}{_suggest(cname, set(coils))}",
                    )
            sup = _suppression(r, e, where)
            if None not in (coil, count, conn, sup):
                el = Stage(**common, coil=coil, count=count, connection=conn, suppression=sup)
        if el is not None and None not in (eid, a, b):
            out.append(el)
    if not any(isinstance(e, Stage) for e in out) and not r.problems:
        r.problem("harness", _MISSING, 'at least one element of kind = "stage"')
    return out


def _fuse(r, e, where, env, common) -> Fuse | None:
    ftype = r.text(e, "type", where, choices=sorted(tables.fuse_types()))
    rating = r.quantity(e, "rating", where, "current", positive=True)
    zone, zt = _zone(r, e, where, env)
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
        res = 0.0
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
    )


def _gates(r: _Reader, e: dict, where: str, ftype: str | None):
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
            if m <= 1 or tmin > tmax:
                r.problem(gw, g, "a multiple above 1 and min <= max")
            else:
                pts.append((m, tmin, tmax))
    pts.sort()
    return tuple(pts), "time-current gates given in the drawing"


def _relay(r, e, where, env, common, system) -> Relay | None:
    r12 = r.quantity(e, "rating_12v", where, "current", default=None, positive=True)
    r24 = r.quantity(e, "rating_24v", where, "current", default=None, positive=True)
    if "rating_12v" not in e and "rating_24v" not in e:
        r.problem(where, _MISSING, "a contact rating: rating_12v and/or rating_24v")
    zone, zt = _zone(r, e, where, env)
    ra = r.temperature(e, "rated_ambient", where, default=None)
    if ra is None and "rated_ambient" not in e:
        ra = 23.0
        r.assume(
            f"{where}.rated_ambient not given: the contact ratings are taken as stated at 23 °C "
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
        res = 0.0
        r.assume(f"{where}.resistance not given: the contact is taken as 0 ohm")
    cats: tuple[str, ...] = ()
    known = [row["category"] for row in tables.utilization_categories()]
    if "categories" in e:
        c = e["categories"]
        if not isinstance(c, list) or not all(isinstance(x, str) and x in known for x in c):
            r.problem(f"{where}.categories", c, "a list of rated categories from " + ", ".join(known))
        else:
            cats = tuple(c)
    ib = r.value(e, "inductive_break", where, lambda t: parse_pair(t, "current", "time"), default=None)
    coil = _relay_coil(r, e, where, ra if ra is not None else 23.0)
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
    )


def _relay_coil(r: _Reader, e: dict, where: str, t_ref_default: float):
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
    rise = r.quantity(c, "rise", cw, "temperature_difference", default=None, nonnegative=True)
    if rise is None and "rise" not in c:
        rise = 0.0
        r.assume(f"{cw}.rise not given: the relay coil is taken at its zone temperature (no self-heating)")
    if None in (v, rt, op, feed, rise):
        return False
    return RelayCoil(v, rt[0], rt[1], op, feed, rise)


def _fraction_at(text: Any) -> tuple[float, float]:
    if not isinstance(text, str) or "@" not in text:
        raise QuantityError('a fraction at a temperature, e.g. "67 % @ 85 degC"')
    left, right = text.split("@", 1)
    f = parse_dimensionless(left.strip())
    if not 0 < f <= 1.5:
        raise QuantityError('a fraction between 0 and 150 %, e.g. "67 % @ 85 degC"')
    return f, parse_temperature(right)


def _suppression(r: _Reader, e: dict, where: str) -> Suppression | None:
    if "suppression" not in e:
        r.assume(f"{where}.suppression not given: the stage has none (its contact arcs at every break)")
        return Suppression("none", 0.0, 0.0, None, None, None)
    sp = e["suppression"]
    sw = f"{where}.suppression"
    if not isinstance(sp, dict):
        r.problem(sw, sp, 'a table such as { kind = "diode_zener", zener_voltage = "24 V" }')
        return None
    r.unknown(sp, KEYS["suppression"], sw)
    kind = r.text(sp, "kind", sw, choices=SUPPRESSION_KINDS)
    if kind is None:
        return None
    vf = 0.0
    if kind in ("diode", "diode_zener", "diode_resistor"):
        vf = r.quantity(sp, "forward_voltage", sw, "voltage", default=None, positive=True)
        if vf is None and "forward_voltage" not in sp:
            vf = DEFAULT_FORWARD_VOLTAGE
            r.assume(f"{sw}.forward_voltage not given: {vf:g} V (common practice for a power diode)")
    need = {"diode_zener": "zener_voltage", "tvs": "clamp_voltage", "varistor": "clamp_voltage"}.get(kind)
    extra = r.quantity(sp, need, sw, "voltage", positive=True) if need else 0.0
    rs = r.quantity(sp, "resistance", sw, "resistance", positive=True) if kind == "diode_resistor" else 0.0
    for key in ("zener_voltage", "clamp_voltage", "resistance"):
        if key in sp and key != need and not (key == "resistance" and kind == "diode_resistor"):
            r.problem(f"{sw}.{key}", sp[key], f"no {key} for kind {kind}")
    peak = r.quantity(sp, "peak_current", sw, "current", default=None, positive=True)
    vr = r.quantity(sp, "reverse_voltage", sw, "voltage", default=None, positive=True)
    en = r.quantity(sp, "energy_rating", sw, "energy", default=None, positive=True)
    if kind == "none":
        return Suppression("none", 0.0, 0.0, None, None, None)
    if None in (vf, extra, rs):
        return None
    return Suppression(kind, vf + extra, rs, peak, vr, en)


def _switching(r: _Reader, raw: dict, stage_ids: set[str]) -> Switching | None:
    sw = r.table(raw, "switching", "switching", required=False) or {}
    r.unknown(sw, KEYS["switching"], "switching")
    duration = r.quantity(sw, "duration", "switching", "time", default=3.0, positive=True)
    off_at = r.quantity(sw, "off_at", "switching", "time", default=None, positive=True)
    rel = r.quantity(sw, "release_limit", "switching", "time", default=None, positive=True)
    frac = r.value(sw, "release_fraction", "switching", parse_dimensionless, default=0.05)
    cycles = r.integer(sw, "cycles", "switching", default=100_000)
    positions = []
    raw_pos = sw.get("positions", [])
    if not isinstance(raw_pos, list):
        r.problem("switching.positions", raw_pos, "a list of [[switching.positions]] tables")
        raw_pos = []
    last = -1.0
    for k, p in enumerate(raw_pos):
        pw = f"switching.positions[{k}]"
        if not isinstance(p, dict):
            r.problem(pw, p, "a table with name, at and stages")
            continue
        r.unknown(p, KEYS["position"], pw)
        name = r.text(p, "name", pw, default=str(k + 1))
        at = r.value(p, "at", pw, lambda t: parse_quantity(t, "time"))
        st = p.get("stages", None)
        if not isinstance(st, list) or not all(isinstance(x, str) for x in st):
            r.problem(f"{pw}.stages", st, "a list of stage ids (empty for off)")
            continue
        bad = [x for x in st if x not in stage_ids]
        if bad:
            r.problem(f"{pw}.stages", bad, "stage ids from the harness: " + ", ".join(sorted(stage_ids)))
        if at is not None:
            if at < 0 or at <= last:
                r.problem(f"{pw}.at", p["at"], "a time of at least 0 s, later than the position before")
            last = at
            positions.append(Position(name, at, tuple(st)))
    if None in (duration, frac, cycles):
        return None
    off = off_at if off_at is not None else duration / 2
    if not off < duration:
        r.problem("switching.off_at", sw.get("off_at"), "a time before switching.duration")
        return None
    if not 0 < frac < 1:
        r.problem("switching.release_fraction", sw.get("release_fraction"), "a fraction between 0 and 1")
        return None
    return Switching(tuple(positions), duration, off, rel, frac, cycles)


def _step_stages(spec: Any, stage_ids: list[str], switching: Switching | None) -> tuple[str, ...]:
    """A duty step's stages: "all", "none", a switching position's name, or a list of stage ids."""
    if spec == "all":
        return tuple(stage_ids)
    if spec in ("none", "off"):
        return ()
    if isinstance(spec, str) and switching is not None:
        for p in switching.positions:
            if p.name == spec:
                return p.stages
    if isinstance(spec, list) and all(isinstance(x, str) and x in stage_ids for x in spec):
        return tuple(spec)
    names = [p.name for p in switching.positions] if switching else []
    raise ValueError(
        '"all", "none", a switching position (' + ", ".join(names or ["none defined"]) + ") or a list of stage ids"
    )


def _duty(r: _Reader, raw: dict, stage_ids: list[str], switching: Switching | None) -> Duty | None:
    """The duty profile: the drawing's own steps, or a shipped profile (default: endurance)."""
    du = r.table(raw, "duty", "duty", required=False) or {}
    r.unknown(du, KEYS["duty"], "duty")
    soc = r.value(du, "state_of_charge", "duty", parse_dimensionless, default=None)
    if soc is None and "state_of_charge" not in du:
        soc = 1.0
        r.assume("duty.state_of_charge not given: the battery starts the duty fully charged")
    min_soc = r.value(du, "min_state_of_charge", "duty", parse_dimensionless, default=None)
    if min_soc is None and "min_state_of_charge" not in du:
        min_soc = 0.5
        r.assume(
            "duty.min_state_of_charge not given: 50 % (common practice: a lead-acid battery kept above half "
            "charge can still start the engine)"
        )
    profiles = tables.duty_profiles()
    steps: list[DutyStep] = []
    if "steps" in du and "profile" in du:
        r.problem("duty.profile", du["profile"], "either a shipped profile or steps, not both")
        return None
    if "steps" in du:
        name, desc = "drawing", "duty profile given in the drawing"
        raw_steps = du["steps"]
        if not isinstance(raw_steps, list) or not raw_steps:
            r.problem("duty.steps", raw_steps, "a list of [[duty.steps]] tables")
            return None
        for k, st in enumerate(raw_steps):
            w = f"duty.steps[{k}]"
            if not isinstance(st, dict):
                r.problem(w, st, "a table with duration, stages, engine")
                continue
            r.unknown(st, KEYS["duty_step"], w)
            dur = r.quantity(st, "duration", w, "time", positive=True)
            stg = r.value(st, "stages", w, lambda x: _step_stages(x, stage_ids, switching))
            eng = r.text(st, "engine", w, default="driving", choices=["idle", "driving"])
            mov = st.get("moving", True)
            if not isinstance(mov, bool):
                r.problem(f"{w}.moving", mov, "true or false")
                continue
            if None not in (dur, stg, eng):
                steps.append(DutyStep(dur, stg, eng, mov, f"step {k + 1}"))
    else:
        name = du.get("profile", "endurance")
        if "profile" not in du:
            r.assume("duty.profile not given: the shipped endurance descent (about 12 min of full retardation)")
        if name not in profiles:
            r.problem("duty.profile", name, f"one of the shipped profiles {', '.join(profiles)} (or [[duty.steps]])")
            return None
        row = profiles[name]
        desc = f"{row['description']} ({row['status']})"
        for k, (dur, stg, eng, mov) in enumerate(row["steps"]):
            steps.append(
                DutyStep(
                    parse_quantity(dur, "time"), _step_stages(stg, stage_ids, switching), eng, mov, f"step {k + 1}"
                )
            )
    if soc is None or min_soc is None:
        return None
    if not 0 <= min_soc < soc <= 1:
        r.problem(
            "duty.state_of_charge",
            du.get("state_of_charge", soc),
            "0 <= min_state_of_charge < state_of_charge <= 100 %",
        )
        return None
    return Duty(name, desc, tuple(steps), soc, min_soc)


def _corners(r: _Reader, raw: dict, supply: Supply | None, env: Environment | None) -> CornerSettings | None:
    c = r.table(raw, "corners", "corners", required=False) or {}
    r.unknown(c, KEYS["corners"], "corners")
    cold = r.table(c, "cold", "corners.cold", required=False) or {}
    hot = r.table(c, "hot", "corners.hot", required=False) or {}
    lim = r.table(c, "limit", "corners.limit", required=False) or {}
    r.unknown(cold, KEYS["corners.cold"], "corners.cold")
    r.unknown(hot, KEYS["corners.hot"], "corners.hot")
    r.unknown(lim, KEYS["corners.limit"], "corners.limit")
    if supply is None or env is None:
        return None
    alt = supply.alternator
    default_cold = alt.setpoint + alt.tolerance if alt else supply.battery.emf
    cold_bus = r.quantity(cold, "bus_voltage", "corners.cold", "voltage", default=default_cold, positive=True)
    cold_amb = r.temperature(cold, "ambient", "corners.cold", default=env.ambient_min)
    hot_emf = r.quantity(hot, "battery_emf", "corners.hot", "voltage", default=supply.battery.emf, positive=True)
    hot_alt = r.text(
        hot, "alternator", "corners.hot", default="idle" if alt else "off", choices=["idle", "rated", "off"]
    )
    if hot_alt in ("idle", "rated") and alt is None:
        r.problem("corners.hot.alternator", hot_alt, '"off": the drawing has no alternator')
    limit_bus = r.quantity(lim, "bus_voltage", "corners.limit", "voltage", default=supply.v_max, positive=True)
    if None in (cold_bus, cold_amb, hot_emf, hot_alt, limit_bus):
        return None
    return CornerSettings(cold_amb, cold_bus, hot_emf, hot_alt, limit_bus)


def _limits(r: _Reader, raw: dict) -> Limits | None:
    lim = r.table(raw, "limits", "limits", required=False) or {}
    r.unknown(lim, KEYS["limits"], "limits")
    p = r.value(lim, "voltage_drop_pass", "limits", parse_dimensionless, default=0.03)
    w = r.value(lim, "voltage_drop_warn", "limits", parse_dimensionless, default=0.10)
    if p is None or w is None:
        return None
    if not 0 < p <= w < 1:
        r.problem("limits.voltage_drop_pass", lim.get("voltage_drop_pass", p), "0 < pass limit <= warn limit < 100 %")
        return None
    return Limits(p, w)


# ---------------------------------------------------------------- topology


def _topology(r: _Reader, supply: Supply, links: list[_Link], elements: list[Element]) -> None:
    """Nodes that connect to nothing, stages with no feed or no return, loops of 0-ohm parts."""
    ends: dict[str, list[str]] = defaultdict(list)
    for e in links:
        ends[e.a].append(f"{e.where}.from")
        ends[e.b].append(f"{e.where}.to")
    pos, neg = supply.battery.node, supply.negative_node
    supply_nodes = {
        pos: "supply.battery.node",
        neg: "supply.negative",
        supply.base_load_node: "supply.base_load_node",
        supply.chassis_node: "supply.chassis",
    }
    if supply.alternator is not None:
        supply_nodes[supply.alternator.node] = "supply.alternator.node"
    for node, key in supply_nodes.items():
        if node not in ends:
            r.problem(key, node, "a node that a harness element connects to")
    for node, refs in ends.items():
        if len(refs) == 1 and node not in supply_nodes:
            r.problem(refs[0], node, f'a node that something else connects to (nothing else meets at "{node}")')

    # a path through another load is neither feed nor return
    net = Graph((e.a, e.b, e.id) for e in links if e.kind != "stage")
    for s in links:
        if s.kind == "stage":
            if not net.reaches(s.b, neg, avoid_nodes={pos}):
                r.problem(f"{s.where}.to", s.b, f'a return path from the stage to the negative node "{neg}"')
            if not net.reaches(s.a, pos, avoid_nodes={neg}):
                r.problem(f"{s.where}.from", s.a, f'a feed path from the stage to the battery node "{pos}"')

    # A loop made only of zero-ohm parts has no defined current split.
    zero = UnionFind()
    for e in elements:
        if getattr(e, "resistance", None) == 0.0 and not zero.union(e.a, e.b):
            r.problem(e.where, "0 ohm", "a resistance: this part closes a loop of zero-ohm parts (give resistances)")
