"""Bad, extreme and hostile input at the loader: each class with its smallest reproducer.

Every case must end as a DrawingError (or DataError for a table) listing the problem with its key
path, never as another exception, a hang or a quietly accepted value. The expectations are those
of the contract in the README ("bad drawings"): every problem at once, where it is, what was
expected. Physical bounds are common practice (no source) unless a test names one.
"""

from __future__ import annotations

import hashlib
import math
import time

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from coilstage import tables
from coilstage.drawing.load import load_drawing, parse_drawing
from coilstage.errors import DataError, DrawingError
from coilstage.units import QuantityError, parse_dimensionless, parse_quantity, parse_temperature

from .conftest import TRUCK, drawing_text, one, problems

BASE = drawing_text()


def swap(old: str, new: str, text: str = BASE) -> str:
    assert old in text, old
    return text.replace(old, new, 1)


# ---------------------------------------------------------------- quantity text


@pytest.mark.parametrize(
    "value",
    ["9**9**9**9 A", "10**400 A", "1e400 A", "nan A", "inf A", "2+3 A", "A", "3 A" + " " * 200, "٣ A", "1e-400 A"],
)
def test_hostile_quantity_text_refused_quickly(value):
    start = time.perf_counter()
    msg = one(swap('limit_idle = "60 A"', f'limit_idle = "{value}"'), "supply.alternator.limit_idle")
    assert "current" in msg
    assert time.perf_counter() - start < 2.0  # no evaluation: the text is refused before any parser runs it


def test_power_tower_in_a_ratio_refused_unevaluated():
    start = time.perf_counter()
    with pytest.raises(QuantityError, match="no arithmetic"):
        parse_dimensionless("9**9**9**9 %")
    assert time.perf_counter() - start < 0.5


def test_units_still_carry_powers():
    assert parse_quantity("1200 A^2*s", "joule_integral") == 1200.0
    # rel 1e-12: a power of a unit converted: round-off only
    assert parse_quantity("35 mm**2", "area") == pytest.approx(35e-6, rel=1e-12)


def test_huge_exponent_refused_on_both_paths():
    for fast in (True, False):
        with pytest.raises(QuantityError, match="finite"):
            parse_quantity("1e400 m", "length", use_fast=fast)


@pytest.mark.parametrize(
    ("key", "old", "new"),
    [
        ("supply.alternator.limit_idle", 'limit_idle = "60 A"', 'limit_idle = "5e9 A"'),  # above 1e6 A
        ("harness[1] (WM).length", 'length = "3 m"', 'length = "50 km"'),  # above 10 km
        ("supply.battery.internal_resistance", 'internal_resistance = "8 mohm"', 'internal_resistance = "1e-15 ohm"'),
    ],
)
def test_values_outside_the_plausible_range(key, old, new):
    assert "plausible" in one(swap(old, new), key)


def test_nan_in_a_toml_float_ratio():
    text = BASE + "\n[limits]\nvoltage_drop_pass = nan\n"
    assert "finite" in one(text, "limits.voltage_drop_pass")


@pytest.mark.parametrize("t", ["0 K", "-250 degC", "5000 degC"])
def test_temperatures_where_resistance_would_not_stay_positive(t):
    # copper's resistance is zero near 20 - 1/0.00393 = -234.5 degC (IEC 60028 alpha20)
    assert "temperature between" in one(swap('ambient_min = "-30 degC"', f'ambient_min = "{t}"'), "environment.")


def test_share_of_500_percent():
    text = BASE + '\n[duty]\nstate_of_charge = "500 %"\n'
    assert "0 % to 100 %" in one(text, "duty.state_of_charge")


def test_negative_relay_break_rating():
    text = swap('rated_ambient = "85 degC"', 'rated_ambient = "85 degC"\ninductive_break = "-60 A @ 15 ms"')
    assert "above zero" in one(text, "harness[3] (K0).inductive_break")


def test_110_c_in_a_temperature_asks_for_degc():
    assert "did you mean degC?" in one(swap('ambient_max = "40 degC"', 'ambient_max = "110 C"'), "environment")


