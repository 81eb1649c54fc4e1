"""The ambient duty sweep every sizing candidate (and every check) makes: the networks of all ambients
solved in one stacked call (``corners.cold_duties``) give the same figures, to the last bit, as one
factorised network per ambient (``corners.cold_duty`` of a ``linear.CaseNetwork``, which rests on
numpy.linalg.solve per network; independent library: numpy)."""

from __future__ import annotations

import dataclasses

import pytest

import coilstage
from coilstage.analysis import corners
from coilstage.analysis.circuit import Circuit
from coilstage.analysis.conditions import conditions
from coilstage.analysis.linear import CaseNetwork
from coilstage.drawing.load import parse_drawing
from coilstage.drawing.schema import Cable, Stage
from tests.conftest import COACH, CONFIGS, FLAWED, drawing_text

DRAWINGS = [
    lambda: coilstage.load_drawing(FLAWED),
    lambda: coilstage.load_drawing(COACH),
    lambda: coilstage.load_drawing(CONFIGS / "light-truck-12v-2stage.toml"),
    lambda: parse_drawing(drawing_text(stages=1)),
    lambda: parse_drawing(drawing_text(stages=3, coil_r=[0.5, 1.2, 2.5], system=12)),
    lambda: parse_drawing(drawing_text(stages=4, coil_count=2, connection="parallel")),
]


def _sweep_cases(d, scale: float = 1.0) -> list:
    """The cold corner's sources with the bus held at a value that moves with the ambient, and the
    cables and coils at each ambient, as the duty sweep makes them."""
    cold = conditions(d)["cold"].sources
    out = []
    for t in (-40.0, -12.5, 20.0, 55.0, 85.0):
        temps = {e.id: t for e in d.elements if isinstance(e, (Cable, Stage))}
        bus = (cold.hold_bus or cold.battery_emf) * scale - 0.004 * (t - 25.0)
        src = dataclasses.replace(
            cold, battery_emf=bus, hold_bus=bus, alt_setpoint=bus if cold.alt_setpoint is not None else None
        )
        out.append((temps, src))
    return out


@pytest.mark.parametrize("make", DRAWINGS)
def test_the_stacked_sweep_equals_one_network_per_ambient(make, monkeypatch):
    d = make()
    circuit = Circuit(d)
    cases = _sweep_cases(d) + _sweep_cases(d, 1.05)
    expected = [corners.cold_duty(CaseNetwork(circuit, t, src)) for t, src in cases]

    def refused(net):  # the stacked path must not fall back to a network per ambient here
        raise AssertionError("fell back to one network per ambient")

    monkeypatch.setattr(corners, "cold_duty", refused)
    got = corners.cold_duties(circuit, cases)
    assert got == expected  # dicts of floats and words: equal bit for bit
    assert any(x > 0 for duty, _ in got for x in duty.values())


def test_a_regulating_alternator_falls_back_to_the_piecewise_network():
    d = coilstage.load_drawing(FLAWED)
    circuit = Circuit(d)
    hot = conditions(d)["hot"]  # the alternator regulates: its state may change with the load
    cases = [(hot.temperatures, hot.sources)]
    assert corners.cold_duties(circuit, cases) == [corners.cold_duty(CaseNetwork(circuit, *cases[0]))]
