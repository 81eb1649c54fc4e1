"""Data tables: the shipped ones (``coilstage/data/*.toml``) and a user's own in the same format.

Every table file opens with a ``[table]`` header (kind, title, standard, status) and every row
carries a ``status`` saying whether it is published, from memory, common practice or derived.
"""

from __future__ import annotations

import hashlib
import itertools
import math
import re
import tomllib
from dataclasses import dataclass
from functools import cache
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING, Any

from coilstage.errors import DataError, Problem
from coilstage.physics.conductor import (
    ampacity_ambient_factor,
    awg_area,
    interpolate_loglog,
    resistance_per_length,
)
from coilstage.units import awg_label

if TYPE_CHECKING:
    from coilstage.physics.magnetic import BHCurve

#: Conductor table used for a metric size when the drawing names none.
DEFAULT_MM2_TABLE = "iso6722-1"
#: Conductor table used for an AWG size when the drawing names none.
DEFAULT_AWG_TABLE = "awg_astm_b258"

_STATUS_WORDS = ("published", "from memory", "common practice", "derived")


@cache
def _data_files() -> tuple[str, ...]:
    """The shipped table files (the package's own data: read once a process)."""
    return tuple(sorted(p.name for p in resources.files("coilstage.data").iterdir() if p.name.endswith(".toml")))


@dataclass(frozen=True)
class TableUse:
    """One table file this process read: where, the SHA-256 of its bytes (hex), its header, and
    whether it ships with coilstage or is the user's own."""

    path: str
    sha256: str
    title: str
    standard: str
    status: str
    origin: str  # "shipped" or "user"

    @property
    def shipped(self) -> bool:
        return self.origin == "shipped"


_USED: dict[str, TableUse] = {}


def used_tables() -> list[TableUse]:
    """Every table file read in this process so far (shipped and user), in the order first read."""
    return list(_USED.values())


def _record(path: str, raw: bytes, data: dict[str, Any], origin: str) -> None:
    head = data.get("table") if isinstance(data.get("table"), dict) else {}
    _USED[path] = TableUse(
        path,
        hashlib.sha256(raw).hexdigest(),
        str(head.get("title", "")),
        str(head.get("standard", "")),
        str(head.get("status", "")),
        origin,
    )


#: Largest user table read [bytes]; the shipped ones are a few kB.
MAX_TABLE_BYTES = 4_000_000
_TOML_LINE = re.compile(r"\(at line (\d+), column (\d+)\)")


@cache
def shipped(filename: str) -> dict[str, Any]:
    """The parsed content of one shipped table file, validated."""
    ref = resources.files("coilstage.data").joinpath(filename)
    raw = ref.read_bytes()
    data = tomllib.loads(raw.decode("utf-8"))
    _validate(filename, data)
    _record(str(ref), raw, data, "shipped")
    return data


def read_user_table(path: Path) -> dict[str, Any]:
    """A user's own table in the shipped format; raises DataError listing everything malformed
    (file, then row and column). The file is only read."""
    src = str(path)
    try:
        with open(path, "rb") as f:
            raw = f.read(MAX_TABLE_BYTES + 1)
    except OSError as exc:
        raise DataError(src, [Problem(src, "", f"a readable table file ({exc.strerror})")]) from None
    if len(raw) > MAX_TABLE_BYTES:
        raise DataError(src, [Problem(src, "", f"a table file of at most {MAX_TABLE_BYTES:,} bytes")])
    if b"\x00" in raw:
        raise DataError(src, [Problem(src, "binary data", "a TOML text table")])
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise DataError(src, [Problem(src, "", "a UTF-8 text file")]) from None
    try:
        data = tomllib.loads(text)
    except RecursionError:
        raise DataError(src, [Problem(src, "", "arrays nested less deeply")]) from None
    except tomllib.TOMLDecodeError as exc:
        m = _TOML_LINE.search(str(exc))
        where = f"line {m.group(1)}, column {m.group(2)}" if m else src
        raise DataError(src, [Problem(where, "", f"valid TOML ({_TOML_LINE.sub('', str(exc)).strip()})")]) from None
    _validate(src, data)
    _record(str(path.resolve()), raw, data, "user")
    return data


