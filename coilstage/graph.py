"""Connectivity of a network given as plain node and edge lists (no drawing, no physics).

An edge is a triple ``(a, b, key)``: its two end nodes and a key that names it (an element id).
Nodes and keys are any hashable values. Edges are undirected; parallel edges and self-loops are
allowed. Every walk here is iterative (no recursion), so a network of any size cannot exhaust the
interpreter's stack, and costs O(nodes + edges).

Used by the drawing loader (a stage's feed and return, islands of the network, loops of 0-ohm
parts) and by the analysis (what a fuse or relay cuts off), so that both ask one walk.

The algorithms are the textbook ones: breadth-first search and a disjoint-set forest with path
halving and union by size (Cormen, Leiserson, Rivest, Stein, *Introduction to Algorithms*, 3rd ed.,
sections 22.2 and 21.3).
"""

from __future__ import annotations

from collections import defaultdict, deque
from collections.abc import Hashable, Iterable

Edge = tuple[Hashable, Hashable, Hashable]


class Graph:
    """An undirected multigraph built once from an edge list; ask it reachability questions.

    >>> g = Graph([("B+", "F1", "c1"), ("F1", "S1", "fuse"), ("S1", "B-", "stage")])
    >>> sorted(g.reachable("B+", avoid_edges={"fuse"}))
    ['B+', 'F1']
    """

    def __init__(self, edges: Iterable[Edge], nodes: Iterable[Hashable] = ()) -> None:
        self.adjacency: dict[Hashable, list[tuple[Hashable, Hashable]]] = defaultdict(list)
        for node in nodes:
            self.adjacency.setdefault(node, [])
        for a, b, key in edges:
            self.adjacency[a].append((b, key))
            self.adjacency[b].append((a, key))

    @property
    def nodes(self) -> list[Hashable]:
        return list(self.adjacency)

    def reachable(
        self,
        start: Hashable,
        avoid_nodes: Iterable[Hashable] = (),
        avoid_edges: Iterable[Hashable] = (),
    ) -> set[Hashable]:
        """Every node reached from ``start`` without entering ``avoid_nodes`` or crossing an edge
        whose key is in ``avoid_edges``. ``start`` itself is always in the result."""
        banned_nodes = set(avoid_nodes)
        banned_edges = set(avoid_edges)
        seen = {start}
        todo = deque([start])
        while todo:
            n = todo.popleft()
            for m, key in self.adjacency.get(n, ()):
                if m not in seen and m not in banned_nodes and key not in banned_edges:
                    seen.add(m)
                    todo.append(m)
        return seen

    def reaches(
        self,
        start: Hashable,
        goal: Hashable,
        avoid_nodes: Iterable[Hashable] = (),
        avoid_edges: Iterable[Hashable] = (),
    ) -> bool:
        """Whether ``goal`` can be reached from ``start`` (see :meth:`reachable`)."""
        return goal in self.reachable(start, avoid_nodes, avoid_edges)

    def reachable_without_each(
        self, start: Hashable, edge_keys: Iterable[Hashable], avoid_nodes: Iterable[Hashable] = ()
    ) -> dict[Hashable, set[Hashable]]:
        """For each key in ``edge_keys``: the nodes reached from ``start`` with that edge removed."""
        banned = set(avoid_nodes)
        return {key: self.reachable(start, banned, {key}) for key in edge_keys}

    def components(self) -> list[set[Hashable]]:
        """The connected components, each a set of nodes, in the order their first node was added."""
        out: list[set[Hashable]] = []
        done: set[Hashable] = set()
        for node in self.adjacency:
            if node not in done:
                comp = self.reachable(node)
                done |= comp
                out.append(comp)
        return out


def connected_components(nodes: Iterable[Hashable], edges: Iterable[Edge]) -> list[set[Hashable]]:
    """Connected components of the graph with these nodes (isolated ones included) and edges."""
    return Graph(edges, nodes).components()


class UnionFind:
    """Disjoint sets of hashable items (created on first mention).

    >>> u = UnionFind()
    >>> u.union("a", "b"), u.union("b", "a")
    (True, False)
    """

    def __init__(self) -> None:
        self.parent: dict[Hashable, Hashable] = {}
        self.size: dict[Hashable, int] = {}

    def find(self, x: Hashable) -> Hashable:
        """The representative of ``x``'s set."""
        parent = self.parent
        if x not in parent:
            parent[x] = x
            self.size[x] = 1
            return x
        while parent[x] != x:
            parent[x] = parent[parent[x]]
            x = parent[x]
        return x

    def union(self, a: Hashable, b: Hashable) -> bool:
        """Join the sets of ``a`` and ``b``; False when they were already one set (the edge a-b
        closes a loop)."""
        ra, rb = self.find(a), self.find(b)
        if ra == rb:
            return False
        if self.size[ra] < self.size[rb]:
            ra, rb = rb, ra
        self.parent[rb] = ra
        self.size[ra] += self.size[rb]
        return True

    def same(self, a: Hashable, b: Hashable) -> bool:
        return self.find(a) == self.find(b)


def loop_closing_edges(edges: Iterable[Edge]) -> list[Hashable]:
    """Keys of the edges that close a loop when the edges are added in order (a spanning forest
    keeps the others). An empty list means the edges form a forest."""
    uf = UnionFind()
    return [key for a, b, key in edges if not uf.union(a, b)]
