"""The ``[coils.NAME]`` tables (resistance, inductance, insulation class, thermal model, pole circuit) and the
``[retarder]`` and ``[ac_comparison]`` sections that describe the machine those coils drive.
"""

from __future__ import annotations

from typing import Any

from coilstage import tables
from coilstage.errors import DataError
from coilstage.physics.conductor import awg_area
from coilstage.units import (
    parse_cable_size,
    parse_resistance_at,
)

from .defaults import default, rows
from .environment import read_zone
from .reader import MISSING, Reader
from .schema import (
    ACComparison,
    CoilType,
    Environment,
    MagneticSpec,
    Retarder,
)

#: key path -> the keys allowed there
KEYS = {
    "coil": {
        "bh_curve",
        "conductor_mass",
        "gap_length",
        "gaps",
        "heat_capacity",
        "hot_temperature",
        "inductance",
        "inductance_tolerance",
        "insulation_class",
        "iron_area",
        "iron_length",
        "iron_mass",
        "iron_share",
        "mean_turn_length",
        "metal",
        "pole_area",
        "resistance",
        "resistance_tolerance",
        "thermal_resistance",
        "thermal_resistance_moving",
        "turns",
        "wire_size",
        "zone",
    },
    "retarder": {"critical_speed", "min_braking_ratio", "rated_current", "rated_torque"},
    "ac_comparison": {"frequency", "voltage"},
}

_INSULATION_LETTERS = {"Y": 90, "A": 105, "E": 120, "B": 130, "F": 155, "H": 180, "N": 200, "R": 220}


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


def read_coils(r: Reader, raw: dict, env: Environment | None) -> dict[str, CoilType] | None:
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
        metal = r.text(body, "metal", where, default=default("coil.metal"), choices=sorted(tables.materials()))
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
                elif metal is not None:
                    # R(T) = R20 (1 + alpha20 (T - 20)) is zero at T0 = 20 - 1/alpha20 (IEC 60028 form):
                    # a reference at or below T0 would make every R(T) divide by zero or turn negative.
                    t_zero = 20.0 - 1.0 / float(tables.material(metal)["alpha20"])
                    if t_ref <= t_zero + 1.0:
                        r.problem(
                            f"{where}.resistance",
                            body["resistance"],
                            f"a reference temperature above {t_zero:.1f} degC ({metal}'s resistance would be zero)",
                        )
                        r_ref = None
                rsource = "resistance given in the drawing"
        elif metal is not None:
            mtl = r.quantity(body, "mean_turn_length", where, "length", positive=True)
            size = r.value(body, "wire_size", where, parse_cable_size, expected="a wire size")
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
        r.problem("coils", MISSING, "at least one [coils.NAME] table")
    return out


def _coil_thermal(r: Reader, body: dict, where: str, metal: str | None, env: Environment | None) -> dict | None:
    """The winding's lumped thermal model (all optional): thermal resistance to its surroundings,
    standing and moving, and its heat capacity (given, or conductor mass x c + a share of the iron)."""
    out: dict = {}
    rth = r.quantity(body, "thermal_resistance", where, "thermal_resistance", default=None, positive=True)
    rthm = r.quantity(body, "thermal_resistance_moving", where, "thermal_resistance", default=None, positive=True)
    cap = r.quantity(body, "heat_capacity", where, "heat_capacity", default=None, positive=True)
    mc = r.quantity(body, "conductor_mass", where, "mass", default=None, positive=True)
    mi = r.quantity(body, "iron_mass", where, "mass", default=0.0, nonnegative=True)
    share = r.share(body, "iron_share", where, default=None)
    src = ""
    if cap is not None:
        src = "heat capacity given in the drawing"
        if "conductor_mass" in body:
            r.problem(f"{where}.conductor_mass", body["conductor_mass"], "either heat_capacity or the masses, not both")
    elif mc is not None and metal is not None and mi is not None:
        c_metal = float(tables.material(metal)["specific_heat"])
        c_iron = float(tables.shipped("materials.toml")["table"]["iron_specific_heat"])
        if share is None:
            share = default("coil.iron_share") if mi else 0.0
            if mi:
                r.assume(f"{where}.iron_share not given: {rows()['coil.iron_share']['assumed']}")
        cap = mc * c_metal + share * mi * c_iron
        src = f"{mc:g} kg {metal} x {c_metal:g} J/(kg K) + {share:.0%} of {mi:g} kg iron x {c_iron:g} J/(kg K)"
    if rthm is not None and rth is None:
        r.problem(f"{where}.thermal_resistance_moving", body["thermal_resistance_moving"], "thermal_resistance too")
    if env is None:
        return None
    zone_name, zt = "ambient", env.ambient_max
    if "zone" in body:
        zone_name, zt = read_zone(r, body, where, env)
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


def _coil_magnetic(r: Reader, body: dict, where: str):
    """The coil's pole circuit: None when not given, False when wrong, else a MagneticSpec."""
    if not any(k in body for k in _MAGNETIC_KEYS):
        return None
    area = r.quantity(body, "pole_area", where, "area", positive=True)
    gap = r.quantity(body, "gap_length", where, "length", positive=True)
    gaps = r.integer(body, "gaps", where, default=default("coil.gaps"))
    il = r.quantity(body, "iron_length", where, "length", positive=True)
    ia = r.quantity(body, "iron_area", where, "area", default=None, positive=True)
    if ia is None and "iron_area" not in body:
        ia = area
        if area is not None:
            r.assume(f"{where}.iron_area not given: the iron path has the pole-face area")
    name = body.get("bh_curve", default("coil.bh_curve"))
    if "bh_curve" not in body:
        r.assume(f"{where}.bh_curve not given: the shipped {name} curve")
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
    return MagneticSpec(area, gaps, gap, il, ia, curve.name, tuple(curve.h), tuple(curve.b), curve_source(curve.name))


def curve_source(name: str) -> str:
    return next(
        (row["status"] for row in tables.shipped("bh_curves.toml")["table"]["rows"] if row["name"] == name),
        "the drawing's own B-H table",
    )


def read_retarder(r: Reader, raw: dict) -> tuple[Retarder, ACComparison | None]:
    rt = r.table(raw, "retarder", "retarder", required=False) or {}
    r.unknown(rt, KEYS["retarder"], "retarder")
    torque = r.quantity(rt, "rated_torque", "retarder", "torque", default=None, positive=True)
    cur = r.quantity(rt, "rated_current", "retarder", "current", default=None, positive=True)
    if (torque is None) != (cur is None) and ("rated_torque" in rt or "rated_current" in rt):
        r.problem("retarder", MISSING, "rated_torque and rated_current together")
    ws = r.quantity(rt, "critical_speed", "retarder", "angular_speed", default=None, positive=True)
    ratio = r.share(rt, "min_braking_ratio", "retarder", default=None, low_open=True)
    ac = r.table(raw, "ac_comparison", "ac_comparison", required=False)
    acc = None
    if ac is not None:
        r.unknown(ac, KEYS["ac_comparison"], "ac_comparison")
        v = r.quantity(ac, "voltage", "ac_comparison", "voltage", positive=True)
        f = r.quantity(ac, "frequency", "ac_comparison", "frequency", positive=True)
        if v is not None and f is not None:
            acc = ACComparison(v, f)
    return Retarder(torque, cur, ws, ratio), acc
