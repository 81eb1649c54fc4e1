"""The tolerance sweep: Monte Carlo over the declared tolerances of a drawing, in chunks.

Sampling
    Each declared parameter is drawn within its tolerance ``[low, high]``:

    * ``uniform``: evenly between ``low`` and ``high``;
    * ``normal``: mean at the middle of the range, the ends at ±3 σ (σ = (high − low)/6), **truncated at
      the ends** (drawn by the inverse normal distribution from a uniform number in [Φ(−3), Φ(3)]). A
      tolerance is a limit parts outside it are rejected at, so no sample leaves the box the worst-case
      analysis searches; the price is a variance of 0.9733 σ² instead of σ²
      (1 − 2·3·φ(3)/(2Φ(3) − 1), the truncated normal's variance; Johnson, Kotz and Balakrishnan,
      *Continuous Univariate Distributions* vol. 1, 2nd ed., 1994, ch. 13 §10.1, from memory).
    * ``low == high``: the value itself, in every sample.

Same seed, same numbers
    Sample ``i`` is row ``i % BLOCK`` of block ``i // BLOCK``; block ``b`` is drawn by
    ``numpy.random.Generator(PCG64(SeedSequence(seed, spawn_key=(b,))))`` (the ``b``-th child of
    ``SeedSequence(seed).spawn``, numpy's documented way to independent streams) as one
    ``BLOCK × P`` array of uniform numbers. A sample's values therefore depend only on the seed, its
    index and the parameter list: not on the chunk size the evaluation uses, and the first N samples
    of a longer run are the N samples of a shorter one (both held by tests/test_sweep.py).

Statistics, with memory flat in the number of samples
    Per rule and subject: the counts of samples that fail and that warn, with Wilson score intervals
    (:func:`wilson`); the margin's mean and standard deviation merged chunk by chunk (Chan, Golub and
    LeVeque, "Algorithms for computing the sample variance", The American Statistician 37(3):242–247,
    1983); its least and largest values; and its 1 %, 50 % and 99 % quantiles read from a histogram
    of at most :data:`HIST_BINS` cells on a fixed lattice whose width doubles as the values spread
    (:class:`Histogram`), so each quantile is within one cell width (``quantile_resolution``) of the
    sample quantile (the ⌈qN⌉-th smallest margin: Hyndman and Fan's definition 1, "Sample quantiles
    in statistical packages", The American Statistician 50(4):361–365, 1996). Counts, histogram and
    quantiles are the same whatever the chunk size; the mean and standard deviation agree to rounding
    (about 1e-15 relative).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from statistics import NormalDist
from typing import Any, Protocol

import numpy as np

#: samples per random-number block (the unit the seed's streams are keyed by)
BLOCK = 1000
#: samples per evaluation chunk (a whole number of blocks). 2 000 rather than more: the batched
#: solves' arrays then stay in cache (benchmarks/bench_sweep.py: 10 000 coach samples took 1.07 s in
#: chunks of 2 000 against 1.33 s in chunks of 5 000, on a loaded 2-core machine) and the peak memory is lower
CHUNK = 2000
#: bins of each margin's streaming histogram
HIST_BINS = 4096
#: at most this many parameters for the corner search (2**P evaluations)
VERTEX_LIMIT = 10
#: most samples one sweep takes (bounded work)
MAX_SAMPLES = 10_000_000
#: a rule is tight when some sample fails or warns, or its 1 % quantile margin is below this
TIGHT_MARGIN = 0.10

PASS, WARN, FAIL = 0, 1, 2


class ParameterLike(Protocol):
    key: str
    words: str
    nominal: float
    low: float
    high: float
    unit: str
    distribution: str


Evaluator = Callable[[np.ndarray], dict[tuple[str, str], Any]]  # X[N, P] -> {(rule, subject): (margin, status)}


# ---------------------------------------------------------------------------------------------------- sampling


def _bounds(params: Sequence[ParameterLike]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    low = np.array([float(p.low) for p in params], dtype=float)
    high = np.array([float(p.high) for p in params], dtype=float)
    normal = np.zeros(len(params), dtype=bool)
    for j, p in enumerate(params):
        dist = str(p.distribution).strip().lower()
        if dist not in ("uniform", "normal"):
            raise ValueError(f"parameter {p.key}: distribution {p.distribution!r} is neither uniform nor normal")
        if not (math.isfinite(low[j]) and math.isfinite(high[j]) and low[j] <= high[j]):
            raise ValueError(f"parameter {p.key}: expected finite ends with low <= high, found {low[j]}, {high[j]}")
        normal[j] = dist == "normal"
    return low, high, normal


_PHI3 = NormalDist().cdf(3.0)


def _block(seed: int, b: int, n_params: int) -> np.ndarray:
    """Block ``b``'s uniform numbers in [0, 1), shape ``(BLOCK, n_params)``."""
    gen = np.random.Generator(np.random.PCG64(np.random.SeedSequence(seed, spawn_key=(b,))))
    return gen.random((BLOCK, n_params))


