"""What each operating case of a drawing is: the element temperatures and source states of the cold,
hot and limit corners and of the fault solve — the one place that defines them.

* cold: coils and cables at the lowest ambient; the bus held at the highest regulated voltage; the
  alternator at its full rated-speed output (largest current: cable, fuse and relay duty).
* hot: coils at their hot temperature (the computed thermal steady state of continuous full
  retardation where the coil has a thermal model), cables at their zone temperature; the battery at
  the stated EMF behind its internal resistance; the alternator at its idle (or stated) output limit
  (what braking remains).
* limit: as cold, with the bus held at the highest voltage of the supply code (voltage ratings).
* fault: as cold, but a charged battery at the cold bus voltage behind its internal resistance, plus
  the alternator delivering its rated-speed limit as a fixed current (no source can hold the bus in a
  fault; a regulating alternator would deliver no more than that, so this is conservative).
"""

from __future__ import annotations

import weakref
from dataclasses import dataclass

import numpy as np

from coilstage.analysis.circuit import SourceState
from coilstage.analysis.quasistatic import QuasiStatic, stage_thermal_resistance
from coilstage.drawing.schema import Cable, Drawing, Stage
from coilstage.errors import AnalysisError
from coilstage.physics.thermal import winding_steady_temperature

#: The name of the largest continuous current's case (coils cold at the low end of their resistance
#: tolerance, the bus at the regulator's highest end: analysis.worst), under which the field and the
#: switching keep their figures beside the corners'
LARGEST = "largest current"
#: The name of the state that loads the bus least: the coils hot at the high end of their resistance
#: tolerance, in the braking-retained state of analysis.worst (the least stage current, so a load
#: dump's generator is loaded least and its peak is highest)
LIGHTEST = "lightest load"

#: The corners, in the order the report lists them, and what each is for.
CORNER_PURPOSE: dict[str, str] = {
    "cold": "cable, fuse and relay duty (largest current)",
    "hot": "braking current that remains (hot coils, sagging bus)",
    "limit": "voltage ratings of fuses, relays and suppressors (not thermal duty)",
}


@dataclass(frozen=True)
class Conditions:
    """One operating case: element temperatures [°C] (cables and stages), source states, and the
    words the report shows for it."""

    name: str
    temperatures: dict[str, float]
    sources: SourceState
    purpose: str = ""
    description: tuple[tuple[str, str], ...] = ()


def cold_temperatures(d: Drawing) -> dict[str, float]:
    """Cables and stages at the lowest ambient [°C]."""
    t = d.corners.cold_ambient
    return {e.id: t for e in d.elements if isinstance(e, (Cable, Stage))}


def hot_alternator_limit(d: Drawing) -> float | None:
    """The alternator's output limit in the hot corner [A] (idle, rated, or None for off or absent)."""
    alt = d.supply.alternator
    if alt is None:
        return None
    return {"idle": alt.limit_idle, "rated": alt.limit_rated, "off": None}[d.corners.hot_alternator]


_STEADY_CACHE: dict[int, tuple[weakref.ref, dict[str, float]]] = {}


def hot_winding_temperatures(d: Drawing) -> dict[str, float]:
    """Stage id -> winding temperature for the hot corner [°C]: the thermal steady state of continuous
    full retardation in the hot corner's conditions (all stages on, battery at its stated EMF,
    alternator at its hot-corner output, cables at their zone temperatures), coupled through the
    network, for every coil with a thermal model; the stated or default temperature otherwise.

    Each pass solves the network at the present winding temperatures and moves every winding to the
    steady state of :func:`coilstage.physics.thermal.winding_steady_temperature` at its present
    terminal voltage (a fixed-point iteration; it converges because a hotter winding draws less)."""
    key = id(d)
    hit = _STEADY_CACHE.get(key)
    if hit is not None and hit[0]() is d:
        return hit[1]
    out = {s.id: s.coil.hot_temperature for s in d.stages}
    modelled = [s for s in d.stages if s.coil.has_thermal_model]
    if modelled:
        alt = d.supply.alternator
        limit = hot_alternator_limit(d)
        net = QuasiStatic(d, d.corners.hot_battery_emf, alt.setpoint if alt else None)
        t_cab = np.array([c.zone_temperature for c in net.cables])
        # a neighbour without a thermal model stands at the hot temperature the hot corner then runs it at,
        # so the heat balance of the modelled windings closes in the same state
        t_st = np.array(
            [s.coil.zone_temperature if s.coil.has_thermal_model else s.coil.hot_temperature for s in net.stages]
        )
        on = np.ones(len(net.stages), dtype=bool)
        mask = np.array([s.coil.has_thermal_model for s in net.stages])
        rth = np.where(mask, np.nan_to_num([stage_thermal_resistance(s, True) for s in net.stages]), 1.0)
        ta = np.array([s.coil.zone_temperature for s in net.stages])
        for _ in range(200):
            _ic, i_s, *_ = net.solve(t_cab, t_st, on, limit)
            _rc, r_s = net.resistances(t_cab, t_st)
            v = i_s * r_s  # each stage's terminal voltage at the present temperatures
            new = np.where(mask, winding_steady_temperature(v, net.stage_r20, 20.0, net.stage_alpha, rth, ta), t_st)
            if np.max(np.abs(new - t_st)) < 1e-9:
                t_st = new
                break
            t_st = new
        else:
            raise AnalysisError(
                "hot winding temperatures", "the steady state did not settle within 200 passes (to 1e-9 K)"
            )
        if not np.all(np.isfinite(t_st)):
            raise AnalysisError("hot winding temperatures", "a winding's steady temperature is not finite")
        for s, t in zip(net.stages, t_st, strict=True):
            if s.coil.has_thermal_model:
                out[s.id] = float(t)
    _STEADY_CACHE[key] = (weakref.ref(d), out)
    return out


