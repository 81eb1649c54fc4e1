"""Parts libraries: reading and checking a library, resolving references, a part overridden in a drawing."""

from __future__ import annotations

import dataclasses
import tomllib
from pathlib import Path

import pytest

from coilstage import check
from coilstage.drawing.load import parse_drawing
from coilstage.errors import DataError
from coilstage.parts_library import expand_parts, load_library, resolve
from coilstage.wirelist import toml_dumps

from .conftest import COACH, CONFIGS

LIBRARY = CONFIGS / "parts" / "workshop-parts.toml"


def _coach_raw() -> dict:
    return tomllib.loads(COACH.read_text(encoding="utf-8"))


def _element(raw: dict, eid: str) -> dict:
    return next(e for e in raw["harness"] if e["id"] == eid)


def _elements(drawing):
    return [dataclasses.replace(e, where="") for e in drawing.elements]


def test_example_library():
    lib = load_library(LIBRARY)
    (parts,) = lib.files.values()
    assert list(parts) == [
        "F-100-B",
        "F-350-S51",
        "K-150-24",
        "K-150-24-HV",
        "DZ-24-150",
        "C-16-C",
        "LUG-M10-95",
        "POST-M10-2",
    ]
    f = parts["F-100-B"]
    assert (f.kind, f.fields["rating"], f.fields["breaking_capacity"]) == ("fuse", "100 A", "3 kA")
    assert f.series == ("40 A", "60 A", "80 A", "100 A", "125 A")
    assert "invented" in f.source and f.status.startswith("published")
    assert [p.name for p in lib.parts_of("fuse")] == ["F-100-B", "F-350-S51"]
    assert load_library(CONFIGS / "parts").files == lib.files  # a folder is a library too


BAD = """
[table]
kind = "parts"
title = "bad on purpose"
standard = "none"
status = "from memory"
rows = [
  { name = "F1", kind = "fuse", type = "Q", rating = "60", source = "sheet", status = "published" },
  { name = "F1", kind = "fuse", rating = "60 A", source = "sheet", status = "published" },
  { name = "K1", kind = "relay", rating_24v = "150 A", ratng_12v = "200 A", source = "sheet", status = "copied" },
  { name = "K2", kind = "relay", coil = { voltage = "24 V", resistence = "120 ohm @ 20 degC" }, status = "published" },
  { name = "X", kind = "fusible", rating = "1 A", source = "s", status = "published" },
  { name = "D", kind = "suppressor", suppression_kind = "zener", source = "s", status = "published" },
  { name = "G", kind = "fuse", gates = [{ multiple = "two", min = "1 s" }], source = "s", status = "published" },
]
"""


def test_every_problem_of_a_library_at_once(tmp_path):
    folder = tmp_path / "lib"
    folder.mkdir()
    (folder / "a.toml").write_text(BAD, encoding="utf-8")
    (folder / "b.toml").write_text("[table]\nkind = 'tables'\n", encoding="utf-8")
    with pytest.raises(DataError) as exc:
        load_library(folder)
    got = [str(p) for p in exc.value.problems]
    a = str(folder / "a.toml")
    b = str(folder / "b.toml")
    want = [
        f'{a}, part F1, key type: found "Q"; expected an ISO 8820 fuse type',
        f'{a}, part F1, key rating: found "60"; expected a current',
        f'{a}, part F1, key name: found "F1"; expected a name not used before in this file (also row 1)',
        f'{a}, part K1, key status: found "copied"; expected one of published, from memory',
        f'{a}, part K1, key ratng_12v: expected a key of a relay part (did you mean "rating_12v"?)',
        f"{a}, part K2, key source: expected the datasheet or table the values were read from",
        f"{a}, part K2, key coil.resistence: expected a key of a relay coil",
        f'{a}, part X, key kind: found "fusible"; expected one of fuse, relay',
        f'{a}, part D, key suppression_kind: found "zener"; expected one of diode, diode_zener',
        f"{a}, part G, key gates[0]: found",
        f'{b}, table.kind: found "tables"; expected "parts"',
        f"{b}, table.title: found None; expected a text",
        f"{b}, table.rows: expected one or more part rows",
    ]
    for start in want:
        assert any(g.startswith(start) for g in got), (start, got)
    assert len(got) == len(want) + 2  # and the missing standard and status of b.toml
    assert any(g.startswith(f"{b}, table.standard") for g in got)
    assert any(g.startswith(f"{b}, table.status") for g in got)


