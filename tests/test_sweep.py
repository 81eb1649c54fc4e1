"""The tolerance sweep (coilstage.sweep, coilstage sweep): sampling, reproducibility, statistics and
the command's files and errors.

Independent references, named beside each check: scipy.stats (binomtest's Wilson interval, the
Kolmogorov–Smirnov test against scipy.stats.uniform and scipy.stats.truncnorm), numpy.quantile,
numpy's own SeedSequence.spawn, Gauss–Legendre quadrature (numpy.polynomial.legendre) for an
expectation, the standard library's csv, json and xml parsers and hashlib.

The linear evaluator below is a test double (margins affine in the parameters, known exactly); the
drawing-level tests run the shipped model, coilstage.analysis.params.evaluate.
"""

from __future__ import annotations

import csv
import hashlib
import json
import math
import xml.etree.ElementTree as ET
from dataclasses import dataclass, replace

import numpy as np
import pytest
from scipy import stats

from coilstage import load_drawing, sweep, sweepcmd
from coilstage.analysis import params

from .conftest import COACH, FLAWED


@dataclass(frozen=True)
class P:
    key: str
    words: str
    nominal: float
    low: float
    high: float
    unit: str = "1"
    distribution: str = "uniform"


def linear(offsets, gradients, warn_below=0.05):
    """A test double: rule j's margin is ``offsets[j] + X @ gradients[j]``; fail below 0, warn below
    ``warn_below``."""
    a = np.asarray(offsets, dtype=float)
    g = np.asarray(gradients, dtype=float)

    def evaluate(x):
        m = a[None, :] + x @ g.T
        st = np.where(m < 0, 2, np.where(m < warn_below, 1, 0))
        return {(f"lin.r{j}", "S"): (m[:, j], st[:, j]) for j in range(len(a))}

    return evaluate


PS = [
    P("a", "a", 0.0, -0.05, 0.05),
    P("b", "b", 1.0, 0.8, 1.2, distribution="normal"),
    P("c", "c", 25.0, -30.0, 80.0),
    P("d", "d", 2.0, 2.0, 2.0),  # no tolerance: the value itself
]


# ---------------------------------------------------------------------------------------------------- statistics


@pytest.mark.parametrize(("k", "n"), [(0, 10), (0, 100_000), (3, 100), (57, 1000), (999, 1000), (50, 50), (1, 1)])
def test_wilson_interval_against_scipy(k, n):
    # scipy.stats.binomtest(...).proportion_ci(method="wilson"): an independent implementation of
    # Wilson (1927), JASA 22:209-212
    ci = stats.binomtest(k, n).proportion_ci(confidence_level=0.95, method="wilson")
    lo, hi = sweep.wilson(k, n)
    # round-off only: two implementations of the Wilson interval (abs for a bound at 0)
    assert lo == pytest.approx(ci.low, rel=1e-12, abs=1e-15)
    assert hi == pytest.approx(ci.high, rel=1e-12, abs=1e-15)


def test_wilson_interval_hand_worked():
    # k = 0 of n = 100, z = 1.959964: centre = (z²/2n)/(1 + z²/n) = 0.019208/1.038415 = 0.018498,
    # half = z/(1 + z²/n)·sqrt(z²/4n²) = (z²/2n)/(1 + z²/n) = 0.018498, so [0, 0.036995]
    lo, hi = sweep.wilson(0, 100)
    assert lo == 0.0
    assert hi == pytest.approx(0.036995, abs=2e-6)


def test_histogram_quantiles_within_their_resolution_of_numpy():
    rng = np.random.default_rng(5)
    data = np.concatenate([rng.normal(0.2, 0.05, 30_000), rng.uniform(-0.3, 0.6, 2_000)])
    h = sweep.Histogram()
    for part in np.array_split(data, 17):
        h.add(part)
    assert h.n == data.size and h.counts.sum() == data.size
    for q in (0.01, 0.5, 0.99):
        # numpy.quantile, method "inverted_cdf" (Hyndman and Fan's definition 1: the ceil(qN)-th
        # smallest value), as the reference sample quantile
        assert abs(h.quantile(q) - np.quantile(data, q, method="inverted_cdf")) <= h.resolution
    assert h.resolution <= 2 * (data.max() - data.min()) / sweep.HIST_BINS


