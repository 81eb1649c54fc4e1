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
    assert list(parts) == ["F-100-B", "F-350-S51", "K-150-24", "DZ-24-150", "C-16-C", "LUG-M10-95"]
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
    k1["part"] = "K-150-24"  # by name alone: found in the libraries given to the run
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
    assert rec.from_library == ("resistance",)
