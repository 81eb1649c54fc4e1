r"""How much each declared parameter moves each steady-state verdict's margin, and the worst
combination of the declared tolerances for it.

For every (rule, subject) that :func:`coilstage.analysis.params.evaluate` models:

* **gradient** dm/dp at the nominal parameters by central differences through ``evaluate``
  (:func:`coilstage.physics.sensitivity.central_difference` arithmetic, all parameters at once as
  2P samples of one batched call): the margins come from linear solves, but the alternator's state
  (regulating, current-limited, off) and the largest of the stage states make them piecewise, and a
  difference across the whole model is what holds on every piece. The step is 1e-3 of each
  parameter's range: the truncation error O(h²) is then ~1e-8 relative, and the round-off of a solve,
  about cond(A)·ε ≈ 1e5 × 2.2e-16 of the margin (sub-milliohm fuses beside ohm coils), stays below
  1e-7 after the division by h (checked against the exact adjoint derivative in
  ``tests/test_sensitivities.py``);
* **effect** of each parameter: the gradient times the move from its nominal value to the end of its
  range that lowers the margin (the "linear worst case" term of the vertex method, Δm_k =
  ∂m/∂p_k · Δp_k), largest first;
* **monotony**: the gradient's sign at each end of each parameter's range (others nominal); where the
  signs differ the margin is not monotone in it, which is reported and searched;
* **worst corner**: seeded by the signs (each parameter at the end that lowers the margin), confirmed
  by a search over the corners that flips one parameter at a time while the margin falls (batched:
  every verdict's candidates in one call), or by every corner where there are few parameters
  (:func:`coilstage.physics.sensitivity.all_vertices`); a parameter found non-monotone is also
  scanned across its range at the corner, in case the worst lies inside.

References
----------
.. [1] S. W. Director, R. A. Rohrer, "The generalized adjoint network and network sensitivities",
   IEEE Trans. Circuit Theory 16(3):318–323, 1969 (sensitivity-directed worst case).
.. [2] J. Vlach, K. Singhal, *Computer Methods for Circuit Analysis and Design*, 2nd ed., Van
   Nostrand Reinhold, 1994, chapter on sensitivity and tolerance analysis (vertex analysis).
"""

from __future__ import annotations

from collections.abc import Collection
from dataclasses import dataclass

import numpy as np

from coilstage.analysis.params import BATCH_SPARSE_ABOVE, NETWORKS, Parameter, evaluate, model, nominal
from coilstage.analysis.relay_coil import PICKUP_MARGIN
from coilstage.drawing.schema import Drawing
from coilstage.physics.network import PERMC_SPEC
from coilstage.physics.sensitivity import all_vertices

#: central-difference step as a fraction of each parameter's range
STEP = 1e-3
#: every corner is evaluated up to this many parameters with an effect; above it, the search
FULL_CORNERS = 8
#: points of the scan across a non-monotone parameter's range
SCAN = 11
#: above this many unknowns the sensitivities are not computed. Above
#: :data:`~coilstage.analysis.params.BATCH_SPARSE_ABOVE` the samples are solved sparse and the number of
#: samples does not grow with the drawing, so the search costs O(n²) (n right-hand sides of O(n) per
#: sample); this bound (256 stages of ``benchmarks/bench_growth.py``'s drawing) keeps a sweep of many
#: samples on a very large drawing from running for minutes (its command reads it too)
MAX_UNKNOWNS = 1100
#: how a gradient was found
EXACT = "exact: direct or adjoint method on the network's factorisation (physics.sensitivity)"
DIFFERENCED = "central differences through params.evaluate"
#: a margin change below this (a fraction: 1e-5 is a thousandth of a point) counts as no effect
NEGLIGIBLE = 1e-5


@dataclass(frozen=True)
class Effect:
    """One parameter's effect on one margin: the move ``change`` from nominal towards the worse end
    (in the parameter's unit), and ``margin_change`` = gradient × change (a fraction; negative:
    less margin)."""

    parameter: Parameter
    change: float
    margin_change: float

    @property
    def words(self) -> str:
        p = self.parameter
        return f"{p.words} {p.change_words(self.change)} takes {-self.margin_change * 100:.1f} points"


