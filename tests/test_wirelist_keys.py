"""Wire-list columns for every element key the loader accepts: a drawing using each of them goes
through export and import with the same check, bad cells in those columns are answered by row and
column, and a value no cell can carry is refused at its key."""

from __future__ import annotations

import argparse
import csv
import dataclasses
import tomllib
from pathlib import Path

import pytest

from coilstage import check
from coilstage.drawing import load, relays, stages
from coilstage.drawing.harness import ELEMENT_KEYS
from coilstage.drawing.load import load_drawing
from coilstage.errors import DrawingError
from coilstage.wirelist import COLUMNS, NESTED, build_drawing, run_export, run_import, toml_dumps, wirelist_rows

from .conftest import COACH, CONFIGS

LIBRARY = CONFIGS / "parts" / "workshop-parts.toml"

#: the columns the drawing below fills that the demo drawings leave empty
NEW_COLUMNS = (
    "insulation_material",
    "length_tolerance",
    "categories",
    "coil.suppression",
    "coil.fuse",
    "coil.wire_size",
    "joint",
    "cable",
    "conductor_range",
    "suppression.part",
    "fixed",
    "part",
)


def _ns(**kw) -> argparse.Namespace:
    return argparse.Namespace(**kw)


def every_key_raw() -> dict:
    """The coach (configs/coach-24v-4stage.toml) with every element key a demo leaves out: cable
    length tolerances in each of their forms (± length, low/high with a distribution, a two-end list
    mixing % and m, a bare ratio, on a ground cable), an insulation material, sizing's ``fixed``
    flag, a relay coil's suppression, fuse and wire size, a rated category with its rating, a
    suppressor and a fuse from the invented workshop library, and two lugs on the returns: one
    with all its data written out, one from the library with its rating written over."""
    raw = tomllib.loads(COACH.read_text(encoding="utf-8"))
    el = {e["id"]: e for e in raw["harness"]}
    el["W-ALT"]["insulation_material"] = "xlpo-vehicle"
    # keys the demos leave out that older columns carry, so that every key of the loader is used
    el["W-MAIN"].update(role="feed", sheathed=False, material="copper", conductor_table="iso6722-1", wall="thick")
    el["W1"]["outer_diameter"] = "8.5 mm"
    el["F1"]["protects"] = ["W1"]
    el["F4"]["gates"] = [{"multiple": 2, "min": "1 s", "max": "60 s"}, {"multiple": 5.0, "max": "0.5 s"}]
    el["K3"]["max_ambient"] = "85 degC"
    el["K4"]["inductive_break"] = "60 A @ 15 ms"
    el["S3"]["suppression"] = {
        "kind": "tvs",
        "clamp_voltage": "36 V",
        "peak_current": "150 A",
        "energy_rating": "120 J",
    }
    el["S4"]["suppression"] = {"kind": "diode_resistor", "forward_voltage": "0.9 V", "resistance": "0.2 ohm"}
    if "cyclic_factor" in ELEMENT_KEYS["fuse"]:  # the maker's cyclic derating of a fuse
        el["F2"]["cyclic_factor"] = 0.8
        el["F3"].update(cyclic_factor="75 %", cyclic_cycles=100000)
    el["W1"]["length_tolerance"] = "0.2 m"
    el["W2"]["length_tolerance"] = {"low": "-5 %", "high": "+10 %", "distribution": "normal"}
    el["W3"]["length_tolerance"] = ["-2 %", "0.1 m"]
    el["W4"]["length_tolerance"] = 0.05
    el["W1R"]["length_tolerance"] = {"low": "-3 %", "high": "3 %"}
    el["F1"]["fixed"] = True
    el["F2"]["fixed"] = False
    el["K1"]["coil"].update(suppression="diode", fuse="5 A", wire_size="1 mm^2")
    el["K2"]["categories"] = ["DC-1", {"category": "DC-13", "current": "2.5 A", "voltage": "24 V"}]
    el["S2"]["suppression"] = {"part": "DZ-24-150"}
    for k in ("type", "voltage_rating", "breaking_capacity", "melting_i2t", "resistance"):
        del el["F3"][k]
    el["F3"]["part"] = "workshop-parts.toml#F-100-B"
    raw["tables"] = {"parts": LIBRARY.as_posix()}
    el["W-RET"]["to"] = "B-S"
    raw["harness"].append(
        {
            "id": "J-BAT",
            "kind": "joint",
            "from": "B-S",
            "to": "B-",
            "joint": "lug",
            "resistance": "60 uohm",
            "rating": "300 A",
            "rated_ambient": "30 degC",
            "derating": "80 % @ 85 degC",
            "zone": "chassis_rail",
            "conductor_range": ["70 mm^2", "95 mm^2"],
            "cable": "W-RET",
            "note": "lug of the main return on the battery post",
        }
    )
    el["W-STRAP"]["to"] = "B-T"
    raw["harness"].append(
        {
            "id": "J-STRAP",
            "kind": "joint",
            "from": "B-T",
            "to": "B-",
            "part": "LUG-M10-95",
            "rating": "400 A",
            "cable": "W-STRAP",
        }
    )
    return raw


