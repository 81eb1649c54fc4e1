"""Read a drawing file (TOML) into a :class:`~coilstage.drawing.schema.Drawing`.

Every problem is collected before anything is raised: one :class:`~coilstage.errors.DrawingError`
lists them all, each with its TOML key path, the value found and what was expected. The file is
only ever read.
"""

from __future__ import annotations

import re
import tomllib
from dataclasses import replace
from pathlib import Path

from coilstage import tables
from coilstage.errors import DrawingError, Problem
from coilstage.parts_library import expand_parts

from .coils import read_coils, read_retarder
from .corners import read_corners, read_limits
from .defaults import rows as default_rows
from .environment import read_environment
from .harness import Link, read_harness
from .reader import MAX_NAME, Reader
from .schema import Drawing, DrawingInfo, Duty, Joint, Limits
from .structure import check_structure
from .supply import read_supply
from .switching import read_duty, read_switching
from .tolerances import read_tolerances

#: key path -> the keys allowed there
KEYS = {
    "drawing": {"author", "format", "note", "revision", "title", "vehicle"},
    "tables": {"conductors", "parts"},
}
TOP_KEYS = {
    "drawing",
    "tables",
    "supply",
    "environment",
    "coils",
    "corners",
    "limits",
    "harness",
    "switching",
    "duty",
    "retarder",
    "ac_comparison",
    "tolerances",
}


def load_drawing(path: str | Path, parts_dirs: tuple[str | Path, ...] = ()) -> Drawing:
    """Read and check the drawing at ``path``; raise DrawingError listing every problem.

    ``parts_dirs``: parts libraries (files or folders) given to the run (``--parts DIR``), beside
    the drawing's own ``[tables] parts``.
    """
    p = Path(path)
    try:
        text = p.read_bytes().decode("utf-8-sig")  # a byte-order mark is accepted and dropped
    except OSError as exc:
        raise DrawingError(str(p), [Problem(str(p), "", f"a readable drawing file ({exc.strerror})")]) from None
    except UnicodeDecodeError:
        raise DrawingError(str(p), [Problem(str(p), "", "a UTF-8 text file")]) from None
    return parse_drawing(text, str(p), p.parent, parts_dirs)


_TOML_LINE = re.compile(r"\(at line (\d+), column (\d+)\)")


def parse_drawing(
    text: str, source: str = "<drawing>", base_dir: Path | None = None, parts_dirs: tuple[str | Path, ...] = ()
) -> Drawing:
    """Parse drawing text (TOML); see :func:`load_drawing`."""
    text = text.removeprefix("\ufeff")
    try:
        raw = tomllib.loads(text)
    except RecursionError:
        raise DrawingError(source, [Problem("TOML", "", f"arrays or tables nested at most {MAX_DEPTH} deep")]) from None
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = _TOML_LINE.search(msg)
        where = f"line {m.group(1)}, column {m.group(2)}" if m else "TOML"
        raise DrawingError(source, [Problem(where, "", f"valid TOML ({_TOML_LINE.sub('', msg).strip()})")]) from None
    return parse_data(raw, source, base_dir, parts_dirs)


def parse_data(
    raw: dict, source: str = "<drawing>", base_dir: Path | None = None, parts_dirs: tuple[str | Path, ...] = ()
) -> Drawing:
    """Check drawing data already read from TOML (a dict as :func:`tomllib.loads` returns it; not
    modified) into a Drawing; see :func:`load_drawing`. Sizing uses it to judge candidates without
    writing and re-reading their text."""
    r = Reader(source, base_dir or Path("."))
    deep = _too_deep(raw)
    if deep is not None:
        raise DrawingError(source, [Problem(deep, "", f"arrays or tables nested at most {MAX_DEPTH} deep")])
    raw, provenance, part_problems = expand_parts(raw, r.base_dir, tuple(Path(p) for p in parts_dirs))
    r.problems.extend(part_problems)
    raw, fixed, autos = _sizing_keys(r, raw)
    drawing = _build(r, raw)
    if autos:  # the section parsers' own word on "auto" gives way to the one that says what to do
        r.problems = [p for p in r.problems if p.where not in autos or p.expected == autos[p.where]]
    if r.problems or drawing is None:
        raise DrawingError(source, r.problems)
    refs = {p.where: p.ref for p in provenance}
    elements = tuple(
        replace(e, part=refs[e.where]) if isinstance(e, Joint) and e.where in refs else e for e in drawing.elements
    )
    return replace(
        drawing,
        elements=elements,
        provenance=tuple(provenance),
        fixed=frozenset(fixed),
        defaults_applied=_defaults_applied(r, raw),
    )