def test_a_library_part_overridden_in_a_drawing():
    """F1 of the coach from the library with its rating written over; K1's coil merged key by key;
    S1's suppressor from the library. The result equals the coach with those values typed in."""
    raw = _coach_raw()
    f1 = _element(raw, "F1")
    for k in ("type", "rating", "voltage_rating", "breaking_capacity", "melting_i2t", "resistance"):
        del f1[k]
    f1["part"] = "parts/workshop-parts.toml#F-100-B"
    f1["rating"] = "80 A"  # the drawing's own value wins
    k1 = _element(raw, "K1")
    for k in ("rating_24v", "rating_12v", "rated_ambient", "derating", "voltage_rating", "resistance"):
        del k1[k]
    k1["part"] = "K-150-24-HV"  # by name alone: found in the libraries given to the run
    k1["coil"] = {"feed_resistance": "1.5 ohm", "rise": "25 K"}  # the rest of the coil from the library
    _element(raw, "S1")["suppression"] = {"part": "DZ-24-150"}
    expanded, records, problems = expand_parts(raw, CONFIGS, (CONFIGS / "parts",))
    assert problems == []
    got = parse_drawing(toml_dumps(expanded), "expanded", CONFIGS)

    typed = _coach_raw()
    # the library's F-100-B values typed in (configs/parts/workshop-parts.toml), the rating the drawing's
    _element(typed, "F1").update(rating="80 A", voltage_rating="58 V", breaking_capacity="3 kA")
    want = parse_drawing(toml_dumps(typed), "typed", CONFIGS)
    assert _elements(got) == _elements(want)
    assert check(got)[1] == check(want)[1]

    by_where = {r.where: r for r in records}
    r_f1 = by_where["harness[5] (F1)"]
    assert r_f1.ref == "workshop-parts.toml#F-100-B"
    assert r_f1.from_library == ("type", "voltage_rating", "breaking_capacity", "melting_i2t", "resistance")
    assert r_f1.overridden == ("rating",)
    assert "the drawing's own rating used instead of the library's" in r_f1.text()
    assert "source: datasheet BF-100" in r_f1.text()
    r_k1 = by_where["harness[6] (K1)"]
    assert "coil.voltage" in r_k1.from_library and "coil.feed_resistance" not in r_k1.from_library
    assert by_where["harness[8] (S1).suppression"].from_library[0] == "kind"
    assert raw["harness"][5]["part"] == "parts/workshop-parts.toml#F-100-B"  # the input is not modified


def test_library_named_in_the_drawing(tmp_path):
    raw = _coach_raw()
    raw["tables"] = {"parts": "parts/workshop-parts.toml"}
    _element(raw, "W1")["part"] = "C-16-C"
    expanded, records, problems = expand_parts(raw, CONFIGS)
    assert problems == []
    w1 = _element(expanded, "W1")
    assert w1["outer_diameter"] == "7.4 mm" and w1["size"] == "16 mm^2"  # the drawing's own size kept
    assert records[0].overridden == ("size", "insulation")


@pytest.mark.parametrize(
    "ref, kind, expected",
    [
        ("nowhere.toml#F-100-B", "fuse", "a parts library file nowhere.toml"),
        ("parts/workshop-parts.toml#F-100", "fuse", "a part of workshop-parts.toml: F-100-B, F-350-S51, K-150-24"),
        ("parts/workshop-parts.toml#K-150-24", "fuse", "a part for a fuse (workshop-parts.toml#K-150-24 is a relay)"),
        ("K-151-24", "relay", "a part of the libraries given: C-16-C, DZ-24-150"),
        ("", "fuse", 'a part reference such as "my-parts.toml#F-60-B"'),
    ],
)
def test_bad_references(ref, kind, expected):
    lib = load_library(CONFIGS / "parts")
    merged, rec, problems = resolve(ref, {"id": "X"}, kind, "harness[2] (X)", CONFIGS, lib)
    assert merged is None and rec is None
    assert len(problems) == 1 and problems[0].where == "harness[2] (X).part"
    assert problems[0].expected.startswith(expected), problems[0].expected


