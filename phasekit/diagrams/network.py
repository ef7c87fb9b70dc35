"""The stable diagram as a network of nodes (invariant points) and segments (curves).

Construction (the same for a ternary isotherm and for the sides and interior of a 2-D
projection):

1. Corners. On the ray of a corner (the diagram coordinates fixed, the concentration
   increasing from a dilute solution) the first solid to saturate is the stable one: at that
   point every other solid is still undersaturated. Found by continuation along the ray with
   the saturation events located exactly.
2. Sides. From a corner the saturation curve of its solid is traced along the side; where
   another solid reaches saturation the invariant point is solved (both saturation
   equations), and the tracing goes on along the new solid's curve, up to the next corner.
   This is the lower envelope of the solids' saturation surfaces: the stable liquidus.
3. Interior (2-D diagrams only). From every invariant point of a side the boundary of its two
   solids is traced into the diagram; where a third solid saturates the invariant point of the
   three is solved and the two other boundaries that meet there are traced on, each in the
   direction in which the solid it lacks is undersaturated; boundaries arriving at a side are
   matched with the side's invariant points.

Crystallization fields of a 2-D diagram are the closed cycles of the segments that carry a
solid (its boundaries and its stretches of the sides).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from phasekit.diagrams.engine import Eqs, Evaluator, Point, TraceEnd
from phasekit.errors import ConvergenceError

#: nodes closer than this (in the unknowns) are the same invariant point
SAME_NODE = 1e-6


@dataclass
class Node:
    id: int
    solids: tuple  # local candidate indices, imposed solids excluded, sorted
    point: Point
    location: str  # "corner", "side" or "interior"
    face: str


@dataclass
class Segment:
    id: int
    solids: tuple
    points: list
    start: int
    end: int | None
    face: str
    metastable: bool = False
    end_kind: str = ""


@dataclass
class Network:
    """Nodes and segments of a diagram, in the local solid indices of ``ev``."""

    ev: Evaluator
    nodes: list = field(default_factory=list)
    segments: list = field(default_factory=list)
    warnings: list = field(default_factory=list)
    corner_nodes: dict = field(default_factory=dict)

    # --------------------------------------------------------------- helpers
    def _node(self, solids, point, location, face) -> Node:
        solids = tuple(sorted(solids))
        for nd in self.nodes:
            if nd.solids == solids and np.linalg.norm(nd.point.z - point.z) < SAME_NODE:
                return nd
        nd = Node(len(self.nodes), solids, point, location, face)
        self.nodes.append(nd)
        return nd

    def _segment(self, solids, points, start, end, face, metastable=False, end_kind=""):
        seg = Segment(len(self.segments), tuple(sorted(solids)), points, start, end, face, metastable, end_kind)
        self.segments.append(seg)
        return seg

    def name(self, k) -> str:
        return self.ev.names[k]

    def _fixed_rows(self, coords) -> tuple[np.ndarray, np.ndarray]:
        s = self.ev.system
        A = np.zeros((s.d, s.n))
        A[np.arange(s.d), np.arange(s.d)] = 1.0
        return A, np.array(coords, dtype=float)

    # --------------------------------------------------------------- corners
    def corner(self, vi: int) -> Node:
        """Stable solid at a corner: the first to saturate along the corner's ray."""
        if vi in self.corner_nodes:
            return self.corner_nodes[vi]
        ev, sysm = self.ev, self.ev.system
        vx = sysm.vertices[vi]
        A, b = self._fixed_rows(vx.coords)
        eqs = Eqs(list(ev.imposed), A, b)
        z0 = sysm.ray_start(vx)
        es = np.zeros(sysm.n)
        es[sysm.s_index] = 1.0
        watch = [i for i in range(len(ev.cands)) if i not in ev.imposed]
        if not ev.imposed:
            nd = self._corner_scan(vi, eqs, z0, watch)
            if nd is not None:
                return nd
        start = ev.newton(z0, eqs.with_row(es, z0[sysm.s_index]))
        if start is None:
            raise ConvergenceError(f"no dilute starting point on the ray of corner {vx.name}", {"z": z0.tolist()})
        pts, end = ev.trace(start[0], es, eqs, watch, h0=0.25, hmax=0.25)
        if end.kind != "solid":
            raise ConvergenceError(
                f"no solid of the system saturates on the ray of corner {vx.name} below the concentration limit "
                f"at {ev.temp_c:g} °C (ended: {end.kind})", {"z": end.point.z.tolist()})
        nd = self._node((end.index,), end.point, "corner", vx.name)
        self.corner_nodes[vi] = nd
        return nd

    def _corner_scan(self, vi, eqs, z0, watch, n_scan: int = 160):
        """First saturation on a corner ray without imposed solids: one vectorized scan, then Newton.

        The ray is sampled on a logarithmic grid of the concentration (one call of the activity
        model); the first interval in which a solid's saturation index turns positive brackets
        the answer, which Newton's method then solves exactly (the lowest root wins).
        """
        ev, sysm = self.ev, self.ev.system
        grid = np.linspace(sysm.s_range[0], sysm.s_range[1], n_scan)
        Z = np.repeat(z0[None, :], n_scan, axis=0)
        Z[:, sysm.s_index] = grid
        lnsi = ev.evaluate(Z)[0][:, watch]
        pos = np.where(np.isfinite(lnsi), lnsi, -np.inf) > 0
        hit = np.flatnonzero(pos.any(axis=1))
        if len(hit) == 0 or hit[0] == 0:
            return None
        i = int(hit[0])
        es = np.zeros(sysm.n)
        es[sysm.s_index] = 1.0
        best = None
        for j in np.flatnonzero(pos[i]):
            a, b = lnsi[i - 1, j], lnsi[i, j]
            s0 = grid[i - 1] + (grid[i] - grid[i - 1]) * (a / (a - b) if np.isfinite(a) else 1.0)
            zs = z0.copy()
            zs[sysm.s_index] = s0
            sol = ev.newton(zs, eqs.with_solid(watch[j]), maxit=40, max_step=grid[i] - grid[i - 1])
            if sol is None:
                continue
            pt = sol[0]
            if not grid[i - 1] - 1e-9 <= pt.z[sysm.s_index] <= grid[i] + 1e-9:
                continue
            others = np.delete(pt.lnsi[watch], j)
            if np.all(np.where(np.isfinite(others), others, -1.0) <= 1e-10) and (
                    best is None or pt.z[sysm.s_index] < best[1].z[sysm.s_index]):
                best = (watch[j], pt)
        if best is None:
            return None
        nd = self._node((best[0],), best[1], "corner", sysm.vertices[vi].name)
        self.corner_nodes[vi] = nd
        return nd

    # ----------------------------------------------------------------- sides
    def side(self, ei: int, h0=0.01, hmax=0.04) -> list:
        """Trace the stable saturation curves along a side; returns its nodes in order."""
        ev, sysm = self.ev, self.ev.system
        edge = sysm.edges[ei]
        na, nb = self.corner(edge.a), self.corner(edge.b)
        va = np.array(sysm.vertices[edge.a].coords, dtype=float)
        vb = np.array(sysm.vertices[edge.b].coords, dtype=float)
        direction = np.zeros(sysm.n)
        direction[: sysm.d] = vb - va
        if edge.bound >= 0:
            A, b = sysm.bound_c[edge.bound][None, :], np.array([-sysm.bound_d[edge.bound]])
        else:
            A, b = np.zeros((0, sysm.n)), np.zeros(0)
        end_bounds = set(sysm.vertices[edge.b].bounds) - {edge.bound}
        k = na.solids[0]
        node = na
        order = [na]
        t_ref = direction
        for _ in range(2 * len(ev.cands) + 2):
            eqs = Eqs(list(ev.imposed) + [k], A, b)
            watch = [i for i in range(len(ev.cands)) if i not in ev.imposed and i != k]
            pts, end = ev.trace(node.point, t_ref, eqs, watch, h0=h0, hmax=hmax,
                                skip_bounds=(edge.bound,) if edge.bound >= 0 else ())
            if end.kind == "solid":
                if np.linalg.norm(end.point.z - node.point.z) < 1e-7 and len(node.solids) == 2:
                    self.warnings.append(
                        f"side {edge.name}: the curves of {self.name(k)} and {self.name(end.index)} touch without "
                        f"crossing at {_fmt(end.point.z)} (degenerate); tracing stopped")
                    self._segment((k,), pts, node.id, None, edge.name, end_kind="degenerate")
                    return order
                nxt = self._node((k, end.index), end.point, "side" if sysm.d > 1 else "interior", edge.name)
                self._segment((k,), pts, node.id, nxt.id, edge.name)
                order.append(nxt)
                # go on along the new solid's curve in the direction in which the old one becomes
                # undersaturated (near a fold of the new curve this is not the direction of the side)
                j = end.index
                pe = ev.point(end.point.z, jac=True)
                _, Jn, _ = ev.linearize(end.point.z, Eqs(list(ev.imposed) + [j], A, b))
                t_ref = ev.tangent(Jn, direction)
                if pe.jac_all[k] @ t_ref > 0:
                    t_ref = -t_ref
                node, k = nxt, j
                continue
            if end.kind == "bound" and end.index in end_bounds:
                if nb.solids != (k,):
                    self.warnings.append(
                        f"side {edge.name}: the curve of {self.name(k)} reaches corner {sysm.vertices[edge.b].name}, "
                        f"where the ray found {self.name(nb.solids[0])} first")
                self._segment((k,), pts, node.id, nb.id, edge.name)
                order.append(nb)
                return order
            start_bounds = set(sysm.vertices[edge.a].bounds) - {edge.bound}
            if end.kind == "bound" and end.index in start_bounds:
                why = (f"its saturation curve turns back to corner {sysm.vertices[edge.a].name} (a second root of "
                       "its saturation index along the rays) before another solid saturates; the activity model "
                       "or the solubility products are suspect at this temperature")
            elif end.kind == "bound" and end.index == len(sysm.bound_c):
                why = (f"the curve reaches the concentration limit ({np.exp(sysm.s_range[1]):g} mol/kg) before "
                       "another solid saturates")
            else:
                why = f"tracing stopped ({end.kind})"
            self.warnings.append(f"side {edge.name}: {self.name(k)}: {why}, at {_fmt(end.point.z)}; "
                                 "the diagram is incomplete")
            self._segment((k,), pts, node.id, None, edge.name, end_kind=end.kind)
            return order
        self.warnings.append(f"side {edge.name}: too many invariant points; tracing stopped")
        return order

    # -------------------------------------------------------------- interior
    def interior(self, h0=0.01, hmax=0.04, max_segments=200):
        """Boundaries of the crystallization fields inside a 2-D diagram."""
        ev, sysm = self.ev, self.ev.system
        queue = []
        for nd in list(self.nodes):
            if nd.location == "side" and len(nd.solids) == 2:
                edge = next(e for e in sysm.edges if e.name == nd.face)
                inward = np.array(sysm.bound_c[edge.bound], dtype=float)
                queue.append((nd.id, nd.solids, inward, None))
        n_done = 0
        while queue and n_done < max_segments:
            nid, pair, t_ref, dropped = queue.pop(0)
            if any(sg.solids == tuple(sorted(pair)) and nid in (sg.start, sg.end) and sg.face == "interior"
                   for sg in self.segments):
                continue
            node = self.nodes[nid]
            eqs = Eqs(list(ev.imposed) + list(pair), np.zeros((0, sysm.n)), np.zeros(0))
            if dropped is not None:
                # orient: the solid left behind becomes undersaturated
                R, J, _ = ev.linearize(node.point.z, eqs)
                t = ev.tangent(J, t_ref)
                if node.point.jac_all[dropped] @ t > 0:
                    t = -t
                t_ref = t
            watch = [i for i in range(len(ev.cands)) if i not in ev.imposed and i not in pair]
            pts, end = ev.trace(node.point, t_ref, eqs, watch, h0=h0, hmax=hmax)
            n_done += 1
            if end.kind == "solid":
                trio = tuple(sorted(pair + (end.index,)))
                pe = ev.point(end.point.z, jac=True)
                nxt = self._node(trio, pe, "interior", "interior")
                self._segment(pair, pts, nid, nxt.id, "interior")
                for other in trio:
                    if other in pair and len(set(trio) - {other}) == 2:
                        new_pair = tuple(sorted(set(trio) - {other}))
                        if new_pair != tuple(sorted(pair)):
                            queue.append((nxt.id, new_pair, np.ones(sysm.n), other))
                continue
            if end.kind == "bound" and end.index < len(sysm.bound_c):
                match = [nd for nd in self.nodes if nd.location == "side" and nd.solids == tuple(sorted(pair))
                         and np.linalg.norm(nd.point.z - end.point.z) < 1e-5]
                if match:
                    self._segment(pair, pts, nid, match[0].id, "interior")
                else:
                    nd = self._node(pair, end.point, "side", _edge_of_bound(sysm, end.index))
                    self._segment(pair, pts, nid, nd.id, "interior")
                    self.warnings.append(
                        f"boundary {'+'.join(self.name(k) for k in pair)} meets side {nd.face} at a point "
                        "not found by the tracing of that side")
                continue
            self.warnings.append(f"boundary {'+'.join(self.name(k) for k in pair)}: tracing stopped ({end.kind})")
            self._segment(pair, pts, nid, None, "interior", end_kind=end.kind)
        if queue:
            self.warnings.append("interior: segment limit reached; the diagram may be incomplete")

    # ------------------------------------------------------- metastable parts
    def extend(self, seg: Segment, at_node: int, ionic_strength_stop: float, max_length: float = 2.0):
        """Metastable extension of a 1-D-face curve beyond one of its invariant points."""
        ev, sysm = self.ev, self.ev.system
        node = self.nodes[at_node]
        other = [pt for pt in seg.points if np.linalg.norm(pt.z - node.point.z) > 1e-9]
        if not other:
            return None
        # direction: away from the stable part of the curve
        inner = other[0] if seg.start != at_node else other[-1]
        ref = node.point.z - inner.z
        A, b = np.zeros((0, sysm.n)), np.zeros(0)
        eqs = Eqs(list(ev.imposed) + list(seg.solids), A, b)
        turn = 0 if sysm.d == 1 else None
        pts, end = ev.trace(node.point, ref, eqs, [], h0=0.01, hmax=0.04, ionic_strength_stop=ionic_strength_stop,
                            turn_index=turn, max_length=max_length)
        if len(pts) < 2:
            return None
        return self._segment(seg.solids, pts, at_node, None, seg.face, metastable=True, end_kind=end.kind)

    # ---------------------------------------------------------------- fields
    def field_cycles(self, solid: int) -> list:
        """Closed boundary of each field of ``solid`` (2-D diagrams): lists of Points in order."""
        segs = [sg for sg in self.segments if solid in sg.solids and not sg.metastable and sg.end is not None]
        adj: dict = {}
        for sg in segs:
            adj.setdefault(sg.start, []).append(sg)
            adj.setdefault(sg.end, []).append(sg)
        used = set()
        cycles = []
        for sg0 in segs:
            if sg0.id in used:
                continue
            ring = []
            node, sg = sg0.start, sg0
            closed = False
            for _ in range(len(segs) + 1):
                used.add(sg.id)
                pts = sg.points if sg.start == node else sg.points[::-1]
                ring.extend(pts if not ring else pts[1:])
                node = sg.end if sg.start == node else sg.start
                if node == sg0.start:
                    closed = True
                    break
                nxt = [s for s in adj.get(node, []) if s.id not in used]
                if not nxt:
                    break
                sg = nxt[0]
            if closed:
                cycles.append(ring)
            else:
                self.warnings.append(f"field of {self.name(solid)}: boundary does not close")
        return cycles


def _edge_of_bound(sysm, bound: int) -> str:
    for e in sysm.edges:
        if e.bound == bound:
            return e.name
    return "?"


def _fmt(z) -> str:
    return "(" + ", ".join(f"{v:.4g}" for v in z) + ")"


__all__ = ["Network", "Node", "Segment", "TraceEnd"]
