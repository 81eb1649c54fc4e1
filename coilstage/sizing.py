"""From a verdict to the part that passes: per-part suggestions, a coordinated design, an action list.

Every suggestion comes from the rules themselves, never from a formula of its own: a candidate part is
written into the drawing's text (:mod:`coilstage.tomledit`), read by the loader, analysed and judged
by :data:`coilstage.checks.RULES`. So a suggestion follows the rules as they are corrected.

Speed comes from three arguments, each checked where it is used:

* Only the verdicts a part takes part in decide about it (its own subject; for a cable also the
  voltage drop of every stage it feeds and the verdicts of the fuse that protects it; for a
  suppressor also the break at the relay that switches its stage).
* The standard series are ordered, and each such verdict is monotone in the part along its series
  (a larger conductor has less resistance, more ampacity and more short-circuit withstand; a larger
  fuse clears later and opens less often; a larger contact rating has more headroom): the smallest
  passing part is found by bisection, and then *checked* — the part passes, the next smaller fails.
* A screening analysis leaves the duty simulation out (it is most of the cost); its verdicts are
  the full check's except for the duty rules, which it returns as not checked. The chosen part is
  then re-checked with the full :func:`coilstage.check`.

The drawing may write ``"auto"`` for a cable's ``size``, a fuse's ``rating``, a relay's contact rating
or a stage's ``suppression``, and ``fixed = true`` on a harness element that sizing must not change;
the loader reads ``fixed`` (``Drawing.fixed``) and refuses ``"auto"`` with a pointer to ``coilstage size``;
:func:`prepare` turns such a text into one the loader reads, every "auto" replaced by a starting value.
"""

from __future__ import annotations

import math
import re
import tomllib
from dataclasses import dataclass, field, replace
from functools import cache
from pathlib import Path
from typing import TYPE_CHECKING, Any

from coilstage.tomledit import TomlText, format_value

if TYPE_CHECKING:  # the names of the annotations only: the imports stay inside the functions
    from coilstage.analysis.run import Analysis
    from coilstage.checks.base import Verdict
    from coilstage.drawing.schema import Drawing
    from coilstage.parts_library import Library

#: Key of our naming that keeps a harness element as written.
FIXED_KEY = "fixed"
#: Value that asks sizing to choose.
AUTO = "auto"

_RANK = {"fail": 0, "warn": 1, "pass": 2}
#: element kind -> the keys of it that enter no network (ratings judged against figures the network
#: already gave): a candidate that changes only these is judged on the analysis already made
#: (:meth:`Bench.rated`); tests/test_rerated.py holds each equal to a fresh analysis
RATING_KEYS: dict[str, frozenset[str]] = {
    "fuse": frozenset({"rating", "type", "breaking_capacity", "voltage_rating"}),
    "relay": frozenset({"rating_12v", "rating_24v", "derating", "voltage_rating"}),
}
_SWITCHING_RULES = ("relay.inductive_break", "suppressor.rating", "stage.release_time")


def _heating_rules() -> tuple[str, ...]:
    from coilstage.checks import DUTY_RULES

    return DUTY_RULES


#: What sizing cannot change, by rule: the part of the vehicle it belongs to.
UNCHANGEABLE = {
    "winding.temperature": "the coils and their cooling",
    "winding.time_to_limit": "the coils and their cooling",
    "battery.charge": "the battery",
    "supply.alternator": "the alternator",
    "supply.bus_minimum": "the battery and alternator",
    "field.saturation": "the coils",
    "field.inductance_crosscheck": "the coils",
    "field.braking_retained": "the coils and their cooling",
    "overvoltage.coil": "the coils and their cooling, or the controller's overvoltage cut-out",
    "overvoltage.fuse": "the regulator's protection (a fuse that opens on a failed regulator protects the wiring)",
    "ground.lost_return": "the layout of the returns",
    "relay.coil_circuit": "the relay coil circuit (its fuse and wire)",
    "joint.current": "the joints and lugs",
    "joint.heat": "the joints and lugs",
    "joint.lug_size": "the joints and lugs",
}


#: What no part sizing may change can clear, by rule: (what the subject is, what its figure says, what
#: sizing does not change, what would have to change). The words a fitter reads beside a failing or
#: warning verdict that no suggested part answers (:func:`cannot_change_text`).
CANNOT_CHANGE: dict[str, tuple[str, str, str, str]] = {
    "winding.temperature": (
        "coil",
        "winding reaches",
        "the coils",
        "a coil with more cooling or a lower duty is needed",
    ),
    "winding.time_to_limit": (
        "coil",
        "winding reaches its limit after",
        "the coils",
        "a coil with more cooling or a lower duty is needed",
    ),
    "battery.charge": ("", "the duty asks", "the battery", "a larger battery or more charging current is needed"),
    "supply.alternator": (
        "",
        "demand",
        "the alternator",
        "a larger alternator, or fewer stages on at once at that speed, is needed",
    ),
    "supply.bus_minimum": (
        "",
        "bus falls to",
        "the battery or alternator",
        "a stronger supply (battery, alternator) or a shorter, heavier feed is needed",
    ),
    "field.saturation": ("coil", "iron at", "the coils", "a coil with fewer ampere-turns or more iron is needed"),
    "field.inductance_crosscheck": ("coil", "inductance", "the coils", "the coil data need checking with the maker"),
    "field.braking_retained": ("coil", "braking retained", "the coils", "a coil with more cooling is needed"),
    "overvoltage.coil": (
        "coil",
        "on a failed regulator it reaches its limit after",
        "the coils",
        "an overvoltage cut-out in the controller, or a coil with more cooling, is needed",
    ),
    "overvoltage.fuse": (
        "fuse",
        "on a failed regulator it carries",
        "the regulator's protection",
        "a fuse that opens on that current, or an overvoltage cut-out, is needed",
    ),
    "overvoltage.cable": (
        "cable",
        "on a failed regulator it carries",
        "the regulator-failure case (sizing designs for the regulated bus)",
        "a fuse that opens on that current, or an overvoltage cut-out, is needed",
    ),
    "ground.lost_return": (
        "return",
        "with one return lost it carries",
        "the layout of the returns",
        "returns that can carry a lost neighbour's current, or fewer shared returns, are needed",
    ),
    "ground.return_offset": (
        "stage",
        "ground offset",
        "the returns for the ground offset",
        "a shorter or heavier return path to the battery negative is needed",
    ),
    "relay.coil_circuit": (
        "relay",
        "coil circuit",
        "the relay coil circuit",
        "a coil feed with its own fuse and wire is needed",
    ),
    "relay.coil_pickup": (
        "relay",
        "coil gets",
        "relay coils",
        "a coil that operates at a lower voltage, or a heavier coil feed, is needed",
    ),
    "cable.ahead_of_fuse": (
        "cable",
        "unfused run",
        "the routing",
        "a fuse closer to the source (a shorter run ahead of the first protective device) is needed",
    ),
    "joint.current": ("joint", "carries", "the joints and lugs", "a joint or lug rated for the current is needed"),
    "joint.heat": ("joint", "heat", "the joints and lugs", "a joint of lower resistance is needed"),
    "joint.lug_size": ("joint", "lug", "the joints and lugs", "a lug that fits the conductor is needed"),
}

_UNIT_WORDS = {"degC": "°C", "A*h": "A·h", "1": "", "%": "%"}


def _figure(x: float | None, unit: str | None) -> str:
    if x is None:
        return ""
    u = _UNIT_WORDS.get(unit or "", unit or "")
    n = f"{x:.0f}" if abs(x) >= 100 else f"{x:.3g}"
    return f"{n} {u}".strip()


def cannot_change_text(
    rule: str,
    subject: str,
    status: str,
    value: float | None = None,
    limit: float | None = None,
    unit: str | None = None,
) -> str | None:
    """What a failing or warning verdict that no part sizing may change can clear says to a fitter:
    which part it is, its figure against its limit, that sizing does not change it, and what would
    have to change. E.g. ``"coil S2: winding reaches 186 °C against 165 °C — sizing does not change
    the coils; a coil with more cooling or a lower duty is needed"``. None for a rule sizing answers
    with a part (or a status other than fail and warn)."""
    if status not in ("fail", "warn"):
        return None
    row = CANNOT_CHANGE.get(rule)
    if row is None:
        return None
    what, says, not_changed, needed = row
    head = f"{what} {subject}" if what else subject
    fig = ""
    if value is not None:
        fig = f" {says} {_figure(value, unit)}"
        if limit is not None:
            fig += f" against {_figure(limit, unit)}"
    return f"{head}:{fig} ({rule}, {status}) — sizing does not change {not_changed}; {needed}"


#: What a rule or analysis may raise on a candidate far from any sensible design (an exponential out of
#: range for a thin cable behind a large fuse, a solver that does not converge): such a candidate is
#: taken as failing, never as passing.
_CANDIDATE_ERRORS = (ArithmeticError, ValueError, RuntimeError)


class SizingError(ValueError):
    """A drawing that sizing cannot work on (the message says where and why)."""


# ---------------------------------------------------------------- series


@cache
def standard_series(name: str) -> tuple[float, ...]:
    """The shipped standard series ``name`` (coilstage/data/suppressor_series.toml), smallest first."""
    from coilstage import tables

    for row in tables.shipped("suppressor_series.toml")["table"]["rows"]:
        if row["name"] == name:
            return tuple(float(v) for v in row["values"])
    raise KeyError(name)


def _qty(x: float, unit: str) -> str:
    return f"{x:g} {unit}"


def _size_text(label: str) -> str:
    return label.replace("mm²", "mm^2")


def _status(v) -> str:
    return str(v.status.value if hasattr(v.status, "value") else v.status)


def rank(v: Verdict | Finding) -> float:
    """The order of a verdict's status for sizing: FAIL 0 < WARN 1 < NOT_CHECKED 1.5 < PASS 2; a
    verdict that could not be reached never counts as passing where a part exists that passes it."""
    st = _status(v)
    return 1.5 if st == "not checked" else _RANK[st]


def _tokens(subject: str) -> set[str]:
    return {t for t in re.split(r"[\s,→()]+", subject) if t}


# ---------------------------------------------------------------- preparing a drawing text


@dataclass
class Prepared:
    """A drawing's text made readable by the loader, with what the user asked of sizing."""

    text: str  # the text as given
    loadable: str  # with "auto" replaced by a starting value
    fixed: set[str] = field(default_factory=set)  # element ids to keep
    auto: dict[tuple[int, str], str] = field(default_factory=dict)  # (harness index, key) -> start value
    ids: dict[int, str] = field(default_factory=dict)  # harness index -> id


def prepare(text: str) -> Prepared:
    """Replace every ``"auto"`` by a starting value the loader accepts, and note the parts marked
    ``fixed = true`` (the loader reads that key too, and keeps it on ``Drawing.fixed``).

    Starting values: a cable at the smallest size of its table, a fuse at the lowest rating of its
    type, a relay at the lowest of the relay series, a stage without suppression. Sizing then
    raises each to what the rules need.
    """
    from coilstage import tables

    doc = TomlText(text)
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError:
        return Prepared(text, text)  # the loader reports the TOML error with its line
    out = Prepared(text, text)
    default_mm2 = (raw.get("tables") or {}).get("conductors", tables.DEFAULT_MM2_TABLE)
    for i, e in enumerate(raw.get("harness") or []):
        if not isinstance(e, dict):
            continue
        eid = str(e.get("id", f"#{i}"))
        out.ids[i] = eid
        if e.get(FIXED_KEY) is True:
            out.fixed.add(eid)
        kind = e.get("kind")
        for key, value in list(e.items()):
            if value != AUTO:
                continue
            if key == "size" and kind in ("cable", "ground"):
                name = e.get("conductor_table", default_mm2)
                try:
                    start = _size_text(tables.conductor_table(name).sizes()[0])
                except Exception:
                    continue
                doc.set("harness", i, key, format_value(start))
            elif key == "rating" and kind == "fuse":
                row = tables.fuse_types().get(e.get("type"), {})
                ser = row.get("series") or [
                    v for v in standard_series("fuse_rating_without_series") if v <= row.get("max_rating", 1e9)
                ]
                start = _qty(float(ser[0]), "A")
                doc.set("harness", i, key, format_value(start))
            elif key in ("rating_12v", "rating_24v") and kind == "relay":
                start = _qty(standard_series("relay_contact_rating")[0], "A")
                doc.set("harness", i, key, format_value(start))
            elif key == "suppression" and kind == "stage":
                start = ""
                doc.delete("harness", i, key)
            else:
                continue
            out.auto[(i, key)] = start
    out.loadable = doc.text
    return out


# ---------------------------------------------------------------- evaluating candidates


Edits = tuple[tuple[tuple[int, str], str | None], ...]  # ((harness index, key), value text or None = delete)


