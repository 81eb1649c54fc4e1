"""What the drawing says about its parts and their state: the battery's chemistry and ratings, central
load-dump suppression, the rotor-heated coil zone, the relay coil circuit and joints. Each key read
(value and unit), each bad value answered at its key path with what was expected, and a drawing
without these keys read as before."""

from __future__ import annotations

import pytest

from coilstage.analysis.circuit import Circuit, SourceState, element_resistance
from coilstage.drawing.load import load_drawing, parse_drawing
from coilstage.drawing.schema import Joint, Resistor

from .conftest import COACH, drawing_text, one, problems


def _d(text: str):
    return parse_drawing(text, "t.toml")


def _battery(extra: str) -> str:
    return drawing_text().replace('internal_resistance = "8 mohm"', 'internal_resistance = "8 mohm"\n' + extra)


# ---------------------------------------------------------------- defaults: nothing stated, nothing changed


def test_a_drawing_without_the_keys_takes_the_defaults():
    d = load_drawing(COACH)
    b = d.supply.battery
    assert (b.chemistry, b.cranking_current, b.short_circuit_current, b.peukert) == ("flooded", None, None, None)
    assert d.supply.load_dump_suppression == "not known"
    assert (d.environment.rotor_zone_rise, d.environment.rotor_zone_time_constant) == (None, None)
    k1 = next(e for e in d.elements if e.id == "K1")
    assert (k1.coil.suppression, k1.coil.fuse_rating, k1.coil.wire_area) == ("none", None, None)
    # no new assumption line: the defaults of the new keys are said by the analysis that uses them
    assert not any(
        w in a for a in d.assumptions for w in ("chemistry", "load_dump", "rotor_zone", "tolerances.", "suppression")
    )


# ---------------------------------------------------------------- battery and supply


def test_battery_keys():
    d = _d(
        _battery(
            'chemistry = "agm"\ncold_cranking_current = "1000 A"\nshort_circuit_current = "2.5 kA"\npeukert = 1.12\n'
            'cranking_standard = "EN 50342-1"\n'
        )
    )
    b = d.supply.battery
    assert (b.chemistry, b.cranking_current, b.short_circuit_current, b.peukert) == ("agm", 1000.0, 2500.0, 1.12)
    assert b.cranking_standard == "EN 50342-1"
    assert load_drawing(COACH).supply.battery.cranking_standard == "SAE J537"
    # the stated Peukert exponent is the sweep's row too
    s = d.tolerances["supply.battery.peukert_exponent"]
    assert (s.low, s.high, s.where) == (1.12, 1.12, "supply.battery.peukert")


@pytest.mark.parametrize(
    ("line", "where", "words"),
    [
        ('chemistry = "lithium"', "supply.battery.chemistry", '"flooded", "agm", "gel"'),
        ('cold_cranking_current = "1000"', "supply.battery.cold_cranking_current", "unit"),
        ('cold_cranking_current = "-5 A"', "supply.battery.cold_cranking_current", "greater than zero"),
        ('short_circuit_current = "3 kV"', "supply.battery.short_circuit_current", "current"),
        ("peukert = 0.8", "supply.battery.peukert", "from 1 to 2"),
        ('peukert = "1.2"', "supply.battery.peukert", "plain number"),
        ("peukert = nan", "supply.battery.peukert", "from 1 to 2"),
        ('cranking_standard = "SAE"', "supply.battery.cranking_standard", '"SAE J537", "EN 50342-1"'),
        ('cranking_standard = "SAE J537"', "supply.battery.cranking_standard", "a cold_cranking_current beside it"),
    ],
)
def test_bad_battery_values(line, where, words):
    assert words in one(_battery(line), where)