def to_values(u: np.ndarray, params: Sequence[ParameterLike]) -> np.ndarray:
    """Uniform numbers ``u[N, P]`` in [0, 1) as parameter values (uniform or truncated normal)."""
    low, high, normal = _bounds(params)
    x = low + u * (high - low)
    if normal.any():
        from scipy.special import ndtri

        mid, sigma = (low + high) / 2.0, (high - low) / 6.0
        un = u[:, normal]
        z = ndtri((1.0 - _PHI3) + un * (2.0 * _PHI3 - 1.0))
        x[:, normal] = np.clip(mid[normal] + sigma[normal] * z, low[normal], high[normal])
    return x


def samples(params: Sequence[ParameterLike], seed: int, start: int, stop: int) -> np.ndarray:
    """The parameter values of samples ``start`` to ``stop - 1``, shape ``(stop - start, P)``."""
    if stop <= start:
        return np.empty((0, len(params)))
    first, last = start // BLOCK, (stop - 1) // BLOCK
    u = np.concatenate([_block(seed, b, len(params)) for b in range(first, last + 1)])
    off = start - first * BLOCK
    return to_values(u[off : off + (stop - start)], params)


def nominal_row(params: Sequence[ParameterLike]) -> np.ndarray:
    return np.array([[float(p.nominal) for p in params]])


def vertices(params: Sequence[ParameterLike]) -> np.ndarray:
    """Every corner of the tolerance box, shape ``(2**k, P)`` where ``k`` parameters have low < high
    (the others at their single value)."""
    low, high, _ = _bounds(params)
    free = np.flatnonzero(high > low)
    k = len(free)
    bits = (np.arange(2**k)[:, None] >> np.arange(k)[None, :]) & 1
    x = np.tile(low, (2**k, 1))
    x[:, free] = np.where(bits == 1, high[free], low[free])
    return x


# ---------------------------------------------------------------------------------------------------- statistics


def wilson(k: int, n: int, confidence: float = 0.95) -> tuple[float, float]:
    r"""Wilson score interval of a binomial proportion ``k/n``.

    .. math:: \frac{\hat p + z^2/2n \pm z\sqrt{\hat p(1-\hat p)/n + z^2/4n^2}}{1 + z^2/n}

    E. B. Wilson, "Probable inference, the law of succession, and statistical inference", Journal of
    the American Statistical Association 22(158):209–212, 1927. Unlike the normal-approximation
    interval it stays inside [0, 1] and is not empty at ``k = 0`` or ``k = n``.

    >>> lo, hi = wilson(0, 100)
    >>> round(lo, 6), round(hi, 4)
    (0.0, 0.037)
    """
    if n <= 0:
        return (0.0, 1.0)
    z = NormalDist().inv_cdf(0.5 + confidence / 2.0)
    p = k / n
    z2n = z * z / n
    centre = (p + z2n / 2.0) / (1.0 + z2n)
    half = z / (1.0 + z2n) * math.sqrt(p * (1.0 - p) / n + z * z / (4.0 * n * n))
    lo = 0.0 if k == 0 else max(0.0, centre - half)  # exact ends (the formula gives them up to rounding)
    hi = 1.0 if k == n else min(1.0, centre + half)
    return (lo, hi)


