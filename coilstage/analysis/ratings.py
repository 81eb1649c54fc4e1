"""What the cables, fuses and relays see against their ratings: each cable's ampacity (table and
heat balance), the conductor's heating at a fuse's conventional fusing current and in a far-end short,
the peak current a fuse carries when the stages switch, and a relay coil's hot pick-up voltage.
Each figure names the model that made it; the checks only compare.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

import numpy as np

from coilstage import tables
from coilstage.analysis.corners import CornerResult
from coilstage.analysis.materials import metal
from coilstage.analysis.switching import SwitchingResult
from coilstage.drawing.schema import Cable, Drawing, Fuse, Relay, evolve
from coilstage.physics.cable_heat import computed_ampacity as heat_balance_ampacity
from coilstage.physics.conductor import resistance_at_temperature
from coilstage.physics.fault import adiabatic_final_temperature
from coilstage.physics.thermal import cable_loss_coefficient, conductor_temperature
from coilstage.physics.transient import time_constant_from_t95
from coilstage.tables import FuseGates


def fuse_gates(f: Fuse) -> FuseGates | None:
    """A fuse's time-current gates (the drawing's or the shipped ones for its type), or None."""
    return FuseGates(f.gates, f.gates_source) if f.gates else None


# ---------------------------------------------------------------- cables


def computed_ampacity(cable: Cable) -> float | None:
    """Current that holds the conductor at its class temperature in still air in its zone, by the
    heat balance (:func:`coilstage.physics.cable_heat.computed_ampacity`), times the bundle factor [A];
    None without diameters."""
    if cable.outer_diameter is None or cable.conductor_diameter is None or cable.zone_temperature >= cable.class_max:
        return None
    k_ins, _name = tables.cable_insulation(cable.insulation_class)
    i = heat_balance_ampacity(
        cable.class_max,
        cable.r20_per_m,
        cable.alpha20,
        cable.conductor_diameter,
        cable.outer_diameter,
        k_ins,
        tables.cable_emissivity(),
        cable.zone_temperature,
    )
    return i * tables.bundle_factor(cable.bundle)


@dataclass(frozen=True)
class CableRating:
    """A cable's ampacity in its zone and bundle: the governing value (or why there is none), the
    table's alone, and the still-air heat balance's [A]."""

    id: str
    ampacity: tables.Ampacity | str
    table: tables.Ampacity | str
    heat_balance: float | None


@functools.lru_cache(maxsize=8192)
def cable_rating(cable: Cable) -> CableRating:
    """The table's ampacity (33 CFR 183.425), and where the cable's diameters are known the lower of
    that and the still-air heat balance's (a second opinion, with the same bundle factor).

    Cached on the cable (a frozen dataclass: every input is a field of it; the tables it reads are
    the shipped ones): the ambient grid of the tolerance model and sizing's candidates ask for the
    same cables at the same zone temperatures many times."""
    comp = computed_ampacity(cable)
    if cable.material != "copper":
        why = f"the ampacity table is for copper; this cable is {cable.material}"
        return CableRating(cable.id, why, why, comp)
    amp = tables.ampacity(cable.awg, cable.area, cable.class_max, cable.zone_temperature, cable.bundle)
    if isinstance(amp, str):
        return CableRating(cable.id, amp, amp, comp)
    gov: tables.Ampacity = amp
    if comp is not None and comp < amp.value:
        gov = tables.Ampacity(
            comp,
            amp.base,
            amp.column,
            amp.ambient_factor,
            amp.bundle_factor,
            amp.method + f"; the heat balance gives less, {comp:.0f} A, and governs",
        )
    return CableRating(cable.id, gov, amp, comp)


# ---------------------------------------------------------------- a fuse and the cables it protects


@dataclass(frozen=True)
class Overload:
    """The conductor at the fuse's conventional fusing current for the longest time the gates allow
    (first-order heating implied by its ampacity, :func:`coilstage.physics.thermal.conductor_temperature`)."""

    fuse: str
    cable: str
    multiple: float  # conventional fusing current / rating
    current: float  # [A]
    time: float  # [s]
    temperature: float  # [°C]; inf: thermal runaway
    model: str = "physics.thermal.conductor_temperature (loss coefficient from the ampacity)"


@dataclass(frozen=True)
class FarEndShort:
    """A bolted short at the far end of a protected cable: current, clearing time from the gates and
    the conductor's adiabatic final temperature (:func:`coilstage.physics.fault.adiabatic_final_temperature`)."""

    fuse: str
    cable: str
    current: float  # [A]
    multiple: float  # of the rating
    clear_time: float  # [s]; inf: the fuse need not open within its gates
    i2t: float | None  # [A²s]
    theta_initial: float  # [°C]
    theta_final: float | None  # [°C]
    model: str = "physics.fault.adiabatic_final_temperature (IEC 60949)"