def test_load_dump_suppression():
    for value in ("yes", "no", "not known"):
        text = drawing_text().replace('base_load = "20 A"', f'base_load = "20 A"\nload_dump_suppression = "{value}"')
        assert _d(text).supply.load_dump_suppression == value
    text = drawing_text().replace('base_load = "20 A"', 'base_load = "20 A"\nload_dump_suppression = true')
    assert '"yes", "no", "not known"' in one(text, "supply.load_dump_suppression")


# ---------------------------------------------------------------- environment


def _env(extra: str) -> str:
    return drawing_text().replace('ambient_max = "40 degC"', 'ambient_max = "40 degC"\n' + extra)


def test_rotor_zone_keys():
    d = _d(_env('rotor_zone_rise = "40 K"\nrotor_zone_time_constant = "10 min"'))
    assert d.environment.rotor_zone_rise == 40.0 and d.environment.rotor_zone_time_constant == 600.0
    assert d.tolerances["environment.retarder_rise"].high == 40.0
    assert d.tolerances["environment.retarder_rise_time_constant"].low == 600.0


@pytest.mark.parametrize(
    ("line", "where", "words"),
    [
        ('rotor_zone_rise = "-5 K"', "environment.rotor_zone_rise", "zero or more"),
        ('rotor_zone_rise = "40 degC"', "environment.rotor_zone_rise", "not a temperature"),
        ('rotor_zone_time_constant = "0 s"', "environment.rotor_zone_time_constant", "greater than zero"),
        ('rotor_zone_time_constant = "10"', "environment.rotor_zone_time_constant", "unit"),
    ],
)
def test_bad_rotor_zone_values(line, where, words):
    assert words in one(_env(line), where)


# ---------------------------------------------------------------- relay coil circuit


def _coil(extra: str) -> str:
    text = drawing_text()
    coil = 'coil = { voltage = "24 V", resistance = "120 ohm @ 20 degC", operate_voltage = "16.8 V"' + extra + " }\n"
    return text.replace('rated_ambient = "85 degC"\n', 'rated_ambient = "85 degC"\n' + coil, 1)


def test_relay_coil_circuit_keys():
    d = _d(_coil(', suppression = "diode", fuse = "5 A", wire_size = "1 mm^2"'))
    c = next(e for e in d.elements if e.id == "K0").coil
    assert (c.suppression, c.fuse_rating) == ("diode", 5.0)
    assert c.wire_area == pytest.approx(1e-6)  # ISO 6722-1 1 mm² row: its nominal area
    c = next(e for e in _d(_coil(', wire_size = "16 AWG"')).elements if e.id == "K0").coil
    # ASTM B258: d = 0.127 mm x 92^((36-16)/39) = 1.291 mm, area = pi/4 d^2 = 1.309 mm²
    assert c.wire_area == pytest.approx(1.309e-6, rel=2e-3)


@pytest.mark.parametrize(
    ("extra", "where", "words"),
    [
        (', suppression = "zener"', "harness[3] (K0).coil.suppression", '"none", "diode", "diode_zener"'),
        (', fuse = "5 V"', "harness[3] (K0).coil.fuse", "current"),
        (', fuse = "0 A"', "harness[3] (K0).coil.fuse", "greater than zero"),
        (', wire_size = "7 mm^2"', "harness[3] (K0).coil.wire_size", "a size listed in ISO 6722-1"),
        (', wire_size = "2 m"', "harness[3] (K0).coil.wire_size", "conductor size"),
        # "25 degC" as a difference would read as 298.15 K (an offset scale): refused
        (', rise = "25 degC"', "harness[3] (K0).coil.rise", "not a temperature"),
    ],
)
def test_bad_relay_coil_values(extra, where, words):
    assert words in one(_coil(extra), where)


# ---------------------------------------------------------------- joints

_LUG = """
[[harness]]
id = "J1"
kind = "joint"
from = "GSTUD"
to = "GSTUD2"
{keys}
"""


