"""Sizing: per-part suggestions worked by hand from the shipped tables, the boundary property over
generated drawings, the coordinated `size` on the demos, the in-place TOML editor and the action list."""

from __future__ import annotations

import copy
import difflib
import math
import tomllib

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import coilstage
from coilstage import sizing
from coilstage.drawing.load import parse_drawing
from coilstage.tomledit import TomlText, format_value
from tests.conftest import COACH, FLAWED, drawing_text

ALPHA_CU = 0.00393  # IEC 60028 copper, per K at 20 °C


def _statuses(verdicts) -> dict:
    return {(v.rule, v.subject): v.status.value for v in verdicts}


def _by_part(suggestions) -> dict:
    return {s.part: s for s in suggestions}


# ---------------------------------------------------------------- the TOML editor


def test_edit_keeps_every_other_character():
    text = FLAWED.read_text(encoding="utf-8")
    doc = TomlText(text)
    doc.set("harness", 1, "size", '"10 mm^2"')  # W-FEED, a key with neighbours
    doc.set("harness", 4, "suppression", format_value({"kind": "diode"}))  # S1, a key added
    doc.delete("harness", 3, "derating")  # K1
    raw_old, raw_new = tomllib.loads(text), tomllib.loads(doc.text)  # independent reader: tomllib
    assert raw_new["harness"][1]["size"] == "10 mm^2"
    assert raw_new["harness"][4]["suppression"] == {"kind": "diode"}
    assert "derating" not in raw_new["harness"][3]
    for i, (a, b) in enumerate(zip(raw_old["harness"], raw_new["harness"], strict=True)):
        a = {k: v for k, v in a.items() if (i, k) not in {(1, "size"), (3, "derating")}}
        b = {k: v for k, v in b.items() if (i, k) not in {(1, "size"), (4, "suppression")}}
        assert a == b
    # the comments are all still there, in their order
    assert [ln for ln in text.splitlines() if ln.lstrip().startswith("#")] == [
        ln for ln in doc.text.splitlines() if ln.lstrip().startswith("#")
    ]
    # only those lines differ: two added (size, suppression), two removed (size, derating)
    diff = list(difflib.ndiff(text.splitlines(), doc.text.splitlines()))
    assert sum(ln.startswith("+ ") for ln in diff) == 2 and sum(ln.startswith("- ") for ln in diff) == 2


def test_edit_keeps_a_trailing_comment_and_multiline_arrays():
    text = 'a = 1\n[[harness]]\nid = "X"  # keep me\nlist = [\n  1, # one\n  2,\n]\nsize = "4 mm^2" # why\n'
    doc = TomlText(text)
    doc.set("harness", 0, "size", '"6 mm^2"')
    assert doc.text.endswith('size = "6 mm^2" # why\n')
    assert tomllib.loads(doc.text)["harness"][0]["list"] == [1, 2]


@settings(max_examples=40, deadline=None)
@given(
    st.lists(
        st.tuples(
            st.integers(0, 10_000),
            st.one_of(
                st.text(alphabet="ab #[]{}=,\"'x", max_size=8).map(format_value),
                st.integers(-1000, 10**6).map(format_value),
                st.lists(st.integers(0, 9), max_size=3).map(format_value),
                st.dictionaries(st.sampled_from("pq"), st.integers(0, 9), max_size=2).map(format_value),
                st.sampled_from(["[1,\n 2]", "1 # a comment", "{ a = 1 }"]),  # raw text the scan ends elsewhere
            ),
        ),
        min_size=1,
        max_size=6,
    )
)
def test_an_edited_text_reads_as_a_fresh_scan_of_it(edits):
    """After a run of value edits (each moving the offsets of everything after it), the editor reads as
    an editor made afresh from the edited text: every key's value, and the lines it deletes and adds
    (which read the lines' ends); tomllib (an independent reader) reads the result."""
    doc = TomlText(FLAWED.read_text(encoding="utf-8"))
    n = doc.count("harness")
    for pick, value in edits:
        index = pick % n
        keys = doc.keys("harness", index)
        doc.set("harness", index, keys[pick % len(keys)], value)
        fresh = TomlText(doc.text)
        for i in range(n):
            assert doc.keys("harness", i) == fresh.keys("harness", i)
            ks = fresh.keys("harness", i)
            assert [doc.get("harness", i, k) for k in ks] == [fresh.get("harness", i, k) for k in ks]
    # a later table's line deleted, from copies of the editor as the edits left it and of a fresh one
    fresh = TomlText(doc.text)
    later = (index + 1) % n
    for key in fresh.keys("harness", later)[:3]:
        a, b = copy.deepcopy(doc), copy.deepcopy(fresh)
        a.delete("harness", later, key)
        b.delete("harness", later, key)
        assert a.text == b.text
    # the lines' ends as the run of edits left them: the last edited key's line deleted, or a key added
    # after its table's last line
    edited = keys[pick % len(keys)]
    for t in (doc, fresh):
        if pick % 2:
            t.set("harness", index, "added_here", "1")
        else:
            t.delete("harness", index, edited)
    assert doc.text == fresh.text
    tomllib.loads(doc.text)


# ---------------------------------------------------------------- hand-worked suggestions


def _cold_current(coil_r20: float, extra_r: float, bus: float = 28.3, t: float = -30.0) -> float:
    """One stage at the cold corner: the bus held at set-point + tolerance (28.0 + 0.3 V), the copper
    coil at the lowest ambient (IEC 60028 alpha), the harness resistance ``extra_r`` [Ω]."""
    return bus / (coil_r20 * (1 + ALPHA_CU * (t - 20.0)) + extra_r)