class Bench:
    """Candidates of one drawing, each its text with a few keys changed, read and judged (cached)."""

    def __init__(
        self, text: str, source: str = "<drawing>", base_dir: Path | None = None, parts_dirs: tuple = ()
    ) -> None:
        self.text = text
        self.source = source
        self.base_dir = base_dir
        self.parts_dirs = tuple(parts_dirs)  # parts libraries given to the run (--parts)
        self._drawings: dict[Edits, Any] = {}
        self._fast: dict[Edits, dict] = {}
        self._full: dict[Edits, tuple] = {}
        self._duty: dict[tuple, dict | None] = {}
        #: (candidate, rules) -> verdicts of a rating-only candidate judged on an analysis already made
        self._rated: dict[tuple, dict | None] = {}
        #: (part kind, series) -> the largest member the rules could judge, as last found
        self.tops: dict[tuple, int] = {}
        self.evaluations = {"screen": 0, "full": 0}
        self._corners: dict | None = None

    def corners(self) -> dict:
        """The worst tolerance corner of each steady-state verdict of the drawing as given ((rule,
        subject) -> parameter key -> value), found once: candidates are judged at these corners (the
        full check of the result searches again). Empty where the drawing cannot be read or the
        search cannot be made (then no verdict is decided at a corner, as in the check)."""
        if self._corners is None:
            from coilstage.analysis.sensitivities import analyse_sensitivities
            from coilstage.checks.tolerance_corner import corners_of

            d = self.drawing({})
            try:
                self._corners = {} if d is None else corners_of(analyse_sensitivities(d))
            except (*_CANDIDATE_ERRORS, ValueError, KeyError):
                self._corners = {}
        return self._corners

    @staticmethod
    def key(edits: dict) -> Edits:
        return tuple(sorted(edits.items()))

    def render(self, edits: dict) -> str:
        doc = TomlText(self.text)
        for (i, k), v in sorted(edits.items()):
            if v is None:
                doc.delete("harness", i, k)
            else:
                doc.set("harness", i, k, v)
        return doc.text

    def drawing(self, edits: dict) -> Drawing | None:
        """The Drawing of a candidate, or None where the loader refuses it."""
        from coilstage.drawing.load import parse_data, parse_drawing
        from coilstage.errors import DrawingError

        k = self.key(edits)
        if k not in self._drawings:
            data = self._data(edits)
            try:
                if data is None:
                    self._drawings[k] = parse_drawing(self.render(edits), self.source, self.base_dir, self.parts_dirs)
                else:
                    self._drawings[k] = parse_data(data, self.source, self.base_dir, self.parts_dirs)
            except DrawingError:
                self._drawings[k] = None
        return self._drawings[k]

    def _data(self, edits: dict) -> dict | None:
        """The candidate as TOML data: the drawing's data read once, each edited key set to its value
        text read as TOML (what :meth:`render` writes, without writing and re-reading the whole
        text); None where the drawing's harness is not a plain list of tables."""
        if not hasattr(self, "_raw"):
            try:
                raw = tomllib.loads(self.text)
            except (tomllib.TOMLDecodeError, RecursionError):
                raw = None
            ok = raw is not None and isinstance(raw.get("harness"), list)
            self._raw = raw if ok and all(isinstance(e, dict) for e in raw["harness"]) else None
        if self._raw is None:
            return None
        harness = list(self._raw["harness"])
        for (i, key), value in edits.items():
            if not 0 <= i < len(harness):
                return None
            e = dict(harness[i])
            if value is None:
                e.pop(key, None)
            else:
                try:
                    e[key] = tomllib.loads(f"x = {value}")["x"]
                except tomllib.TOMLDecodeError:
                    return None
            harness[i] = e
        return {**self._raw, "harness": harness}

    def _kind(self, index: int) -> str | None:
        """The kind of harness element ``index`` as written (None where the harness cannot be read)."""
        if self._data({}) is None:
            return None
        harness = self._raw["harness"]
        return harness[index].get("kind") if 0 <= index < len(harness) else None

    def rated(self, edits: dict, rules: tuple[str, ...] = ()) -> dict | None:
        """Verdicts by (rule, subject) of the rules whose ids start with one of ``rules`` (all when
        empty) for a candidate that differs from a drawing already checked in full only in keys of
        :data:`RATING_KEYS`: that check's analysis with the candidate drawing in its place and every
        figure made from a rating made again (``analysis.run.rerated``; tests/test_rerated.py holds it
        equal to a fresh analysis for each kind of key). These are the full check's verdicts (the duty
        rules included), not a screen's. None where no such check is at hand (then the caller
        analyses the candidate)."""
        from coilstage.analysis.run import rerated
        from coilstage.checks import RULES, with_worst_corners

        rest = {k: v for k, v in edits.items() if k[1] not in RATING_KEYS.get(self._kind(k[0]) or "", ())}
        if len(rest) == len(edits):
            return None
        r = self._full.get(self.key(rest))
        if r is None:
            return None
        key = (self.key(edits), rules)
        if key not in self._rated:
            d = self.drawing(edits)
            out = None
            if d is not None:
                try:
                    a = rerated(r[0], d)
                    out = _by_key(
                        with_worst_corners(
                            a,
                            [v for rule in RULES if not rules or rule.id.startswith(rules) for v in rule.evaluate(a)],
                            self.corners(),
                        )
                    )
                except _CANDIDATE_ERRORS:
                    out = None
            self._rated[key] = out
            self.evaluations["screen"] += 1
        return self._rated[key]

    def screen(self, edits: dict, switching: bool = True, rules: tuple[str, ...] = ()) -> dict | None:
        """Verdicts by (rule, subject) of the screening analysis (no duty simulation; with
        ``switching`` False no switching analysis either), of the rules whose ids start with one of
        ``rules`` (all when empty). The rules the screen leaves out are dropped, not counted as
        passing: the full check decides them."""
        k = self.key(edits)
        if k in self._full:
            r = self._full[k]
            return None if r is None else r[1]
        got = self.rated(edits, rules)
        if got is not None:
            return got
        for level in (True,) if switching else (False, True):
            for rs in {rules, ()}:
                if (k, level, rs) in self._fast:
                    return self._fast[(k, level, rs)]
        d = self.drawing(edits)
        if d is None:
            self._fast[(k, switching, rules)] = None
            return None
        skipped = _heating_rules() + (() if switching else _SWITCHING_RULES)
        try:
            vs = _by_key(_screen_verdicts(d, switching, rules, self.corners()))
        except _CANDIDATE_ERRORS:
            # a candidate the rules cannot judge (a figure out of range) is never one that passes
            self._fast[(k, switching, rules)] = None
            self.evaluations["screen"] += 1
            return None
        self._fast[(k, switching, rules)] = {
            key: v for key, v in vs.items() if not (key[0] in skipped and _status(v) == "not checked")
        }
        self.evaluations["screen"] += 1
        return self._fast[(k, switching, rules)]

    def full(self, edits: dict) -> tuple | None:
        """(analysis, verdicts by (rule, subject)) of the full check."""
        import coilstage

        k = self.key(edits)
        if k not in self._full:
            d = self.drawing(edits)
            if d is None:
                self._full[k] = None
            else:
                try:
                    a, v = coilstage.check(d)
                    self._full[k] = (a, _by_key(v), v)
                except _CANDIDATE_ERRORS:
                    self._full[k] = None
            self.evaluations["full"] += 1
        r = self._full[k]
        return None if r is None else r

    def duty(self, edits: dict, rules: tuple[str, ...]) -> dict | None:
        """Verdicts by (rule, subject) of the rules whose ids start with one of ``rules``, on the full
        analysis (the duty simulation included): what the full check says of them, without the rules
        of the parts sizing does not change (the coils' time to their limit is most of a check)."""
        k = self.key(edits)
        if k in self._full:
            r = self._full[k]
            return None if r is None else r[1]
        got = self.rated(edits, rules)
        if got is not None:
            return got
        if (k, rules) not in self._duty:
            d = self.drawing(edits)
            out = None
            if d is not None:
                from coilstage.checks import RULES, with_worst_corners

                try:
                    a = duty_analysis(d, rules)
                    out = _by_key(
                        with_worst_corners(
                            a,
                            [v for rule in RULES if rule.id.startswith(rules) for v in rule.evaluate(a)],
                            self.corners(),
                        )
                    )
                except _CANDIDATE_ERRORS:
                    out = None
            self._duty[(k, rules)] = out
            self.evaluations["full"] += 1
        return self._duty[(k, rules)]


#: the rules that read the simulation of continuous full retardation (``Analysis.continuous``); the
#: other rules read the duty profile's simulation (``Analysis.descent``) at most
_CONTINUOUS_RULES = ("winding.time_to_limit",)


def duty_analysis(d: Drawing, rules: tuple[str, ...] = ()) -> Analysis:
    """The full analysis of ``d`` as far as the rules whose ids start with one of ``rules`` read it (all
    when empty): where none of them reads the simulation of continuous full retardation, that
    simulation (half the cost of a full analysis) is left out (``continuous`` is None) and every other
    field is what :func:`coilstage.analysis.run.analyse` makes; tests/test_sizing.py holds the verdicts
    of those rules equal to the ones on a fresh full analysis."""
    from coilstage.analysis.run import analyse

    if not rules or any(r.startswith(rules) for r in _CONTINUOUS_RULES) or d.duty is None:
        return analyse(d, duty_nominal=False)  # sizing reads the statuses: no nominal simulations
    from coilstage.analysis.duty import simulate

    return replace(analyse(d, heating=False), descent=simulate(d))


def _by_key(verdicts) -> dict:
    return {(v.rule, v.subject): v for v in verdicts}


def _screen_verdicts(d, switching: bool = True, rules: tuple[str, ...] = (), corners: dict | None = None) -> list:
    """The rules (ids starting with one of ``rules``; all when empty) on an analysis without the
    duty simulation, the steady-state ones decided at the worst corner of the declared tolerances
    as the check decides them; falls back to the full check where the analysis cannot be asked for
    less."""
    from coilstage.checks import RULES, with_worst_corners

    try:
        from coilstage.analysis.run import analyse

        # no rule reads the transients (tests/test_effects.py holds it on the demos): left out
        a = analyse(d, switching=switching, heating=False, transients=False)
    except (ImportError, TypeError):  # the analysis no longer offers the lighter call: the full check
        import coilstage

        return coilstage.check(d)[1]
    return with_worst_corners(
        a, [v for rule in RULES if not rules or rule.id.startswith(rules) for v in rule.evaluate(a)], corners
    )


# ---------------------------------------------------------------- the parts and their verdicts


def _reach(d, skip: set[str]) -> tuple[set[str], set[str]]:
    """Nodes joined to the battery's positive and to its negative without the elements in ``skip``
    (stages never conduct for this purpose): :class:`coilstage.graph.Graph`, the walk the loader and
    the analysis's topology ask."""
    from coilstage.drawing.schema import Stage
    from coilstage.graph import Graph

    g = Graph((e.a, e.b, e.id) for e in d.elements if not isinstance(e, Stage))
    return g.reachable(d.supply.battery.node, avoid_edges=skip), g.reachable(d.supply.negative_node, avoid_edges=skip)


def fed_stages(d: Drawing, element_id: str) -> list[str]:
    """Stages that lose their supply or return when ``element_id`` is taken out."""
    pos, neg = _reach(d, set())
    pos2, neg2 = _reach(d, {element_id})
    return [s.id for s in d.stages if s.a in pos and s.b in neg and not (s.a in pos2 and s.b in neg2)]


def upstream_of(d: Drawing, element_id: str, kind: type) -> list[str]:
    """Devices of ``kind`` whose opening cuts ``element_id`` off the battery."""
    by_id = {e.id: e for e in d.elements}
    el = by_id[element_id]
    out = []
    for f in d.of_kind(kind):
        if f.id == element_id:
            continue
        pos, _ = _reach(d, {f.id})
        if el.a not in pos and el.b not in pos:
            out.append(f.id)
    return out


@dataclass(frozen=True)
class Part:
    id: str
    kind: str  # cable | fuse | relay | suppressor
    index: int  # harness index
    key: str  # TOML key sizing sets
    series: tuple[str, ...]  # candidate values (TOML text), smallest first
    labels: tuple[str, ...]  # the same, as the report shows them
    today: str  # present value, as the report shows it
    today_pos: float  # position of today's value in the series (fractional where between)
    rules: tuple[str, ...]  # rule-id prefixes that decide about the part
    subjects: frozenset[str]  # subject tokens that decide about the part
    note_subject: frozenset[str] = frozenset()  # subjects whose verdicts count when their note names the part


def _position(values: list[float], x: float) -> float:
    for k, v in enumerate(values):
        if math.isclose(v, x, rel_tol=1e-9):
            return float(k)
        if v > x:
            return k - 0.5
    return len(values) - 0.5


def _library_series(d, where: str) -> list[float]:
    """The ratings [A] a fuse's library part comes in (its ``series`` in the parts library), where the
    drawing took the fuse from a library that gives one; sizing then chooses among the maker's own
    ratings instead of the type's standard series. Empty where there is none."""
    from coilstage.units import parse_quantity

    for rec in getattr(d, "provenance", ()):
        if rec.where == where and getattr(rec, "series", ()):
            try:
                return sorted(parse_quantity(x, "current") for x in rec.series)
            except Exception:  # a library checked on reading; a bad row is no series
                return []
    return []


