"""Wire lists: import against a hand-written drawing, round trips, every bad-row message, the build list."""

from __future__ import annotations

import argparse
import csv
import dataclasses
import tomllib
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from coilstage import check
from coilstage.drawing.load import load_drawing, parse_drawing
from coilstage.errors import DrawingError
from coilstage.wirelist import (
    build_drawing,
    build_list,
    read_sheet,
    run_export,
    run_import,
    strip_harness,
    toml_dumps,
    toml_string,
)

from .conftest import COACH, CONFIGS, FLAWED, TRUCK

EXAMPLE = CONFIGS / "wirelist-example.csv"
EXAMPLE_BASE = CONFIGS / "wirelist-example.base.toml"

# The harness of configs/wirelist-example.csv typed by hand, as a drawing writes it.
HAND_HARNESS = """
[[harness]]
id = "W-ALT"
kind = "cable"
from = "ALT"
to = "B+"
size = "120 mm^2"
length = "3.2 m"
insulation = "D"
zone = "engine_bay"
note = "alternator to battery"

[[harness]]
id = "W-STRAP"
kind = "ground"
from = "CHASSIS"
to = "B-"
size = "95 mm^2"
length = "0.6 m"
insulation = "C"
zone = "chassis_rail"
note = "battery negative strap"

[[harness]]
id = "F-MAIN"
kind = "fuse"
from = "B+"
to = "F0"
type = "SF51"
rating = "300 A"
voltage_rating = "58 V"
breaking_capacity = "5 kA"
melting_i2t = "500000 A^2*s"
resistance = "0.15 mohm"
zone = "chassis_rail"
note = "strip fuse on the battery box"

[[harness]]
id = "W-MAIN"
kind = "cable"
from = "F0"
to = "DIST"
size = "95 mm^2"
length = "4.0 m"
insulation = "C"
zone = "chassis_rail"
note = "main feed to the distribution block"

[[harness]]
id = "W-RET"
kind = "ground"
from = "GSTUD"
to = "B-"
size = "95 mm^2"
length = "4.0 m"
insulation = "C"
zone = "chassis_rail"
"""
for _k, (_w, _r) in enumerate([(2.1, 1.3), (2.5, 1.5), (2.9, 1.7)], start=1):
    HAND_HARNESS += f"""
[[harness]]
id = "F{_k}"
kind = "fuse"
from = "DIST"
to = "K{_k}.30"
type = "B"
rating = "100 A"
voltage_rating = "58 V"
breaking_capacity = "5 kA"
melting_i2t = "40000 A^2*s"
resistance = "0.3 mohm"
zone = "retarder_box"

[[harness]]
id = "K{_k}"
kind = "relay"
from = "K{_k}.30"
to = "K{_k}.87"
rating_24v = "150 A"
rated_ambient = "25 degC"
derating = "80 % @ 85 degC"
voltage_rating = "110 V"
coil = {{ voltage = "24 V", resistance = "120 ohm @ 20 degC", operate_voltage = "16.8 V", feed_resistance = "1.5 ohm" }}
resistance = "0.5 mohm"
zone = "retarder_box"

[[harness]]
id = "W{_k}"
kind = "cable"
from = "K{_k}.87"
to = "S{_k}+"
size = "16 mm^2"
length = "{_w} m"
insulation = "C"
zone = "chassis_rail"

[[harness]]
id = "S{_k}"
kind = "stage"
coil = "RX3"
count = 2
connection = "parallel"
suppression.kind = "diode_zener"
suppression.zener_voltage = "24 V"
suppression.forward_voltage = "0.9 V"
suppression.peak_current = "150 A"
suppression.reverse_voltage = "200 V"
suppression.energy_rating = "120 J"
from = "S{_k}+"
to = "S{_k}-"

[[harness]]
id = "W{_k}R"
kind = "ground"
from = "S{_k}-"
to = "GSTUD"
size = "16 mm^2"
length = "{_r} m"
insulation = "C"
zone = "chassis_rail"
"""


def _elements(drawing):
    """The elements without their TOML address (which names the row or the harness index)."""
    return [dataclasses.replace(e, where="") for e in drawing.elements]