def _finite_number(x: Any) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def _validate(source: str, data: dict[str, Any]) -> None:
    problems = []
    head = data.get("table")
    if not isinstance(head, dict):
        raise DataError(source, [Problem("table", "", "a [table] header with kind, title, standard, status")])
    for key in ("kind", "title", "standard", "status"):
        if not isinstance(head.get(key), str):
            problems.append(Problem(f"table.{key}", repr(head.get(key)), "a text"))
    rows = head.get("rows", [])
    if not isinstance(rows, list):
        raise DataError(source, [*problems, Problem("table.rows", repr(rows)[:60], "a list of row tables")])
    for i, row in enumerate(rows):
        if not isinstance(row, dict):
            problems.append(Problem(f"table.rows[{i}]", repr(row)[:60], "a table { ... } (one row)"))
            continue
        status = row.get("status", head.get("status"))
        if not isinstance(status, str) or not any(w in status for w in _STATUS_WORDS):
            problems.append(Problem(f"table.rows[{i}].status", repr(status), "one of " + ", ".join(_STATUS_WORDS)))
    if problems:
        raise DataError(source, problems)


def list_tables() -> list[dict[str, str]]:
    """Name, title, standard and status of every shipped table (for ``coilstage tables``)."""
    out = []
    for name in _data_files():
        head = shipped(name)["table"]
        out.append(
            {
                "file": name,
                "kind": head["kind"],
                "title": head["title"],
                "standard": head["standard"],
                "status": head["status"],
                "rows": str(len(head.get("rows", []))) if head.get("rows") else "formula",
            }
        )
    return out


# ---------------------------------------------------------------- conductors


@dataclass(frozen=True)
class ConductorRow:
    area: float  # [m²]
    r20_per_m: float  # [Ω/m]
    status: str
    source: str  # standard and table


@dataclass(frozen=True)
class ConductorTable:
    name: str
    title: str
    standard: str
    material: str
    size_system: str  # "mm2" or "awg"
    rows: dict[float, ConductorRow]  # keyed by nominal size (mm², or AWG number)

    def sizes(self) -> list[str]:
        if self.size_system == "awg":
            return [awg_label(int(n)) for n in sorted(self.rows, reverse=True)]
        return [f"{s:g} mm²" for s in sorted(self.rows)]


def conductor_table_names() -> list[str]:
    return [n[len("conductors_") : -len(".toml")] for n in _data_files() if n.startswith("conductors_")]


def _conductor_from_data(name: str, data: dict[str, Any]) -> ConductorTable:
    head = data["table"]
    missing = [
        Problem(f"table.{k}", repr(head.get(k)), want)
        for k, want, ok in (
            ("material", "one of " + ", ".join(materials()), head.get("material") in materials()),
            ("size_system", '"mm2" or "awg"', head.get("size_system") in ("mm2", "awg")),
        )
        if not ok
    ]
    if head["kind"] == "conductor" and not isinstance(head.get("rows"), list):
        missing.append(Problem("table.rows", repr(head.get("rows")), "a list of { size, r20, status } rows"))
    if missing:
        raise DataError(name, missing)
    rows: dict[float, ConductorRow] = {}
    if head["kind"] == "conductor_formula":
        rho = material(head["material"])["rho20"]
        factor = float(head["stranding_factor"])
        for n in range(int(head["smallest"]), int(head["largest"]) - 1, -1):
            a = awg_area(n)
            rows[float(n)] = ConductorRow(
                a,
                resistance_per_length(rho, a) * factor,
                f"derived: ASTM B258 area, rho20 = 1/58 ohm mm²/m, stranding x{factor} ({head['stranding_status']})",
                head["standard"],
            )
    else:
        unit = head.get("r20_unit", "mohm/m")
        scale = {"mohm/m": 1e-3, "ohm/km": 1e-3, "ohm/m": 1.0}.get(unit)
        if scale is None:
            raise DataError(name, [Problem("table.r20_unit", repr(unit), "mohm/m, ohm/km or ohm/m")])
        problems = []
        for i, row in enumerate(head["rows"]):
            bad = False
            for col in ("size", "r20"):
                if col not in row:
                    problems.append(Problem(f"table.rows[{i}].{col}", "", f"a {col} column (a number)"))
                    bad = True
                elif not _finite_number(row[col]):
                    problems.append(Problem(f"table.rows[{i}].{col}", repr(row[col])[:60], "a finite number"))
                    bad = True
            if bad:
                continue
            size, r20 = float(row["size"]), float(row["r20"]) * scale
            if head["size_system"] == "mm2" and not 0 < size <= 10_000:
                problems.append(Problem(f"table.rows[{i}].size", repr(row["size"]), "a size from 0 to 10000 mm²"))
                continue
            if head["size_system"] == "awg" and (size != int(size) or not -3 <= size <= 40):
                problems.append(
                    Problem(f"table.rows[{i}].size", repr(row["size"]), "an AWG number from -3 (4/0) to 40")
                )
                continue
            if not r20 > 0:
                problems.append(Problem(f"table.rows[{i}].r20", repr(row["r20"]), "a resistance greater than zero"))
                continue
            if size in rows:
                problems.append(Problem(f"table.rows[{i}].size", repr(row["size"]), "a size not listed before"))
                continue
            area = awg_area(int(size)) if head["size_system"] == "awg" else size * 1e-6
            rows[size] = ConductorRow(area, r20, row.get("status", head["status"]), head["standard"])
        if not rows and not problems:
            problems.append(Problem("table.rows", "[]", "at least one row"))
        if problems:
            raise DataError(name, problems)
    return ConductorTable(name, head["title"], head["standard"], head["material"], head["size_system"], rows)


