"""Bounded work on any input: the integrator stops on a non-finite state and on its step budget with an
AnalysisError that names the limit (never a hang, never NaN passed on)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from coilstage.errors import AnalysisError
from coilstage.physics.numeric import integrate_dopri


def test_blow_up_stops_with_analysis_error():
    # y' = y², y(0) = 1 has the solution 1/(1 − t), infinite at t = 1 (elementary separation of
    # variables): integrating to t = 2 must stop, not return inf or NaN.
    with pytest.raises(AnalysisError) as err:
        integrate_dopri(lambda t, y: y * y, 0.0, 2.0, [1.0], rtol=1e-8, atol=1e-10, source="test blow-up")
    assert err.value.source == "test blow-up"
    assert "t = " in err.value.reason


def test_blow_up_is_followed_closely_before_it_stops():
    # up to t = 0.9 the same problem is finite: 1/(1 − 0.9) = 10 (closed form)
    _ts, ys = integrate_dopri(lambda t, y: y * y, 0.0, 0.9, [1.0], rtol=1e-10, atol=1e-12)
    assert ys[-1][0] == pytest.approx(10.0, rel=1e-7)


def test_a_nan_rate_stops_at_once():
    with pytest.raises(AnalysisError, match="non-finite"):
        integrate_dopri(lambda t, y: np.array([math.nan]), 0.0, 1.0, [0.0])


def test_step_budget_names_the_limit():
    # y' = −1000 (y − cos t) needs thousands of steps over 100 s with an explicit method
    with pytest.raises(AnalysisError, match="step budget of 50 steps"):
        integrate_dopri(lambda t, y: -1000.0 * (y - math.cos(t)), 0.0, 100.0, [0.0], max_steps=50)