def test_histogram_does_not_depend_on_how_values_arrive():
    rng = np.random.default_rng(9)
    data = np.concatenate([np.full(40, 0.1), rng.normal(0, 1, 3000), rng.normal(40, 1, 50)])
    ref = sweep.Histogram()
    ref.add(data)
    for split in (1, 7, 1000):
        h = sweep.Histogram()
        for i in range(0, data.size, split):
            h.add(data[i : i + split])
        assert np.array_equal(h.counts, ref.counts) and h.exponent == ref.exponent and h.offset == ref.offset
    one = sweep.Histogram()
    one.add(np.full(10, 0.25))
    assert one.quantile(0.01) == one.quantile(0.99) == 0.25


# ---------------------------------------------------------------------------------------------------- sampling


def test_block_streams_are_numpys_spawned_children():
    # numpy's documentation: SeedSequence(seed).spawn(n)[b] is SeedSequence(seed, spawn_key=(b,))
    children = np.random.SeedSequence(42).spawn(4)
    for b, child in enumerate(children):
        own = np.random.SeedSequence(42, spawn_key=(b,))
        assert np.array_equal(child.generate_state(8), own.generate_state(8))


def test_same_seed_same_numbers_whatever_the_split():
    whole = sweep.samples(PS, 7, 0, 3500)
    parts = np.concatenate([sweep.samples(PS, 7, s, e) for s, e in ((0, 1), (1, 999), (999, 2001), (2001, 3500))])
    assert np.array_equal(whole, parts)
    assert np.array_equal(sweep.samples(PS, 7, 0, 3500), whole)  # again: the same
    assert np.array_equal(sweep.samples(PS, 7, 0, 1200), whole[:1200])  # a shorter run is its prefix
    assert not np.array_equal(sweep.samples(PS, 8, 0, 3500), whole)
    assert np.all(whole[:, 3] == 2.0)


def test_distributions_against_scipy_stats():
    x = sweep.samples(PS, 3, 0, 40_000)
    a, b, c = x[:, 0], x[:, 1], x[:, 2]
    assert a.min() >= -0.05 and a.max() <= 0.05 and b.min() >= 0.8 and b.max() <= 1.2
    # Kolmogorov-Smirnov against scipy.stats: uniform on [low, high]; normal centred in the range with
    # the ends at ±3 sigma, truncated there (scipy.stats.truncnorm, a = -3, b = 3)
    assert stats.kstest(a, stats.uniform(loc=-0.05, scale=0.1).cdf).pvalue > 1e-3
    assert stats.kstest(c, stats.uniform(loc=-30.0, scale=110.0).cdf).pvalue > 1e-3
    tn = stats.truncnorm(-3.0, 3.0, loc=1.0, scale=0.4 / 6.0)
    assert stats.kstest(b, tn.cdf).pvalue > 1e-3
    # the truncated normal's variance, 0.9733 sigma² (scipy's truncnorm.var), within 3 % at N = 40 000
    assert b.var() == pytest.approx(tn.var(), rel=0.03)
    assert tn.var() / (0.4 / 6.0) ** 2 == pytest.approx(0.97334, abs=1e-4)


def test_unknown_distribution_is_refused():
    with pytest.raises(ValueError, match="neither uniform nor normal"):
        sweep.samples([P("x", "x", 0.0, 0.0, 1.0, distribution="lognormal")], 0, 0, 10)


# ---------------------------------------------------------------------------------------------------- the sweep


def _lin():
    return linear([0.2, 0.02, -0.5], [[1.0, 0.1, 0.001, 0.0], [0.5, 0.0, 0.0, 0.0], [0.0, 0.0, 0.0, 0.1]])


def test_results_do_not_depend_on_the_chunk_size():
    ref = sweep.run(PS, _lin(), 12_000, seed=11)
    for chunk in (777, 1000, 12_000):
        r = sweep.run(PS, _lin(), 12_000, seed=11, chunk=chunk)
        for x, y in zip(r.rules, ref.rules, strict=True):
            assert (x.rule, x.fail, x.warn, x.q01, x.q50, x.q99, x.hist_counts) == (
                y.rule,
                y.fail,
                y.warn,
                y.q01,
                y.q50,
                y.q99,
                y.hist_counts,
            )
            # round-off only: the same samples summed in other chunks (abs for a mean at 0)
            assert x.mean == pytest.approx(y.mean, rel=1e-12, abs=1e-15)
            assert x.std == pytest.approx(y.std, rel=1e-10)
    other = sweep.run(PS, _lin(), 12_000, seed=12)
    assert {r.rule: r.mean for r in other.rules}["lin.r0"] != {r.rule: r.mean for r in ref.rules}["lin.r0"]