def hot_temperatures(d: Drawing) -> dict[str, float]:
    """Cables at their zone temperature; windings at their computed thermal steady state under
    continuous full retardation where their coil has a thermal model, else at the stated (or default)
    hot temperature [°C]."""
    temps: dict[str, float] = {e.id: e.zone_temperature for e in d.of_kind(Cable)}
    temps.update(hot_winding_temperatures(d))
    return temps


def corner_sources(d: Drawing) -> dict[str, tuple[dict[str, float], SourceState]]:
    """Element temperatures and source states of each corner, and of the fault solve (``"fault"``);
    see the module docstring for what each is."""
    c = d.corners
    alt = d.supply.alternator
    rated = alt.limit_rated if alt else None
    cold_t = cold_temperatures(d)
    return {
        "cold": (cold_t, SourceState(c.cold_bus, c.cold_bus if alt else None, rated, hold_bus=c.cold_bus)),
        "hot": (
            hot_temperatures(d),
            SourceState(c.hot_battery_emf, alt.setpoint if alt else None, hot_alternator_limit(d)),
        ),
        "limit": (cold_t, SourceState(c.limit_bus, c.limit_bus if alt else None, rated, hold_bus=c.limit_bus)),
        "fault": (cold_t, SourceState(c.cold_bus, c.cold_bus if alt else None, rated, alt_fixed=True)),
    }


def conditions(d: Drawing) -> dict[str, Conditions]:
    """Every operating case of a drawing (cold, hot, limit, fault) with the words the report shows."""
    c = d.corners
    alt = d.supply.alternator
    src = corner_sources(d)
    alt_text = (
        "absent: the battery holds the bus"
        if alt is None
        else f"full rated-speed output {alt.limit_rated:g} A at its terminal; the battery takes the difference"
    )
    hot_limit = src["hot"][1].alt_limit
    words = {
        "cold": (
            ("coils and cables", f"{c.cold_ambient:g} °C (lowest ambient)"),
            ("bus", f"held at {c.cold_bus:.2f} V at the battery terminals (highest regulated voltage)"),
            ("alternator", alt_text),
        ),
        "hot": (
            (
                "coils",
                ", ".join(
                    f"{e.id} {src['hot'][0][e.id]:.0f} °C"
                    + (
                        " (steady state, computed)"
                        if e.coil.has_thermal_model
                        else f" ({e.coil.hot_temperature_source})"
                    )
                    for e in d.stages
                ),
            ),
            ("cables", "at their zone temperatures"),
            ("battery", f"EMF {c.hot_battery_emf:.2f} V"),
            (
                "alternator",
                "off"
                if hot_limit is None
                else f"set-point {alt.setpoint:.2f} V, {c.hot_alternator} output {hot_limit:g} A",
            ),
        ),
        "limit": (
            ("bus", f"held at {c.limit_bus:.2f} V ({d.supply.limits_source or 'drawing'} maximum)"),
            ("coils and cables", f"{c.cold_ambient:g} °C"),
        ),
        "fault": (),
    }
    return {
        name: Conditions(name, temps, s, CORNER_PURPOSE.get(name, "prospective fault currents"), words[name])
        for name, (temps, s) in src.items()
    }


def zone_at_ambient(stated: float, ambient: float, ambient_max: float) -> float:
    """A zone's temperature when the outside air is at ``ambient`` [°C]: its stated temperature (the
    hottest, at the highest ambient) less the ambient's shortfall from its highest. A zone keeps the
    rise the vehicle's own heat gives it over the outside air, so it follows the ambient one for one
    (common practice for enclosure and under-bonnet temperatures; no source)."""
    return stated - (ambient_max - ambient)