@cache
def conductor_table(name: str) -> ConductorTable:
    """A shipped conductor table by its short name (``"iso6722-1"``, ``"iec60228"`` …)."""
    return _conductor_from_data(name, shipped(f"conductors_{name}.toml"))


def user_conductor_table(path: Path) -> ConductorTable:
    data = read_user_table(path)
    if data["table"]["kind"] not in ("conductor", "conductor_formula"):
        raise DataError(str(path), [Problem("table.kind", repr(data["table"]["kind"]), '"conductor"')])
    return _conductor_from_data(str(path), data)


# ---------------------------------------------------------------- materials, classes, codes


@cache
def materials() -> dict[str, dict[str, Any]]:
    return {r["metal"]: r for r in shipped("materials.toml")["table"]["rows"]}


def material(name: str) -> dict[str, Any]:
    return materials()[name]


@cache
def cable_classes() -> dict[str, float]:
    """ISO 6722 class letter -> upper temperature [°C]."""
    return {r["class"]: float(r["max"]) for r in shipped("cable_classes_iso6722.toml")["table"]["rows"]}


@cache
def insulation_classes() -> dict[int, dict[str, Any]]:
    """IEC 60085 class (°C) -> row with letter and hot-spot allowance."""
    return {int(r["class"]): r for r in shipped("insulation_classes_iec60085.toml")["table"]["rows"]}


@cache
def supply_codes() -> dict[str, dict[str, Any]]:
    return {r["code"]: r for r in shipped("supply_codes_iso16750-2.toml")["table"]["rows"]}


@cache
def fuse_types() -> dict[str, dict[str, Any]]:
    return {r["type"]: r for r in shipped("fuses_iso8820.toml")["table"]["rows"]}


def fuse_rules() -> dict[str, Any]:
    return shipped("fuses_iso8820.toml")["table"]


def fuse_rerating(t: float) -> float:
    """Fraction of its rating a fuse carries at surrounding temperature ``t`` [°C] (shipped curve,
    linear between points, held flat beyond the ends)."""
    pts = fuse_rules()["rerating"]
    if t <= pts[0][0]:
        return float(pts[0][1])
    for (t0, f0), (t1, f1) in itertools.pairwise(pts):
        if t <= t1:
            return float(f0 + (f1 - f0) * (t - t0) / (t1 - t0))
    return float(pts[-1][1])


# ---------------------------------------------------------------- ampacity


@dataclass(frozen=True)
class Ampacity:
    """An ampacity found in the table, with each factor applied and how it was found."""

    value: float  # [A] after all factors
    base: float  # [A] table value at 30 °C, single conductor
    column: int  # insulation rating column used [°C]
    ambient_factor: float
    bundle_factor: float
    method: str


def ampacity_table() -> dict[str, Any]:
    return shipped("ampacity_33cfr183_425.toml")["table"]


def ampacity_column(class_max: float) -> int | None:
    """The highest insulation-rating column of the table not above ``class_max`` [°C]."""
    cols = [c for c in ampacity_table()["columns"] if c <= class_max]
    return max(cols) if cols else None


def bundle_factor(n: int) -> float:
    factor = 1.0
    for at_least, f in ampacity_table()["bundle_factors"]:
        if n >= at_least:
            factor = float(f)
    return factor