@dataclass(frozen=True)
class Corner:
    """The worst corner found: the parameter vector, its margin and status, the parameters off
    nominal there (key -> value), the parameters the margin is not monotone in, and whether every
    corner was evaluated (else a search from the sensitivity signs)."""

    x: np.ndarray
    margin: float
    status: int
    values: dict[str, float]
    not_monotone: tuple[str, ...]
    exhaustive: bool
    interior: dict[str, float]  # a non-monotone parameter whose worst lies inside its range -> value


@dataclass(frozen=True)
class VerdictSensitivity:
    """Everything about one (rule, subject): margin at nominal, gradient dm/dp (P,) at nominal, how
    it was found, the effects largest first (the negligible left out) at the worst corner, and the
    worst corner. An effect is the gradient at the corner times the parameter's move from nominal to
    its value there (or, for one left at nominal, to its worse end)."""

    key: tuple[str, str]
    nominal_margin: float
    gradient: np.ndarray
    method: str
    effects: tuple[Effect, ...]
    corner: Corner
    parameters: tuple[Parameter, ...] = ()
    corner_gradient: np.ndarray | None = None  # dm/dp at the worst corner, where the effects are taken


def _steps(ps: list[Parameter]) -> np.ndarray:
    return np.array([STEP * (p.high - p.low) for p in ps])


def gradients(
    d: Drawing, at: np.ndarray | None = None, rules: Collection[str] | None = None
) -> tuple[dict[tuple[str, str], np.ndarray], dict]:
    """dm/dp of every modelled margin (of ``rules`` only, where given) at ``at`` (default nominal) by
    central differences through :func:`evaluate` (2P samples in one call), and the evaluation at
    ``at`` itself."""
    ps = model(d).params
    x0 = nominal(ps) if at is None else np.asarray(at, dtype=float)
    h = _steps(ps)
    p = len(ps)
    rows = np.tile(x0, (2 * p + 1, 1))
    rows[1 : p + 1] += np.diag(h)
    rows[p + 1 :] -= np.diag(h)
    ev = evaluate(d, rows, rules)
    out = {k: (e.margin[1 : p + 1] - e.margin[p + 1 :]) / (2 * h) for k, e in ev.items()}
    return out, {k: float(e.margin[0]) for k, e in ev.items()}


def toward_worst_gradients(d: Drawing, rules: Collection[str] | None = None) -> dict[tuple[str, str], np.ndarray]:
    """d/dp at nominal of each modelled verdict's ``toward_worst`` read-out (where it has one), by
    central differences as :func:`gradients` (of ``rules`` only, where given)."""
    ps = model(d).params
    x0 = nominal(ps)
    h = _steps(ps)
    p = len(ps)
    rows = np.tile(x0, (2 * p, 1))
    rows[:p] += np.diag(h)
    rows[p:] -= np.diag(h)
    ev = evaluate(d, rows, rules)
    return {k: (e.toward_worst[:p] - e.toward_worst[p:]) / (2 * h) for k, e in ev.items() if e.toward_worst is not None}


def _towards_worse(p: Parameter, g: float) -> float:
    """The move from nominal to the end of the range that lowers a margin of gradient g."""
    end = p.low if g > 0 else p.high
    return end - p.nominal


def _flips(s: np.ndarray, idx: np.ndarray) -> list[np.ndarray]:
    """The corners one move away: a parameter at one end to the other; one at nominal (no effect at
    the nominal point, yet perhaps through another parameter: compensation × regulator temperature)
    to either end."""
    out = []
    for j in idx:
        for v in (-s[j],) if s[j] != 0 else (1.0, -1.0):
            t = s.copy()
            t[j] = v
            out.append(t)
    return out


