"""Public functions carry type hints: every public function and method of the modules listed in
``COVERED`` annotates each parameter (``self``/``cls`` aside) and its return, read from the source
with ast (nothing is imported or run). A name is public when it does not start with ``_``;
``__init__`` of a public class counts too (it is how the class is called). coilstage/physics has its
own test of the same rule (tests/test_no_dead_code.py) and is left out here.
"""

from __future__ import annotations

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "coilstage"

#: The modules this test holds to the rule, relative to coilstage/: every module of the package but
#: coilstage/physics (its own test, tests/test_no_dead_code.py, holds the same rule there).
COVERED = ("*.py", "analysis/*.py", "checks/*.py", "data/*.py", "drawing/*.py", "report/*.py")


def covered_files(package: Path, covered: tuple[str, ...] = COVERED) -> list[Path]:
    out: list[Path] = []
    for pattern in covered:
        found = sorted(package.glob(pattern))
        assert found, f"{pattern}: no such module under {package}"
        out.extend(found)
    return out


def _public(name: str) -> bool:
    return not name.startswith("_") or name == "__init__"


def missing_annotations(path: Path) -> list[str]:
    """``file:line name: what`` for each public top-level function and each public method of a public
    top-level class in ``path`` that leaves a parameter or its return without an annotation."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    found: list[tuple[str, ast.FunctionDef | ast.AsyncFunctionDef, bool]] = []
    for node in tree.body:
        if isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef) and _public(node.name):
            found.append((node.name, node, False))
        elif isinstance(node, ast.ClassDef) and not node.name.startswith("_"):
            for m in node.body:
                if isinstance(m, ast.FunctionDef | ast.AsyncFunctionDef) and _public(m.name):
                    found.append((f"{node.name}.{m.name}", m, True))
    out = []
    for name, fn, method in found:
        a = fn.args
        params = [*a.posonlyargs, *a.args, *a.kwonlyargs]
        is_static = any(isinstance(d, ast.Name) and d.id == "staticmethod" for d in fn.decorator_list)
        if method and not is_static and params and params[0].arg in ("self", "cls"):
            params = params[1:]
        bare = [p.arg for p in params if p.annotation is None]
        bare += [f"*{v.arg}" for v in (a.vararg, a.kwarg) if v is not None and v.annotation is None]
        if fn.returns is None:
            bare.append("return")
        if bare:
            out.append(f"{path.name}:{fn.lineno} {name}: {', '.join(bare)}")
    return out


def test_every_public_function_of_the_covered_modules_is_annotated():
    missing = [m for p in covered_files(PACKAGE) for m in missing_annotations(p)]
    assert not missing, "public functions without annotations:\n" + "\n".join(missing)


def test_the_covered_list_leaves_physics_to_its_own_test():
    assert not [p for p in covered_files(PACKAGE) if "physics" in p.relative_to(PACKAGE).parts]


def test_the_covered_list_is_every_module_outside_physics():
    every = {p for p in PACKAGE.rglob("*.py") if "physics" not in p.relative_to(PACKAGE).parts}
    assert every == set(covered_files(PACKAGE)), sorted(str(p) for p in every - set(covered_files(PACKAGE)))


def test_the_detector_finds_bare_parameters_and_returns(tmp_path):
    # the scan itself can fail: a made-up module with each kind of gap, and the forms it must let pass
    src = tmp_path / "made_up.py"
    src.write_text(
        "def bare(x, y: int):\n    return x\n\n"
        "def ok(x: int, *args: str, **kw: float) -> int:\n    return x\n\n"
        "def star(x: int, *args, **kw) -> None:\n    pass\n\n"
        "def _private(x):\n    return x\n\n"
        "class Public:\n"
        "    def __init__(self, a):\n        self.a = a\n\n"
        "    def method(self, b: int) -> int:\n        return b\n\n"
        "    def no_return(self):\n        pass\n\n"
        "    @staticmethod\n"
        "    def tool(self) -> None:\n        pass\n\n"
        "    def _hidden(self, c):\n        pass\n\n"
        "class _Private:\n    def method(self, d):\n        pass\n",
        encoding="utf-8",
    )
    assert missing_annotations(src) == [
        "made_up.py:1 bare: x, return",
        "made_up.py:7 star: *args, *kw",
        "made_up.py:14 Public.__init__: a, return",
        "made_up.py:20 Public.no_return: return",
        "made_up.py:24 Public.tool: self",
    ]
