"""Wire lists: a harness as a spreadsheet, read into a drawing and written back out.

``coilstage import WIRELIST.csv -o DRAWING.toml [--base BASE]`` turns a wire list (CSV, or .xlsx
with the optional ``openpyxl``) into a drawing; ``coilstage export DRAWING -o WIRELIST.csv`` writes
the wire list of a drawing (what ``import --base DRAWING`` reads back) and its build list: cable
lengths per size and insulation class, parts per type and rating.

The wire list
-------------
One row per harness element; the first row names the columns. Row numbers are the spreadsheet's
(the header is row 1). Empty rows, and rows whose first cell starts with ``#``, are skipped. The
delimiter may be a comma, a semicolon or a tab (found from the header); with a semicolon a decimal
comma in a quantity (``2,4 m``) is read as a decimal point. Text is UTF-8 (a spreadsheet's
"CSV UTF-8"). An empty cell means the key is not given (the loader's default applies).

Columns (every one but ``id``, ``kind``, ``from``, ``to`` optional; a row uses those of its kind):

=========================== ==================================================================
column                      meaning (the drawing key it becomes)
=========================== ==================================================================
id, kind, from, to          element id; kind (cable, ground, joint, busbar, fuse, relay,
                            stage); its two nodes, ``from`` on the supply side
size                        conductor size: ``16 mm²``, ``6 AWG``, ``1/0 AWG``
length                      cable length
insulation                  ISO 6722 temperature class letter (A … H)
zone                        zone name from the base's ``[environment.zones]``
bundle                      loaded conductors in the bundle (a whole number)
role                        ``feed`` or ``return`` (cables)
sheathed                    yes / no
material, conductor_table,  as in the drawing
outer_diameter, wall,
insulation_material
length_tolerance            a cable's length tolerance: ``10 %`` or ``0.3 m`` (±), ``-5 % .. +10 %``
                            (low .. high; % and m may be mixed), a bare number a ratio
                            (``0.05``); either form may end in ``(normal)`` or ``(uniform)``, the
                            distribution of the tolerance sweep (``±0.3 m (uniform)``).
                            ``length_tolerance [%]`` gives bare numbers that unit
type                        fuse type (ISO 8820: F, C, E, L, N, A, B, SF30, SF51, single-bolt)
rating                      fuse rating; for a relay, its contact rating at the base's system
                            voltage (becomes rating_24v or rating_12v)
voltage_rating,             as in the drawing
breaking_capacity,
melting_i2t
cyclic_factor               a fuse maker's cyclic derating: a ratio (``0.8``) or ``80 %``
cyclic_cycles               the switchings that factor is rated for (a whole number)
protects                    cable ids the fuse protects, separated by ``;``
gates                       a fuse maker's time-current gates: ``2x 1 s..60 s; 3.5x 0.1 s..5 s``
                            (multiple of the rating, shortest .. longest time; either may be empty)
rating_12v, rating_24v,     as in the drawing (relays)
rated_ambient, derating,
max_ambient, inductive_break
categories                  rated DC categories, separated by ``;``, each a name or a name with the
                            current and voltage it is rated at: ``DC-1; DC-13 (2.5 A @ 24 V)``
coil.voltage,               the relay's coil (``coil.resistance`` as ``120 ohm @ 20 degC``)
coil.resistance,
coil.operate_voltage,
coil.feed_resistance,
coil.rise
coil.suppression            what sits across the relay's coil: none, diode, diode_zener, resistor,
                            varistor
coil.fuse, coil.wire_size   the coil circuit's feed fuse (``5 A``) and wire (``1 mm²``, ``16 AWG``)
resistance                  joint, busbar, measured ground path, fuse or contact resistance
joint                       what a joint is: lug, stud, splice, connector, fuse_holder (its
                            ``rating``, ``rated_ambient``, ``derating`` and ``zone`` in those
                            columns)
cable                       the id of the cable a joint (a lug) terminates
conductor_range             the smallest and largest conductor a lug takes: ``70 mm² .. 95 mm²``
                            (``conductor_range [mm²]`` with ``70 .. 95``)
coil, count, connection     a stage: its coil type (from the base's ``[coils]``), number of coils,
                            ``series`` or ``parallel``
suppression.kind, …         the stage's suppressor: ``suppression.kind`` and
                            ``suppression.forward_voltage``, ``.zener_voltage``, ``.clamp_voltage``,
                            ``.resistance``, ``.peak_current``, ``.reverse_voltage``, ``.energy_rating``
suppression.part            a parts-library suppressor for the stage (``DZ-24-150``)
part                        a parts-library reference (``my-parts.toml#F-60-B``), passed on as is
fixed                       yes / no: ``coilstage size`` keeps this part as it is
note                        free text
=========================== ==================================================================

Every quantity carries its unit, in the cell (``2.4 m``) or in the column header
(``length [m]``: a bare number in that column takes the header's unit; a cell with its own unit
keeps it). ``size [mm²]`` and ``size [AWG]`` work the same way. Yes / no cells also take y, n,
true, false, 1, 0 and x.

Every element key a drawing may write has a column (a test holds the loader's key tables against
``COLUMNS``), so ``export`` writes any drawing that loads. A value no cell can carry as it is (an
empty ``protects`` list, an id starting with ``#``, a text with blanks around it) is refused with
its key named, and nothing is written.

The base
--------
The supply, environment, coils, corners, duty and switching come from a TOML file: ``--base`` (a
small TOML with those tables, or an existing drawing), else ``WIRELIST.base.toml`` beside the wire
list. The wire list is the harness: the base's own ``[[harness]]`` entries are dropped, except a
stage the wire list has no row for (so the coil stages may live in the base). The base's text and
comments are kept in the written drawing.

Nothing is written unless the whole result loads as a drawing: every problem is reported at once,
with its row and column (``row 14, column size: found "7 mm²"; expected a size listed in …``) and
the command exits with code 2. The drawing is written atomically (a temporary file in the same
folder, then renamed), and never over the wire list or the base.
"""

from __future__ import annotations

import argparse
import csv
import difflib
import io
import math
import os
import re
import sys
import tempfile
import tomllib
from collections import defaultdict
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

from coilstage.errors import DataError, DrawingError, Problem

if TYPE_CHECKING:
    from coilstage.drawing.schema import Drawing

EXIT_OK, EXIT_BAD_INPUT = 0, 2

# ---------------------------------------------------------------- columns