def _joint(keys: str, wr_to: str = "GSTUD2") -> str:
    # the main return WR is moved behind the joint: GSTUD -> J1 -> GSTUD2 -> WR -> B-
    text = drawing_text().replace('from = "GSTUD"\nto = "B-"', f'from = "{wr_to}"\nto = "B-"')
    return text + _LUG.format(keys=keys)


def test_a_plain_joint_reads_as_before():
    d = _d(_joint('resistance = "0.1 mohm"'))
    j = next(e for e in d.elements if e.id == "J1")
    assert isinstance(j, Joint) and isinstance(j, Resistor)
    assert (j.resistance, j.joint_kind, j.rating, j.cable) == (1e-4, "", None, None)
    assert not any("J1" in a for a in d.assumptions)


def test_joint_keys():
    d = _d(
        _joint(
            'joint = "lug"\nresistance = "50 uohm"\nrating = "250 A"\nrated_ambient = "30 degC"\n'
            'derating = "80 % @ 85 degC"\nzone = "chassis"\n'
            'conductor_range = ["25 mm^2", "35 mm^2"]\ncable = "WR"'
        )
    )
    j = next(e for e in d.elements if e.id == "J1")
    # default rel 1e-6: the drawing's values converted to SI: round-off only
    assert j.joint_kind == "lug" and j.resistance == pytest.approx(50e-6)
    assert (j.rating, j.rated_ambient, j.derated) == (250.0, 30.0, (0.8, 85.0))
    assert (j.zone, j.zone_temperature, j.part) == ("chassis", 60.0, "")
    # default rel 1e-6: as above
    assert j.conductor_range == pytest.approx((25e-6, 35e-6)) and j.cable == "WR"


def test_a_joint_kind_without_resistance_takes_the_shipped_row():
    # joints_common_practice.toml: a ring lug on a stud, 50 µΩ new (from memory, not confirmed)
    d = _d(_joint('joint = "lug"'))
    j = next(e for e in d.elements if e.id == "J1")
    assert j.resistance == pytest.approx(50e-6)
    assert any(a.startswith("harness[11] (J1).resistance not given: 50 µΩ") for a in d.assumptions)
    assert "resistance" in d.defaults_applied["J1"]
    # a rating without a zone: the zone default is said where it matters
    d = _d(_joint('joint = "connector"\nrating = "40 A"'))
    assert any(a.startswith("harness[11] (J1).zone not given") for a in d.assumptions)
    assert any(a.startswith("harness[11] (J1).rated_ambient not given") for a in d.assumptions)
    # a splice has no default: its crimp depends on its conductor
    assert "a value" in one(_joint('joint = "splice"'), "harness[11] (J1).resistance")


def test_a_joint_is_stamped_as_its_resistance():
    """The network takes a joint's resistance as a fixed resistance, like a busbar of the same
    value. Reference: Ohm's law on the series return path: the joint's voltage is I·R (hand check)."""
    d = _d(_joint('joint = "stud"\nresistance = "1 mohm"'))
    j = next(e for e in d.elements if e.id == "J1")
    assert element_resistance(j, 100.0) == 1e-3
    src = SourceState(25.2, None, None)
    temps = {e.id: 20.0 for e in d.elements}
    sol = Circuit(d).solve(temps, src)
    i = sol.current["J1"]
    assert abs(i) > 1.0
    # rel 1e-9: Ohm's law across the 1 mohm joint on the solve's own current: round-off only
    assert sol.v["GSTUD"] - sol.v["GSTUD2"] == pytest.approx(i * 1e-3, rel=1e-9)
    busbar = _d(_joint('resistance = "1 mohm"').replace('kind = "joint"', 'kind = "busbar"'))
    # rel 1e-12: a busbar of 1 mohm is the same element of the network: round-off only
    assert Circuit(busbar).solve(temps, src).current["J1"] == pytest.approx(i, rel=1e-12)