def _ns(**kw) -> argparse.Namespace:
    return argparse.Namespace(**kw)


def _write_csv(path: Path, header: list[str], rows: list[list[str]], delimiter: str = ",") -> Path:
    with path.open("w", newline="", encoding="utf-8") as f:
        w = csv.writer(f, delimiter=delimiter)
        w.writerow(header)
        w.writerows(rows)
    return path


def _read_csv(path: Path) -> list[list[str]]:
    with path.open(encoding="utf-8-sig", newline="") as f:
        return list(csv.reader(f))


def _problems(wirelist: Path, base: Path) -> list[str]:
    with pytest.raises(DrawingError) as exc:
        build_drawing(wirelist, base)
    return [str(p) for p in exc.value.problems]


# ---------------------------------------------------------------- import against a hand-written drawing


def test_example_import_equals_the_hand_written_drawing(tmp_path):
    out = tmp_path / "truck.toml"
    assert run_import(_ns(wirelist=str(EXAMPLE), output=str(out), base=None)) == 0
    imported = load_drawing(out)
    hand = parse_drawing(EXAMPLE_BASE.read_text(encoding="utf-8") + HAND_HARNESS, "hand")
    # header units ("size [mm²]", "length [m]"), dotted columns (coil.*, suppression.*), a relay's
    # "rating" at the base's 24 V and the comment row all become what one types by hand
    assert _elements(imported) == _elements(hand)
    assert check(imported)[1] == check(hand)[1]
    text = out.read_text(encoding="utf-8")
    assert "INVENTED SCENARIO" in text  # the base's own comments are kept
    assert "# row 3" in text  # each element says which row it came from


def test_example_has_no_failure(tmp_path):
    out = tmp_path / "truck.toml"
    run_import(_ns(wirelist=str(EXAMPLE), output=str(out), base=None))
    verdicts = check(load_drawing(out))[1]
    assert not [v for v in verdicts if v.status.value == "fail"]


# ---------------------------------------------------------------- round trip


@pytest.mark.parametrize("demo", [COACH, TRUCK, FLAWED], ids=lambda p: p.stem)
def test_round_trip_gives_the_same_check(tmp_path, demo):
    wl = tmp_path / f"{demo.stem}.csv"
    assert run_export(_ns(drawing=str(demo), output=str(wl), build_list=None)) == 0
    assert (tmp_path / f"{demo.stem}-build.csv").exists()
    out = tmp_path / f"{demo.stem}-again.toml"
    assert run_import(_ns(wirelist=str(wl), output=str(out), base=str(demo))) == 0
    a, b = load_drawing(demo), load_drawing(out)
    assert _elements(a) == _elements(b)
    assert check(a)[1] == check(b)[1]


def test_round_trip_through_xlsx(tmp_path):
    pytest.importorskip("openpyxl")
    wl = tmp_path / "coach.xlsx"
    assert run_export(_ns(drawing=str(COACH), output=str(wl), build_list=None)) == 0
    out = tmp_path / "coach-again.toml"
    assert run_import(_ns(wirelist=str(wl), output=str(out), base=str(COACH))) == 0
    assert check(load_drawing(COACH))[1] == check(load_drawing(out))[1]


def test_stages_kept_from_the_base(tmp_path):
    """A base may carry the coil stages; the wire list then has the wires and parts only."""
    base_raw = tomllib.loads(COACH.read_text(encoding="utf-8"))
    stages = [e for e in base_raw["harness"] if e["kind"] == "stage"]
    base = tmp_path / "coach.base.toml"
    base.write_text(strip_harness(COACH.read_text(encoding="utf-8")) + toml_dumps({"harness": stages}), "utf-8")
    full = tmp_path / "full.csv"
    run_export(_ns(drawing=str(COACH), output=str(full), build_list=None))
    rows = _read_csv(full)
    kind = rows[0].index("kind")
    wires = _write_csv(tmp_path / "coach.csv", rows[0], [r for r in rows[1:] if r[kind] != "stage"])
    out = tmp_path / "coach.toml"
    assert run_import(_ns(wirelist=str(wires), output=str(out), base=None)) == 0  # base found by its name
    assert sorted(s.id for s in load_drawing(out).stages) == ["S1", "S2", "S3", "S4"]
    assert check(load_drawing(out))[1] == check(load_drawing(COACH))[1]


