"""Bad drawings: every problem at once, with its key path, the value found and what was expected."""

from __future__ import annotations

import pytest

from coilstage.drawing.load import load_drawing, parse_drawing
from coilstage.errors import DrawingError

from .conftest import COACH, TRUCK, coach_with_parts, drawing_text, one, problems


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
    # rel 1e-12: 200 turns of 0.9 m of 2.5 mm^2 at rho = 1/58 ohm mm^2/m: round-off only
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


def test_the_schema_keeps_no_literal_of_a_default_the_loader_applies():
    """A value a drawing may leave out comes from its row of drawing_defaults.toml, not from a literal
    in drawing/schema.py: the fields the loader always sets carry no default of their own, and a
    drawing that leaves the keys out gets the rows' values."""
    import dataclasses

    from coilstage.drawing import defaults, schema

    always_set = {
        schema.Drawing: {"switching"},
        schema.Limits: {"max_stages", "max_elements", "max_duty"},
        schema.Joint: {"joint_kind", "rating", "rated_ambient", "derated", "zone", "zone_temperature"},
        schema.CoilType: {"zone_temperature"},
        schema.Battery: {"chemistry", "cranking_standard"},
        schema.Supply: {"load_dump_suppression"},
        schema.RelayCoil: {"suppression"},
    }
    for cls, names in always_set.items():
        fields = {f.name: f for f in dataclasses.fields(cls)}
        for name in names:
            f = fields[name]
            assert f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING, (cls, name)

    text = drawing_text()
    assert "[limits]" not in text and "[switching]" not in text  # the generated drawing leaves both out
    d = parse_drawing(text, "x")
    assert (d.limits.max_stages, d.limits.max_elements) == (
        defaults.default("limits.max_stages"),
        defaults.default("limits.max_elements"),
    )
    assert d.limits.max_duty == defaults.default("limits.max_duty") == 24 * 3600.0  # "24 h" in seconds
    sw = d.switching
    assert (sw.positions, sw.release_limit) == ((), None)
    assert sw.duration == defaults.default("switching.duration")
    assert sw.off_at == sw.duration * defaults.default("switching.off_share")
    assert (sw.release_fraction, sw.cycles) == (
        defaults.default("switching.release_fraction"),
        defaults.default("switching.cycles"),
    )
    coil = next(iter(d.coils.values()))
    assert coil.zone_temperature == d.environment.ambient_max  # no zone named: the highest ambient
    battery = d.supply.battery
    assert (battery.chemistry, battery.cranking_standard, d.supply.load_dump_suppression) == (
        defaults.default("supply.battery.chemistry"),
        defaults.default("supply.battery.cranking_standard"),
        defaults.default("supply.load_dump_suppression"),
    )


# ------------------------------------------------------------------ parts, fixed, "auto", defaults


def test_a_library_part_overridden_in_a_drawing_gives_the_typed_verdicts():
    """The loader expands part references itself (no "part" key reaches the section parsers): the
    drawing with library parts (F1 at its own 80 A) gives the same elements and the same verdicts as
    the coach with the same values typed in and F1 typed at 80 A. The invented library's F-100-B,
    K-150-24-HV and DZ-24-150 carry the coach's own F1, K1 and S1 values."""
    import tomllib

    from coilstage import check
    from coilstage.wirelist import toml_dumps

    got = parse_drawing(coach_with_parts(), "parts.toml", COACH.parent)
    raw = tomllib.loads(COACH.read_text(encoding="utf-8"))
    # the library's F-100-B values typed in (configs/parts/workshop-parts.toml), the rating the drawing's
    next(e for e in raw["harness"] if e["id"] == "F1").update(
        rating="80 A", voltage_rating="58 V", breaking_capacity="3 kA"
    )
    want = parse_drawing(toml_dumps(raw), "typed.toml", COACH.parent)

    def strip(d):
        return [type(e)(**{**e.__dict__, "where": ""}) for e in d.elements]

    assert strip(got) == strip(want)
    assert next(e for e in got.elements if e.id == "F1").rating == 80.0
    verdicts = [(v.rule, v.subject, v.status, v.value) for v in check(got)[1]]
    assert verdicts == [(v.rule, v.subject, v.status, v.value) for v in check(want)[1]]
    by = {p.where: p for p in got.provenance}
    assert by["harness[5] (F1)"].overridden == ("rating",)
    assert "resistance" in by["harness[5] (F1)"].from_library
    assert "harness[8] (S1).suppression" in by
    assert want.provenance == ()