@pytest.mark.parametrize(
    ("keys", "where", "words"),
    [
        ('joint = "bolt"\nresistance = "1 mohm"', "harness[11] (J1).joint", '"connector", "fuse_holder", "lug"'),
        ('joint = "lug"\nresistance = "0 ohm"', "harness[11] (J1).resistance", "greater than zero"),
        ('resistance = "-1 mohm"', "harness[11] (J1).resistance", "zero or more"),
        ('resistance = "1 mohm"\nrating = "0 A"', "harness[11] (J1).rating", "greater than zero"),
        ('resistance = "1 mohm"\nderating = "80 %"', "harness[11] (J1).derating", "a fraction at a temperature"),
        ('resistance = "1 mohm"\nzone = "roof"', "harness[11] (J1).zone", "one of the zones"),
        (
            'resistance = "1 mohm"\nconductor_range = ["35 mm^2", "25 mm^2"]',
            "harness[11] (J1).conductor_range",
            "no larger than the largest",
        ),
        ('resistance = "1 mohm"\nconductor_range = "35 mm^2"', "harness[11] (J1).conductor_range", "smallest and"),
        (
            'resistance = "1 mohm"\nconductor_range = ["25 mm^2", "35 A"]',
            "harness[11] (J1).conductor_range[1]",
            "conductor size",
        ),
        ('resistance = "1 mohm"\ncable = "W9"', "harness[11] (J1).cable", "the id of a cable in the harness"),
        ('resistance = "1 mohm"\ncable = "W0"', "harness[11] (J1).cable", "a cable ending on GSTUD or GSTUD2"),
        ('resistance = "1 mohm"\nrateing = "40 A"', "harness[11] (J1).rateing", 'did you mean "rating"'),
    ],
)
def test_bad_joint_values(keys, where, words):
    assert words in one(_joint(keys), where)


def test_every_bad_joint_value_at_once():
    got = problems(_joint('joint = "bolt"\nresistance = "-1 mohm"\nrating = "x"\ncable = "W9"'))
    for key in ("joint", "resistance", "rating"):
        assert any(p.startswith(f"harness[11] (J1).{key}") for p in got), (key, got)


# ---------------------------------------------------------------- the starter's commented keys

_STARTER_KEYS = (
    "load_dump_suppression",
    "chemistry",
    "cold_cranking_current",
    "cranking_standard",
    "short_circuit_current",
    "peukert",
    "rotor_zone_rise",
    "rotor_zone_time_constant",
    "resistance_tolerance",
    "inductance_tolerance",
    "coil_resistance",
    "coil_inductance",
    "cable_length",
    "regulator_setpoint",
    "regulator_compensation",
    "fault_resistance",
    "battery_state_of_charge",
    "battery_resistance",
    "alternator_hot_derating",
    "distribution",
    "length_tolerance",
)


def _uncommented_starter(system: int) -> str:
    import re

    from coilstage.starter import starter_text

    text = starter_text(system, 2)
    keys = "|".join(_STARTER_KEYS)
    text = re.sub(rf"(?m)^# (({keys}) = )", r"\1", text)
    at = text.index("# ---------------------------------------------------------------- a joint")
    head, joint = text[:at], text[at:]
    joint = re.sub(r"(?m)^# (\[\[harness\]\]|[a-z_]+ = )", r"\1", joint)
    head = re.sub(r'(id = "W-RET"\n[^\n]*\n)from = "GSTUD"', r'\1from = "GSTUD-LUG"', head)
    return head + joint