def parts_of(d: Drawing, prepared: Prepared | None = None, text: str | None = None) -> list[Part]:
    """The parts of a drawing that sizing can change, each with its series."""
    from coilstage import tables
    from coilstage.drawing.schema import Cable, Fuse, Relay
    from coilstage.units import awg_label

    out: list[Part] = []
    raw = tomllib.loads(prepared.loadable if prepared else text) if (prepared or text) else {}
    harness = raw.get("harness") or []
    default_mm2 = (raw.get("tables") or {}).get("conductors", tables.DEFAULT_MM2_TABLE)
    for e in d.elements:
        m = re.match(r"harness\[(\d+)\]", e.where)
        if not m:
            continue
        i = int(m.group(1))
        entry = harness[i] if i < len(harness) else {}
        if isinstance(e, Cable):
            name = entry.get("conductor_table", tables.DEFAULT_AWG_TABLE if e.awg is not None else default_mm2)
            try:
                table = tables.conductor_table(name)
            except Exception:
                continue
            nominal = sorted(table.rows, key=lambda n: table.rows[n].area)
            areas = [table.rows[n].area for n in nominal]
            labels = [f"{n:g} mm²" if table.size_system == "mm2" else awg_label(int(n)) for n in nominal]
            out.append(
                Part(
                    e.id,
                    "cable",
                    i,
                    "size",
                    tuple(format_value(_size_text(lb)) for lb in labels),
                    tuple(labels),
                    e.size_label.replace("mm^2", "mm²"),
                    _position(areas, e.area),
                    ("cable.", "circuit.voltage_drop", "fuse."),
                    frozenset({e.id, *fed_stages(d, e.id)}),
                    frozenset(upstream_of(d, e.id, Fuse)),
                )
            )
        elif isinstance(e, Fuse):
            row = tables.fuse_types().get(e.fuse_type, {})
            ser = (
                _library_series(d, e.where)
                or list(e.series)
                or [v for v in standard_series("fuse_rating_without_series") if v <= row.get("max_rating", 1e9)]
            )
            out.append(
                Part(
                    e.id,
                    "fuse",
                    i,
                    "rating",
                    tuple(format_value(_qty(v, "A")) for v in ser),
                    tuple(_qty(v, "A") for v in ser),
                    _qty(e.rating, "A"),
                    _position(ser, e.rating),
                    ("fuse.",),
                    frozenset({e.id}),
                )
            )
        elif isinstance(e, Relay):
            system = d.supply.system_voltage
            key = f"rating_{system}v"
            ser = list(standard_series("relay_contact_rating"))
            have = e.rating_24v if system == 24 else e.rating_12v
            out.append(
                Part(
                    e.id,
                    "relay",
                    i,
                    key,
                    tuple(format_value(_qty(v, "A")) for v in ser),
                    tuple(_qty(v, "A") for v in ser),
                    "none" if have is None else _qty(have, "A"),
                    -1.0 if have is None else _position(ser, have),
                    ("relay.contact_rating",),
                    frozenset({e.id}),
                )
            )
    for s in d.stages:
        m = re.match(r"harness\[(\d+)\]", s.where)
        if m:
            relays = upstream_of(d, s.id, Relay)
            out.append(
                Part(
                    s.id,
                    "suppressor",
                    int(m.group(1)),
                    "suppression",
                    (),
                    (),
                    s.suppression.kind,
                    -1.0 if s.suppression.kind == "none" else 0.0,
                    ("suppressor.rating", "stage.release_time", "relay.inductive_break"),
                    frozenset({s.id, *relays}),
                )
            )
    return out


def involved(part: Part, verdicts: dict) -> dict:
    """The verdicts that decide about ``part``."""
    out = {}
    for k, v in verdicts.items():
        rule, subject = k
        if not rule.startswith(part.rules):
            continue
        toks = _tokens(subject)
        if part.kind == "suppressor" and rule == "relay.inductive_break":
            if toks & (part.subjects - {part.id}):
                out[k] = v
            continue
        if toks & part.subjects:
            out[k] = v
        elif part.note_subject and toks & part.note_subject and part.id in _tokens(v.note):
            out[k] = v
    return out


# ---------------------------------------------------------------- suggestions


@dataclass(frozen=True)
class Finding:
    """One verdict a part fails: its rule, subject and status."""

    rule: str
    subject: str
    status: str
    note: str

    @classmethod
    def of(cls, v: Verdict) -> Finding:
        return cls(v.rule, v.subject, _status(v), v.note)

    def text(self) -> str:
        return f"{self.rule} {self.subject} ({self.status})"


@dataclass(frozen=True)
class Suggestion:
    """What would pass for one part, checked against the rules."""

    part: str
    kind: str  # cable | fuse | relay | suppressor
    key: str  # TOML key of the part
    today: str
    suggested: str | None  # value that passes, as shown (None: no value of the series passes)
    value_text: str | None  # the same as TOML text
    smaller: str | None  # next smaller standard part
    smaller_fails: tuple[Finding, ...]  # what the next smaller part fails
    answers: tuple[tuple[str, str], ...]  # (rule, subject) of the verdicts the suggestion clears
    blocked: tuple[Finding, ...]  # verdicts this part alone cannot clear
    checked: bool  # the suggested part passed the full check
    text: str  # one line for the action list
    fits: tuple[str, ...] = ()  # fuses: standard ratings of the type that pass
    needs: tuple[str, ...] = ()  # further requirements (breaking capacity, voltage rating, DC category ...)
    missing: tuple[str, ...] = ()  # data to give before the part can be judged
    edits: tuple = ()  # ((harness index, key), TOML text) that make the suggestion
    #: ((rule, subject), rank) the suggested part must reach on each verdict it takes part in (see
    #: :func:`rank`): a pass, or the best any member of its series reaches where none passes
    targets: tuple = ()

    def to_dict(self) -> dict:
        return {
            "part": self.part,
            "kind": self.kind,
            "key": self.key,
            "today": self.today,
            "suggested": self.suggested,
            "next_smaller": self.smaller,
            "next_smaller_fails": [f.text() for f in self.smaller_fails],
            "blocked": [f.text() for f in self.blocked],
            "fits": list(self.fits),
            "needs": list(self.needs),
            "missing": list(self.missing),
            "checked": self.checked,
            "text": self.text,
        }


def _failing(inv: dict) -> list:
    """The verdicts that fail or warn (a verdict not checked for missing data is listed apart)."""
    return [v for v in inv.values() if rank(v) < 1.5]


def _bad(inv: dict, targets: dict) -> list:
    return [v for k, v in inv.items() if rank(v) < targets.get(k, 2)]


def _switching_for(part: Part) -> bool:
    """Cables and relay contacts are screened without the switching analysis (no rule of theirs
    reads it but the fuse's switch-on gate, which the full check then confirms)."""
    return part.kind in ("fuse", "suppressor")


def _verdicts(bench: Bench, part: Part, edits: dict, full: bool = False) -> dict | None:
    """The verdicts of a candidate: the screen, or with ``full`` the part's rules on the full analysis
    (the duty simulation included) unless :func:`_duty_holds` shows the duty rules need no new run.
    A rating that enters no network is judged on the analysis already made (:meth:`Bench.rated`)."""
    if full:
        if _duty_holds(bench, part, edits):
            return bench.screen(edits, switching=_switching_for(part), rules=part.rules)
        return bench.duty(edits, part.rules)
    return bench.screen(edits, switching=_switching_for(part), rules=part.rules)


def candidate_verdicts(bench: Bench, part: Part, edits: dict) -> dict | None:
    """The verdicts by (rule, subject) sizing judges ``part`` by for the candidate ``edits`` (the
    screen, or a relay's contact rating on the analysis already made); None where the candidate
    cannot be read or judged."""
    return _verdicts(bench, part, edits)


def _duty_holds(bench: Bench, part: Part, edits: dict) -> bool:
    """True where the duty verdicts of ``part`` are known to pass for the candidate ``edits`` without
    simulating the duty again: the drawing without this part's edits was checked in full (the check
    already made), every duty verdict the part takes part in passed there, and the candidate only
    makes the part larger along its series (same insulation or a higher class). A larger conductor
    has less resistance per metre and more copper to heat (its temperature over the duty falls); a
    higher fuse rating takes a larger melting I²t (its thermal state falls). The current the larger
    part lets through rises by the part's own share of the circuit resistance only, which is what
    the screen's steady-state rules (ampacity, continuous duty) judge at the largest current."""
    if part.kind not in ("cable", "fuse"):
        return False
    value = edits.get((part.index, part.key))
    if value is None or value not in part.series or part.series.index(value) < part.today_pos:
        return False
    rest = {k: v for k, v in edits.items() if k[0] != part.index}
    if any(k[0] == part.index and k[1] not in (part.key, "insulation") for k in edits):
        return False
    today = bench._full.get(bench.key(rest))
    if today is None:
        return False
    duty = [v for k, v in involved(part, today[1]).items() if k[0] in _heating_rules()]
    return all(rank(v) >= 2 for v in duty)


def _ok(bench: Bench, part: Part, edits: dict, targets: dict, full: bool = False) -> tuple[bool, list]:
    vs = _verdicts(bench, part, edits, full)
    if vs is None:
        return False, []
    bad = _bad(involved(part, vs), targets)
    return not bad, bad


def _with(base: dict, *pairs) -> dict:
    c = dict(base)
    for k, v in pairs:
        c[k] = v
    return c


@dataclass
class _Boundary:
    index: int | None  # smallest passing member of the series
    targets: dict
    blocked: tuple  # verdicts no member clears
    smaller_fails: tuple  # what the member below the boundary fails
    checked: bool  # passed the full check
    improves: bool  # the series' largest member does better than today on some verdict


def _smallest(bench: Bench, part: Part, base: dict, series: tuple[str, ...], key: str | None = None) -> _Boundary:
    """The smallest member of ``series`` clearing every verdict of ``part`` that its largest member
    clears: bisection on the screen, then the full check (cables and fuses take part in duty rules),
    stepping up while it fails."""
    key = key or part.key
    today = _verdicts(bench, part, base) or {}
    inv_today = involved(part, today)
    if key == part.key and series == part.series and part.kind == "relay":
        found = _gallop(bench, part, base, inv_today)
        if found is not None:
            return found
    series = series[: _top(bench, part, base, series, key, inv_today) + 1]
    vs = _verdicts(bench, part, _with(base, ((part.index, key), series[-1])))
    if vs is None:
        return _Boundary(None, {}, (), (), False, False)
    inv = involved(part, vs)
    # the targets: the better of today and the largest member the rules can judge (the series is cut
    # at the end of the tables the rules rest on, by :func:`_top`, so its largest member is a reference)
    targets = {k: rank(v) for k, v in inv.items()}
    for k, v in inv_today.items():
        if k in targets:
            targets[k] = max(targets[k], rank(v))
    blocked = tuple(Finding.of(inv[k]) for k in inv if targets[k] < 1.5)  # not checked: missing data, listed apart
    improves = any(targets[k] > rank(v) for k, v in inv_today.items() if k in targets) or any(
        rank(v) < 2 for k, v in inv_today.items() if k not in targets
    )
    if not improves and not _bad(inv_today, targets):
        return _Boundary(None, targets, blocked, (), False, False)

    def cand(j: int) -> dict:
        return _with(base, ((part.index, key), series[j]))

    lo, hi = -1, len(series) - 1  # lo = -1 stands for "below the series"
    if key == part.key and series == part.series[: len(series)] and _bad(inv_today, targets):
        # today fails a target: no smaller member clears it (a smaller conductor or rating never
        # passes what a larger one fails), so the search starts at today
        lo = min(math.floor(part.today_pos), hi - 1)
    if not _ok(bench, part, cand(hi), targets)[0]:  # the best was reached lower down: not monotone
        hi = next((j for j in range(len(series)) if _ok(bench, part, cand(j), targets)[0]), hi)
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if _ok(bench, part, cand(mid), targets)[0]:
            hi = mid
        else:
            lo = mid
    j = hi
    full = part.kind in ("cable", "fuse")
    ok_full = _ok(bench, part, cand(j), targets, full=full)[0]
    if not ok_full:  # a duty rule fails: bisection on the full check above the screen's answer
        top_j = len(series) - 1
        if not _ok(bench, part, cand(top_j), targets, full=True)[0]:
            return _Boundary(None, targets, blocked, (), False, improves)
        lo2, hi2 = j, top_j
        while hi2 - lo2 > 1:
            mid = (lo2 + hi2) // 2
            lo2, hi2 = (lo2, mid) if _ok(bench, part, cand(mid), targets, full=True)[0] else (mid, hi2)
        j = hi2
    smaller: tuple = ()
    if j > 0:
        ok_s, bad = _ok(bench, part, cand(j - 1), targets)
        if ok_s and full:
            ok_s, bad = _ok(bench, part, cand(j - 1), targets, full=True)
        smaller = tuple(Finding.of(v) for v in bad)
        if ok_s:  # not monotone here: say so rather than claim the boundary
            smaller = (Finding("(none)", part.id, "pass", "the next smaller part also passes"),)
    return _Boundary(j, targets, blocked, smaller, True, improves)