#: column -> what its cells hold: a units.DIMENSIONS name, or one of
#: "text", "size", "int", "bool", "list", "gates", "temperature", "text@" (a value-at text),
#: "tolerance" (a length tolerance), "range" (two sizes), "categories" (names, each with its rating),
#: "share" (a ratio: a bare number or "80 %").
COLUMNS: dict[str, str] = {
    "id": "text",
    "kind": "text",
    "from": "text",
    "to": "text",
    "size": "size",
    "length": "length",
    "insulation": "text",
    "zone": "text",
    "bundle": "int",
    "role": "text",
    "sheathed": "bool",
    "material": "text",
    "conductor_table": "text",
    "outer_diameter": "length",
    "wall": "text",
    "insulation_material": "text",
    "length_tolerance": "tolerance",
    "type": "text",
    "rating": "current",
    "voltage_rating": "voltage",
    "breaking_capacity": "current",
    "melting_i2t": "joule_integral",
    "cyclic_factor": "share",
    "cyclic_cycles": "int",
    "protects": "list",
    "gates": "gates",
    "rating_12v": "current",
    "rating_24v": "current",
    "rated_ambient": "temperature",
    "derating": "text@",
    "max_ambient": "temperature",
    "categories": "categories",
    "inductive_break": "text@",
    "coil.voltage": "voltage",
    "coil.resistance": "text@",
    "coil.operate_voltage": "voltage",
    "coil.feed_resistance": "resistance",
    "coil.rise": "temperature_difference",
    "coil.suppression": "text",
    "coil.fuse": "current",
    "coil.wire_size": "size",
    "resistance": "resistance",
    "joint": "text",
    "cable": "text",
    "conductor_range": "range",
    "coil": "text",
    "count": "int",
    "connection": "text",
    "suppression.kind": "text",
    "suppression.forward_voltage": "voltage",
    "suppression.zener_voltage": "voltage",
    "suppression.clamp_voltage": "voltage",
    "suppression.resistance": "resistance",
    "suppression.peak_current": "current",
    "suppression.reverse_voltage": "voltage",
    "suppression.energy_rating": "energy",
    "suppression.part": "text",
    "fixed": "bool",
    "part": "text",
    "note": "text",
}
REQUIRED_COLUMNS = ("id", "kind", "from", "to")
#: the element kinds of a drawing's harness
KINDS = ("cable", "ground", "joint", "busbar", "fuse", "relay", "stage")
#: nested drawing tables written as dotted columns
NESTED = ("coil", "suppression")
_QUANTITY_KINDS = {"temperature"} | {
    "length",
    "current",
    "voltage",
    "joule_integral",
    "resistance",
    "temperature_difference",
    "energy",
}
_BOOL_WORDS = {"yes": True, "y": True, "true": True, "1": True, "x": True, "no": False, "n": False, "false": False}
_BOOL_WORDS["0"] = False
_NUMBER = re.compile(r"^\s*[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?\s*$")
_AWG_BARE = re.compile(r"^\s*(?:\d{1,2}|0{2,4}|[1-4]\s*/\s*0)\s*$")
_DECIMAL_COMMA = re.compile(r"^(\s*[+-]?\d+),(\d+)(\s*\D.*)?$")
_HEADER = re.compile(r"^\s*([^\[\]]+?)\s*(?:\[\s*([^\]]*?)\s*\])?\s*$")
_GATE = re.compile(r"^\s*([0-9.eE+-]+)\s*[x×]\s*(.*?)\s*\.\.\s*(.*?)\s*$")
#: a length tolerance cell: "10 %", "0.3 m", "-5 % .. +10 %", each optionally followed by "(normal)"
_TOLERANCE = re.compile(r"^\s*(.*?)\s*(?:\(\s*([^()]*?)\s*\))?\s*$")
#: a rated category with its rating: "DC-13 (2.5 A @ 24 V)"
_CATEGORY = re.compile(r"^\s*([^()@;]+?)\s*(?:\(\s*([^()]*?)\s*\))?\s*$")
#: the distributions a length tolerance may name (as in the drawing's [tolerances] distribution)
_DISTRIBUTIONS = ("normal", "uniform")

# ---------------------------------------------------------------- TOML writing (stdlib has no writer)

_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")
_ESCAPES = {"\\": "\\\\", '"': '\\"', "\b": "\\b", "\t": "\\t", "\n": "\\n", "\f": "\\f", "\r": "\\r"}


def toml_string(text: str) -> str:
    """A TOML basic string, every character that needs it escaped.

    >>> toml_string('a "b" \\\\ c')
    '"a \\\\"b\\\\" \\\\\\\\ c"'
    """
    out = []
    for ch in text:
        if ch in _ESCAPES:
            out.append(_ESCAPES[ch])
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04X}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def toml_key(key: str) -> str:
    """A TOML key: bare where it may be, else quoted."""
    return key if _BARE_KEY.match(key) else toml_string(key)


