"""Formatting SI floats for people (no pint needed on the way out).

A figure that is missing prints as "—"; one that the guard (:mod:`coilstage.report.safe`) found not
finite (a quantity whose value is None) prints as "n/a (not finite)", never as nan or inf.
"""

from __future__ import annotations

import math
from typing import Any

NOT_FINITE = "n/a (not finite)"

_PREFIX = [(1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ")]
_DISPLAY = {"ohm": "Ω", "degC": "°C", "1": "", "%": "%", "A^2s": "A²s", "A*h": "A·h", "N*m": "N·m"}


def si(value: float | None, unit: str, digits: int = 3) -> str:
    """``si(0.0009, "ohm") == '0.9 mΩ'``, three significant figures; a fraction (unit "1") as a
    percentage, a duration in ms/s/min/h (:func:`duration`), temperatures in °C with one decimal."""
    if value is None:
        return "—"
    if not math.isfinite(value):
        return NOT_FINITE
    if unit == "1":
        return percent(value)
    if unit == "s":
        return duration(value)
    u = _DISPLAY.get(unit, unit)
    if abs(value) < 1e-12:
        return f"0 {u}".strip()
    if unit in ("degC", "%", "A*h"):
        return f"{value:.1f} {u}".strip()
    mag = abs(value)
    for scale, p in _PREFIX:
        if mag >= scale or scale == _PREFIX[-1][0]:
            x = value / scale
            return f"{x:.{max(digits - 1 - math.floor(math.log10(abs(x))) if x else 0, 0)}f} {p}{u}"
    return f"{value:g} {u}"


def percent(fraction: float | None, places: int = 1) -> str:
    """A fraction or ratio as a percentage: ``percent(0.031) == '3.1 %'``."""
    if fraction is None:
        return "—"
    if not math.isfinite(fraction):
        return NOT_FINITE
    return f"{fraction * 100:.{places}f} %"


def duration(seconds: float | None) -> str:
    """A duration [s] in ms, s, min or h, whichever a person would say (never "1.80 ks")."""
    if seconds is None:
        return "—"
    if not math.isfinite(seconds):
        return "never"
    s = abs(seconds)
    if s == 0:
        return "0 s"
    if s < 1:
        return f"{seconds * 1e3:.3g} ms"
    if s < 120:
        return f"{seconds:.3g} s"
    if s < 2 * 3600:
        return f"{seconds / 60:.1f} min"
    return f"{seconds / 3600:.2f} h"


def turns(d: dict[str, Any] | None) -> str:
    """Ampere-turns (the document carries them in A) as "A-turns"."""
    if d is None:
        return "—"
    if d["value"] is None:
        return NOT_FINITE
    return f"{d['value']:.0f} A-turns"


def margin_text(v: dict[str, Any]) -> str:
    """A verdict's headroom: in K for a temperature (limit − value), else as a percentage of the limit."""
    m = v.get("margin")
    val, lim = v.get("value"), v.get("limit")
    if (
        val is not None
        and lim is not None
        and val.get("unit") == "degC"
        and val.get("value") is not None
        and lim.get("value") is not None
    ):
        return f"{lim['value'] - val['value']:+.1f} K"
    if m is None:
        return "—"
    return f"{m * 100:+.0f} %" if math.isfinite(m) else NOT_FINITE


def fixed(value: float | None, unit: str, places: int = 1) -> str:
    """``value`` with ``places`` decimals and its unit's symbol."""
    if value is None:
        return "—"
    if not math.isfinite(value):
        return NOT_FINITE
    return f"{value:.{places}f} {_DISPLAY.get(unit, unit)}".strip()


def qv(d: dict[str, Any] | None, places: int | None = None) -> str:
    """Format a ``{"value", "unit"}`` pair from the document."""
    if d is None:
        return "—"
    if d["value"] is None:
        return NOT_FINITE
    if places is not None and d["unit"] not in ("1", "s"):
        return fixed(d["value"], d["unit"], places)
    return si(d["value"], d["unit"])


def margin(m: float | None) -> str:
    """Headroom as a signed percentage."""
    if m is None:
        return "—"
    return f"{m:+.0%}" if math.isfinite(m) else NOT_FINITE


def num(d: dict[str, Any] | None, scale: float = 1.0, places: int = 1) -> str:
    """The bare number of a quantity, scaled: "—" if missing, "n/a (not finite)" if not finite."""
    if d is None:
        return "—"
    v = d["value"]
    if v is None or not math.isfinite(v * scale):
        return NOT_FINITE
    return f"{v * scale:.{places}f}"


def pct(x: float | None, places: int = 0) -> str:
    """A fraction as a percentage: "—" if missing, "n/a (not finite)" if not finite."""
    if x is None:
        return "—"
    if not math.isfinite(x):
        return NOT_FINITE
    return f"{x:.{places}%}"