def test_an_inductance_grammar():
    msg = one(swap('inductance = "50 mH"', 'inductance = "50 V"'), "coils.C0.inductance")
    assert "an inductance" in msg and "a inductance" not in msg


def test_unicode_digits_refused_on_both_paths():
    for fast in (True, False):
        with pytest.raises(QuantityError, match="digits 0-9"):
            parse_quantity("٣٠ V", "voltage", use_fast=fast)
        with pytest.raises(QuantityError, match="digits 0-9"):
            parse_temperature("٣٠ degC", use_fast=fast)


_UNITS = ["V", "mV", "A", "kA", "ohm", "mohm", "m", "mm", "s", "ms", "min", "h", "mm^2", "degC", "K", "%", "C", ""]
_TEXT = st.one_of(
    st.builds(
        lambda n, u, sp: f"{n}{sp}{u}",
        st.one_of(
            st.floats(allow_nan=True, allow_infinity=True).map(repr),
            st.integers(-(10**30), 10**30).map(str),
            st.from_regex(r"[+-]?[0-9]{1,4}(\.[0-9]{0,3})?([eE][+-]?[0-9]{1,4})?", fullmatch=True),
        ),
        st.sampled_from(_UNITS),
        st.sampled_from([" ", "", "  "]),
    ),
    st.text(alphabet="0123456789.eE+-*^/ ()VAmhsKCΩ%٣²", max_size=24),
)


@settings(max_examples=400, deadline=None)
@given(_TEXT, st.sampled_from(["voltage", "current", "resistance", "length", "time", "area", "temperature", "ratio"]))
def test_fast_path_and_pint_agree_or_both_refuse(text, kind):
    """Reference: pint (the general-purpose library) reads every text; the fast path must give the
    same float to 1e-12 relative, or both must refuse."""

    def read(fast):
        try:
            if kind == "temperature":
                return parse_temperature(text, use_fast=fast)
            if kind == "ratio":
                return parse_dimensionless(text, use_fast=fast)
            return parse_quantity(text, kind, use_fast=fast)
        except QuantityError:
            return None

    a, b = read(True), read(False)
    assert (a is None) == (b is None), (text, a, b)
    if a is not None:
        # the fast reader against pint's conversion: round-off only (abs for a zero)
        assert math.isfinite(a) and a == pytest.approx(b, rel=1e-12, abs=1e-12)


# ---------------------------------------------------------------- structure


def test_island_not_connected_to_the_battery():
    text = swap(
        "[[harness]]",
        '[[harness]]\nid = "X1"\nkind = "joint"\nfrom = "P"\nto = "Q"\nresistance = "1 mohm"\n'
        '[[harness]]\nid = "X2"\nkind = "joint"\nfrom = "Q"\nto = "P"\nresistance = "1 mohm"\n[[harness]]',
    )
    assert "island" in one(text, "harness[0] (X1)")


def test_zero_ohm_fuse_across_the_battery():
    text = swap(
        "[[harness]]",
        '[[harness]]\nid = "FX"\nkind = "fuse"\nfrom = "B+"\nto = "B-"\ntype = "single-bolt"\n'
        'rating = "100 A"\nresistance = "0 ohm"\nzone = "chassis"\n[[harness]]',
    )
    assert "shorts the battery" in one(text, "supply")


def test_zero_ohm_relay_across_a_stage():
    text = swap(
        "[[harness]]",
        '[[harness]]\nid = "KX"\nkind = "relay"\nfrom = "S0+"\nto = "S0-"\nrating_24v = "150 A"\n'
        'resistance = "0 ohm"\nzone = "chassis"\n[[harness]]',
    )
    assert "shorts the stage" in one(text, "harness[6] (S0)")


def test_chassis_node_used_as_the_battery():
    text = swap('system = "24 V"', 'system = "24 V"\nchassis = "B+"')
    assert "other than the battery node" in one(text, "supply.chassis")


