"""The orchestrator: ``analyse(drawing) -> Analysis``, the one module that imports every view.

Layers (each module imports only from the lines above it)::

    circuit, quasistatic   the drawing's network: node numbering, resistances, DC solves
    conditions             what each operating case is (cold, hot, limit, fault)
    linear                 the energised network of one case as an RL system (one factorisation per
                           alternator state, reused for every set of energised stages)
    topology               what a fuse cuts off, which stages a relay switches, what a fuse protects
    corners · switching · duty · field · figures    views of the drawing under some conditions
    run                    this module
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

from coilstage.analysis.circuit import Circuit
from coilstage.analysis.conditions import Conditions, conditions
from coilstage.analysis.contacts import Contacts, contacts
from coilstage.analysis.corners import CornerResult, cold_duty, fault_currents, solve_corner
from coilstage.analysis.drops import StageDrops, largest_current_stages
from coilstage.analysis.duty import (
    DutyResult,
    continuous_duty,
    duty_conditions,
    nominal_conditions,
    simulate_profiles,
)
from coilstage.analysis.field import FieldResult, analyse_field
from coilstage.analysis.fuse_duty import FuseDuty, fuse_duty
from coilstage.analysis.joints import JointFigures, joint_figures
from coilstage.analysis.linear import CaseNetwork, case_networks
from coilstage.analysis.ratings import Ratings, ratings
from coilstage.analysis.switching import SwitchingResult, analyse_switching
from coilstage.analysis.topology import protected_cables, switched_stages, unfused_feed_cables
from coilstage.analysis.worst import WorstCases, worst_cases
from coilstage.drawing.schema import Cable, Drawing, Relay


@dataclass(frozen=True)
class Analysis:
    """Everything the checks compare and the reports show, for one drawing (frozen; built once)."""

    drawing: Drawing
    circuit: Circuit
    conditions: dict[str, Conditions]  # cold, hot, limit, fault
    corners: dict[str, CornerResult]  # cold, hot, limit
    fault_current: dict[str, float]  # fuse id -> prospective current at its load terminal [A]
    battery_short_circuit: float  # at the battery terminals, alternator included [A]
    protected: dict[str, list[str]]  # fuse id -> cable ids
    far_end_fault: dict[str, float]  # protected cable id -> short at its far end [A]
    duty: dict[str, float]  # element id -> largest cold-corner current [A]
    duty_state: dict[str, str]  # element id -> "all stages" or "<stage> alone"
    switched: dict[str, list[str]]  # relay id -> the stages it switches
    unfused: list[str]  # feed cables no fuse cuts off
    ratings: Ratings  # cables' ampacity, fuses' heating of their cables and peak currents, relay pick-up
    switching: SwitchingResult | None
    field: FieldResult
    descent: DutyResult | None  # the drawing's duty profile
    continuous: DutyResult | None  # continuous full retardation
    worst: WorstCases  # each rule's worst case (largest / smallest fault, lowest bus, largest current)
    contacts: Contacts  # each relay's break, load dump, arc, coil pick-up and feed; the stages' load dumps
    joints: dict[str, JointFigures]  # joint id -> its current, rating, I²R heat and lug fit
    largest_current_stages: StageDrops  # each stage's drop at the largest continuous current
    #: the same two with every coil at its stated resistance (``descent`` and ``continuous`` take each at
    #: the low end of its tolerance, the worst case of the heating rules): their nominal, made for a
    #: report (``analyse`` with ``transients``), None otherwise or where no tolerance moves the coils
    descent_nominal: DutyResult | None = None
    continuous_nominal: DutyResult | None = None
    #: fuse id -> its share of the must-not-open time along ``descent`` (or why none); made from
    #: ``descent`` whenever an Analysis is built, so a copy with another descent
    #: (``dataclasses.replace(a, descent=...)``) carries its own
    fuse_duty: dict[str, FuseDuty | str] = field(init=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "fuse_duty", fuse_duty(self.drawing, self.descent))


def analyse(
    d: Drawing,
    switching: bool = True,
    heating: bool = True,
    transients: bool = True,
    duty_nominal: bool | None = None,
) -> Analysis:
    """Solve the three corners and the prospective fault currents of a drawing; with ``switching``,
    also the switch-on and switch-off scenarios; with ``heating``, the drawing's duty profile and
    continuous full retardation; with ``transients``, the field's saturating switch-on (its
    ``FieldResult.switch_on``) and the stages' switch-on times T0.95 (no rule reads either, the report
    shows them: an analysis made without them is for the re-analyses of :mod:`coilstage.effects` and
    sizing's screens, never for a report); with ``duty_nominal`` (by default as ``transients``) the
    duty and continuous run again with the stated coils (``descent_nominal``, ``continuous_nominal``:
    the heating verdicts' nominal, which only a report shows)."""
    circuit = Circuit(d)
    cases = conditions(d)
    nets = case_networks(circuit, cases)
    corners = {name: solve_corner(circuit, cases[name]) for name in ("cold", "hot", "limit")}
    protected = protected_cables(d)
    faults, far_end, battery_sc = fault_currents(circuit, cases["fault"], protected)
    duty, duty_state = cold_duty(nets["cold"])
    worst = worst_cases(d, cases, protected, duty)
    sw = None
    if switching:
        b = worst.largest_break
        largest = None if b is None else (b.drawing, CaseNetwork(Circuit(b.drawing), b.temperatures, b.sources))
        sw = analyse_switching(d, nets, largest=largest, t95=transients)
    descent = continuous = descent_nominal = continuous_nominal = None
    if heating and d.duty is not None:
        cond = duty_conditions(d)
        profiles = [d.duty, continuous_duty(d)]
        descent, continuous = simulate_profiles(d, profiles, cond)
        nominal_wanted = transients if duty_nominal is None else duty_nominal
        if nominal_wanted and any(cond.coil_tolerance.values()):  # the nominal beside the worst
            descent_nominal, continuous_nominal = simulate_profiles(d, profiles, nominal_conditions(cond))
    switched = switched_stages(d)
    rated = _rated(d, corners, protected, far_end, duty, sw, worst, switched)
    return Analysis(
        d,
        circuit,
        cases,
        corners,
        faults,
        battery_sc,
        protected,
        far_end,
        duty,
        duty_state,
        switched,
        unfused_feed_cables(d),
        rated.ratings,
        sw,
        analyse_field(d, corners, nets["cold"], worst.largest_current_solution, switch_on=transients),
        descent,
        continuous,
        worst,
        rated.contacts,
        rated.joints,
        largest_current_stages(d, worst.largest_current_solution, corners["cold"].temperatures),
        descent_nominal,
        continuous_nominal,
    )


@dataclass(frozen=True)
class _Rated:
    ratings: Ratings
    contacts: Contacts
    joints: dict[str, JointFigures]


def _rated(
    d: Drawing,
    corners: dict[str, CornerResult],
    protected: dict[str, list[str]],
    far_end: dict[str, float],
    duty: dict[str, float],
    sw: SwitchingResult | None,
    worst: WorstCases,
    switched: dict[str, list[str]],
) -> _Rated:
    """Every figure an Analysis makes from the parts' ratings (cables' ampacity and their fuses'
    heating, the fuses' and relays' ratings over the ambient sweep, the relays' contacts and coils, the
    joints) on the network figures already solved: the one place both :func:`analyse` and
    :func:`rerated` make them."""
    sw_ = worst.duty_sweep
    zones = (
        {c.id: tuple(sw_.zone(c.zone_temperature, j) for j in range(len(sw_.ambients))) for c in d.of_kind(Cable)}
        if sw_ is not None
        else None
    )
    relay_zones = {
        name: {r.id: tuple(s.zone(r.zone_temperature, j) for j in range(len(s.ambients))) for r in d.of_kind(Relay)}
        for name, s in (("worst", sw_), ("nominal", worst.duty_sweep_nominal))
        if s is not None
    }
    relays = contacts(
        d,
        switched,
        sw,
        corners["cold"].bus_voltage,
        corners["hot"].bus_voltage,
        worst.lowest_bus.bus_voltage,
        worst.bus_high,
        None if worst.largest_break is None else worst.largest_break.sources.hold_bus,
        None
        if worst.braking is None
        else (worst.braking.bus_voltage, {st.id: worst.braking.solution.current[st.id] for st in d.stages}),
    )
    rates = ratings(
        d,
        protected,
        far_end,
        duty,
        sw,
        corners["hot"],
        worst.smallest_fault.far_end,
        worst.largest_current,
        zones,
        relay_zones,
    )
    return _Rated(rates, relays, joint_figures(d, duty, worst.largest_current))


def rerated(a: Analysis, d: Drawing) -> Analysis:
    """The analysis ``a`` for a drawing ``d`` that differs from ``a.drawing`` only in ratings that enter
    no network (a relay's contact rating, a fuse's breaking capacity, a suppressor's energy rating, ...):
    the solved figures kept, every figure made from a rating made again (:func:`_rated`; the fuses'
    duty along the descent by ``__post_init__``). Equal to ``analyse(d)`` for such a drawing
    (tests/test_rerated.py); how sizing screens a rating without solving the drawing again."""
    rated = _rated(d, a.corners, a.protected, a.far_end_fault, a.duty, a.switching, a.worst, a.switched)
    return dataclasses.replace(a, drawing=d, ratings=rated.ratings, contacts=rated.contacts, joints=rated.joints)
