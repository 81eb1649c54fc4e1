"""A ``[[harness]]`` element of kind "stage": its coil type, count, connection and suppression."""

from __future__ import annotations

from .defaults import default
from .reader import Reader
from .schema import (
    Suppression,
)

#: key path -> the keys allowed there
KEYS = {
    "suppression": {
        "clamp_voltage",
        "energy_rating",
        "forward_voltage",
        "kind",
        "peak_current",
        "resistance",
        "reverse_voltage",
        "zener_voltage",
    },
}

SUPPRESSION_KINDS = ["none", "diode", "diode_zener", "diode_resistor", "tvs", "varistor"]


def read_suppression(r: Reader, e: dict, where: str) -> Suppression | None:
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
            vf = default("suppression.forward_voltage")
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