@pytest.fixture
def every_key(tmp_path) -> Path:
    path = tmp_path / "every-key.toml"
    path.write_text(toml_dumps(every_key_raw()), encoding="utf-8")
    return path


def _exported(drawing: Path, tmp_path: Path) -> Path:
    wl = tmp_path / "every-key.csv"
    assert run_export(_ns(drawing=str(drawing), output=str(wl), build_list=None)) == 0
    return wl


def _read_csv(path: Path) -> list[list[str]]:
    with path.open(encoding="utf-8-sig", newline="") as f:
        return list(csv.reader(f))


def _write_csv(path: Path, rows: list[list[str]]) -> Path:
    with path.open("w", newline="", encoding="utf-8") as f:
        csv.writer(f).writerows(rows)
    return path


def _verdicts(drawing) -> list[tuple]:
    return [(v.rule, v.subject, v.status, v.value) for v in check(drawing)[1]]


def test_every_key_the_loader_accepts_has_a_column():
    """The loader's key tables against the wire list's columns: a key added to the drawing format
    without a column fails here (export would refuse every drawing that uses it)."""
    plain = set().union(*ELEMENT_KEYS.values()) | {load.FIXED_KEY, "part"}
    nested = {"coil": relays.KEYS["relay_coil"], "suppression": stages.KEYS["suppression"] | {"part"}}
    missing = sorted(k for k in plain if k not in COLUMNS and k not in NESTED)
    missing += sorted(f"{t}.{k}" for t, keys in nested.items() for k in keys if f"{t}.{k}" not in COLUMNS)
    assert missing == []
    assert set(NESTED) == set(nested)
    # and the round-trip drawing below uses every one of them
    raw = every_key_raw()
    used = {k for e in raw["harness"] for k in e} | {
        f"{t}.{k}" for e in raw["harness"] for t in NESTED if isinstance(e.get(t), dict) for k in e[t]
    }
    unused = sorted(k for k in plain - set(NESTED) if k not in used)
    unused += sorted(f"{t}.{k}" for t, keys in nested.items() for k in keys if f"{t}.{k}" not in used)
    assert unused == []


def test_every_key_round_trip_gives_the_same_check(every_key, tmp_path):
    wl = _exported(every_key, tmp_path)
    rows = _read_csv(wl)
    header = rows[0]
    for col in NEW_COLUMNS:  # each new column is written, and filled on some row
        assert col in header, col
        assert any(r[header.index(col)] for r in rows[1:]), col
    out = tmp_path / "again.toml"
    assert run_import(_ns(wirelist=str(wl), output=str(out), base=str(every_key))) == 0
    a, b = load_drawing(every_key), load_drawing(out)
    # the keys were read, so a round trip that lost one would show
    assert {"cables.W1.length_tolerance", "cables.W2.length_tolerance", "cables.W1R.length_tolerance"} <= set(
        a.tolerances
    )
    assert a.tolerances["cables.W2.length_tolerance"].distribution == "normal"
    assert a.fixed == {"F1"}
    j = next(e for e in a.elements if e.id == "J-BAT")
    assert (j.joint_kind, j.cable, j.rating) == ("lug", "W-RET", 300.0)
    assert [dataclasses.replace(e, where="") for e in a.elements] == [
        dataclasses.replace(e, where="") for e in b.elements
    ]
    assert (a.tolerances, a.fixed) == (b.tolerances, b.fixed)
    assert [(p.ref, p.from_library, p.overridden) for p in a.provenance] == [
        (p.ref, p.from_library, p.overridden) for p in b.provenance
    ]
    before, after = _verdicts(a), _verdicts(b)
    assert any(rule.startswith("joint.") and subject == "J-BAT" for rule, subject, _s, _v in before)
    assert before == after
    assert check(a)[1] == check(b)[1]  # and every other field of every verdict


