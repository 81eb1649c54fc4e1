"""coilstage.graph against scipy.sparse.csgraph (an independent implementation of the same walks).

Reference: scipy.sparse.csgraph.connected_components (undirected) and breadth_first_order; the
count of loop-closing edges against the cycle rank E - N + C of a multigraph (Diestel, *Graph
Theory*, 5th ed., section 1.9: the cycle space of a graph has dimension E - N + C).
"""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import breadth_first_order, connected_components

from coilstage.graph import Graph, UnionFind, loop_closing_edges
from coilstage.graph import connected_components as components


@st.composite
def graphs(draw):
    n = draw(st.integers(1, 12))
    pairs = draw(st.lists(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)), max_size=24))
    edges = [(a, b, f"e{k}") for k, (a, b) in enumerate(pairs)]
    return n, edges


def _scipy_labels(n, edges):
    rows = [a for a, _b, _k in edges]
    cols = [b for _a, b, _k in edges]
    m = coo_matrix((np.ones(len(edges)), (rows, cols)), shape=(n, n)).tocsr()
    return connected_components(m, directed=False)


def _scipy_reachable(n, edges, start, avoid_nodes=(), avoid_edges=()):
    keep = [(a, b) for a, b, k in edges if k not in avoid_edges and a not in avoid_nodes and b not in avoid_nodes]
    rows = [a for a, _ in keep] + [b for _, b in keep]
    cols = [b for _, b in keep] + [a for a, _ in keep]
    m = coo_matrix((np.ones(len(rows)), (rows, cols)), shape=(n, n)).tocsr()
    return set(breadth_first_order(m, start, directed=True, return_predecessors=False).tolist())


@settings(max_examples=300, deadline=None)
@given(graphs())
def test_components_match_scipy(g):
    n, edges = g
    count, labels = _scipy_labels(n, edges)
    ours = components(range(n), edges)
    assert len(ours) == count
    for comp in ours:
        assert len({labels[x] for x in comp}) == 1
    assert sorted(x for c in ours for x in c) == list(range(n))


@settings(max_examples=300, deadline=None)
@given(graphs(), st.data())
def test_reachability_avoiding_edges_and_nodes_matches_scipy(g, data):
    n, edges = g
    start = data.draw(st.integers(0, n - 1))
    avoid_e = set(data.draw(st.lists(st.sampled_from([k for *_, k in edges]), max_size=4))) if edges else set()
    avoid_n = set(data.draw(st.lists(st.integers(0, n - 1), max_size=3))) - {start}
    graph = Graph(edges, range(n))
    assert graph.reachable(start, avoid_n, avoid_e) == _scipy_reachable(n, edges, start, avoid_n, avoid_e)
    without = graph.reachable_without_each(start, sorted(avoid_e), avoid_n)
    for key, nodes in without.items():
        assert nodes == _scipy_reachable(n, edges, start, avoid_n, {key})


@settings(max_examples=300, deadline=None)
@given(graphs())
def test_loop_closing_edges_count_is_the_cycle_rank(g):
    n, edges = g
    count, _labels = _scipy_labels(n, edges)
    used = {a for a, *_ in edges} | {b for _a, b, _k in edges}
    isolated = n - len(used)
    # cycle rank E - N + C over the nodes the edges touch
    assert len(loop_closing_edges(edges)) == len(edges) - len(used) + (count - isolated)


def test_union_find_reports_a_loop_and_a_self_loop():
    u = UnionFind()
    assert u.union("a", "b") and u.union("b", "c")
    assert not u.union("c", "a")  # closes the triangle
    assert not u.union("d", "d")  # a self-loop is a loop
    assert u.same("a", "c") and not u.same("a", "d")


def test_long_chain_does_not_recurse():
    """A chain of 200 000 edges: an iterative walk, no RecursionError (the interpreter's default
    recursion limit is 1000)."""
    n = 200_000
    edges = [(i, i + 1, i) for i in range(n)]
    g = Graph(edges)
    assert g.reaches(0, n)
    assert not g.reaches(0, n, avoid_edges={n // 2})
    assert len(loop_closing_edges(edges)) == 0