def test_parts_dirs_given_to_the_run(tmp_path):
    """A library given with parts_dirs (the --parts option) resolves a bare name; without it the
    name is a problem at the reference, said once (no "no such key: part" beside it)."""
    text = coach_with_parts().replace('parts = "parts/workshop-parts.toml"', "")
    d = parse_drawing(text, "x", COACH.parent, parts_dirs=(COACH.parent / "parts",))
    assert any(p.ref.endswith("#K-150-24-HV") for p in d.provenance)
    msgs = problems(text)
    assert any(m.startswith("harness[6] (K1).part") and "no parts library was given" in m for m in msgs)
    assert not any("no such key" in m for m in msgs)


def test_fixed_is_read_and_recorded():
    text = drawing_text().replace('id = "FM"', 'id = "FM"\nfixed = true')
    d = parse_drawing(text, "x")
    assert d.fixed == frozenset({"FM"})
    assert parse_drawing(drawing_text(), "x").fixed == frozenset()
    msg = one(drawing_text().replace('id = "FM"', 'id = "FM"\nfixed = "yes"'), "harness[0] (FM).fixed")
    assert "true or false" in msg


@pytest.mark.parametrize(
    "old, new, where, what",
    [
        ('rating = "300 A"', 'rating = "auto"', "harness[0] (FM).rating", "a fuse rating"),
    ],
)
def test_auto_says_what_to_run(old, new, where, what):
    text = drawing_text().replace(old, new)
    got = [m for m in problems(text) if m.startswith(where)]
    assert got == [f'{where}: found "auto"; expected {what} (run coilstage size DRAWING -o NEW.toml to choose one)']


def test_auto_on_every_sizable_key():
    """Cable size, fuse rating, relay rating and stage suppression: each "auto" answered once."""
    text = COACH.read_text(encoding="utf-8")
    import re

    text = re.sub(r'size = "[^"]+"', 'size = "auto"', text, count=1)
    text = re.sub(r'rating_24v = "[^"]+"', 'rating_24v = "auto"', text, count=1)
    text = re.sub(r"suppression = \{[^}]*\}", 'suppression = "auto"', text, count=1)
    msgs = [m for m in problems(text) if '"auto"' in m]
    assert {m.split(": ")[0].rsplit(".", 1)[1] for m in msgs} == {"size", "rating_24v", "suppression"}
    assert all("run coilstage size DRAWING -o NEW.toml" in m for m in msgs)
    assert len(msgs) == 3


def test_defaults_applied_per_element():
    """The keys the drawing left out and the loader filled, per element id: rows of
    drawing_defaults.toml (fuse and relay resistance, relay rated ambient) and the parsers' own
    defaults (a cable's role); a key the drawing writes is never listed."""
    text = drawing_text()
    d = parse_drawing(text, "x")
    assert set(d.defaults_applied) == {e.id for e in d.elements}
    assert "resistance" not in d.defaults_applied["FM"] and "rated_ambient" not in d.defaults_applied["K0"]
    assert "role" in d.defaults_applied["WM"]
    left_out = text.replace('resistance = "0.2 mohm"\n', "", 1).replace('rated_ambient = "85 degC"\n', "", 1)
    d2 = parse_drawing(left_out, "x")
    assert "resistance" in d2.defaults_applied["FM"]
    assert "rated_ambient" in d2.defaults_applied["K0"]
    assert "rated_ambient" not in d2.defaults_applied["K1"]  # K1 still writes its own


def test_unknown_kind_lists_the_kinds():
    msg = one(drawing_text().replace('kind = "fuse"', 'kind = "fusee"', 1), "harness[0].kind")
    for k in ("busbar", "cable", "fuse", "ground", "joint", "relay", "stage"):
        assert f'"{k}"' in msg
    assert 'did you mean "fuse"' in msg


@pytest.mark.parametrize("bad", ["{ a = 1 }", '["fuse"]', "3"])
def test_a_kind_that_is_not_text_lists_the_kinds(bad):
    """A table, a list or a number as an element's kind: a problem naming the kinds, no crash in the
    loader's own passes (parts, fixed, "auto", defaults)."""
    msg = one(drawing_text().replace('kind = "fuse"', f"kind = {bad}", 1), "harness[0].kind")
    assert 'expected one of "busbar", "cable", "fuse", "ground", "joint", "relay", "stage"' in msg
