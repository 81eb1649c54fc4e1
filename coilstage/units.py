"""Quantities with units, at the edge of the program only.

A drawing writes ``"35 mm^2"``, ``"0.62 ohm @ 20 degC"`` or ``"1/0 AWG"``; this module turns such
text into SI floats (temperatures into °C floats, see below) and nothing past it ever sees a pint
Quantity. The registry is built once, lazily, from the small definitions file
``coilstage/data/units.txt``.

Conventions of the whole package:

* every physical value is a float in SI base units (m, m², Ω, V, A, H, s, W, J, C);
* temperatures are floats in **°C**, because every conductor and insulation table of the trade is
  written in °C; temperature *differences* are in K.

Every text is screened before any parser reads it (:func:`_screen`: a number and a unit, at most
:data:`MAX_TEXT` characters, digits 0-9, no arithmetic beyond a unit's power), and every number
read passes :func:`gate` (finite, within :data:`PLAUSIBLE` for its kind). Both the fast path and
pint go through the same two, so they accept and refuse the same texts (a property test holds them
to it).
"""

from __future__ import annotations

import math
import re
import unicodedata
from dataclasses import dataclass
from functools import cache
from importlib import resources
from typing import Any

#: dimension name -> (SI unit the float is returned in, an example for error messages)
DIMENSIONS: dict[str, tuple[str, str]] = {
    "length": ("m", "2.4 m"),
    "area": ("m**2", "35 mm^2"),
    "resistance": ("ohm", "8 mohm"),
    "voltage": ("V", "28 V"),
    "current": ("A", "150 A"),
    "inductance": ("H", "45 mH"),
    "time": ("s", "12 min"),
    "charge": ("C", "225 A*h"),
    "power": ("W", "1.2 kW"),
    "energy": ("J", "80 J"),
    "temperature_difference": ("K", "10 K"),
    "thermal_resistance": ("K/W", "0.1 K/W"),
    "heat_capacity": ("J/K", "1925 J/K"),
    "mass": ("kg", "5 kg"),
    "joule_integral": ("A**2*s", "1200 A^2*s"),
    "torque": ("N*m", "1900 N*m"),
    "angular_speed": ("rad/s", "500 rpm"),
    "frequency": ("Hz", "50 Hz"),
}

_AWG_BODY = r"(?:(0{2,4})|([1-4])\s*/\s*0|(\d{1,2}))"
_AWG_RE = re.compile(rf"^\s*{_AWG_BODY}\s*AWG\s*$", re.IGNORECASE | re.ASCII)
_AWG_RE_PREFIX = re.compile(rf"^\s*AWG\s*{_AWG_BODY}\s*$", re.IGNORECASE | re.ASCII)
_TRADE_SPELLINGS = (("mm²", "mm**2"), ("mm2", "mm**2"), ("²", "**2"), ("^", "**"), ("Ohm", "ohm"))


#: Plain "number unit" forms read without pint (its import costs about 0.2 s on every run): unit ->
#: (factor to SI, dimension). Everything else, and every error, goes through pint. tests/test_units.py
#: holds each entry equal to pint's own conversion.
FAST_UNITS: dict[str, tuple[float, str]] = {
    "V": (1.0, "voltage"),
    "mV": (1e-3, "voltage"),
    "kV": (1e3, "voltage"),
    "A": (1.0, "current"),
    "mA": (1e-3, "current"),
    "kA": (1e3, "current"),
    "ohm": (1.0, "resistance"),
    "mohm": (1e-3, "resistance"),
    "Ω": (1.0, "resistance"),
    "mΩ": (1e-3, "resistance"),
    "m": (1.0, "length"),
    "mm": (1e-3, "length"),
    "cm": (1e-2, "length"),
    "km": (1e3, "length"),
    "mm^2": (1e-6, "area"),
    "mm2": (1e-6, "area"),
    "mm²": (1e-6, "area"),
    "cm^2": (1e-4, "area"),
    "m^2": (1.0, "area"),
    "H": (1.0, "inductance"),
    "mH": (1e-3, "inductance"),
    "uH": (1e-6, "inductance"),
    "µH": (1e-6, "inductance"),
    "s": (1.0, "time"),
    "ms": (1e-3, "time"),
    "min": (60.0, "time"),
    "h": (3600.0, "time"),
    "A*h": (3600.0, "charge"),
    "W": (1.0, "power"),
    "kW": (1e3, "power"),
    "J": (1.0, "energy"),
    "kJ": (1e3, "energy"),
    "K": (1.0, "temperature_difference"),
    "K/W": (1.0, "thermal_resistance"),
    "J/K": (1.0, "heat_capacity"),
    "kg": (1.0, "mass"),
    "g": (1e-3, "mass"),
    "A^2*s": (1.0, "joule_integral"),
    "N*m": (1.0, "torque"),
    "rpm": (2 * math.pi / 60.0, "angular_speed"),
    "rad/s": (1.0, "angular_speed"),
    "Hz": (1.0, "frequency"),
}
FAST_TEMPERATURES = {"degC": (1.0, 0.0), "°C": (1.0, 0.0), "K": (1.0, -273.15), "degF": (5 / 9, -32.0 * 5 / 9)}
_FAST_RE = re.compile(r"^\s*([+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)\s*(\S+)\s*$", re.ASCII)

