"""The return path: what happens when one return (a stage's ground cable, the shared return, a housing
bonding strap, a chassis path) is lost — a loose or corroded ground stud, a broken strap.

The network is solved again with that return open, through the public Circuit API (its resistance
overridden to OPEN_RESISTANCE, so that a node it alone held, such as the chassis, stays defined; the same
temperatures and sources), and compared with the intact network: which
elements now carry more current (where the current goes: through the chassis, a bonding strap, the
housing, another stage's return), which stages lose their current (their braking drops out), and the
voltage the lost return leaves across its gap (the ground offset a fitter measures). Kirchhoff's laws
on the intact and the broken network; no new physics.
"""

from __future__ import annotations

from dataclasses import dataclass

from coilstage.analysis.circuit import Circuit, Solution, SourceState
from coilstage.drawing.schema import Cable, Drawing, Element, Stage


def returns(d: Drawing) -> list[Element]:
    """The return elements of the harness: ground cables and straps, cables whose role is return, and
    measured ground paths (kind "ground" with a resistance)."""
    return [e for e in d.elements if e.kind == "ground" or (isinstance(e, Cable) and e.role == "return")]


#: The resistance an open return is given [Ω]: far above any harness path, so it carries nothing.
OPEN_RESISTANCE = 1e9
#: A path "takes" the lost return's current where its own rises by more than this share of it (smaller
#: changes are the shared feed's drop redistributing).
SHARE = 0.01


@dataclass(frozen=True)
class Reroute:
    """One element whose current changed when the return was lost: before and after [A]."""

    element: str
    kind: str
    before: float
    after: float


@dataclass(frozen=True)
class LostReturn:
    """The network with one return lost: the elements whose current rose (largest rise first), the
    stages whose current fell (with before and after), and the voltage across the open return [V]."""

    lost: str
    carried: float  # what the lost return carried before [A]
    rerouted: tuple[Reroute, ...]
    stages: tuple[Reroute, ...]
    gap_voltage: float
    solution: Solution


def lose_return(
    d: Drawing, element_id: str, temperatures: dict[str, float], sources: SourceState, intact: Solution | None = None
) -> LostReturn:
    """Solve the drawing with ``element_id`` open and compare with the intact network (``intact``, or
    solved here), at ``temperatures`` [°C] and ``sources``."""
    full = Circuit(d)
    before = intact or full.solve(temperatures, sources)
    gone = next(e for e in d.elements if e.id == element_id)
    after = full.solve(temperatures, sources, overrides={element_id: OPEN_RESISTANCE})
    carried = abs(before.current[element_id])
    rer, stg = [], []
    for e in d.elements:
        if e.id == element_id:
            continue
        b, a = abs(before.current[e.id]), abs(after.current[e.id])
        if isinstance(e, Stage):
            if a < b - 1e-6 * max(b, 1.0):
                stg.append(Reroute(e.id, e.kind, b, a))
        elif a - b > SHARE * carried and a > 1e-3:
            rer.append(Reroute(e.id, e.kind, b, a))
    rer.sort(key=lambda r: r.after - r.before, reverse=True)
    return LostReturn(
        element_id,
        carried,
        tuple(rer),
        tuple(stg),
        abs(after.v[gone.a] - after.v[gone.b]),
        after,
    )