def test_linear_rule_mean_and_quantiles_converge_on_the_exact_ones():
    """Margin 0.02 + 0.5·a with a uniform on ±0.05 (nominal 0, the middle of its range). The margin is
    linear in a symmetric parameter centred on its nominal, so E[m] = m(nominal) exactly, and the
    sample mean differs from it by about its standard error (central limit theorem): |error| > 4 SE
    has a probability of 6e-5. The q quantile of an increasing function of one uniform parameter is
    the function at the parameter's q quantile: 0.02 + 0.5·(−0.05 + 0.1 q)."""
    n = 20_000
    r = {x.rule: x for x in sweep.run(PS, _lin(), n, seed=1).rules}["lin.r1"]
    # default rel 1e-6: the linear model's margin at nominal is 0.02 by construction: round-off only
    assert r.nominal_margin == pytest.approx(0.02)
    assert abs(r.mean - r.nominal_margin) < 4 * r.standard_error
    # rel 3 %: the sample standard deviation of 20 000 draws scatters by about 1/sqrt(2n) = 0.5 %
    assert r.standard_error == pytest.approx(0.5 * 0.1 / math.sqrt(12) / math.sqrt(n), rel=0.03)
    for q, got in ((0.01, r.q01), (0.5, r.q50), (0.99, r.q99)):
        s = math.sqrt(q * (1 - q) / n)  # the binomial spread of the empirical distribution at q
        lo = 0.02 + 0.5 * (-0.05 + 0.1 * max(0.0, q - 4 * s))
        hi = 0.02 + 0.5 * (-0.05 + 0.1 * min(1.0, q + 4 * s))
        assert lo - r.quantile_resolution <= got <= hi + r.quantile_resolution
    # fail below 0 (a < -0.04: 10 %), warn between 0 and 0.05 (a < 0.06: the rest): P = 0.1 and 0.9
    assert abs(r.fail_share - 0.1) < 4 * math.sqrt(0.1 * 0.9 / n)
    assert r.fail_ci[0] < 0.1 < r.fail_ci[1]
    assert r.fail + r.warn == n


def test_vertices_bound_a_monotone_rule():
    """For margins monotone in each parameter the extremes over the tolerance box are at its corners,
    and the sweep never leaves the box: every corner passing means no sample fails or warns, every
    corner failing means every sample fails."""
    v = sweep.vertices(PS)
    assert v.shape == (8, 4)  # three parameters with a range: 2³ corners, d at its single value
    ev = _lin()(v)
    r = {x.rule: x for x in sweep.run(PS, _lin(), 5000, seed=2).rules}
    assert (ev[("lin.r0", "S")][1] == 0).all() and r["lin.r0"].fail == r["lin.r0"].warn == 0
    assert (ev[("lin.r2", "S")][1] == 2).all() and r["lin.r2"].fail_share == 1.0
    # default rel 1e-6: the sweep's corner margin is the evaluator's smallest: round-off only
    assert r["lin.r0"].corner_margin == pytest.approx(ev[("lin.r0", "S")][0].min())
    assert r["lin.r0"].corner_margin <= r["lin.r0"].least


# ---------------------------------------------------------------------------------------------------- the shipped model


@pytest.fixture(scope="module")
def coach():
    return load_drawing(COACH)


def _pinned(ps, keep):
    """The parameters with every one but ``keep`` held at its nominal value."""
    return [p if p.key == keep else replace(p, low=p.nominal, high=p.nominal) for p in ps]


def test_duty_rules_mean_on_the_nominal_for_the_set_point(coach):
    """Only the regulator's set-point tolerance free (±1.06 %, nominal 0 in the middle). In the duty
    network the bus is held at the regulated voltage and the network is linear, so every current (and
    the voltage-drop fraction) is affine in the set-point, and so is each margin: E[m] = m(nominal)
    and the mean lies within 4 standard errors of the nominal margin (probability 6e-5 otherwise)."""
    ps = _pinned(params.parameters(coach), "supply.alternator.tolerance")
    res = sweep.run(ps, lambda x: params.evaluate(coach, x), 5000, seed=4)
    duty = [r for r in res.rules if r.rule.split(".")[0] in ("fuse", "cable", "relay", "circuit")]
    # moved by the set-point; the coil pick-up is fed from the low bus, where the alternator's state
    # (regulating or current-limited) changes with the set-point, so it is not affine there
    duty = [r for r in duty if r.rule not in ("fuse.breaking_capacity", "relay.coil_pickup") and r.std > 1e-9]
    assert len(duty) >= 10
    for r in duty:
        assert abs(r.mean - r.nominal_margin) < 4 * r.standard_error + 1e-12, (r.rule, r.subject)