def toml_value(value: Any) -> str:
    """One TOML value (strings, numbers, booleans, lists, inline tables)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        return toml_string(value)
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        if not value:
            return "{}"
        return "{ " + ", ".join(f"{toml_key(k)} = {toml_value(v)}" for k, v in value.items()) + " }"
    raise TypeError(f"no TOML form for {type(value).__name__}")


def _is_table_array(v: Any) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def toml_dumps(data: dict[str, Any], prefix: str = "") -> str:
    """A whole TOML document from a dict (tables as ``[a.b]``, lists of tables as ``[[a]]``)."""
    lines: list[str] = []
    for k, v in data.items():
        if not isinstance(v, dict) and not _is_table_array(v):
            lines.append(f"{toml_key(k)} = {toml_value(v)}")
    for k, v in data.items():
        name = f"{prefix}.{toml_key(k)}" if prefix else toml_key(k)
        if isinstance(v, dict):
            lines.append("")
            lines.append(f"[{name}]")
            body = toml_dumps(v, name)
            if body:
                lines.append(body)
        elif _is_table_array(v):
            for item in v:
                lines.append("")
                lines.append(f"[[{name}]]")
                body = toml_dumps(item, name)
                if body:
                    lines.append(body)
    return "\n".join(lines).strip("\n")


def harness_block(element: dict[str, Any]) -> str:
    """One ``[[harness]]`` entry, nested tables inline (as the demo drawings write them)."""
    lines = ["[[harness]]"]
    for k, v in element.items():
        lines.append(f"{toml_key(k)} = {toml_value(v)}")
    return "\n".join(lines)


def strip_harness(text: str) -> str:
    """The TOML text without its ``[[harness]]`` entries (comments elsewhere kept)."""
    out: list[str] = []
    skipping = False
    pending: list[str] = []  # comment and blank lines met while skipping
    header = re.compile(r"^\s*\[\[?\s*([^\]]+?)\s*\]\]?\s*(#.*)?$")
    for line in text.splitlines():
        m = header.match(line)
        if m:
            name = m.group(1).replace(" ", "")
            in_harness = name == "harness" or name.startswith("harness.")
            if in_harness:
                skipping, pending = True, []
                continue
            if skipping:
                out.extend(pending)
                skipping, pending = False, []
        if skipping:
            stripped = line.strip()
            if not stripped or stripped.startswith("#"):
                pending.append(line)
            else:
                pending = []
            continue
        out.append(line)
    return "\n".join(out).rstrip() + "\n"


# ---------------------------------------------------------------- writing files


def write_atomic(path: Path, data: str | bytes) -> None:
    """Write ``data`` to ``path`` through a temporary file in the same folder, then rename it."""
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    folder.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "wb") as f:
            f.write(data.encode("utf-8") if isinstance(data, str) else data)
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def _same_file(a: Path, b: Path) -> bool:
    """The same file: by identity where both exist (a hard or symbolic link is still the file)."""
    try:
        if a.exists() and b.exists():
            return os.path.samefile(a, b)
        return a.resolve() == b.resolve()
    except OSError:
        return False


# ---------------------------------------------------------------- reading the sheet


@dataclass
class Sheet:
    """The cells of a wire list: the header and the data rows with their spreadsheet row numbers."""

    source: str
    header: list[str]
    rows: list[tuple[int, list[str]]]
    delimiter: str = ","


def _cell_text(value: Any) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value).strip()


def read_sheet(path: Path) -> Sheet:
    """The wire list's cells (CSV, or .xlsx through openpyxl); DrawingError if unreadable."""
    src = str(path)
    if path.suffix.lower() in (".xlsx", ".xlsm"):
        try:
            import openpyxl
        except ImportError:
            raise DrawingError(
                src, [Problem(src, "", 'openpyxl for .xlsx wire lists (pip install "coilstage[xlsx]"), or a CSV file')]
            ) from None
        try:
            wb = openpyxl.load_workbook(path, read_only=True, data_only=True)
        except Exception as exc:  # openpyxl raises several kinds for a bad file
            raise DrawingError(src, [Problem(src, "", f"a readable .xlsx workbook ({type(exc).__name__})")]) from None
        ws = wb["wirelist"] if "wirelist" in wb.sheetnames else wb.worksheets[0]
        raw = [[_cell_text(c) for c in row] for row in ws.iter_rows(values_only=True)]
        wb.close()
        delim = ","
    else:
        try:
            data = path.read_bytes()
        except OSError as exc:
            raise DrawingError(src, [Problem(src, "", f"a readable wire list ({exc.strerror})")]) from None
        try:
            text = data.decode("utf-8-sig")
        except UnicodeDecodeError:
            raise DrawingError(src, [Problem(src, "", 'a UTF-8 text file (save it as "CSV UTF-8")')]) from None
        first = next((ln for ln in text.splitlines() if ln.strip()), "")
        delim = max((",", ";", "\t"), key=first.count)
        raw = [[c.strip() for c in row] for row in csv.reader(io.StringIO(text, newline=""), delimiter=delim)]
    header_at = next((k for k, r in enumerate(raw) if any(r)), None)
    if header_at is None:
        raise DrawingError(src, [Problem("row 1", "", "a header row naming the columns: " + ", ".join(COLUMNS))])
    header = raw[header_at]
    rows = []
    for k in range(header_at + 1, len(raw)):
        r = raw[k]
        if not any(r) or r[0].startswith("#"):
            continue
        rows.append((k + 1, r + [""] * (len(header) - len(r))))
    return Sheet(src, header, rows, delim)


# ---------------------------------------------------------------- sheet -> harness entries


@dataclass
class _Column:
    index: int
    name: str  # our column name
    unit: str | None  # from the header, if any
    title: str  # as written in the header


@dataclass
class Harness:
    """The harness entries made from a sheet, and where each came from."""

    elements: list[dict[str, Any]]
    origin: list[str]  # per element: "row 14" or "base harness[3]"
    renamed: list[dict[str, str]]  # per element: drawing key -> column it came from
    problems: list[Problem] = field(default_factory=list)
    reported: set[tuple[str, str]] = field(default_factory=set)  # (origin, column) already reported


def _columns(sheet: Sheet, problems: list[Problem]) -> list[_Column]:
    from coilstage.units import QuantityError, parse_cable_size, parse_quantity, parse_temperature

    cols: list[_Column] = []
    seen: dict[str, int] = {}
    for i, title in enumerate(sheet.header):
        if not title.strip():
            if any(len(r) > i and r[i] for _n, r in sheet.rows):
                problems.append(Problem(f"row 1, column {i + 1}", "", "a column name above the cells of this column"))
            continue
        m = _HEADER.match(title)
        name = (m.group(1) if m else title).strip().lower().replace(" ", "_")
        unit = m.group(2) if m and m.group(2) else None
        where = f"row 1, column {title}"
        if name not in COLUMNS:
            close = difflib.get_close_matches(name, list(COLUMNS), n=1, cutoff=0.6)
            hint = f' (did you mean "{close[0]}"?)' if close else ""
            problems.append(Problem(where, f'"{title}"', f"a column name{hint}: one of " + ", ".join(COLUMNS)))
            continue
        if name in seen:
            problems.append(Problem(where, f'"{title}"', f"each column once (also column {seen[name] + 1})"))
            continue
        seen[name] = i
        what = COLUMNS[name]
        if unit is not None:
            try:
                if what in ("size", "range"):
                    parse_cable_size(f"1 {unit}")
                elif what == "share":
                    if unit != "%":
                        raise QuantityError('"%" (or no unit: a bare number is a ratio)')
                elif what == "tolerance":
                    if unit != "%":
                        parse_quantity(f"1 {unit}", "length")
                elif what == "temperature":
                    parse_temperature(f"1 {unit}")
                elif what in _QUANTITY_KINDS:
                    parse_quantity(f"1 {unit}", what)
                else:
                    raise QuantityError(f"no unit: column {name} holds {_describe(what)}")
            except QuantityError as exc:
                problems.append(Problem(where, f'"{unit}"', f"a unit for this column ({exc})"))
                continue
        cols.append(_Column(i, name, unit, title))
    for req in REQUIRED_COLUMNS:
        if req not in seen:
            problems.append(Problem("row 1", "", f'a column named "{req}"'))
    return cols


def _describe(what: str) -> str:
    return {
        "text": "text",
        "int": "a whole number",
        "bool": "yes or no",
        "list": "ids separated by ;",
        "gates": "time-current gates",
        "text@": 'a value at a condition, e.g. "80 % @ 85 degC"',
        "share": 'a ratio (a number, or a share such as "80 %")',
        "tolerance": _TOLERANCE_WORDS,
        "range": _RANGE_WORDS,
        "categories": _CATEGORY_WORDS,
    }.get(what, what.replace("_", " "))