@pytest.mark.parametrize("system", [24, 12])
def test_the_starters_commented_keys_load_when_taken_up(system):
    """Every optional key the starter shows commented out loads as written once its '# ' is removed,
    and is read: the starter's examples are valid drawing text."""
    text = _uncommented_starter(system)
    for key in _STARTER_KEYS:
        assert f"\n{key} = " in text, key
    d = _d(text)
    b = d.supply.battery
    assert b.chemistry == "flooded" and b.peukert == 1.25 and b.cranking_current > 0 and b.short_circuit_current > 0
    assert d.supply.load_dump_suppression == "not known"
    assert d.environment.rotor_zone_rise == 40.0 and d.environment.rotor_zone_time_constant == 600.0
    comp = "supply.alternator.compensation_24v" if system == 24 else "supply.alternator.compensation_12v"
    for key in (
        "coils.RC.resistance_tolerance",
        "coils.RC.inductance_tolerance",
        "coils.*.resistance_tolerance",
        "coils.*.inductance_tolerance",
        "tolerances.cable_length",
        "supply.alternator.tolerance",
        comp,
        "tolerances.fault_resistance",
        "supply.battery.state_of_charge",
        "supply.battery.internal_resistance",
        "supply.alternator.hot_derating",
        "cables.W1.length_tolerance",
    ):
        assert key in d.tolerances, key
    j = next(e for e in d.elements if e.id == "J-RET")
    assert isinstance(j, Joint) and j.joint_kind == "lug" and j.cable == "W-RET" and j.rating == 250.0


def test_a_joint_from_the_parts_library_names_its_part():
    """The invented workshop library's LUG-M10-95 (0.05 mohm) gives the joint its resistance, and the
    joint keeps the reference it came from; a rating typed beside it is the drawing's."""
    from .conftest import CONFIGS

    lib = CONFIGS / "parts" / "workshop-parts.toml"
    text = _joint(f'joint = "lug"\npart = "{lib.as_posix()}#LUG-M10-95"\nrating = "300 A"\nzone = "chassis"')
    d = parse_drawing(text, "t.toml", CONFIGS)
    j = next(e for e in d.elements if e.id == "J1")
    assert j.resistance == pytest.approx(0.05e-3) and j.rating == 300.0
    assert j.part.endswith("workshop-parts.toml#LUG-M10-95")
    assert not any(a.startswith("harness[11] (J1).resistance not given") for a in d.assumptions)


def test_an_empty_tolerances_table_changes_nothing():
    """A drawing with an empty [tolerances] table gives the same drawing and the same verdicts as
    without it (the starter ships one with its keys commented out)."""
    from coilstage import check

    text = COACH.read_text(encoding="utf-8")
    plain = parse_drawing(text, "c.toml", COACH.parent)
    empty = parse_drawing(text + "\n[tolerances]\n", "c.toml", COACH.parent)
    assert empty == plain
    got = [(v.rule, v.subject, v.status, v.value) for v in check(empty)[1]]
    assert got == [(v.rule, v.subject, v.status, v.value) for v in check(plain)[1]]


def test_every_new_key_is_in_the_format_document():
    """docs/drawing-format.md names every key of [tolerances], of the battery, supply and environment
    keys added for the operating state, of the relay coil circuit and of a joint."""
    from coilstage.drawing import environment, harness, relays, supply, tolerances

    from .conftest import ROOT

    doc = (ROOT / "docs" / "drawing-format.md").read_text(encoding="utf-8")
    keys = (
        set(tolerances.KEYS)
        | {"chemistry", "cold_cranking_current", "cranking_standard", "short_circuit_current", "peukert"}
        | {"load_dump_suppression", "rotor_zone_rise", "rotor_zone_time_constant"}
        | {"suppression", "fuse", "wire_size", "resistance_tolerance", "inductance_tolerance", "length_tolerance"}
        | (harness.ELEMENT_KEYS["joint"] - {"id", "kind", "from", "to", "note"})
    )
    assert keys <= supply.KEYS["supply.battery"] | supply.KEYS["supply"] | environment.KEYS["environment"] | (
        relays.KEYS["relay_coil"] | harness.ELEMENT_KEYS["joint"] | tolerances.KEYS
    ) | {"resistance_tolerance", "inductance_tolerance", "length_tolerance"}
    missing = sorted(k for k in keys if f"`{k}`" not in doc and f"`supply.battery.{k}`" not in doc)
    missing = [k for k in missing if f".{k}`" not in doc]
    assert missing == []
