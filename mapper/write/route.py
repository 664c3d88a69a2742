"""Orthogonal wires on a grid for the schematic, with no two nets touching.

A maze router: each connection is a shortest path on the grid found by
Lee's wave expansion (C. Y. Lee, "An algorithm for path connections and its
applications", IRE Trans. Electronic Computers EC-10, 1961) guided by a
distance estimate (A* search: Hart, Nilsson and Raphael, IEEE Trans. SSC 4,
1968).  A net is grown as a tree: it starts from its first terminal and
each further terminal is joined to the nearest point of the tree.

What the grid promises (the rules every node keeps):

* a node used by one net as a bend, a branch or an end belongs to that net
  alone: no other net may pass through it or end there, so wires of
  different nets never touch;
* a node one net passes straight through may be crossed at right angles by
  one other net (a plain crossing, no dot), never run along by it, so
  wires of different nets never overlap;
* blocked nodes (symbol bodies, pin stubs, labels) take no wire at all.

A terminal that cannot be reached leaves the net unrouted (its partial
wires are taken back); the caller then names it with labelled ports
instead.  Nothing here recurses.
"""
from __future__ import annotations

import heapq
from dataclasses import dataclass, field

__all__ = ["Grid", "RoutedNet", "FREE", "BLOCKED"]

FREE = -1
BLOCKED = -2
#: direction index -> (dx, dy); 0 east, 1 west, 2 south, 3 north
STEPS = ((1, 0), (-1, 0), (0, 1), (0, -1))
_REVERSE = (1, 0, 3, 2)
#: extra cost of a bend and of crossing another net: fewer bends and crossings read better
BEND_COST = 3
CROSS_COST = 4


@dataclass
class RoutedNet:
    """The wires of one net on the grid.

    ``edges`` are pairs of adjacent node indices (smaller first); ``nodes``
    maps each node the net uses to the set of directions its edges leave
    in; ``no_branch`` are nodes of the net no new wire may start from
    (labelled stubs: a branch there would cross the label).
    """

    net: int
    edges: set = field(default_factory=set)
    nodes: dict = field(default_factory=dict)
    no_branch: set = field(default_factory=set)