# ISO 6722-1 Table 4 conductor resistances at 20 °C [Ω/m] (the shipped table's values): 35 mm² 0.52 mΩ/m,
# 10 mm² 1.82 mΩ/m; at -30 °C x (1 - 50 alpha). Harness of the generated drawing: WM and WR 3 m of 35 mm²,
# branch 2 m + return 1 m of 10 mm², fuse 0.2 mΩ, relay 0.5 mΩ.
_HARNESS_R = (6 * 0.52e-3 + 3 * 1.82e-3) * (1 - 50 * ALPHA_CU) + 0.7e-3

# The steady-state verdicts are decided at the worst corner of the declared tolerances (the verdict's
# deciding inputs name it: coil resistance -5 %, regulator set-point +1.07 %, regulator compensation
# -15 mV/K from its nominal, regulator temperature -30 °C, ambient -30 °C). coilstage/data/
# tolerance_defaults.toml: coil -5 % (maker's FAQ), the 24 V compensation row -20 mV/K nominal, -35 mV/K
# at its steep end (derived, not confirmed); the drawing's own 0.3 V set-point tolerance (0.3/28 =
# 1.07 %). Bus held at 28.0 + 0.3 + 0.035 V/K x (25 - -30) K = 30.225 V.
_CORNER_BUS = 28.0 + 0.3 + 0.035 * (25.0 - -30.0)


def test_relay_contact_rating_hand_worked():
    """The contact's duty is decided at the worst tolerance corner (see _CORNER_BUS): coil resistance
    -5 % and the bus at 30.225 V, everything at -30 °C. Coil 0.5 Ω: I ≈ 30.225 / (0.475 x 0.8035 +
    0.0076) ≈ 77.6 A; the relay passes at <= 90 % of its rating (common practice), the zone (60 °C
    at the 40 °C ambient, -10 °C at -30 °C) within the rated 85 °C: rating >= 86.3 A -> 100 A of the
    shipped relay series; 80 A leaves 72 A < 77.6 A (warn)."""
    i = _cold_current(0.5 * 0.95, _HARNESS_R, bus=_CORNER_BUS)
    assert i == pytest.approx(77.6, rel=0.01)
    text = drawing_text(stages=1, coil_r=[0.5]).replace('"150 A"', '"60 A"')
    _, verdicts = coilstage.check(parse_drawing(text))
    v = next(v for v in verdicts if v.rule == "relay.contact_rating")
    assert v.value == pytest.approx(i, rel=0.02)  # the network agrees with the hand figure
    s = _by_part(sizing.suggestions(text))["K0"]
    assert s.suggested == "100 A" and s.smaller == "80 A"
    assert [f.rule for f in s.smaller_fails] == ["relay.contact_rating"]
    assert min(x for x in sizing.standard_series("relay_contact_rating") if 0.9 * x >= i) == 100


def test_fuse_window_hand_worked():
    """The fuse's continuous duty is decided at the worst tolerance corner (see _CORNER_BUS): coil
    resistance -5 %, the bus at 30.225 V, the vehicle at -30 °C. Coil 0.9 Ω: I ≈ 30.225 / (0.855 x
    0.8035 + 0.0076) ≈ 43.5 A through the main fuse. Its zone follows the ambient: 60 °C stated at
    the 40 °C ambient, -10 °C at -30 °C, where the shipped rerating curve (fuses_iso8820.toml, from
    memory) gives 1.12 - 0.12 x 30/65 = 1.065 (linear between -40 °C 1.12 and 25 °C 1.00). Hotter
    ambients rerate lower but carry much less (at 40 °C: coil +20 K, bus 28.3 - 0.035 x 15 V, about
    29.8 A against x 0.94), so -30 °C decides. Type E (ISO 8820-3) ratings 20…80 A; 75 % rule (common
    practice): rating >= 43.5 / (0.75 x 1.065) ≈ 54.5 A -> 50 A is short (warn) and the window
    starts at 60 A; 80 A no longer protects the branch (fuse.cable_overload), so it ends at 70 A."""
    i = _cold_current(0.9 * 0.95, _HARNESS_R, bus=_CORNER_BUS)
    assert i == pytest.approx(43.5, rel=0.01)
    rerate = 1.12 + (1.00 - 1.12) * (-10.0 - -40.0) / (25.0 - -40.0)
    assert rerate == pytest.approx(1.065, abs=5e-4)
    # rated 58 V: a 32 V fuse on the 32 V code-F bus warns for its voltage at any current rating; 1 000
    # switchings over the fuse's life: at the default 10^5 the cyclic-duty rule's shipped factor asks
    # for more than the cable allows, and this test is about the continuous-duty end of the window
    text = drawing_text(stages=1, coil_r=[0.9], extra="[switching]\ncycles = 1000\n").replace(
        'type = "single-bolt"\nrating = "300 A"', 'type = "E"\nrating = "30 A"\nvoltage_rating = "58 V"'
    )
    v = next(v for v in coilstage.check(parse_drawing(text))[1] if v.rule == "fuse.continuous" and v.subject == "FM")
    assert v.value == pytest.approx(i, rel=0.01)  # the network agrees with the hand figure
    s = _by_part(sizing.suggestions(text))["FM"]
    floor = i / (0.75 * rerate)
    assert 50 < floor < 60
    assert s.fits == ("60 A", "70 A") and s.suggested == "60 A" and s.smaller == "50 A"
    assert "fuse.continuous" in {f.rule for f in s.smaller_fails}
    assert s.checked
    assert s.text.startswith("fits 60–70 A")  # 80 A, the next of the series, no longer protects the cable
    assert [f.rule for f in s.blocked] == ["fuse.cable_overload"]


