"""Tolerances a drawing states: the overlay of the drawing's rows on the shipped defaults
(analysis.tolerances.effective / lookup) and the [tolerances] and per-element keys of the loader.

Reference for every shipped value: coilstage/data/tolerance_defaults.toml, read here with tomllib
(independent of coilstage.tables)."""

from __future__ import annotations

import dataclasses
import tomllib

import pytest

from coilstage.analysis import tolerances, worst
from coilstage.drawing.load import load_drawing
from coilstage.drawing.schema import ToleranceSpec

from .conftest import COACH, ROOT

SHIPPED = {
    r["key"]: r
    for r in tomllib.loads((ROOT / "coilstage/data/tolerance_defaults.toml").read_text(encoding="utf-8"))["table"][
        "rows"
    ]
}


@pytest.fixture(scope="module")
def coach():
    return load_drawing(COACH)


def _with(d, **specs: ToleranceSpec):
    return dataclasses.replace(d, tolerances={k.replace("__", "."): v for k, v in specs.items()})


# ---------------------------------------------------------------- effective / lookup


def test_shipped_rows_are_the_table_and_worst_defaults_agree():
    rows = tolerances.shipped()
    assert rows == SHIPPED
    assert worst.defaults() == SHIPPED  # the worst cases still read the same table


def test_shipped_rows_are_copies():
    tolerances.shipped()["coils.*.resistance_tolerance"]["low"] = -0.5
    assert tolerances.shipped()["coils.*.resistance_tolerance"]["low"] == -0.05


def test_effective_without_drawing_rows_is_the_shipped_table(coach):
    # The coach states only the alternator's 0.3 V (a relative row on its 28.2 V set-point) and
    # nothing else; every other row is the table's.
    tol = tolerances.effective(dataclasses.replace(coach, tolerances={}))
    assert tol == SHIPPED


def test_effective_overlays_a_drawing_row(coach):
    spec = ToleranceSpec(-0.07, 0.03, "normal", "tolerances.coil_resistance")
    tol = tolerances.effective(_with(coach, **{"coils.*.resistance_tolerance": spec}))
    row = tol["coils.*.resistance_tolerance"]
    assert (row["low"], row["high"], row["distribution"]) == (-0.07, 0.03, "normal")
    assert row["source"] == "drawing: tolerances.coil_resistance"
    assert row["status"] == "stated in the drawing"
    shipped = SHIPPED["coils.*.resistance_tolerance"]
    assert row["quantity"] == shipped["quantity"] and row["unit"] == shipped["unit"] == "1"
    assert row["nominal"] == 0.0
    # the other rows are untouched
    assert tol["tolerances.cable_length"] == SHIPPED["tolerances.cable_length"]


def test_effective_holds_the_nominal_within_the_drawing_ends(coach):
    # shipped state of charge: nominal 90 % within 50-100 %; the drawing's 40-80 % puts it at 80 %.
    spec = ToleranceSpec(0.40, 0.80, "uniform", "tolerances.battery_state_of_charge")
    row = tolerances.effective(_with(coach, **{"supply.battery.state_of_charge": spec}))[
        "supply.battery.state_of_charge"
    ]
    assert (row["low"], row["nominal"], row["high"]) == (0.40, 0.80, 0.80)


def test_per_element_row_and_lookup(coach):
    specs = {
        "cables.W1.length_tolerance": ToleranceSpec(-0.02, 0.05, "uniform", "harness[2] (W1).length_tolerance"),
        "coils.RC4.resistance_tolerance": ToleranceSpec(-0.03, 0.03, "uniform", "coils.RC4.resistance_tolerance"),
    }
    tol = tolerances.effective(dataclasses.replace(coach, tolerances=specs))
    w1 = tolerances.lookup(tol, "tolerances.cable_length", "W1")
    assert (w1["low"], w1["high"]) == (-0.02, 0.05) and w1["key"] == "cables.W1.length_tolerance"
    assert w1["quantity"] == SHIPPED["tolerances.cable_length"]["quantity"]
    assert w1["source"] == "drawing: harness[2] (W1).length_tolerance"
    # another cable, and no element at all: the generic row
    assert tolerances.lookup(tol, "tolerances.cable_length", "W9") == SHIPPED["tolerances.cable_length"]
    assert tolerances.lookup(tol, "tolerances.cable_length") == SHIPPED["tolerances.cable_length"]
    rc = tolerances.lookup(tol, "coils.*.resistance_tolerance", "RC4")
    assert (rc["low"], rc["high"]) == (-0.03, 0.03)
    assert tolerances.lookup(tol, "coils.*.resistance_tolerance", "OTHER")["low"] == -0.05
    # the per-element key itself works too, and falls back to its generic row
    assert tolerances.lookup(tol, "cables.W1.length_tolerance")["high"] == 0.05
    assert tolerances.lookup(tol, "cables.W7.length_tolerance")["high"] == SHIPPED["tolerances.cable_length"]["high"]
    # a key without a per-element form ignores the element
    assert tolerances.lookup(tol, "tolerances.fault_resistance", "W1") == SHIPPED["tolerances.fault_resistance"]
    with pytest.raises(KeyError):
        tolerances.lookup(tol, "no.such.key")


def test_generic_and_element_keys():
    assert tolerances.generic_key("cables.W.3.length_tolerance") == "tolerances.cable_length"
    assert tolerances.element_key("tolerances.cable_length", "W.3") == "cables.W.3.length_tolerance"
    assert tolerances.element_key("coils.*.inductance_tolerance", "RC4") == "coils.RC4.inductance_tolerance"
    assert tolerances.generic_key("cables..length_tolerance") == "cables..length_tolerance"


def test_drawing_only_row_and_chemistry_row(coach):
    spec = ToleranceSpec(0.004, 0.009, "uniform", "tolerances.battery_resistance")
    d = _with(coach, **{"supply.battery.internal_resistance": spec})
    row = tolerances.effective(d)["supply.battery.internal_resistance"]
    assert row["unit"] == "ohm" and (row["low"], row["high"]) == (0.004, 0.009)
    assert row["nominal"] == pytest.approx(0.0065)  # no shipped nominal: the middle of the ends
    # an AGM battery takes the AGM Peukert row under the generic key (retailer's table: 1.05-1.15)
    agm = dataclasses.replace(
        d, supply=dataclasses.replace(d.supply, battery=dataclasses.replace(d.supply.battery, chemistry="agm"))
    )
    p = tolerances.effective(agm)["supply.battery.peukert_exponent"]
    assert (p["low"], p["high"]) == (1.05, 1.15) and p["key"] == "supply.battery.peukert_exponent"
    assert tolerances.effective(d)["supply.battery.peukert_exponent"] == SHIPPED["supply.battery.peukert_exponent"]


def test_effective_refuses_a_key_it_cannot_place(coach):
    with pytest.raises(KeyError):
        tolerances.effective(_with(coach, **{"no.such.row": ToleranceSpec(0.0, 1.0)}))