def test_semicolons_and_decimal_commas(tmp_path):
    """A spreadsheet saved with a semicolon delimiter writes "2,5" for 2.5."""
    rows = _read_csv(EXAMPLE)
    length = rows[0].index("length [m]")
    for r in rows[1:]:
        if r[length]:
            r[length] = r[length].replace(".", ",")
    wl = _write_csv(tmp_path / "semi.csv", rows[0], rows[1:], delimiter=";")
    hand = parse_drawing(EXAMPLE_BASE.read_text(encoding="utf-8") + HAND_HARNESS, "hand")
    text = build_drawing(wl, EXAMPLE_BASE, tmp_path / "semi.toml").text
    assert _elements(parse_drawing(text, "semi")) == _elements(hand)


# ---------------------------------------------------------------- bad rows: every problem at once, by row and column


def _example_rows() -> tuple[list[str], list[list[str]]]:
    rows = _read_csv(EXAMPLE)
    return rows[0], rows[1:]


def _row_of(rows: list[list[str]], eid: str) -> int:
    """The spreadsheet row number (header = row 1) of element ``eid``."""
    return next(k for k, r in enumerate(rows) if r[0] == eid) + 2


def _set(header, rows, eid, column, value):
    rows[_row_of(rows, eid) - 2][header.index(column)] = value


def test_every_bad_row_reported_at_once_and_nothing_written(tmp_path):
    header, rows = _example_rows()
    _set(header, rows, "W-MAIN", "size [mm²]", "7")  # 7 mm² is not an ISO 6722 size
    _set(header, rows, "W1", "zone", "chasis_rail")  # typo of a zone
    _set(header, rows, "F2", "kind", "fusee")  # typo of a kind
    _set(header, rows, "K3", "rating", "150")  # a bare number in a column without a unit
    _set(header, rows, "F1", "size [mm²]", "16")  # a fuse has no size
    wl = _write_csv(tmp_path / "bad.csv", header, rows)
    out = tmp_path / "bad.toml"
    out.write_text("untouched", encoding="utf-8")
    rc = run_import(_ns(wirelist=str(wl), output=str(out), base=str(EXAMPLE_BASE)))
    assert rc == 2
    assert out.read_text(encoding="utf-8") == "untouched"  # nothing written
    got = _problems(wl, EXAMPLE_BASE)
    r = {eid: _row_of(rows, eid) for eid in ("W-MAIN", "W1", "F2", "K3", "F1")}
    expected_starts = [
        f'row {r["W-MAIN"]}, column size [mm²]: found "7 mm²"; expected a size listed in ISO 6722-1',
        f'row {r["W1"]}, column zone: found "chasis_rail"; expected one of the zones',
        f'row {r["F2"]}, column kind: found "fusee"; expected one of cable, ground, joint, busbar, fuse, relay, stage '
        '(did you mean "fuse"?)',
        f'row {r["K3"]}, column rating: found "150"; expected a current with its unit (e.g. "150 A"), or the unit in '
        'the column header ("rating [A]")',
        f'row {r["F1"]}, column size [mm²]: found "16 mm²"; expected an empty cell: a fuse has no size',
    ]
    for start in expected_starts:
        assert any(g.startswith(start) for g in got), (start, got)
    assert 'did you mean "chassis_rail"' in next(g for g in got if "chasis_rail" in g)
    # rows in order, one message per bad cell
    assert len(got) == len(expected_starts)
    numbers = [int(g.split(",")[0].split()[1]) for g in got]
    assert numbers == sorted(numbers)