def test_every_key_round_trip_through_xlsx(every_key, tmp_path):
    pytest.importorskip("openpyxl")
    wl = tmp_path / "every-key.xlsx"
    assert run_export(_ns(drawing=str(every_key), output=str(wl), build_list=None)) == 0
    out = tmp_path / "again.toml"
    assert run_import(_ns(wirelist=str(wl), output=str(out), base=str(every_key))) == 0
    assert _verdicts(load_drawing(every_key)) == _verdicts(load_drawing(out))


def test_written_cells_of_the_new_columns(every_key, tmp_path):
    rows = _read_csv(_exported(every_key, tmp_path))
    header = rows[0]
    cell = {(r[0], c): r[header.index(c)] for r in rows[1:] for c in header}
    assert cell[("W2", "length_tolerance")] == "-5 % .. +10 % (normal)"
    assert cell[("W3", "length_tolerance")] == "-2 % .. 0.1 m"
    assert cell[("W4", "length_tolerance")] == "0.05"
    assert cell[("K2", "categories")] == "DC-1; DC-13 (2.5 A @ 24 V)"
    assert cell[("J-BAT", "conductor_range")] == "70 mm^2 .. 95 mm^2"
    assert (cell[("F1", "fixed")], cell[("F2", "fixed")]) == ("yes", "no")
    assert cell[("S2", "suppression.part")] == "DZ-24-150"


def test_build_list_names_the_joints(every_key):
    from coilstage.wirelist import build_list

    items = {b.item for b in build_list(load_drawing(every_key)) if b.group == "joint"}
    # J-BAT as drawn; J-STRAP from LUG-M10-95 of configs/parts/workshop-parts.toml, its rating the drawing's
    assert items == {"lug, 0.06 mΩ, 300 A at 30 °C, takes 70-95 mm²", "lug, 0.05 mΩ, 400 A at 30 °C, takes 70-95 mm²"}


def test_cells_a_spreadsheet_user_types(every_key, tmp_path):
    """Units in the header, a ± sign, a symmetric tolerance with its distribution and a decimal
    comma read as the drawing's own forms."""
    rows = _read_csv(_exported(every_key, tmp_path))
    header = rows[0]
    at = {r[0]: k for k, r in enumerate(rows)}
    tol, rng = header.index("length_tolerance"), header.index("conductor_range")
    header[rng] = "conductor_range [mm²]"
    rows[at["W1"]][tol] = "±0,2 m (uniform)"
    rows[at["W2"]][tol] = "-5 % .. +10 % (normal)"
    rows[at["J-BAT"]][rng] = "70 .. 95"
    wl = tmp_path / "typed.csv"
    with wl.open("w", newline="", encoding="utf-8") as f:
        csv.writer(f, delimiter=";").writerows(rows)
    text = build_drawing(wl, every_key, tmp_path / "typed.toml").text
    raw = tomllib.loads(text)
    el = {e["id"]: e for e in raw["harness"]}
    assert el["W1"]["length_tolerance"] == {"low": "-0.2 m", "high": "0.2 m", "distribution": "uniform"}
    assert el["J-BAT"]["conductor_range"] == ["70 mm²", "95 mm²"]
    (tmp_path / "typed.toml").write_text(text, encoding="utf-8")
    typed = load_drawing(tmp_path / "typed.toml")
    spec = typed.tolerances["cables.W1.length_tolerance"]
    assert (spec.low, spec.high, spec.distribution) == pytest.approx((-0.1, 0.1, "uniform"))  # 0.2 m of 2.0 m