# ---------------------------------------------------------------- the number gate

#: Longest quantity text read [characters]: a number, a unit and a few spaces fit easily.
MAX_TEXT = 80

#: kind -> (smallest magnitude other than zero, largest magnitude), in the SI unit of DIMENSIONS.
#: Plausible bounds for the DC supply of a vehicle's coil stages, wide enough for every real part
#: (common practice, no source: each bound is at least a thousand times past the largest or
#: smallest value such a supply uses); a value outside them is a typing error or a hostile input,
#: and would only make the analysis divide by nearly zero or overflow.
PLAUSIBLE: dict[str, tuple[float, float]] = {
    "length": (1e-6, 1e4),
    "area": (1e-12, 100.0),
    "resistance": (1e-9, 1e6),
    "voltage": (1e-6, 1e5),
    "current": (1e-6, 1e6),
    "inductance": (1e-9, 1e3),
    "time": (1e-9, 1e8),
    "charge": (1e-3, 1e8),
    "power": (1e-6, 1e9),
    "energy": (1e-9, 1e12),
    "temperature_difference": (1e-6, 1e3),
    "thermal_resistance": (1e-6, 1e6),
    "heat_capacity": (1e-6, 1e9),
    "mass": (1e-6, 1e5),
    "joule_integral": (1e-9, 1e12),
    "torque": (1e-6, 1e7),
    "angular_speed": (1e-6, 1e5),
    "frequency": (1e-6, 1e7),
    "ratio": (0.0, 1e6),
}
#: Temperatures read [°C]: from well above the zero-resistance temperature of every shipped metal
#: (about -234.5 °C for copper, -228 °C for aluminium: 20 °C - 1/alpha20 with the alpha20 of
#: IEC 60028 and IEC 60287-1-1), so that every R(T) stays positive, to past any insulation class.
TEMPERATURE_RANGE = (-200.0, 1000.0)

_NUMBER = re.compile(r"\s*[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]{1,3})?", re.ASCII)
_UNIT_POWER = re.compile(r"(?<=[A-Za-zµΩ°)])\s*(?:\*\*|\^)\s*(?:-?[1-4]|\(-?[1-4]\))(?![0-9.])")
_UNIT_TEXT = re.compile(r"[A-Za-zµΩ°%·*/() ]*")


def article(noun: str) -> str:
    """``"a voltage"``, ``"an inductance"``."""
    return ("an " if noun[:1].lower() in "aeiou" else "a ") + noun


def gate(value: float, kind: str) -> float:
    """The one check every number leaving the loader passes: finite and within :data:`PLAUSIBLE`
    for its kind (``"temperature"``: within :data:`TEMPERATURE_RANGE`, in °C). Returns the value;
    raises QuantityError saying what was expected."""
    noun = "temperature" if kind == "temperature" else kind.replace("_", " ")
    if not isinstance(value, (int, float)) or isinstance(value, bool) or not math.isfinite(value):
        raise QuantityError(f"{article(noun)} with a finite number")
    if kind == "temperature":
        lo, hi = TEMPERATURE_RANGE
        if not lo <= value <= hi:
            raise QuantityError(f"a temperature between {lo:g} degC and {hi:g} degC")
        return float(value)
    smallest, largest = PLAUSIBLE[kind]
    unit = DIMENSIONS[kind][0].replace("**", "^") if kind in DIMENSIONS else ""
    if abs(value) > largest:
        raise QuantityError(f"{article(noun)} of at most {largest:g} {unit}".rstrip() + " (a plausible value)")
    if value != 0 and abs(value) < smallest:
        raise QuantityError(f"{article(noun)} of zero or at least {smallest:g} {unit} (a plausible value)")
    return float(value)