_TOLERANCE_WORDS = (
    'a length tolerance: "10 %" or "0.3 m" (± symmetric), "-5 % .. +10 %" (low .. high), '
    'optionally followed by "(normal)" or "(uniform)"'
)
_RANGE_WORDS = 'the smallest and largest conductor, e.g. "25 mm² .. 35 mm²"'
_CATEGORY_WORDS = 'rated categories separated by ;, each a name or with its rating: "DC-1; DC-13 (2.5 A @ 24 V)"'


def _example(what: str) -> str:
    from coilstage.units import DIMENSIONS

    if what == "temperature":
        return "85 degC"
    if what == "size":
        return "16 mm^2"
    return DIMENSIONS[what][1]


def _decimal_point(text: str, delim: str) -> str:
    """With a semicolon delimiter, a decimal comma (``2,4 m``) read as a decimal point."""
    if delim == ";":
        m = _DECIMAL_COMMA.match(text)
        if m:
            return f"{m.group(1)}.{m.group(2)}{m.group(3) or ''}"
    return text


def _quantity_text(col: _Column, text: str, delim: str, where: str, problems: list[Problem], what: str) -> str | None:
    """A quantity (or size) cell as the drawing writes it: the header's unit after a bare number."""
    text = _decimal_point(text.strip(), delim)
    awg_header = what == "size" and col.unit is not None and col.unit.upper() == "AWG"
    bare = _NUMBER.match(text) or (awg_header and _AWG_BARE.match(text))
    if bare:
        if col.unit is None:
            noun = "a conductor size" if what == "size" else f"a {what.replace('_', ' ')}"
            ex = _example(what)
            unit = ex.split(" ", 1)[1]
            problems.append(
                Problem(
                    where,
                    f'"{text}"',
                    f'{noun} with its unit (e.g. "{ex}"), or the unit in the column header ("{col.name} [{unit}]")',
                )
            )
            return None
        return f"{text.strip()} {col.unit}"
    return text


def _tolerance_end(col: _Column, text: str, delim: str) -> str | float:
    """One end of a length tolerance: a bare number is a ratio (as in the drawing), or takes the
    header's unit; text with its unit is kept."""
    text = _decimal_point(text.strip(), delim)
    if _NUMBER.match(text):
        return f"{text.strip()} {col.unit}" if col.unit else float(text)
    return text


def _negated(end: str | float) -> str | float | None:
    """The low end of a symmetric tolerance (None for a signed one, which is not ±)."""
    if isinstance(end, float):
        return -end if end >= 0 else None
    text = end.lstrip()
    text = text[1:].lstrip() if text.startswith("+") else text
    return None if text.startswith("-") else "-" + text


def _tolerance_cell(col: _Column, text: str, delim: str, where: str, problems: list[Problem]) -> Any:
    m = _TOLERANCE.match(text)
    body, dist = (m.group(1), m.group(2)) if m else (text, None)
    if dist is not None and dist.lower() not in _DISTRIBUTIONS:
        problems.append(Problem(where, f'"{text}"', f'"(normal)" or "(uniform)" after the ends ({_TOLERANCE_WORDS})'))
        return None
    ends = [x for x in body.split("..")]
    if len(ends) > 2 or not all(x.strip() for x in ends):
        problems.append(Problem(where, f'"{text}"', _TOLERANCE_WORDS))
        return None
    if len(ends) == 2:
        value: dict[str, Any] = {
            "low": _tolerance_end(col, ends[0], delim),
            "high": _tolerance_end(col, ends[1], delim),
        }
    else:
        one = body.strip()
        one = one[1:] if one.startswith("±") else one
        high = _tolerance_end(col, one, delim)
        if dist is None:
            return high
        low = _negated(high)
        if low is None:
            problems.append(
                Problem(where, f'"{text}"', f"a tolerance without a sign: written alone it is ± ({_TOLERANCE_WORDS})")
            )
            return None
        value = {"low": low, "high": high}
    if dist is not None:
        value["distribution"] = dist.lower()
    return value


def _range_cell(col: _Column, text: str, delim: str, where: str, problems: list[Problem]) -> Any:
    ends = text.split("..")
    if len(ends) != 2 or not all(x.strip() for x in ends):
        problems.append(Problem(where, f'"{text}"', _RANGE_WORDS))
        return None
    out = [_quantity_text(col, x, delim, where, problems, "size") for x in ends]
    return None if None in out else out


def _split_outside_brackets(text: str) -> list[str]:
    """Items separated by ``;`` or ``,``, a separator inside brackets kept (a decimal comma there)."""
    items, depth, start = [], 0, 0
    for k, ch in enumerate(text):
        depth += (ch == "(") - (ch == ")")
        if ch in ";," and depth == 0:
            items.append(text[start:k])
            start = k + 1
    items.append(text[start:])
    return [x.strip() for x in items if x.strip()]


def _categories_cell(col: _Column, text: str, delim: str, where: str, problems: list[Problem]) -> Any:
    out: list[Any] = []
    for k, item in enumerate(_split_outside_brackets(text)):
        m = _CATEGORY.match(item)
        if not m:
            problems.append(Problem(where, f'"{item}"', f"{_CATEGORY_WORDS} (item {k + 1})"))
            return None
        name, rating = m.group(1), m.group(2)
        if rating is None:
            out.append(name)
            continue
        parts = rating.split("@")
        if len(parts) != 2 or not all(x.strip() for x in parts):
            problems.append(Problem(where, f'"{item}"', f"{_CATEGORY_WORDS} (item {k + 1})"))
            return None
        cur, volt = (_decimal_point(x.strip(), delim) for x in parts)
        out.append({"category": name, "current": cur, "voltage": volt})
    return out


def _cell_value(col: _Column, text: str, delim: str, where: str, problems: list[Problem]) -> Any:
    """The drawing value of one non-empty cell, or None after recording a problem."""
    what = COLUMNS[col.name]
    if what in _QUANTITY_KINDS or what == "size":
        return _quantity_text(col, text, delim, where, problems, what)
    if what == "share":
        return _tolerance_end(col, text, delim)  # a ratio, as a length tolerance's end
    if what == "tolerance":
        return _tolerance_cell(col, text, delim, where, problems)
    if what == "range":
        return _range_cell(col, text, delim, where, problems)
    if what == "categories":
        return _categories_cell(col, text, delim, where, problems)
    if what == "int":
        return int(text) if re.fullmatch(r"[+-]?\d+", text) else text
    if what == "bool":
        if text.lower() not in _BOOL_WORDS:
            problems.append(Problem(where, f'"{text}"', "yes or no (also y, n, true, false, 1, 0, x)"))
            return None
        return _BOOL_WORDS[text.lower()]
    if what == "list":
        return [x.strip() for x in re.split(r"[;,]", text) if x.strip()]
    if what == "gates":
        points = []
        for k, part in enumerate(p for p in text.split(";") if p.strip()):
            m = _GATE.match(part)
            if not m:
                problems.append(
                    Problem(where, f'"{part.strip()}"', f'gates as "2x 1 s..60 s; 3.5x 0.1 s..5 s" (point {k + 1})')
                )
                return None
            try:
                mult = float(m.group(1))
            except ValueError:
                problems.append(Problem(where, f'"{m.group(1)}"', f"a number before the x (point {k + 1})"))
                return None
            g: dict[str, Any] = {"multiple": mult}
            if m.group(2):
                g["min"] = m.group(2)
            if m.group(3):
                g["max"] = m.group(3)
            points.append(g)
        return points
    return text


