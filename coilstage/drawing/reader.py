"""The validation framework of the loader: a Reader walks the raw TOML, turns values into SI floats through the one
number gate, and collects every problem with its key path.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from coilstage.errors import Problem
from coilstage.units import (
    QuantityError,
    article,
    parse_dimensionless,
    parse_quantity,
    parse_temperature,
)

MISSING = object()


def suggest(word: str, choices: set[str] | list[str]) -> str:
    close = difflib.get_close_matches(word, sorted(choices), n=1, cutoff=0.6)
    return f' (did you mean "{close[0]}"?)' if close else ""


def show(value: Any) -> str:
    try:
        text = repr(value) if not isinstance(value, str) else f'"{value}"'
    except RecursionError:
        return "(a value nested too deeply to show)"
    return text if len(text) <= 60 else text[:57] + "..."


#: Longest name or free text read from a drawing [characters].
MAX_NAME = 2000


class Reader:
    """Walks the raw TOML dict, turning values into SI floats and collecting problems."""

    def __init__(self, path: str, base_dir: Path) -> None:
        self.path = path
        self.base_dir = base_dir
        self.problems: list[Problem] = []
        self.assumptions: list[str] = []
        #: key paths (``harness[3] (F1).count``) the drawing left out and a default value filled
        self.defaulted: list[str] = []

    # -- generic helpers
    def problem(self, where: str, found: Any, expected: str) -> None:
        self.problems.append(Problem(where, "" if found is MISSING else show(found), expected))

    def table(self, raw: dict, key: str, where: str, required: bool = True) -> dict | None:
        value = raw.get(key, MISSING)
        if value is MISSING:
            if required:
                self.problem(where, MISSING, f"a [{where}] table")
            return None
        if not isinstance(value, dict):
            self.problem(where, value, f"a [{where}] table")
            return None
        return value

    def unknown(self, raw: dict, allowed: set[str], where: str) -> None:
        for key in raw:
            if key not in allowed:
                path = f"{where}.{key}" if where else key
                self.problem(
                    path, MISSING, f"no such key here{suggest(key, allowed)}; allowed: {', '.join(sorted(allowed))}"
                )

    def value(
        self,
        raw: dict,
        key: str,
        where: str,
        parse: Callable[[Any], Any],
        expected: str | None = None,
        default: Any = MISSING,
    ) -> Any:
        """Parse ``raw[key]`` with ``parse``; a missing key gives ``default`` (or a problem)."""
        path = f"{where}.{key}"
        if key not in raw:
            if default is MISSING:
                self.problem(path, MISSING, f"a value ({expected or 'required'})")
                return None
            if default is not None:
                self.defaulted.append(path)
            return default
        try:
            return parse(raw[key])
        except QuantityError as exc:
            self.problem(path, raw[key], str(exc))
        except ValueError as exc:
            self.problem(path, raw[key], str(exc) or expected or "a valid value")
        except TypeError as exc:
            self.problem(path, raw[key], expected or str(exc))
        return None

    def quantity(
        self,
        raw: dict,
        key: str,
        where: str,
        dim: str,
        default: Any = MISSING,
        positive: bool = False,
        nonnegative: bool = False,
    ) -> Any:
        v = self.value(raw, key, where, lambda t: parse_quantity(t, dim), default=default)
        if isinstance(v, float):
            noun = article(dim.replace("_", " "))
            if positive and not v > 0:
                self.problem(f"{where}.{key}", raw[key], f"{noun} greater than zero")
                return None
            if nonnegative and v < 0:
                self.problem(f"{where}.{key}", raw[key], f"{noun} of zero or more")
                return None
        return v

    def difference(self, raw: dict, key: str, where: str, default: Any = MISSING, nonnegative: bool = True) -> Any:
        """A temperature difference [K]; a temperature on a scale with an offset ("40 degC") is
        refused, since "40 degC" as a difference would read as 313.15 K."""
        value = raw.get(key)
        if isinstance(value, str) and any(u in value for u in ("degC", "°C", "degF", "°F", "celsius", "fahrenheit")):
            self.problem(f"{where}.{key}", value, 'a temperature difference in kelvin, e.g. "40 K" (not a temperature)')
            return None
        return self.quantity(raw, key, where, "temperature_difference", default=default, nonnegative=nonnegative)

    def temperature(self, raw: dict, key: str, where: str, default: Any = MISSING) -> Any:
        return self.value(raw, key, where, parse_temperature, default=default)

    def text(
        self,
        raw: dict,
        key: str,
        where: str,
        default: Any = MISSING,
        choices: Sequence[str] | None = None,
    ) -> Any:
        """A text; with ``choices``, one of them (a wrong value is answered with the list)."""
        allowed = None if choices is None else "one of " + ", ".join(f'"{c}"' for c in choices)

        def parse(t):
            if not isinstance(t, str) or not t.strip():
                raise ValueError(allowed or "a text")
            if len(t) > MAX_NAME:
                raise ValueError(f"a text of at most {MAX_NAME} characters")
            if choices is not None and t not in choices:
                raise ValueError(f"{allowed}{suggest(t, list(map(str, choices)))}")
            return t

        return self.value(raw, key, where, parse, expected=allowed or "a text", default=default)

    def integer(
        self, raw: dict, key: str, where: str, default: Any = MISSING, minimum: int = 1, maximum: int = 1_000_000
    ) -> Any:
        def parse(t):
            if isinstance(t, bool) or not isinstance(t, int) or not minimum <= t <= maximum:
                raise ValueError(f"a whole number of at least {minimum} (and at most {maximum:,})")
            return t

        return self.value(raw, key, where, parse, default=default)

    def share(
        self,
        raw: dict,
        key: str,
        where: str,
        default: Any = MISSING,
        low: float = 0.0,
        high: float = 1.0,
        low_open: bool = False,
    ) -> Any:
        """A ratio between ``low`` and ``high`` (a number or text such as "75 %")."""
        v = self.value(raw, key, where, parse_dimensionless, default=default)
        inside = isinstance(v, float) and ((low < v) if low_open else (low <= v)) and v <= high
        if isinstance(v, float) and not inside:
            lo = f"above {low * 100:g} %" if low_open else f"from {low * 100:g} %"
            self.problem(f"{where}.{key}", raw.get(key, v), f"a share {lo} to {high * 100:g} %")
            return None
        return v

    def assume(self, text: str) -> None:
        self.assumptions.append(text)
