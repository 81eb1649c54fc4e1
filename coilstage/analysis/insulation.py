"""The short-circuit temperature a cable's insulation allows, from its material (or its ISO 6722
class's default material), read from ``data/insulation_materials.toml``."""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from typing import Any

from coilstage import tables
from coilstage.drawing.schema import Cable


@dataclass(frozen=True)
class ShortCircuitLimit:
    limit: float  # highest conductor temperature in a short circuit [°C]
    material: str  # key in the table
    name: str
    status: str  # the row's status (published / common practice ...)
    assumed: bool  # True: the class's default material, not stated on the cable


@cache
def _table() -> dict[str, Any]:
    return tables.shipped("insulation_materials.toml")["table"]


def short_circuit_limit(c: Cable) -> ShortCircuitLimit:
    """Short-circuit final temperature of cable ``c`` [°C]: its ``insulation_material``'s, or that of
    the ISO 6722 class's default material; the ``short_circuit_large`` value above ``large_above`` mm²."""
    t = _table()
    rows = {r["material"]: r for r in t["rows"]}
    assumed = not c.insulation_material
    key = dict(t["class_defaults"])[c.insulation_class] if assumed else c.insulation_material
    row = rows[key]
    limit = float(row["short_circuit"])
    if "short_circuit_large" in row and c.area * 1e6 > float(t["large_above"]):
        limit = float(row["short_circuit_large"])
    return ShortCircuitLimit(limit, key, row["name"], row["status"], assumed)
