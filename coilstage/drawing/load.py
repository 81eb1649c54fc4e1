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
from .schema import (
    Drawing,
)
from .structure import check_structure
from .supply import read_supply
from .switching import read_duty, read_switching

#: key path -> the keys allowed there
KEYS = {
    "drawing": {"format", "note", "title"},
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
        text = p.read_text(encoding="utf-8")
    except OSError as exc:
        raise DrawingError(str(p), [Problem(str(p), "", f"a readable drawing file ({exc.strerror})")]) from None
    except UnicodeDecodeError:
        raise DrawingError(str(p), [Problem(str(p), "", "a UTF-8 text file")]) from None
    return parse_drawing(text, str(p), p.parent)


_TOML_LINE = re.compile(r"\(at line (\d+), column (\d+)\)")


def parse_drawing(text: str, source: str = "<drawing>", base_dir: Path | None = None) -> Drawing:
    """Parse drawing text (TOML); see :func:`load_drawing`."""
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = _TOML_LINE.search(msg)
        where = f"line {m.group(1)}, column {m.group(2)}" if m else "TOML"
        raise DrawingError(source, [Problem(where, "", f"valid TOML ({_TOML_LINE.sub('', msg).strip()})")]) from None
    r = Reader(source, base_dir or Path("."))
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
    )