class Histogram:
    """Counts of values in at most ``bins`` cells of width ``2**e`` on a fixed lattice (cell ``k``
    holds ``k·2**e <= v < (k + 1)·2**e``), ``e`` the least exponent for which the values seen fit.

    When new values do not fit, the width doubles (cells ``2k`` and ``2k + 1`` merge into ``k``) until
    they do, so memory stays fixed and every value is counted. Because the lattice is fixed and the
    width is always the least that fits everything seen, the final counts do not depend on the order
    in which the values came, nor on how they were split into chunks (division by a power of two is
    exact in binary floating point, so no value changes cell by rounding)."""

    def __init__(self, bins: int = HIST_BINS) -> None:
        if bins < 2:
            raise ValueError("expected at least two bins")
        self.bins = bins
        self.counts = np.zeros(bins, dtype=np.int64)
        self.exponent: int | None = None  # None: no values, or every value at one point
        self.offset = 0  # lattice index of counts[0]
        self.n = 0
        self.vmin = math.inf
        self.vmax = -math.inf

    @property
    def width(self) -> float:
        return 0.0 if self.exponent is None else math.ldexp(1.0, self.exponent)

    @property
    def lo(self) -> float:
        return self.offset * self.width

    def _cell(self, v: np.ndarray | float, e: int) -> np.ndarray:
        return np.floor(np.ldexp(np.asarray(v, dtype=float), -e)).astype(np.int64)

    def _fits(self, e: int, vmin: float, vmax: float) -> bool:
        return int(self._cell(vmax, e)) - int(self._cell(vmin, e)) + 1 <= self.bins

    def _least_exponent(self, vmin: float, vmax: float) -> int:
        span = vmax - vmin
        # a width below span/bins cannot fit, so the search from just under it finds the least
        e = math.floor(math.log2(span / self.bins)) - 1
        # keep the lattice index of every value inside int64
        e = max(e, math.frexp(max(abs(vmin), abs(vmax)))[1] - 60)
        if self.exponent is not None:
            e = max(e, self.exponent)
        while not self._fits(e, vmin, vmax):
            e += 1
        return e

    def add(self, values: np.ndarray) -> None:
        v = np.asarray(values, dtype=float).ravel()
        if v.size == 0:
            return
        vmin, vmax = min(float(v.min()), self.vmin), max(float(v.max()), self.vmax)
        if vmin == vmax:  # every value so far at one point
            self.n += v.size
            self.vmin, self.vmax = vmin, vmax
            return
        e = self._least_exponent(vmin, vmax)
        offset = int(self._cell(vmin, e))
        if self.exponent is None:  # from one point (or nothing) to a lattice
            new = np.zeros(self.bins, dtype=np.int64)
            if self.n:
                new[int(self._cell(self.vmin, e)) - offset] += self.n
        elif e != self.exponent or offset != self.offset:
            occupied = np.flatnonzero(self.counts)
            cells = (self.offset + occupied) >> (e - self.exponent)  # floor division by 2**shift
            new = np.bincount(cells - offset, weights=self.counts[occupied], minlength=self.bins).astype(np.int64)
        else:
            new = self.counts
        new += np.bincount(self._cell(v, e) - offset, minlength=self.bins)
        self.counts, self.exponent, self.offset = new, e, offset
        self.n += v.size
        self.vmin, self.vmax = vmin, vmax

    @property
    def resolution(self) -> float:
        """The cell width: each quantile is within it of the ⌈qN⌉-th smallest value."""
        return self.width

    def quantile(self, q: float) -> float:
        """The ``q`` quantile (0 < q < 1): linear within the cell that holds the ⌈qN⌉-th smallest value
        (so within one cell width of it), held within the values seen."""
        if self.n == 0:
            return math.nan
        if self.exponent is None:
            return self.vmin
        target = q * self.n
        cum = np.cumsum(self.counts)
        rank = max(1, math.ceil(round(target, 9)))  # the ⌈qN⌉-th smallest, free of q·N's rounding
        i = min(int(np.searchsorted(cum, rank, side="left")), self.bins - 1)
        before = cum[i - 1] if i > 0 else 0
        inside = self.counts[i]
        frac = (target - before) / inside if inside else 0.0
        x = (self.offset + i + frac) * self.width
        return float(min(max(x, self.vmin), self.vmax))

    def coarse(self, bins: int = 50) -> tuple[np.ndarray, np.ndarray]:
        """Counts over about ``bins`` equal bins between the least and largest value: ``(edges, counts)``."""
        if self.n == 0:
            return np.array([0.0, 1.0]), np.zeros(1, dtype=np.int64)
        if self.exponent is None:
            w = max(abs(self.vmin) * 1e-3, 1e-6)
            return np.array([self.vmin - w, self.vmin + w]), np.array([self.n])
        last = int(self._cell(self.vmax, self.exponent)) - self.offset
        used = last + 1
        per = max(1, math.ceil(used / bins))
        k = math.ceil(used / per)
        c = np.zeros(k * per, dtype=np.int64)
        c[:used] = self.counts[:used]
        counts = c.reshape(k, per).sum(axis=1)
        edges = (self.offset + per * np.arange(k + 1)) * self.width
        return edges, counts


