"""The one reader of a module's imports for the house tests (tests/test_house.py's cycle test and
tests/test_layers.py's layer table): every module name a file imports, anywhere in it (inside
functions, under ``if TYPE_CHECKING``, and ``importlib.import_module`` calls with a literal name), read
with ast; nothing is imported or run."""

from __future__ import annotations

import ast
from pathlib import Path


def imported_names(path: Path, package: str) -> list[tuple[str, str]]:
    """What the module at ``path`` imports, ``package`` being the package it lives in (for relative
    imports): one ``(name, base)`` per imported name. ``from a.b import c`` gives ``("a.b.c", "a.b")``:
    ``a.b.c`` where it is a module, else the name ``c`` of the module ``a.b`` (the caller knows which
    names are modules); ``import a.b`` and ``import_module("a.b")`` give ``("a.b", "a.b")``."""
    out: list[tuple[str, str]] = []
    for n in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(n, ast.ImportFrom):
            base = n.module or ""
            if n.level:  # relative to the package the module is in
                parts = package.split(".")
                base = ".".join(parts[: len(parts) - n.level + 1] + ([base] if base else []))
            out += [(f"{base}.{a.name}", base) for a in n.names]
        elif isinstance(n, ast.Import):
            out += [(a.name, a.name) for a in n.names]
        elif (
            isinstance(n, ast.Call)
            and isinstance(n.func, ast.Attribute)
            and n.func.attr == "import_module"
            and n.args
            and isinstance(n.args[0], ast.Constant)
            and isinstance(n.args[0].value, str)
        ):
            out.append((n.args[0].value, n.args[0].value))
    return out
