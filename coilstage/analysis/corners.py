"""The operating corners of a drawing: cold (duty), hot (what braking remains) and limit (voltage
ratings), plus the prospective short-circuit current at each fuse."""

from __future__ import annotations

from dataclasses import dataclass, field

from coilstage.analysis.circuit import Circuit, Solution, SourceState
from coilstage.drawing.schema import Cable, Drawing, Fuse, Stage


@dataclass(frozen=True)
class StageResult:
    id: str
    temperature: float  # winding [°C]
    resistance: float  # stage [Ω]
    current: float  # stage [A]
    coil_current: float  # one coil [A]
    terminal_voltage: float  # [V]
    power: float  # [W]
    ampere_turns: float  # one coil, N·I [A]
    drop: float  # battery terminals to stage terminals [V]
    drop_fraction: float  # of the nominal system voltage
    stored_energy: float  # ½ L I² of the stage [J]


@dataclass(frozen=True)
class CornerResult:
    name: str
    purpose: str
    conditions: dict[str, str]
    solution: Solution
    stages: list[StageResult]
    temperatures: dict[str, float]
    total_stage_current: float
    bus_voltage: float  # battery terminal voltage [V]
    battery_current: float
    alternator_current: float
    alternator_mode: str
    base_load: float


@dataclass
class Analysis:
    drawing: Drawing
    circuit: Circuit
    corners: dict[str, CornerResult]
    fault_current: dict[str, float]  # fuse id -> prospective current at its load terminal [A]
    battery_short_circuit: float  # at the battery terminals, alternator included [A]
    protected: dict[str, list[str]] = field(default_factory=dict)  # fuse id -> cable ids
    far_end_fault: dict[str, float] = field(default_factory=dict)  # protected cable id -> short at its far end [A]
    duty: dict[str, float] = field(default_factory=dict)  # element id -> largest cold-corner current [A]
    duty_state: dict[str, str] = field(default_factory=dict)  # element id -> "all stages" or "<stage> alone"
    switching: object | None = None  # analysis.switching.SwitchingResult
    field: object | None = None  # analysis.field.FieldResult
    descent: object | None = None  # analysis.duty.DutyResult of the drawing's duty profile
    continuous: object | None = None  # analysis.duty.DutyResult of continuous full retardation


def _stage_results(d: Drawing, sol: Solution, temps: dict[str, float]) -> list[StageResult]:
    out = []
    v_bus = sol.v[d.supply.battery.node] - sol.v[d.supply.negative_node]
    for s in d.stages:
        i = sol.current[s.id]
        vt = sol.v[s.a] - sol.v[s.b]
        drop = v_bus - vt
        ic = i * s.coil_current_factor
        out.append(
            StageResult(
                s.id,
                temps[s.id],
                sol.resistance[s.id],
                i,
                ic,
                vt,
                vt * i,
                s.coil.turns * ic,
                drop,
                drop / d.supply.system_voltage,
                0.5 * s.inductance * i * i,
            )
        )
    return out


def _corner(
    circuit: Circuit, name: str, purpose: str, conditions: dict[str, str], temps: dict[str, float], src: SourceState
) -> CornerResult:
    d = circuit.drawing
    sol = circuit.solve(temps, src)
    stages = _stage_results(d, sol, temps)
    return CornerResult(
        name,
        purpose,
        conditions,
        sol,
        stages,
        temps,
        sum(s.current for s in stages),
        sol.v[d.supply.battery.node] - sol.v[d.supply.negative_node],
        sol.battery_current,
        sol.alternator_current,
        sol.alternator_mode,
        d.supply.base_load,
    )