def test_cable_size_hand_worked():
    """Coil 0.3 Ω, the main fuse protecting only the feed; the branch is judged at the worst
    tolerance corner (coil -5 %, bus 30.225 V, see _CORNER_BUS). With the 4 mm² branch:
    I ≈ 30.225 / (0.285 x 0.8035 + (6 x 0.52 + 3 x 4.55) mΩ x 0.8035 + 0.7 mΩ) ≈ 124.3 A (ISO 6722-1
    Table 4 resistances, the shipped table's values); with any thicker branch the current lies between
    that and the bound of a branch of no resistance, 30.225 / (0.2290 + 0.0025 + 0.0007) ≈ 130.2 A.
    The largest current comes with the vehicle at its coldest ambient, -30 °C, where the chassis zone
    (60 °C stated at the 40 °C ambient) stands at 60 - 70 = -10 °C: below 30 °C the ambient factor
    sqrt((125-Tz)/(125-30)) is held at 1 (no credit above the table). 33 CFR 183.425 Table 5, 125 °C
    column: 8 AWG (8.37 mm²) 90 A, 6 AWG (13.3 mm²) 125 A, 4 AWG (21.15 mm²) 170 A, log-log between
    sizes: 12 mm² -> 116.2 A < 124.3 A fails, 16 mm² -> 141.3 A > 130.2 A passes."""

    def amp(area: float) -> float:
        pts = [(8.37, 90.0), (13.3, 125.0), (21.15, 170.0)]
        (a0, i0), (a1, i1) = (pts[0], pts[1]) if area <= 13.3 else (pts[1], pts[2])
        return i0 * (area / a0) ** (math.log(i1 / i0) / math.log(a1 / a0))

    text = drawing_text(stages=1, coil_r=[0.3], branch="4 mm^2").replace(
        'breaking_capacity = "20 kA"', 'breaking_capacity = "20 kA"\nprotects = ["WM"]'
    )
    _, verdicts = coilstage.check(parse_drawing(text))
    i = next(v.value for v in verdicts if v.rule == "cable.ampacity" and v.subject == "W0")
    cold = 1 + ALPHA_CU * (-30.0 - 20.0)
    hand = _CORNER_BUS / (0.285 * cold + (6 * 0.52e-3 + 3 * 4.55e-3) * cold + 0.7e-3)
    bound = _CORNER_BUS / (0.285 * cold + 6 * 0.52e-3 * cold + 0.7e-3)
    assert hand == pytest.approx(124.3, abs=0.1) and bound == pytest.approx(130.2, abs=0.1)
    assert i == pytest.approx(hand, rel=0.01)
    assert amp(12) == pytest.approx(116.2, abs=0.1) and amp(16) == pytest.approx(141.3, abs=0.1)
    assert amp(12) < i and bound < amp(16)
    s = _by_part(sizing.suggestions(text))["W0"]
    assert s.suggested == "16 mm²" and s.smaller == "12 mm²"
    assert [f.rule for f in s.smaller_fails] == ["cable.ampacity"]


def test_suppressor_reverse_voltage_hand_worked():
    """24 V system with central load-dump suppression stated: the suppressor must block the clamped
    load dump, 58 V (ISO 16750-2 Test B), above the 32 V code-F maximum: 100 V of the shipped series;
    50 V fails the suppressor rule."""
    text = drawing_text(stages=1, coil_r=[0.9]).replace("[supply]\n", '[supply]\nload_dump_suppression = "yes"\n', 1)
    s = _by_part(sizing.suggestions(text))["S0"]
    assert s.value_text is not None and 'kind = "diode"' in s.value_text
    assert 'reverse_voltage = "100 V"' in s.value_text
    assert any(f.subject == "S0 reverse voltage" for f in s.smaller_fails)
    assert s.checked
    new = TomlText(text)
    for (i, key), value in s.edits:
        new.set("harness", i, key, value)
    _, verdicts = coilstage.check(parse_drawing(new.text))
    st_ = _statuses(verdicts)
    assert st_[("relay.inductive_break", "K0")] != "fail"
    assert all(st_[k] == "pass" for k in st_ if k[0] == "suppressor.rating")


# ---------------------------------------------------------------- the boundary property


def _full_ok(text: str, part: sizing.Part, targets: dict) -> tuple[bool, list]:
    """Judge a candidate with the public check alone (no cache, no screen)."""
    d = parse_drawing(text)
    _, verdicts = coilstage.check(d)
    inv = sizing.involved(part, {(v.rule, v.subject): v for v in verdicts})
    bad = [v for k, v in inv.items() if sizing.rank(v) < targets.get(k, 2)]
    return not bad, bad


