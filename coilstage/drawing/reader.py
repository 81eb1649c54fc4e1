"""The validation framework of the loader: a Reader walks the raw TOML, turns values into SI floats through the one
number gate, and collects every problem with its key path.
"""

from __future__ import annotations

import difflib
from pathlib import Path
from typing import Any

from coilstage.errors import Problem
from coilstage.units import (
    QuantityError,
    parse_quantity,
    parse_temperature,
)

MISSING = object()


def suggest(word: str, choices: set[str] | list[str]) -> str:
    close = difflib.get_close_matches(word, sorted(choices), n=1, cutoff=0.6)
    return f' (did you mean "{close[0]}"?)' if close else ""


def show(value: Any) -> str:
    text = repr(value) if not isinstance(value, str) else f'"{value}"'
    return text if len(text) <= 60 else text[:57] + "..."


class Reader:
    """Walks the raw TOML dict, turning values into SI floats and collecting problems."""

    def __init__(self, path: str, base_dir: Path):
        self.path = path
        self.base_dir = base_dir
        self.problems: list[Problem] = []
        self.assumptions: list[str] = []

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

    def value(self, raw: dict, key: str, where: str, parse, expected: str | None = None, default=MISSING):
        """Parse ``raw[key]`` with ``parse``; a missing key gives ``default`` (or a problem)."""
        path = f"{where}.{key}"
        if key not in raw:
            if default is MISSING:
                self.problem(path, MISSING, f"a value ({expected or 'required'})")
                return None
            return default
        try:
            return parse(raw[key])
        except QuantityError as exc:
            self.problem(path, raw[key], str(exc))
        except (TypeError, ValueError) as exc:
            self.problem(path, raw[key], expected or str(exc))
        return None

    def quantity(self, raw, key, where, dim, default=MISSING, positive=False, nonnegative=False):
        v = self.value(raw, key, where, lambda t: parse_quantity(t, dim), default=default)
        if isinstance(v, float):
            if positive and not v > 0:
                self.problem(f"{where}.{key}", raw[key], f"a {dim} greater than zero")
                return None
            if nonnegative and v < 0:
                self.problem(f"{where}.{key}", raw[key], f"a {dim} of zero or more")
                return None
        return v

    def temperature(self, raw, key, where, default=MISSING):
        return self.value(raw, key, where, parse_temperature, default=default)

    def text(self, raw, key, where, default=MISSING, choices=None):
        def parse(t):
            if not isinstance(t, str) or not t.strip():
                raise ValueError("a text")
            if choices is not None and t not in choices:
                raise ValueError(f"one of {', '.join(map(str, choices))}{suggest(t, list(map(str, choices)))}")
            return t

        return self.value(raw, key, where, parse, expected="a text", default=default)

    def integer(self, raw, key, where, default=MISSING, minimum=1):
        def parse(t):
            if isinstance(t, bool) or not isinstance(t, int) or t < minimum:
                raise ValueError(f"a whole number of at least {minimum}")
            return t

        return self.value(raw, key, where, parse, default=default)

    def assume(self, text: str) -> None:
        self.assumptions.append(text)
