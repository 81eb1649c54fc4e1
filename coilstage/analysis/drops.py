"""Each stage's figures in the network at the largest continuous current (analysis.worst's solution):
its terminal voltage, its drop from the battery terminals and that drop as a share of the nominal
system voltage, for the voltage-drop rule to decide at that case. Made once with the analysis."""

from __future__ import annotations

from dataclasses import dataclass

from coilstage.analysis.circuit import Solution
from coilstage.analysis.corners import StageResult, stage_results
from coilstage.drawing.schema import Drawing


@dataclass(frozen=True)
class StageDrops:
    """Stage id -> its figures at the largest continuous current; empty where that case has no
    network solution."""

    stages: dict[str, StageResult]
    model: str = (
        "analysis.corners.stage_results on analysis.worst's largest-current solution (a DC solve, "
        "windings at the cold corner's temperatures)"
    )


def largest_current_stages(d: Drawing, sol: Solution | None, temps: dict[str, float]) -> StageDrops:
    """The stages' figures in ``sol`` (None: no solution, no figures) at winding temperatures
    ``temps`` [°C]."""
    return StageDrops({s.id: s for s in stage_results(d, sol, temps)} if sol is not None else {})