@dataclass
class Accumulator:
    """The running statistics of one rule and subject."""

    n: int = 0
    fail: int = 0
    warn: int = 0
    other: int = 0  # a status code other than pass, warn, fail (not checked in that sample)
    undefined: int = 0  # samples with no finite margin
    mean: float = 0.0
    m2: float = 0.0
    hist: Histogram = field(default_factory=Histogram)

    def add(self, margin: np.ndarray, status: np.ndarray) -> None:
        margin = np.asarray(margin, dtype=float).ravel()
        status = np.asarray(status).ravel()
        self.n += status.size
        self.fail += int(np.count_nonzero(status == FAIL))
        self.warn += int(np.count_nonzero(status == WARN))
        self.other += int(np.count_nonzero((status != FAIL) & (status != WARN) & (status != PASS)))
        ok = np.isfinite(margin)
        m = margin[ok]
        self.undefined += int(margin.size - m.size)
        if m.size == 0:
            return
        nb, mb = m.size, float(m.mean())
        m2b = float(((m - mb) ** 2).sum())
        na = self.hist.n
        delta = mb - self.mean
        tot = na + nb
        self.mean += delta * nb / tot
        self.m2 += m2b + delta * delta * na * nb / tot
        self.hist.add(m)

    @property
    def defined(self) -> int:
        return self.hist.n


@dataclass(frozen=True)
class RuleStats:
    """One rule and subject over the sweep. Shares are fractions of the samples; margins as fractions
    of the limit (positive on the safe side); ``None`` where no sample gave a finite margin."""

    rule: str
    subject: str
    samples: int
    fail: int
    warn: int
    not_checked: int
    fail_share: float
    fail_ci: tuple[float, float]
    warn_share: float
    warn_ci: tuple[float, float]
    fail_or_warn_share: float
    fail_or_warn_ci: tuple[float, float]
    margin_samples: int
    mean: float | None
    std: float | None
    standard_error: float | None
    q01: float | None
    q50: float | None
    q99: float | None
    least: float | None
    largest: float | None
    quantile_resolution: float | None
    nominal_margin: float | None
    nominal_status: int | None
    corner_margin: float | None  # the worst-case margin over the tolerance box (see corner_note)
    corner_status: int | None  # the worst status there
    corner_note: str
    hist_edges: tuple[float, ...]
    hist_counts: tuple[int, ...]

    @property
    def tight(self) -> bool:
        """Some sample fails or warns, or the 1 % quantile margin is under :data:`TIGHT_MARGIN`."""
        return self.fail + self.warn > 0 or (self.q01 is not None and self.q01 < TIGHT_MARGIN)


@dataclass(frozen=True)
class SweepResult:
    samples: int
    seed: int
    chunk: int
    parameters: tuple[dict[str, Any], ...]
    rules: tuple[RuleStats, ...]  # nonzero fail or warn share first, then by the 1 % quantile margin

    def tight(self) -> list[RuleStats]:
        return [r for r in self.rules if r.tight]


