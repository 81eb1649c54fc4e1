"""What the harness's connectivity says: what a fuse cuts off, which stages a relay switches, which
cables a fuse protects. One walk (the nodes still fed from the battery with one device open, asked of
:class:`coilstage.graph.Graph`, the loader's walk) answers all three."""

from __future__ import annotations

from coilstage.drawing.schema import Cable, Drawing, Fuse, Relay, Stage
from coilstage.graph import Graph


def supply_graph(d: Drawing) -> Graph:
    """The harness without its stages, as a :class:`coilstage.graph.Graph` (the same walk the
    loader's structure checks ask): an edge per cable, fuse, relay contact and ground strap."""
    return Graph((e.a, e.b, e.id) for e in d.elements if not isinstance(e, Stage))


def live_nodes_without(d: Drawing, device_ids: list[str]) -> dict[str, set[str]]:
    """For each device: the nodes still fed from the battery with that device open (supply side
    only: never through a stage or the negative node)."""
    live = supply_graph(d).reachable_without_each(
        d.supply.battery.node, device_ids, avoid_nodes={d.supply.negative_node}
    )
    return {did: set(nodes) for did, nodes in live.items()}


def cut_off_by(d: Drawing, device_ids: list[str]) -> dict[str, set[str]]:
    """For each device id: the elements that lose their connection to the battery when it opens."""
    live = live_nodes_without(d, device_ids)
    return {
        did: {e.id for e in d.elements if e.id != did and e.a not in live[did] and e.b not in live[did]}
        for did in device_ids
    }


def switched_stages(d: Drawing) -> dict[str, list[str]]:
    """Relay id -> the stages whose feed it opens (their feed node loses the battery with it open)."""
    relays = [r.id for r in d.of_kind(Relay)]
    live = live_nodes_without(d, relays)
    return {rid: [s.id for s in d.stages if s.a not in live[rid]] for rid in relays}


def protected_cables(d: Drawing) -> dict[str, list[str]]:
    """Fuse id -> the cables it protects: those named in ``protects``, or else the cables that lose
    their connection to the battery when the fuse opens and for which it is the nearest such fuse."""
    fuses = d.of_kind(Fuse)
    feed = {c.id for c in d.of_kind(Cable) if c.role == "feed"}
    cut_by = {fid: cut & feed for fid, cut in cut_off_by(d, [f.id for f in fuses]).items()}
    out: dict[str, list[str]] = {}
    for f in fuses:
        if f.protects is not None:
            out[f.id] = list(f.protects)
            continue
        mine = []
        for cid in sorted(cut_by[f.id]):
            # nearest: no other fuse that also cuts this cable is itself downstream of f
            downstream = [g for g in fuses if g.id != f.id and cid in cut_by[g.id] and cut_by[g.id] < cut_by[f.id]]
            if not downstream:
                mine.append(cid)
        out[f.id] = mine
    return out


def unfused_feed_cables(d: Drawing) -> list[str]:
    """Feed cables that no fuse cuts off: the cable ahead of the first fuse."""
    covered: set[str] = set()
    for cut in cut_off_by(d, [f.id for f in d.of_kind(Fuse)]).values():
        covered |= cut
    return [c.id for c in d.of_kind(Cable) if c.role == "feed" and c.id not in covered]