@pytest.mark.parametrize(
    "header_change, message",
    [
        (
            ("length [m]", "lenght [m]"),
            'row 1, column lenght [m]: found "lenght [m]"; expected a column name (did you mean "length"?)',
        ),
        (("length [m]", "length [A]"), 'row 1, column length [A]: found "A"; expected a unit for this column'),
        (("to", "towards"), 'row 1: expected a column named "to"'),
        (("note", "size [mm²]"), 'row 1, column size [mm²]: found "size [mm²]"; expected each column once'),
        (
            ("zone", "zone [m]"),
            'row 1, column zone [m]: found "m"; expected a unit for this column (no unit: column zone holds text)',
        ),
    ],
)
def test_bad_header(tmp_path, header_change, message):
    header, rows = _example_rows()
    header[header.index(header_change[0])] = header_change[1]
    wl = _write_csv(tmp_path / "h.csv", header, rows)
    got = _problems(wl, EXAMPLE_BASE)
    assert any(g.startswith(message) for g in got), got


def test_bad_cells(tmp_path):
    header, rows = _example_rows()
    header += ["gates", "rating_24v", "count"]
    for r in rows:
        r += ["", "", ""]
    _set(header, rows, "F1", "gates", "2 times 1 s")  # not "2x 1 s..60 s"
    _set(header, rows, "K1", "rating_24v", "150 A")  # and "rating" too
    _set(header, rows, "S2", "count", "two")  # not a whole number
    _set(header, rows, "W2", "to", "S9+")  # a node nothing else meets at
    _set(header, rows, "W3", "id", "W2")  # an id used twice
    wl = _write_csv(tmp_path / "c.csv", header, rows)
    got = _problems(wl, EXAMPLE_BASE)
    row = {e: _row_of(rows, e) for e in ("F1", "K1", "S2", "W2")}
    want = [
        f'row {row["F1"]}, column gates: found "2 times 1 s"; expected gates as "2x 1 s..60 s; 3.5x 0.1 s..5 s"',
        f'row {row["K1"]}, column rating: found "150 A"; expected either rating or rating_24v',
        f'row {row["S2"]}, column count: found "two"; expected a whole number of at least 1',
        f'row {row["W2"]}, column to: found "S9+"; expected a node that something else connects to',
        f'row {row["W2"] + 5}, column id: found "W2"; expected an id not used before',
    ]
    for start in want:
        assert any(g.startswith(start) for g in got), (start, got)


def test_missing_base_and_overwriting(tmp_path):
    header, rows = _example_rows()
    wl = _write_csv(tmp_path / "alone.csv", header, rows)
    got = _problems(wl, tmp_path / "alone.base.toml")
    assert "expected a base TOML with [supply], [environment] and [coils]" in got[0]
    assert run_import(_ns(wirelist=str(wl), output=str(wl), base=str(EXAMPLE_BASE))) == 2
    assert wl.read_text(encoding="utf-8").startswith("id,kind")  # never written over
    assert run_import(_ns(wirelist=str(wl), output=str(EXAMPLE_BASE), base=str(EXAMPLE_BASE))) == 2


def test_bad_base_reported_with_the_rows(tmp_path):
    """A problem of the base is reported at its key, beside the problems of the rows."""
    base = tmp_path / "b.base.toml"
    base.write_text(EXAMPLE_BASE.read_text(encoding="utf-8").replace('emf = "25.2 V"', 'emf = "25.2"'), "utf-8")
    header, rows = _example_rows()
    _set(header, rows, "W1", "zone", "nowhere")
    got = _problems(_write_csv(tmp_path / "b.csv", header, rows), base)
    assert any(g.startswith("supply.battery.emf") for g in got)
    assert any(g.startswith(f"row {_row_of(rows, 'W1')}, column zone") for g in got)


# ---------------------------------------------------------------- the build list