def sheet_to_harness(sheet: Sheet, system_voltage: int | None) -> Harness:
    """Harness entries (drawing dicts) from the rows of a sheet; problems recorded, none raised."""
    problems: list[Problem] = []
    cols = _columns(sheet, problems)
    h = Harness([], [], [], problems)
    for rownum, cells in sheet.rows:
        origin = f"row {rownum}"
        element: dict[str, Any] = {}
        renamed: dict[str, str] = {}
        for col in cols:
            text = cells[col.index].strip() if col.index < len(cells) else ""
            if not text:
                continue
            where = f"{origin}, column {col.title}"
            before = len(problems)
            value = _cell_value(col, text, sheet.delimiter, where, problems)
            if len(problems) > before:  # keep the cell as written: the loader's word on it is left out
                h.reported.add((origin, col.name))
                value = text
            key = col.name
            if key == "kind" and value not in KINDS:
                close = difflib.get_close_matches(value, KINDS, n=1, cutoff=0.6)
                hint = f' (did you mean "{close[0]}"?)' if close else ""
                problems.append(Problem(where, f'"{text}"', f"one of {', '.join(KINDS)}{hint}"))
                h.reported.add((origin, "kind"))
            if "." in key:
                table, sub = key.split(".", 1)
                nested = element.setdefault(table, {})
                if not isinstance(nested, dict):
                    problems.append(Problem(where, f'"{text}"', f"either column {table} or the {table}.* columns"))
                    continue
                nested[sub] = value
                renamed[f"{table}.{sub}"] = col.title
                continue
            if key in element:  # a stage's "coil" after relay coil.* columns
                problems.append(Problem(where, f'"{text}"', f"either column {key} or the {key}.* columns"))
                continue
            element[key] = value
            renamed[key] = col.title
        if element.get("kind") == "relay" and "rating" in element:
            target = f"rating_{system_voltage}v" if system_voltage in (12, 24) else None
            if target is None:
                problems.append(Problem(f"{origin}, column rating", "", "a system voltage in the base (12 V or 24 V)"))
                h.reported.add((origin, "rating"))
            elif target in element:
                problems.append(
                    Problem(f"{origin}, column rating", f'"{element["rating"]}"', f"either rating or {target}")
                )
                h.reported.add((origin, "rating"))
            else:
                element[target] = element.pop("rating")
                renamed[target] = renamed.pop("rating")
        # key order as the drawing writes it: id, kind, from, to first
        ordered = {k: element[k] for k in REQUIRED_COLUMNS if k in element}
        ordered.update({k: v for k, v in element.items() if k not in ordered})
        h.elements.append(ordered)
        h.origin.append(origin)
        h.renamed.append(renamed)
    if not sheet.rows:
        problems.append(Problem(sheet.source, "", "one or more rows below the header"))
    return h


# ---------------------------------------------------------------- problems of the loader -> rows and columns

_WHERE = re.compile(r"^harness\[(\d+)\](?: \((?:[^()]|\([^()]*\))*\))?(?:\.(.*))?$")


def map_problem(p: Problem, h: Harness) -> Problem | None:
    """A loader problem at ``harness[i] (id).key`` re-addressed to the row and column it came from
    (None when that cell was already reported)."""
    m = _WHERE.match(p.where)
    if not m:
        return p
    i = int(m.group(1))
    if i >= len(h.origin):
        return p
    origin = h.origin[i]
    eid = h.elements[i].get("id")
    label = f"{origin} ({eid})" if isinstance(eid, str) else origin
    rest = m.group(2)
    if not rest:
        return Problem(label, p.found, p.expected)
    km = re.match(r"([A-Za-z_]\w*)(?:\[\d+\])?(?:\.([A-Za-z_]\w*))?(.*)$", rest)
    if not km:
        return Problem(f"{label}, {rest}", p.found, p.expected)
    key = km.group(1)
    if km.group(2) and key in NESTED:
        key = f"{key}.{km.group(2)}"
        detail = km.group(3)
    else:
        detail = (f".{km.group(2)}" if km.group(2) else "") + km.group(3)
    column = h.renamed[i].get(key, key)
    if (origin, key.split(" ")[0]) in h.reported or (origin, column) in h.reported:
        return None
    detail = detail.strip()
    if re.fullmatch(r"\.[A-Za-z_]\w*", detail):  # a part of the cell: "length_tolerance.low"
        detail = f"({detail[1:]})"
    where = f"{origin}, column {column}" + (f" {detail}" if detail else "")
    if p.expected.startswith("no such key here") and "allowed: " in p.expected:
        kind = h.elements[i].get("kind")
        allowed = p.expected.split("allowed: ", 1)[1].split(", ")
        cols = []
        for a in allowed:
            if a in NESTED and (kind == "relay" or a == "suppression"):
                cols.append(f"{a}.*")
            else:
                cols.append(a)
        if "." in key:
            table, sub = key.split(".", 1)
            value = (h.elements[i].get(table) or {}).get(sub)
        else:
            value = h.elements[i].get(key)
        found = f'"{_cell_of(value)}"' if value is not None and not isinstance(value, (dict, list)) else p.found
        return Problem(where, found, f"an empty cell: a {kind} has no {key} (its columns: {', '.join(cols)})")
    return Problem(where, p.found, p.expected)


# ---------------------------------------------------------------- import


@dataclass
class Imported:
    """The result of an import: the drawing text, and what it was made from."""

    text: str
    rows: int
    kept_stages: list[str]


def default_base(wirelist: Path) -> Path:
    """Where the base is looked for without --base: ``NAME.base.toml`` beside ``NAME.csv``."""
    return wirelist.with_name(wirelist.stem + ".base.toml")


def _read_base(base: Path) -> tuple[str, dict[str, Any]]:
    src = str(base)
    try:
        text = base.read_text(encoding="utf-8")
    except OSError as exc:
        raise DrawingError(
            src,
            [
                Problem(
                    src,
                    "",
                    f"a base TOML with [supply], [environment] and [coils] ({exc.strerror}): give --base "
                    "DRAWING_OR_TOML, or put WIRELIST.base.toml beside the wire list",
                )
            ],
        ) from None
    except UnicodeDecodeError:
        raise DrawingError(src, [Problem(src, "", "a UTF-8 text file")]) from None
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DrawingError(src, [Problem(src, "", f"valid TOML ({exc})")]) from None
    return text, raw


