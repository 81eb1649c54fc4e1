"""coilstage/analysis is built in layers: each module imports only from the lines above its own (never
from its own line or a lower one). The layer table below is the diagram of analysis/run.py's
docstring and DEVELOPERS.md as a test; the imports are read from the source with ast (imports inside
functions count, and so do ``importlib.import_module`` calls with a literal name), nothing is run.

A new module of analysis/ needs a line here: on the line below the lowest module it imports.
"""

from __future__ import annotations

from pathlib import Path

from .imports import imported_names

ROOT = Path(__file__).resolve().parents[1]
ANALYSIS = ROOT / "coilstage" / "analysis"
PACKAGE = "coilstage.analysis"

#: The layers of coilstage/analysis, top (imports no other analysis module) to bottom.
LAYERS: tuple[tuple[str, ...], ...] = (
    ("circuit",),  # the drawing's network: node numbering, element resistances at given temperatures
    ("quasistatic",),  # DC solves of that network
    ("materials", "insulation"),  # conductor metals, the insulation's short-circuit limit
    ("tolerances",),  # the tolerance rows in force
    ("conditions",),  # what each operating case is: temperatures and source states
    ("linear",),  # one case's energised network as an RL system
    ("topology", "unfused"),  # what a fuse cuts off, which stages a relay switches; unfused feed length
    ("corners", "switching", "duty"),  # views of the drawing on the networks of the cases
    ("field", "ratings", "drops", "fuse_duty"),  # views built on the corners (and the switching, the duty)
    ("worst",),  # each rule's own worst case, on the corners and the field
    ("overvoltage", "cyclic", "joints", "ground", "relay_coil", "load_dump"),
    ("contacts",),  # each relay's break, load-dump contact voltage, arc and coil (on relay_coil, load_dump)
    ("params",),  # the declared parameters and the vectorised evaluator of the margins
    ("sensitivities",),  # dm/dp and the worst corner, on params
    ("laws",),  # the physics functions a rule rests on
    ("run",),  # analyse(drawing) -> Analysis
)


def analysis_imports(folder: Path, package: str = PACKAGE) -> dict[str, set[str]]:
    """Module stem -> the stems of the other modules of ``folder`` (the package ``package``) it
    imports, anywhere in its file."""
    modules = {p.stem for p in folder.glob("*.py") if p.stem != "__init__"}
    out: dict[str, set[str]] = {}
    for stem in sorted(modules):
        found: set[str] = set()
        for full, base in imported_names(folder / f"{stem}.py", package):
            name = full if base == package else base
            parts = name.split(".")
            prefix = package.split(".")
            if parts[: len(prefix)] == prefix and len(parts) > len(prefix) and parts[len(prefix)] in modules:
                found.add(parts[len(prefix)])
        found.discard(stem)
        out[stem] = found
    return out


def layer_violations(layers: tuple[tuple[str, ...], ...], imports: dict[str, set[str]]) -> list[str]:
    """Each module that imports one on its own line or a lower one, each module in no line (or in
    two), and each line's module that does not exist."""
    line: dict[str, int] = {}
    out = []
    for k, names in enumerate(layers, start=1):
        for m in names:
            if m in line:
                out.append(f"{m}: on lines {line[m]} and {k}")
            line.setdefault(m, k)
    out += [f"{m}: on line {line[m]} but no such module" for m in line if m not in imports]
    out += [f"{m}: on no line of the layer table" for m in sorted(imports) if m not in line]
    for m in sorted(imports):
        if m not in line:
            continue
        for t in sorted(imports[m]):
            if t in line and line[t] >= line[m]:
                where = "its own line" if line[t] == line[m] else f"a lower line ({line[t]})"
                out.append(f"{m} (line {line[m]}) imports {t}, on {where}")
    return out


def test_each_analysis_module_imports_only_from_the_lines_above_it():
    problems = layer_violations(LAYERS, analysis_imports(ANALYSIS))
    assert not problems, "analysis/ layers broken:\n" + "\n".join(problems)


def test_the_reader_sees_the_imports_the_layers_rest_on():
    # the table is held against real edges: these imports are in the package today, and the reader
    # must see them (ratings and worst read the corners; sensitivities is built on params)
    imports = analysis_imports(ANALYSIS)
    assert {"corners", "switching"} <= imports["ratings"]
    assert {"corners", "field"} <= imports["worst"]
    assert "params" in imports["sensitivities"]
    assert "circuit" in imports["quasistatic"]


def test_the_checker_catches_a_made_up_violation(tmp_path):
    # a made-up package of four modules: mid imports top (allowed), top imports mid inside a function
    # (upward), low imports its line's neighbour by a relative import and mid through importlib
    # (sideways, upward), and stray is on no line
    pkg = tmp_path / "made_up"
    pkg.mkdir()
    (pkg / "__init__.py").write_text("")
    (pkg / "top.py").write_text("def f():\n    from made_up.mid import g\n    return g\n")
    (pkg / "mid.py").write_text("from made_up import top\n\n\ndef g():\n    return top\n")
    (pkg / "low.py").write_text(
        "import importlib\n\nfrom .side import x\n\nM = importlib.import_module('made_up.mid')\n"
    )
    (pkg / "side.py").write_text("x = 1\n")
    (pkg / "stray.py").write_text("import made_up.top\n")
    imports = analysis_imports(pkg, "made_up")
    assert imports == {"top": {"mid"}, "mid": {"top"}, "low": {"side", "mid"}, "side": set(), "stray": {"top"}}
    layers = (("top",), ("mid",), ("low", "side"), ("gone",))
    assert layer_violations(layers, imports) == [
        "gone: on line 4 but no such module",
        "stray: on no line of the layer table",
        "low (line 3) imports side, on its own line",
        "top (line 1) imports mid, on a lower line (2)",
    ]
    # without top's upward import, the same package in a correct order passes
    assert layer_violations((("side", "top"), ("mid",), ("low", "stray")), {**imports, "top": set()}) == []
