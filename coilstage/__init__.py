"""coilstage: check the DC supply of an eddy-current retarder's coil stages before power-up.

The small public API::

    from coilstage import load_drawing, check
    drawing = load_drawing("configs/coach-24v-4stage.toml")
    analysis, verdicts = check(drawing)
"""

from __future__ import annotations

import os
from collections.abc import Iterable
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from pathlib import Path

    from coilstage.analysis.run import Analysis
    from coilstage.checks.base import Verdict
    from coilstage.drawing.schema import Drawing

# One BLAS thread unless the user says otherwise: the matrices here are small (hundreds of unknowns) and
# a thread pool costs more than it gives; measured with benchmarks/bench_growth.py, a 64-stage check
# took 17 s with the default threads against 1.0 s with one on a 2-core machine. Effective where
# coilstage is imported before numpy (the command line always is); a value already set is kept.
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")
del _var

__version__ = "0.1.0"

__all__ = ["__version__", "check", "load_drawing"]


def load_drawing(path: str | Path, parts_dirs: Iterable[str | Path] = ()) -> Drawing:
    """Read a drawing file (with parts libraries ``parts_dirs`` beside those it names itself); see
    :func:`coilstage.drawing.load.load_drawing`."""
    from coilstage.drawing.load import load_drawing as _load

    return _load(path, parts_dirs=tuple(parts_dirs))


def check(drawing: Drawing) -> tuple[Analysis, list[Verdict]]:
    """Analyse a drawing and run every rule: returns ``(analysis, verdicts)``."""
    from coilstage.analysis.run import analyse
    from coilstage.checks import run_checks

    a = analyse(drawing)
    return a, run_checks(a)