def _gallop(bench: Bench, part: Part, base: dict, inv_today: dict) -> _Boundary | None:
    """The boundary of :func:`_smallest` found from today's position up, where a member above today
    passes every verdict the part takes part in: members today + 1, + 2, + 4, … until one passes,
    then bisection between the last that failed and it. A member that passes everything reaches
    every target a reference member could set (a target is at most a pass), so the references
    (the largest member the rules can judge) are not needed:
    the targets are a pass on every verdict of the part. Today failing and the member below the
    boundary failing are what prove it, as in :func:`_smallest`; the series is taken to be monotone
    above today (a larger conductor or contact rating never fails what a smaller one passes). None
    (then :func:`_smallest` searches the whole series as before) where today passes what it takes
    part in, no member above today passes everything on the screen, or the boundary fails the full
    check."""
    if not inv_today or all(rank(v) >= 2 for v in inv_today.values()):
        return None
    series = part.series
    n = len(series) - 1
    start = max(math.floor(part.today_pos) + 1, 0)
    if start > n:
        return None

    def cand(j: int) -> dict:
        return _with(base, ((part.index, part.key), series[j]))

    def passes(j: int) -> dict | None:
        vs = _verdicts(bench, part, cand(j))
        inv = {} if vs is None else involved(part, vs)
        return inv if inv and all(rank(v) >= 2 for v in inv.values()) else None

    lo, hi, step, j = start - 1, None, 1, start  # lo: the last member known (or taken) to fail
    while hi is None:
        inv = passes(j)
        if inv is not None:
            hi = j
        elif j == n:
            return None
        else:
            lo, j, step = j, min(j + step, n), 2 * step
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if passes(mid) is not None:
            hi = mid
        else:
            lo = mid
    j = hi
    inv = passes(j) or {}
    targets = {k: rank(v) for k, v in inv.items()}
    full = part.kind in ("cable", "fuse")
    if not _ok(bench, part, cand(j), targets, full=full)[0]:
        return None
    smaller: tuple = ()
    if j > 0:
        ok_s, bad = _ok(bench, part, cand(j - 1), targets)
        if ok_s and full:
            ok_s, bad = _ok(bench, part, cand(j - 1), targets, full=True)
        smaller = tuple(Finding.of(v) for v in bad)
        if ok_s:  # not monotone here: say so rather than claim the boundary
            smaller = (Finding("(none)", part.id, "pass", "the next smaller part also passes"),)
    return _Boundary(j, targets, (), smaller, True, True)


def _top(bench: Bench, part: Part, base: dict, series: tuple[str, ...], key: str, inv_today: dict) -> int:
    """The largest member of ``series`` that the rules can still judge: a part beyond the end of a
    table the rules rest on (a conductor above the largest size of the ampacity table) turns a
    verdict into NOT_CHECKED, and sizing never suggests what cannot be checked. The unjudgeable
    members form the top of the series; bisection finds where they start."""

    def judged(j: int) -> bool:
        vs = _verdicts(bench, part, _with(base, ((part.index, key), series[j])))
        if vs is None:
            return False
        return not any(
            _status(v) == "not checked" and (k not in inv_today or _status(inv_today[k]) != "not checked")
            for k, v in involved(part, vs).items()
        )

    n = len(series) - 1
    known = bench.tops.get((part.kind, series))
    if known is not None and 0 <= known < n and judged(known) and not judged(known + 1):
        # where another part of the same series found the table's end, two judgements confirm it
        return known
    if judged(n):
        return n
    lo, hi = -1, n  # hi: not judged
    while hi - lo > 1:
        mid = (lo + hi) // 2
        lo, hi = (mid, hi) if judged(mid) else (lo, mid)
    bench.tops[(part.kind, series)] = max(lo, 0)
    return max(lo, 0)


def _blocked_text(blocked) -> str:
    if not blocked:
        return ""
    names = sorted({f"{b.rule} {b.subject}" for b in blocked})
    return "; alone it cannot clear " + ", ".join(names)


def suggest_part(bench: Bench, part: Part, base: dict | None = None) -> Suggestion | None:
    """What would pass for one part with every other part as in ``base`` (edits to the drawing);
    None where the part cannot improve any verdict it takes part in."""
    base = dict(base or {})
    if part.kind in ("cable", "relay"):
        return _suggest_series(bench, part, base)
    if part.kind == "fuse":
        return _suggest_fuse(bench, part, base)
    return _suggest_suppressor(bench, part, base)


def _relay_needs(bench: Bench, part: Part, base: dict) -> tuple[list[str], tuple[str, ...]]:
    needs: list[str] = []
    missing: tuple[str, ...] = ()
    vs = bench.screen(base) or {}
    for (rule, subj), v in vs.items():
        if subj != part.id:
            continue
        if rule == "relay.contact_rating" and "no derating given" in v.note:
            missing += (f"give the derating (or the rated ambient) of {part.id}'s contact for its zone",)
        if rule == "relay.voltage_rating" and _status(v) == "not checked":
            missing += (f"give the voltage rating of {part.id}",)
        if rule == "relay.coil_pickup":
            if _status(v) == "not checked":
                missing += (f"give the coil data of {part.id} (voltage, resistance, operate_voltage)",)
            elif v.limit is not None and rank(v) < 2:
                needs.append(
                    f"a coil that operates at {v.value / 1.1:.2f} V or less hot (it gets {v.value:.2f} V; 110 % margin)"
                )
        if rule == "relay.inductive_break" and rank(v) < 2 and v.limit is not None:
            needs.append(f"a DC category or inductive break rating for L/R {v.value:.0f} ms, or suppression")
        if rule == "relay.inductive_break" and _status(v) == "not checked" and "voltage_rating" in v.note:
            missing += (f"give the voltage rating of {part.id} (the suppressed break needs it)",)
    return needs, missing


def _insulation(bench: Bench, part: Part, base: dict) -> tuple[dict, str | None]:
    """Where the cable's temperature class fails at every size: the lowest ISO 6722 class that passes
    it, as an edit (sizing changes the class as well as the size)."""
    from coilstage import tables

    inv_today = involved(part, bench.screen(base, switching=False, rules=part.rules) or {})
    k = ("cable.temperature_class", part.id)
    ka = ("cable.ampacity", part.id)
    if k not in inv_today or rank(inv_today[k]) >= 2:
        # the class passes at today's size: a larger conductor heats itself less, so it passes there too
        return base, None
    top = _with(base, ((part.index, part.key), part.series[_top(bench, part, base, part.series, part.key, inv_today)]))
    inv = involved(part, bench.screen(top, switching=False, rules=part.rules) or {})
    if k not in inv or rank(inv[k]) >= 2:
        return base, None
    # the lowest class that passes the class rule, and if one does, the lowest that also leaves the
    # largest size an ampacity that passes (a hot zone eats the ampacity of a low class)
    first = None
    for letter, _tmax in sorted(tables.cable_classes().items(), key=lambda kv: kv[1]):
        c = _with(top, ((part.index, "insulation"), format_value(letter)))
        got = involved(part, bench.screen(c, switching=False, rules=part.rules) or {})
        v = got.get(k)
        if v is not None and rank(v) >= 2:
            first = first or letter
            if ka not in got or rank(got[ka]) >= 2:
                return _with(base, ((part.index, "insulation"), format_value(letter))), letter
    if first is None:
        return base, None
    return _with(base, ((part.index, "insulation"), format_value(first))), first


def _suggest_series(bench: Bench, part: Part, base: dict) -> Suggestion | None:
    if part.kind == "relay":
        needs, missing = _relay_needs(bench, part, base)
    extra: tuple = ()
    letter = None
    if part.kind == "cable":
        base2, letter = _insulation(bench, part, base)
        if letter is not None:
            extra = (((part.index, "insulation"), format_value(letter)),)
            base = base2
    bd = _smallest(bench, part, base, part.series)
    if part.kind != "relay":
        needs, missing = [], ()
    if not bd.improves and letter is None and (bd.index is None or bd.index <= part.today_pos):
        if not missing:
            return None
        return Suggestion(
            part.id,
            part.kind,
            part.key,
            part.today,
            None,
            None,
            None,
            (),
            (),
            bd.blocked,
            False,
            f"{part.today} is enough for what it can clear" + _blocked_text(bd.blocked),
            needs=tuple(needs),
            missing=missing,
        )
    if bd.index is None:
        text = f"no {part.key} of the series passes" + _blocked_text(bd.blocked)
        if letter is not None:
            text = f"use ISO 6722 class {letter} insulation; then {text}"
        return Suggestion(
            part.id,
            part.kind,
            part.key,
            part.today,
            None,
            None,
            None,
            (),
            tuple(bd.targets),
            bd.blocked,
            False,
            text,
            needs=tuple(needs),
            missing=missing,
            edits=extra,
            targets=tuple(bd.targets.items()),
        )
    j = bd.index
    label = part.labels[j]
    if part.kind == "cable":
        text = f"use {label} or larger (today {part.today})"
        if letter is not None:
            text = f"use ISO 6722 class {letter} insulation and {label} or larger (today {part.today})"
    else:
        text = f"a contact rated {label} or more at {part.key[7:-1]} V (today {part.today})"
    if j <= part.today_pos:
        text = f"{part.today} is enough for what it can clear"
    text += _blocked_text(bd.blocked)
    if needs:
        text += "; also " + "; ".join(needs)
    return Suggestion(
        part.id,
        part.kind,
        part.key,
        part.today,
        label,
        part.series[j],
        part.labels[j - 1] if j > 0 else None,
        bd.smaller_fails,
        tuple(bd.targets),
        bd.blocked,
        bd.checked,
        text,
        needs=tuple(needs),
        missing=missing,
        edits=(*extra, ((part.index, part.key), part.series[j])),
        targets=tuple(bd.targets.items()),
    )


# ---- fuses

_TYPE_RULES = ("fuse.breaking_capacity", "fuse.voltage_rating")


@dataclass
class _Window:
    ok: list[int]  # indices of the ratings that pass
    floor_at: int | None  # lowest index passing the floor rules (None: none does)
    ceil_at: int | None  # highest index passing the ceiling rules (None: none does)
    floor_rules: set
    ceil_rules: set
    type_needs: list
    missing: list
    below: tuple  # what the rating below the window fails
    above: tuple  # what the rating above the window fails


def _window(bench: Bench, part: Part, base: dict, series: tuple[str, ...], extra: tuple = ()) -> _Window:
    """The ratings of ``series`` that pass every rating-dependent fuse verdict; the floor and ceiling
    rules are told apart by their margins at the two ends, then each bound is found by bisection
    (a floor rule passes from some rating up, a ceiling rule up to some rating)."""

    def inv(j: int) -> dict:
        vs = bench.screen(_with(base, ((part.index, part.key), series[j]), *extra), switching=False, rules=part.rules)
        return {} if vs is None else involved(part, vs)

    bot, top = inv(0), inv(len(series) - 1)
    keys = set(bot) | set(top)
    type_needs, missing = [], []
    floor_rules, ceil_rules = set(), set()
    for k in sorted(keys):  # in a fixed order: the needs and missing data are listed in it
        v_top, v_bot = top.get(k), bot.get(k)
        v = v_top or v_bot
        if k[0] in _TYPE_RULES:
            if rank(v) < 2 and _status(v) != "not checked":
                if k[0] == "fuse.breaking_capacity":
                    type_needs.append(
                        (
                            "breaking",
                            v.value,
                            f"breaking capacity at least {v.value / 1e3:.2f} kA (today {v.limit / 1e3:.2f} kA)",
                        )
                    )
                elif _status(v) == "warn":  # rated exactly at the highest bus: no headroom
                    words = f"voltage rating above {v.limit:g} V (the next rated voltage up)"
                    type_needs.append(("voltage", v.limit, words))
                else:
                    type_needs.append(("voltage", v.limit, f"voltage rating at least {v.limit:g} V"))
            elif _status(v) == "not checked" and k[0] == "fuse.breaking_capacity":
                missing.append(f"give the maker's breaking capacity for {part.id}")
            continue
        if all(x is not None and _status(x) == "not checked" for x in (v_top, v_bot)) and "given" in v.note:
            if "melting_i2t" in v.note:
                missing.append(f"give the maker's melting I²t for {part.id}")
            continue
        if v_top is not None and rank(v_top) >= 2:
            floor_rules.add(k)
        elif v_bot is not None and rank(v_bot) >= 2:
            ceil_rules.add(k)
        elif v_top is not None and v_bot is not None and (v_top.margin or 0) >= (v_bot.margin or 0):
            floor_rules.add(k)
        else:
            ceil_rules.add(k)

    def passes(j: int, rules: set) -> bool:
        i = inv(j)
        return all(rank(i[k]) >= 2 for k in rules if k in i)

    n = len(series)
    floor_at = None
    if passes(n - 1, floor_rules):
        lo, hi = -1, n - 1
        while hi - lo > 1:
            mid = (lo + hi) // 2
            lo, hi = (lo, mid) if passes(mid, floor_rules) else (mid, hi)
        floor_at = hi
    ceil_at = None
    if passes(0, ceil_rules):
        lo, hi = 0, n
        while hi - lo > 1:
            mid = (lo + hi) // 2
            lo, hi = (mid, hi) if passes(mid, ceil_rules) else (lo, mid)
        ceil_at = lo
    ok = [] if floor_at is None or ceil_at is None or floor_at > ceil_at else list(range(floor_at, ceil_at + 1))
    ok = [j for j in ok if passes(j, floor_rules | ceil_rules)]
    below = above = ()
    if floor_at is not None and floor_at > 0:
        i = inv(floor_at - 1)
        below = tuple(Finding.of(i[k]) for k in sorted(floor_rules) if k in i and rank(i[k]) < 2)
    elif floor_at is None:
        below = tuple(Finding.of(top[k]) for k in sorted(floor_rules) if k in top and rank(top[k]) < 2)
    if ceil_at is not None and ceil_at + 1 < n:
        i = inv(ceil_at + 1)
        above = tuple(Finding.of(i[k]) for k in sorted(ceil_rules) if k in i and rank(i[k]) < 2)
    elif ceil_at is None:
        above = tuple(Finding.of(bot[k]) for k in sorted(ceil_rules) if k in bot and rank(bot[k]) < 2)
    return _Window(
        ok, floor_at, ceil_at, floor_rules, ceil_rules, type_needs, list(dict.fromkeys(missing)), below, above
    )


