"""analysis/topology.py against an independent graph library: the nodes still fed from the battery with
one device open, computed by scipy.sparse.csgraph.connected_components on the same harness (stages and
the negative node left out, the device's edge removed)."""

from __future__ import annotations

import pathlib

import numpy as np
import pytest
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components

import coilstage
from coilstage.analysis.topology import live_nodes_without, supply_graph
from coilstage.drawing.schema import Stage
from coilstage.graph import Graph

CONFIGS = pathlib.Path(__file__).resolve().parents[1] / "configs"
DEMOS = ["coach-24v-4stage", "light-truck-12v-2stage", "flawed-retrofit-24v"]


def _scipy_live(d, device: str) -> set[str]:
    neg = d.supply.negative_node
    edges = [(e.a, e.b) for e in d.elements if not isinstance(e, Stage) and e.id != device and neg not in (e.a, e.b)]
    nodes = sorted({n for e in d.elements for n in (e.a, e.b)} - {neg})
    ix = {n: i for i, n in enumerate(nodes)}
    rows = [ix[a] for a, _ in edges]
    cols = [ix[b] for _, b in edges]
    m = coo_matrix((np.ones(len(edges)), (rows, cols)), shape=(len(nodes), len(nodes)))
    _, label = connected_components(m, directed=False)
    home = label[ix[d.supply.battery.node]]
    return {n for n in nodes if label[ix[n]] == home}


@pytest.mark.parametrize("demo", DEMOS)
def test_live_nodes_match_scipy_connected_components(demo):
    d = coilstage.load_drawing(CONFIGS / f"{demo}.toml")
    devices = [e.id for e in d.elements if not isinstance(e, Stage)]
    live = live_nodes_without(d, devices)
    assert len(devices) > 3
    for did in devices:
        assert live[did] == _scipy_live(d, did), did


def test_the_walk_is_the_shared_one():
    # one walk in the package: topology asks coilstage.graph, the module the loader's structure checks use
    d = coilstage.load_drawing(CONFIGS / "coach-24v-4stage.toml")
    assert isinstance(supply_graph(d), Graph)
    src = pathlib.Path(coilstage.__file__).parent / "analysis" / "topology.py"
    assert "while todo" not in src.read_text(encoding="utf-8")