def overload(f: Fuse, c: Cable, rating: CableRating) -> Overload | str:
    """The overload heating of cable ``c`` behind fuse ``f``, or why it cannot be given."""
    g = fuse_gates(f)
    if g is None:
        return f"no time-current gates for type {f.fuse_type}"
    amp = rating.ampacity
    if isinstance(amp, str) or amp.value <= 0:
        return "the cable has no ampacity in its zone (see cable.ampacity)"
    conv = float(tables.fuse_gate_table()["conventional_fusing"])
    i = conv * f.rating
    t = g.t_max(conv)
    g_loss = cable_loss_coefficient(amp.value, c.r20_per_m, c.alpha20, float(amp.column), c.zone_temperature)
    qc = metal(c.material).qc
    theta = conductor_temperature(
        t, i, c.r20_per_m, c.alpha20, g_loss, qc * c.area, c.zone_temperature, c.zone_temperature
    )
    return Overload(f.id, c.id, conv, i, t, theta)


def far_end_short(f: Fuse, c: Cable, i_sc: float) -> FarEndShort | str:
    """The far-end short of cable ``c`` behind fuse ``f`` at prospective current ``i_sc`` [A]."""
    g = fuse_gates(f)
    if g is None:
        return f"no time-current gates for type {f.fuse_type}"
    m = i_sc / f.rating
    t = g.t_max(m)
    theta_i = c.class_max
    if math.isinf(t):
        return FarEndShort(f.id, c.id, i_sc, m, t, None, theta_i, None)
    mt = metal(c.material)
    theta_f = adiabatic_final_temperature(i_sc * i_sc * t, c.area, mt.k, mt.beta, theta_i)
    return FarEndShort(f.id, c.id, i_sc, m, t, i_sc * i_sc * t, theta_i, theta_f)


@dataclass(frozen=True)
class FuseSwitching:
    """What a fuse carries in the cold-corner switching scenarios: its peak current [A] (continuous
    duty included), sampled on the exact switching solution."""

    fuse: str
    peak_current: float
    model: str = "analysis.switching (exact piecewise RL solution), sampled"


def fuse_switching(fuses: list[Fuse], duty: dict[str, float], sw: SwitchingResult | None) -> dict[str, FuseSwitching]:
    """Each fuse's peak current (largest of its cold-corner duty and the cold switching scenarios);
    every fuse read out in one sampling of each scenario."""
    peak = {f.id: duty[f.id] for f in fuses}
    if sw is not None and fuses:
        keys = tuple(f"element:{f.id}" for f in fuses)
        for sc in sw.scenarios.values():
            if sc.corner != "cold":
                continue
            grid = np.linspace(0.0, sc.t_end, 1501)
            x = sc.sample(grid, [], keys)
            for f, key in zip(fuses, keys, strict=True):
                peak[f.id] = max(peak[f.id], float(np.nanmax(np.abs(x[key]))))
    return {f.id: FuseSwitching(f.id, peak[f.id]) for f in fuses}