def _row_order(p: Problem) -> tuple[int, int]:
    m = re.match(r"row (\d+)", p.where)
    return (0, int(m.group(1))) if m else (1, 0)


def build_drawing(wirelist: Path, base: Path, out: Path | None = None, sheet: Sheet | None = None) -> Imported:
    """The drawing text made from a wire list and its base, checked by loading it.

    ``out`` is where it will be written (relative table paths in it are read from that folder).
    Raises DrawingError with every problem, rows and columns named.
    """
    from coilstage.drawing.load import parse_drawing

    sheet = sheet or read_sheet(wirelist)
    base_text, base_raw = _read_base(base)
    system = None
    sys_text = (base_raw.get("supply") or {}).get("system") if isinstance(base_raw.get("supply"), dict) else None
    if isinstance(sys_text, str):
        digits = re.match(r"\s*(\d+)", sys_text)
        system = int(digits.group(1)) if digits else None
    h = sheet_to_harness(sheet, system)
    ids = {e.get("id") for e in h.elements}
    kept: list[str] = []
    base_harness = base_raw.get("harness", [])
    if isinstance(base_harness, list):
        for j, e in enumerate(base_harness):
            if isinstance(e, dict) and e.get("kind") == "stage" and e.get("id") not in ids:
                h.elements.append(e)
                h.origin.append(f"{base.name} harness[{j}]")
                h.renamed.append({})
                kept.append(str(e.get("id")))
    head = (
        f"# Written by coilstage import from the wire list {wirelist.name} and the base {base.name}.\n"
        "# The harness below comes from the wire list: change the wire list and import it again.\n"
    )
    body = strip_harness(base_text)
    rest = {k: v for k, v in base_raw.items() if k != "harness"}
    try:
        same = tomllib.loads(body) == rest
    except tomllib.TOMLDecodeError:
        same = False
    if not same:  # an unusual layout of the base: write its data instead of its text
        body = toml_dumps(rest) + "\n"
    rule = "# " + "-" * 64
    parts = [head, body.rstrip() + "\n", f"\n{rule} harness ({wirelist.name})\n"]
    for e, origin in zip(h.elements, h.origin, strict=True):
        parts.append(f"\n# {origin}\n" + harness_block(e) + "\n")
    text = "".join(parts)
    problems = list(h.problems)
    try:
        parse_drawing(text, str(out or wirelist), (out.parent if out else wirelist.parent))
    except DrawingError as exc:
        cells = {p.where for p in problems if ", column " in p.where}
        for p in exc.problems:
            q = map_problem(p, h)
            if q is None or q in problems or q.where in cells:  # one message per cell
                continue
            problems.append(q)
            if ", column " in q.where:
                cells.add(q.where)
    except DataError as exc:
        problems.extend(exc.problems)
    if problems:
        raise DrawingError(f"{wirelist} (base {base})", sorted(problems, key=_row_order))
    return Imported(text, len(sheet.rows), kept)


# ---------------------------------------------------------------- export


def _flatten(e: dict[str, Any], where: str) -> tuple[dict[str, str], list[Problem]]:
    """One harness entry as wire-list cells; a problem for each key no cell can carry as it is."""
    cells: dict[str, str] = {}
    problems: list[Problem] = []

    def refuse(key: str, value: Any, expected: str) -> None:
        problems.append(Problem(f"{where}.{key}", _show(value), expected))

    for k, v in e.items():
        if k in NESTED and isinstance(v, dict):
            for sub, sv in v.items():
                name = f"{k}.{sub}"
                if name not in COLUMNS:
                    refuse(name, sv, f"a key a wire list has a column for (the {k}.* columns: {_nested_columns(k)})")
                    continue
                text, why = _cell_text_of(COLUMNS[name], sv)
                if why:
                    refuse(name, sv, why)
                    continue
                cells[name] = text
            continue
        if k not in COLUMNS:
            refuse(k, v, "a key a wire list has a column for: " + ", ".join(COLUMNS))
            continue
        text, why = _cell_text_of(COLUMNS[k], v, k)
        if why:
            refuse(k, v, why)
            continue
        cells[k] = text
    return cells, problems


def _cell_of(v: Any) -> str:
    if isinstance(v, bool):
        return "yes" if v else "no"
    return str(v)


def _nested_columns(table: str) -> str:
    return ", ".join(c for c in COLUMNS if c.startswith(table + "."))


def _show(value: Any) -> str:
    text = repr(value) if not isinstance(value, str) else f'"{value}"'
    return text if len(text) <= 60 else text[:57] + "..."


def _number_text(v: Any) -> str:
    """A number as the shortest text that reads back as the same float."""
    return str(v) if isinstance(v, int) else repr(float(v))