def _unpack(ev: Any) -> tuple[np.ndarray, np.ndarray]:
    if hasattr(ev, "margin"):
        return np.asarray(ev.margin, dtype=float), np.asarray(ev.status)
    m, s = ev
    return np.asarray(m, dtype=float), np.asarray(s)


def _finite_or_none(x: float) -> float | None:
    return float(x) if x is not None and math.isfinite(x) else None


def run(
    params: Sequence[ParameterLike],
    evaluate: Evaluator,
    n: int,
    seed: int,
    *,
    chunk: int = CHUNK,
    progress: Callable[[int, int], None] | None = None,
    worst: dict[tuple[str, str], tuple[float, int]] | None = None,
    worst_note: str = "",
) -> SweepResult:
    """Sweep ``n`` samples of ``params`` through ``evaluate`` (``X[N, P] -> {(rule, subject): Evaluated}``,
    each with ``margin[N]`` and ``status[N]``: 0 pass, 1 warn, 2 fail), ``chunk`` samples at a time;
    ``progress(done, n)`` after each chunk.

    The worst-case margin of each rule is ``worst`` (key -> (margin, status), said in ``worst_note``)
    where given, else the least margin over every corner of the tolerance box where at most
    :data:`VERTEX_LIMIT` parameters vary, else not known."""
    if n < 1:
        raise ValueError("expected at least one sample")
    if chunk < 1:
        raise ValueError("expected a chunk of at least one sample")
    params = list(params)
    acc: dict[tuple[str, str], Accumulator] = {}
    done = 0
    while done < n:
        stop = min(n, done + chunk)
        x = samples(params, seed, done, stop)
        for key, ev in evaluate(x).items():
            m, s = _unpack(ev)
            if m.shape[0] != x.shape[0] or s.shape[0] != x.shape[0]:
                raise ValueError(f"evaluate gave {m.shape[0]} margins for {x.shape[0]} samples ({key})")
            acc.setdefault(key, Accumulator()).add(m, s)
        done = stop
        if progress is not None:
            progress(done, n)

    nom = {k: _unpack(v) for k, v in evaluate(nominal_row(params)).items()}
    corners: dict[tuple[str, str], tuple[np.ndarray, np.ndarray]] = {}
    low, high, _ = _bounds(params)
    free = int(np.count_nonzero(high > low))
    if worst is not None:
        corners = {k: (np.array([m]), np.array([st])) for k, (m, st) in worst.items()}
        corner_note = worst_note
    elif free <= VERTEX_LIMIT:
        corners = {k: _unpack(v) for k, v in evaluate(vertices(params)).items()}
        corner_note = f"every corner of the {free} declared tolerances ({2**free} evaluations)"
    else:
        corner_note = f"not known: {free} parameters give {2**free} corners (at most {2**VERTEX_LIMIT} enumerated)"

    rows = []
    for (rule, subject), a in acc.items():
        d = a.defined
        mean = a.mean if d else None
        std = math.sqrt(a.m2 / (d - 1)) if d > 1 else (0.0 if d == 1 else None)
        se = std / math.sqrt(d) if std is not None and d else None
        nm, ns = nom.get((rule, subject), (np.array([np.nan]), np.array([-1])))
        cm, cs = corners.get((rule, subject), (np.array([]), np.array([])))
        finite_c = cm[np.isfinite(cm)] if cm.size else cm
        edges, counts = a.hist.coarse() if d else (np.array([]), np.array([], dtype=np.int64))
        rows.append(
            RuleStats(
                rule=rule,
                subject=subject,
                samples=a.n,
                fail=a.fail,
                warn=a.warn,
                not_checked=a.other,
                fail_share=a.fail / a.n,
                fail_ci=wilson(a.fail, a.n),
                warn_share=a.warn / a.n,
                warn_ci=wilson(a.warn, a.n),
                fail_or_warn_share=(a.fail + a.warn) / a.n,
                fail_or_warn_ci=wilson(a.fail + a.warn, a.n),
                margin_samples=d,
                mean=_finite_or_none(mean) if mean is not None else None,
                std=std,
                standard_error=se,
                q01=a.hist.quantile(0.01) if d else None,
                q50=a.hist.quantile(0.50) if d else None,
                q99=a.hist.quantile(0.99) if d else None,
                least=a.hist.vmin if d else None,
                largest=a.hist.vmax if d else None,
                quantile_resolution=a.hist.resolution if d else None,
                nominal_margin=_finite_or_none(float(nm[0])),
                nominal_status=int(ns[0]) if int(ns[0]) in (PASS, WARN, FAIL) else None,
                corner_margin=float(finite_c.min()) if finite_c.size else None,
                corner_status=int(cs.max()) if cs.size else None,
                corner_note=corner_note,
                hist_edges=tuple(float(e) for e in edges),
                hist_counts=tuple(int(c) for c in counts),
            )
        )
    rows.sort(key=_order)
    return SweepResult(
        samples=n,
        seed=seed,
        chunk=chunk,
        parameters=tuple(_param_row(p) for p in params),
        rules=tuple(rows),
    )