def fuse_switching_scaled(
    sw: dict[str, FuseSwitching], duty: dict[str, float], largest: dict[str, float]
) -> dict[str, FuseSwitching]:
    """Each fuse's peak current scaled from the cold corner to the largest continuous current: the
    network is linear in the bus voltage and the coils' conductance at a fixed switching sequence, so
    the peak of the switch-on is taken to scale as its steady current does (``largest/duty``). A fuse
    without a nominal current keeps its figures."""
    out = {}
    for fid, x in sw.items():
        k = largest[fid] / duty[fid] if fid in largest and duty.get(fid, 0.0) > 1e-12 else 1.0
        out[fid] = FuseSwitching(
            fid,
            x.peak_current * k,
            x.model + f"; scaled × {k:.3f} to the largest continuous current",
        )
    return out


# ---------------------------------------------------------------- relays


@dataclass(frozen=True)
class RelayPickup:
    """A relay coil in the hot corner: its temperature [°C] and resistance [Ω] (copper, R(T) of
    :func:`coilstage.physics.conductor.resistance_at_temperature`), the voltage it needs to operate
    (same ampere-turns as at its reference temperature) and the voltage it gets from the hot bus [V]."""

    relay: str
    temperature: float
    resistance: float
    need: float
    have: float
    bus: float
    model: str = "physics.conductor.resistance_at_temperature (copper coil)"


def relay_pickup(r: Relay, hot: CornerResult) -> RelayPickup | None:
    c = r.coil
    if c is None:
        return None
    t = r.zone_temperature + c.rise
    r_hot = resistance_at_temperature(c.r_ref, c.t_ref, t, metal("copper").alpha20)
    need = c.operate_voltage * r_hot / c.r_ref
    have = hot.bus_voltage * r_hot / (r_hot + c.feed_resistance)
    return RelayPickup(r.id, t, r_hot, need, have, hot.bus_voltage)


def relay_rating(r: Relay, system: int) -> tuple[float | None, str]:
    """The contact rating that applies on this system [A], with a note; None when there is none (a 12 V
    rating does not hold on a 24 V bus; a 24 V rating is used on a 12 V bus, conservatively)."""
    if system == 24:
        if r.rating_24v is not None:
            return r.rating_24v, "24 V rating"
        return None, "only a 12 V rating is given; a 12 V contact rating does not hold on a 24 V bus"
    if r.rating_12v is not None:
        return r.rating_12v, "12 V rating"
    return r.rating_24v, "only a 24 V rating is given; used on the 12 V bus (conservative)"


def relay_temperature_factor(r: Relay) -> tuple[float | None, str]:
    """Fraction of the rating that holds in the relay's zone, with a note: 1 up to the rated ambient,
    then linear to the maker's derating point (``r.derated`` = fraction at a temperature), never
    below 0; None above the relay's highest ambient."""
    t = r.zone_temperature
    if r.max_ambient is not None and t > r.max_ambient:
        return None, f"zone {r.zone} ({t:g} °C) is above the relay's highest ambient {r.max_ambient:g} °C"
    if t <= r.rated_ambient:
        return 1.0, f"zone {t:g} °C within the rated ambient {r.rated_ambient:g} °C"
    if r.derated is None:
        return 1.0, (
            f"zone {t:g} °C above the rated ambient {r.rated_ambient:g} °C and no derating given: rating used as stated"
        )
    f, td = r.derated
    k = 1.0 + (f - 1.0) * (t - r.rated_ambient) / (td - r.rated_ambient) if td != r.rated_ambient else f
    return max(k, 0.0), f"derated linearly to {k:.3f} at {t:g} °C (given: {f:.0%} at {td:g} °C)"


@dataclass(frozen=True)
class RelayContact:
    """A relay's contact rating in its zone: the maker's rating at the system voltage [A] (or None,
    with why), the fraction of it that holds at the zone temperature [°C] (or None, with why), their
    product, the limit [A], and whether a pass is held to a warning (zone above the rated ambient with
    no derating given)."""

    relay: str
    zone_temperature: float
    rating: float | None
    rating_words: str
    factor: float | None
    factor_words: str
    limit: float | None
    held_to_warn: bool
    model: str = "maker's contact rating at the system voltage, derated linearly above its rated ambient"