def _is_number(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _plain(text: Any, *forbidden: str) -> bool:
    """A text a cell carries as it is: no surrounding blanks and none of ``forbidden``."""
    return isinstance(text, str) and text == text.strip() and not any(f in text for f in forbidden)


def _tolerance_text(v: Any) -> str | None:
    """A length tolerance of the drawing as one cell (None when no cell writes it)."""

    def end(x: Any) -> str | None:
        if _is_number(x):
            return _number_text(x)
        return x if _plain(x, "..", "(", ")") and x else None

    if isinstance(v, list):
        ends = [end(x) for x in v] if len(v) == 2 else [None]
        return None if None in ends else f"{ends[0]} .. {ends[1]}"
    if isinstance(v, dict):
        if not set(v) <= {"low", "high", "distribution"} or "low" not in v or "high" not in v:
            return None
        lo, hi = end(v["low"]), end(v["high"])
        dist = v.get("distribution")
        if None in (lo, hi) or (dist is not None and dist not in _DISTRIBUTIONS):
            return None
        return f"{lo} .. {hi}" + (f" ({dist})" if dist else "")
    return end(v)


def _cell_text_of(what: str, v: Any, key: str = "") -> tuple[str, str | None]:
    """(the cell text, None), or ("", what a cell would need) when the value has no cell."""
    if what == "list":
        if not isinstance(v, list) or not v:
            return "", "ids in a list of at least one (the cell separates them with ;)"
        if not all(_plain(x, ";", ",") and x for x in v):
            return "", "ids without ; or , and without surrounding blanks (the cell separates ids with ;)"
        return "; ".join(v), None
    if what == "categories":
        if not isinstance(v, list):
            return "", _CATEGORY_WORDS
        items = []
        for c in v:
            if isinstance(c, str) and _plain(c, ";", ",", "(", ")", "@"):
                items.append(c)
            elif (
                isinstance(c, dict)
                and set(c) == {"category", "current", "voltage"}
                and _plain(c["category"], ";", ",", "(", ")", "@")
                and all(_plain(c[x], "(", ")", "@", ";") for x in ("current", "voltage"))
            ):
                items.append(f"{c['category']} ({c['current']} @ {c['voltage']})")
            else:
                return "", _CATEGORY_WORDS
        return "; ".join(items), None
    if what == "gates":
        if not isinstance(v, list):
            return "", "a list of gate tables"
        pts = []
        for g in v:
            m = g.get("multiple") if isinstance(g, dict) else None
            plain_number = isinstance(m, str) and _NUMBER.match(m)
            known = isinstance(g, dict) and set(g) <= {"multiple", "min", "max"}
            if not known or not (_is_number(m) or plain_number):
                return "", 'gate tables { multiple = 2.0, min = "1 s", max = "60 s" } (multiple a plain number)'
            if not all(_plain(g.get(t, ""), "..", ";") for t in ("min", "max")):
                return "", "gate times without .. or ; (the cell's separators)"
            multiple = m.strip() if plain_number else _number_text(m)
            pts.append(f"{multiple}x {g.get('min', '')}..{g.get('max', '')}".replace(" ..", ".."))
        return "; ".join(pts), None
    if what == "share":
        if _is_number(v):
            return _number_text(v), None
        return (v, None) if _plain(v) and v else ("", 'a ratio: a number or a share such as "80 %"')
    if what == "tolerance":
        text = _tolerance_text(v)
        return ("", _TOLERANCE_WORDS) if text is None else (text, None)
    if what == "range":
        if isinstance(v, list) and len(v) == 2 and all(_plain(x, "..") and x for x in v):
            return f"{v[0]} .. {v[1]}", None
        return "", _RANGE_WORDS
    if what == "bool":
        return ("yes" if v else "no", None) if isinstance(v, bool) else ("", "true or false")
    if what == "int":
        return (str(v), None) if isinstance(v, int) and not isinstance(v, bool) else ("", "a whole number")
    if isinstance(v, (dict, list)):
        return "", f"{_describe(what)} (a wire list cell)"
    if isinstance(v, str):
        if key == "note":
            return v, None  # free text (its surrounding blanks are not kept)
        if not _plain(v):
            return "", "a text without surrounding blanks (a cell's are not kept)"
        if key == "id" and v.startswith("#"):
            return "", "an id not starting with # (a row starting with # is a comment)"
        return v, None
    return _cell_of(v), None


def wirelist_rows(raw: dict[str, Any]) -> tuple[list[str], list[list[str]]]:
    """The header and rows of the wire list of a drawing's raw TOML data; DrawingError if a key has
    no column."""
    harness = raw.get("harness") or []
    all_cells = []
    problems: list[Problem] = []
    for i, e in enumerate(harness):
        cells, pr = _flatten(e, f"harness[{i}] ({e.get('id')})")
        all_cells.append(cells)
        problems.extend(pr)
    if problems:
        raise DrawingError("export", problems)
    used = {k for c in all_cells for k in c}
    header = [c for c in COLUMNS if c in used or c in REQUIRED_COLUMNS]
    rows = [[c.get(k, "") for k in header] for c in all_cells]
    return header, rows


def write_wirelist(path: Path, header: list[str], rows: list[list[str]]) -> None:
    """Write the wire list as CSV (UTF-8 with the byte-order mark spreadsheets look for) or .xlsx."""
    if path.suffix.lower() == ".xlsx":
        import openpyxl

        wb = openpyxl.Workbook()
        ws = wb.active
        ws.title = "wirelist"
        ws.append(header)
        for r in rows:
            ws.append(r)
        buf = io.BytesIO()
        wb.save(buf)
        write_atomic(path, buf.getvalue())
        return
    buf = io.StringIO(newline="")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    w.writerows(rows)
    write_atomic(path, "\ufeff" + buf.getvalue())


# ---------------------------------------------------------------- build list


@dataclass(frozen=True)
class BuildLine:
    group: str  # "cable", "fuse", "relay", "coil", "suppressor", "joint", "busbar", "ground path"
    item: str
    quantity: int
    length: float | None  # total drawn length [m] (cables)
    ids: tuple[str, ...]


def build_list(drawing: Drawing) -> list[BuildLine]:
    """Cable lengths per size, class and metal; parts per type and rating (from a loaded Drawing)."""
    from coilstage.drawing.schema import Cable, Fuse, Joint, Relay, Resistor, Stage

    cables: dict[tuple, list] = defaultdict(list)
    parts: dict[tuple[str, str], list[str]] = defaultdict(list)
    count: dict[tuple[str, str], int] = defaultdict(int)
    sysv = drawing.supply.system_voltage
    for e in drawing.elements:
        if isinstance(e, Cable):
            cables[(e.size_label, e.insulation_class, e.material)].append(e)
        elif isinstance(e, Fuse):
            key = (
                "fuse",
                f"{e.part} type {e.fuse_type}, {e.rating:g} A, {e.voltage_rating:g} V, "
                f"breaking {e.breaking_capacity / 1000:g} kA",
            )
            parts[key].append(e.id)
            count[key] += 1
        elif isinstance(e, Relay):
            rating = e.rating_24v if sysv == 24 else e.rating_12v
            other = e.rating_12v if sysv == 24 else e.rating_24v
            text = f"{rating:g} A at {sysv} V" if rating is not None else f"no {sysv} V rating"
            if other is not None:
                text += f" ({other:g} A at {12 if sysv == 24 else 24} V)"
            if e.voltage_rating:
                text += f", breaks up to {e.voltage_rating:g} V"
            if e.coil:
                text += f", {e.coil.voltage:g} V coil"
            key = ("relay", text)
            parts[key].append(e.id)
            count[key] += 1
        elif isinstance(e, Stage):
            key = ("coil", f"coil type {e.coil.name}")
            parts[key].append(e.id)
            count[key] += e.count
            s = e.suppression
            if s.kind != "none":
                desc = f"{s.kind.replace('_', ' + ')}, holds {s.u0:g} V"
                if s.peak_current:
                    desc += f", {s.peak_current:g} A peak"
                if s.energy_rating:
                    desc += f", {s.energy_rating:g} J"
                key = ("suppressor", desc)
                parts[key].append(e.id)
                count[key] += 1
        elif isinstance(e, Resistor):
            group = e.kind if e.kind in ("joint", "busbar") else "ground path"
            item = f"{e.resistance * 1000:g} mΩ"
            if isinstance(e, Joint):  # what it is, its rating and the conductors it takes, where stated
                if e.joint_kind:
                    item = f"{e.joint_kind.replace('_', ' ')}, {item}"
                if e.rating is not None:
                    item += f", {e.rating:g} A at {e.rated_ambient:g} °C"
                if e.conductor_range is not None:
                    lo, hi = (x * 1e6 for x in e.conductor_range)
                    item += f", takes {lo:g}-{hi:g} mm²" if lo != hi else f", takes {lo:g} mm²"
            key = (group, item)
            parts[key].append(e.id)
            count[key] += 1
    out = [
        BuildLine(
            "cable",
            f"{size}, ISO 6722 class {cls}, {metal}",
            len(es),
            sum(x.length for x in es),
            tuple(x.id for x in es),
        )
        for (size, cls, metal), es in sorted(cables.items(), key=lambda kv: (-kv[1][0].area, kv[0][1]))
    ]
    order = ["fuse", "relay", "coil", "suppressor", "joint", "busbar", "ground path"]
    for key in sorted(parts, key=lambda k: (order.index(k[0]), k[1])):
        out.append(BuildLine(key[0], key[1], count[key], None, tuple(parts[key])))
    return out


def build_list_csv(lines: list[BuildLine]) -> str:
    buf = io.StringIO(newline="")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["group", "item", "quantity", "total length [m]", "elements"])
    for b in lines:
        w.writerow([b.group, b.item, b.quantity, "" if b.length is None else f"{b.length:.2f}", "; ".join(b.ids)])
    return buf.getvalue()