def test_return_cable_without_a_role():
    text = swap('id = "WR"\nkind = "ground"', 'id = "WR"\nkind = "cable"')
    assert 'role = "return"' in one(text, "harness[2] (WR).role")


def test_protects_naming_no_cable():
    text = swap('resistance = "0.2 mohm"', 'resistance = "0.2 mohm"\nprotects = ["NOPE"]')
    assert "NOPE" in one(text, "harness[0] (FM).protects")


def test_deep_nesting_is_a_problem_not_a_crash():
    text = BASE + "\n[limits]\nvoltage_drop_pass = " + "[" * 3000 + "]" * 3000 + "\n"
    assert any("nested" in p for p in problems(text))
    text = BASE + "\n[limits]\nvoltage_drop_pass = " + "[" * 40 + "]" * 40 + "\n"
    assert any("nested" in p for p in problems(text))


def test_profile_given_as_a_list():
    assert "endurance" in one(BASE + '\n[duty]\nprofile = ["endurance"]\n', "duty.profile")


def test_every_problem_at_once():
    text = swap('limit_idle = "60 A"', 'limit_idle = "10**400 A"', swap('length = "3 m"', 'length = "-3 m"'))
    found = problems(text)
    assert any(p.startswith("supply.alternator.limit_idle") for p in found)
    assert any(p.startswith("harness[1] (WM).length") for p in found)


# ---------------------------------------------------------------- sizes and small ones


def test_too_many_stages_refused_with_the_limit_named():
    text = drawing_text(stages=3) + "\n[limits]\nmax_stages = 2\n"
    msg = one(text, "harness")
    assert "at most 2 stages" in msg and "[limits] max_stages = 3" in msg
    assert len(parse_drawing(drawing_text(stages=3) + "\n[limits]\nmax_stages = 3\n").stages) == 3


def test_duty_of_a_year_refused_with_the_limit_named():
    text = BASE + '\n[[duty.steps]]\nduration = "8760 h"\nstages = "all"\n'
    msg = one(text, "duty")
    assert "max_duty" in msg


def test_byte_order_mark_accepted(tmp_path):
    p = tmp_path / "bom.toml"
    p.write_bytes(b"\xef\xbb\xbf" + TRUCK.read_bytes())
    assert load_drawing(p).supply.system_voltage == 12
    before = p.read_bytes()
    load_drawing(p)
    assert p.read_bytes() == before  # read only


def test_fixed_choices_are_listed():
    msg = one(swap('type = "single-bolt"', "type = 3"), "harness[0] (FM).type")
    assert "single-bolt" in msg and "one of" in msg
    msg = one(swap('insulation = "C"', "insulation = true"), "harness[1] (WM).insulation")
    assert '"C"' in msg


def test_supply_code_that_does_not_fit_lists_those_that_do():
    msg = one(swap('code = "F"', 'code = "C"'), "supply.code")
    assert "24 V system: one of" in msg and "F" in msg.split("one of", 1)[1]


def test_drawing_info_read():
    text = swap(
        'title = "generated"',
        'title = "generated"\nrevision = "C"\nauthor = "A. Fitter"\nvehicle = "VIN-INVENTED-0001"\nnote = "n"',
    )
    info = parse_drawing(text).info
    assert (info.revision, info.author, info.vehicle, info.note) == ("C", "A. Fitter", "VIN-INVENTED-0001", "n")


# ---------------------------------------------------------------- user tables


def _conductor(rows: str) -> str:
    return (
        '[table]\nkind = "conductor"\ntitle = "mine"\nstandard = "own"\nstatus = "from memory"\n'
        f'material = "copper"\nsize_system = "mm2"\nrows = {rows}\n'
    )


