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
    """``si(0.0009, "ohm") == '0.9 mΩ'``; temperatures and percentages keep their own scale."""
    if value is None:
        return "—"
    if not math.isfinite(value):
        return NOT_FINITE
    u = _DISPLAY.get(unit, unit)
    if abs(value) < 1e-9:
        return f"0 {u}".strip()
    if unit in ("degC", "%", "1"):
        return f"{value:.1f} {u}".strip()
    mag = abs(value)
    for scale, p in _PREFIX:
        if mag >= scale or scale == _PREFIX[-1][0]:
            x = value / scale
            return f"{x:.{max(digits - 1 - math.floor(math.log10(abs(x))) if x else 0, 0)}f} {p}{u}"
    return f"{value:g} {u}"


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
    if places is not None:
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