def _order(r: RuleStats) -> tuple:
    return (
        -(r.fail_share),
        -(r.warn_share),
        r.q01 if r.q01 is not None else math.inf,
        r.rule,
        r.subject,
    )


def _param_row(p: ParameterLike) -> dict[str, Any]:
    return {
        "key": p.key,
        "words": p.words,
        "nominal": float(p.nominal),
        "low": float(p.low),
        "high": float(p.high),
        "unit": p.unit,
        "distribution": str(p.distribution),
        "elements": list(getattr(p, "elements", ()) or ()),
        "source": str(getattr(p, "source", "")),
        "status": str(getattr(p, "status", "")),
    }


def sweep_drawing(
    drawing: Any,
    n: int,
    seed: int,
    *,
    chunk: int = CHUNK,
    progress: Callable[[int, int], None] | None = None,
) -> SweepResult:
    """The sweep of a loaded drawing over the parameters it declares
    (:func:`coilstage.analysis.params.parameters`, evaluated by :func:`coilstage.analysis.params.evaluate`)."""
    from coilstage.analysis import params as declared
    from coilstage.analysis import sensitivities

    plist = declared.parameters(drawing)
    try:
        found = sensitivities.analyse_sensitivities(drawing)
    except ValueError as exc:  # a network too large for the corner search: the margins stay not known
        worst, note = {}, f"not known: {exc}"
    else:
        worst = {k: (float(v.corner.margin), int(v.corner.status)) for k, v in found.items()}
        note = (
            "the worst corner of the declared tolerances (analysis.sensitivities: every corner, or a search "
            "from the sensitivity signs)"
        )
    return run(
        plist,
        lambda x: declared.evaluate(drawing, x),
        n,
        seed,
        chunk=chunk,
        progress=progress,
        worst=worst,
        worst_note=note,
    )


def table_rows(result: SweepResult) -> list[dict[str, Any]]:
    """The result as flat rows (one per rule and subject) for CSV and JSON."""
    out = []
    for r in result.rules:
        out.append(
            {
                "rule": r.rule,
                "subject": r.subject,
                "samples": r.samples,
                "fail": r.fail,
                "warn": r.warn,
                "not_checked": r.not_checked,
                "fail_share": r.fail_share,
                "fail_ci_low": r.fail_ci[0],
                "fail_ci_high": r.fail_ci[1],
                "warn_share": r.warn_share,
                "warn_ci_low": r.warn_ci[0],
                "warn_ci_high": r.warn_ci[1],
                "fail_or_warn_share": r.fail_or_warn_share,
                "fail_or_warn_ci_low": r.fail_or_warn_ci[0],
                "fail_or_warn_ci_high": r.fail_or_warn_ci[1],
                "margin_mean": r.mean,
                "margin_std": r.std,
                "margin_standard_error": r.standard_error,
                "margin_q01": r.q01,
                "margin_q50": r.q50,
                "margin_q99": r.q99,
                "margin_least": r.least,
                "margin_largest": r.largest,
                "quantile_resolution": r.quantile_resolution,
                "nominal_margin": r.nominal_margin,
                "corner_margin": r.corner_margin,
                "tight": r.tight,
            }
        )
    return out


def status_word(code: int | None) -> str:
    return {PASS: "pass", WARN: "warn", FAIL: "fail"}.get(code, "not known") if code is not None else "not known"
