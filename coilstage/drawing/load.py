"""Read a drawing file (TOML) into a :class:`~coilstage.drawing.schema.Drawing`.

Every problem is collected before anything is raised: one :class:`~coilstage.errors.DrawingError`
lists them all, each with its TOML key path, the value found and what was expected. The file is
only ever read.
"""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

from coilstage import tables
from coilstage.errors import DrawingError, Problem

from .coils import read_coils, read_retarder
from .corners import read_corners, read_limits
from .environment import read_environment
from .harness import Link, read_harness
from .reader import Reader
from .schema import Drawing, DrawingInfo, Duty, Limits
from .structure import check_structure
from .supply import read_supply
from .switching import read_duty, read_switching

#: key path -> the keys allowed there
KEYS = {
    "drawing": {"author", "format", "note", "revision", "title", "vehicle"},
    "tables": {"conductors"},
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
}


def load_drawing(path: str | Path) -> Drawing:
    """Read and check the drawing at ``path``; raise DrawingError listing every problem."""
    p = Path(path)
    try:
        text = p.read_bytes().decode("utf-8-sig")  # a byte-order mark is accepted and dropped
    except OSError as exc:
        raise DrawingError(str(p), [Problem(str(p), "", f"a readable drawing file ({exc.strerror})")]) from None
    except UnicodeDecodeError:
        raise DrawingError(str(p), [Problem(str(p), "", "a UTF-8 text file")]) from None
    return parse_drawing(text, str(p), p.parent)


_TOML_LINE = re.compile(r"\(at line (\d+), column (\d+)\)")


def parse_drawing(text: str, source: str = "<drawing>", base_dir: Path | None = None) -> Drawing:
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
    r = Reader(source, base_dir or Path("."))
    deep = _too_deep(raw)
    if deep is not None:
        raise DrawingError(source, [Problem(deep, "", f"arrays or tables nested at most {MAX_DEPTH} deep")])
    drawing = _build(r, raw)
    if r.problems or drawing is None:
        raise DrawingError(source, r.problems)
    return drawing


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
