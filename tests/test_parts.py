"""The parts list against the drawing: every element once, in order, each value as the drawing file
gives it (read here independently with tomllib), defaults marked where the file says nothing.

Reference: the demo drawing files themselves (hand-read values quoted in the assertions).
"""

from __future__ import annotations

import shutil
import tomllib

import pytest

from coilstage import load_drawing
from coilstage.report import parts

from .conftest import COACH, FLAWED, TRUCK


def _part(p, pid):
    return next(x for x in p["parts"] if x["id"] == pid)


def _row(part, key):
    return next(r for r in part["values"] if r["key"] == key)


@pytest.mark.parametrize("path", [COACH, TRUCK, FLAWED], ids=lambda p: p.stem)
def test_every_element_once_in_drawing_order(path):
    d = load_drawing(path)
    p = parts.build(d)
    harness = [x["id"] for x in p["parts"] if x["section"] == "harness"]
    raw = tomllib.loads(path.read_text(encoding="utf-8"))
    assert harness == [e["id"] for e in raw["harness"]]
    assert [x["id"] for x in p["parts"] if x["section"] == "coils"] == list(raw["coils"])
    for x, e in zip((x for x in p["parts"] if x["section"] == "harness"), raw["harness"], strict=True):
        assert (x["kind"], x["from"], x["to"]) == (e["kind"], e["from"], e["to"])
        # a value the file gives is "as drawn"; a value it does not give is never "as drawn"
        for r in x["values"]:
            top = (r.get("lookup") or r["key"]).split(".", 1)[0]
            if r["origin"] == "drawing":
                assert top in e, (x["id"], r["key"])
            if r["origin"] == "default":
                assert top not in e or r.get("lookup", "").count("."), (x["id"], r["key"])


def test_flawed_demo_values_by_hand():
    d = load_drawing(FLAWED)
    p = parts.build(d)
    fb = _part(p, "FB")
    assert _row(fb, "rating")["shown"] == "100 A" and _row(fb, "rating")["origin"] == "drawing"
    # the file gives FB no resistance: the loader takes 0 ohm, and the list says it is a default
    assert _row(fb, "resistance")["origin"] == "default" and _row(fb, "resistance")["shown"] == "0 Ω"
    # breaking capacity not in the file: from the ISO 8820-3 scope row of the fuse table
    assert _row(fb, "breaking_capacity")["origin"] == "table" and _row(fb, "breaking_capacity")["value"] == 1000.0
    feed = _part(p, "W-FEED")
    assert _row(feed, "size")["shown"] == "6 mm²"
    # default rel 1e-6: the drawing's values converted to SI: round-off only
    assert _row(feed, "size.area")["value"] == pytest.approx(6e-6)
    assert _row(feed, "length")["value"] == pytest.approx(3.0) and _row(feed, "length")["shown"] == "3 m"
    assert _row(feed, "insulation")["shown"] == "A"
    assert _row(feed, "insulation.max")["shown"] == "85 °C"  # ISO 6722 class A
    assert _row(feed, "zone.temperature")["shown"] == "105 °C"  # engine_bay in the file's zones
    assert _row(feed, "bundle")["origin"] == "default" and _row(feed, "bundle")["value"] == 1
    k1 = _part(p, "K1")
    assert _row(k1, "rating_12v")["shown"] == "70 A" and _row(k1, "rating_24v")["origin"] == "absent"
    assert _row(k1, "rated_ambient")["origin"] == "default" and _row(k1, "rated_ambient")["shown"] == "23 °C"
    assert _row(k1, "derating")["shown"] == "70% at 85 °C"
    s1 = _part(p, "S1")
    assert _row(s1, "suppression")["shown"] == "none" and _row(s1, "suppression")["origin"] == "default"
    assert _row(s1, "count")["value"] == 2 and _row(s1, "connection")["shown"] == "parallel"
    assert "resistance" in fb["defaults"] and "bundle" in feed["defaults"]


def test_a_forward_voltage_default_inside_a_given_suppression(tmp_path):
    text = FLAWED.read_text(encoding="utf-8").replace(
        'connection = "parallel"\nfrom = "S1+"',
        'connection = "parallel"\nsuppression = { kind = "diode_zener", zener_voltage = "24 V" }\nfrom = "S1+"',
        1,
    )
    f = tmp_path / "d.toml"
    f.write_text(text, encoding="utf-8")
    s1 = _part(parts.build(load_drawing(f)), "S1")
    u0 = _row(s1, "suppression.u0")
    assert u0["value"] == pytest.approx(24.8)  # zener 24 V + the loader's 0.8 V diode default
    assert u0["origin"] == "default"
    assert _row(s1, "suppression")["origin"] == "drawing"


def test_without_the_file_the_assumptions_decide(tmp_path):
    f = tmp_path / "d.toml"
    shutil.copy(FLAWED, f)
    d = load_drawing(f)
    f.unlink()  # the report is made after the file went away: only the loader's assumptions remain
    p = parts.build(d)
    assert p["defaults_from"] == ["the loader's assumptions only"]
    fb = _part(p, "FB")
    assert _row(fb, "resistance")["origin"] == "default"  # "harness[0] (FB).resistance not given: ..."
    assumed = " ".join(d.assumptions)
    for x in p["parts"]:
        for key in x["defaults"]:
            assert f"{x['where']}.{key.split('.')[0]}" in assumed, (x["id"], key)


def test_show_units():
    assert parts.show(2.5e-6, "m^2") == "2.5 mm²"
    assert parts.show(0.0015, "m") == "1.5 mm"
    assert parts.show(0.009, "ohm") == "9 mΩ"
    assert parts.show(225 * 3600.0, "A*h") == "225 A·h"
    assert parts.show(float("inf"), "s") == "none"
    assert parts.show(None, "A") == "—"


def test_values_from_a_parts_library_are_marked_with_the_part():
    """The coach with F1, K1 and S1's suppressor taken from the invented workshop library
    (configs/parts/workshop-parts.toml) and F1's rating written over: the parts list marks the
    library's values as such, names the part, and keeps the drawing's own rating as drawn."""
    import tomllib

    from coilstage.drawing.load import parse_drawing

    from .conftest import coach_with_parts

    text = coach_with_parts()
    d = parse_drawing(text, "parts.toml", COACH.parent)
    got = {p["id"]: p for p in parts.build(d, tomllib.loads(text))["parts"]}
    f1 = {r["key"]: r for r in got["F1"]["values"]}
    assert f1["breaking_capacity"]["origin"] == "library"
    assert "workshop-parts.toml#" in f1["breaking_capacity"]["note"]
    assert f1["rating"]["origin"] == "drawing"
    s1 = {r["key"]: r for r in got["S1"]["values"]}
    assert s1["suppression.reverse_voltage"]["origin"] == "library"
    assert s1["suppression"]["origin"] == "library"
    assert all(r["origin"] != "library" for r in got["F2"]["values"])
