"""The ``[environment]`` section (ambient range, named zones) and the ``zone`` key of the parts placed in it."""

from __future__ import annotations

from coilstage.units import (
    parse_temperature,
)

from .reader import Reader, suggest
from .schema import (
    Environment,
)

#: key path -> the keys allowed there
KEYS = {
    "environment": {"ambient_max", "ambient_min", "rotor_zone_rise", "rotor_zone_time_constant", "zones"},
}


def read_environment(r: Reader, raw: dict) -> Environment | None:
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
    # the retarder's surroundings heated by its rotors (None: the shipped default, rotor_zone_defaults.toml)
    rise = r.difference(e, "rotor_zone_rise", "environment", default=None)
    tau = r.quantity(e, "rotor_zone_time_constant", "environment", "time", default=None, positive=True)
    if lo is None or hi is None:
        return None
    if (rise is None and "rotor_zone_rise" in e) or (tau is None and "rotor_zone_time_constant" in e):
        return None
    zones.setdefault("ambient", hi)
    return Environment(lo, hi, zones, rotor_zone_rise=rise, rotor_zone_time_constant=tau)


def read_zone(r: Reader, e: dict, where: str, env: Environment | None) -> tuple[str | None, float | None]:
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
            f"one of the zones {', '.join(sorted(env.zones))}{suggest(str(name), set(env.zones))}",
        )
        return None, None
    return name, env.zones[name]