def test_ambiguous_and_unlibraried_names(tmp_path):
    (tmp_path / "one.toml").write_text(LIBRARY.read_text(encoding="utf-8"), encoding="utf-8")
    (tmp_path / "two.toml").write_text(LIBRARY.read_text(encoding="utf-8"), encoding="utf-8")
    lib = load_library(tmp_path)
    _m, _r, problems = resolve("F-100-B", {}, "fuse", "harness[0]", tmp_path, lib)
    assert problems[0].expected == "a reference naming its file (one.toml#F-100-B, two.toml#F-100-B)"
    _m, _r, problems = resolve("F-100-B", {}, "fuse", "harness[0]", tmp_path, None)
    assert "no parts library was given" in problems[0].expected


def test_a_bad_library_reported_through_the_drawing(tmp_path):
    (tmp_path / "bad.toml").write_text(BAD, encoding="utf-8")
    raw = _coach_raw()
    raw["tables"] = {"parts": ["bad.toml"]}
    _expanded, _records, problems = expand_parts(raw, tmp_path)
    assert len(problems) == 10 and all(str(p).startswith(str(tmp_path / "bad.toml")) for p in problems)


def test_element_kind_taken_from_the_part():
    lib = load_library(LIBRARY)
    merged, rec, problems = resolve(
        "LUG-M10-95", {"id": "J1", "from": "A", "to": "B"}, None, "harness[0]", Path("."), lib
    )
    assert problems == [] and merged["kind"] == "joint" and merged["resistance"] == "0.05 mohm"
    # a lug part is a lug: it gives the joint its kind with the maker's data
    assert merged["joint"] == "lug"
    assert rec.from_library == ("joint", "resistance", "rating", "rated_ambient", "derating", "conductor_range")


# ---------------------------------------------------------------- joints and lugs with their makers' data


def _coach_with_a_return_lug(**lug) -> dict:
    """The coach with its main return W-RET ending on a lug J-BAT at the battery's negative post."""
    raw = _coach_raw()
    _element(raw, "W-RET")["to"] = "B-S"
    raw["harness"].append({"id": "J-BAT", "kind": "joint", "from": "B-S", "to": "B-", **lug})
    return raw


def test_a_library_lug_overridden_in_a_drawing():
    """J-BAT from the invented workshop library's LUG-M10-95 (configs/parts/workshop-parts.toml) with
    its rating written over equals the same lug with the library's values typed in; the record and
    the parts list say which values came from the library."""
    from coilstage.report import parts

    raw = _coach_with_a_return_lug(
        part="workshop-parts.toml#LUG-M10-95", rating="350 A", cable="W-RET", zone="chassis_rail"
    )
    raw["tables"] = {"parts": "parts/workshop-parts.toml"}
    text = toml_dumps(raw)
    got = parse_drawing(text, "lug.toml", CONFIGS)
    typed = _coach_with_a_return_lug(
        joint="lug",
        resistance="0.05 mohm",
        rating="350 A",
        rated_ambient="30 degC",
        derating="80 % @ 85 degC",
        conductor_range=["70 mm^2", "95 mm^2"],
        cable="W-RET",
        zone="chassis_rail",
    )
    want = parse_drawing(toml_dumps(typed), "typed.toml", CONFIGS)
    j = next(e for e in got.elements if e.id == "J-BAT")
    assert (j.joint_kind, j.rating, j.rated_ambient, j.derated) == ("lug", 350.0, 30.0, (0.8, 85.0))
    # default rel 1e-6: the part's conductor range converted to SI: round-off only
    assert j.conductor_range == pytest.approx((70e-6, 95e-6))
    assert j.part == "workshop-parts.toml#LUG-M10-95"
    unref = [dataclasses.replace(e, part="") if e.id == "J-BAT" else e for e in _elements(got)]
    assert unref == _elements(want)
    verdicts = check(got)[1]
    assert verdicts == check(want)[1]
    # the lug's barrel range (from the library) is what its fit is judged on: W-RET is 95 mm²
    lug = [v for v in verdicts if v.subject == "J-BAT" and v.rule.startswith("joint.") and "range" in v.note]
    assert lug and all(v.status.value == "pass" for v in lug)

    (rec,) = [r for r in got.provenance if r.where.endswith("(J-BAT)")]
    assert rec.from_library == ("joint", "resistance", "rated_ambient", "derating", "conductor_range")
    assert rec.overridden == ("rating",)
    assert "the drawing's own rating used instead of the library's" in rec.text()
    assert "source: terminal datasheet T-95" in rec.text()

    rows = {p["id"]: p for p in parts.build(got, tomllib.loads(text))["parts"]}
    origin = {r["key"]: r["origin"] for r in rows["J-BAT"]["values"]}
    for key in ("joint", "resistance", "rated_ambient", "derating", "conductor_range"):
        assert origin[key] == "library", key
    assert origin["rating"] == "drawing" and origin["cable"] == "drawing"
    note = next(r["note"] for r in rows["J-BAT"]["values"] if r["key"] == "derating")
    assert "workshop-parts.toml#LUG-M10-95" in note