def _problems(wl: Path, base: Path) -> list[str]:
    with pytest.raises(DrawingError) as exc:
        build_drawing(wl, base)
    return [str(p) for p in exc.value.problems]


def test_bad_cells_in_the_new_columns(every_key, tmp_path):
    rows = _read_csv(_exported(every_key, tmp_path))
    header = rows[0]
    at = {r[0]: k for k, r in enumerate(rows)}  # the spreadsheet row number is k + 1

    def put(eid: str, column: str, text: str) -> int:
        rows[at[eid]][header.index(column)] = text
        return at[eid] + 1

    bad = {
        put(
            "W1", "length_tolerance", "ten %"
        ): 'column length_tolerance: found "ten %"; expected a ratio written as a number',
        put("W2", "length_tolerance", "-5 % .. 10 % (gaussian)"): 'column length_tolerance: found "-5 % .. 10 % '
        '(gaussian)"; expected "(normal)" or "(uniform)" after the ends',
        put("W3", "length_tolerance", "-10 % (normal)"): 'column length_tolerance: found "-10 % (normal)"; '
        "expected a tolerance without a sign",
        put("J-BAT", "conductor_range", "70 mm^2"): 'column conductor_range: found "70 mm^2"; expected the smallest '
        "and largest conductor",
        put("K2", "categories", "DC-1; DC-13 (2.5 A)"): 'column categories: found "DC-13 (2.5 A)"; expected rated '
        "categories separated by ;",
        put("K1", "coil.fuse", "5"): 'column coil.fuse: found "5"; expected a current with its unit',
        put("K3", "coil.suppression", "snubber"): 'column coil.suppression: found "snubber"; expected one of '
        '"none", "diode"',
        put("J-STRAP", "cable", "W-NONE"): 'column cable: found "W-NONE"; expected the id of a cable in the harness',
        put("W4", "joint", "lug"): 'column joint: found "lug"; expected an empty cell: a cable has no joint',
        put("F4", "fixed", "perhaps"): 'column fixed: found "perhaps"; expected yes or no',
    }
    wl = _write_csv(tmp_path / "bad.csv", rows)
    got = _problems(wl, every_key)
    for row, words in bad.items():
        start = f"row {row}"
        assert any(g.startswith(start) and words in g for g in got), (start, words, got)
    assert len(got) == len(bad)  # one message per bad cell, none for the good ones
    out = tmp_path / "bad.toml"
    assert run_import(_ns(wirelist=str(wl), output=str(out), base=str(every_key))) == 2
    assert not out.exists()


def test_a_value_no_cell_carries_is_refused_at_its_key(tmp_path, capsys):
    """An empty protects list (an empty cell would read as "not given", a different drawing) and
    an id starting with # (a comment row) are refused by export with the key named; so is a key
    no column is for."""
    raw = every_key_raw()
    f1 = next(e for e in raw["harness"] if e["id"] == "F1")
    f1["protects"] = []
    d = tmp_path / "d.toml"
    d.write_text(toml_dumps(raw), encoding="utf-8")
    load_drawing(d)  # the drawing itself loads
    wl = tmp_path / "d.csv"
    assert run_export(_ns(drawing=str(d), output=str(wl), build_list=None)) == 2
    err = capsys.readouterr().err
    assert "harness[5] (F1).protects: found []; expected ids in a list of at least one" in err
    assert not wl.exists() and not (tmp_path / "d-build.csv").exists()

    raw["harness"][5]["protects"] = ["W1"]
    raw["harness"][5]["sleeve_colour"] = "red"
    raw["harness"][1]["id"] = "#STRAP"
    with pytest.raises(DrawingError) as exc:
        wirelist_rows(raw)
    got = [str(p) for p in exc.value.problems]
    assert got[0].startswith('harness[1] (#STRAP).id: found "#STRAP"; expected an id not starting with #')
    assert got[1].startswith('harness[5] (F1).sleeve_colour: found "red"; expected a key a wire list has a column')
    assert len(got) == 2