@settings(max_examples=6, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    coil_r=st.floats(0.25, 1.5),
    branch=st.sampled_from(["2.5 mm^2", "4 mm^2", "6 mm^2"]),
    relay=st.sampled_from(["30 A", "50 A", "150 A"]),
)
def test_suggested_part_passes_and_next_smaller_fails(coil_r, branch, relay):
    text = drawing_text(stages=2, coil_r=[coil_r, 1.0], branch=branch).replace('"150 A"', f'"{relay}"')
    parts = {p.id: p for p in sizing.parts_of(parse_drawing(text), None, text)}
    for s in sizing.suggestions(text):
        if s.suggested is None or s.kind not in ("cable", "relay"):
            continue
        part = parts[s.part]
        j = part.series.index(s.value_text)
        targets = dict(s.targets)
        doc = TomlText(text)
        for (i, key), value in s.edits:
            doc.set("harness", i, key, value)
        ok, bad = _full_ok(doc.text, part, targets)
        assert ok, (s.part, s.suggested, [b.rule for b in bad])
        if j > 0 and s.smaller_fails and s.smaller_fails[0].rule != "(none)":
            doc = TomlText(text)
            for (i, key), value in s.edits:
                doc.set("harness", i, key, part.series[j - 1] if key == part.key else value)
            ok, bad = _full_ok(doc.text, part, targets)
            assert not ok, (s.part, "next smaller", part.labels[j - 1])
            assert {b.rule for b in bad} & {f.rule for f in s.smaller_fails}


# ---------------------------------------------------------------- size


@pytest.fixture(scope="module")
def flawed_sized():
    return sizing.size_drawing(FLAWED.read_text(encoding="utf-8"), str(FLAWED), FLAWED.parent)


def test_size_flawed_passes_what_its_parts_allow(flawed_sized):
    r = flawed_sized
    assert r.changes
    changed = {(c.part, c.key) for c in r.changes}
    assert ("W2", "size") in changed and ("S1", "suppression") in changed and ("K1", "rating_24v") in changed
    _, verdicts = coilstage.check(parse_drawing(r.text, str(FLAWED), FLAWED.parent))
    left = {(x["rule"], x["subject"]): x for x in r.remaining}
    for v in verdicts:
        if v.status.value in ("fail", "warn"):
            x = left[(v.rule, v.subject)]  # every failure that remains is accounted for
            assert x["held_by"]
            # what remains is held by the vehicle, by missing data, or by a part no standard value passes
            assert any(w in x["held_by"] for w in ("not changed by sizing", "missing data", "no standard value"))
    # the cables and relays it changed now pass their own rules
    st_ = _statuses(verdicts)
    assert st_[("cable.ampacity", "W2")] == "pass" and st_[("relay.contact_rating", "K1")] == "pass"
    assert st_[("relay.inductive_break", "K1")] != "fail"


def test_size_again_changes_nothing(flawed_sized):
    again = sizing.size_drawing(flawed_sized.text, str(FLAWED), FLAWED.parent)
    assert again.changes == []
    assert again.text == flawed_sized.text
    assert _statuses(again.verdicts) == _statuses(flawed_sized.verdicts)


def test_size_keeps_comments_and_order(flawed_sized):
    old = FLAWED.read_text(encoding="utf-8").splitlines()
    new = flawed_sized.text.splitlines()
    assert [ln for ln in old if ln.lstrip().startswith("#")] == [ln for ln in new if ln.lstrip().startswith("#")]
    ids = [ln for ln in new if ln.startswith("id = ")]
    assert ids == [ln for ln in old if ln.startswith("id = ")]


def test_size_coach_changes_only_what_it_has_to():
    """The coach fails nothing sizing can change; one verdict warns at the worst tolerance corner:
    S4's voltage drop, 3.11 % against 3 % (coil -5 %, cables +10 %, the regulator cold and steep).
    Sizing raises W4 and W4R (2.9 m and 1.8 m) from 16 to 20 mm² and nothing else. By hand: the two
    cables' share of the drop falls by I x 1.1 x 4.7 m x (1.16 - 0.955) mΩ/m x 0.8035 (ISO 6722-1
    Table 4, the shipped table's values; copper at -30 °C, IEC 60028 alpha), with I the stage current
    the check reads off W4's ampacity verdict; the drop the check computes falls by the same within
    5 % (the current rises slightly as the drop falls, and the ampacity corner leaves the lengths
    nominal). The fuses' voltage ratings (32 V on the 32 V bus, warn) are no change of part: a type
    change with the same stated rating would not clear them."""
    text = COACH.read_text(encoding="utf-8")
    r = sizing.size_drawing(text, str(COACH), COACH.parent)
    assert sorted((c.part, c.key, c.old, c.new) for c in r.changes) == [
        ("W4", "size", "16 mm²", "20 mm²"),
        ("W4R", "size", "16 mm²", "20 mm²"),
    ]
    assert all(c.why == "circuit.voltage_drop S4 (warn)" for c in r.changes)
    diff = [ln for ln in difflib.ndiff(text.splitlines(), r.text.splitlines()) if ln[:2] in ("+ ", "- ")]
    assert diff == ['- size = "16 mm^2"', '+ size = "20 mm^2"'] * 2
    _, before = coilstage.check(coilstage.load_drawing(COACH))
    after = r.verdicts
    drop = {v.subject: v for v in before if v.rule == "circuit.voltage_drop"}["S4"]
    new_drop = next(v for v in after if v.rule == "circuit.voltage_drop" and v.subject == "S4")
    assert drop.status.value == "warn" and new_drop.status.value == "pass"
    i = next(v.value for v in before if v.rule == "cable.ampacity" and v.subject == "W4")
    hand = i * 1.1 * (2.9 + 1.8) * (1.16e-3 - 0.955e-3) * (1 - 50 * ALPHA_CU) / 24.0 * 100.0  # % of 24 V
    assert drop.value - new_drop.value == pytest.approx(hand, rel=0.05)
    assert _statuses(after) == {**_statuses(before), ("circuit.voltage_drop", "S4"): "pass"}


