"""A battery's rated short-circuit and cold-cranking currents bound its internal resistance.

Hand-worked on the coach demo (a 24 V pair, 9 mΩ stated): the open-circuit voltage of a full block
is 12.65 V (the published OCV line the physics module cites), so a pair rated 5 kA short-circuit
has R = 2 × 12.65 V / 5000 A = 5.06 mΩ (R = U0/Isc, IEC 60896-11); a block rated 600 A under
EN 50342-1 (7.5 V after 10 s at −18 °C) allows at most (12.65 − 7.5) V / 600 A = 8.583 mΩ per block,
17.17 mΩ the pair at −18 °C, 17.17 / 1.5^(43/48) = 11.94 mΩ at 25 °C (R(T) = R25 · 1.5^((25 − T)/48),
the shipped temperature law: a 50 % rise over 48 K).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from coilstage import load_drawing
from coilstage.analysis.params import evaluate, model, nominal, parameters
from coilstage.analysis.run import analyse

COACH = "configs/coach-24v-4stage.toml"

#: the ends each worst case of analysis.worst takes (its module docstring): the smallest fault and the
#: lowest bus (low charge, aged, coldest ambient, long harness, the fault's own resistance), the
#: largest fault (lowest resistance factor, surface charge, cold alternator excess, coldest ambient)
SMALLEST = {
    "supply.battery.state_of_charge": "low",
    "supply.battery.age_factor": "high",
    "environment.ambient": "low",
    "tolerances.cable_length": "high",
    "tolerances.fault_resistance": "high",
}
LARGEST = {
    "supply.battery.resistance_min_factor": "low",
    "supply.battery.surface_charge_per_cell": "high",
    "supply.alternator.cold_excess": "high",
    "environment.ambient": "low",
}


def _case(ps, ends):
    x = nominal(ps)
    for j, p in enumerate(ps):
        if p.key in ends:
            x[j] = getattr(p, ends[p.key])
    return x[None]


def _with_ratings(d, **kw):
    b = dataclasses.replace(d.supply.battery, **kw)
    return dataclasses.replace(d, supply=dataclasses.replace(d.supply, battery=b))


@pytest.fixture(scope="module")
def coach():
    return load_drawing(COACH)


def test_a_short_circuit_rating_sets_the_low_end_where_it_is_lower(coach):
    assert coach.supply.battery.internal_resistance == pytest.approx(9e-3)
    strong = analyse(_with_ratings(coach, short_circuit_current=5000.0), switching=False, heating=False)
    assert strong.worst.largest_fault.battery_resistance == pytest.approx(2 * 12.65 / 5000.0, rel=1e-12)
    assert "short-circuit" in dict(strong.worst.largest_fault.words)["battery"]
    # a rating weaker than the stated resistance's low end (0.9 × 9 mΩ = 8.1 mΩ < 12.65 mΩ): the lower governs
    weak = analyse(_with_ratings(coach, short_circuit_current=2000.0), switching=False, heating=False)
    plain = analyse(coach, switching=False, heating=False)
    assert weak.worst.largest_fault.battery_resistance == pytest.approx(0.9 * 9e-3, rel=1e-12)
    assert plain.worst.largest_fault.battery_resistance == pytest.approx(0.9 * 9e-3, rel=1e-12)
    # a stiffer battery, a larger fault at every fuse
    for f, i in plain.worst.largest_fault.at_fuse.items():
        assert strong.worst.largest_fault.at_fuse[f] > i


def test_a_cranking_rating_raises_the_high_end_where_it_allows_more(coach):
    plain = analyse(coach, switching=False, heating=False)
    weak = _with_ratings(coach, cranking_current=600.0, cranking_standard="EN 50342-1")
    a = analyse(weak, switching=False, heating=False)
    r_ref = 2 * (12.65 - 7.5) / 600.0 / 1.5 ** (43.0 / 48.0)
    assert r_ref == pytest.approx(11.94e-3, abs=5e-6)  # the hand figure of the module docstring (4 figures)
    # the raised end is proportional to the reference resistance (same charge, temperature, age)
    # b is stated to 4 significant figures in the shipped row (0.008447 against ln(1.5)/48): 1e-5
    assert a.worst.smallest_fault.battery_resistance / plain.worst.smallest_fault.battery_resistance == pytest.approx(
        r_ref / 9e-3, rel=1e-5
    )
    assert "cold-cranking" in dict(a.worst.smallest_fault.words)["battery"]
    # a rating the stated resistance already meets (1000 A: 7.16 mΩ < 9 mΩ) changes nothing
    strong = analyse(_with_ratings(coach, cranking_current=1000.0, cranking_standard="EN 50342-1"), False, False)
    assert strong.worst.smallest_fault.battery_resistance == pytest.approx(
        plain.worst.smallest_fault.battery_resistance, rel=1e-12
    )


def test_the_tolerance_model_takes_the_same_ends(coach):
    """The vectorised model at the rules' own case equals the scalar worst cases for both ratings."""
    d = _with_ratings(coach, short_circuit_current=5000.0, cranking_current=600.0, cranking_standard="EN 50342-1")
    a = analyse(d, switching=False, heating=False)
    ps = parameters(d)
    _emf, rb = model(d).battery_low(_case(ps, SMALLEST))
    assert rb[0] == pytest.approx(a.worst.smallest_fault.battery_resistance, rel=1e-9)
    got = evaluate(d, _case(ps, LARGEST))
    for f, i in a.worst.largest_fault.at_fuse.items():
        assert got[("fuse.breaking_capacity", f)].value[0] == pytest.approx(i, rel=1e-9), f
    assert np.all(np.isfinite(rb))
