"""The house rules of the package, kept by a test: no import cycle (imports inside functions count, and
so do ``importlib.import_module`` calls with a literal name), and checks/ and report/ import nothing
from coilstage.physics (they compare and format figures the analysis made)."""

from __future__ import annotations

import collections
import pathlib
import re
import subprocess

import coilstage

from .imports import imported_names

PACKAGE = pathlib.Path(coilstage.__file__).parent

#: Dynamic imports that stand for a module's old place while callers move, each with its reason.
#: An entry here is a known, temporary edge that the cycle test leaves out; delete it with the shim.
TEMPORARY_FORWARDS: dict[tuple[str, str], str] = {}


def _modules() -> dict[str, pathlib.Path]:
    out = {}
    for p in PACKAGE.rglob("*.py"):
        parts = ("coilstage", *p.relative_to(PACKAGE).with_suffix("").parts)
        out[".".join(parts).removesuffix(".__init__")] = p
    return out


def import_graph() -> dict[str, set[str]]:
    """Module -> the package modules it imports (anywhere in the file)."""
    mods = _modules()
    edges: dict[str, set[str]] = collections.defaultdict(set)
    for m, p in mods.items():
        pkg = m if p.name == "__init__.py" else m.rsplit(".", 1)[0]
        for name, base in imported_names(p, pkg):
            t = name if name in mods else base
            if t in mods and t not in (m, "coilstage") and (m, t) not in TEMPORARY_FORWARDS:
                edges[m].add(t)
    return edges


def _cycles(edges: dict[str, set[str]]) -> list[str]:
    def reach(a: str) -> set[str]:
        seen, todo = set(), [a]
        while todo:
            for b in edges[todo.pop()]:
                if b not in seen:
                    seen.add(b)
                    todo.append(b)
        return seen

    return sorted(m for m in list(edges) if m in reach(m))


def test_the_cycle_finder_finds_a_cycle():
    # the check itself can fail: a made-up graph with a two-module cycle through a function-level import
    g = collections.defaultdict(set, {"a": {"b"}, "b": {"a"}, "c": {"a"}})
    assert _cycles(g) == ["a", "b"]


def test_no_import_cycle_in_the_package():
    edges = import_graph()
    assert edges["coilstage.analysis.run"], "the graph was not read"
    assert _cycles(edges) == []


def test_checks_and_reports_import_no_physics():
    edges = import_graph()
    bad = sorted(
        f"{m} -> {t}"
        for m, ts in edges.items()
        for t in ts
        if m.startswith(("coilstage.checks", "coilstage.report")) and t.startswith("coilstage.physics")
    )
    assert bad == []


def test_temporary_forwards_still_exist():
    # a stale entry would hide a real edge: every listed forward must still be in its module
    for (m, t), _why in TEMPORARY_FORWARDS.items():
        path = _modules()[m]
        assert f'"{t}"' in path.read_text(encoding="utf-8"), (m, t)


#: Rules that compare stated ratings or table values alone, with no physics function behind them.
PLAIN_COMPARISONS = {"cable.temperature_class", "cable.ahead_of_fuse", "fuse.voltage_rating"}


def test_every_rule_names_the_physics_it_rests_on():
    from coilstage.analysis.laws import rule_laws
    from coilstage.checks import RULES

    for rule in RULES:
        if rule.id in PLAIN_COMPARISONS:
            assert rule.laws == (), rule.id
            continue
        assert rule.laws, f"{rule.id} names no physics function"
        for law in rule_laws(rule.laws):
            assert law.summary, law.name
            assert law.references, f"{law.name} cites no source (its own or its module's References)"


#: Words that name where a piece of work came from rather than what it does (a tracker's numbers, who
#: wrote it): the repository explains itself in its own terms.
_PROVENANCE = re.compile(r"\bissues? ?#?\d+(\.\d+)?\b|\bhelper [A-Z]\w*\b|\bH\d+\b \(", re.IGNORECASE)


def test_no_file_names_or_says_where_its_work_came_from():
    root = PACKAGE.parent
    tracked = subprocess.run(["git", "ls-files"], cwd=root, capture_output=True, text=True, check=False).stdout.split()
    if not tracked:  # not a git checkout (an installed copy): the package and tests beside it
        tracked = [str(p.relative_to(root)) for p in root.rglob("*") if p.is_file() and ".git" not in p.parts]
    found = []
    for rel in tracked:
        if re.search(r"issue|helper", pathlib.PurePath(rel).name, re.IGNORECASE):
            found.append(f"{rel}: file name")
        p = root / rel
        if p.suffix not in {".py", ".md", ".toml", ".txt", ".json", ".csv", ""} or not p.is_file():
            continue
        for k, line in enumerate(p.read_text(encoding="utf-8", errors="replace").splitlines(), 1):
            if _PROVENANCE.search(line):
                found.append(f"{rel}:{k}: {line.strip()[:80]}")
    assert not found, "\n".join(found)