def test_fixed_part_stays_and_is_named():
    text = FLAWED.read_text(encoding="utf-8").replace(
        'id = "W2"\nkind = "cable"', 'id = "W2"\nfixed = true\nkind = "cable"'
    )
    r = sizing.size_drawing(text, str(FLAWED), FLAWED.parent)
    assert ("W2", "size") not in {(c.part, c.key) for c in r.changes}
    assert 'size = "4 mm^2"' in r.text.split('id = "W2"')[1].split("[[harness]]")[0]
    # (the regulator-failure case is not one sizing designs for: overvoltage.cable W2 stays as it is)
    held = [x for x in r.remaining if x["subject"] == "W2" and not x["rule"].startswith("overvoltage.")]
    assert held and all("fixed part W2" in x["held_by"] for x in held)
    # the written drawing loads, and sizing it again keeps W2 fixed and changes nothing
    parse_drawing(r.text, str(FLAWED), FLAWED.parent)
    again = sizing.size_drawing(r.text, str(FLAWED), FLAWED.parent)
    assert again.changes == [] and "W2" in sizing.prepare(r.text).fixed


def test_auto_parts_are_filled():
    text = (
        drawing_text(stages=1, coil_r=[0.9])
        .replace('size = "10 mm^2"\nlength = "2.0 m"', 'size = "auto"\nlength = "2.0 m"')
        .replace('"150 A"', '"auto"')
    )
    assert text.count('"auto"') == 2
    r = sizing.size_drawing(text)
    assert '"auto"' not in r.text
    d = parse_drawing(r.text)
    _, verdicts = coilstage.check(d)
    st_ = _statuses(verdicts)
    assert st_[("cable.ampacity", "W0")] == "pass" and st_[("relay.contact_rating", "K0")] == "pass"
    w0 = next(e for e in d.elements if e.id == "W0")
    # the lightest copper: one size smaller fails one of its rules
    part = next(p for p in sizing.parts_of(d, None, r.text) if p.id == "W0")
    j = part.labels.index(w0.size_label.replace("mm^2", "mm²"))
    assert j > 0
    doc = TomlText(r.text)
    doc.set("harness", part.index, "size", part.series[j - 1])
    _, smaller = coilstage.check(parse_drawing(doc.text))
    inv = sizing.involved(part, {(v.rule, v.subject): v for v in smaller})
    assert any(v.status.value in ("fail", "warn") for v in inv.values())


def test_size_command_never_writes_the_input(tmp_path):
    from coilstage import sizecmd

    src = tmp_path / "d.toml"
    src.write_text(FLAWED.read_text(encoding="utf-8"), encoding="utf-8")
    before = src.read_bytes()
    assert sizecmd.main([str(src), "-o", str(src)]) == 2
    assert src.read_bytes() == before
    out = tmp_path / "new.toml"
    assert sizecmd.main([str(src), "-o", str(out)]) == 1  # the coils and the battery still fail
    assert src.read_bytes() == before and out.exists()
    assert sizecmd.main([str(src), "-o", str(out)]) == 2  # exists: needs --force


def test_size_command_bad_drawing(tmp_path, capsys):
    from coilstage import sizecmd

    src = tmp_path / "bad.toml"
    src.write_text('[supply]\nsystem = "36 V"\n', encoding="utf-8")
    assert sizecmd.main([str(src), "-o", str(tmp_path / "o.toml")]) == 2
    err = capsys.readouterr().err
    assert "problem" in err and "Traceback" not in err
    assert not (tmp_path / "o.toml").exists()


# ---------------------------------------------------------------- the action list


def test_action_list_groups_by_part():
    text = FLAWED.read_text(encoding="utf-8")
    sug = sizing.suggestions(text, str(FLAWED), FLAWED.parent)
    _, verdicts = coilstage.check(coilstage.load_drawing(FLAWED))
    al = sizing.action_list(verdicts, sug)
    texts = [x["text"] for x in al["fail"]]
    assert any(t.startswith("W2 — ") and "use 12 mm² or larger" in t for t in texts)
    # K1 (rated at 12 V only) is judged at the worst corner, the vehicle at its -20 °C ambient and its
    # zone cold (60 °C stated at 40 °C, 0 °C there: within its derating's 85 °C, so the plain rating
    # counts): the check of the drawing with a 24 V rating written in carries 69.6 A there, so 80 A
    # passes at <= 90 % (72 A, common practice) and 75 A warns (67.5 A)
    assert any(t.startswith("K1 — ") and "80 A" in t for t in texts)
    k1 = next(s for s in sug if s.part == "K1")
    assert k1.suggested == "80 A" and k1.smaller == "75 A"
    assert [(f.rule, f.status) for f in k1.smaller_fails] == [("relay.contact_rating", "warn")]
    assert any(x["part"] == "battery" for x in al["cannot_change"])
    # every failing verdict is either answered by a part or listed as what sizing cannot change
    listed = {r for x in al["fail"] + al["cannot_change"] for r in x["rules"]}
    assert {v.rule for v in verdicts if v.status.value == "fail"} <= listed
    mapping = sizing.suggestions_by_verdict(verdicts, sug)
    assert mapping[("cable.ampacity", "W2")]["suggested"] == "12 mm²"