def relay_contact(r: Relay, system: int) -> RelayContact:
    """The contact rating of ``r`` on a ``system`` V bus at its zone temperature."""
    rating, rnote = relay_rating(r, system)
    k, tnote = relay_temperature_factor(r)
    limit = rating * k if rating is not None and k is not None else None
    held = r.derated is None and r.zone_temperature > r.rated_ambient
    return RelayContact(r.id, r.zone_temperature, rating, rnote, k, tnote, limit, held)


def relay_contacts_over(
    relays: list[Relay], system: int, zones: dict[str, tuple[float, ...]]
) -> dict[str, tuple[RelayContact, ...]]:
    """Each relay's contact rating with its zone at each of the temperatures ``zones[relay id]`` [°C]."""
    return {
        r.id: tuple(relay_contact(evolve(r, zone_temperature=z), system) for z in zones[r.id])
        for r in relays
        if r.id in zones
    }


# ---------------------------------------------------------------- all of them


@dataclass(frozen=True)
class Ratings:
    cables: dict[str, CableRating]
    overload: dict[tuple[str, str], Overload | str]  # (fuse id, cable id) -> figures or why not
    far_end: dict[tuple[str, str], FarEndShort | str]
    fuses: dict[str, FuseSwitching]
    relays: dict[str, RelayPickup | None]
    #: the far-end shorts at the smallest fault current (longest clearing; see analysis.worst)
    far_end_worst: dict[tuple[str, str], FarEndShort | str] = field(default_factory=dict)
    #: each fuse's peak current at the largest continuous current (see :func:`fuse_switching_scaled`)
    fuses_worst: dict[str, FuseSwitching] = field(default_factory=dict)
    #: each cable's rating at every ambient of the duty sweep, its zone following the ambient
    #: (:func:`coilstage.analysis.conditions.zone_at_ambient`)
    cables_sweep: dict[str, tuple[CableRating, ...]] = field(default_factory=dict)
    #: each relay's contact rating in its stated zone
    relay_contacts: dict[str, RelayContact] = field(default_factory=dict)
    #: the same at every ambient of the duty sweep (``"worst"``) and of its nominal twin (``"nominal"``),
    #: its zone following the ambient
    relay_contacts_sweep: dict[str, dict[str, tuple[RelayContact, ...]]] = field(default_factory=dict)


def cable_ratings_over(cables: list[Cable], zones: dict[str, tuple[float, ...]]) -> dict[str, tuple[CableRating, ...]]:
    """Each cable's rating with its zone at each of the temperatures ``zones[cable id]`` [°C] (one
    evaluation per distinct cable and temperature)."""
    out = {}
    for c in cables:
        if c.id in zones:
            out[c.id] = tuple(cable_rating(evolve(c, zone_temperature=z)) for z in zones[c.id])
    return out


def ratings(
    d: Drawing,
    protected: dict[str, list[str]],
    far_end_fault: dict[str, float],
    duty: dict[str, float],
    sw: SwitchingResult | None,
    hot: CornerResult,
    far_end_smallest: dict[str, float] | None = None,
    largest_current: dict[str, float] | None = None,
    sweep_zones: dict[str, tuple[float, ...]] | None = None,
    relay_sweep_zones: dict[str, dict[str, tuple[float, ...]]] | None = None,
) -> Ratings:
    """Every rating figure of a drawing (see the module docstring); ``far_end_smallest`` (protected
    cable id -> A) gives the far-end shorts at the smallest fault current as well, ``largest_current``
    (element id -> A) each fuse's peak current at the largest continuous current, ``sweep_zones``
    (cable id -> its zone's temperature at each ambient of the duty sweep) each cable's rating there,
    ``relay_sweep_zones`` (sweep name -> relay id -> its zone's temperature at each ambient) each
    relay's contact rating there."""
    cables = {c.id: c for c in d.of_kind(Cable)}
    rate = {cid: cable_rating(c) for cid, c in cables.items()}
    over: dict[tuple[str, str], Overload | str] = {}
    short: dict[tuple[str, str], FarEndShort | str] = {}
    short_min: dict[tuple[str, str], FarEndShort | str] = {}
    for f in d.of_kind(Fuse):
        for cid in protected.get(f.id, []):
            if cid in cables:
                over[(f.id, cid)] = overload(f, cables[cid], rate[cid])
                short[(f.id, cid)] = far_end_short(f, cables[cid], far_end_fault.get(cid, 0.0))
                if far_end_smallest is not None:
                    short_min[(f.id, cid)] = far_end_short(f, cables[cid], far_end_smallest.get(cid, 0.0))
    fs = fuse_switching(d.of_kind(Fuse), duty, sw)
    return Ratings(
        rate,
        over,
        short,
        fs,
        {r.id: relay_pickup(r, hot) for r in d.of_kind(Relay)},
        short_min,
        fuse_switching_scaled(fs, duty, largest_current) if largest_current is not None else {},
        cable_ratings_over(list(cables.values()), sweep_zones or {}),
        {r.id: relay_contact(r, d.supply.system_voltage) for r in d.of_kind(Relay)},
        {
            name: relay_contacts_over(d.of_kind(Relay), d.supply.system_voltage, zones)
            for name, zones in (relay_sweep_zones or {}).items()
        },
    )