def test_nonlinear_rule_mean_and_quantiles_against_quadrature_and_the_parameter_quantile(coach):
    """Only the coil resistance free (±5 %): stage currents go as 1/R, so the mean is compared with
    E[m] by 16-point Gauss-Legendre quadrature over the uniform range (numpy.polynomial.legendre), and
    each quantile with the margin at the parameter's quantile (a margin monotone in one parameter)."""
    ps = _pinned(params.parameters(coach), "coils.RC4.resistance_tolerance")
    j = [p.key for p in ps].index("coils.RC4.resistance_tolerance")
    n = 20_000
    res = {(r.rule, r.subject): r for r in sweep.run(ps, lambda x: params.evaluate(coach, x), n, seed=6).rules}
    key = ("fuse.continuous", "F-MAIN")
    r = res[key]
    nodes, weights = np.polynomial.legendre.leggauss(16)
    x = np.tile([p.nominal for p in ps], (16, 1))
    x[:, j] = 0.05 * nodes
    expect = float(weights @ params.evaluate(coach, x)[key].margin) / 2.0
    assert abs(r.mean - expect) < 4 * r.standard_error
    for q, got in ((0.01, r.q01), (0.5, r.q50), (0.99, r.q99)):
        s = math.sqrt(q * (1 - q) / n)
        ends = np.tile([p.nominal for p in ps], (2, 1))
        ends[:, j] = -0.05 + 0.1 * np.array([max(0.0, q - 4 * s), min(1.0, q + 4 * s)])
        m = params.evaluate(coach, ends)[key].margin  # margin rises with coil resistance (less current)
        assert m[0] - r.quantile_resolution <= got <= m[1] + r.quantile_resolution


def test_fail_share_is_0_where_every_corner_passes_and_1_where_every_corner_fails():
    """The retrofit demo (meant to fail) with all its declared parameters: every corner evaluated
    (8192 rows of params.evaluate); rules whose corners all pass have no failing or warning sample,
    rules whose corners all fail fail in every sample."""
    d = load_drawing(FLAWED)
    ps = params.parameters(d)
    v = sweep.vertices(ps)
    status: dict = {}
    for i in range(0, len(v), 4096):
        for k, e in params.evaluate(d, v[i : i + 4096]).items():
            status.setdefault(k, []).append(e.status)
    status = {k: np.concatenate(s) for k, s in status.items()}
    res = {(r.rule, r.subject): r for r in sweep.sweep_drawing(d, 3000, seed=8).rules}
    all_pass = [k for k, s in status.items() if (s == 0).all()]
    all_fail = [k for k, s in status.items() if (s == 2).all()]
    assert all_pass and all_fail
    for k in all_pass:
        assert res[k].fail == 0 and res[k].warn == 0, k
    for k in all_fail:
        assert res[k].fail_share == 1.0, k


# ---------------------------------------------------------------------------------------------------- the command


def _run(args, capsys):
    code = sweepcmd.main([str(a) for a in args])
    out, err = capsys.readouterr()
    return code, out, err


