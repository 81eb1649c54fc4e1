"""Parts libraries: named parts with their makers' data, for drawings to refer to by name.

A library is a TOML file in the format of the shipped tables (``coilstage/data``): a ``[table]``
header (``kind = "parts"``, ``title``, ``standard``, ``status``) and ``rows``, one per part, each
with its ``name``, its ``kind``, the datasheet it was read from (``source``) and a ``status``
(published, from memory, common practice, derived). The rows may also be written as
``[[table.rows]]`` tables. A folder of such files is a library too.

Part kinds and the keys they hold (those of the drawing element they stand for, same units):

=============== ==================================================================================
kind            keys
=============== ==================================================================================
fuse            type, rating, voltage_rating, breaking_capacity, melting_i2t, gates, resistance,
                cyclic_factor, cyclic_cycles; ``series`` (the ratings its family comes in, for
                choosing) is kept in the library
relay           rating_12v, rating_24v, rated_ambient, derating, max_ambient, voltage_rating,
                resistance, categories (names, or ``{ category, current, voltage }``),
                inductive_break, coil (voltage, resistance, operate_voltage, feed_resistance, rise,
                suppression, fuse, wire_size)
suppressor      suppression_kind (diode, diode_zener, diode_resistor, tvs, varistor),
                forward_voltage, zener_voltage, clamp_voltage, resistance, peak_current,
                reverse_voltage, energy_rating
cable           size, insulation, material, conductor_table, outer_diameter, wall (a maker's cable)
joint           joint (lug, stud, splice, connector, fuse_holder), resistance, rating,
                rated_ambient, derating, conductor_range (``["25 mm^2", "35 mm^2"]``)
lug             as a joint without ``joint``: a lug part is a lug (it gives a joint element
                ``joint = "lug"``)
busbar          resistance
=============== ==================================================================================

Every row may add ``maker``, ``note`` and ``series``, which stay in the library. A joint or lug
part may stand for a ``ground`` element too (a measured ground path): that takes its resistance
only, and the record says which of the part's values were not used.

A drawing refers to a part as ``part = "my-parts.toml#F-60-B"`` (the file relative to the drawing)
or ``part = "F-60-B"`` (looked up in the libraries given to the run with ``--parts DIR`` or in the
drawing's ``[tables] parts = [...]``), on a harness element or in a stage's ``suppression`` table.
Keys the element writes itself override the part's (a nested table such as a relay's ``coil`` is
merged key by key). :func:`expand_parts` does this for a whole drawing and says which value came
from where; :func:`load_library` reads and checks a library, reporting every problem at once by
file, part and key.
"""

from __future__ import annotations

import difflib
import tomllib
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path
from typing import Any

from coilstage.errors import DataError, Problem

_STATUS_WORDS = ("published", "from memory", "common practice", "derived")
#: keys every part row may carry that stay in the library
META_KEYS = {"name", "kind", "source", "status", "maker", "note", "series"}