def cold_duty(circuit: Circuit, temps: dict[str, float], src: SourceState) -> tuple[dict[str, float], dict[str, str]]:
    """The largest current each element carries in the cold corner, with all stages on or with any
    one stage on alone, and which state gives it.

    A branch carries most when its stage is the only one on (no other stage's current drops the
    shared feed); a shared feed carries most with all on. The cold corner is linear (bus held,
    alternator at a fixed output), so one factorisation serves every state: with the stages as the
    RL system ``c − K·i`` of :func:`coilstage.analysis.switching.build_linear`, stage k alone draws
    c_k/K_kk, all together K⁻¹c, and every element current is an affine read-out ``g·i + h``.
    """
    import numpy as np

    from coilstage.analysis.switching import build_linear

    d = circuit.drawing
    ids = tuple(s.id for s in d.stages)
    lin = build_linear(circuit, temps, src, ids, "fixed", all_elements=True)
    k, c = lin.rl.k, lin.rl.c
    i_all = np.linalg.solve(k, c)
    i_alone = c / np.diag(k)  # stage j alone: c_j / K_jj
    elems = d.elements
    n = len(ids)
    g = np.zeros((len(elems), n))
    h = np.zeros(len(elems))
    for r, e in enumerate(elems):
        if e.id in lin.stages:
            g[r, lin.stages.index(e.id)] = 1.0
        else:
            g[r], h[r] = lin.readout[f"element:{e.id}"]
    all_on = np.abs(g @ i_all + h)  # (elements,)
    names = ["all stages"]
    if n > 1:
        alone = np.abs(g * i_alone[None, :] + h[:, None])  # (elements, stages): column j = stage j alone
        table = np.column_stack([all_on, alone])
        names += [f"{sid} alone" for sid in ids]
    else:
        table = all_on[:, None]
    top = table.max(axis=1)
    best = np.where(table[:, 0] >= top * (1 - 1e-12), 0, np.argmax(table, axis=1))  # a tie goes to all stages
    duty = {e.id: float(table[r, best[r]]) for r, e in enumerate(elems)}
    where = {e.id: names[best[r]] for r, e in enumerate(elems)}
    return duty, where


def cold_temperatures(d: Drawing) -> dict[str, float]:
    t = d.corners.cold_ambient
    return {e.id: t for e in d.elements if isinstance(e, (Cable, Stage))}


def hot_temperatures(d: Drawing) -> dict[str, float]:
    """Cables at their zone temperature; windings at their computed thermal steady state under
    continuous full retardation where their coil has a thermal model, else at the stated (or default)
    hot temperature."""
    from coilstage.analysis.duty import hot_winding_temperatures

    temps: dict[str, float] = {e.id: e.zone_temperature for e in d.of_kind(Cable)}
    temps.update(hot_winding_temperatures(d))
    return temps


def corner_sources(d: Drawing) -> dict[str, tuple[dict[str, float], SourceState]]:
    """Element temperatures and source states of each corner, and of the fault solve (``"fault"``).

    * cold: coils and cables at the lowest ambient; the bus held at the highest regulated voltage;
      the alternator at its full rated-speed output.
    * hot: coils at their hot temperature, cables at their zone temperature; the battery at the
      stated EMF behind its internal resistance; the alternator at its idle (or stated) output limit.
    * limit: as cold, with the bus held at the highest voltage of the supply code.
    * fault: as cold, but a charged battery at the cold bus voltage behind its internal resistance,
      plus the alternator delivering its rated-speed limit as a fixed current (no source can hold the
      bus in a fault; a regulating alternator would deliver no more than that, so this is
      conservative).
    """
    c = d.corners
    alt = d.supply.alternator
    rated = alt.limit_rated if alt else None
    hot_limit = {"idle": alt.limit_idle if alt else None, "rated": rated, "off": None}[c.hot_alternator]
    cold_t = cold_temperatures(d)
    return {
        "cold": (cold_t, SourceState(c.cold_bus, c.cold_bus if alt else None, rated, hold_bus=c.cold_bus)),
        "hot": (hot_temperatures(d), SourceState(c.hot_battery_emf, alt.setpoint if alt else None, hot_limit)),
        "limit": (cold_t, SourceState(c.limit_bus, c.limit_bus if alt else None, rated, hold_bus=c.limit_bus)),
        "fault": (cold_t, SourceState(c.cold_bus, c.cold_bus if alt else None, rated, alt_fixed=True)),
    }


