"""Formatting SI floats for people (no pint needed on the way out).

A figure that is missing prints as "—"; one that the guard (:mod:`coilstage.report.safe`) found not
finite (a quantity whose value is None) prints as "n/a (not finite)", never as nan or inf.
"""

from __future__ import annotations

import math
from typing import Any

from coilstage.checks.base import UNMOVED

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


#: a failing margin below this (-1000 %) says nothing its size could: "far beyond the limit" instead
FAR_BEYOND = -10.0


def _temperature(val: dict[str, Any] | None, lim: dict[str, Any] | None) -> bool:
    return (
        val is not None
        and lim is not None
        and val.get("unit") == "degC"
        and val.get("value") is not None
        and lim.get("value") is not None
    )


def kelvin_text(value: float, limit: float, margin: float | None = None) -> str:
    """Headroom of a temperature in kelvin: ``kelvin_text(135, 165) == '30 K of headroom'``,
    ``kelvin_text(177, 165) == '12 K over'``; the margin's sign (where given) says which side is safe."""
    h = limit - value
    safe = margin >= 0 if margin is not None else h >= 0
    k = abs(h)
    amount = f"{k:.0f}" if k >= 10 else f"{k:.1f}"
    return f"{amount} K of headroom" if safe else f"{amount} K over"


def far_beyond(v: dict[str, Any]) -> bool:
    """True where a failing margin's size means nothing: below -1000 %, or a limit of zero (a part
    left with no rating at all, so no fraction of it can be stated)."""
    m, val, lim = v.get("margin"), v.get("value"), v.get("limit")
    if m is not None and math.isfinite(m) and m < FAR_BEYOND:
        return True
    return (
        m is None
        and v.get("status") == "fail"
        and val is not None
        and lim is not None
        and val.get("value") is not None
        and lim.get("value") == 0.0
        and val.get("value") != 0.0
    )


def margin_text(v: dict[str, Any]) -> str:
    """A verdict's headroom: in K for a temperature ("30 K of headroom", "12 K over"), "far beyond the
    limit" with the value and limit where a percentage would mean nothing, else as a percentage of the
    limit."""
    m = v.get("margin")
    val, lim = v.get("value"), v.get("limit")
    if far_beyond(v):
        return f"far beyond the limit ({qv(val)} against {qv(lim)})"
    if _temperature(val, lim):
        return kelvin_text(val["value"], lim["value"], m)
    if m is None:
        return "—"
    return f"{m * 100:+.0f} %" if math.isfinite(m) else NOT_FINITE


def change_text(change: float, unit: str | None) -> str:
    """A parameter's move towards its worst case: a fraction as "−5 %", V/K as mV/K, a temperature
    step in K; the minus sign is the typographic one."""
    if not math.isfinite(change):
        return NOT_FINITE
    if unit == "1":
        t = f"{change * 100:+.3g} %"
    elif unit == "V/K":
        t = f"{change * 1e3:+.3g} mV/K"
    elif unit == "degC":
        t = f"{change:+.3g} K"
    elif unit in (None, ""):
        t = f"{change:+.3g}"
    else:
        t = f"{'+' if change >= 0 else '-'}{si(abs(change), unit)}"
    return t.replace("-", "−", 1) if t.startswith("-") else t


def sensitivity_text(s: dict[str, Any]) -> str:
    """One sensitivity for a reader: "coil resistance −5 % takes 5.1 points" (of margin)."""
    mc = s["margin_change"] * 100
    verb = "takes" if mc < 0 else "gives"
    return f"{s['words']} {change_text(s['change'], s.get('unit'))} {verb} {abs(mc):.1f} points"


def worst_lines(v: dict[str, Any], top: int = 3) -> list[str]:
    """For a verdict decided at its worst case: the nominal and worst-case margins with the
    conditions, what decided them, and the ``top`` largest sensitivities where there are any; empty
    for a verdict read at one corner."""
    nom = v.get("nominal")
    if not nom:
        return []
    if any(x.startswith(UNMOVED) for x in v.get("deciding") or []):
        # decided at the conditions its rule names, and no declared tolerance moves it: one line
        return [f"tolerances: {UNMOVED} (found by analysing again with each one held at nominal)"]
    nominal = {"status": nom["status"], "value": nom["value"], "limit": v.get("limit"), "margin": nom["margin"]}
    where = v.get("worst_conditions") or v.get("corner") or "its worst case"
    out = [
        f"nominal: {nom['status'].upper()}, {margin_text(nominal)}; at the {where}: "
        f"{v['status'].upper()}, {margin_text(v)}"
    ]
    if v.get("deciding"):
        out.append("decided by: " + "; ".join(v["deciding"]))
    sens = (v.get("sensitivities") or [])[:top]
    if sens:
        out.append("largest effects: " + "; ".join(sensitivity_text(s) for s in sens))
    elif v.get("sensitivity_note"):
        why = v["sensitivity_note"]
        if why.startswith("not computed: this rule is outside"):
            out.append("sensitivities: not computed (rule outside the tolerance model)")
        elif why.startswith("not computed"):
            out.append("sensitivities: " + why)
        else:
            out.append("sensitivities: no declared parameter moves this margin")
    return out


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