def test_cable_size_awg_hand_worked():
    """The same branch in AWG sizes, at the worst tolerance corner (bus 30.225 V, see _CORNER_BUS),
    with the zone at -10 °C and the ambient factor held at 1 (see the metric test). ASTM B258 gauge
    formula d = 0.127 mm x 92^((36 - n)/39) (the shipped table's rule, stranding x 1.03, IEC 60028
    copper 1/58 Ω mm²/m): 6 AWG 13.30 mm², 1.335 mΩ/m; 5 AWG 16.77 mm². With a 6 AWG branch
    I ≈ 30.225 / (0.2290 + (6 x 0.52 + 3 x 1.335) mΩ x 0.8035 + 0.7 mΩ) ≈ 128.4 A, above the 125 A
    33 CFR 183.425 Table 5 gives 6 AWG in its 125 °C column: 6 AWG fails. 5 AWG, log-log between
    6 AWG 125 A and 4 AWG (21.15 mm²) 170 A: 125 x (16.77/13.30)^(ln(170/125)/ln(21.15/13.30)) ≈
    145.8 A, above the 130.2 A bound of a branch of no resistance: 5 AWG passes."""

    def awg_area(n: int) -> float:
        return math.pi / 4 * (0.127 * 92 ** ((36 - n) / 39)) ** 2

    a6, a5 = awg_area(6), awg_area(5)
    assert a6 == pytest.approx(13.30, abs=0.01) and a5 == pytest.approx(16.77, abs=0.01)
    r6 = 1.03 / (58.0 * a6)  # Ω/m
    cold = 1 + ALPHA_CU * (-30.0 - 20.0)
    i6 = _CORNER_BUS / (0.285 * cold + (6 * 0.52e-3 + 3 * r6) * cold + 0.7e-3)
    assert i6 == pytest.approx(128.4, abs=0.1)
    amp5 = 125 * (a5 / 13.3) ** (math.log(170 / 125) / math.log(21.15 / 13.3))
    bound = _CORNER_BUS / (0.285 * cold + 6 * 0.52e-3 * cold + 0.7e-3)
    assert amp5 == pytest.approx(145.8, abs=0.2) and amp5 > bound
    text = drawing_text(stages=1, coil_r=[0.3], branch="12 AWG").replace(
        'breaking_capacity = "20 kA"', 'breaking_capacity = "20 kA"\nprotects = ["WM"]'
    )
    six = parse_drawing(text.replace('"12 AWG"', '"6 AWG"'))
    v6 = next(v for v in coilstage.check(six)[1] if v.rule == "cable.ampacity" and v.subject == "W0")
    assert v6.limit == pytest.approx(125.0, rel=1e-6) and v6.value == pytest.approx(i6, rel=0.005)
    assert v6.status.value == "fail"
    s = _by_part(sizing.suggestions(text))["W0"]
    assert s.suggested == "5 AWG" and s.smaller == "6 AWG"
    assert [f.rule for f in s.smaller_fails] == ["cable.ampacity"]


def test_a_library_fuse_is_chosen_from_its_makers_series():
    """A fuse taken from a parts library with a ``series`` is sized over that series (the invented
    workshop library's F-100-B: 40, 60, 80, 100, 125 A), not over its type's standard ratings; a fuse
    typed in keeps its type's series."""
    from coilstage.drawing.load import load_drawing
    from tests.conftest import coach_with_parts

    text = coach_with_parts()
    d = parse_drawing(text, "parts.toml", COACH.parent)
    f1 = next(p for p in sizing.parts_of(d, None, text) if p.id == "F1")
    assert f1.labels == ("40 A", "60 A", "80 A", "100 A", "125 A")
    typed = next(p for p in sizing.parts_of(load_drawing(COACH), None, COACH.read_text()) if p.id == "F1")
    assert typed.labels != f1.labels


def test_suggestions_given_the_check_already_made_are_the_same():
    """Handing suggestions() the check already made of the text (checked=) saves reading and checking
    it again and changes no suggestion."""
    text = FLAWED.read_text(encoding="utf-8")
    d = coilstage.load_drawing(FLAWED)
    a, v = coilstage.check(d)
    plain = sizing.suggestions(text, str(FLAWED), FLAWED.parent)
    given = sizing.suggestions(text, str(FLAWED), FLAWED.parent, checked=(d, a, v))
    assert [s.to_dict() for s in given] == [s.to_dict() for s in plain]
    assert plain


# ---------------------------------------------------------------- the zener path, and parts from a library


def _zener_text() -> str:
    """One stage (coil 0.9 Ω) whose switch-off must end within 60 ms: a plain freewheel diode lets the
    current decay with the coil's own L/R (about 180 ms to 5 %), so only a diode with a zener in
    series, which takes the stored energy against its clamp voltage, can meet it. The relay states a
    voltage rating of 150 V (invented) so that the clamp's ceiling can be judged (the unclamped load
    dump at the stage's lightest load alone brings about 77 V: a 100 V contact leaves no clamp)."""
    text = drawing_text(stages=1, coil_r=[0.9]).replace(
        'rated_ambient = "85 degC"', 'rated_ambient = "85 degC"\nvoltage_rating = "150 V"'
    )
    return text + '\n[switching]\nrelease_limit = "60 ms"\n'


def test_zener_suppression_is_the_lowest_clamp_that_releases_in_time():
    text = _zener_text()
    s = _by_part(sizing.suggestions(text))["S0"]
    assert s.value_text is not None and 'kind = "diode_zener"' in s.value_text
    volts = tomllib.loads(f"x = {s.value_text}")["x"]["zener_voltage"]
    series = sizing.standard_series("zener_voltage")  # IEC 60063 E24 steps
    j = series.index(float(volts.split()[0]))
    assert s.smaller == f"diode + {series[j - 1]:g} V zener"
    assert "stage.release_time" in {f.rule for f in s.smaller_fails}

    def judged(zener: float) -> dict:
        doc = TomlText(text)
        spec = tomllib.loads(f"x = {s.value_text}")["x"]
        doc.set("harness", s.edits[0][0][0], "suppression", format_value({**spec, "zener_voltage": f"{zener:g} V"}))
        return _statuses(coilstage.check(parse_drawing(doc.text))[1])

    # checked with the public check alone: the suggested clamp releases in time, the next lower does not
    assert judged(series[j])[("stage.release_time", "S0")] == "pass"
    assert judged(series[j - 1])[("stage.release_time", "S0")] != "pass"
    # the opening contact sees bus + clamp: within the relay's 150 V at the suggested clamp
    assert judged(series[j])[("relay.inductive_break", "K0")] != "fail"


