"""The tolerances and operating ranges a drawing is analysed with: the shipped defaults
(``coilstage/data/tolerance_defaults.toml``, every row with its source and status) with what the
drawing states laid over them (``Drawing.tolerances``: its ``[tolerances]`` table, the per-element
keys and the battery's stated Peukert exponent).

A row is a dict: ``key``, ``quantity``, ``nominal``, ``low``, ``high``, ``unit``, ``distribution``,
``source`` and ``status`` (the shape of the table's rows). A row the drawing states has
``source = "drawing: <key path>"`` and ``status = "stated in the drawing"``; its nominal is the shipped
nominal held within the drawing's ends.

Keys: the table's own (``coils.*.resistance_tolerance``, ``tolerances.cable_length``, ...) and
per-element keys (``coils.<coil type>.resistance_tolerance``, ``coils.<coil type>.inductance_tolerance``,
``cables.<cable id>.length_tolerance``). :func:`lookup` returns the per-element row where the drawing
gives one, else the generic row.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from coilstage import tables
from coilstage.drawing.schema import Drawing, Stage, ToleranceSpec, evolve

#: The table file the defaults come from.
TABLE = "tolerance_defaults.toml"

#: generic key -> (prefix, suffix) of its per-element form ``prefix + element id + suffix``
PER_ELEMENT: dict[str, tuple[str, str]] = {
    "coils.*.resistance_tolerance": ("coils.", ".resistance_tolerance"),
    "coils.*.inductance_tolerance": ("coils.", ".inductance_tolerance"),
    "tolerances.cable_length": ("cables.", ".length_tolerance"),
}

#: Keys with no shipped row: without the drawing's range the analysis derives the range itself
#: (the battery's from its stated internal resistance and the ``supply.battery.*_factor`` rows).
DRAWING_ONLY: dict[str, dict[str, Any]] = {
    "supply.battery.internal_resistance": {
        "quantity": "battery internal resistance in service: lowest (new, full, warm) to highest (cold, "
        "discharged, aged)",
        "unit": "ohm",
    },
}

#: battery chemistry -> the row of its Peukert exponent (flooded: the generic row)
PEUKERT_ROWS = {
    "agm": "supply.battery.peukert_exponent_agm",
    "gel": "supply.battery.peukert_exponent_gel",
}
PEUKERT = "supply.battery.peukert_exponent"

DRAWING_STATUS = "stated in the drawing"


def shipped() -> dict[str, dict[str, Any]]:
    """The shipped tolerance defaults by key (fresh copies: a caller may change them)."""
    return {r["key"]: dict(r) for r in tables.shipped(TABLE)["table"]["rows"]}


def generic_key(key: str) -> str:
    """The table key a per-element key stands for (``cables.W3.length_tolerance`` ->
    ``tolerances.cable_length``); any other key is returned as it is.

    >>> generic_key("coils.RC4.resistance_tolerance")
    'coils.*.resistance_tolerance'
    >>> generic_key("supply.battery.state_of_charge")
    'supply.battery.state_of_charge'
    """
    for generic, (prefix, suffix) in PER_ELEMENT.items():
        if key.startswith(prefix) and key.endswith(suffix) and len(key) > len(prefix) + len(suffix):
            return generic
    return key


def element_key(key: str, element_id: str) -> str:
    """The per-element form of a generic key (``element_key("tolerances.cable_length", "W3") ==
    "cables.W3.length_tolerance"``); a key with no per-element form is returned as it is."""
    generic = generic_key(key)
    if generic not in PER_ELEMENT:
        return key
    prefix, suffix = PER_ELEMENT[generic]
    return f"{prefix}{element_id}{suffix}"


def _drawing_row(base: dict[str, Any], key: str, spec: ToleranceSpec) -> dict[str, Any]:
    lo, hi = float(spec.low), float(spec.high)
    nominal = base.get("nominal")
    nominal = (lo + hi) / 2 if nominal is None else min(max(float(nominal), lo), hi)
    return {
        **base,
        "key": key,
        "nominal": nominal,
        "low": lo,
        "high": hi,
        "distribution": spec.distribution,
        "source": f"drawing: {spec.where or key}",
        "status": DRAWING_STATUS,
    }


def effective(d: Drawing) -> dict[str, dict[str, Any]]:
    """Every tolerance row the analysis of ``d`` takes, by key: the shipped rows, the Peukert row of
    the battery's chemistry, and each row the drawing states (``d.tolerances``) over them.

    A per-element row keeps the generic row's quantity and unit under its own key; the generic row
    stays for the elements the drawing gives nothing for.
    """
    rows = shipped()
    chem = PEUKERT_ROWS.get(d.supply.battery.chemistry)
    if chem is not None and chem in rows:
        rows[PEUKERT] = {**rows[chem], "key": PEUKERT}
    for key, spec in d.tolerances.items():
        base = rows.get(key) or rows.get(generic_key(key))
        if base is None:
            extra = DRAWING_ONLY.get(key)
            if extra is None:
                raise KeyError(f"no tolerance row for {key!r}")
            base = {"quantity": extra["quantity"], "unit": extra["unit"], "nominal": None}
        rows[key] = _drawing_row(base, key, spec)
    return rows


def lookup(tol: dict[str, dict[str, Any]], key: str, element_id: str | None = None) -> dict[str, Any]:
    """The row of ``key`` for one element: the per-element row where ``tol`` has one (``element_id``
    a coil type's name or a cable's id), else the generic row. ``key`` may be the generic key or
    the per-element one. Raises KeyError when neither exists.

    >>> tol = {"tolerances.cable_length": {"high": 0.1}, "cables.W3.length_tolerance": {"high": 0.05}}
    >>> lookup(tol, "tolerances.cable_length", "W3")["high"], lookup(tol, "tolerances.cable_length", "W1")["high"]
    (0.05, 0.1)
    """
    if element_id is not None:
        own = element_key(key, element_id)
        if own in tol:
            return tol[own]
    if key in tol:
        return tol[key]
    return tol[generic_key(key)]


def rated_resistance_low(d: Drawing) -> float | None:
    """The battery's internal resistance implied by its stated short-circuit current [Ω], the low end
    of its range (a new, full, warm battery), or None where the drawing states none:
    :func:`coilstage.physics.battery.resistance_from_short_circuit_current` at the open-circuit voltage
    of a full battery (:func:`coilstage.physics.battery.open_circuit_voltage` at 100 %). Two blocks in
    series have twice the voltage and twice the resistance, so one rating serves a pair.

    The largest fault takes the lower of this and the stated resistance × the shipped low-end factor
    (the larger fault current)."""
    b = d.supply.battery
    if b.short_circuit_current is None:
        return None
    from coilstage.physics.battery import open_circuit_voltage, resistance_from_short_circuit_current

    return resistance_from_short_circuit_current(
        float(open_circuit_voltage(1.0, cells=cells(d))), b.short_circuit_current
    )


def rated_resistance_reference(d: Drawing, temperature_coefficient: float) -> float | None:
    """The reference (25 °C, full charge) resistance of a battery its stated cold-cranking current
    allows [Ω], or None where the drawing states none: the bound of
    :func:`coilstage.physics.battery.resistance_bound_from_cranking_current` (−18 °C, full, under the
    drawing's ``cranking_standard``) referred to 25 °C with the resistance's temperature law
    R(T) = R25 exp(b (25 − T)) of :func:`coilstage.physics.battery.internal_resistance`.

    The raised end (cold, discharged, aged) is computed from the larger of this and the stated
    resistance: a battery of that rating may be as weak as its rating allows."""
    b = d.supply.battery
    if b.cranking_current is None:
        return None
    import math

    from coilstage.physics.battery import (
        CELLS_PER_12V_BLOCK,
        open_circuit_voltage,
        resistance_bound_from_cranking_current,
    )

    blocks = max(1, cells(d) // CELLS_PER_12V_BLOCK)
    u0 = float(open_circuit_voltage(1.0, cells=CELLS_PER_12V_BLOCK))
    bound = resistance_bound_from_cranking_current(b.cranking_current, b.cranking_standard, u0=u0, blocks=blocks)
    return bound / math.exp(temperature_coefficient * (25.0 - (-18.0)))


@dataclass(frozen=True)
class BatteryResistance:
    """What bounds a drawing's battery resistance at the two ends the worst cases take [Ω]: the
    drawing's own range where it states one (``supply.battery.internal_resistance`` among its
    tolerances: ``stated_low``, ``stated_high``), else the stated resistance with its ratings:
    ``rated_low`` from the short-circuit current (:func:`rated_resistance_low`) and ``reference``, the
    weakest battery at 25 °C and full charge that its cold-cranking current allows (the larger of the
    stated resistance and :func:`rated_resistance_reference`). The one reading of these for
    :mod:`coilstage.analysis.worst` and :mod:`coilstage.analysis.params`."""

    stated: float
    reference: float
    rated_low: float | None = None
    stated_low: float | None = None
    stated_high: float | None = None

    def lowest(self, factor: Any) -> Any:
        """The low end (the largest fault) for the shipped factor ``factor`` on the stated resistance
        (a float, or an array of samples): the drawing's low end where it states a range, else the
        lower of stated × factor and the rated short-circuit bound."""
        import numpy as np

        if self.stated_low is not None:
            return np.full(np.shape(factor), self.stated_low) if np.ndim(factor) else self.stated_low
        rb = self.stated * factor
        return rb if self.rated_low is None else np.minimum(rb, self.rated_low)


def battery_resistance(d: Drawing, tol: dict[str, dict[str, Any]], temperature_coefficient: float) -> BatteryResistance:
    """The bounds of :class:`BatteryResistance` for ``d`` with its tolerance rows ``tol`` and the
    resistance's temperature coefficient [1/K] (the cranking bound is referred to 25 °C with it)."""
    rb = d.supply.battery.internal_resistance
    row = tol.get("supply.battery.internal_resistance")  # only where the drawing states the range
    if row:
        return BatteryResistance(rb, rb, None, float(row["low"]), float(row["high"]))
    cc = rated_resistance_reference(d, temperature_coefficient)
    return BatteryResistance(rb, max(rb, cc) if cc is not None else rb, rated_resistance_low(d))