def _corner_search(d, ps, keys, seeds, x0, active, exhaustive):
    """Worst corner per key: every corner of the active parameters (``exhaustive``) or a
    steepest-descent search over the corners from each key's seed signs, all keys batched. Only the
    networks the keys' rules read are solved."""
    rules = {k[0] for k in keys}
    lo = np.array([p.low for p in ps])
    hi = np.array([p.high for p in ps])

    def rows_of(signs: np.ndarray) -> np.ndarray:  # signs (M, P) of ±1 (0: nominal)
        return np.where(signs > 0, hi, np.where(signs < 0, lo, x0))

    idx = np.flatnonzero(active)
    if exhaustive:
        v = all_vertices(len(idx)) if len(idx) else np.zeros((1, 0))
        signs = np.zeros((len(v), len(ps)))
        signs[:, idx] = v
        ev = evaluate(d, rows_of(signs), rules)
        out = {}
        for k in keys:
            j = int(np.argmin(ev[k].margin))
            out[k] = (signs[j], float(ev[k].margin[j]), int(ev[k].status[j]))
        return out
    cur = {k: seeds[k].copy() for k in keys}
    best: dict = {}
    # a key whose corner no flip lowered is settled (every move from it was evaluated); only the keys
    # that moved are searched on (the corners found are those of searching every key each time, to
    # round-off: a batch's matrix product can round a row's last bits differently with the batch's size)
    live = list(keys)
    for _ in range(2 * len(idx) + 2):
        uniq = {tuple(cur[k]): cur[k] for k in live}
        cand = []
        for s in uniq.values():
            cand.append(s)
            cand.extend(_flips(s, idx))
        cand = np.unique(np.array(cand), axis=0)
        ev = evaluate(d, rows_of(cand), rules)
        where = {tuple(s): r for r, s in enumerate(cand)}
        moved = []
        for k in live:
            s = cur[k]
            m = ev[k].margin
            here = where[tuple(s)]
            trials = [here, *(where[tuple(t)] for t in _flips(s, idx))]
            r = min(trials, key=lambda r: m[r])
            if m[r] < m[here] - 1e-12:
                cur[k] = cand[r].copy()
                moved.append(k)
            best[k] = (cur[k], float(m[r] if m[r] < m[here] - 1e-12 else m[here]), int(ev[k].status[r]))
        if not moved:
            break
        live = moved
    return best


def _by_network(keys: list[tuple[str, str]]) -> list[list[tuple[str, str]]]:
    """The keys grouped by the network their rule reads (:data:`coilstage.analysis.params.NETWORKS`),
    in the order of the keys."""
    net_of = {rule: name for name, rules in NETWORKS.items() for rule in rules}
    groups: dict[str, list[tuple[str, str]]] = {}
    for k in keys:
        groups.setdefault(net_of.get(k[0], k[0]), []).append(k)
    return list(groups.values())


def _scan(d, ps, keys, found, flags, interior, x0, lo, hi) -> None:
    """Scan each non-monotone parameter across its range at each key's corner found (updating
    ``found`` and ``interior`` where the worst lies inside)."""
    scan_rows, scan_of = [], []
    for k in keys:
        s = found[k][0]
        xc = np.where(s > 0, hi, np.where(s < 0, lo, x0))
        for j in flags[k]:
            for t in np.linspace(lo[j], hi[j], SCAN):
                r = xc.copy()
                r[j] = t
                scan_rows.append(r)
                scan_of.append((k, j, t))
    if scan_rows:
        # verdicts sharing a corner and a non-monotone parameter share their scan: the distinct rows
        # only (their number follows the distinct corners, not the number of verdicts)
        uniq_scan, row_scan = np.unique(np.array(scan_rows), axis=0, return_inverse=True)
        row_scan = np.ravel(row_scan)
        ev_scan = evaluate(d, uniq_scan, {k[0] for k in keys})
        for r, (k, j, t) in zip(row_scan, scan_of, strict=True):
            mr = float(ev_scan[k].margin[r])
            if mr < found[k][1] - 1e-9:
                found[k] = (found[k][0], mr, int(ev_scan[k].status[r]))
                interior[k][ps[j].key] = float(t)


