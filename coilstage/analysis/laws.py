"""The physics functions a rule rests on, described for a reader: name, one-line summary and sources
(from each function's docstring), so that ``coilstage rules`` can print them beside each rule."""

from __future__ import annotations

import importlib
import inspect
from dataclasses import dataclass


@dataclass(frozen=True)
class Law:
    name: str  # relative to coilstage.physics, e.g. "thermal.conductor_temperature"
    summary: str  # the first line of its docstring
    references: tuple[str, ...]  # its References section (or the module's), one entry a line


def _references(doc: str) -> list[str]:
    lines = inspect.cleandoc(doc).splitlines()
    out: list[str] = []
    for i, line in enumerate(lines):
        if line.strip() == "References" and i + 1 < len(lines) and set(lines[i + 1].strip()) == {"-"}:
            for ref in lines[i + 2 :]:
                if not ref.strip():
                    break
                if ref.lstrip().startswith(".. ["):
                    out.append(ref.split("]", 1)[1].strip())
                elif out:
                    out[-1] += " " + ref.strip()
    return out


def law(name: str) -> Law:
    """Describe ``coilstage.physics.<name>`` (raises LookupError if there is no such function)."""
    mod_name, _, attr = name.rpartition(".")
    try:
        module = importlib.import_module(f"coilstage.physics.{mod_name}")
        obj = getattr(module, attr)
    except (ImportError, AttributeError):
        raise LookupError(f"no physics function {name}") from None
    doc = inspect.getdoc(obj) or ""
    refs = _references(doc) or _references(module.__doc__ or "")
    return Law(name, doc.splitlines()[0] if doc else "", tuple(refs))


def rule_laws(laws: tuple[str, ...]) -> list[Law]:
    """The laws of a rule (its ``laws`` field), described."""
    return [law(n) for n in laws]