def cells(d: Drawing) -> int:
    """Lead-acid cells of the drawing's battery: 6 on a 12 V system, 12 on 24 V (two blocks)."""
    return 12 if d.supply.system_voltage == 24 else 6


def coil_tolerances(
    d: Drawing, tol: dict[str, dict], end: str, key: str = "coils.*.resistance_tolerance"
) -> dict[str, float]:
    """Stage id -> the ``end`` ("low" or "high") of its coil type's tolerance ``key`` (the resistance's,
    or ``coils.*.inductance_tolerance``): the drawing's own row for that coil type where it states one,
    else the generic row [fraction]."""
    return {s.id: float(lookup(tol, key, s.coil.name)[end]) for s in d.stages}


def with_coil_tolerance(d: Drawing, r_tol: dict[str, float], l_tol: dict[str, float] | None = None) -> Drawing:
    """The drawing with each stage's coil resistance at ``(1 + r_tol[stage id])`` × its stated one, and
    its inductance at ``(1 + l_tol[stage id])`` × its stated one where ``l_tol`` is given."""
    l_tol = l_tol or {}
    out = []
    for e in d.elements:
        if isinstance(e, Stage) and (r_tol.get(e.id, 0.0) or l_tol.get(e.id, 0.0)):
            coil = evolve(
                e.coil,
                r_ref=e.coil.r_ref * (1 + r_tol.get(e.id, 0.0)),
                inductance=e.coil.inductance * (1 + l_tol.get(e.id, 0.0)),
            )
            e = evolve(e, coil=coil)
        out.append(e)
    return evolve(d, elements=tuple(out))


def tolerance_words(r: dict[str, float]) -> str:
    """Stage id -> tolerance fraction in words: one signed percentage where every stage takes the same
    ("-5 %"), else each stage's ("S1 -5 %, S2 -3 %")."""
    vals = sorted(set(r.values()))
    if len(vals) <= 1:
        return f"{(vals[0] if vals else 0.0):+.0%}"
    return ", ".join(f"{k} {v:+.0%}" for k, v in r.items())