# what each key holds: a units.DIMENSIONS name, "temperature", "size", or a check of its own
_FUSE = {
    "type": "fuse_type",
    "rating": "current",
    "voltage_rating": "voltage",
    "breaking_capacity": "current",
    "melting_i2t": "joule_integral",
    "gates": "gates",
    "resistance": "resistance",
    "cyclic_factor": "share",
    "cyclic_cycles": "count",
}
_RELAY = {
    "rating_12v": "current",
    "rating_24v": "current",
    "rated_ambient": "temperature",
    "derating": "fraction_at",
    "max_ambient": "temperature",
    "voltage_rating": "voltage",
    "resistance": "resistance",
    "categories": "categories",
    "inductive_break": "current_at_time",
    "coil": "relay_coil",
}
_SUPPRESSOR = {
    "suppression_kind": "suppression_kind",
    "forward_voltage": "voltage",
    "zener_voltage": "voltage",
    "clamp_voltage": "voltage",
    "resistance": "resistance",
    "peak_current": "current",
    "reverse_voltage": "voltage",
    "energy_rating": "energy",
}
_CABLE = {
    "size": "size",
    "insulation": "cable_class",
    "material": "text",
    "conductor_table": "text",
    "outer_diameter": "length",
    "wall": "wall",
}
#: a lug, stud, splice, connector or fuse holder: the maker's data a drawing's joint takes
_JOINT = {
    "joint": "joint_kind",
    "resistance": "resistance",
    "rating": "current",
    "rated_ambient": "temperature",
    "derating": "fraction_at",
    "conductor_range": "size_range",
}
#: a lug part is a lug: its kind says what ``joint`` is
_LUG = {k: v for k, v in _JOINT.items() if k != "joint"}
PART_KEYS: dict[str, dict[str, str]] = {
    "fuse": _FUSE,
    "relay": _RELAY,
    "suppressor": _SUPPRESSOR,
    "cable": _CABLE,
    "joint": _JOINT,
    "lug": _LUG,
    "busbar": {"resistance": "resistance"},
}
#: (part kind, element kind) -> the part's keys that element takes, where it takes fewer than the part
#: holds: a joint or lug part on a measured ground path gives it its resistance only
ACCEPTED = {("joint", "ground"): {"resistance"}, ("lug", "ground"): {"resistance"}}
#: harness element kinds a part of each kind may stand for
ELEMENT_KINDS = {
    "fuse": {"fuse"},
    "relay": {"relay"},
    "cable": {"cable", "ground"},
    "joint": {"joint", "ground"},
    "lug": {"joint", "ground"},
    "busbar": {"busbar"},
}
#: the element kind a part becomes when the element names no kind
DEFAULT_ELEMENT = {
    "fuse": "fuse",
    "relay": "relay",
    "cable": "cable",
    "joint": "joint",
    "lug": "joint",
    "busbar": "busbar",
}
SUPPRESSION_KINDS = ["diode", "diode_zener", "diode_resistor", "tvs", "varistor"]
_COIL_KEYS = {
    "voltage": "voltage",
    "resistance": "resistance_at",
    "operate_voltage": "voltage",
    "feed_resistance": "resistance",
    "rise": "temperature_difference",
    "suppression": "coil_suppression",
    "fuse": "current",
    "wire_size": "size",
}
_GATE_KEYS = {"multiple", "min", "max"}


@dataclass(frozen=True)
class Part:
    """One named part of a library: its element fields as the drawing writes them."""

    name: str
    kind: str
    fields: dict[str, Any]  # drawing keys -> values (text with units, as in the file)
    source: str
    status: str
    file: str
    maker: str = ""
    note: str = ""
    series: tuple[str, ...] = ()

    @property
    def ref(self) -> str:
        return f"{Path(self.file).name}#{self.name}"


@dataclass
class Library:
    """Parts by file and name."""

    files: dict[str, dict[str, Part]] = field(default_factory=dict)  # resolved file path -> name -> part

    def find(self, name: str) -> list[Part]:
        """Every part of that name in any file of the library."""
        return [parts[name] for parts in self.files.values() if name in parts]

    def parts_of(self, kind: str) -> list[Part]:
        """The parts of one kind (for choosing one), in file and row order."""
        return [p for parts in self.files.values() for p in parts.values() if p.kind == kind]

    def merge(self, other: Library) -> None:
        self.files.update(other.files)


# ---------------------------------------------------------------- checking one value


