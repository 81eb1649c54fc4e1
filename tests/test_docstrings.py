"""The physics docstring template, kept by a test.

Every public function of a conforming physics module documents: a one-line summary, the equation
(a ``.. math::`` block), ``Parameters`` naming exactly the signature's parameters in order, each with its
unit in brackets, ``Returns`` with its unit, ``Notes`` (the validity range), ``Examples`` (a doctest) and
``References`` (the primary source). DEVELOPERS.md shows the template.

Every module of coilstage/physics is checked (a new module is checked as soon as it exists), and the
template check itself is shown to catch each kind of lapse on small functions written here.
"""

from __future__ import annotations

import doctest
import importlib
import inspect
import pathlib
import re

import pytest

import coilstage.physics

PHYSICS = pathlib.Path(coilstage.physics.__file__).parent

MODULES = sorted(f"coilstage.physics.{p.stem}" for p in PHYSICS.glob("*.py") if p.stem != "__init__")

SECTIONS = ("Parameters", "Returns", "Notes", "Examples", "References")
_HEADER = re.compile(r"^(\w[\w ]*)\n-{3,}$", re.MULTILINE)
_PARAM = re.compile(r"^(\w+)\s*:\s*\S.*$")


def _sections(doc: str) -> dict[str, str]:
    heads = list(_HEADER.finditer(doc))
    return {
        m.group(1): doc[m.end() : heads[i + 1].start() if i + 1 < len(heads) else len(doc)] for i, m in enumerate(heads)
    }


def template_problems(func) -> list[str]:
    """What ``func``'s docstring lacks of the template (empty: it conforms)."""
    doc = inspect.getdoc(func) or ""
    out = []
    if not doc.strip() or not doc.splitlines()[0].strip():
        out.append("no summary line")
    if ".. math::" not in doc:
        out.append("no equation (.. math::)")
    sec = _sections(doc)
    out += [f"no {s} section" for s in SECTIONS if s not in sec]
    if "Parameters" in sec:
        entries: list[tuple[str, list[str]]] = []
        for line in sec["Parameters"].splitlines():
            m = _PARAM.match(line)
            if m:
                entries.append((m.group(1), []))
            elif entries and line.strip():
                entries[-1][1].append(line.strip())
        names = [n for n, _ in entries]
        want = [p for p in inspect.signature(func).parameters if p not in ("self", "cls")]
        if names != want:
            out.append(f"documented parameters {names} differ from the signature {want}")
        out += [
            f"parameter {n} has no unit in brackets" for n, text in entries if not re.search(r"\[.+\]", " ".join(text))
        ]
    if "Returns" in sec and not re.search(r"\[.+\]", sec["Returns"]):
        out.append("Returns gives no unit in brackets")
    if "Examples" in sec and ">>>" not in sec["Examples"]:
        out.append("Examples has no doctest")
    return out


def public_functions(module_name: str):
    mod = importlib.import_module(module_name)
    return [
        (n, f)
        for n, f in inspect.getmembers(mod, inspect.isfunction)
        if not n.startswith("_") and f.__module__ == module_name
    ]


def test_the_physics_modules_are_found():
    # the glob must see the package's physics modules (an empty list would check nothing)
    assert {"coilstage.physics.conductor", "coilstage.physics.network", "coilstage.physics.joints"} <= set(MODULES)


@pytest.mark.parametrize("module_name", MODULES)
def test_physics_modules_follow_the_template(module_name):
    funcs = public_functions(module_name)
    assert funcs
    problems = {n: p for n, f in funcs if (p := template_problems(f))}
    assert not problems


@pytest.mark.parametrize("module_name", MODULES)
def test_physics_modules_examples_run(module_name):
    r = doctest.testmod(importlib.import_module(module_name))
    assert r.attempted > 0 and r.failed == 0


def test_the_template_check_catches_a_bare_docstring():
    def bare(a: float, b: float) -> float:
        """Summary only."""
        return a * b

    problems = template_problems(bare)
    assert "no equation (.. math::)" in problems
    assert {f"no {s} section" for s in SECTIONS} <= set(problems)


def test_the_template_check_catches_a_missing_unit_and_doctest():
    def unitless(a: float) -> float:
        r"""Summary.

        .. math:: y = 2a

        Parameters
        ----------
        a : float
            No unit here.

        Returns
        -------
        float
            Nor here.

        Notes
        -----
        Always.

        Examples
        --------
        Words, no doctest.

        References
        ----------
        None.
        """
        return 2 * a

    problems = template_problems(unitless)
    assert "parameter a has no unit in brackets" in problems
    assert "Returns gives no unit in brackets" in problems
    assert "Examples has no doctest" in problems


def test_the_template_check_catches_a_wrong_parameter_list():
    def wrong(a: float, b: float) -> float:
        r"""Summary.

        .. math:: y = a b

        Parameters
        ----------
        a : float
            First. [m]
        c : float
            Not in the signature. [s]

        Returns
        -------
        float
            Product. [m·s]

        Notes
        -----
        Always.

        Examples
        --------
        >>> wrong(1, 2)
        2

        References
        ----------
        None.
        """
        return a * b

    assert any("differ from the signature" in p for p in template_problems(wrong))