def _fuse_series(fuse_type: str) -> tuple[float, ...]:
    from coilstage import tables

    row = tables.fuse_types().get(fuse_type, {})
    top = row.get("max_rating", 1e9)
    ser = row.get("series") or [v for v in standard_series("fuse_rating_without_series") if v <= top]
    return tuple(float(v) for v in ser)


def _span(labels: list[str]) -> str:
    if len(labels) == 1:
        return labels[0]
    return f"{labels[0].removesuffix(' A')}–{labels[-1]}"


def _protected_cables(bench: Bench, part: Part, base: dict, fixed: set[str]) -> list[Part]:
    """The cables behind the fuse whose verdicts bound its ceiling (changeable ones)."""
    from coilstage.drawing.schema import Fuse

    d = bench.drawing(base)
    out = []
    for p in parts_of(d, None, bench.text):
        if p.kind == "cable" and p.id not in fixed and part.id in upstream_of(d, p.id, Fuse):
            out.append(p)
    return out


def _cable_for_window(bench, part, base, series, extra, cables) -> tuple | None:
    """The smallest size of one protected cable that opens a window for the fuse: (cable part, size
    index, window)."""
    best = None
    for c in cables:
        start = math.floor(c.today_pos) + 1
        c_today = involved(c, _verdicts(bench, c, _with(base, *extra)) or {})
        cand = list(range(max(start, 0), _top(bench, c, _with(base, *extra), c.series, c.key, c_today) + 1))
        if not cand:
            continue

        def win(j, c=c):
            return _window(bench, part, base, series, (*extra, ((c.index, c.key), c.series[j])))

        w_top = win(cand[-1])
        if not w_top.ok:
            continue
        # the floor rules hardly move with the cable (the load decides them): a window exists at a
        # size when the lowest rating of the largest size's window passes there; bisection on that,
        # then the whole window at the size found
        r0 = series[w_top.ok[0]]

        def opens(j, c=c, r0=r0, w_top=w_top):
            vs = bench.screen(
                _with(base, ((part.index, part.key), r0), *extra, ((c.index, c.key), c.series[j])),
                switching=False,
                rules=part.rules,
            )
            inv = {} if vs is None else involved(part, vs)
            return all(rank(inv[k]) >= 2 for k in (w_top.floor_rules | w_top.ceil_rules) if k in inv)

        lo, hi = -1, len(cand) - 1
        while hi - lo > 1:
            mid = (lo + hi) // 2
            lo, hi = (lo, mid) if opens(cand[mid]) else (mid, hi)
        j = cand[hi]
        if not win(j).ok:
            j = cand[-1]
        if best is None or c.series.index(c.series[j]) < best[1]:
            best = (c, j, win(j))
    return best


def _suggest_fuse(bench: Bench, part: Part, base: dict, fixed: set[str] | None = None) -> Suggestion | None:
    """The window of standard ratings that passes; where none does, which type or which cable change
    makes one."""
    from coilstage import tables

    fixed = fixed or set()
    d = bench.drawing(base)
    ftype = _fuse_type(d, part.id)
    w = _window(bench, part, base, part.series)
    needs = [t for _, _, t in w.type_needs]
    edits: tuple = ()
    text = ""
    suggested = value_text = smaller = None
    fits: tuple[str, ...] = ()
    checked = False
    if w.ok and not w.type_needs:
        fits = tuple(part.labels[j] for j in w.ok)
        lo = w.ok[0]
        # the duty rules: the lowest of the window, stepping up on the full check
        j_ok = None
        for j in w.ok:
            r = _verdicts(bench, part, _with(base, ((part.index, part.key), part.series[j])), full=True)
            if r is not None and not _failing(involved(part, r)):
                j_ok = j
                break
        checked = j_ok is not None
        lo = j_ok if j_ok is not None else lo
        fits = tuple(part.labels[j] for j in w.ok if j >= lo)
        suggested, value_text = part.labels[lo], part.series[lo]
        smaller = part.labels[lo - 1] if lo > 0 else None
        if part.labels[lo] != part.today and part.today in fits:
            text = f"{part.today} fits (window {_span(list(fits))})"
        else:
            text = f"fits {_span(list(fits))}, today {part.today}"
            edits = (((part.index, part.key), value_text),)
        if not checked:
            text += " (the duty simulation fails every rating of the window: see fuse.duty_thermal_state)"
    else:
        low = f"at least {part.labels[w.floor_at]}" if w.floor_at is not None else f"more than {part.labels[-1]}"
        high = f"at most {part.labels[w.ceil_at]}" if w.ceil_at is not None else f"less than {part.labels[0]}"
        if not w.ceil_rules:
            high = "no ceiling"
        why_lo = ", ".join(sorted({k[0] for k in w.floor_rules})) or "no floor"
        why_hi = ", ".join(sorted({k[0] for k in w.ceil_rules})) or "no ceiling"
        text = (
            f"no rating of type {ftype} fits: {low} ({why_lo}), {high}" + (f" ({why_hi})" if w.ceil_rules else "")
            if not w.ok
            else (f"ratings {_span([part.labels[j] for j in w.ok])} fit the cable and the load")
        )
        if needs:
            text += "; needs " + ", ".join(needs)
        # which type, and which cable change, makes a window
        # the cables that bound the ceiling: those the failing ceiling verdicts name
        named = set().union(*(_tokens(f.subject) | _tokens(f.note) for f in w.above)) if w.above else set()
        cables = [c for c in _protected_cables(bench, part, base, fixed) if c.id in named][:3]
        want_bc = max((x for k, x, _ in w.type_needs if k == "breaking"), default=0.0)
        want_v = max((x for k, x, _ in w.type_needs if k == "voltage"), default=0.0)
        options: list[tuple] = []
        if not w.type_needs and w.floor_at is not None and cables:
            got = _cable_for_window(bench, part, base, part.series, (), cables)
            if got:
                c, j, cw = got
                options.append((ftype, part.series, (), c, j, cw))
        cable_tries = 0
        # a rating passing the continuous rule is at least the current it carries: types rated below
        # it are not tried
        load = max(
            (v.value for k, v in _all_verdicts(bench, part, base).items() if k[0] == "fuse.continuous" and v.value),
            default=0.0,
        )
        if not options:
            for t, row in tables.fuse_types().items():
                if t == ftype or row["breaking_capacity"] < want_bc or max(row["voltages"]) < want_v:
                    continue
                if row.get("max_rating", 1e9) < load:
                    continue
                ser = _fuse_series(t)
                if not ser:
                    continue
                sv = tuple(format_value(_qty(v, "A")) for v in ser)
                extra = (((part.index, "type"), format_value(t)),)
                # the type rules (breaking capacity against the fault at the fuse, voltage rating
                # against the highest bus) do not depend on the rating: judged at the type's largest
                # rating (the window's first candidate, so the screen is shared), a type that still
                # fails them as the drawing states it (a voltage rating or breaking capacity of its
                # own) opens no window that answers them, and its window is not searched
                at_top = bench.screen(
                    _with(base, ((part.index, part.key), sv[-1]), *extra), switching=False, rules=part.rules
                )
                if any(
                    k[0] in _TYPE_RULES and rank(v) < 2 and _status(v) != "not checked"
                    for k, v in involved(part, at_top or {}).items()
                ):
                    continue
                tw = _window(bench, part, base, sv, extra)
                if tw.type_needs:
                    continue
                if tw.ok:
                    options.append((t, sv, extra, None, None, tw))
                    break
                if tw.floor_at is not None and cables and cable_tries < 1:
                    cable_tries += 1  # one cable search per fuse: the first type whose floor the load allows
                    got = _cable_for_window(bench, part, base, sv, extra, cables)
                    if got:
                        c, j, cw = got
                        options.append((t, sv, extra, c, j, cw))
                        break
        if options:
            t, sv, extra, c, j, ow = options[0]
            labels = [sv[k].strip('"') for k in ow.ok]
            lo = ow.ok[0]
            what = [] if t == ftype else [f"type {t}"]
            if c is not None:
                what.append(f"{c.id} {c.labels[j]}")
            text += f"; a window opens with {' and '.join(what)}: fits {_span(labels)}"
            edits = (*extra, ((part.index, part.key), sv[lo])) + ((((c.index, c.key), c.series[j]),) if c else ())
            suggested, value_text = sv[lo].strip('"'), sv[lo]
            fits = tuple(labels)
            smaller = sv[lo - 1].strip('"') if lo > 0 else None
            r = bench.duty(_with(base, *edits), part.rules)
            checked = r is not None and not _failing(involved(part, r))
            w = ow
        elif needs or not w.ok:
            text += "; no shipped ISO 8820 type makes a window: give the maker's data of a fuse that does"
    return Suggestion(
        part.id,
        "fuse",
        part.key,
        part.today,
        suggested,
        value_text,
        smaller,
        w.below,
        tuple(sorted(w.floor_rules | w.ceil_rules | {k for k in _all_keys(bench, part, base) if k[0] in _TYPE_RULES})),
        w.above,
        checked,
        text,
        fits=fits,
        needs=tuple(needs),
        missing=tuple(w.missing),
        edits=edits,
    )


def _all_verdicts(bench: Bench, part: Part, base: dict) -> dict:
    return involved(part, bench.screen(base, switching=False, rules=("fuse.",)) or {})


def _all_keys(bench: Bench, part: Part, base: dict) -> set:
    return set(involved(part, bench.screen(base) or {}))


def _fuse_types() -> dict:
    from coilstage import tables

    return tables.fuse_types()


def _fuse_type(d, fid: str) -> str:
    return next(e.fuse_type for e in d.elements if e.id == fid)


# ---- suppressors


