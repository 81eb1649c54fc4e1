"""The values the loader uses where a drawing leaves a key out: data, not code.

They live in ``coilstage/data/drawing_defaults.toml``, one row per key with its value, its source
and its status (published, common practice ...). :func:`default` returns the value as the loader
needs it (quantities as SI floats through the same parser as the drawing's own text).
"""

from __future__ import annotations

from functools import cache
from typing import Any

from coilstage import tables
from coilstage.units import parse_quantity, parse_temperature

#: key -> the dimension its quantity text is parsed in (others are used as written)
_DIMENSION = {
    "supply.alternator.tolerance": "voltage",
    "supply.base_load": "current",
    "fuse.resistance": "resistance",
    "relay.resistance": "resistance",
    "relay.coil.rise": "temperature_difference",
    "suppression.forward_voltage": "voltage",
    "switching.duration": "time",
    "limits.max_duty": "time",
}


@cache
def rows() -> dict[str, dict[str, Any]]:
    """key -> its row (value, source, status) as shipped."""
    return {row["key"]: row for row in tables.shipped("drawing_defaults.toml")["table"]["rows"]}


@cache
def default(key: str) -> Any:
    """The value used for ``key`` when the drawing leaves it out (SI float for a quantity, °C for a
    temperature)."""
    value = rows()[key]["value"]
    if key in _DIMENSION:
        return parse_quantity(value, _DIMENSION[key])
    if key in ("relay.rated_ambient", "joint.rated_ambient"):
        return parse_temperature(value)
    return value


def source(key: str) -> str:
    """Where the default of ``key`` comes from, and its status."""
    row = rows()[key]
    return f"{row['source']} ({row['status']})"
