"""The cable keys of a ``[[harness]]`` element of kind "cable" or "ground": size in its conductor table, length,
insulation class, bundle, and the diameters the heat balance needs.
"""

from __future__ import annotations

import math

from coilstage import tables
from coilstage.errors import DataError
from coilstage.physics.conductor import awg_area
from coilstage.units import (
    parse_cable_size,
)

from .defaults import default
from .environment import read_zone
from .reader import Reader
from .schema import Environment

CABLE_KEYS = {
    "size",
    "length",
    "insulation",
    "insulation_material",
    "zone",
    "bundle",
    "material",
    "conductor_table",
    "sheathed",
    "outer_diameter",
    "wall",
    "length_tolerance",  # read with the drawing's other tolerances (drawing/tolerances.py)
}


def _conductor(r: Reader, e: dict, where: str, size, default_mm2: str):
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


def _cable_diameters(r: Reader, e: dict, where: str, size) -> dict:
    """Conductor and outside diameter for the heat balance: the drawing's outer_diameter, or the
    shipped ISO 6722 dimensions (from memory) by size and wall."""
    wall = e.get("wall", None)
    if wall is not None and wall not in ("thin", "thick"):
        r.problem(f"{where}.wall", wall, '"thin" or "thick"')
        wall = None
    od = r.quantity(e, "outer_diameter", where, "length", default=None, positive=True)
    if size is None:
        return {}
    stranded = default("cable.stranded_diameter_factor")
    row = tables.cable_dimensions().get(float(size.nominal)) if size.system == "mm2" else None
    if size.system == "awg":
        d = awg_area(int(size.nominal)) ** 0.5 * (4 / math.pi) ** 0.5 * stranded
    elif row is not None:
        d = row["conductor"] * 1e-3
    else:
        d = math.sqrt(4 * size.nominal * 1e-6 / math.pi) * stranded
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
    w = wall or default("cable.wall")
    return {
        "conductor_diameter": d,
        "outer_diameter": row[w] * 1e-3,
        "diameter_source": f"ISO 6722 {w}-wall dimensions ({row['status']})",
    }


def read_cable_fields(r: Reader, e: dict, where: str, env: Environment | None, default_mm2: str) -> dict | None:
    size = r.value(e, "size", where, parse_cable_size, expected="a conductor size")
    length = r.quantity(e, "length", where, "length", positive=True)
    ins = r.text(e, "insulation", where, choices=sorted(tables.cable_classes()))
    zone, zt = read_zone(r, e, where, env)
    bundle = r.integer(e, "bundle", where, default=1)
    sheathed = e.get("sheathed", False)
    if not isinstance(sheathed, bool):
        r.problem(f"{where}.sheathed", sheathed, "true or false")
    cond = _conductor(r, e, where, size, default_mm2) if size is not None else None
    if "material" in e and cond is not None and e["material"] != cond[3]:
        r.problem(f"{where}.material", e["material"], f"{cond[3]}, the metal of the conductor table used")
    ins_mat = e.get("insulation_material", "")
    materials = [m["material"] for m in tables.shipped("insulation_materials.toml")["table"]["rows"]]
    if "insulation_material" in e and ins_mat not in materials:
        r.problem(f"{where}.insulation_material", ins_mat, "one of " + ", ".join(materials))
    if None in (size, length, ins, zone, zt, bundle, cond):
        return None
    area, r20, src, metal = cond
    dia = _cable_diameters(r, e, where, size)
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
        insulation_material=ins_mat if ins_mat in materials else "",
        **dia,
    )
