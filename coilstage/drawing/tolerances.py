"""The tolerances and operating ranges a drawing states: the ``[tolerances]`` table and the per-element
keys (a coil type's ``resistance_tolerance`` and ``inductance_tolerance``, a cable's
``length_tolerance``), read into :class:`~coilstage.drawing.schema.ToleranceSpec` rows keyed by the
row of ``coilstage/data/tolerance_defaults.toml`` they replace (see docs/drawing-format.md).

Every end is stored in its default row's unit: relative tolerances as fractions (an absolute cable
length tolerance becomes each cable's own relative row; a set-point tolerance in volts a fraction of
the set-point), resistances in Ω, gradients in V/K. What the drawing leaves out is not stored: the
shipped row applies (analysis.tolerances.effective).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from coilstage.units import QuantityError, parse_dimensionless, parse_quantity

from .defaults import default
from .reader import MISSING, Reader, suggest
from .schema import Cable, CoilType, Element, Environment, Supply, ToleranceSpec

#: keys of ``[tolerances]``
KEYS = {
    "alternator_hot_derating",
    "battery_resistance",
    "battery_state_of_charge",
    "cable_length",
    "coil_inductance",
    "coil_resistance",
    "distribution",
    "fault_resistance",
    "regulator_compensation",
    "regulator_setpoint",
}
#: keys of a table form ``{ low = ..., high = ... }``
END_KEYS = {"distribution", "high", "low"}
DISTRIBUTIONS = ("normal", "uniform")

#: ``[tolerances]`` key -> the tolerance_defaults row it states (the regulator's gradient: by system)
ROW = {
    "coil_resistance": "coils.*.resistance_tolerance",
    "coil_inductance": "coils.*.inductance_tolerance",
    "cable_length": "tolerances.cable_length",
    "regulator_setpoint": "supply.alternator.tolerance",
    "fault_resistance": "tolerances.fault_resistance",
    "battery_state_of_charge": "supply.battery.state_of_charge",
    "battery_resistance": "supply.battery.internal_resistance",
    "alternator_hot_derating": "supply.alternator.hot_derating",
}

#: Widest regulator set-point tolerance read: a regulator further off than this is faulty, not in
#: tolerance (common practice, no source; the shipped row is ±2 %).
REGULATOR_SPAN = 0.10
#: Steepest regulator temperature compensation read [V/K] (common practice, no source: the shipped
#: 24 V row reaches -35 mV/K).
COMPENSATION_SPAN = 0.1

_PCT = '"5 %" (± symmetric) or { low = "-7 %", high = "+3 %" }'
_LEN = '"10 %" or "0.3 m" (± symmetric) or { low = "0 %", high = "+10 %" }'


def _pct(v: float) -> str:
    return f"{v * 100:g} %"


class _Ends:
    """Reads a value written as one text, a pair ``["a", "b"]`` or a table ``{ low, high,
    distribution }``, reporting each problem at its own key path."""

    def __init__(self, r: Reader, distribution: str):
        self.r = r
        self.distribution = distribution

    def one(self, value: Any, where: str, parse: Callable[[Any], float], expected: str) -> float | None:
        try:
            return parse(value)
        except QuantityError as exc:
            self.r.problem(where, value, f"{exc} ({expected})")
        except (ValueError, TypeError) as exc:
            self.r.problem(where, value, str(exc) or expected)
        return None

    def read(
        self,
        value: Any,
        where: str,
        parse: Callable[[Any], float],
        single: Callable[[float], tuple[float, float]],
        expected: str,
    ) -> tuple[float, float, str] | None:
        """(low, high, distribution) or None after a problem."""
        dist = self.distribution
        if isinstance(value, dict):
            for k in value:
                if k not in END_KEYS:
                    self.r.problem(
                        f"{where}.{k}",
                        MISSING,
                        f"no such key here{suggest(k, END_KEYS)}; allowed: high, low, distribution",
                    )
            if "low" not in value or "high" not in value:
                self.r.problem(where, value, f"both low and high ({expected})")
                return None
            if "distribution" in value:
                dist = value["distribution"]
                if dist not in DISTRIBUTIONS:
                    self.r.problem(f"{where}.distribution", dist, '"uniform" or "normal"')
                    return None
            lo = self.one(value["low"], f"{where}.low", parse, expected)
            hi = self.one(value["high"], f"{where}.high", parse, expected)
        elif isinstance(value, list):
            if len(value) != 2:
                self.r.problem(where, value, f"two values, lowest and highest ({expected})")
                return None
            lo = self.one(value[0], f"{where}[0]", parse, expected)
            hi = self.one(value[1], f"{where}[1]", parse, expected)
        else:
            v = self.one(value, where, parse, expected)
            if v is None:
                return None
            try:
                lo, hi = single(v)
            except ValueError as exc:
                self.r.problem(where, value, f"{exc} ({expected})")
                return None
        if lo is None or hi is None:
            return None
        if lo > hi:
            self.r.problem(where, value, f"a low end no higher than the high end ({expected})")
            return None
        return lo, hi, dist


def _symmetric(v: float) -> tuple[float, float]:
    if v < 0:
        raise ValueError("a size of tolerance of zero or more (written without a sign, it is ±)")
    return -v, v


def _bolted_and(v: float) -> tuple[float, float]:
    if v < 0:
        raise ValueError("a resistance of zero or more")
    return 0.0, v


def _stated(v: float) -> tuple[float, float]:
    return v, v


def _within(r: Reader, where: str, raw: Any, ends, lo_ok, hi_ok, expected: str):
    """``ends`` unless one end is outside its bounds (then a problem and None)."""
    if ends is None:
        return None
    lo, hi, _ = ends
    if not (lo_ok(lo) and hi_ok(hi)):
        r.problem(where, raw, expected)
        return None
    return ends


def _relative_or_length(text: Any) -> tuple[str, float]:
    """("rel", fraction) for "10 %" or a plain ratio, ("abs", metres) for "0.3 m"."""
    if (isinstance(text, str) and text.strip().endswith("%")) or isinstance(text, (int, float)):
        return "rel", parse_dimensionless(text)
    if isinstance(text, str):
        try:
            return "abs", parse_quantity(text, "length")
        except QuantityError:
            pass
    raise QuantityError('a share such as "10 %" or a length such as "0.3 m"')


class _CableEnds:
    """A cable length tolerance, relative or absolute, turned into a fraction of each cable's length."""

    def __init__(self, ends: tuple[Any, Any, str]):
        self.lo, self.hi, self.distribution = ends

    @staticmethod
    def _frac(end: tuple[str, float], length: float) -> float:
        kind, v = end
        return v if kind == "rel" else v / length

    def for_cable(self, length: float) -> tuple[float, float]:
        return self._frac(self.lo, length), self._frac(self.hi, length)


