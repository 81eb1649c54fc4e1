"""House rules for coilstage/physics, read from the source with ast (nothing is imported or run):

* every public function, class and method of ``coilstage/physics`` is used by the program, that is by
  something in ``coilstage/`` other than itself, its own docstring and the tests (DEVELOPERS.md, *How to
  add a physics model*: a function nothing in the program calls is deleted, not kept for its test);
* every public function and method there annotates each parameter and its return (the package is
  marked typed, PEP 561, so a caller's type checker reads these signatures);
* ``coilstage/py.typed`` exists and ``pyproject.toml`` ships it.

Each detector is also run on a small package written here, so that a test that could not fail would
show.
"""

from __future__ import annotations

import ast
import tomllib
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "coilstage"

#: Public physics names the program may leave uncalled, each with its reason. Keep it short: a law
#: nothing calls is deleted (or the program made to call it), not listed here.
ALLOWED_UNUSED: dict[str, str] = {}


@dataclass(frozen=True)
class Definition:
    module: str  # the physics module's file stem, e.g. "thermal"
    name: str  # "conductor_temperature", "BHCurve" or "BHCurve.knee"
    node: ast.FunctionDef | ast.AsyncFunctionDef | ast.ClassDef
    path: Path

    @property
    def label(self) -> str:
        return f"{self.module}.{self.name}"

    @property
    def public(self) -> bool:
        return all(not part.startswith("_") or part == "__init__" for part in self.name.split("."))


def _definitions(physics: Path) -> list[Definition]:
    """Top-level functions and classes of each physics module and the methods of those classes
    (private ones too: a private function carries a use of a public law only while it is used itself;
    dunder methods other than ``__init__`` are the language's, not the program's)."""
    out: list[Definition] = []
    for path in sorted(physics.glob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in tree.body:
            if isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef | ast.ClassDef):
                out.append(Definition(path.stem, node.name, node, path))
                if isinstance(node, ast.ClassDef):
                    for m in node.body:
                        if isinstance(m, ast.FunctionDef | ast.AsyncFunctionDef) and (
                            not m.name.startswith("__") or m.name == "__init__"
                        ):
                            out.append(Definition(path.stem, f"{node.name}.{m.name}", m, path))
    return out


def _module_name(path: Path, package: Path) -> str:
    return ".".join(path.relative_to(package.parent).with_suffix("").parts)


def _uses(package: Path, physics: Path, defs: list[Definition]) -> dict[str, set[str]]:
    """For each definition (by label), who uses it: ``"<module>"`` for a module outside physics or
    the module-level code of a physics module, ``"<physics label>"`` for the physics definition whose
    body uses it. A use is a name loaded (through its import, or in its own module), an attribute of
    an imported physics module, or for a method any attribute of its name; an import alone, a
    docstring or a comment is no use."""
    by_module: dict[str, dict[str, Definition]] = {}
    methods: dict[str, list[Definition]] = {}
    for d in defs:
        if "." in d.name:
            methods.setdefault(d.name.split(".", 1)[1], []).append(d)
        else:
            by_module.setdefault(d.module, {})[d.name] = d
    uses: dict[str, set[str]] = {d.label: set() for d in defs}
    for path in sorted(package.rglob("*.py")):
        _scan(path, package, physics, by_module, methods, uses)
    return uses


def _scan(
    path: Path,
    package: Path,
    physics: Path,
    by_module: dict[str, dict[str, Definition]],
    methods: dict[str, list[Definition]],
    uses: dict[str, set[str]],
) -> None:
    """Add the uses one source file makes to ``uses`` (see :func:`_uses`)."""
    pkg = package.name
    tree = ast.parse(path.read_text(encoding="utf-8"))
    in_physics = path.parent == physics
    here = _module_name(path, package)
    names: dict[str, Definition] = dict(by_module.get(path.stem, {})) if in_physics else {}
    modules: dict[str, str] = {}  # local name -> physics module stem
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            mod = node.module or ""
            if in_physics and node.level == 1:
                mod = f"{pkg}.physics.{mod}" if mod else f"{pkg}.physics"
            if mod.startswith(f"{pkg}.physics."):
                stem = mod.rsplit(".", 1)[1]
                for a in node.names:
                    if a.name in by_module.get(stem, {}):
                        names[a.asname or a.name] = by_module[stem][a.name]
            elif mod == f"{pkg}.physics":
                for a in node.names:
                    modules[a.asname or a.name] = a.name
        elif isinstance(node, ast.Import):
            for a in node.names:
                if a.name.startswith(f"{pkg}.physics.") and a.asname:
                    modules[a.asname] = a.name.rsplit(".", 1)[1]

    def visit(node: ast.AST, owner: str) -> None:
        for child in ast.iter_child_nodes(node):
            who = owner
            if in_physics and isinstance(child, ast.FunctionDef | ast.AsyncFunctionDef | ast.ClassDef):
                if node is tree:
                    who = f"{path.stem}.{child.name}"
                elif isinstance(node, ast.ClassDef) and f"{owner}.{child.name}" in uses:
                    who = f"{owner}.{child.name}"
            hit: list[Definition] = []
            if isinstance(child, ast.Name) and isinstance(child.ctx, ast.Load) and child.id in names:
                hit.append(names[child.id])
            elif isinstance(child, ast.Attribute):
                if isinstance(child.value, ast.Name) and child.value.id in modules:
                    d = by_module.get(modules[child.value.id], {}).get(child.attr)
                    if d is not None:
                        hit.append(d)
                hit += methods.get(child.attr, [])
            for d in hit:
                if who != d.label:
                    uses[d.label].add(who)
            visit(child, who)

    visit(tree, here)