def _suggest_suppressor(bench: Bench, part: Part, base: dict) -> Suggestion | None:
    """A suppressor across the stage: kind, clamp voltage from the series, and its three ratings."""
    d = bench.drawing(base)
    if d is None:
        return None
    stage = next(s for s in d.stages if s.id == part.id)
    inv_today = involved(part, bench.screen(base) or {})
    if stage.suppression.kind != "none" and all(rank(v) >= 1.5 for v in inv_today.values()):
        return None
    if stage.suppression.kind == "none" and all(rank(v) >= 1.5 for v in inv_today.values()):
        return None
    release = d.switching.release_limit is not None
    big = {"peak_current": "100 kA", "reverse_voltage": "100 kV", "energy_rating": "1000 kJ"}

    def spec(kind: str, volts: float | None, ratings: dict) -> str:
        s: dict[str, str] = {"kind": kind}
        if kind == "diode_zener":
            s["zener_voltage"] = _qty(volts, "V")
        s.update(ratings)
        return format_value(s)

    # 1. the kind and clamp voltage: a plain diode where the drawing sets no release limit, else the
    #    lowest zener voltage of the series that meets it (a higher clamp releases faster)
    kinds: list[tuple[str, float | None]] = [("diode", None)] if not release else []
    kinds += [("diode_zener", v) for v in standard_series("zener_voltage")]
    seq = tuple(spec(k, v, big) for k, v in kinds)
    labels = [("freewheel diode" if k == "diode" else f"diode + {v:g} V zener") for k, v in kinds]
    bd = _smallest(bench, part, base, seq)
    if bd.index is None:
        text = "no suppressor of the series clears its verdicts" + _blocked_text(bd.blocked)
        return Suggestion(
            part.id,
            "suppressor",
            part.key,
            part.today,
            None,
            None,
            None,
            (),
            tuple(bd.targets),
            bd.blocked,
            False,
            text,
        )
    j, targets = bd.index, bd.targets
    kind, volts = kinds[j]
    # the clamp range: up to the highest zener voltage the opening contact's voltage rating allows
    hi_j = j
    if kind == "diode_zener":
        lo_, hi_ = j, len(kinds)
        while hi_ - lo_ > 1:
            mid = (lo_ + hi_) // 2
            lo_, hi_ = (
                (mid, hi_)
                if _ok(bench, part, _with(base, ((part.index, part.key), seq[mid])), targets)[0]
                else (lo_, mid)
            )
        hi_j = lo_
    # 2. the ratings, each the smallest of its series above what the break asks
    vs = bench.screen(_with(base, ((part.index, part.key), seq[j])), rules=part.rules) or {}
    need = {
        "peak_current": vs.get(("suppressor.rating", f"{part.id} peak current")),
        "reverse_voltage": vs.get(("suppressor.rating", f"{part.id} reverse voltage")),
        "energy_rating": vs.get(("suppressor.rating", f"{part.id} energy")),
    }
    unit = {"peak_current": "A", "reverse_voltage": "V", "energy_rating": "J"}
    series = {
        "peak_current": standard_series("suppressor_peak_current"),
        "reverse_voltage": standard_series("suppressor_reverse_voltage"),
        "energy_rating": standard_series("suppressor_energy"),
    }
    ratings: dict[str, str] = {}
    lower: dict[str, str] = {}
    for name, v in need.items():
        if v is None or v.value is None:
            continue
        x = v.limit if name == "reverse_voltage" else v.value
        k = next((n for n, s in enumerate(series[name]) if s >= x), None)
        ratings[name] = _qty(series[name][k] if k is not None else math.ceil(x), unit[name])
        if k:
            lower[name] = _qty(series[name][k - 1], unit[name])
    value_text = spec(kind, volts, ratings)
    final = _with(base, ((part.index, part.key), value_text))
    ok_final, bad = _ok(bench, part, final, targets)
    # the next smaller part: the next lower clamp (no suppressor below the plain diode); and each rating
    # one step down fails its own verdict
    smaller_label = labels[j - 1] if j > 0 else "no suppressor"
    smaller_fails = bd.smaller_fails
    if j == 0:
        _, bad0 = _ok(bench, part, _with(base, ((part.index, part.key), None)), targets)
        smaller_fails = tuple(Finding.of(v) for v in bad0)
    for name, low in lower.items():
        _, badr = _ok(
            bench, part, _with(base, ((part.index, part.key), spec(kind, volts, {**ratings, name: low}))), targets
        )
        smaller_fails += tuple(Finding.of(v) for v in badr)
    rating_text = ", ".join(f"{k.replace('_', ' ')} ≥ {v}" for k, v in ratings.items())
    clamp = ""
    if kind == "diode_zener":
        clamp = f"; clamp {volts:g}–{kinds[hi_j][1]:g} V" if hi_j > j else f"; clamp {volts:g} V"
    needs, missing = (), ()
    relay_ids = sorted(part.subjects - {part.id})
    for (rule, subj), v in vs.items():
        if rule == "relay.inductive_break" and subj in relay_ids and _status(v) == "not checked":
            missing += (f"give the voltage rating of {subj} (the contact sees the bus plus the clamp)",)
    text = f"fit a {labels[j]} across {part.id}{clamp} ({rating_text})" + _blocked_text(bd.blocked)
    if not ok_final:
        text += "; with these ratings it still fails: " + ", ".join(Finding.of(v).text() for v in bad)
    label = labels[j] + (f" ({rating_text})" if rating_text else "")
    return Suggestion(
        part.id,
        "suppressor",
        part.key,
        part.today,
        label,
        value_text,
        smaller_label,
        smaller_fails,
        tuple(targets),
        bd.blocked,
        ok_final,
        text,
        needs=needs,
        missing=missing,
        edits=(((part.index, part.key), value_text),),
        targets=tuple(targets.items()),
    )


# ---------------------------------------------------------------- per verdict, and the action list


def suggestions(
    drawing_text: str,
    source: str = "<drawing>",
    base_dir: Path | None = None,
    only_failing: bool = True,
    checked: tuple | None = None,
    parts_dirs: tuple = (),
    warnings: bool = True,
) -> list[Suggestion]:
    """A checked suggestion for every part that takes part in a failing or warning verdict (with
    ``warnings=False``: a failing verdict; a part with warnings only is left out).

    ``checked``: ``(drawing, analysis, verdicts)`` of the check already made of this very text (as
    ``coilstage.check`` returns them), so that the drawing is not read and checked a second time;
    used only where the text has no "auto" (then the text sizing judges is the text checked).
    ``parts_dirs``: the parts libraries given to the run (``--parts``).
    """
    prepared = prepare(drawing_text)
    bench = Bench(prepared.loadable, source, base_dir, parts_dirs)
    if checked is not None and not prepared.auto and prepared.loadable == drawing_text:
        drawing, analysis, verdicts = checked
        k = bench.key({})
        bench._drawings[k] = drawing
        bench._full[k] = (analysis, _by_key(verdicts), verdicts)
    return _suggestions(bench, prepared, only_failing, warnings=warnings)


def _suggestions(
    bench: Bench, prepared: Prepared, only_failing: bool = True, base: dict | None = None, warnings: bool = True
) -> list:
    base = dict(base or {})
    d = bench.drawing(base)
    if d is None:
        raise SizingError("the drawing does not load; run `coilstage check` for its problems")
    r = bench.full(base)
    vs = r[1]
    out = []
    parts = parts_of(d, prepared)
    bare = [
        p
        for p in parts
        if p.kind == "suppressor" and p.today == "none" and any(rank(v) < 1.5 for v in involved(p, vs).values())
    ]
    joint = _suppressor_suggestions(bench, bare, base, vs) if d.switching.release_limit is None else {}
    for part in parts:
        inv = involved(part, vs)
        if only_failing and all(rank(v) >= 2 for v in inv.values()):
            continue
        if not warnings and all(rank(v) >= 1 for v in inv.values()):
            continue
        s = joint.get(part.id) or suggest_part(bench, part, base)
        if s is not None:
            # the suggestion answers every failing or warning verdict of its part, the duty rules
            # (judged by the full check only) included
            extra = tuple(k for k, v in inv.items() if rank(v) < 1.5 and k not in s.answers)
            out.append(replace(s, answers=s.answers + extra) if extra else s)
    return out


def _suppressor_suggestions(bench: Bench, parts: list[Part], base: dict, vs: dict) -> dict[str, Suggestion]:
    """Freewheel diodes for every bare stage at once (no release limit: the lightest suppressor), each
    rating the smallest of its series above what the stage's own break asks, then checked: with the
    ratings every stage passes; with no suppressor, or with any one rating a step lower, it fails.
    A stage's suppressor moves only its own switch-off (and the break of the relay that switches it)."""
    if not parts:
        return {}
    specs = _joint_suppressors(bench, parts, base)
    if len(specs) != len(parts):
        return {}
    final = _with(base, *specs.items())
    got = bench.screen(final, rules=parts[0].rules) or {}
    lower: dict[str, dict] = {}
    names = {
        "peak_current": "suppressor_peak_current",
        "reverse_voltage": "suppressor_reverse_voltage",
        "energy_rating": "suppressor_energy",
    }
    for name, series_name in names.items():
        c = dict(final)
        for p in parts:
            spec = tomllib.loads(f"x = {specs[(p.index, p.key)]}")["x"]
            if name not in spec:
                continue
            ser = standard_series(series_name)
            x = float(spec[name].split()[0])
            k = next((n for n, y in enumerate(ser) if y >= x), None)
            if k:
                c[(p.index, p.key)] = format_value({**spec, name: _qty(ser[k - 1], spec[name].split()[1])})
        lower[name] = bench.screen(c, rules=parts[0].rules) or {}
    out = {}
    for p in parts:
        inv = involved(p, got)
        bad = [v for v in inv.values() if rank(v) < 1.5]
        smaller_fails = tuple(Finding.of(v) for v in involved(p, vs).values() if rank(v) < 1.5)
        for name in names:
            smaller_fails += tuple(
                Finding.of(v)
                for k, v in involved(p, lower[name]).items()
                if k[1].startswith(p.id) and rank(v) < 1.5 and k[0] == "suppressor.rating"
            )
        spec = tomllib.loads(f"x = {specs[(p.index, p.key)]}")["x"]
        rating_text = ", ".join(f"{k.replace('_', ' ')} ≥ {v}" for k, v in spec.items() if k != "kind")
        missing = tuple(
            f"give the voltage rating of {k[1]} (the contact sees the bus plus the clamp)"
            for k, v in inv.items()
            if k[0] == "relay.inductive_break" and _status(v) == "not checked"
        )
        text = f"fit a freewheel diode across {p.id} ({rating_text})"
        if bad:
            text += "; with these ratings it still fails: " + ", ".join(Finding.of(v).text() for v in bad)
        out[p.id] = Suggestion(
            p.id,
            "suppressor",
            p.key,
            p.today,
            f"freewheel diode ({rating_text})",
            specs[(p.index, p.key)],
            "no suppressor",
            smaller_fails,
            tuple(involved(p, vs)),
            (),
            not bad,
            text,
            missing=missing,
            edits=(((p.index, p.key), specs[(p.index, p.key)]),),
        )
    return out


def suggestions_by_verdict(verdicts: list[Verdict], suggestions_list: list[Suggestion]) -> dict[tuple[str, str], dict]:
    """For the JSON document: (rule, subject) -> the suggestion (as a dict) of the part that answers it.

    Attach as ``verdict["suggestion"] = mapping.get((verdict["rule"], verdict["subject"]))``.
    """
    out: dict[tuple[str, str], dict] = {}
    keys = {(v.rule, v.subject) for v in verdicts}
    for s in suggestions_list:
        for k in s.answers:
            if k in keys and k not in out:
                out[k] = s.to_dict()
    return out


def action_list(verdicts: list[Verdict], suggestions_list: list[Suggestion]) -> dict:
    """What to change, as plain data: failures first, grouped by part, then warnings, then what
    could not be checked for missing data, then what sizing cannot change.

    Returns ``{"fail": [item], "warn": [item], "missing": [text], "cannot_change": [item]}``; an item is
    ``{"part", "rules" (ids), "count", "text"}``.
    """
    by_part: dict[str, Suggestion] = {s.part: s for s in suggestions_list}
    answered: dict[tuple[str, str], str] = {}
    for s in suggestions_list:
        for k in s.answers:
            answered.setdefault(k, s.part)
    fail: dict[str, list] = {}
    warn: dict[str, list] = {}
    rest_fail: dict[str, list] = {}
    for v in verdicts:
        st = _status(v)
        if st not in ("fail", "warn"):
            continue
        k = (v.rule, v.subject)
        part = answered.get(k)
        if part is None:
            rest_fail.setdefault(v.subject.split(" ")[0], []).append(v)
            continue
        (fail if st == "fail" else warn).setdefault(part, []).append(v)
    seen_fail = set(fail)
    for part, vs in list(warn.items()):
        if part in seen_fail:
            fail[part].extend(vs)
            del warn[part]

    def item(part: str, vs: list) -> dict:
        s = by_part[part]
        n = len(vs)
        word = "fail" if any(_status(v) == "fail" for v in vs) else "warn"
        return {
            "part": part,
            "rules": sorted({v.rule for v in vs}),
            "count": n,
            "text": f"{part} — {n} rule{'s' if n != 1 else ''} {word}{'s' if n == 1 else ''}: {s.text}",
        }

    missing = []
    for s in suggestions_list:
        missing.extend(s.missing)
    for v in verdicts:
        if _status(v) == "not checked" and v.rule == "fuse.breaking_capacity":
            missing.append(f"give the maker's breaking capacity for {v.subject}")
    cannot = []
    for subj, vs in rest_fail.items():
        rules = sorted({v.rule for v in vs})
        what = sorted({UNCHANGEABLE.get(r, "") for r in rules} - {""})
        said = [
            t
            for t in (cannot_change_text(v.rule, v.subject, _status(v), v.value, v.limit, v.unit) for v in vs)
            if t is not None
        ]
        cannot.append(
            {
                "part": subj,
                "rules": rules,
                "count": len(vs),
                "text": f"{subj} — {len(vs)} rule{'s' if len(vs) != 1 else ''}: {', '.join(rules)}"
                + (
                    f" ({' and '.join(what)}: not changed by sizing)"
                    if what
                    else " (no part sizing changes answers it)"
                ),
                "statements": said,
            }
        )
    seen_missing: set[str] = set()
    unique = []
    for m in missing:  # one line per request, however many rules ask for it
        head = re.sub(r" \([^()]*\)$", "", m)
        if head not in seen_missing:
            seen_missing.add(head)
            unique.append(m)
    return {
        "fail": [item(p, vs) for p, vs in fail.items()],
        "warn": [item(p, vs) for p, vs in warn.items()],
        "missing": unique,
        "cannot_change": cannot,
    }


# ---------------------------------------------------------------- a coordinated design


