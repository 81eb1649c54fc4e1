"""Unfused runs: the length of conductor from a source terminal to each point ahead of the first
protective device, measured along the harness (through joints, junction posts, isolators and
relay contacts), as ABYC E-11 counts it: from the point of connection to the source."""

from __future__ import annotations

import heapq
from dataclasses import dataclass

from coilstage.drawing.schema import Cable, Drawing, Fuse, Stage


@dataclass(frozen=True)
class UnfusedRun:
    cable: str
    length: float  # from the source terminal to the cable's far end, along the path [m]
    path: tuple[str, ...]  # element ids from the source terminal to this cable
    sheathed: bool  # every cable on the path is sheathed
    on_battery: bool  # the path's first element is a cable landing on the battery terminal


def unfused_runs(d: Drawing, unfused: list[str], source: str) -> dict[str, UnfusedRun]:
    """For each unfused cable reachable from node ``source`` without crossing a fuse or a stage, the
    shortest path from ``source`` to its far end (Dijkstra on cable lengths; other elements count 0 m)."""
    cables = {c.id: c for c in d.of_kind(Cable)}
    adj: dict[str, list[tuple[str, object]]] = {}
    for e in d.elements:
        if isinstance(e, (Fuse, Stage)):
            continue
        if isinstance(e, Cable) and e.id not in unfused:
            continue
        adj.setdefault(e.a, []).append((e.b, e))
        adj.setdefault(e.b, []).append((e.a, e))
    best: dict[str, tuple[float, tuple[str, ...]]] = {source: (0.0, ())}
    heap = [(0.0, source, ())]
    while heap:
        dist, node, path = heapq.heappop(heap)
        if dist > best.get(node, (float("inf"),))[0]:
            continue
        for other, e in adj.get(node, []):
            nd = dist + (e.length if isinstance(e, Cable) else 0.0)
            if nd < best.get(other, (float("inf"),))[0]:
                best[other] = (nd, (*path, e.id))
                heapq.heappush(heap, (nd, other, (*path, e.id)))
    out = {}
    for cid in unfused:
        c = cables.get(cid)
        if c is None:
            continue
        near = [best[n] for n in (c.a, c.b) if n in best]
        if not near:
            continue
        d0, p0 = min(near, key=lambda x: x[0])
        if cid in p0:  # the cable itself lies on the way to its nearer end: count it once
            i = p0.index(cid)
            p0 = p0[:i]
            d0 = sum(cables[x].length for x in p0 if x in cables)
        length, path = d0 + c.length, (*p0, cid)
        on_path = [cables[i] for i in path if i in cables]
        out[cid] = UnfusedRun(cid, length, path, all(x.sheathed for x in on_path), bool(path) and path[0] in cables)
    return out
