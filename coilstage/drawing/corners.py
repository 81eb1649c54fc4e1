"""The ``[corners]`` section (what the cold, hot and limit operating corners assume) and ``[limits]``
(voltage-drop limits).
"""

from __future__ import annotations

from coilstage.units import (
    parse_dimensionless,
)

from .defaults import default
from .reader import Reader
from .schema import (
    CornerSettings,
    Environment,
    Limits,
    Supply,
)

#: key path -> the keys allowed there
KEYS = {
    "corners": {"cold", "hot", "limit"},
    "corners.cold": {"ambient", "bus_voltage"},
    "corners.hot": {"alternator", "battery_emf"},
    "corners.limit": {"bus_voltage"},
    "limits": {"max_duty", "max_elements", "max_stages", "voltage_drop_pass", "voltage_drop_warn"},
}


def read_corners(r: Reader, raw: dict, supply: Supply | None, env: Environment | None) -> CornerSettings | None:
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


def read_limits(r: Reader, raw: dict) -> Limits | None:
    lim = r.table(raw, "limits", "limits", required=False) or {}
    r.unknown(lim, KEYS["limits"], "limits")
    p = r.value(lim, "voltage_drop_pass", "limits", parse_dimensionless, default=default("limits.voltage_drop_pass"))
    w = r.value(lim, "voltage_drop_warn", "limits", parse_dimensionless, default=default("limits.voltage_drop_warn"))
    ms = r.integer(lim, "max_stages", "limits", default=default("limits.max_stages"), maximum=100_000)
    me = r.integer(lim, "max_elements", "limits", default=default("limits.max_elements"), maximum=1_000_000)
    md = r.quantity(lim, "max_duty", "limits", "time", default=default("limits.max_duty"), positive=True)
    if None in (p, w, ms, me, md):
        return None
    if not 0 < p <= w < 1:
        r.problem("limits.voltage_drop_pass", lim.get("voltage_drop_pass", p), "0 < pass limit <= warn limit < 100 %")
        return None
    return Limits(p, w, ms, me, md)