def analyse_sensitivities(
    d: Drawing, keys: list[tuple[str, str]] | None = None, exhaustive: bool | None = None
) -> dict[tuple[str, str], VerdictSensitivity]:
    """Sensitivities, effects and worst corner of each modelled (rule, subject) (all, or ``keys``).

    ``exhaustive`` forces every corner (True) or the search (False); by default every corner is
    evaluated where at most :data:`FULL_CORNERS` parameters have an effect."""
    m = model(d)
    if m.net.size(True) > MAX_UNKNOWNS:
        raise ValueError(
            f"the network has {m.net.size(True)} unknowns, above the {MAX_UNKNOWNS} the vectorised model takes"
        )
    ps = m.params
    p = len(ps)
    x0 = nominal(ps)
    # the nominal margins of every modelled verdict (one sample); central differences only for the
    # verdicts asked for that have no exact gradient (the others' differences would be overwritten)
    ev0 = evaluate(d, x0[None], None if keys is None else {k[0] for k in keys})
    m0 = {k: float(e.margin[0]) for k, e in ev0.items()}
    keys = [k for k in (keys if keys is not None else list(ev0)) if k in ev0]
    if not keys:
        return {}
    exact = exact_gradients(d)
    need = {k[0] for k in keys if k not in exact}
    grads = gradients(d, rules=need)[0] if need else {}
    methods = {k: EXACT if k in exact else DIFFERENCED for k in keys}
    grads.update(exact)
    # the gradient at each end of each parameter's range (others nominal): 4P samples in one call
    h = _steps(ps)
    lo = np.array([q.low for q in ps])
    hi = np.array([q.high for q in ps])
    ends = np.tile(x0, (4 * p, 1))
    for j in range(p):
        ends[4 * j : 4 * j + 2, j] = lo[j]
        ends[4 * j + 2 : 4 * j + 4, j] = hi[j]
        ends[4 * j, j] += h[j]
        ends[4 * j + 1, j] -= h[j]
        ends[4 * j + 2, j] += h[j]
        ends[4 * j + 3, j] -= h[j]
    ev_ends = evaluate(d, ends, {k[0] for k in keys})
    width = hi - lo
    seeds = {}
    flags: dict[tuple[str, str], tuple[int, ...]] = {}
    active_any = np.zeros(p, dtype=bool)
    towards = None
    # the rules with a read-out of their own way to the worst case (differenced only if one is flat)
    flat_rules = {k[0] for k in keys if ev_ends[k].toward_worst is not None}
    for k in keys:
        g = grads[k]
        mm = ev_ends[k].margin
        g_lo = (mm[0::4] - mm[1::4]) / (2 * h)
        g_hi = (mm[2::4] - mm[3::4]) / (2 * h)
        big = NEGLIGIBLE / np.where(width > 0, width, 1.0)
        flip = (np.abs(g_lo) > big) & (np.abs(g_hi) > big) & (np.sign(g_lo) != np.sign(g_hi))
        flags[k] = tuple(int(j) for j in np.flatnonzero(flip))
        signed = np.where(np.abs(g * width) >= NEGLIGIBLE, -np.sign(g), 0.0)
        if not signed.any() and ev_ends[k].toward_worst is not None:
            # the margin is flat at nominal (no parameter moves it): start from the rule's own way to
            # its worst case instead, each parameter at the end that lowers that read-out
            towards = toward_worst_gradients(d, flat_rules) if towards is None else towards
            t = towards[k]
            scale = np.max(np.abs(t * width))
            signed = np.where(np.abs(t * width) > 1e-9 * scale, -np.sign(t), 0.0) if scale > 0 else signed
        signed[list(flags[k])] = np.where(signed[list(flags[k])] == 0, 1.0, signed[list(flags[k])])
        seeds[k] = signed
        active_any |= signed != 0
    active_any |= width > 0  # a parameter without effect at nominal may act through another
    n_active = int(active_any.sum())
    full = exhaustive if exhaustive is not None else n_active <= FULL_CORNERS
    # each network's verdicts searched on their own: their seeds (and so the candidate corners) are
    # few, and the other networks are not solved at their candidates (a key's search reads only its
    # own margins, so the corners found are the same)
    found: dict = {}
    for group in _by_network(keys):
        found.update(_corner_search(d, ps, group, seeds, x0, active_any, full))
    # scan each non-monotone parameter across its range at the corner found
    interior: dict[tuple[str, str], dict[str, float]] = {k: {} for k in keys}
    for group in _by_network(keys):
        _scan(d, ps, group, found, flags, interior, x0, lo, hi)
    corners = {}
    for k in keys:
        xc = np.where(found[k][0] > 0, hi, np.where(found[k][0] < 0, lo, x0))
        for key, t in interior[k].items():
            xc[model(d).index[key]] = t
        corners[k] = xc
    # the gradient at each verdict's own worst corner (2P samples per distinct corner, one call):
    # the effects are stated where the verdict is decided, so a parameter acting through another
    # (compensation through a cold regulator) shows its effect
    # (per network: the distinct corners of its own verdicts)
    at_corner: dict[tuple[str, str], np.ndarray] = {}
    for group in _by_network(keys):
        uniq = np.unique(np.array([corners[k] for k in group]), axis=0)
        block = np.repeat(uniq, 2 * p, axis=0)
        for u in range(len(uniq)):
            block[u * 2 * p : u * 2 * p + p] += np.diag(h)
            block[u * 2 * p + p : (u + 1) * 2 * p] -= np.diag(h)
        ev_c = evaluate(d, block, {k[0] for k in group})
        row_of = {tuple(c): u for u, c in enumerate(uniq)}
        for k in group:
            u = row_of[tuple(corners[k])]
            at_corner[k] = ev_c[k].margin[u * 2 * p : (u + 1) * 2 * p]
    out = {}
    for k in keys:
        _signs, m, st = found[k]
        xc = corners[k]
        mm = at_corner[k]
        gc = (mm[:p] - mm[p:]) / (2 * h)
        eff = []
        for j, q in enumerate(ps):
            change = xc[j] - x0[j] if xc[j] != x0[j] else _towards_worse(q, gc[j])
            dm = gc[j] * change
            if abs(dm) >= NEGLIGIBLE:
                eff.append(Effect(q, float(change), float(dm)))
        effects = tuple(sorted(eff, key=lambda e: e.margin_change))
        values = {q.key: float(xc[j]) for j, q in enumerate(ps) if xc[j] != x0[j]}
        corner = Corner(xc, m, st, values, tuple(ps[j].key for j in flags[k]), full, interior[k])
        out[k] = VerdictSensitivity(k, m0[k], grads[k], methods[k], effects, corner, tuple(ps), gc)
    return out


