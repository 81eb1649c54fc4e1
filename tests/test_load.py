"""Bad drawings: every problem at once, with its key path, the value found and what was expected."""

from __future__ import annotations

import pytest

from coilstage.drawing.load import load_drawing, parse_drawing
from coilstage.errors import DrawingError

from .conftest import COACH, TRUCK, drawing_text


def problems(text: str) -> list[str]:
    with pytest.raises(DrawingError) as exc:
        parse_drawing(text, "test.toml")
    return [str(p) for p in exc.value.problems]


def one(text: str, where: str) -> str:
    found = [p for p in problems(text) if p.startswith(where)]
    assert found, f"no problem at {where}"
    return found[0]


def test_good_drawings_load():
    d = load_drawing(COACH)
    assert len(d.stages) == 4 and d.supply.system_voltage == 24 and d.supply.code == "F"
    assert load_drawing(TRUCK).supply.v_max == 16.0
    assert parse_drawing(drawing_text(), "x").stages[0].coil.turns == 150


def test_wrong_dimension():
    msg = one(drawing_text().replace('limit_idle = "60 A"', 'limit_idle = "30 V"'), "supply.alternator.limit_idle")
    assert '"30 V"' in msg and "current" in msg and "voltage" in msg


def test_bare_number():
    msg = one(drawing_text().replace('rating = "300 A"', "rating = 300"), "harness[0] (FM).rating")
    assert "unit" in msg


def test_unknown_key_with_suggestion():
    msg = one(drawing_text().replace('base_load = "20 A"', 'base_load = "20 A"\nbase_lod = "2 A"'), "supply.base_lod")
    assert 'did you mean "base_load"' in msg


def test_unknown_element_key_with_suggestion():
    msg = one(drawing_text().replace('length = "3 m"', 'lenght = "3 m"', 1), "harness[1] (WM).lenght")
    assert 'did you mean "length"' in msg


def test_unknown_cable_size_lists_the_table():
    msg = one(drawing_text(branch="7 mm^2"), "harness[4] (W0).size")
    assert '"7 mm^2"' in msg and "6 mm²" in msg and "ISO 6722-1" in msg


@pytest.mark.parametrize("length", ["-2 m", "0 m"])
def test_non_positive_length(length):
    text = drawing_text().replace('length = "1 m"', f'length = "{length}"', 1)
    assert "greater than zero" in one(text, "harness[6] (W0R).length")


def test_dangling_node():
    extra = '[[harness]]\nid = "JX"\nkind = "joint"\nfrom = "DIST"\nto = "NOWHERE"\nresistance = "1 mohm"\n'
    msg = one(drawing_text(harness_extra=extra), "harness[")
    assert "NOWHERE" in msg and "nothing else meets" in msg


def test_stage_without_return_path():
    # stage 0's return cable ends on its own, unconnected stud
    text = drawing_text().replace('from = "S0-"\nto = "GSTUD"', 'from = "S0-"\nto = "STUD2"')
    out = problems(text)
    assert any("return path" in p and "S0" in p for p in out)


def test_toml_syntax_error_has_line_number():
    out = problems('[supply]\nsystem = "12 V"\nbattery = { emf = "12 V"\n')
    assert len(out) == 1 and out[0].startswith("line 3")


def test_every_problem_at_once():
    text = (
        drawing_text(branch="7 mm^2")
        .replace('limit_idle = "60 A"', 'limit_idle = "30 V"')
        .replace('rating = "300 A"', "rating = 300")
        .replace('base_load = "20 A"', 'base_load = "20 A"\nbase_lod = "2 A"')
    )
    out = problems(text)
    wheres = {p.split(":")[0] for p in out}
    assert {"supply.alternator.limit_idle", "harness[0] (FM).rating", "supply.base_lod"} <= wheres
    assert sum("size" in w for w in wheres) == 4  # both branches and both returns


def test_unknown_zone_and_coil():
    text = drawing_text().replace('zone = "chassis"', 'zone = "chasis"', 1).replace('coil = "C0"', 'coil = "C9"')
    out = problems(text)
    assert any('did you mean "chassis"' in p for p in out)
    assert any("coil types" in p and "C9" in p for p in out)


def test_twelve_volt_rating_field_is_not_a_voltage():
    text = drawing_text().replace('rating_24v = "150 A"', 'rating_24v = "24 V"', 1)
    assert "current" in one(text, "harness[3] (K0).rating_24v")


def test_supply_code_must_match_system():
    text = drawing_text().replace('code = "F"', 'code = "C"')
    assert "24 V system" in one(text, "supply.code")


def test_coil_resistance_from_turns_and_wire():
    # R20 = rho20 N l / A (Ohm's law of resistivity; rho20 = 1/58 ohm mm^2/m, IEC 60028):
    # 200 turns x 0.9 m of 2.5 mm^2 copper = 180 m -> 180 / 58 / 2.5 = 1.2414 ohm.
    text = (
        drawing_text()
        .replace('resistance = "1.0 ohm @ 20 degC"', 'mean_turn_length = "0.9 m"\nwire_size = "2.5 mm^2"', 1)
        .replace("turns = 150", "turns = 200", 1)
    )
    d = parse_drawing(text, "x")
    assert d.coils["C0"].r_ref == pytest.approx(180 / 58 / 2.5, rel=1e-12)


def test_hot_temperature_default_is_class_less_allowance():
    text = drawing_text().replace('hot_temperature = "150 degC"\n', "", 1)
    d = parse_drawing(text, "x")
    assert d.coils["C0"].hot_temperature == 165.0  # class H 180 less 15 K (IEC 60085 letters; allowance CP)
    assert any("hot_temperature not given" in a for a in d.assumptions)


def test_zero_ohm_loop_is_refused():
    extra = '[[harness]]\nid = "JB"\nkind = "busbar"\nfrom = "DIST"\nto = "K0.87"\nresistance = "0 ohm"\n'
    text = drawing_text(harness_extra=extra).replace('resistance = "0.5 mohm"', 'resistance = "0 ohm"', 1)
    assert any("loop of zero-ohm" in p for p in problems(text))


def test_file_is_never_modified(tmp_path):
    p = tmp_path / "d.toml"
    text = drawing_text(branch="7 mm^2")
    p.write_text(text)
    before = p.stat().st_mtime_ns
    with pytest.raises(DrawingError):
        load_drawing(p)
    assert p.read_text() == text and p.stat().st_mtime_ns == before


def test_every_default_the_loader_applies_is_a_sourced_row():
    """The defaults are data (coilstage/data/drawing_defaults.toml): each key the loader code asks
    for has a row with a source and a status, and each row is used."""
    import re
    from pathlib import Path

    from coilstage.drawing import defaults

    code = "".join(p.read_text(encoding="utf-8") for p in Path(defaults.__file__).parent.glob("*.py"))
    asked = set(re.findall(r'default\("([a-z_.]+)"\)', code)) | set(re.findall(r"rows\(\)\['([a-z_.]+)'\]", code))
    rows = defaults.rows()
    assert asked <= set(rows), asked - set(rows)
    unused = set(rows) - asked
    assert not unused, unused
    for key, row in rows.items():
        assert row["source"] and row["status"] in ("published", "common practice", "from memory"), key
        defaults.default(key)  # parses
