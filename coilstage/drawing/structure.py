"""Checks of the network as a whole, made before any solve: every part connected, feeds and returns, no loop
of zero-ohm parts.
"""

from __future__ import annotations

from collections import defaultdict

from coilstage.graph import Graph, UnionFind

from .harness import Link
from .reader import Reader
from .schema import (
    Element,
    Supply,
)


def check_structure(r: Reader, supply: Supply, links: list[Link], elements: list[Element]) -> None:
    """Nodes that connect to nothing, stages with no feed or no return, loops of 0-ohm parts."""
    ends: dict[str, list[str]] = defaultdict(list)
    for e in links:
        ends[e.a].append(f"{e.where}.from")
        ends[e.b].append(f"{e.where}.to")
    pos, neg = supply.battery.node, supply.negative_node
    supply_nodes = {
        pos: "supply.battery.node",
        neg: "supply.negative",
        supply.base_load_node: "supply.base_load_node",
        supply.chassis_node: "supply.chassis",
    }
    if supply.alternator is not None:
        supply_nodes[supply.alternator.node] = "supply.alternator.node"
    for node, key in supply_nodes.items():
        if node not in ends:
            r.problem(key, node, "a node that a harness element connects to")
    for node, refs in ends.items():
        if len(refs) == 1 and node not in supply_nodes:
            r.problem(refs[0], node, f'a node that something else connects to (nothing else meets at "{node}")')

    # a path through another load is neither feed nor return
    net = Graph((e.a, e.b, e.id) for e in links if e.kind != "stage")
    for s in links:
        if s.kind == "stage":
            if not net.reaches(s.b, neg, avoid_nodes={pos}):
                r.problem(f"{s.where}.to", s.b, f'a return path from the stage to the negative node "{neg}"')
            if not net.reaches(s.a, pos, avoid_nodes={neg}):
                r.problem(f"{s.where}.from", s.a, f'a feed path from the stage to the battery node "{pos}"')

    # A loop made only of zero-ohm parts has no defined current split.
    zero = UnionFind()
    for e in elements:
        if getattr(e, "resistance", None) == 0.0 and not zero.union(e.a, e.b):
            r.problem(e.where, "0 ohm", "a resistance: this part closes a loop of zero-ohm parts (give resistances)")