def _check_value(what: str, value: Any) -> str | None:
    """None when ``value`` is right for ``what``, else what was expected."""
    from coilstage import tables
    from coilstage.units import (
        QuantityError,
        parse_cable_size,
        parse_dimensionless,
        parse_pair,
        parse_quantity,
        parse_resistance_at,
        parse_temperature,
    )

    try:
        if what == "text":
            if not isinstance(value, str) or not value.strip():
                return "a text"
        elif what == "temperature":
            parse_temperature(value)
        elif what == "size":
            parse_cable_size(value)
        elif what == "size_range":
            want = 'the smallest and largest conductor it takes, e.g. ["25 mm^2", "35 mm^2"]'
            if not isinstance(value, list) or len(value) != 2:
                return want
            ends = [parse_cable_size(x) for x in value]
            if ends[0].system != ends[1].system:
                return f"two sizes of one system, mm² or AWG ({want})"
            small, large = (_size_area(x) for x in ends)
            if small > large:
                return f"a smallest size no larger than the largest ({want})"
        elif what == "share":
            f = parse_dimensionless(value)
            if not 0 < f <= 1:
                return 'a share above 0 and at most 100 % (a number or "80 %")'
        elif what == "count":
            if isinstance(value, bool) or not isinstance(value, int) or value < 1:
                return "a whole number of at least 1"
        elif what == "joint_kind":
            from coilstage.drawing.joints import JOINT_KINDS

            if value not in JOINT_KINDS:
                return "one of " + ", ".join(JOINT_KINDS) + _hint(value, JOINT_KINDS)
        elif what == "coil_suppression":
            from coilstage.drawing.relays import COIL_SUPPRESSION

            if value not in COIL_SUPPRESSION:
                return "one of " + ", ".join(COIL_SUPPRESSION) + _hint(value, COIL_SUPPRESSION)
        elif what == "resistance_at":
            parse_resistance_at(value)
        elif what == "fraction_at":
            if not isinstance(value, str) or "@" not in value:
                return 'a fraction at a temperature, e.g. "80 % @ 85 degC"'
            left, right = value.split("@", 1)
            f = parse_dimensionless(left.strip())
            if not 0 < f <= 1.5:
                return 'a fraction between 0 and 150 %, e.g. "80 % @ 85 degC"'
            parse_temperature(right)
        elif what == "current_at_time":
            parse_pair(value, "current", "time")
        elif what == "fuse_type":
            if value not in tables.fuse_types():
                return "an ISO 8820 fuse type: " + ", ".join(tables.fuse_types()) + _hint(value, tables.fuse_types())
        elif what == "cable_class":
            if value not in tables.cable_classes():
                return "an ISO 6722 class letter: " + ", ".join(sorted(tables.cable_classes()))
        elif what == "wall":
            if value not in ("thin", "thick"):
                return '"thin" or "thick"'
        elif what == "suppression_kind":
            if value not in SUPPRESSION_KINDS:
                return "one of " + ", ".join(SUPPRESSION_KINDS) + _hint(value, SUPPRESSION_KINDS)
        elif what == "categories":
            known = [row["category"] for row in tables.utilization_categories()]
            want = (
                "a list of rated categories from "
                + ", ".join(known)
                + ', each a name or { category = "DC-13", current = "2.5 A", voltage = "24 V" }'
            )
            if not isinstance(value, list):
                return want
            for x in value:
                if isinstance(x, dict):
                    if x.get("category") not in known or set(x) != {"category", "current", "voltage"}:
                        return want
                    parse_quantity(x["current"], "current")
                    parse_quantity(x["voltage"], "voltage")
                elif not (isinstance(x, str) and x in known):
                    return want
        elif what in ("relay_coil", "gates"):
            return None  # checked key by key by the caller
        else:
            parse_quantity(value, what)
            if isinstance(value, str) and parse_quantity(value, what) <= 0 and what != "resistance":
                return f"a {what.replace('_', ' ')} greater than zero"
    except QuantityError as exc:
        return str(exc)
    except (TypeError, ValueError) as exc:
        return str(exc) or "a value of the right kind"
    return None


def _size_area(size) -> float:
    """The nominal area of a parsed cable size [m²] (AWG by ASTM B258)."""
    if size.system == "awg":
        from coilstage.physics.conductor import awg_area

        return awg_area(int(size.nominal))
    return size.nominal * 1e-6


def _hint(word: Any, choices) -> str:
    close = difflib.get_close_matches(str(word), [str(c) for c in choices], n=1, cutoff=0.6)
    return f' (did you mean "{close[0]}"?)' if close else ""


def _show(value: Any) -> str:
    text = f'"{value}"' if isinstance(value, str) else repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


# ---------------------------------------------------------------- reading a library