def _screen(text: str, noun: str, example: str) -> None:
    """Refuse, before any parser sees it, text that is not "a number and a unit": too long,
    digits other than 0-9, arithmetic (sums, powers of numbers, towers of powers)."""
    shape = f'{noun} written as a number and a unit, e.g. "{example}"'
    if len(text) > MAX_TEXT:
        raise QuantityError(f"{shape} (at most {MAX_TEXT} characters)")
    if any(unicodedata.category(ch) == "Nd" and not ch.isascii() for ch in text):
        raise QuantityError(f"{shape} (digits 0-9 only)")
    t = normalise_unit_text(text)
    m = _NUMBER.match(t)
    if m is None:
        raise QuantityError(f"{shape} (it must start with the number)")
    rest = _UNIT_POWER.sub("", t[m.end() :])
    if not _UNIT_TEXT.fullmatch(rest):
        raise QuantityError(f"{shape} (no arithmetic: only units may carry a power, such as mm^2)")


def _fast(text: Any, use_fast: bool = True) -> tuple[float, str] | None:
    """(number, unit) of a plain "number unit" text, or None (also when ``use_fast`` is False)."""
    if not use_fast or not isinstance(text, str):
        return None
    m = _FAST_RE.match(text)
    return (float(m.group(1)), m.group(2)) if m else None


class QuantityError(ValueError):
    """Text that is not a quantity of the expected kind; the message says what was expected."""


@cache
def registry() -> Any:
    """The one pint registry of the program (built on first use)."""
    import pint

    path = resources.files("coilstage.data").joinpath("units.txt")
    with resources.as_file(path) as p:
        return pint.UnitRegistry(str(p), autoconvert_offset_to_baseunit=True)


_LEADING_ZEROS = re.compile(r"^([+-]?)0+(?=[0-9])")


def normalise_unit_text(text: str) -> str:
    out = _LEADING_ZEROS.sub(r"\1", text.strip())  # "01 V": pint's tokenizer would read 0, not 1
    for old, new in _TRADE_SPELLINGS:
        out = out.replace(old, new)
    return out


def _parse(text: Any, expected: str, example: str) -> Any:
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise QuantityError(f'{expected} as text with its unit, e.g. "{example}"')
    if isinstance(text, (int, float)):
        raise QuantityError(f'{expected} with its unit, e.g. "{example}" (a bare number has no unit)')
    _screen(text, expected, example)
    ureg = registry()
    try:
        q = ureg.Quantity(normalise_unit_text(text))
    except Exception as exc:  # pint raises several kinds for unreadable text
        raise QuantityError(f'{expected} such as "{example}" ({type(exc).__name__}: {exc})') from None
    if not isinstance(q.magnitude, (int, float)) or not math.isfinite(float(q.magnitude)):
        raise QuantityError(f"{expected} with a finite number")
    return q


def dimension_name(q: Any) -> str:
    """A readable name for the dimension of a parsed quantity (for error messages)."""
    ureg = registry()
    for name, (unit, _example) in DIMENSIONS.items():
        if q.dimensionality == ureg.Quantity(1, unit).dimensionality:
            return name.replace("_", " ")
    if q.dimensionality == ureg.Quantity(1, "K").dimensionality:
        return "temperature"
    if q.dimensionless:
        return "no unit"
    return str(q.dimensionality)


def parse_quantity(text: Any, dimension: str, use_fast: bool = True) -> float:
    """Parse ``text`` as a quantity of ``dimension`` (a key of :data:`DIMENSIONS`); return SI float.

    Plain "number unit" forms are read without pint; ``use_fast=False`` sends every text through
    pint (both paths pass :func:`_screen` and :func:`gate`, so they accept and refuse alike).

    >>> parse_quantity("35 mm^2", "area")
    3.5e-05
    >>> parse_quantity("8 mohm", "resistance")
    0.008
    """
    unit, example = DIMENSIONS[dimension]
    noun = article(dimension.replace("_", " "))
    fast = _fast(text, use_fast)
    if fast is not None and FAST_UNITS.get(fast[1], (0, ""))[1] == dimension:
        _screen(text, noun, example)
        return gate(fast[0] * FAST_UNITS[fast[1]][0], dimension)
    q = _parse(text, noun, example)
    target = registry().Quantity(1, unit)
    if q.dimensionality != target.dimensionality:
        raise QuantityError(f'{noun} such as "{example}", not {article(dimension_name(q))}')
    return gate(float(q.to(unit).magnitude), dimension)


def parse_temperature(text: Any, use_fast: bool = True) -> float:
    """Parse an absolute temperature (``"85 degC"``, ``"-40 degC"``, ``"358 K"``); return °C.

    >>> parse_temperature("85 degC")
    85.0
    >>> round(parse_temperature("358.15 K"), 6)
    85.0
    """
    fast = _fast(text, use_fast)
    if fast is not None and fast[1] in FAST_TEMPERATURES:
        _screen(text, "a temperature", "85 degC")
        scale, offset = FAST_TEMPERATURES[fast[1]]
        return gate(fast[0] * scale + offset, "temperature")
    q = _parse(text, "a temperature", "85 degC")
    if q.dimensionality != registry().Quantity(1, "K").dimensionality:
        hint = ""
        if isinstance(text, str) and re.search(r"[0-9.\s](C|F)\s*$", text):
            hint = f" (did you mean deg{text.strip()[-1]}?)"
        raise QuantityError(f'a temperature such as "85 degC", not {article(dimension_name(q))}{hint}')
    return gate(float(q.to("degC").magnitude), "temperature")