def ampacity(awg: int | None, area: float, class_max: float, zone_t: float, bundle: int) -> Ampacity | str:
    """Ampacity of a copper conductor, or the reason it cannot be given (a str).

    AWG sizes are read from the table directly; metric sizes by log-log interpolation between the
    neighbouring AWG rows in cross-section (never rounded to a gauge). The column is the highest
    insulation rating not above the cable's class temperature; the zone and bundle factors follow.
    """
    tab = ampacity_table()
    col = ampacity_column(class_max)
    if col is None:
        return f"insulation rated {class_max:g} °C is below every column of the table ({tab['columns'][0]} °C)"
    j = tab["columns"].index(col)
    rows = sorted((awg_area(r["awg"]), float(r["amps"][j]), r["awg"]) for r in tab["rows"])
    if awg is not None and any(r[2] == awg for r in rows):
        base = next(r[1] for r in rows if r[2] == awg)
        method = f"{awg_label(awg)} row, {col} °C column"
    else:
        if not rows[0][0] * (1 - 1e-9) <= area <= rows[-1][0] * (1 + 1e-9):
            return (
                f"{area * 1e6:g} mm² lies outside the table ({rows[0][0] * 1e6:.3g}-{rows[-1][0] * 1e6:.4g} mm², "
                "18 AWG to 4/0); the table is not extrapolated"
            )
        for lo, hi in itertools.pairwise(rows):
            if lo[0] <= area <= hi[0]:
                base = interpolate_loglog(area, lo[0], lo[1], hi[0], hi[1])
                method = (
                    f"log-log interpolation between {awg_label(lo[2])} ({lo[1]:g} A) and "
                    f"{awg_label(hi[2])} ({hi[1]:g} A), {col} °C column"
                )
                break
    fa = ampacity_ambient_factor(col, zone_t, tab["reference_ambient"])
    fb = bundle_factor(bundle)
    value = base * fa * fb
    if not math.isfinite(value):
        return "ampacity not finite"
    return Ampacity(value, base, col, fa, fb, method)


# ---------------------------------------------------------------- switching and fuse time-current


@cache
def cable_class_rows() -> dict[str, dict[str, Any]]:
    """ISO 6722 class letter -> row with max, short_term and short_circuit temperatures [°C]."""
    return {r["class"]: r for r in shipped("cable_classes_iso6722.toml")["table"]["rows"]}


def load_dump_clamped(system: int) -> float:
    """Clamped load-dump supply voltage of ISO 16750-2 Test B for a 12 or 24 V system [V]: the clamp of
    the Test B row of ``load_dump_iso16750-2.toml`` (one copy, read by every load-dump rule)."""
    rows = shipped("load_dump_iso16750-2.toml")["table"]["rows"]
    return float(next(r["clamp"] for r in rows if r["test"] == "B" and r["system"] == system))


@cache
def utilization_categories() -> list[dict[str, Any]]:
    return list(shipped("utilization_categories_iec60947.toml")["table"]["rows"])


@dataclass(frozen=True)
class FuseGates:
    """Time-current gates of a fuse: (multiple of rating, min time, max time) points [-, s, s].

    Between points both gates are interpolated in log-log axes (linearly in time where a gate falls
    to zero). Below the first point the fuse does not open. Beyond the last point the gates follow a
    constant I²t, t = t_last·(m_last/m)²: at high currents a fuse element heats adiabatically and
    its I²t is roughly constant (docs/references.md#fuse-adiabatic-i2t); the last point (about 6 × rating,
    up to a second) lies beyond that region, where heat lost to the terminals makes its I²t larger,
    so the extension overstates the clearing time: the safe side for the cable checks.
    """

    points: tuple[tuple[float, float, float], ...]
    source: str

    def t_min(self, m: float) -> float:
        """Time before which the fuse must not open at ``m`` × rating [s] (inf: never opens)."""
        p = self.points
        if m < p[0][0]:
            return math.inf
        return self._interp(m, 1)

    def t_max(self, m: float) -> float:
        """Time by which the fuse must have opened at ``m`` × rating [s] (inf: it need not open)."""
        p = self.points
        first = next((i for i, x in enumerate(p) if math.isfinite(x[2])), None)
        if first is None or m < p[first][0]:
            return math.inf
        return self._interp(m, 2, start=first)

    def _interp(self, m: float, col: int, start: int = 0) -> float:
        p = self.points[start:]
        if m >= p[-1][0]:
            return p[-1][col] * (p[-1][0] / m) ** 2
        for lo, hi in itertools.pairwise(p):
            if lo[0] <= m <= hi[0]:
                y0, y1 = lo[col], hi[col]
                if math.isinf(y0) or math.isinf(y1):
                    return max(y0, y1) if m < hi[0] else y1
                f = math.log(m / lo[0]) / math.log(hi[0] / lo[0])
                if y0 > 0 and y1 > 0:
                    return math.exp(math.log(y0) + f * (math.log(y1) - math.log(y0)))
                return y0 + f * (y1 - y0)
        return p[0][col]