def _library_text() -> str:
    """Two stages with 30 A relays (too small) and central load-dump suppression stated, for sizing
    with the invented workshop library (configs/parts/workshop-parts.toml): fuses F-100-B (type B,
    40–125 A, 3 kA breaking capacity) and F-350-S51 (350 A, 5 kA), relay K-150-24 (150 A at 24 V,
    80 V rating), suppressor DZ-24-150 (a 24 V zener module)."""
    return (
        drawing_text(stages=2, coil_r=[0.9, 1.0])
        .replace('"150 A"', '"30 A"')
        .replace("[supply]\n", '[supply]\nload_dump_suppression = "yes"\n', 1)
    )


def test_size_chooses_whole_parts_from_the_library(tmp_path):
    """With a parts library, size picks the library's smallest fuse, relay and suppressor that pass
    every rule they take part in, and names the part in the change list; the new drawing refers to
    the library by a path relative to itself, so it loads without --parts."""
    from tests.conftest import ROOT

    lib = ROOT / "configs" / "parts"
    src = tmp_path / "two-stage.toml"
    src.write_text(_library_text(), encoding="utf-8")
    r = sizing.size_drawing(src.read_text(), str(src), tmp_path, parts_dirs=(lib,))
    by = {(c.part, c.key): c for c in r.changes}
    assert by[("K0", "part")].new.endswith("workshop-parts.toml#K-150-24")
    assert by[("FM", "part")].new.endswith("workshop-parts.toml#F-350-S51")
    assert "F-100-B at 125 A, fails fuse.breaking_capacity FM" in by[("FM", "part")].why
    new = parse_drawing(r.text, str(src), tmp_path)  # no parts_dirs: the relative reference resolves
    st_ = _statuses(coilstage.check(new)[1])
    for k, status in st_.items():
        ours = (k[0].startswith("fuse.") and k[1].split(" ")[0] == "FM") or (k[0].startswith("relay.") and k[1] == "K0")
        if ours:
            assert status in ("pass", "not checked"), (k, status)
    # the next smaller library fuse, F-100-B at its largest rating, fails its breaking capacity: the
    # library gives it 3 kA, and the fault at FM is larger (the verdict's own figure)
    doc = TomlText(r.text)
    fm = next(i for i, e in enumerate(tomllib.loads(r.text)["harness"]) if e["id"] == "FM")
    doc.set("harness", fm, "part", format_value(by[("FM", "part")].new.replace("F-350-S51", "F-100-B")))
    doc.set("harness", fm, "rating", format_value("125 A"))
    smaller = coilstage.check(parse_drawing(doc.text, str(src), tmp_path))[1]
    bc = next(v for v in smaller if v.rule == "fuse.breaking_capacity" and v.subject == "FM")
    assert bc.status.value == "fail" and bc.limit == pytest.approx(3000.0) and bc.value > 3000.0
    # the library's 24 V zener module is not chosen: the opening contact would see the clamped load
    # dump plus the clamp, 58 V + 24.9 V > the relay's 80 V (ISO 16750-2 Test B, clamped at 58 V)
    assert ("S0", "suppression") not in by or "DZ-24-150" not in by[("S0", "suppression")].new
    with_dz = TomlText(r.text)
    s0 = next(i for i, e in enumerate(tomllib.loads(r.text)["harness"]) if e["id"] == "S0")
    with_dz.set(
        "harness", s0, "suppression", format_value({"part": by[("K0", "part")].new.replace("K-150-24", "DZ-24-150")})
    )
    st_dz = _statuses(coilstage.check(parse_drawing(with_dz.text, str(src), tmp_path))[1])
    assert st_dz[("relay.inductive_break", "K0")] == "fail"


def test_size_command_passes_the_parts_library_through(tmp_path):
    from coilstage.cli import main
    from tests.conftest import ROOT

    src = tmp_path / "two-stage.toml"
    src.write_text(_library_text(), encoding="utf-8")
    out = tmp_path / "sized.toml"
    main(["size", str(src), "-o", str(out), "--parts", str(ROOT / "configs" / "parts")])
    assert "#K-150-24" in out.read_text(encoding="utf-8")
    assert src.read_text(encoding="utf-8") == _library_text()  # the input is never modified


