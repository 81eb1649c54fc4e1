"""The plot writers: SVG text kept as text, coinciding curves named, the limits the rules use drawn,
the battery's state of charge over the descent, and a waveform request too large refused up front."""

from __future__ import annotations

import re

import numpy as np
import pytest

from coilstage import check, load_drawing
from coilstage.analysis.run import analyse
from coilstage.errors import AnalysisError
from coilstage.report import descent, field_plot, svgplot, waveforms

from .conftest import COACH, FLAWED


def _texts(svg: str) -> list[str]:
    return [re.sub(r"<[^>]+>", "", t) for t in re.findall(r"<text\b.*?</text>", svg, re.S)]


def test_coinciding_groups():
    a = np.array([0.0, 1.0, 2.0])
    g = svgplot.coinciding({"S1": [a], "S2": [a + 1], "S3": [a.copy()], "S4": [a * (1 + 1e-12)]})
    assert g == [["S1", "S3", "S4"], ["S2"]]
    assert svgplot.coincide_note(g) == "S1, S3 and S4 coincide"


def test_waveform_plot_text_names_coinciding_stages_and_bus_limit():
    d = load_drawing(FLAWED)
    a = analyse(d, heating=False)
    fig = waveforms.figure(waveforms.series(a, 0.01), d.title)
    svg = svgplot.svg_text(fig, "t")
    svgplot.pyplot().close(fig)
    texts = " ".join(_texts(svg))
    assert "<path" in svg and len(_texts(svg)) > 20  # text as <text>, not outlines (svg.fonttype none)
    # in the flawed demo S1, S3 and S4 are the same circuit: drawn once and said so
    assert "S1 = S3 = S4" in texts and "S1, S3 and S4 coincide" in texts
    assert f"lowest operating bus {d.supply.v_min:g} V" in texts
    assert "http" not in svg and "<?xml" not in svg


def test_descent_plot_limits_and_state_of_charge():
    d = load_drawing(COACH)
    a, _ = check(d)
    r = a.descent
    soc = descent.state_of_charge(r, d)
    # the plot shows the simulated state of charge (Peukert-weighted); a plain charge balance by hand
    # (start 90 % less the charge drawn over the 225 A·h capacity) is its upper bound: at currents
    # above the 20 h rate a battery delivers less than its rating (Peukert, k > 1)
    assert soc[0] == pytest.approx(d.duty.start_soc)
    assert soc[-1] == pytest.approx(r.state_of_charge[-1])
    assert soc[-1] < 0.90 - r.charge_drawn[-1] / (225 * 3600)
    fig = descent.figure(r, d, d.title)
    texts = " ".join(_texts(svgplot.svg_text(fig, "d")))
    svgplot.pyplot().close(fig)
    assert "winding limit 165 °C" in texts  # class H (180) less 15 K
    assert "cable class" in texts and "lowest operating bus 16 V" in texts
    assert "battery state of charge [%]" in texts and "floor 50 %" in texts


def test_field_plot_names_the_stages_at_one_point():
    d = load_drawing(COACH)
    a = analyse(d, switching=False)
    fig = field_plot.figure(a, d.title)
    texts = " ".join(_texts(svgplot.svg_text(fig, "f")))
    svgplot.pyplot().close(fig)
    assert "S1–S4" in texts and "coincide" in texts
    assert "A-turns" in texts


def test_long_title_wrapped_not_cut():
    long = "A " * 80 + "END"
    assert max(len(x) for x in svgplot.wrap(long, 50).splitlines()) <= 50
    assert svgplot.wrap(long, 50).replace("\n", " ").split() == long.split()


def test_waveform_request_too_large_refused_before_allocating():
    d = load_drawing(COACH)
    a = analyse(d, heating=False)
    n = waveforms.sample_count(a, 1e-6)
    span = sum(sc.t_end for sc in a.switching.scenarios.values())
    # rel 1e-9: a count of sample times, span/step in floating point: round-off only
    assert n == pytest.approx(span / 1e-6 + len(a.switching.scenarios), rel=1e-9)
    with pytest.raises(AnalysisError, match="limit of 2,000,000") as exc:
        waveforms.series(a, 1e-6)
    assert "choose a step of at least" in exc.value.reason
    assert waveforms.sample_count(a, 1e-3) < waveforms.MAX_SAMPLES  # the default step is well inside