def fuse_gate_table() -> dict[str, Any]:
    return shipped("fuse_gates_iso8820.toml")["table"]


def shipped_gates(fuse_type: str) -> FuseGates | None:
    """The shipped (from memory) gates of an ISO 8820 type, or None."""
    for row in fuse_gate_table()["rows"]:
        if fuse_type in row["types"]:
            pts = tuple((float(a), float(b), float(c)) for a, b, c in row["points"])
            return FuseGates(pts, f"shipped gates for {row['family']} fuse-links ({row['status']})")
    return None


# ---------------------------------------------------------------- heating


@cache
def cable_dimensions() -> dict[float, dict[str, Any]]:
    """ISO 6722 size [mm²] -> conductor and outside diameters [mm] (from memory)."""
    return {float(r["size"]): r for r in shipped("cable_thermal_iso6722.toml")["table"]["rows"]}


def cable_insulation(cls: str) -> tuple[float, str]:
    """Thermal conductivity [W/(m·K)] of an ISO 6722 class's insulation, from the ``ht`` library's
    material data, and the material's name there."""
    from ht.insulation import k_material

    name = dict(shipped("cable_thermal_iso6722.toml")["table"]["insulation"])[cls]
    return float(k_material(name)), name


def cable_emissivity() -> float:
    return float(shipped("cable_thermal_iso6722.toml")["table"]["emissivity"])


@cache
def duty_profiles() -> dict[str, dict[str, Any]]:
    return {r["name"]: r for r in shipped("duty_profiles.toml")["table"]["rows"]}


# ---------------------------------------------------------------- magnetic


def bh_curve_names() -> list[str]:
    return [r["name"] for r in shipped("bh_curves.toml")["table"]["rows"]]


@cache
def bh_curve(name: str) -> BHCurve:
    """A shipped B-H curve as a point table (an analytic curve is tabulated densely)."""
    import numpy as np

    from coilstage.physics.magnetic import BHCurve, curve_from_mu_r, modelica_mu_r

    row = next(r for r in shipped("bh_curves.toml")["table"]["rows"] if r["name"] == name)
    if row["kind"] == "points":
        p = np.array(row["points"], dtype=float)
        return BHCurve(name, p[:, 0], p[:, 1])
    args = (row["mu_i"], row["b_mumax"], row["c_a"], row["c_b"], row["n"])
    return curve_from_mu_r(name, lambda b: modelica_mu_r(b, *args))


def user_bh_curve(path: Path) -> BHCurve:
    """A user's B-H table: ``[table] kind = "bh_curve"`` with ``points = [[H A/m, B T], ...]``."""
    import numpy as np

    from coilstage.physics.magnetic import BHCurve

    data = read_user_table(path)
    if data["table"].get("kind") != "bh_curve":
        raise DataError(str(path), [Problem("table.kind", repr(data["table"].get("kind")), '"bh_curve"')])
    pts = data["table"].get("points")
    want = "[[0, 0], [H A/m, B T], ...] rising in both"
    if not isinstance(pts, list):
        raise DataError(str(path), [Problem("table.points", repr(pts)[:60], f"a list of points {want}")])
    problems = []
    good: list[tuple[float, float]] = []
    for i, pt in enumerate(pts):
        if not isinstance(pt, list) or len(pt) != 2:
            problems.append(Problem(f"table.points[{i}]", repr(pt)[:60], "a point [H, B] of two numbers"))
            continue
        for j, (x, col) in enumerate(zip(pt, ("H", "B"), strict=True)):
            if not _finite_number(x):
                problems.append(Problem(f"table.points[{i}][{j}]", repr(x)[:60], f"a finite number ({col})"))
        if all(_finite_number(x) for x in pt):
            if good and not (pt[0] > good[-1][0] and pt[1] > good[-1][1]):
                problems.append(Problem(f"table.points[{i}]", repr(pt), "a point above the one before in both H and B"))
            good.append((float(pt[0]), float(pt[1])))
    if len(pts) < 2:
        problems.append(Problem("table.points", repr(pts)[:60], "at least two points (a curve)"))
    elif good and good[0] != (0.0, 0.0):
        problems.append(Problem("table.points[0]", repr(pts[0]), "[0, 0] (the curve starts at the origin)"))
    if problems:
        raise DataError(str(path), problems)
    p = np.array(good, dtype=float)
    return BHCurve(path.stem, p[:, 0], p[:, 1])


def knee_slope() -> float:
    return float(shipped("bh_curves.toml")["table"]["knee_slope"])