def _read_cable_tolerance(ends: _Ends, value: Any, where: str) -> _CableEnds | None:
    r = ends.r
    # parse each end as ("rel"|"abs", value); a single text is ± symmetric
    got: list[tuple[str, float] | None] = []
    dist = ends.distribution

    def one(v, w):
        try:
            return _relative_or_length(v)
        except QuantityError as exc:
            r.problem(w, v, f"{exc} ({_LEN})")
        return None

    if isinstance(value, dict):
        for k in value:
            if k not in END_KEYS:
                r.problem(
                    f"{where}.{k}", MISSING, f"no such key here{suggest(k, END_KEYS)}; allowed: high, low, distribution"
                )
        if "low" not in value or "high" not in value:
            r.problem(where, value, f"both low and high ({_LEN})")
            return None
        if "distribution" in value:
            dist = value["distribution"]
            if dist not in DISTRIBUTIONS:
                r.problem(f"{where}.distribution", dist, '"uniform" or "normal"')
                return None
        got = [one(value["low"], f"{where}.low"), one(value["high"], f"{where}.high")]
    elif isinstance(value, list):
        if len(value) != 2:
            r.problem(where, value, f"two values, lowest and highest ({_LEN})")
            return None
        got = [one(value[0], f"{where}[0]"), one(value[1], f"{where}[1]")]
    else:
        e = one(value, where)
        if e is None:
            return None
        if e[1] < 0:
            r.problem(where, value, f"a size of tolerance of zero or more (written without a sign, it is ±) ({_LEN})")
            return None
        got = [(e[0], -e[1]), e]
    lo, hi = got
    if lo is None or hi is None:
        return None
    if lo[0] == hi[0] and lo[1] > hi[1]:
        r.problem(where, value, f"a low end no higher than the high end ({_LEN})")
        return None
    for end in (lo, hi):
        if end[0] == "rel" and not -1.0 < end[1] <= 1.0:
            r.problem(where, value, f"relative ends above -100 % and at most +100 % ({_LEN})")
            return None
    return _CableEnds((lo, hi, dist))


def _relative(ends: _Ends, value: Any, where: str) -> tuple[float, float, str] | None:
    got = ends.read(value, where, parse_dimensionless, _symmetric, _PCT)
    return _within(
        ends.r,
        where,
        value,
        got,
        lambda lo: lo > -1.0,
        lambda hi: hi <= 1.0,
        f"ends above -100 % and at most +100 % ({_PCT})",
    )


def _gradient(text: Any) -> float:
    """A temperature gradient of a voltage ("-30 mV/K") [V/K], through the voltage gate."""
    example = '"-30 mV/K"'
    if not isinstance(text, str):
        raise QuantityError(f"a voltage per kelvin as text, e.g. {example}")
    body = text.strip()
    if not body.endswith("/K"):
        raise QuantityError(f"a voltage per kelvin, e.g. {example}")
    return parse_quantity(body[:-2], "voltage")