# ---------------------------------------------------------------- sections


def _build(r: Reader, raw: dict) -> Drawing | None:
    r.unknown(raw, TOP_KEYS, "")
    head = r.table(raw, "drawing", "drawing", required=False) or {}
    r.unknown(head, KEYS["drawing"], "drawing")
    title = r.text(head, "title", "drawing", default="(untitled drawing)")
    note = r.text(head, "note", "drawing", default="")
    info = DrawingInfo(
        *(r.text(head, k, "drawing", default="") or "" for k in ("revision", "author", "vehicle")), note or ""
    )
    if "format" in head and head["format"] != 1:
        r.problem("drawing.format", head["format"], "1 (the only drawing format so far)")

    tabs = r.table(raw, "tables", "tables", required=False) or {}
    r.unknown(tabs, KEYS["tables"], "tables")
    default_mm2 = tabs.get("conductors", tables.DEFAULT_MM2_TABLE)

    supply = read_supply(r, raw)
    env = read_environment(r, raw)
    coils = read_coils(r, raw, env)
    links: list[Link] = []
    elements = read_harness(r, raw, env, coils, default_mm2, supply, links)
    tolerance_rows, alt_tolerance = read_tolerances(r, raw, supply, coils, elements, env)
    if alt_tolerance is not None and supply is not None and supply.alternator is not None:
        # [tolerances] regulator_setpoint in place of [supply.alternator] tolerance: the cold corner takes it too
        supply = replace(supply, alternator=replace(supply.alternator, tolerance=alt_tolerance))
        r.assumptions = [a for a in r.assumptions if not a.startswith("supply.alternator.tolerance not given")]
    corners = read_corners(r, raw, supply, env)
    limits = read_limits(r, raw)
    stage_ids = [x.id for x in links if x.kind == "stage"]
    switching = read_switching(r, raw, set(stage_ids))
    duty = read_duty(r, raw, stage_ids, switching)
    retarder, ac = read_retarder(r, raw)
    if limits is not None:
        _sizes(r, raw, limits, links, duty)
    if supply is not None and elements is not None:
        check_structure(r, supply, links, elements)
    if r.problems or None in (supply, env, coils, elements, corners, limits, switching, duty):
        return None
    return Drawing(
        title=title or "",
        note=note or "",
        path=r.path,
        supply=supply,
        environment=env,
        coils=coils,
        elements=tuple(elements),
        corners=corners,
        limits=limits,
        switching=switching,
        duty=duty,
        retarder=retarder,
        ac_comparison=ac,
        assumptions=tuple(r.assumptions),
        info=info,
        tolerances=tolerance_rows,
    )


#: Deepest nesting of arrays and tables a drawing may use (the format itself needs four).
MAX_DEPTH = 16


def _too_deep(raw: dict) -> str | None:
    """The key path of the first value nested deeper than MAX_DEPTH, or None (an iterative walk)."""
    todo: list[tuple[object, str, int]] = [(raw, "", 0)]
    while todo:
        value, where, depth = todo.pop()
        if depth > MAX_DEPTH:
            return where or "TOML"
        if isinstance(value, dict):
            todo.extend((v, f"{where}.{k}" if where else str(k), depth + 1) for k, v in value.items())
        elif isinstance(value, list):
            todo.extend((v, f"{where}[{i}]", depth + 1) for i, v in enumerate(value))
    return None


def _sizes(r: Reader, raw: dict, limits: Limits, links: list[Link], duty: Duty | None) -> None:
    """Refuse up front a drawing too large, or a duty too long, for the analysis to finish in
    reasonable time; each message names the limit and how to raise it."""
    stages = sum(1 for x in links if x.kind == "stage")
    if stages > limits.max_stages:
        r.problem(
            "harness",
            f"{stages} stages",
            f"at most {limits.max_stages} stages (raise the limit with [limits] max_stages = {stages})",
        )
    elements = len(raw["harness"]) if isinstance(raw.get("harness"), list) else 0
    if elements > limits.max_elements:
        r.problem(
            "harness",
            f"{elements} elements",
            f"at most {limits.max_elements} elements (raise the limit with [limits] max_elements = {elements})",
        )
    if duty is not None:
        total = sum(s.duration for s in duty.steps)
        if total > limits.max_duty:
            r.problem(
                "duty",
                f"{total:g} s of duty",
                f'a duty of at most {limits.max_duty:g} s (raise the limit with [limits] max_duty = "{total:g} s")',
            )


# ---------------------------------------------------------------- keys for sizing and the parts list