def test_a_relay_rating_judged_on_the_analysis_already_made_equals_a_fresh_check():
    """Sizing judges a relay's contact rating on the analysis of the drawing as checked, with only the
    rating changed (the rating enters no figure of the analysis); each candidate's verdicts equal
    those of the public check of the edited text, figure for figure."""
    text = drawing_text(stages=2, coil_r=[0.5, 1.0]).replace('"150 A"', '"60 A"')
    d = parse_drawing(text)
    a, v = coilstage.check(d)
    found = sizing.suggestions(text, checked=(d, a, v))
    k0 = _by_part(found)["K0"]
    assert k0.suggested is not None and k0.checked
    parts = {p.id: p for p in sizing.parts_of(d, None, text)}
    part = parts["K0"]
    for rating in ('"60 A"', k0.value_text, part.series[part.series.index(k0.value_text) - 1]):
        doc = TomlText(text)
        doc.set("harness", part.index, part.key, rating)
        fresh = {(x.rule, x.subject): x for x in coilstage.check(parse_drawing(doc.text))[1]}
        bench = sizing.Bench(text)
        bench.full({})  # the check of the drawing as given, as suggestions() has it
        fast = sizing.involved(part, sizing.candidate_verdicts(bench, part, {(part.index, part.key): rating}))
        assert fast
        for k, x in fast.items():  # the check adds sensitivities; every figure and word is the same
            y = fresh[k]
            assert (x.status, x.value, x.limit, x.margin, x.note) == (y.status, y.value, y.limit, y.margin, y.note)


def test_what_sizing_cannot_change_says_so_in_every_format(tmp_path):
    """Every failing verdict of the flawed demo that no part answers (the coils, the battery, the
    alternator, the returns' layout) carries a statement in the action list and the JSON: which part,
    its figure against its limit (the verdict's own), that sizing does not change it, and what would
    have to change; the text and Markdown reports show the same words."""
    import json

    from coilstage.cli import main

    out = tmp_path / "r.json"
    main(["check", str(FLAWED), "-f", "json", "-o", str(out)])
    doc = json.loads(out.read_text(encoding="utf-8"))
    unanswered = [v for v in doc["verdicts"] if v["status"] == "fail" and v["suggested"] is None]
    assert {v["rule"] for v in unanswered} >= {"winding.temperature", "battery.charge"}
    for v in unanswered:
        s = v["suggestion"]
        assert s is not None and v["subject"] in s and "sizing does not change" in s and "needed" in s, v["rule"]
    coil = next(v for v in unanswered if v["rule"] == "winding.temperature" and v["subject"] == "S2")
    hot, limit = coil["value"]["value"], coil["limit"]["value"]
    assert coil["suggestion"].startswith(
        f"coil S2: winding reaches {hot:.0f} °C against {limit:.0f} °C (winding.temperature, fail) — "
        "sizing does not change the coils; a coil with more cooling or a lower duty is needed"
    )
    battery = next(v for v in unanswered if v["rule"] == "battery.charge")
    assert "sizing does not change the battery" in battery["suggestion"]
    # the action list of the JSON carries the same statement beside the verdict
    items = [x for g in doc["actions"]["failures"] for x in g["items"]]
    assert (
        next(x for x in items if x["rule"] == "winding.temperature" and x["subject"] == "S2")["suggestion"]
        == (coil["suggestion"])
    )
    # with --no-suggest nothing is said (no suggestion was asked for)
    plain = tmp_path / "p.json"
    main(["check", str(FLAWED), "--no-suggest", "-f", "json", "-o", str(plain)])
    assert all(v["suggestion"] is None for v in json.loads(plain.read_text(encoding="utf-8"))["verdicts"])
    for fmt in ("text", "markdown"):
        f = tmp_path / f"r.{fmt}"
        main(["check", str(FLAWED), "-f", fmt, "-o", str(f)])
        body = " ".join(f.read_text(encoding="utf-8").split())
        assert "sizing does not change the coils; a coil with more cooling or a lower duty is needed" in body, fmt
    # sizing's own action list: the same statements, by part
    text = FLAWED.read_text(encoding="utf-8")
    d = coilstage.load_drawing(FLAWED)
    a, verdicts = coilstage.check(d)
    al = sizing.action_list(verdicts, sizing.suggestions(text, str(FLAWED), FLAWED.parent, checked=(d, a, verdicts)))
    s2 = next(x for x in al["cannot_change"] if x["part"] == "S2")
    assert coil["suggestion"] in s2["statements"]


def test_the_duty_rules_of_a_candidate_without_the_continuous_simulation_equal_a_fresh_check():
    """Sizing judges a cable's or a fuse's duty rules on an analysis without the simulation of
    continuous full retardation, which only winding.time_to_limit reads; each verdict of the part's
    rules on it equals that of the public check of the edited text, figure for figure."""
    text = FLAWED.read_text(encoding="utf-8")
    d = parse_drawing(text, str(FLAWED), FLAWED.parent)
    parts = {p.id: p for p in sizing.parts_of(d, None, text)}
    part = parts["W-FEED"]
    value = part.series[math.floor(part.today_pos) + 2]
    doc = TomlText(text)
    doc.set("harness", part.index, part.key, value)
    edited = parse_drawing(doc.text, str(FLAWED), FLAWED.parent)
    light = sizing.duty_analysis(edited, part.rules)
    assert light.continuous is None and light.descent is not None  # the lighter analysis was made
    assert sizing.duty_analysis(edited, ("winding.",)).continuous is not None  # not where a rule reads it
    fresh = {(x.rule, x.subject): x for x in coilstage.check(edited)[1]}
    bench = sizing.Bench(text, str(FLAWED), FLAWED.parent)
    got = bench.duty({(part.index, part.key): value}, part.rules)
    duty = [k for k in got if k[0] in ("cable.conductor_temperature", "fuse.duty_thermal_state")]
    assert any(got[k].status.value != "not checked" for k in duty)  # the simulation is read
    for k, x in got.items():  # the check adds sensitivities and, to the heating rules, the nominal
        y = fresh[k]  # beside the verdict (the head of its note); every figure and word is the same
        assert (x.status, x.value, x.limit, x.margin) == (y.status, y.value, y.limit, y.margin)
        assert y.note == x.note or y.note.endswith(": " + x.note), k
