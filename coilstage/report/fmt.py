"""Formatting SI floats for people (no pint needed on the way out)."""

from __future__ import annotations

import math
from typing import Any

_PREFIX = [(1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ")]
_DISPLAY = {"ohm": "Ω", "degC": "°C", "1": "", "%": "%", "A^2s": "A²s", "A*h": "A·h", "N*m": "N·m"}


def si(value: float | None, unit: str, digits: int = 3) -> str:
    """``si(0.0009, "ohm") == '0.9 mΩ'``; temperatures and percentages keep their own scale."""
    if value is None:
        return "—"
    if not math.isfinite(value):
        return str(value)
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
    if value is None:
        return "—"
    return f"{value:.{places}f} {_DISPLAY.get(unit, unit)}".strip()


def qv(d: dict[str, Any] | None, places: int | None = None) -> str:
    """Format a ``{"value", "unit"}`` pair from the document."""
    if d is None:
        return "—"
    if places is not None:
        return fixed(d["value"], d["unit"], places)
    return si(d["value"], d["unit"])


def margin(m: float | None) -> str:
    return "—" if m is None else f"{m:+.0%}"