def _row_problems(fname: str, k: int, row: Any, names: dict[str, int]) -> tuple[Part | None, list[Problem]]:
    problems: list[Problem] = []
    if not isinstance(row, dict):
        return None, [Problem(f"{fname}, row {k + 1}", _show(row), "a table with name, kind, source, status")]
    name = row.get("name")
    label = f"part {name}" if isinstance(name, str) and name else f"row {k + 1}"
    at = f"{fname}, {label}"

    def bad(key: str, found: Any, expected: str) -> None:
        problems.append(Problem(f"{at}, key {key}", "" if found is None else _show(found), expected))

    if not isinstance(name, str) or not name.strip() or "#" in name:
        bad("name", name, "a name for the part (text without #)")
    elif name in names:
        bad("name", name, f"a name not used before in this file (also row {names[name] + 1})")
    else:
        names[name] = k
    kind = row.get("kind")
    if kind not in PART_KEYS:
        bad("kind", kind, "one of " + ", ".join(PART_KEYS) + _hint(kind, PART_KEYS))
        return None, problems
    for key in ("source",):
        if not isinstance(row.get(key), str) or not row[key].strip():
            bad(key, row.get(key), "the datasheet or table the values were read from (text)")
    status = row.get("status")
    if not isinstance(status, str) or not any(w in status for w in _STATUS_WORDS):
        bad("status", status, "one of " + ", ".join(_STATUS_WORDS) + " (words may follow)")
    allowed = PART_KEYS[kind]
    for key in ("maker", "note"):
        if key in row and not isinstance(row[key], str):
            bad(key, row[key], "a text")
    series = row.get("series", [])
    if not isinstance(series, list) or not all(isinstance(x, str) for x in series):
        bad("series", series, 'a list of ratings, e.g. ["40 A", "60 A"]')
        series = []
    elif kind == "fuse":
        for x in series:
            why = _check_value("current", x)
            if why:
                bad("series", x, why)
    fields: dict[str, Any] = {}
    for key, value in row.items():
        if key in META_KEYS:
            continue
        if key not in allowed:
            bad(key, None, f"a key of a {kind} part{_hint(key, allowed)}: " + ", ".join(allowed))
            continue
        what = allowed[key]
        why = _check_value(what, value)
        if why:
            bad(key, value, why)
            continue
        if what == "relay_coil":
            if not isinstance(value, dict):
                bad(key, value, "a table with the coil's keys: " + ", ".join(_COIL_KEYS))
                continue
            for ck, cv in value.items():
                if ck not in _COIL_KEYS:
                    bad(f"coil.{ck}", None, "a key of a relay coil: " + ", ".join(_COIL_KEYS))
                    continue
                why = _check_value(_COIL_KEYS[ck], cv)
                if why:
                    bad(f"coil.{ck}", cv, why)
        if what == "gates":
            if not isinstance(value, list) or not value or not all(isinstance(g, dict) for g in value):
                bad(key, value, 'a list of { multiple = 2.0, min = "1 s", max = "60 s" } points')
                continue
            for j, g in enumerate(value):
                extra = set(g) - _GATE_KEYS
                if extra or not isinstance(g.get("multiple"), (int, float)) or isinstance(g.get("multiple"), bool):
                    bad(f"gates[{j}]", g, 'a point { multiple = 2.0, min = "1 s", max = "60 s" } (multiple a number)')
                    continue
                for tk in ("min", "max"):
                    if tk in g and g[tk] not in ("none", ""):
                        why = _check_value("time", g[tk])
                        if why:
                            bad(f"gates[{j}].{tk}", g[tk], why)
        fields[key] = value
    if not any(k not in META_KEYS for k in row):
        bad("(values)", None, f"at least one value of a {kind}: " + ", ".join(allowed))
    if problems:
        return None, problems
    return (
        Part(
            name=name,
            kind=kind,
            fields=fields,
            source=row["source"],
            status=status,
            file=fname,
            maker=row.get("maker", ""),
            note=row.get("note", ""),
            series=tuple(series),
        ),
        [],
    )


def _read_file(path: Path) -> tuple[dict[str, Part], list[Problem]]:
    fname = str(path)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except OSError as exc:
        return {}, [Problem(fname, "", f"a readable parts library ({exc.strerror})")]
    except UnicodeDecodeError:
        return {}, [Problem(fname, "", "a UTF-8 text file")]
    except tomllib.TOMLDecodeError as exc:
        return {}, [Problem(fname, "", f"valid TOML ({exc})")]
    head = data.get("table")
    if not isinstance(head, dict):
        return {}, [Problem(fname, "", 'a [table] header with kind = "parts", title, standard, status and rows')]
    problems: list[Problem] = []
    if head.get("kind") != "parts":
        problems.append(Problem(f"{fname}, table.kind", _show(head.get("kind")), '"parts"'))
    for key in ("title", "standard", "status"):
        if not isinstance(head.get(key), str):
            problems.append(Problem(f"{fname}, table.{key}", _show(head.get(key)), "a text"))
    unknown = set(data) - {"table"}
    for key in sorted(unknown):
        problems.append(Problem(f"{fname}, {key}", "", "only the [table] header and its rows"))
    rows = head.get("rows")
    if not isinstance(rows, list) or not rows:
        problems.append(Problem(f"{fname}, table.rows", "", "one or more part rows"))
        return {}, problems
    parts: dict[str, Part] = {}
    names: dict[str, int] = {}
    for k, row in enumerate(rows):
        part, pr = _row_problems(fname, k, row, names)
        problems.extend(pr)
        if part is not None:
            parts[part.name] = part
    return parts, problems