def test_build_list_of_the_coach():
    lines = {(b.group, b.item): b for b in build_list(load_drawing(COACH))}
    # hand sums over configs/coach-24v-4stage.toml
    c16 = lines[("cable", "16 mm², ISO 6722 class C, copper")]
    assert c16.quantity == 8 and c16.length == pytest.approx(2.0 + 2.3 + 2.6 + 2.9 + 1.2 + 1.4 + 1.6 + 1.8)
    c95 = lines[("cable", "95 mm², ISO 6722 class C, copper")]
    # default rel 1e-6: sums of the drawing's lengths: round-off only
    assert c95.quantity == 3 and c95.length == pytest.approx(0.6 + 4.5 + 4.5)
    assert lines[("cable", "95 mm², ISO 6722 class D, copper")].length == pytest.approx(3.5)  # W-ALT
    fuses = {k[1]: b.quantity for k, b in lines.items() if k[0] == "fuse"}
    assert fuses == {
        "ISO 8820-4 type B, 100 A, 32 V, breaking 4 kA": 4,
        "ISO 8820-5 type SF51, 350 A, 32 V, breaking 5 kA": 1,
    }
    assert lines[("coil", "coil type RC4")].quantity == 8  # four stages of two coils
    relays = [b for k, b in lines.items() if k[0] == "relay"]
    assert len(relays) == 1 and relays[0].quantity == 4 and relays[0].item.startswith("150 A at 24 V")


def test_export_refuses_to_overwrite_the_drawing(tmp_path):
    d = tmp_path / "d.toml"
    d.write_text(COACH.read_text(encoding="utf-8"), encoding="utf-8")
    assert run_export(_ns(drawing=str(d), output=str(d), build_list=None)) == 2
    assert run_export(_ns(drawing=str(d), output=str(tmp_path / "w.csv"), build_list=str(d))) == 2
    assert d.read_text(encoding="utf-8") == COACH.read_text(encoding="utf-8")


def test_export_of_a_bad_drawing(tmp_path, capsys):
    d = tmp_path / "bad.toml"
    d.write_text(COACH.read_text(encoding="utf-8").replace('size = "16 mm^2"', 'size = "7 mm^2"', 1), "utf-8")
    assert run_export(_ns(drawing=str(d), output=str(tmp_path / "w.csv"), build_list=None)) == 2
    assert "7 mm^2" in capsys.readouterr().err
    assert not (tmp_path / "w.csv").exists()


def test_read_sheet_skips_blank_and_comment_rows(tmp_path):
    p = tmp_path / "s.csv"
    p.write_text("\ufeffid,kind,from,to\n\n# a comment,,,\nW1,cable,A,B\n,,,\n", encoding="utf-8")
    sheet = read_sheet(p)
    assert sheet.header == ["id", "kind", "from", "to"]
    assert sheet.rows == [(4, ["W1", "cable", "A", "B"])]  # spreadsheet row numbers


# ---------------------------------------------------------------- TOML writing (tomllib is the reference reader)


@settings(max_examples=200, deadline=None)
@given(st.text())
def test_toml_string_reads_back(s):
    assert tomllib.loads(f"k = {toml_string(s)}")["k"] == s


@pytest.mark.parametrize("demo", [COACH, TRUCK, FLAWED], ids=lambda p: p.stem)
def test_toml_dumps_reads_back(demo):
    raw = tomllib.loads(demo.read_text(encoding="utf-8"))
    assert tomllib.loads(toml_dumps(raw)) == raw


def test_command_modules_through_a_parser(tmp_path):
    """importcmd and exportcmd in the shape the CLI's registry takes (HELP, add_arguments, run)."""
    from coilstage import exportcmd, importcmd

    for mod in (importcmd, exportcmd):
        assert isinstance(mod.HELP, str) and mod.HELP
    p = argparse.ArgumentParser()
    sub = p.add_subparsers(dest="command", required=True)
    importcmd.add_arguments(sub.add_parser("import"))
    exportcmd.add_arguments(sub.add_parser("export"))
    wl, out = tmp_path / "t.csv", tmp_path / "t.toml"
    assert (
        exportcmd.run(p.parse_args(["export", str(TRUCK), "-o", str(wl), "--build-list", str(tmp_path / "b.csv")])) == 0
    )
    assert (tmp_path / "b.csv").read_text(encoding="utf-8").startswith("group,item,quantity")
    assert importcmd.run(p.parse_args(["import", str(wl), "-o", str(out), "-b", str(TRUCK)])) == 0
    assert check(load_drawing(out))[1] == check(load_drawing(TRUCK))[1]