@pytest.mark.parametrize(
    ("body", "where"),
    [
        (_conductor('[{ size = 10.0, status = "from memory" }]'), "table.rows[0].r20"),
        (_conductor("[{ size = 10.0, r20 = nan }]"), "table.rows[0].r20"),
        (_conductor("[{ size = 10.0, r20 = 0.0 }]"), "table.rows[0].r20"),
        (_conductor("[{ size = 10.0, r20 = -1.8 }]"), "table.rows[0].r20"),
        (_conductor("[{ size = inf, r20 = 1.8 }]"), "table.rows[0].size"),
        (_conductor('["not a table"]'), "table.rows[0]"),
    ],
)
def test_bad_conductor_tables(tmp_path, body, where):
    p = tmp_path / "t.toml"
    p.write_text(body, encoding="utf-8")
    with pytest.raises(DataError) as exc:
        tables.user_conductor_table(p)
    assert any(pr.where == where for pr in exc.value.problems), exc.value.problems
    assert p.read_text(encoding="utf-8") == body


def test_every_bad_row_at_once(tmp_path):
    p = tmp_path / "t.toml"
    p.write_text(_conductor("[{ size = 10.0, r20 = 0.0 }, { size = 16.0 }]"), encoding="utf-8")
    with pytest.raises(DataError) as exc:
        tables.user_conductor_table(p)
    assert {pr.where for pr in exc.value.problems} == {"table.rows[0].r20", "table.rows[1].r20"}


def test_binary_table(tmp_path):
    p = tmp_path / "t.toml"
    p.write_bytes(b"\x00\x01\x02 binary")
    with pytest.raises(DataError, match="binary"):
        tables.user_conductor_table(p)


def _bh(points: str) -> str:
    return f'[table]\nkind = "bh_curve"\ntitle = "mine"\nstandard = "own"\nstatus = "from memory"\npoints = {points}\n'


@pytest.mark.parametrize(
    ("points", "where"),
    [
        ("[[0, 0]]", "table.points"),
        ("[[0, 0], [100, 1.0], [200, 0.9]]", "table.points[2]"),
        ("[[0, 0], [inf, 1.0]]", "table.points[1][0]"),
        ("[[0, 0], [100, nan]]", "table.points[1][1]"),
        ('[[0, 0], "x"]', "table.points[1]"),
    ],
)
def test_bad_bh_curves(tmp_path, points, where):
    p = tmp_path / "bh.toml"
    p.write_text(_bh(points), encoding="utf-8")
    with pytest.raises(DataError) as exc:
        tables.user_bh_curve(p)
    assert any(pr.where == where for pr in exc.value.problems), exc.value.problems


def test_bad_user_table_in_a_drawing_is_a_drawing_problem(tmp_path):
    (tmp_path / "t.toml").write_text(_conductor("[{ size = 10.0, r20 = -1.0 }]"), encoding="utf-8")
    text = swap('size = "35 mm^2"', 'size = "10 mm^2"\nconductor_table = "t.toml"')
    with pytest.raises(DrawingError) as exc:
        parse_drawing(text, "d.toml", tmp_path)
    assert any("table.rows[0].r20" in str(p) for p in exc.value.problems)


def test_fuse_gates_that_do_not_fall_or_repeat(tmp_path):
    gates = 'gates = [{ multiple = 2.0, min = "1 s", max = "10 s" }, { multiple = 2.0, min = "1 s", max = "10 s" }]'
    assert "multiple" in one(swap('resistance = "0.2 mohm"', f'resistance = "0.2 mohm"\n{gates}'), "harness[0] (FM)")


# ---------------------------------------------------------------- tables read


def test_used_tables_records_every_file_with_its_hash(tmp_path):
    p = tmp_path / "mine.toml"
    p.write_text(_conductor("[{ size = 10.0, r20 = 1.83 }]"), encoding="utf-8")
    tables.user_conductor_table(p)
    tables.materials()
    used = {u.path: u for u in tables.used_tables()}
    mine = used[str(p.resolve())]
    # reference: hashlib over the file's bytes
    assert mine.sha256 == hashlib.sha256(p.read_bytes()).hexdigest()
    assert (mine.origin, mine.title, mine.status) == ("user", "mine", "from memory")
    shipped = [u for u in used.values() if u.path.endswith("materials.toml")]
    assert shipped and shipped[0].origin == "shipped"
    with open(shipped[0].path, "rb") as f:
        assert shipped[0].sha256 == hashlib.sha256(f.read()).hexdigest()