def corner_words(vs: VerdictSensitivity) -> tuple[str, ...]:
    """The worst corner and the non-monotone parameters of one verdict, in words (for its deciding
    inputs)."""
    c = vs.corner
    ps = {p.key: p for p in vs.parameters}
    parts = []
    for key, v in c.values.items():
        p = ps[key]
        parts.append(f"{p.words} {v:g} °C" if p.unit == "degC" else f"{p.words} {p.change_words(v - p.nominal)}")
    how = "every corner" if c.exhaustive else "corner search from the sensitivity signs"
    out = [
        f"worst corner of the declared tolerances ({how}): margin {c.margin:.1%} "
        f"({['pass', 'warn', 'fail'][c.status]}) with " + (", ".join(parts) if parts else "every parameter nominal")
    ]
    for key in c.not_monotone:
        p = ps[key]
        at = c.interior.get(key)
        where = f"; its worst lies inside the range, at {at:g} {p.unit}" if at is not None else "; both ends searched"
        out.append(f"not monotone in {p.words}: its effect changes sign within {p.low:g} to {p.high:g} {p.unit}{where}")
    return tuple(out)


def _factor(stamps, const: np.ndarray, g: np.ndarray):
    """Sparse LU (scipy.sparse.linalg.splu) of one network g · stamps + const."""
    from scipy.sparse.linalg import splu

    try:
        return splu(stamps.matrix(g, const), permc_spec=PERMC_SPEC)
    except RuntimeError:
        raise np.linalg.LinAlgError("singular network") from None


def _sparse_direct(stamps, const, g, dg, b, db) -> tuple[np.ndarray, np.ndarray]:
    r"""x and ∂x/∂p (P, size) of (g·S + C) x = b by the direct method on one sparse factorisation:
    ∂x/∂p = −A⁻¹((∂A/∂p) x − ∂b/∂p), with (∂A/∂p) x formed from the resistor rows (O(P·R), no dense
    ∂A/∂p): the arithmetic of :func:`coilstage.physics.sensitivity.direct_sensitivities` for networks
    above :data:`~coilstage.analysis.params.BATCH_SPARSE_ABOVE` unknowns (held equal to it in
    ``tests/test_sensitivities.py``)."""
    lu = _factor(stamps, const, g)
    x = lu.solve(np.asarray(b, dtype=float))
    rhs = db - stamps.times(dg, x)
    return x, lu.solve(np.ascontiguousarray(rhs.T)).T


def _sparse_adjoint(stamps, const, g, dg, b, db, c) -> np.ndarray:
    r"""dy/dp (P,) of y = cᵀx by the adjoint method on one sparse factorisation: Aᵀx̂ = c,
    dy/dp = x̂ᵀ(∂b/∂p − (∂A/∂p) x) (:func:`coilstage.physics.sensitivity.adjoint_sensitivities`'
    arithmetic, for the large networks)."""
    lu = _factor(stamps, const, g)
    x = lu.solve(np.asarray(b, dtype=float))
    xh = lu.solve(np.asarray(c, dtype=float), trans="T")
    return (db - stamps.times(dg, x)) @ xh