def test_a_joint_part_on_a_ground_path_gives_its_resistance_only():
    lib = load_library(LIBRARY)
    own = {"id": "G1", "kind": "ground", "from": "A", "to": "B"}
    merged, rec, problems = resolve("POST-M10-2", own, "ground", "harness[0] (G1)", Path("."), lib)
    assert problems == []
    assert merged == {**own, "resistance": "0.1 mohm"}
    assert rec.from_library == ("resistance",)
    assert rec.unused == ("joint", "rating", "rated_ambient", "derating")
    assert "the library's joint, rating, rated_ambient, derating not used" in rec.text()
    merged, rec, problems = resolve("POST-M10-2", {"id": "J1", "from": "A", "to": "B"}, None, "j", Path("."), lib)
    assert merged["joint"] == "stud" and merged["rating"] == "250 A" and rec.unused == ()


JOINTS_BAD = """
[table]
kind = "parts"
title = "bad joints on purpose"
standard = "none"
status = "from memory"
rows = [
  { name = "L1", kind = "lug", joint = "stud", resistance = "0.1 mohm", source = "s", status = "published" },
  { name = "L2", kind = "lug", conductor_range = ["95 mm^2", "70 mm^2"], source = "s", status = "published" },
  { name = "L3", kind = "lug", conductor_range = "95 mm^2", source = "s", status = "published" },
  { name = "J1", kind = "joint", joint = "bolt", derating = "80 %", source = "s", status = "published" },
  { name = "J2", kind = "joint", rating = "300", rated_ambient = "hot", source = "s", status = "published" },
]
"""


def test_every_problem_of_a_joint_part_at_once(tmp_path):
    path = tmp_path / "joints.toml"
    path.write_text(JOINTS_BAD, encoding="utf-8")
    with pytest.raises(DataError) as exc:
        load_library(path)
    got = [str(p) for p in exc.value.problems]
    f = str(path)
    want = [
        f"{f}, part L1, key joint: expected a key of a lug part",
        f"{f}, part L2, key conductor_range: found ['95 mm^2', '70 mm^2']; expected a smallest size no larger",
        f'{f}, part L3, key conductor_range: found "95 mm^2"; expected the smallest and largest conductor',
        f'{f}, part J1, key joint: found "bolt"; expected one of connector, fuse_holder, lug, splice, stud',
        f'{f}, part J1, key derating: found "80 %"; expected a fraction at a temperature',
        f'{f}, part J2, key rating: found "300"; expected a current',
        f'{f}, part J2, key rated_ambient: found "hot"',
    ]
    for start in want:
        assert any(g.startswith(start) for g in got), (start, got)
    assert len(got) == len(want)