@dataclass(frozen=True)
class Change:
    part: str
    key: str
    old: str
    new: str
    why: str  # the rules that asked for it


@dataclass
class SizeResult:
    text: str  # the new drawing's text
    changes: list[Change]
    verdicts: list  # of the new drawing (full check)
    remaining: list[dict]  # what still fails or warns, with who blocks it
    rounds: int
    evaluations: dict


_KIND_ORDER = {"cable": 0, "suppressor": 1, "relay": 2, "fuse": 3}


def _value_index(part: Part, value_text: str | None) -> float:
    if value_text is None or value_text not in part.series:
        return part.today_pos
    return float(part.series.index(value_text))


def _joint_series(bench: Bench, parts: list[Part], edits: dict, auto: set, vs: dict) -> dict:
    """Bisection of many parts at once along their series (cables, relay contacts): one candidate
    drawing per step carries every part at its own trial value, and each part reads its own
    verdicts. A part that has found its smallest passing value holds it while the others go on.
    Sound where parts couple weakly and in one direction — a larger conductor elsewhere raises the
    current here only by the drop it removes — and checked afterwards: the fixed-point loop
    re-judges every part on the design that results. Returns the new edits."""
    if not parts:
        return {}
    top = dict(edits)
    for p in parts:
        top[(p.index, p.key)] = p.series[-1]
    vs_top = bench.screen(top, switching=False) or {}
    d = bench.drawing(edits)
    private = {p.id: set(fed_stages(d, p.id)) for p in parts if p.kind == "cable"}
    private = {k: v for k, v in private.items() if len(v) == 1}

    def own(p: Part, inv: dict) -> dict:
        """The verdicts only this part moves: its own subject, and the voltage drop of a stage it
        alone feeds (a shared feed's drop is left to the per-part search)."""
        return {
            k: v
            for k, v in inv.items()
            if p.id in _tokens(k[1]) or (k[0] == "circuit.voltage_drop" and {k[1]} == private.get(p.id))
        }

    lo: dict[str, int] = {}
    hi: dict[str, int] = {}
    targets: dict[str, dict] = {}
    for p in parts:
        inv_today = involved(p, vs)
        t = {
            k: max(rank(v), rank(inv_today[k]) if k in inv_today else 0) for k, v in own(p, involved(p, vs_top)).items()
        }
        targets[p.id] = t
        start = -1 if (p.index, p.key) in auto else math.floor(p.today_pos)
        lo[p.id], hi[p.id] = start, len(p.series) - 1
        if start >= 0 and p.today_pos == start and not _bad(own(p, inv_today), t):
            hi[p.id] = start  # today's part already does what the largest does: keep it
    active = [p for p in parts if hi[p.id] - lo[p.id] > 1]
    while active:
        cand = dict(edits)
        mids = {}
        for p in parts:
            j = (lo[p.id] + hi[p.id]) // 2 if p in active else hi[p.id]
            mids[p.id] = j
            cand[(p.index, p.key)] = p.series[j]
        got = bench.screen(cand, switching=False)
        for p in active:
            ok = got is not None and not _bad(own(p, involved(p, got)), targets[p.id])
            if ok:
                hi[p.id] = mids[p.id]
            else:
                lo[p.id] = mids[p.id]
        active = [p for p in active if hi[p.id] - lo[p.id] > 1]
    out = {}
    for p in parts:
        j = hi[p.id]
        if (p.index, p.key) in auto or j > p.today_pos:
            out[(p.index, p.key)] = p.series[j]
    return out