#: The key that keeps a harness element as it is when ``coilstage size`` runs.
FIXED_KEY = "fixed"
#: The word that lets ``coilstage size`` choose a part.
AUTO = "auto"
#: element kind -> key -> what "auto" stands for there (the words of the problem)
AUTO_KEYS = {
    "cable": {"size": "a conductor size"},
    "ground": {"size": "a conductor size"},
    "fuse": {"rating": "a fuse rating"},
    "relay": {"rating_12v": "a contact rating", "rating_24v": "a contact rating"},
    "stage": {"suppression": "a suppression table"},
}


def _element_where(i: int, e: dict) -> str:
    """The key path of harness element ``i`` as the section parsers write it."""
    eid = e.get("id")
    if isinstance(eid, str) and eid.strip() and len(eid) <= MAX_NAME:
        return f"harness[{i}] ({eid})"
    return f"harness[{i}]"


def _sizing_keys(r: Reader, raw: dict) -> tuple[dict, set[str], dict[str, str]]:
    """Take ``fixed`` off every harness element (recording the fixed ids), and answer every
    ``"auto"`` with what to run. Returns the data for the section parsers, the fixed ids, and
    key path -> the expected text of each "auto" problem. ``raw`` is not modified."""
    harness = raw.get("harness")
    if not isinstance(harness, list):
        return raw, set(), {}
    fixed: set[str] = set()
    autos: dict[str, str] = {}
    out: list = []
    for i, e in enumerate(harness):
        if not isinstance(e, dict):
            out.append(e)
            continue
        where = _element_where(i, e)
        if FIXED_KEY in e:
            value = e[FIXED_KEY]
            if not isinstance(value, bool):
                r.problem(f"{where}.{FIXED_KEY}", value, "true or false (true: coilstage size keeps this part)")
            elif value and isinstance(e.get("id"), str):
                fixed.add(e["id"])
            e = {k: v for k, v in e.items() if k != FIXED_KEY}
        kind = e.get("kind")
        for key, what in (AUTO_KEYS.get(kind, {}) if isinstance(kind, str) else {}).items():
            if e.get(key) == AUTO:
                path = f"{where}.{key}"
                expected = f"{what} (run coilstage size DRAWING -o NEW.toml to choose one)"
                r.problem(path, AUTO, expected)
                autos[path] = expected
        out.append(e)
    return {**raw, "harness": out}, fixed, autos


#: element kind -> (key of drawing_defaults.toml, the element's key it fills, when it applies)
_TABLE_DEFAULTS = {
    "fuse": [("fuse.resistance", "resistance", lambda e: True)],
    "relay": [
        ("relay.resistance", "resistance", lambda e: True),
        ("relay.rated_ambient", "rated_ambient", lambda e: True),
        ("relay.coil.rise", "coil.rise", lambda e: isinstance(e.get("coil"), dict)),
    ],
    "stage": [
        (
            "suppression.forward_voltage",
            "suppression.forward_voltage",
            lambda e: (
                isinstance(e.get("suppression"), dict)
                and e["suppression"].get("kind") in ("diode", "diode_zener", "diode_resistor")
            ),
        )
    ],
    "cable": [("cable.wall", "wall", lambda e: "outer_diameter" not in e)],
    "ground": [("cable.wall", "wall", lambda e: "outer_diameter" not in e and "resistance" not in e)],
}


def _has(e: dict, dotted: str) -> bool:
    head, _, rest = dotted.partition(".")
    if not rest:
        return head in e
    return isinstance(e.get(head), dict) and _has(e[head], rest)


def _defaults_applied(r: Reader, raw: dict) -> dict[str, frozenset[str]]:
    """element id -> the keys the loader filled with a default value (the reader's record of keys
    left out that took a default, and the shipped defaults of drawing_defaults.toml the element
    did not write)."""
    out: dict[str, set[str]] = {}
    prefixes: dict[str, str] = {}
    shipped = default_rows()
    for i, e in enumerate(raw.get("harness") or []):
        if not isinstance(e, dict) or not isinstance(e.get("id"), str):
            continue
        eid = e["id"]
        prefixes[_element_where(i, e) + "."] = eid
        keys = out.setdefault(eid, set())
        kind = e.get("kind")
        for table_key, key, applies in _TABLE_DEFAULTS.get(kind, []) if isinstance(kind, str) else []:
            if table_key in shipped and applies(e) and not _has(e, key):
                keys.add(key)
    for path in r.defaulted:
        for prefix, eid in prefixes.items():
            if path.startswith(prefix):
                out[eid].add(path[len(prefix) :])
                break
    return {eid: frozenset(keys) for eid, keys in out.items()}