# ---------------------------------------------------------------- DC utilization categories


def _category_tests(category: str) -> list[dict]:
    rows = tables.shipped("utilization_tests_iec60947.toml")["table"]["rows"]
    return [r for r in rows if r["category"] == category]


def _test_row_tau(row: dict, rated_power: float | None) -> float:
    """The L/R of one type-test row [s]: its ``tau``, or DC-13's T0.95 = min(6 ms/W·U_e·I_e, 300 ms)
    as a time constant (IEC 60947-5-1), its cap where no rated power ``rated_power`` [W] is given."""
    if "t95_per_watt" in row:
        t = row["t95_cap"] if rated_power is None else min(row["t95_per_watt"] * rated_power, row["t95_cap"])
        return time_constant_from_t95(t)
    return float(row["tau"])


def category_order() -> list[str]:
    """The DC utilization categories, least demanding first (data/utilization_categories_iec60947.toml)."""
    return [row["category"] for row in tables.utilization_categories()]


def category_tau_limit(category: str, rated_power: float | None = None) -> float:
    """Largest load L/R of a category [s]: the L/R of the type test that defines its envelope (the
    category row's ``envelope``, a test of data/utilization_tests_iec60947.toml: DC-1/3/5 the
    IEC 60947-4-1 make/break test); DC-13's rests on the contact's rating ``rated_power`` =
    U_e·I_e [W] (IEC 60947-5-1: T0.95 = 6·P ms), its 300 ms cap without one."""
    cat = next(r for r in tables.utilization_categories() if r["category"] == category)
    row = next(r for r in _category_tests(category) if r["test"] == cat["envelope"])
    return _test_row_tau(row, rated_power)


def category_for(tau: float, rated_power: float | None = None) -> str | None:
    """The least demanding DC utilization category whose time constant covers ``tau`` [s], or None
    when the load lies outside every category. DC-13's limit rests on the contact's rating
    ``rated_power`` = U_e·I_e [W] (IEC 60947-5-1), never on the load's power; without a rating its
    widest envelope (the 300 ms cap) classifies the load."""
    for category in category_order():
        if tau <= category_tau_limit(category, rated_power):
            return category
    return None


def frequent_switching_above() -> int:
    """Switchings above which a contact is judged on the durability test (the make/break test's count)."""
    return int(tables.shipped("utilization_tests_iec60947.toml")["table"]["frequent_switching_above"])


def category_test_tau(category: str, u_e: float, i_e: float, frequent: bool) -> float:
    """L/R of a category's type test for a contact rated ``i_e`` [A] at ``u_e`` [V] [s]: the
    durability test's where the contact switches more often than the make/break test (IEC 60947-4-1),
    DC-13's T0.95 = 6·P ms (P = U_e·I_e, capped at 300 ms) as a time constant (IEC 60947-5-1)."""
    rows = _category_tests(category)
    if not rows:
        return category_tau_limit(category, u_e * i_e)
    pick = [r for r in rows if r["test"] in (("durability", "normal") if frequent else ("make_break", "normal"))]
    return _test_row_tau((pick or rows)[0], u_e * i_e)