def load_library(*paths: str | Path) -> Library:
    """Read and check the libraries at ``paths`` (files, or folders of ``*.toml`` files).

    Raises :class:`~coilstage.errors.DataError` listing every problem of every file, each at its
    file, part and key.
    """
    lib = Library()
    problems: list[Problem] = []
    for p in map(Path, paths):
        files = sorted(p.glob("*.toml")) if p.is_dir() else [p]
        if p.is_dir() and not files:
            problems.append(Problem(str(p), "", "a folder with parts libraries (*.toml) in it"))
        for f in files:
            parts, pr = _read_file(f)
            problems.extend(pr)
            lib.files[str(f.resolve())] = parts
    if problems:
        raise DataError(", ".join(map(str, paths)), problems)
    return lib


@lru_cache(maxsize=64)
def _cached(path: str, mtime: float) -> Library:
    return load_library(path)


def library_file(path: Path) -> Library:
    """One library file, read once per change of the file (a fleet refers to the same few)."""
    return _cached(str(path.resolve()), path.stat().st_mtime)


# ---------------------------------------------------------------- resolving a reference


@dataclass(frozen=True)
class Provenance:
    """Where the values of one element (or suppression table) came from."""

    where: str  # TOML path of the element in the drawing, e.g. "harness[3] (F1)"
    ref: str  # "file.toml#NAME"
    from_library: tuple[str, ...]  # keys whose value is the library's
    overridden: tuple[str, ...]  # keys the library has and the drawing wrote over
    source: str
    status: str
    series: tuple[str, ...] = ()  # the ratings the part's family comes in (for sizing to choose from)
    unused: tuple[str, ...] = ()  # the part's keys this kind of element does not take

    def text(self) -> str:
        """One line for the report's assumptions."""
        out = (
            f"{self.where}: {', '.join(self.from_library) or 'no value'} from parts library {self.ref} ({self.status}; "
        )
        out += f"source: {self.source})"
        if self.overridden:
            out += f"; the drawing's own {', '.join(self.overridden)} used instead of the library's"
        if self.unused:
            out += f"; the library's {', '.join(self.unused)} not used (this element does not take them)"
        return out


def _merge(part_fields: dict[str, Any], own: dict[str, Any]) -> tuple[dict[str, Any], list[str], list[str]]:
    merged = dict(part_fields)
    from_lib, over = [], []
    for key, value in own.items():
        if key in part_fields and isinstance(value, dict) and isinstance(part_fields[key], dict):
            inner = dict(part_fields[key])
            for ik, iv in value.items():
                if ik in inner:
                    over.append(f"{key}.{ik}")
                inner[ik] = iv
            from_lib += [f"{key}.{ik}" for ik in part_fields[key] if ik not in value]
            merged[key] = inner
            continue
        if key in part_fields:
            over.append(key)
        merged[key] = value
    from_lib = [k for k in part_fields if k not in own] + from_lib
    return merged, from_lib, over


def find_part(ref: Any, base_dir: Path, library: Library | None = None) -> tuple[Part | None, str | None]:
    """The part a reference names, or (None, what was expected)."""
    if not isinstance(ref, str) or not ref.strip():
        return None, 'a part reference such as "my-parts.toml#F-60-B"'
    if "#" in ref:
        file_text, name = ref.rsplit("#", 1)
        path = Path(file_text)
        candidates = [path] if path.is_absolute() else [base_dir / path]
        if library is not None:  # also beside the libraries given to the run
            candidates += [Path(f).parent / path.name for f in library.files]
        for c in candidates:
            if c.is_file():
                try:
                    lib = library_file(c)
                except DataError as exc:
                    return None, f"a parts library without problems ({len(exc.problems)} in {c}: {exc.problems[0]})"
                parts = next(iter(lib.files.values()))
                if name in parts:
                    return parts[name], None
                return None, f"a part of {c.name}: " + ", ".join(parts) + _hint(name, parts)
        return None, f"a parts library file {file_text} (relative to the drawing, or in --parts)"
    found = library.find(ref) if library is not None else []
    if len(found) == 1:
        return found[0], None
    if len(found) > 1:
        return None, "a reference naming its file (" + ", ".join(p.ref for p in found) + ")"
    known = sorted({n for parts in (library.files.values() if library else []) for n in parts})
    return None, ("a part of the libraries given: " + ", ".join(known) + _hint(ref, known)) if known else (
        'a reference with its file ("my-parts.toml#NAME"): no parts library was given'
    )