def _joint_fuses(bench: Bench, parts: list[Part], edits: dict, auto: set) -> tuple[dict, list[Part]]:
    """The fuse windows of many fuses at once: every fuse at the bottom, then the top, of its own
    series tells its floor rules from its ceiling rules; a joint bisection finds each floor; one
    candidate with every fuse at its floor checks the ceilings. A fuse's rating moves its own
    verdicts only (its resistance is the same at every rating), so the fuses do not couple. Returns
    the new edits and the fuses whose window is empty (left to the per-fuse search of a type or a
    cable change)."""
    if not parts:
        return {}, []

    def at(idx: dict[str, int]) -> dict | None:
        c = dict(edits)
        for p in parts:
            c[(p.index, p.key)] = p.series[idx[p.id]]
        return bench.screen(c, switching=False, rules=("fuse.",))

    bot = at({p.id: 0 for p in parts}) or {}
    top = at({p.id: len(p.series) - 1 for p in parts}) or {}
    floor_rules: dict[str, set] = {}
    ceil_rules: dict[str, set] = {}
    for p in parts:
        ib, it = involved(p, bot), involved(p, top)
        fl, ce = set(), set()
        for k in set(ib) | set(it):
            vb, vt = ib.get(k), it.get(k)
            v = vt or vb
            if k[0] in _TYPE_RULES or (_status(v) == "not checked" and "given" in v.note):
                continue
            if vt is not None and rank(vt) >= 2:
                fl.add(k)
            elif vb is not None and rank(vb) >= 2:
                ce.add(k)
            else:
                (fl if (vt and vb and (vt.margin or 0) >= (vb.margin or 0)) else ce).add(k)
        floor_rules[p.id], ceil_rules[p.id] = fl, ce
    lo = {p.id: -1 for p in parts}
    hi = {p.id: len(p.series) - 1 for p in parts}
    active = [p for p in parts if hi[p.id] - lo[p.id] > 1]
    while active:
        mids = {p.id: (lo[p.id] + hi[p.id]) // 2 if p in active else hi[p.id] for p in parts}
        got = at(mids) or {}
        for p in active:
            inv = involved(p, got)
            ok = all(rank(inv[k]) >= 2 for k in floor_rules[p.id] if k in inv)
            lo[p.id], hi[p.id] = (lo[p.id], mids[p.id]) if ok else (mids[p.id], hi[p.id])
        active = [p for p in active if hi[p.id] - lo[p.id] > 1]
    at_floor = at(hi) or {}
    today = bench.screen(edits, switching=False, rules=("fuse.",)) or {}
    out, left = {}, []
    for p in parts:
        inv = involved(p, at_floor)
        type_ok = all(rank(inv[k]) >= 1.5 for k in inv if k[0] in _TYPE_RULES)
        window = all(rank(inv[k]) >= 2 for k in floor_rules[p.id] | ceil_rules[p.id] if k in inv)
        if window and type_ok:
            inv_t = involved(p, today)
            keep = (p.index, p.key) not in auto and all(
                rank(inv_t[k]) >= 2 for k in floor_rules[p.id] | ceil_rules[p.id] if k in inv_t
            )
            if not keep:
                out[(p.index, p.key)] = p.series[hi[p.id]]
        else:
            left.append(p)
    return out, left


def _joint_suppressors(bench: Bench, parts: list[Part], edits: dict) -> dict:
    """Suppressors for many stages at once: the kind and clamp from one candidate, the ratings from
    the break it sees (each stage's own verdicts); the per-stage path handles a release limit."""
    d = bench.drawing(edits)
    if d is None or not parts or d.switching.release_limit is not None:
        return {}
    big = {"kind": "diode", "peak_current": "100 kA", "reverse_voltage": "100 kV", "energy_rating": "1000 kJ"}
    cand = dict(edits)
    for p in parts:
        cand[(p.index, p.key)] = format_value(big)
    vs = bench.screen(cand) or {}
    series = {
        "peak_current": (standard_series("suppressor_peak_current"), "A", "peak current"),
        "reverse_voltage": (standard_series("suppressor_reverse_voltage"), "V", "reverse voltage"),
        "energy_rating": (standard_series("suppressor_energy"), "J", "energy"),
    }
    out = {}
    for p in parts:
        spec: dict[str, str] = {"kind": "diode"}
        for name, (ser, unit, word) in series.items():
            v = vs.get(("suppressor.rating", f"{p.id} {word}"))
            if v is None or v.value is None:
                continue
            x = v.limit if name == "reverse_voltage" else v.value
            pick = next((y for y in ser if y >= x), None)
            spec[name] = _qty(pick if pick is not None else math.ceil(x), unit)
        out[(p.index, p.key)] = format_value(spec)
    return out


def size_drawing(
    text: str, source: str = "<drawing>", base_dir: Path | None = None, max_rounds: int = 12, parts_dirs: tuple = ()
) -> SizeResult:
    """A coordinated design: every changeable part raised (or, for a fuse, moved into its window)
    until no part's verdicts improve any more — a fixed point over the standard series.

    Parts written as ``"auto"`` start at the bottom of their series and take the smallest part that
    passes; parts as given only change where a verdict they take part in fails or warns, and never
    shrink (a cable or a contact rating is only raised); ``fixed = true`` keeps a part. Currents on a
    shared feed change with every part, so each round starts from a fresh full check of the design
    so far. Terminates: each change raises a part along a finite series, or moves a fuse to the
    lowest rating of its window, and a round without a change ends the search.
    """
    prepared = prepare(text)
    bench = Bench(prepared.loadable, source, base_dir, parts_dirs)
    d0 = bench.drawing({})
    if d0 is None:
        raise SizingError("the drawing does not load; run `coilstage check` for its problems")
    edits: dict = {}
    changes: dict[tuple[int, str], list] = {}  # (index, key) -> [part, old, new, whys]
    # "auto" cables start at the smallest size; where the rules cannot judge that start (a figure out
    # of range), raise every auto cable two sizes at a time until they can
    auto_cables = [p for p in parts_of(d0, prepared) if p.kind == "cable" and (p.index, p.key) in prepared.auto]
    step = 0
    while bench.full(edits) is None and auto_cables and step < 40:
        step += 2
        edits = {**edits, **{(p.index, p.key): p.series[min(step, len(p.series) - 1)] for p in auto_cables}}
    if bench.full(edits) is None:
        raise SizingError("the drawing's analysis cannot be completed; run `coilstage check` for the reason")
    rounds = 0
    done_insulation: set = set()
    searched: set[str] = set()
    for rounds in range(1, max_rounds + 1):
        r = bench.full(edits)
        vs = r[1]
        d = bench.drawing(edits)
        changed = False
        parts = sorted(parts_of(d, None, bench.render(edits)), key=lambda p: _KIND_ORDER[p.kind])
        auto_keys = set(prepared.auto) if rounds == 1 else set()

        def needs(p: Part, verdicts: dict) -> list:
            return [v for v in involved(p, verdicts).values() if rank(v) < 2]

        # 1. every cable and relay contact that fails or warns, bisected together; then the
        #    suppressors together; the per-part path below takes what is left (insulation classes,
        #    fuse windows, release limits)
        joint: set[str] = set()
        grouped: set[str] = set()
        # 0. a cable whose insulation class fails in its zone takes the lowest class that passes first,
        #    so that its size is chosen for the class it will have
        for p in parts:
            if p.kind != "cable" or p.id in prepared.fixed:
                continue
            tc = involved(p, vs).get(("cable.temperature_class", p.id))
            if tc is None or rank(tc) >= 2:
                continue
            _, letter = _insulation(bench, p, edits)
            if letter is None:
                continue
            k = (p.index, "insulation")
            v = format_value(letter)
            rec = changes.setdefault(k, [p.id, edits.get(k, _original(bench, k)), v, set()])
            rec[2] = v
            rec[3].add(f"cable.temperature_class {p.id} ({_status(tc)})")
            edits[k] = v
            changed = True
        if changed:
            vs = {**vs, **(bench.screen(edits) or {})}
        for kinds in (("cable", "relay"), ("suppressor",)):
            group = [
                p
                for p in parts
                if p.kind in kinds
                and p.id not in prepared.fixed
                and (needs(p, vs) or (p.index, p.key) in auto_keys)
                and not (p.kind == "suppressor" and p.today != "none")
            ]
            if not group:
                continue
            grouped.update(p.id for p in group)
            before = bench.screen(edits) or vs
            new = (
                _joint_series(bench, group, edits, auto_keys, {**vs, **before})
                if kinds[0] == "cable"
                else _joint_suppressors(bench, group, edits)
            )
            new = {k: v for k, v in new.items() if edits.get(k, _original(bench, k)) != v}
            for k, v in new.items():
                part = next(p for p in group if (p.index, p.key) == k)
                why = sorted({f"{x.rule} {x.subject} ({_status(x)})" for x in needs(part, vs)}) or ["auto"]
                rec = changes.setdefault(
                    k, [prepared.ids.get(k[0], part.id), edits.get(k, _original(bench, k)), v, set()]
                )
                rec[2] = v
                rec[3].update(why)
                joint.add(part.id)
            if new:
                edits.update(new)
                changed = True
        fuses = [
            p
            for p in parts
            if p.kind == "fuse" and p.id not in prepared.fixed and (needs(p, vs) or (p.index, p.key) in auto_keys)
        ]
        new, left = _joint_fuses(bench, fuses, edits, auto_keys)
        new = {k: v for k, v in new.items() if edits.get(k, _original(bench, k)) != v}
        grouped.update(p.id for p in fuses if p not in left)
        for k, v in new.items():
            part = next(p for p in fuses if (p.index, p.key) == k)
            why = sorted({f"{x.rule} {x.subject} ({_status(x)})" for x in needs(part, vs)}) or ["auto"]
            rec = changes.setdefault(k, [part.id, edits.get(k, _original(bench, k)), v, set()])
            rec[2] = v
            rec[3].update(why)
        if new:
            edits.update(new)
            changed = True
        # a fuse with no window of its own type: the per-fuse search, only where a shipped type has
        # the breaking capacity and voltage it needs, or a cable change could open one
        for p in left:
            inv = involved(p, bench.screen(edits, switching=False, rules=("fuse.",)) or {})
            need_bc = max(
                (v.value for k, v in inv.items() if k[0] == "fuse.breaking_capacity" and rank(v) < 1.5), default=0.0
            )
            if need_bc and not any(r["breaking_capacity"] >= need_bc for r in _fuse_types().values()):
                grouped.add(p.id)
        for part in parts:
            if part.id in prepared.fixed:
                continue
            if part.kind == "fuse" and part.id in searched:
                continue  # a fuse's search for a type or cable change runs once
            if part.kind == "fuse":
                searched.add(part.id)
            if part.id in grouped:
                # bisected with its group on its own verdicts; a cable goes on here where its
                # insulation class fails, or a voltage drop it shares still fails or warns (the
                # first such cable of the round only: the drop moves with every change)
                if part.kind != "cable":
                    continue
                inv_now = involved(part, bench.screen(edits, switching=False) or {})
                tc = inv_now.get(("cable.temperature_class", part.id))
                insul = tc is not None and rank(tc) < 2 and (part.id, "insulation") not in done_insulation
                shared = [k for k, v in inv_now.items() if k[0] == "circuit.voltage_drop" and rank(v) < 2] and (
                    part.id,
                    edits.get((part.index, part.key)),
                ) not in done_insulation
                if not (insul or shared):
                    continue
                done_insulation.add((part.id, "insulation") if insul else (part.id, edits.get((part.index, part.key))))
            if changed:  # judged on the design as it now stands; the duty rules from the round's start
                now = bench.screen(edits) or {}
                vs_part = {**{k: v for k, v in vs.items() if k[0] in _heating_rules()}, **now}
            else:
                vs_part = vs
            inv = involved(part, vs_part)
            auto = (part.index, part.key) in prepared.auto
            bad = [v for v in inv.values() if rank(v) < 2]
            if not bad and not (auto and rounds == 1):
                continue
            s = (
                suggest_part(bench, part, edits)
                if part.kind != "fuse"
                else _suggest_fuse(bench, part, edits, prepared.fixed)
            )
            if s is None or not s.edits:
                continue
            new = dict(s.edits)
            if part.kind in ("cable", "relay") and not auto:
                # never shrink a part the user chose
                val = new.get((part.index, part.key))
                if _value_index(part, val) <= part.today_pos:
                    new.pop((part.index, part.key), None)
            new = {k: v for k, v in new.items() if edits.get(k, _original(bench, k)) != v}
            if not new:
                continue
            why = sorted({f"{v.rule} {v.subject} ({_status(v)})" for v in bad}) or ["auto"]
            for k, v in new.items():
                old = edits.get(k, _original(bench, k))
                rec = changes.setdefault(k, [prepared.ids.get(k[0], part.id), old, v, set()])
                rec[2] = v
                rec[3].update(why)
            edits.update(new)
            changed = True
        if not changed:
            break
    library = parts_library_of(bench)
    if library is not None:
        _library_choices(bench, prepared, library, edits, changes)
    out_text = _write(text, prepared, edits)
    final = bench.full(edits)
    verdicts = final[2]
    remaining = _remaining(bench, prepared, edits, final[1])
    ch = [
        Change(
            part,
            key,
            _show(old, prepared.auto.get((i, key))),
            _show(new),
            "; ".join(sorted(whys)),
        )
        for (i, key), (part, old, new, whys) in changes.items()
        if old != new
    ]
    return SizeResult(out_text, ch, verdicts, remaining, rounds, dict(bench.evaluations))


# ---------------------------------------------------------------- whole parts from a parts library


def parts_library_of(bench: Bench) -> Library | None:
    """The parts libraries of the run: those given (``--parts``) and those the drawing names
    (``[tables] parts``, relative to the drawing); None where there are none. A library with
    problems is left out here (the loader reports it where the drawing refers to it)."""
    from coilstage.errors import DataError
    from coilstage.parts_library import Library, load_library

    paths = [Path(p) for p in bench.parts_dirs]
    raw = getattr(bench, "_raw", None)
    if raw is None:
        try:
            raw = tomllib.loads(bench.text)
        except tomllib.TOMLDecodeError:
            raw = {}
    named = (raw.get("tables") or {}).get("parts") if isinstance(raw.get("tables"), dict) else None
    for x in [named] if isinstance(named, str) else named if isinstance(named, list) else []:
        if isinstance(x, str):
            paths.append((bench.base_dir or Path(".")) / x)
    lib = Library()
    for p in paths:
        try:
            lib.merge(load_library(p))
        except DataError:
            continue
    return lib if lib.files else None


def _amps(text: Any) -> float:
    from coilstage.units import parse_quantity

    try:
        return parse_quantity(str(text), "current")
    except Exception:
        return math.inf


def _energy(text: Any) -> float:
    from coilstage.units import parse_quantity

    try:
        return parse_quantity(str(text), "energy")
    except Exception:
        return math.inf


def _ref_text(bench: Bench, lp) -> str:
    """How the new drawing names a library part: its file relative to the drawing (so the drawing
    loads without --parts), and its name."""
    import os

    f = Path(lp.file)
    if bench.base_dir is not None:
        try:
            return f"{Path(os.path.relpath(f, bench.base_dir)).as_posix()}#{lp.name}"
        except ValueError:  # another drive
            pass
    return f"{f.as_posix()}#{lp.name}"


_ELEMENT_KEEP = {"id", "kind", "from", "to", "zone", "length", "protects", FIXED_KEY}


def library_candidates(
    bench: Bench, part: Part, system_voltage: float, library: Library
) -> list[tuple[str, tuple, float]]:
    """The library's parts that could take ``part``'s place, smallest first: (label, edits, size).

    A fuse comes at each rating of its maker's series (its own rating where it gives none), ordered
    by rating; a relay by its contact rating at the system voltage; a suppressor by its energy
    rating, then its peak current. Each candidate's edits name the part (``part = "file#name"``)
    and take out the element's own keys the part gives, so that the maker's values apply."""
    raw = tomllib.loads(bench.text)
    entry = (raw.get("harness") or [])[part.index]
    out: list[tuple[str, tuple, float]] = []
    if part.kind in ("fuse", "relay"):
        for lp in library.parts_of(part.kind):
            drop = tuple(((part.index, k), None) for k in entry if k in lp.fields and k not in _ELEMENT_KEEP)
            name = ((part.index, "part"), format_value(_ref_text(bench, lp)))
            if part.kind == "fuse":
                for r in lp.series or (lp.fields.get("rating"),):
                    if r is None:
                        continue
                    edits = (*[x for x in drop if x[0][1] != "rating"], name, ((part.index, "rating"), format_value(r)))
                    out.append((f"{lp.name} at {r}", edits, _amps(r)))
            else:
                key = "rating_24v" if system_voltage == 24 else "rating_12v"
                out.append((lp.name, (*drop, name), _amps(lp.fields.get(key))))
    elif part.kind == "suppressor":
        for lp in library.parts_of("suppressor"):
            size = _energy(lp.fields.get("energy_rating")) * 1e6 + _amps(lp.fields.get("peak_current"))
            out.append((lp.name, (((part.index, "suppression"), format_value({"part": _ref_text(bench, lp)})),), size))
    out.sort(key=lambda c: c[2])
    return out


def _library_choices(bench: Bench, prepared: Prepared, library, edits: dict, changes: dict) -> None:
    """Whole parts from the library where one passes every rule it takes part in: for each fuse,
    relay and stage suppressor sizing may change, the smallest library candidate whose verdicts all
    pass, judged on the full analysis for a fuse (its duty rules) and on the screen with the
    switching analysis for a relay or a suppressor (no duty rule reads them). Only a verdict the
    design as sized cannot judge for missing data may stay not checked. Where no library part
    passes, the part stays as sized from the standard series. The change list names the part and
    what the next smaller candidate fails."""
    d = bench.drawing(edits)
    if d is None:
        return
    for part in parts_of(d, prepared):
        if part.id in prepared.fixed or part.kind == "cable":
            continue
        cands = library_candidates(bench, part, d.supply.system_voltage, library)
        if not cands:
            continue
        rules = part.rules if part.kind != "relay" else ("relay.",)
        full = part.kind == "fuse"

        def judged(e: dict, full: bool = full, rules: tuple = rules) -> dict | None:
            if full:
                return bench.duty(e, rules)
            return bench.screen(e, switching=True, rules=rules)

        now = involved(part, judged(edits) or {})
        # every verdict passes; one the design as sized cannot judge for missing data may stay so
        bar = {k: 1.5 if rank(v) == 1.5 else 2.0 for k, v in now.items()}
        chosen = None
        before: tuple = ()
        for label, cand_edits, _size in cands:
            e = _with(edits, *cand_edits)
            screen = bench.screen(e, switching=True, rules=rules)
            inv = involved(part, screen or {})
            bad = [v for k, v in inv.items() if rank(v) < bar.get(k, 2.0)]
            if screen is not None and not bad and full:
                inv = involved(part, judged(e) or {})
                bad = [v for k, v in inv.items() if rank(v) < bar.get(k, 2.0)]
            if screen is not None and inv and not bad:
                chosen = (label, cand_edits)
                break
            before = (label, tuple(Finding.of(v) for v in bad))
        if chosen is None:
            continue
        label, cand_edits = chosen
        why = f"library part {label} passes every rule it takes part in (smallest of the library first)"
        replaced = sorted(k[1] for k, v in cand_edits if v is None)
        if replaced:
            why += "; its maker's values replace " + ", ".join(replaced)
        if before:
            fails = ", ".join(f.text() for f in before[1][:3]) or "it cannot be judged"
            why += f"; the next smaller, {before[0]}, fails {fails}"
        for k, v in cand_edits:
            if v is None:  # a key the part now gives: no change of its own in the list
                changes.pop(k, None)
                continue
            old = edits.get(k, _original(bench, k))
            if old == v:
                continue
            rec = changes.setdefault(k, [prepared.ids.get(k[0], part.id), old, v, set()])
            rec[2] = v
            rec[3].add(why)
        edits.update(dict(cand_edits))


def _original(bench: Bench, k: tuple[int, str]) -> str | None:
    return TomlText(bench.text).get("harness", k[0], k[1])


def _show(value_text: str | None, auto: str | None = None) -> str:
    if auto is not None:
        return "auto"
    if value_text is None:
        return "none"
    try:
        v = tomllib.loads(f"x = {value_text}")["x"]
    except tomllib.TOMLDecodeError:
        return value_text
    if isinstance(v, dict):
        return ", ".join(f"{k} {x}" for k, x in v.items())
    return str(v).replace("mm^2", "mm²")


def _write(text: str, prepared: Prepared, edits: dict) -> str:
    """The user's text with the design written in: every edited key changed in place (its comment
    kept), every "auto" replaced by what sizing chose or started from."""
    doc = TomlText(text)
    done = set()
    for (i, key), value in sorted(edits.items()):
        if value is None:
            doc.delete("harness", i, key)
        else:
            doc.set("harness", i, key, value)
        done.add((i, key))
    for (i, key), start in prepared.auto.items():
        if (i, key) in done:
            continue
        if key == "suppression":
            doc.delete("harness", i, key)
        else:
            doc.set("harness", i, key, format_value(start))
    return doc.text


def _remaining(bench: Bench, prepared: Prepared, edits: dict, vs: dict) -> list[dict]:
    """What still fails or warns in the design, and which part holds it: a fixed part, a part of
    the vehicle sizing does not change, or a part no standard value of which passes."""
    d = bench.drawing(edits)
    parts = parts_of(d, None, bench.render(edits))
    out = []
    for k, v in vs.items():
        if rank(v) >= 1.5:
            continue
        holders = [p for p in parts if k in involved(p, {k: v})]
        fixed = [p.id for p in holders if p.id in prepared.fixed]
        if k[0] in UNCHANGEABLE:
            who = f"{UNCHANGEABLE[k[0]]} (not changed by sizing)"
        elif re.search(r"\bno [\w ]+ given\b", v.note):
            who = "missing data: " + re.search(r"\bno [\w ]+ given\b", v.note).group(0)
        elif fixed:
            who = "fixed part " + ", ".join(fixed)
        elif holders:
            who = "no standard value of " + ", ".join(p.id for p in holders) + " passes"
        else:
            who = "not a part sizing changes"
        margin = "" if v.margin is None else f" (margin {v.margin:+.0%})"
        out.append(
            {
                "rule": k[0],
                "subject": k[1],
                "status": _status(v),
                "held_by": who,
                "text": f"{k[0]} {k[1]}: {_status(v)}{margin} — {who}",
            }
        )
    return out