def test_command_writes_its_files_and_repeats_them_with_the_seed(tmp_path, capsys):
    before = hashlib.sha256(COACH.read_bytes()).hexdigest()
    out1, out2 = tmp_path / "a", tmp_path / "b"
    code, text, err = _run([COACH, "--samples", "2000", "--seed", "3", "-o", out1], capsys)
    doc = json.loads((out1 / "sweep.json").read_text(encoding="utf-8"))
    assert code == (1 if any(r["fail"] for r in doc["rules"]) else 0)
    assert err == ""  # no progress bar when stderr is not a terminal
    with (out1 / "sweep.csv").open(encoding="utf-8", newline="") as fh:
        rows = list(csv.DictReader(fh))
    assert [(r["rule"], r["subject"]) for r in rows] == [(r["rule"], r["subject"]) for r in doc["rules"]]
    assert (
        doc["samples"] == 2000
        and doc["seed"] == 3
        and len(doc["parameters"]) == len(params.parameters(load_drawing(COACH)))
    )
    for r in doc["rules"]:
        assert r["fail_ci_low"] <= r["fail_share"] <= r["fail_ci_high"]
        assert sum(r["histogram"]["counts"]) == r["samples"] or r["margin_least"] is None
    tight = [r for r in doc["rules"] if r["tight"]]
    assert tight
    for r in tight:
        png, svg = (out1 / name for name in r["plots"])
        assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
        assert ET.parse(svg).getroot().tag.endswith("svg")  # xml.etree: well-formed SVG
    # the summary: the drawing, N, seed, then the rules with a nonzero fail or warn share first
    assert str(COACH) in text and "2000 samples, seed 3" in text and "CAUTION" in text
    bad = [f"{r['rule']}" for r in doc["rules"] if r["fail"] + r["warn"]]
    table = [
        ln.split()[0] for ln in text.splitlines() if ln.split() and ln.split()[0] in {r["rule"] for r in doc["rules"]}
    ]
    assert table[: len(bad)] == bad
    assert all(r["fail"] + r["warn"] == 0 for r in doc["rules"][len(bad) :])
    # the same seed gives the same files
    _run([COACH, "--samples", "2000", "--seed", "3", "-o", out2], capsys)
    assert (out2 / "sweep.csv").read_bytes() == (out1 / "sweep.csv").read_bytes()
    assert json.loads((out2 / "sweep.json").read_text(encoding="utf-8"))["rules"] == doc["rules"]
    assert hashlib.sha256(COACH.read_bytes()).hexdigest() == before  # the drawing is never written


@pytest.mark.parametrize(
    "extra",
    [["--samples", "0"], ["--samples", "many"], ["--samples", "2.5"], ["--seed", "-1"], ["--samples", "1e9"]],
)
def test_bad_options_exit_2_and_write_nothing(tmp_path, capsys, extra):
    code, _, err = _run([COACH, *extra, "-o", tmp_path / "out"], capsys)
    assert code == 2
    assert "expected a whole number" in err and "Traceback" not in err
    assert not (tmp_path / "out").exists()


def test_bad_drawing_and_bad_folder_exit_2(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text('[drawing]\ntitle = "x"\n[supply]\nsystem = "48 V"\n', encoding="utf-8")
    code, _, err = _run([bad, "-n", "100", "-o", tmp_path / "o"], capsys)
    assert code == 2 and "cannot be used" in err and "Traceback" not in err
    code, _, err = _run([tmp_path / "missing.toml", "-n", "100", "-o", tmp_path / "o"], capsys)
    assert code == 2 and "Traceback" not in err
    a_file = tmp_path / "f.txt"
    a_file.write_text("keep", encoding="utf-8")
    code, _, err = _run([COACH, "-n", "100", "-o", a_file], capsys)
    assert code == 2 and "not a folder" in err and a_file.read_text(encoding="utf-8") == "keep"
    code, _, err = _run([COACH, "-n", "100", "-o", tmp_path / "no" / "such"], capsys)
    assert code == 2 and "does not exist" in err
    with pytest.raises(SystemExit) as exc:  # a usage error, as argparse reports it
        sweepcmd.main([])
    assert exc.value.code == 2


def test_through_the_command_line(tmp_path, capsys, monkeypatch):
    from coilstage import cli

    monkeypatch.setitem(cli.COMMAND_MODULES, "sweep", "coilstage.sweepcmd")
    code = cli.main(["sweep", str(COACH), "-n", "1000", "--seed", "5", "-o", str(tmp_path / "o"), "--quiet"])
    assert code in (0, 1)
    assert (tmp_path / "o" / "sweep.json").is_file() and (tmp_path / "o" / "sweep.csv").is_file()
    assert "1000 samples, seed 5" in capsys.readouterr().out
    assert cli.main(["sweep", str(COACH), "-n", "0", "-o", str(tmp_path / "p")]) == 2
    assert cli.main(["sweep", str(tmp_path / "none.toml"), "-o", str(tmp_path / "p")]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and "internal error" not in err
    with pytest.raises(SystemExit) as exc:
        cli.main(["sweep", "--help"])
    assert exc.value.code == 0
    assert "--samples" in capsys.readouterr().out