def resolve(
    ref: str, own: dict[str, Any], element_kind: str | None, where: str, base_dir: Path, library: Library | None = None
) -> tuple[dict[str, Any] | None, Provenance | None, list[Problem]]:
    """The element's fields with the part's values under its own (``own`` without ``part``), the
    record of where each came from, and the problems (addressed at ``where``)."""
    part, why = find_part(ref, base_dir, library)
    unused: tuple[str, ...] = ()
    if part is None:
        return None, None, [Problem(f"{where}.part", _show(ref), why or "a part")]
    if element_kind == "suppression":
        if part.kind != "suppressor":
            return (
                None,
                None,
                [Problem(f"{where}.part", _show(ref), f"a suppressor part ({part.ref} is a {part.kind})")],
            )
        fields = {("kind" if k == "suppression_kind" else k): v for k, v in part.fields.items()}
    else:
        kinds = ELEMENT_KINDS.get(part.kind, set())
        if element_kind is not None and element_kind not in kinds:
            return (
                None,
                None,
                [Problem(f"{where}.part", _show(ref), f"a part for a {element_kind} ({part.ref} is a {part.kind})")],
            )
        fields = dict(part.fields)
        if element_kind is None:
            own = {"kind": DEFAULT_ELEMENT[part.kind], **own}
        target = element_kind or DEFAULT_ELEMENT[part.kind]
        if part.kind == "lug" and target == "joint":
            fields = {"joint": "lug", **fields}  # a lug part is a lug
        accepted = ACCEPTED.get((part.kind, target))
        if accepted is not None:
            unused = tuple(k for k in fields if k not in accepted)
            fields = {k: v for k, v in fields.items() if k in accepted}
    merged, from_lib, over = _merge(fields, own)
    record = Provenance(
        where, part.ref, tuple(from_lib), tuple(over), part.source, part.status, tuple(part.series), unused
    )
    return merged, record, []


def expand_parts(
    raw: dict[str, Any], base_dir: Path, parts_dirs: tuple[Path, ...] = ()
) -> tuple[dict[str, Any], list[Provenance], list[Problem]]:
    """The drawing's raw TOML data with every ``part`` reference replaced by the part's values.

    Libraries come from ``parts_dirs`` (``--parts``) and the drawing's ``[tables] parts`` (a path
    or a list, relative to the drawing). ``raw`` is not modified. Problems are addressed at the
    TOML path of the reference (``harness[3] (F1).part``), or at the library's file, part and key.
    """
    problems: list[Problem] = []
    library = Library()
    given: list[Path] = list(parts_dirs)
    tabs = raw.get("tables")
    if isinstance(tabs, dict) and "parts" in tabs:
        entry = tabs["parts"]
        items = [entry] if isinstance(entry, str) else entry
        if not isinstance(items, list) or not all(isinstance(x, str) for x in items):
            problems.append(Problem("tables.parts", _show(entry), "a parts library path or a list of them"))
        else:
            given += [base_dir / x for x in items]
    for p in given:
        try:
            library.merge(load_library(p))
        except DataError as exc:
            problems.extend(exc.problems)
    harness = raw.get("harness")
    if not isinstance(harness, list):
        return raw, [], problems
    out_harness: list[Any] = []
    records: list[Provenance] = []
    for i, e in enumerate(harness):
        if not isinstance(e, dict):
            out_harness.append(e)
            continue
        eid = e.get("id")
        where = f"harness[{i}]" + (f" ({eid})" if isinstance(eid, str) else "")
        new = dict(e)
        if "part" in e:
            own = {k: v for k, v in e.items() if k != "part"}
            kind = e.get("kind") if isinstance(e.get("kind"), str) else None
            merged, rec, pr = resolve(e["part"], own, kind, where, base_dir, library)
            problems.extend(pr)
            if merged is not None:
                new = merged
                records.append(rec)
            else:  # the reference's problem is said once; the element's own keys are still read
                new = own
        sup = new.get("suppression")
        if isinstance(sup, dict) and "part" in sup:
            own = {k: v for k, v in sup.items() if k != "part"}
            merged, rec, pr = resolve(sup["part"], own, "suppression", f"{where}.suppression", base_dir, library)
            problems.extend(pr)
            if merged is not None:
                new["suppression"] = merged
                records.append(rec)
            else:
                new["suppression"] = own
        out_harness.append(new)
    out = dict(raw)
    out["harness"] = out_harness
    return out, records, problems