def parse_dimensionless(text: Any, use_fast: bool = True) -> float:
    """A plain ratio: a number, or text such as ``"75 %"``."""
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        return gate(float(text), "ratio")
    fast = _fast(text, use_fast)
    if fast is not None and fast[1] == "%":
        _screen(text, "a ratio", "75 %")
        return gate(fast[0] / 100.0, "ratio")
    q = _parse(text, "a ratio", "75 %")
    if not q.dimensionless:
        raise QuantityError(f'a plain ratio such as 0.75 or "75 %", not {article(dimension_name(q))}')
    return gate(float(q.to("").magnitude), "ratio")


def parse_resistance_at(text: Any) -> tuple[float, float]:
    """Parse ``"0.62 ohm @ 20 degC"`` into (resistance [Ω], reference temperature [°C]).

    >>> parse_resistance_at("0.62 ohm @ 20 degC")
    (0.62, 20.0)
    """
    example = "0.62 ohm @ 20 degC"
    if not isinstance(text, str) or "@" not in text:
        raise QuantityError(f'a resistance with the temperature it was measured at, e.g. "{example}"')
    left, right = text.split("@", 1)
    try:
        r = parse_quantity(left, "resistance")
    except QuantityError as exc:
        raise QuantityError(f"{exc} before the '@' (e.g. \"{example}\")") from None
    try:
        t = parse_temperature(right)
    except QuantityError as exc:
        raise QuantityError(f"{exc} after the '@' (e.g. \"{example}\")") from None
    return r, t


def parse_value_at(text: Any, dimension: str) -> tuple[float, float]:
    """Parse ``"30 A @ 85 degC"`` into (value [SI], temperature [°C])."""
    _unit, example = DIMENSIONS[dimension]
    ex = f"{example} @ 85 degC"
    if not isinstance(text, str) or "@" not in text:
        raise QuantityError(f'{article(dimension)} with the temperature it applies at, e.g. "{ex}"')
    left, right = text.split("@", 1)
    return parse_quantity(left, dimension), parse_temperature(right)


def parse_pair(text: Any, first: str, second: str) -> tuple[float, float]:
    """Parse ``"60 A @ 150 ms"`` into two SI floats of the named dimensions."""
    ex = f"{DIMENSIONS[first][1]} @ {DIMENSIONS[second][1]}"
    if not isinstance(text, str) or "@" not in text:
        raise QuantityError(f'{article(first)} at {article(second)}, e.g. "{ex}"')
    left, right = text.split("@", 1)
    return parse_quantity(left, first), parse_quantity(right, second)


@dataclass(frozen=True)
class CableSize:
    """A conductor size as the drawing names it.

    ``system`` is ``"mm2"`` (metric cross-section, ``nominal`` in mm²) or ``"awg"`` (``nominal``
    is the gauge number, with 0, -1, -2, -3 for 1/0, 2/0, 3/0, 4/0 as in ASTM B258).
    """

    system: str
    nominal: float
    label: str


def awg_label(n: int) -> str:
    """``awg_label(-1) == '2/0 AWG'``."""
    return f"{1 - n}/0 AWG" if n <= 0 else f"{n} AWG"


def parse_cable_size(text: Any) -> CableSize:
    """Parse ``"35 mm^2"``, ``"6 AWG"``, ``"1/0 AWG"`` or ``"00 AWG"``.

    >>> parse_cable_size("1/0 AWG")
    CableSize(system='awg', nominal=0, label='1/0 AWG')
    >>> parse_cable_size("35 mm^2").nominal
    35.0
    """
    if isinstance(text, str):
        m = _AWG_RE.match(text) or _AWG_RE_PREFIX.match(text)
        if m:
            if m.group(1) is not None:  # "00" = 2/0 ... "0000" = 4/0
                n = 1 - len(m.group(1))
            elif m.group(2) is not None:  # "2/0"
                n = 1 - int(m.group(2))
            else:
                n = int(m.group(3))
            return CableSize("awg", n, awg_label(n))
    try:
        area = parse_quantity(text, "area")
    except QuantityError:
        raise QuantityError('a conductor size such as "35 mm^2", "6 AWG" or "1/0 AWG"') from None
    mm2 = area * 1e6
    return CableSize("mm2", round(mm2, 6), f"{mm2:g} mm²")