def build_list_text(lines: list[BuildLine]) -> str:
    out = ["Build list (drawn lengths: add what routing and terminations need)"]
    for b in lines:
        qty = f"{b.length:7.2f} m in {b.quantity} piece(s)" if b.length is not None else f"{b.quantity:>4} x"
        out.append(f"  {b.group:<11} {qty:<22} {b.item}")
    return "\n".join(out) + "\n"


# ---------------------------------------------------------------- commands


def _print_problems(exc: DrawingError | DataError, what: str) -> None:
    n = len(exc.problems)
    print(f"coilstage: {exc.source}: the {what} cannot be used ({n} problem{'s' * (n != 1)}):", file=sys.stderr)
    for p in exc.problems:
        print(f"  {p}", file=sys.stderr)


class _Command:
    """A command in the shape the CLI's registry takes: HELP, add_arguments(parser), run(args)."""

    def __init__(self, help_text: str, add_arguments, run):
        self.HELP = help_text
        self.add_arguments = add_arguments
        self.run = run


def _import_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("wirelist", help="the wire list (.csv, or .xlsx with openpyxl)")
    p.add_argument("--output", "-o", required=True, metavar="DRAWING", help="the drawing to write (TOML)")
    p.add_argument(
        "--base",
        "-b",
        metavar="DRAWING_OR_TOML",
        help="supply, environment, coils (and stages) from this TOML or drawing (default: WIRELIST.base.toml)",
    )


def run_import(args: argparse.Namespace) -> int:
    """``coilstage import``: wire list -> drawing. Exit 0, or 2 with every problem and nothing written."""
    wl = Path(args.wirelist)
    base = Path(args.base) if args.base else default_base(wl)
    out = Path(args.output)
    for name, p in (("wire list", wl), ("base", base)):
        if _same_file(out, p):
            print(f"coilstage: --output would overwrite the {name} ({p}); choose another file", file=sys.stderr)
            return EXIT_BAD_INPUT
    try:
        result = build_drawing(wl, base, out)
    except DrawingError as exc:
        _print_problems(exc, "wire list")
        print("coilstage: nothing written", file=sys.stderr)
        return EXIT_BAD_INPUT
    except DataError as exc:
        _print_problems(exc, "table")
        return EXIT_BAD_INPUT
    write_atomic(out, result.text)
    kept = ""
    if result.kept_stages:
        kept = f"; {len(result.kept_stages)} stage(s) from the base ({', '.join(result.kept_stages)})"
    print(f"coilstage: {result.rows} row(s) of {wl} with the base {base}{kept}: wrote {out}", file=sys.stderr)
    return EXIT_OK


def _export_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("drawing", help="the drawing file (TOML)")
    p.add_argument("--output", "-o", required=True, metavar="WIRELIST", help="the wire list to write (.csv or .xlsx)")
    p.add_argument(
        "--build-list",
        metavar="FILE",
        help="write the build list (cable lengths, parts) as CSV to FILE (default: WIRELIST-build.csv beside it)",
    )


def run_export(args: argparse.Namespace) -> int:
    """``coilstage export``: drawing -> wire list and build list."""
    from coilstage.drawing.load import load_drawing

    dp = Path(args.drawing)
    out = Path(args.output)
    build = Path(args.build_list) if args.build_list else out.with_name(out.stem + "-build.csv")
    for p in (out, build):
        if _same_file(p, dp):
            print("coilstage: an output would overwrite the drawing itself; choose another file", file=sys.stderr)
            return EXIT_BAD_INPUT
    if _same_file(out, build):
        print("coilstage: the wire list and the build list must be different files", file=sys.stderr)
        return EXIT_BAD_INPUT
    if out.suffix.lower() == ".xlsx":
        try:
            import openpyxl  # noqa: F401
        except ImportError:
            print('coilstage: .xlsx needs openpyxl (pip install "coilstage[xlsx]"); or write a .csv', file=sys.stderr)
            return EXIT_BAD_INPUT
    try:
        drawing = load_drawing(dp)
        raw = tomllib.loads(dp.read_text(encoding="utf-8"))
    except DrawingError as exc:
        _print_problems(exc, "drawing")
        return EXIT_BAD_INPUT
    except DataError as exc:
        _print_problems(exc, "table")
        return EXIT_BAD_INPUT
    try:
        header, rows = wirelist_rows(raw)
    except DrawingError as exc:
        exc.source = str(dp)
        _print_problems(exc, "drawing's wire list")
        print("coilstage: these values have no wire-list cell as written; nothing written", file=sys.stderr)
        return EXIT_BAD_INPUT
    lines = build_list(drawing)
    write_wirelist(out, header, rows)
    write_atomic(build, build_list_csv(lines))
    sys.stdout.write(build_list_text(lines))
    print(f"coilstage: wrote {out} ({len(rows)} rows) and the build list {build}", file=sys.stderr)
    return EXIT_OK


HELP_IMPORT = "make a drawing from a wire list (CSV or .xlsx) and a base TOML"
HELP_EXPORT = "write a drawing's wire list (CSV or .xlsx) and its build list"
#: ``coilstage import`` in the registry's shape
IMPORT = _Command(HELP_IMPORT, _import_arguments, run_import)
#: ``coilstage export`` in the registry's shape
EXPORT = _Command(HELP_EXPORT, _export_arguments, run_export)

__all__ = [
    "COLUMNS",
    "EXPORT",
    "IMPORT",
    "BuildLine",
    "build_drawing",
    "build_list",
    "read_sheet",
    "run_export",
    "run_import",
    "toml_dumps",
    "toml_string",
    "wirelist_rows",
    "write_atomic",
]
