"""The cautions quote each hazard's figure at its worst case, never a milder one: the battery short at
the larger of the cold corner's and the largest fault's (the lowest battery resistance), the windings
at the hottest of the hot corner and the duty simulations, the stored energy at the largest break
(coils at -5 % resistance and +20 % inductance). Reference: the figures read off the analysis here,
each its own maximum (the physics behind them is tested in test_worst, test_heating and
test_switching_worst)."""

from __future__ import annotations

from coilstage import check
from coilstage.analysis.conditions import LARGEST
from coilstage.drawing.load import parse_drawing
from coilstage.report.document import cautions

from .conftest import COACH


def test_cautions_quote_the_worst_figures():
    a, _ = check(parse_drawing(COACH.read_text(), str(COACH)))
    text = {c["hazard"]: c["text"] for c in cautions(a)}
    short = max(a.battery_short_circuit, a.worst.largest_fault.battery)
    assert f"about {short / 1000:.1f} kA" in text["battery short-circuit energy"]
    hot = max(
        [s.temperature for s in a.corners["hot"].stages]
        + [float(r.stage_temperature.max()) for r in (a.descent, a.continuous) if r is not None]
    )
    assert f"up to {hot:.0f} °C" in text["hot coils"]
    energy = max(x.stored_energy for per in a.switching.stages.values() for x in per.values())
    assert energy == max(x.stored_energy for x in a.switching.stages[LARGEST].values())
    assert f"stores up to {energy:.0f} J" in text["arcing contacts"] and "largest break" in text["arcing contacts"]