def unused(package: Path) -> list[str]:
    """Labels of the public physics definitions nothing in ``package`` uses, directly or through a
    chain of physics definitions that ends in the program: a law used only by an unused one is
    unused too, and so is a method of an unused class. ``__init__`` lives with its class."""
    physics = package / "physics"
    defs = _definitions(physics)
    uses = _uses(package, physics, defs)
    labels = {d.label for d in defs}
    for d in defs:
        if d.name.endswith(".__init__"):
            uses[d.label].add(d.label.rsplit(".", 1)[0])  # constructing the class runs it
    dead: set[str] = set()
    while True:
        more = set()
        for label, who in uses.items():
            if label in dead:
                continue
            cls = label.rsplit(".", 1)[0] if label.count(".") == 2 else None
            live = {w for w in who if w not in dead and w != label}
            if not live or (cls is not None and cls in dead):
                more.add(label)
        if not more:
            break
        dead |= more
    public = {d.label for d in defs if d.public}
    return sorted(dead & public & labels)


def missing_annotations(physics: Path) -> list[str]:
    """``module.function: what`` for each public physics function or method (``__init__`` included)
    without an annotation on a parameter (``self``/``cls`` aside) or on its return."""
    out = []
    for d in _definitions(physics):
        if isinstance(d.node, ast.ClassDef) or not d.public:
            continue
        a = d.node.args
        params = [*a.posonlyargs, *a.args, *a.kwonlyargs]
        if "." in d.name and params and params[0].arg in ("self", "cls"):
            params = params[1:]
        bare = [p.arg for p in params if p.annotation is None]
        bare += [f"*{v.arg}" for v in (a.vararg, a.kwarg) if v is not None and v.annotation is None]
        if d.node.returns is None:
            bare.append("return")
        if bare:
            out.append(f"{d.label}: {', '.join(bare)} ({d.path.name}:{d.node.lineno})")
    return out


# ---------------------------------------------------------------- the package itself


def test_every_public_physics_function_is_used_by_the_program():
    dead = [x for x in unused(PACKAGE) if x not in ALLOWED_UNUSED]
    assert not dead, (
        "public physics nothing in coilstage/ uses (delete it with the tests that only exercise it, "
        f"or make the program call it): {dead}"
    )


def test_the_allow_list_holds_only_what_is_still_unused():
    stale = sorted(set(ALLOWED_UNUSED) - set(unused(PACKAGE)))
    assert not stale, f"used now, take off ALLOWED_UNUSED: {stale}"


def test_every_public_physics_function_is_annotated():
    missing = missing_annotations(PACKAGE / "physics")
    assert not missing, f"public physics without annotations: {missing}"


def test_the_package_is_marked_typed_and_ships_the_marker():
    # PEP 561: a package is typed by a py.typed file inside it, which must be in the distribution.
    assert (PACKAGE / "py.typed").is_file()
    project = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    setuptools = project["tool"]["setuptools"]
    assert "coilstage" in setuptools["packages"]
    assert "py.typed" in setuptools["package-data"]["coilstage"]


# ---------------------------------------------------------------- the detectors can fail


def _package(tmp_path: Path, physics: dict[str, str], program: dict[str, str]) -> Path:
    pkg = tmp_path / "coilstage"
    (pkg / "physics").mkdir(parents=True)
    (pkg / "__init__.py").write_text("")
    (pkg / "physics" / "__init__.py").write_text("")
    for name, text in physics.items():
        (pkg / "physics" / f"{name}.py").write_text(text)
    for name, text in program.items():
        (pkg / f"{name}.py").write_text(text)
    return pkg


LAWS = '''
def used(x: float) -> float:
    """A law the program calls; :func:`dead` in a docstring is no use."""
    return inner(x)


def inner(x: float) -> float:
    return 2 * x


def only_for_dead(x: float) -> float:
    return x


def dead(x: float) -> float:
    return only_for_dead(x)


def _private_nobody_calls(x: float) -> float:
    return kept_by_a_dead_private_one(x)


def kept_by_a_dead_private_one(x: float) -> float:
    return x


class Curve:
    def read(self, h: float) -> float:
        return h

    def never(self, h: float) -> float:
        return h


def bare(x, y: int):
    return x
'''

PROGRAM = """
from coilstage.physics.laws import Curve, bare, dead, used
from coilstage.physics import laws as L


def run():
    c = Curve()
    return used(1.0) + c.read(2.0) + bare(1, 2)


TEXT = "laws.dead is named here only in a string"
"""


def test_the_unused_detector_finds_dead_laws(tmp_path):
    pkg = _package(tmp_path, {"laws": LAWS}, {"program": PROGRAM})
    # dead is imported but never called; only_for_dead is called only by dead; never has no caller;
    # kept_by_a_dead_private_one only by a private function nothing calls.
    assert unused(pkg) == ["laws.Curve.never", "laws.dead", "laws.kept_by_a_dead_private_one", "laws.only_for_dead"]
    # Called through the module alias, dead comes alive (and with it only_for_dead).
    (pkg / "other.py").write_text("from coilstage.physics import laws as L\n\nX = L.dead(1.0)\n")
    assert unused(pkg) == ["laws.Curve.never", "laws.kept_by_a_dead_private_one"]


def test_the_annotation_detector_finds_bare_parameters_and_returns(tmp_path):
    pkg = _package(tmp_path, {"laws": LAWS}, {})
    missing = missing_annotations(pkg / "physics")
    assert len(missing) == 1 and missing[0].startswith("laws.bare: x, return ")
