"""Checks of the network as a whole, made before any solve: every part connected to the battery, feeds and
returns, special nodes used as what they are, no zero-ohm path across the supply or a stage, no loop of zero-ohm
parts, every fuse's ``protects`` naming a cable. A drawing that passes has a well-posed DC network (each node
reaches the battery through finite resistances, the supply is not shorted), so the analysis never meets a
singular matrix or a division by zero from its shape.
"""

from __future__ import annotations

from collections import defaultdict

from coilstage.graph import Graph, UnionFind

from .harness import Link
from .reader import Reader
from .schema import Cable, Element, Fuse, Relay, Resistor, Stage, Supply


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
    # one walk from each pole (the graph is undirected: a node reaches a pole iff the pole reaches it)
    returns = net.reachable(neg, avoid_nodes={pos})
    feeds = net.reachable(pos, avoid_nodes={neg})
    for s in links:
        if s.kind == "stage":
            if s.b not in returns:
                r.problem(f"{s.where}.to", s.b, f'a return path from the stage to the negative node "{neg}"')
            if s.a not in feeds:
                r.problem(f"{s.where}.from", s.a, f'a feed path from the stage to the battery node "{pos}"')

    # A loop made only of zero-ohm parts has no defined current split.
    zero = UnionFind()
    for e in elements:
        if getattr(e, "resistance", None) == 0.0 and not zero.union(e.a, e.b):
            r.problem(e.where, "0 ohm", "a resistance: this part closes a loop of zero-ohm parts (give resistances)")

    _islands(r, supply, links)
    _special_nodes(r, supply)
    _zero_ohm_shorts(r, supply, elements)
    _returns_without_role(r, supply, links)
    _protects(r, elements)


def _islands(r: Reader, supply: Supply, links: list[Link]) -> None:
    """Every element in the battery's connected component (through any element, stages included)."""
    net = Graph((x.a, x.b, x.id) for x in links)
    live = net.reachable(supply.battery.node)
    for x in links:
        if x.a not in live and x.b not in live:
            r.problem(x.where, f"{x.a} - {x.b}", "a part connected to the battery's network (it sits on an island)")


def _special_nodes(r: Reader, supply: Supply) -> None:
    pos, neg = supply.battery.node, supply.negative_node
    if supply.chassis_node == pos:
        r.problem("supply.chassis", supply.chassis_node, f'a node other than the battery node "{pos}"')
    if supply.alternator is not None and supply.alternator.node == neg:
        r.problem("supply.alternator.node", neg, f'a node other than the negative node "{neg}"')
    if supply.base_load_node == neg:
        r.problem("supply.base_load_node", neg, f'a node other than the negative node "{neg}"')


def _zero_ohm_shorts(r: Reader, supply: Supply, elements: list[Element]) -> None:
    """A path of zero-ohm parts (fuses, relays, joints given or taken as 0 ohm) across the battery or
    across a stage shorts it: the network has no finite solution."""
    zero = [e for e in elements if isinstance(e, (Fuse, Relay, Resistor)) and e.resistance == 0.0]
    net = Graph((e.a, e.b, e.id) for e in zero)
    joined = UnionFind()
    for e in zero:
        joined.union(e.a, e.b)
    pos, neg = supply.battery.node, supply.negative_node
    if joined.same(pos, neg):
        shorted = net.reachable(pos)
        parts = sorted(e.id for e in zero if e.a in shorted)
        r.problem(
            "supply",
            ", ".join(parts[:6]),
            f'no path of zero-ohm parts from "{pos}" to "{neg}" (it shorts the battery; give resistances)',
        )
    for s in elements:
        if isinstance(s, Stage) and joined.same(s.a, s.b):
            r.problem(s.where, f"{s.a} - {s.b}", "no path of zero-ohm parts across the stage (it shorts the stage)")


def _returns_without_role(r: Reader, supply: Supply, links: list[Link]) -> None:
    """A cable wholly on the return side of the stages whose role is not stated would be read as a
    feed; ask for the role."""
    pos, neg = supply.battery.node, supply.negative_node
    net = Graph((x.a, x.b, x.id) for x in links if x.kind != "stage")
    ret = net.reachable(neg, avoid_nodes={pos})
    feed = net.reachable(pos, avoid_nodes={neg})
    for x in links:
        if x.kind == "cable" and not x.role_given and x.a in ret and x.b in ret and not (x.a in feed or x.b in feed):
            r.problem(f"{x.where}.role", "", 'role = "return" for a cable on a stage\'s return (or role = "feed")')


def _protects(r: Reader, elements: list[Element]) -> None:
    cables = {e.id for e in elements if isinstance(e, Cable)}
    for f in elements:
        if isinstance(f, Fuse) and f.protects is not None:
            bad = [x for x in f.protects if x not in cables]
            if bad:
                r.problem(f"{f.where}.protects", bad, "ids of cables in the harness: " + ", ".join(sorted(cables)[:12]))