def read_tolerances(
    r: Reader,
    raw: dict,
    supply: Supply | None,
    coils: dict[str, CoilType] | None,
    elements: list[Element] | None,
    env: Environment | None = None,
) -> tuple[dict[str, ToleranceSpec], float | None]:
    """The drawing's tolerance rows by key, and the regulator tolerance [V] the alternator takes
    from ``[tolerances] regulator_setpoint`` (None: it keeps its own)."""
    out: dict[str, ToleranceSpec] = {}
    t = r.table(raw, "tolerances", "tolerances", required=False) or {}
    r.unknown(t, KEYS, "tolerances")
    shipped_dist = default("tolerances.distribution")
    dist = r.text(t, "distribution", "tolerances", default=None, choices=list(DISTRIBUTIONS)) or shipped_dist
    ends = _Ends(r, dist)
    alt = supply.alternator if supply is not None else None

    def put(key: str, got: tuple[float, float, str] | None, where: str) -> None:
        if got is not None:
            out[key] = ToleranceSpec(float(got[0]), float(got[1]), got[2], where)

    for name in ("coil_resistance", "coil_inductance"):
        if name in t:
            put(ROW[name], _relative(ends, t[name], f"tolerances.{name}"), f"tolerances.{name}")

    # ---- the alternator's regulator
    alt_tolerance: float | None = None
    needs_alt = [k for k in ("regulator_setpoint", "regulator_compensation", "alternator_hot_derating") if k in t]
    if needs_alt and supply is not None and alt is None:
        for k in needs_alt:
            r.problem(f"tolerances.{k}", t[k], "a value only where the drawing has a [supply.alternator]")
    if "regulator_setpoint" in t and alt is not None:
        w = "tolerances.regulator_setpoint"
        sp = alt.setpoint

        def setpoint_share(text: Any) -> float:
            if isinstance(text, str) and not text.strip().endswith("%"):
                return parse_quantity(text, "voltage") / sp
            return parse_dimensionless(text)

        got = ends.read(t["regulator_setpoint"], w, setpoint_share, _symmetric, '"0.2 V" or "1 %" (±)')
        got = _within(
            r,
            w,
            t["regulator_setpoint"],
            got,
            lambda lo: lo >= -REGULATOR_SPAN,
            lambda hi: hi <= REGULATOR_SPAN,
            f"ends within ±{_pct(REGULATOR_SPAN)} of the {sp:g} V set-point ({sp * REGULATOR_SPAN:.2f} V)",
        )
        raw_alt = raw.get("supply", {}).get("alternator", {}) if isinstance(raw.get("supply"), dict) else {}
        if got is not None:
            high_v = got[1] * sp
            if isinstance(raw_alt, dict) and "tolerance" in raw_alt:
                if abs(high_v - alt.tolerance) > 1e-6:
                    r.problem(
                        w,
                        t["regulator_setpoint"],
                        f"a high end equal to supply.alternator.tolerance ({alt.tolerance:g} V), or one of the two "
                        "left out",
                    )
                    got = None
            else:
                alt_tolerance = max(high_v, 0.0)
        put(ROW["regulator_setpoint"], got, w)
    elif alt is not None and alt.tolerance > 0:
        # [supply.alternator] tolerance = "0.3 V" is the set-point's ± tolerance as the drawing states it
        share = alt.tolerance / alt.setpoint
        if share <= REGULATOR_SPAN:
            out[ROW["regulator_setpoint"]] = ToleranceSpec(-share, share, dist, "supply.alternator.tolerance")
    if "regulator_compensation" in t and alt is not None and supply is not None:
        w = "tolerances.regulator_compensation"
        key = (
            "supply.alternator.compensation_24v"
            if supply.system_voltage == 24
            else "supply.alternator.compensation_12v"
        )
        got = ends.read(t["regulator_compensation"], w, _gradient, _stated, '"-30 mV/K"')
        span = f"{-COMPENSATION_SPAN * 1e3:g} mV/K"
        got = _within(
            r,
            w,
            t["regulator_compensation"],
            got,
            lambda lo: lo >= -COMPENSATION_SPAN,
            lambda hi: hi <= 0.0,
            f"a gradient from {span} to 0 mV/K (the set-point falls as the regulator warms)",
        )
        put(key, got, w)
    if "alternator_hot_derating" in t and alt is not None:
        w = "tolerances.alternator_hot_derating"
        got = ends.read(t["alternator_hot_derating"], w, parse_dimensionless, _stated, '"25 %" or ["15 %", "35 %"]')
        got = _within(
            r,
            w,
            t["alternator_hot_derating"],
            got,
            lambda lo: lo >= 0,
            lambda hi: hi < 1.0,
            "a share from 0 % to below 100 %",
        )
        put(ROW["alternator_hot_derating"], got, w)

    # ---- the fault and the battery
    if "fault_resistance" in t:
        w = "tolerances.fault_resistance"
        got = ends.read(
            t["fault_resistance"],
            w,
            lambda x: parse_quantity(x, "resistance"),
            _bolted_and,  # the bolted fault stays the other end
            '"10 mohm" or ["2 mohm", "10 mohm"]',
        )
        got = _within(
            r, w, t["fault_resistance"], got, lambda lo: lo >= 0, lambda hi: True, "a resistance of zero or more"
        )
        put(ROW["fault_resistance"], got, w)
    if "battery_state_of_charge" in t:
        w = "tolerances.battery_state_of_charge"
        got = ends.read(t["battery_state_of_charge"], w, parse_dimensionless, _stated, '["40 %", "100 %"]')
        got = _within(
            r,
            w,
            t["battery_state_of_charge"],
            got,
            lambda lo: lo > 0,
            lambda hi: hi <= 1.0,
            "a share above 0 % and at most 100 %",
        )
        put(ROW["battery_state_of_charge"], got, w)
    if "battery_resistance" in t:
        w = "tolerances.battery_resistance"
        got = ends.read(
            t["battery_resistance"], w, lambda x: parse_quantity(x, "resistance"), _stated, '["4 mohm", "9 mohm"]'
        )
        got = _within(
            r, w, t["battery_resistance"], got, lambda lo: lo > 0, lambda hi: True, "resistances greater than zero"
        )
        put(ROW["battery_resistance"], got, w)

    # ---- values stated elsewhere in the drawing that are the same rows
    if supply is not None and supply.battery.peukert is not None:
        p = supply.battery.peukert
        out["supply.battery.peukert_exponent"] = ToleranceSpec(p, p, dist, "supply.battery.peukert")
    if env is not None and env.rotor_zone_rise is not None:
        v = env.rotor_zone_rise
        out["environment.retarder_rise"] = ToleranceSpec(v, v, dist, "environment.rotor_zone_rise")
    if env is not None and env.rotor_zone_time_constant is not None:
        v = env.rotor_zone_time_constant
        out["environment.retarder_rise_time_constant"] = ToleranceSpec(
            v, v, dist, "environment.rotor_zone_time_constant"
        )

    # ---- per coil type
    craw = raw.get("coils") if isinstance(raw.get("coils"), dict) else {}
    for name, body in craw.items():
        if not isinstance(body, dict):
            continue
        for k, generic in (
            ("resistance_tolerance", "resistance_tolerance"),
            ("inductance_tolerance", "inductance_tolerance"),
        ):
            if k in body:
                w = f"coils.{name}.{k}"
                put(f"coils.{name}.{generic}", _relative(ends, body[k], w), w)

    # ---- cables: the harness's and each cable's own
    cables = [e for e in (elements or []) if isinstance(e, Cable)]
    if "cable_length" in t:
        w = "tolerances.cable_length"
        got = _read_cable_tolerance(ends, t["cable_length"], w)
        if got is not None:
            if got.lo[0] == "rel" and got.hi[0] == "rel":
                put(ROW["cable_length"], (got.lo[1], got.hi[1], got.distribution), w)
            else:
                for c in cables:
                    lo, hi = got.for_cable(c.length)
                    if lo <= -1.0 or lo > hi:
                        r.problem(w, t["cable_length"], f"a low end above -{c.length:g} m, the length of {c.id}")
                        continue
                    put(f"cables.{c.id}.length_tolerance", (lo, hi, got.distribution), w)
    by_where = {c.where: c for c in cables}
    harness = raw.get("harness") if isinstance(raw.get("harness"), list) else []
    for i, e in enumerate(harness):
        if not isinstance(e, dict) or "length_tolerance" not in e:
            continue
        eid = e.get("id")
        where = f"harness[{i}] ({eid})" if isinstance(eid, str) else f"harness[{i}]"
        w = f"{where}.length_tolerance"
        if e.get("kind") not in ("cable", "ground") or "resistance" in e:
            r.problem(w, e["length_tolerance"], "a length tolerance only on a cable (kind cable, or a ground cable)")
            continue
        got = _read_cable_tolerance(ends, e["length_tolerance"], w)
        c = by_where.get(where)
        if got is None or c is None:
            continue
        lo, hi = got.for_cable(c.length)
        if lo <= -1.0 or lo > hi:
            r.problem(w, e["length_tolerance"], f"a low end above -{c.length:g} m, the cable's length")
            continue
        put(f"cables.{c.id}.length_tolerance", (lo, hi, got.distribution), w)
    return out, alt_tolerance