class Grid:
    """A ``width`` × ``height`` grid of nodes and which net uses each node how (see the module docstring)."""

    def __init__(self, width: int, height: int):
        self.w, self.h = width, height
        n = width * height
        self.full = [FREE] * n   # owner of a node used as bend/branch/end (or BLOCKED)
        self.hor = [FREE] * n    # net passing straight through east-west
        self.ver = [FREE] * n    # net passing straight through north-south
        self.routed: dict[int, RoutedNet] = {}

    # -- set-up ------------------------------------------------------------------------------------
    def node(self, gx: int, gy: int) -> int:
        return gy * self.w + gx

    def xy(self, node: int) -> tuple[int, int]:
        return node % self.w, node // self.w

    def inside(self, gx: int, gy: int) -> bool:
        return 0 <= gx < self.w and 0 <= gy < self.h

    def block(self, gx0: int, gy0: int, gx1: int, gy1: int) -> None:
        """Block every node of the rectangle (inclusive, clipped to the grid)."""
        for gy in range(max(0, gy0), min(self.h - 1, gy1) + 1):
            row = gy * self.w
            for gx in range(max(0, gx0), min(self.w - 1, gx1) + 1):
                self.full[row + gx] = BLOCKED

    def claim(self, net: int, nodes: list, branch_at_end: bool = True) -> None:
        """Give ``nodes`` (a straight run, in order) to ``net`` as a drawn stub.

        The nodes must be free.  The run becomes part of the net's tree;
        only its last node (when ``branch_at_end``) may start new wires.
        """
        r = self.routed.setdefault(net, RoutedNet(net))
        for i, nd in enumerate(nodes):
            if self.full[nd] not in (FREE, net) or self.hor[nd] not in (FREE, net) or \
                    self.ver[nd] not in (FREE, net):
                raise ValueError(f"node {self.xy(nd)} is not free for net {net}")
            self.full[nd] = net
            r.nodes.setdefault(nd, set())
            if i > 0:
                self._add_edge(r, nodes[i - 1], nd)
            if i < len(nodes) - 1 or not branch_at_end:
                r.no_branch.add(nd)

    def _add_edge(self, r: RoutedNet, a: int, b: int) -> None:
        lo, hi = (a, b) if a < b else (b, a)
        r.edges.add((lo, hi))
        if hi - lo == 1:
            r.nodes.setdefault(lo, set()).add(0)
            r.nodes.setdefault(hi, set()).add(1)
        else:
            r.nodes.setdefault(lo, set()).add(2)
            r.nodes.setdefault(hi, set()).add(3)

    # -- use of a node -------------------------------------------------------------------------------
    def _free_for(self, nd: int, net: int) -> bool:
        """A node ``net`` may bend, branch or end at."""
        return self.full[nd] in (FREE, net) and self.hor[nd] in (FREE, net) and self.ver[nd] in (FREE, net)

    def _mark(self, r: RoutedNet, nd: int) -> None:
        dirs = r.nodes.get(nd, set())
        if dirs == {0, 1}:
            self.hor[nd] = r.net
        elif dirs == {2, 3}:
            self.ver[nd] = r.net
        else:
            self.full[nd] = r.net

    # -- routing -------------------------------------------------------------------------------------
    def route(self, net: int, groups: list, margin: int = 8) -> bool:
        """Join the pieces of a net into one tree.

        ``groups`` is a list of ``(nodes, attach)``: each piece's nodes
        (claimed stubs, or one port node) and the node a wire may reach it
        at.  The first piece is the start; the others are joined nearest
        first.  Returns ``False`` (and takes back every wire of this call)
        when one cannot be reached.
        """
        r = self.routed.setdefault(net, RoutedNet(net))
        before_edges = set(r.edges)
        before_nodes = {k: set(v) for k, v in r.nodes.items()}
        for nodes, _ in groups:
            for nd in nodes:
                if nd not in r.nodes:
                    r.nodes[nd] = set()
                    self.full[nd] = net
        tree = set(groups[0][0])
        todo = list(groups[1:])
        while todo:
            sources = [nd for nd in tree if nd not in r.no_branch] or list(tree)
            pick = min(todo, key=lambda g: min(self._dist(g[1], nd) for nd in sources))
            todo.remove(pick)
            nodes, target = pick
            path = self._search(net, sources, target, margin)
            if path is None:
                path = self._search(net, sources, target, None)
            if path is None:
                self._undo(r, before_edges, before_nodes)
                return False
            for a, b in zip(path, path[1:]):
                self._add_edge(r, a, b)
            for nd in path:
                self._mark(r, nd)
            tree.update(path)
            tree.update(nodes)
        return True

    def _dist(self, a: int, b: int) -> int:
        w = self.w
        return abs(a % w - b % w) + abs(a // w - b // w)

    def _undo(self, r: RoutedNet, edges: set, nodes: dict) -> None:
        for nd in set(r.nodes) - set(nodes):
            for arr in (self.full, self.hor, self.ver):
                if arr[nd] == r.net:
                    arr[nd] = FREE
        for nd in nodes:
            for arr in (self.hor, self.ver):
                if arr[nd] == r.net:
                    arr[nd] = FREE
        r.edges, r.nodes = edges, nodes
        for nd in nodes:
            if self.full[nd] != r.net:
                self._mark(r, nd)

    def _search(self, net: int, sources: list, target: int, margin: int | None):
        """Cheapest path (list of nodes) from a node of ``sources`` to ``target``, or ``None``."""
        w, h = self.w, self.h
        full, hor, ver = self.full, self.hor, self.ver
        tx, ty = target % w, target // w
        if margin is None:
            x0, y0, x1, y1 = 0, 0, w - 1, h - 1
        else:
            # only sources near the target bound the window; a long tree would make it the whole grid
            near = sorted(sources, key=lambda s: self._dist(s, target))[:1]
            xs = [s % w for s in near] + [tx]
            ys = [s // w for s in near] + [ty]
            x0, x1 = max(0, min(xs) - margin), min(w - 1, max(xs) + margin)
            y0, y1 = max(0, min(ys) - margin), min(h - 1, max(ys) + margin)
        own = self.routed[net].nodes
        best: dict = {}
        came: dict = {}
        heap: list = []
        for s in sources:
            sx, sy = s % w, s // w
            if not (x0 <= sx <= x1 and y0 <= sy <= y1) or not self._free_for(s, net):
                continue
            used = own.get(s, set())
            for d in range(4):
                if d in used:
                    continue
                st = s * 4 + d
                best[st] = 0
                came[st] = None
                heapq.heappush(heap, (abs(sx - tx) + abs(sy - ty), 0, st))
        while heap:
            _, cost, st = heapq.heappop(heap)
            if best.get(st, 1 << 30) < cost:
                continue
            nd, d = divmod(st, 4)
            dx, dy = STEPS[d]
            mx, my = nd % w + dx, nd // w + dy
            if not (x0 <= mx <= x1 and y0 <= my <= y1):
                continue
            m = my * w + mx
            if m == target:
                if not self._free_for(m, net):
                    continue
                path = [m, nd]
                prev = came[st]
                while prev is not None:
                    path.append(prev // 4)
                    prev = came[prev]
                path.reverse()
                # consecutive duplicates come from turns recorded at one node
                out = [path[0]]
                for p in path[1:]:
                    if p != out[-1]:
                        out.append(p)
                return out
            if m in own or full[m] != FREE:
                continue
            axis = hor if d < 2 else ver
            other = ver if d < 2 else hor
            if axis[m] != FREE:
                continue
            crossing = other[m] != FREE
            step = cost + 1 + (CROSS_COST if crossing else 0)
            # go on straight through m
            st2 = m * 4 + d
            if step < best.get(st2, 1 << 30):
                best[st2] = step
                came[st2] = st
                heapq.heappush(heap, (step + abs(mx - tx) + abs(my - ty), step, st2))
            if crossing:
                continue  # no bend where another net crosses
            for d2 in (2, 3) if d < 2 else (0, 1):
                st2 = m * 4 + d2
                c2 = step + BEND_COST
                if c2 < best.get(st2, 1 << 30):
                    best[st2] = c2
                    came[st2] = st
                    heapq.heappush(heap, (c2 + abs(mx - tx) + abs(my - ty), c2, st2))
        return None

    # -- results -------------------------------------------------------------------------------------
    def segments(self, net: int) -> list:
        """The net's wires as maximal straight runs ``((gx1, gy1), (gx2, gy2))``."""
        r = self.routed.get(net)
        if r is None:
            return []
        w = self.w
        hor_edges = sorted(e for e in r.edges if e[1] - e[0] == 1)
        ver_edges = sorted((e for e in r.edges if e[1] - e[0] != 1), key=lambda e: (e[0] % w, e[0] // w))
        out = []
        for edges in (hor_edges, ver_edges):
            run = None
            for a, b in edges:
                if run is not None and run[1] == a and not self._stop(r, a):
                    run[1] = b
                else:
                    if run is not None:
                        out.append(run)
                    run = [a, b]
            if run is not None:
                out.append(run)
        return [(self.xy(a), self.xy(b)) for a, b in out]

    def _stop(self, r: RoutedNet, nd: int) -> bool:
        # a run is split where the net branches, so every junction is an end of a drawn segment
        return len(r.nodes.get(nd, ())) > 2

    def junctions(self, net: int, ends: dict) -> list:
        """Nodes where the net branches: three or more things meet.

        ``ends`` counts, per node, the pins, ports and flags that end there
        (each one counts as a wire).
        """
        r = self.routed.get(net)
        if r is None:
            return []
        return [self.xy(nd) for nd, dirs in r.nodes.items() if len(dirs) + ends.get(nd, 0) >= 3]