def analyse(d: Drawing, switching: bool = True, heating: bool = True) -> Analysis:
    """Solve the three corners and the prospective fault currents of a drawing; with ``switching``,
    also the switch-on and switch-off scenarios; with ``heating``, the drawing's duty profile and
    continuous full retardation."""
    circuit = Circuit(d)
    c = d.corners
    alt = d.supply.alternator
    src = corner_sources(d)
    alt_text = (
        "absent: the battery holds the bus"
        if alt is None
        else f"full rated-speed output {alt.limit_rated:g} A at its terminal; the battery takes the difference"
    )
    hot_limit = src["hot"][1].alt_limit
    corners = {
        "cold": _corner(
            circuit,
            "cold",
            "cable, fuse and relay duty (largest current)",
            {
                "coils and cables": f"{c.cold_ambient:g} °C (lowest ambient)",
                "bus": f"held at {c.cold_bus:.2f} V at the battery terminals (highest regulated voltage)",
                "alternator": alt_text,
            },
            *src["cold"],
        ),
        "hot": _corner(
            circuit,
            "hot",
            "braking current that remains (hot coils, sagging bus)",
            {
                "coils": ", ".join(
                    f"{e.id} {src['hot'][0][e.id]:.0f} °C"
                    + (
                        " (steady state, computed)"
                        if e.coil.has_thermal_model
                        else f" ({e.coil.hot_temperature_source})"
                    )
                    for e in d.stages
                ),
                "cables": "at their zone temperatures",
                "battery": f"EMF {c.hot_battery_emf:.2f} V",
                "alternator": "off"
                if hot_limit is None
                else f"set-point {alt.setpoint:.2f} V, {c.hot_alternator} output {hot_limit:g} A",
            },
            *src["hot"],
        ),
        "limit": _corner(
            circuit,
            "limit",
            "voltage ratings of fuses, relays and suppressors (not thermal duty)",
            {
                "bus": f"held at {c.limit_bus:.2f} V ({d.supply.limits_source or 'drawing'} maximum)",
                "coils and cables": f"{c.cold_ambient:g} °C",
            },
            *src["limit"],
        ),
    }
    fuses = d.of_kind(Fuse)
    protected = protected_cables(d)
    by_id = {e.id: e for e in d.elements}
    far = {cid: by_id[cid].b for ids in protected.values() for cid in ids if cid in by_id}
    places = [d.supply.battery.node, *(f.b for f in fuses), *far.values()]
    at = circuit.fault_currents(*src["fault"], places)
    faults = {f.id: at[f.b] for f in fuses}
    far_end = {cid: at[node] for cid, node in far.items()}
    duty, duty_state = cold_duty(circuit, *src["cold"])
    sw = None
    if switching:
        from coilstage.analysis.switching import analyse_switching

        sw = analyse_switching(d, circuit)
    descent = continuous = None
    if heating and d.duty is not None:
        from coilstage.analysis.duty import continuous_duty, simulate

        descent = simulate(d)
        continuous = simulate(d, continuous_duty(d))
    a = Analysis(
        d,
        circuit,
        corners,
        faults,
        at[d.supply.battery.node],
        protected=protected,
        far_end_fault=far_end,
        duty=duty,
        duty_state=duty_state,
        switching=sw,
        descent=descent,
        continuous=continuous,
    )
    from coilstage.analysis.field import analyse_field

    a.field = analyse_field(a)
    return a


def cut_off_by(d: Drawing, device_ids: list[str]) -> dict[str, set[str]]:
    """For each device id: the elements that lose their connection to the battery when it opens."""
    live = _live_nodes_without(d, device_ids)
    return {
        did: {e.id for e in d.elements if e.id != did and e.a not in live[did] and e.b not in live[did]}
        for did in device_ids
    }


def switched_stages(d: Drawing) -> dict[str, list[str]]:
    """Relay id -> the stages whose feed it opens (their feed node loses the battery with it open)."""
    from coilstage.drawing.schema import Relay

    relays = [r.id for r in d.of_kind(Relay)]
    live = _live_nodes_without(d, relays)
    return {rid: [s.id for s in d.stages if s.a not in live[rid]] for rid in relays}


def _live_nodes_without(d: Drawing, device_ids: list[str]) -> dict[str, set[str]]:
    """For each device: the nodes still fed from the battery with that device open (supply side
    only: never through a stage or the negative node)."""
    from collections import defaultdict

    pos, neg = d.supply.battery.node, d.supply.negative_node
    adj: dict[str, list[tuple[str, str]]] = defaultdict(list)
    for e in d.elements:
        if not isinstance(e, Stage):
            adj[e.a].append((e.b, e.id))
            adj[e.b].append((e.a, e.id))
    out = {}
    for did in device_ids:
        seen, todo = {pos}, [pos]
        while todo:
            n = todo.pop()
            for m, eid in adj[n]:
                if eid != did and m not in seen and m != neg:
                    seen.add(m)
                    todo.append(m)
        out[did] = seen
    return out


def protected_cables(d: Drawing) -> dict[str, list[str]]:
    """Fuse id -> the cables it protects: those named in ``protects``, or else the cables that lose
    their connection to the battery when the fuse opens and for which it is the nearest such fuse."""
    fuses = d.of_kind(Fuse)
    feed = {c.id for c in d.of_kind(Cable) if c.role == "feed"}
    cut_by = {fid: cut & feed for fid, cut in cut_off_by(d, [f.id for f in fuses]).items()}
    out: dict[str, list[str]] = {}
    for f in fuses:
        if f.protects is not None:
            out[f.id] = list(f.protects)
            continue
        mine = []
        for cid in sorted(cut_by[f.id]):
            # nearest: no other fuse that also cuts this cable is itself downstream of f
            downstream = [g for g in fuses if g.id != f.id and cid in cut_by[g.id] and cut_by[g.id] < cut_by[f.id]]
            if not downstream:
                mine.append(cid)
        out[f.id] = mine
    return out