#: relative step for differencing the element laws (closed forms, no solve: round-off ε/h only)
LAW_STEP = 1e-6


def exact_gradients(d: Drawing, at: np.ndarray | None = None) -> dict[tuple[str, str], np.ndarray]:
    r"""dm/dp of the margins that come from a linear solve, exactly on the network's factorisation:
    the duty network (fuse.continuous, cable.ampacity, relay.contact_rating, circuit.voltage_drop) by
    the direct method, the low-bus network (supply.bus_minimum, and relay.coil_pickup: a fixed share of
    that bus) by the adjoint method
    (:mod:`coilstage.physics.sensitivity`), each in the state the sample is in (the stage state that
    gives an element its largest current; the alternator's present state).

    .. math:: \frac{\partial x}{\partial p} = -A^{-1}\Bigl(\frac{\partial A}{\partial p}x
              - \frac{\partial b}{\partial p}\Bigr)

    ∂A/∂p and ∂b/∂p are the stamps of the element conductances' and sources' derivatives; those of
    the element laws themselves (R(θ) scaled by a tolerance, the regulator line, the battery's
    open-circuit line and resistance) are differenced with a relative step of :data:`LAW_STEP`
    (closed forms, no solve: their round-off is ε/h, about 2e-10 relative). The breaking-capacity
    margin (a ratio of two solves, U_oc / Z_kk) is left to :func:`gradients` (central differences).
    """
    from coilstage.physics.sensitivity import adjoint_sensitivities, direct_sensitivities

    m = model(d)
    ps = m.params
    net = m.net
    lim = m.limits
    p = len(ps)
    x0 = nominal(ps) if at is None else np.asarray(at, dtype=float)
    h = LAW_STEP * np.where(np.abs(x0) > 0, np.abs(x0), np.array([q.high - q.low for q in ps]))
    rows = np.tile(x0, (2 * p + 1, 1))
    rows[1 : p + 1] += np.diag(h)
    rows[p + 1 :] -= np.diag(h)

    def diff(v: np.ndarray) -> np.ndarray:  # (2P+1, ...) -> derivative (P, ...)
        return (v[1 : p + 1] - v[p + 1 :]) / (2 * h).reshape((p,) + (1,) * (v.ndim - 1))

    out: dict[tuple[str, str], np.ndarray] = {}
    el = m.el_ix
    d_ = m.d
    # ---- duty network, every stage state, full matrices
    r = m.resistances(rows, m.ambient(rows))
    g = np.divide(1.0, r, out=np.zeros_like(r), where=r > 0)
    size = net.size(True)
    b = np.zeros((len(rows), size))
    alt = d_.supply.alternator
    if alt is not None:
        net.inject(b, net.alt_node, alt.limit_rated * (1.0 + m.column(rows, "supply.alternator.cold_excess", 0.0)))
        b[:, size - 1] = m.regulated(rows)
    else:
        b[:, size - 1] = d_.corners.cold_bus
    if d_.supply.base_load > 0:
        net.inject(b, net.base_node, np.full(len(rows), -d_.supply.base_load))
    s_count = len(m.stages)
    states = [np.ones(s_count, dtype=bool)]
    if s_count > 1:
        states += [np.arange(s_count) == k for k in range(s_count)]
    cur_q, dcur_q, x_q, dx_q = [], [], [], []
    sparse = size > BATCH_SPARSE_ABOVE
    for st in states:
        on = np.ones(len(d_.elements))
        on[m.stages] = st
        g_on = g * on
        # A is linear in the conductances: ∂A/∂p is the stamps of ∂g/∂p (differencing the assembled
        # matrix instead would lose digits where sub-milliohm parts sit beside ohm coils)
        if sparse:
            x, dx = _sparse_direct(m.st_duty, m.c_duty, g_on[0, net.res_el], diff(g_on[:, net.res_el]), b[0], diff(b))
        else:
            a0 = (g_on[0, net.res_el] @ m.st_duty).reshape(size, size) + m.c_duty
            da = (diff(g_on[:, net.res_el]) @ m.st_duty).reshape(p, size, size)
            x = np.linalg.solve(a0, b[0])
            dx = direct_sensitivities(a0, x, da, diff(b))  # (P, size)
        v = np.concatenate([[0.0], x[: net.n]])
        dv = np.concatenate([np.zeros((p, 1)), dx[:, : net.n]], axis=1)
        i = (v[net.ea] - v[net.eb]) * g_on[0]
        di = diff(g_on) * (v[net.ea] - v[net.eb]) + g_on[0] * (dv[:, net.ea] - dv[:, net.eb])
        for q, k in enumerate(net.zero_el):
            i[k] = x[net.n + q]
            di[:, k] = dx[:, net.n + q]
        cur_q.append(i)
        dcur_q.append(di)
        x_q.append(v)
        dx_q.append(dv)
    cur = np.array(cur_q)  # (Q, E)
    dcur = np.array(dcur_q)  # (Q, P, E)
    best = np.argmax(np.abs(cur), axis=0)
    amb = m.ambient(rows)

    def ceiling_gradient(eid: str, table: np.ndarray) -> np.ndarray:
        # m = 1 − |i| / L(ambient): dm/dp = −sign(i)·di/dp / L + |i| / L² · dL/dp (L the tabulated
        # limit, piecewise linear in the ambient; its slope differenced like the element laws')
        j = el[eid]
        q = best[j]
        lim_rows = np.interp(amb, lim.grid, table)
        return -np.sign(cur[q, j]) * dcur[q, :, j] / lim_rows[0] + abs(cur[q, j]) / lim_rows[0] ** 2 * diff(lim_rows)

    for kind, limits in (("fuse.continuous", lim.fuse_limit), ("cable.ampacity", lim.cable_limit)):
        for eid, table in limits.items():
            out[(kind, eid)] = ceiling_gradient(eid, table)
    for eid, (table, _held) in lim.relay_limit.items():
        out[("relay.contact_rating", eid)] = ceiling_gradient(eid, table)
    v, dv = x_q[0], dx_q[0]
    for sj in m.stages:
        e = d_.elements[sj]
        df = (dv[:, net.bat] - (dv[:, net.ea[sj]] - dv[:, net.eb[sj]])) / d_.supply.system_voltage
        out[("circuit.voltage_drop", e.id)] = -df / lim.drop_pass
    # ---- low bus, in the alternator's present state (supply.bus_minimum; relay.coil_pickup, the coil
    # fed from that bus)
    if lim.v_min > 0 or m.pickups:
        _x, mode = m.low_bus(x0[None])
        r = m.resistances(rows, m.hot_t)
        emf, rb = m.battery_low(rows)
        size = net.size(False)
        b = np.zeros((len(rows), size))
        net.inject(b, net.bat, emf / rb)
        if d_.supply.base_load > 0:
            net.inject(b, net.base_node, np.full(len(rows), -d_.supply.base_load))
        g_alt = np.zeros(len(rows))
        if mode[0] in (0, 1):
            if mode[0] == 0:
                g_alt = np.full(len(rows), 1.0 / alt.source_resistance)
                net.inject(b, net.alt_node, m.regulated(rows) / alt.source_resistance)
            else:
                net.inject(b, net.alt_node, m.hot_limit * (1.0 - m.column(rows, "supply.alternator.hot_derating", 0.0)))
        g_rows = np.concatenate([1.0 / r[:, net.res_el], 1.0 / rb[:, None], g_alt[:, None]], axis=1)
        c = np.zeros(size)
        c[net.bat - 1] = 1.0
        if size > BATCH_SPARSE_ABOVE:
            dy = _sparse_adjoint(m.st_low, m.c_open, g_rows[0], diff(g_rows), b[0], diff(b), c)
        else:
            a0 = (g_rows[0] @ m.st_low).reshape(size, size) + m.c_open
            da = (diff(g_rows) @ m.st_low).reshape(p, size, size)
            x = np.linalg.solve(a0, b[0])
            dy = adjoint_sensitivities(a0, x, c, da, diff(b))
        if lim.v_min > 0:
            out[("supply.bus_minimum", "bus")] = dy / lim.v_min
        # relay.coil_pickup: m = (s·V − L)/L with the coil's share s of the bus and its limit L fixed
        for rid, (share, need) in m.pickups.items():
            out[("relay.coil_pickup", rid)] = dy * share / (PICKUP_MARGIN * need)
    return out
