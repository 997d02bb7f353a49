"""The mesh: nodes at every station (segment ends, supports, attachments), elements between."""

from __future__ import annotations

import bisect
import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from beamtone.calc.model import POSITION_TOLERANCE, Member

__all__ = [
    "ATTACHMENT_TOLERANCE",
    "CHAIN_STATIONS",
    "SAME_POSITION",
    "Mesh",
    "stations",
    "build_mesh",
    "mesh_through",
    "interpolate",
]

ATTACHMENT_TOLERANCE = 1e-3
"""An attachment closer than this fraction of the length to its neighbouring station is
tethered to it: one element between them that is never split, whose nodal values are solved
for relative to the station (see :mod:`beamtone.calc.fe.assembly`)."""
CHAIN_STATIONS = 4
"""Most stations in one chain of tethers (a longer cluster is cut at its widest gaps, where
a gap is at least ``CUT_GAP`` of the tolerance)."""
CUT_GAP = 0.1
"""Shortest gap, as a fraction of ``ATTACHMENT_TOLERANCE * L``, across which a long chain of
tethers is cut into an ordinary element (1e-4 L: measured to agree with the uncut chain within
2e-9 relative; an ordinary element of 1e-5 L was not reliable)."""


SAME_POSITION = 8.0 * float(np.finfo(float).eps)
"""Positions closer than this fraction of the length cannot be told apart in floating point."""


@dataclass(frozen=True)
class Mesh:
    """Nodes and elements along the member.

    Attributes
    ----------
    x : ndarray, shape (n_nodes,)
        Node positions [m], ascending.
    segment : ndarray of int, shape (n_elements,)
        Segment index of each element.
    station_nodes : dict of float to int
        Node index of every station (segment ends, attachments, inner supports) by position [m].
    tether : ndarray of int, shape (n_nodes,), optional
        For a node tethered to a neighbouring node (an attachment very close to another
        station) the index of that neighbour, else -1.  The element between the two is
        never split, and the tethered node's unknowns are its motion relative to the rigid
        extension of its neighbour.
    """

    x: np.ndarray
    segment: np.ndarray
    station_nodes: dict[float, int]
    tether: np.ndarray | None = None

    @property
    def elements(self) -> int:
        """Number of elements."""
        return len(self.segment)

    @property
    def tethered(self) -> np.ndarray:
        """Per element: True for an element between a tethered node and its neighbour."""
        out = np.zeros(self.elements, dtype=bool)
        if self.tether is None:
            return out
        nodes = np.flatnonzero(self.tether >= 0)
        masters = self.tether[nodes]
        out[np.minimum(nodes, masters)] = True
        return out

    def node_at(self, position: float) -> int:
        """Node index at a station position [m]."""
        node = self.station_nodes.get(position)
        if node is not None:
            return node
        return int(np.argmin(np.abs(self.x - position)))

    def carrier(self, position: float) -> tuple[int, float]:
        """Node carrying an attachment at ``position`` [m], and its offset from that node [m].

        Every attachment is a node of its own, so the offset is zero but for positions
        given slightly outside the member (clipped onto its ends).
        """
        j = self.node_at(position)
        return j, float(position - self.x[j])

    def refined(self) -> Mesh:
        """The mesh with every element split in two (but the tethered ones, kept whole)."""
        split = ~self.tethered
        counts = 1 + split.astype(int)
        new_index = np.concatenate([[0], np.cumsum(counts)])  # old node -> new node
        x = np.empty(int(new_index[-1]) + 1)
        x[new_index] = self.x
        mids = new_index[:-1][split] + 1
        x[mids] = 0.5 * (self.x[:-1] + self.x[1:])[split]
        station_nodes = {p: int(new_index[n]) for p, n in self.station_nodes.items()}
        tether = None
        if self.tether is not None:
            tether = np.full(len(x), -1)
            old = np.flatnonzero(self.tether >= 0)
            tether[new_index[old]] = new_index[self.tether[old]]
        return Mesh(x, np.repeat(self.segment, counts), station_nodes, tether)


def stations(member: Member) -> list[float]:
    """Positions that are nodes of every mesh [m], ascending, from 0 to L.

    Segment ends, supports and every attachment, at exactly the position given: nothing is
    moved.  Segment ends and supports closer together than ``POSITION_TOLERANCE`` of the
    length are one station; an attachment shares a station only where it is there to within
    ``SAME_POSITION`` of the length (a few units in the last place of the positions).
    """
    L = member.length
    tol = POSITION_TOLERANCE * L
    points = [*member.boundaries, *(s.at for s in member.inner_supports)]
    out: list[float] = []
    for p in sorted(min(max(p, 0.0), L) for p in points):
        if not out or p - out[-1] > tol:
            out.append(p)
    out[-1] = L
    same = SAME_POSITION * L
    for p in sorted({min(max(a, 0.0), L) for a in _attachment_positions(member)}):
        i = bisect.bisect_left(out, p)
        if any(abs(out[j] - p) <= same for j in (i - 1, i) if 0 <= j < len(out)):
            continue
        out.insert(i, p)
    return out


def _attachment_positions(member: Member) -> list[float]:
    return [m.at for m in member.masses] + [s.at for s in member.springs]


def _tethers(member: Member, points: list[float]) -> dict[int, int]:
    """Station index -> index of the neighbouring station it is tethered to.

    Stations closer than ``ATTACHMENT_TOLERANCE`` of the length form a cluster.  Its anchors
    are the member's ends and the inner supports (what they hold are nodal values, so they
    are never tethered); its root is its first anchor, else its first segment end, else its
    first station, and every other station of the cluster but the anchors (attachments and
    segment ends) is tethered to its neighbour on the side of the root.  So no ordinary
    element shorter than the tolerance joins two stations whose deflections are both free:
    such an element's stiffness, of size EI/h^3, swamps the rounding of the stiffness matrix
    (a collar of 1e-5 of the length with a mass on it was 29 % off, and modes went missing).
    Between two anchors the element next to the second one stays ordinary; where that anchor
    holds the deflection its short element only adds a rotational stiffness EI/h.

    A cluster of more than ``CHAIN_STATIONS`` stations (a long run of closely spaced
    attachments) is first cut at its widest gaps into pieces of at most that many where the
    gaps allow (see :func:`_pieces`), so the chains, and with them the tie matrix, stay O(n)
    for runs spaced at least ``CUT_GAP * ATTACHMENT_TOLERANCE * L`` apart.
    """
    L = member.length
    near = ATTACHMENT_TOLERANCE * L
    anchors = {_nearest(points, p) for p in (0.0, L, *(s.at for s in member.inner_supports))}
    ends = {_nearest(points, min(max(p, 0.0), L)) for p in member.boundaries}
    out: dict[int, int] = {}
    start = 0
    for end in range(1, len(points) + 1):
        if end < len(points) and points[end] - points[end - 1] < near:
            continue
        for cluster in _pieces(points, start, end, near):
            held = [i for i in cluster if i in anchors]
            segment_ends = [i for i in cluster if i in ends]
            root = held[0] if held else segment_ends[0] if segment_ends else cluster.start
            for i in cluster:
                if i != root and i not in anchors:
                    out[i] = i - 1 if i > root else i + 1
        start = end
    return out


def _nearest(points: list[float], p: float) -> int:
    """Index of the station nearest ``p`` (a support or end merged into a station is there)."""
    i = bisect.bisect_left(points, p)
    return min((j for j in (i - 1, i) if 0 <= j < len(points)), key=lambda j: abs(points[j] - p))


def _pieces(points: list[float], start: int, end: int, near: float) -> list[range]:
    """Stations ``start:end`` of one cluster in pieces of at most ``CHAIN_STATIONS`` where
    it can be cut safely.

    A cluster that short is one piece (so every tether of it is as before).  A longer one is
    cut, left to right, at the widest gap among the next ``CHAIN_STATIONS`` stations, if that
    gap is at least ``CUT_GAP`` of the tolerance: the element across a cut is an ordinary
    element, and a much shorter ordinary element costs accuracy (an ordinary element of 1e-5
    of the length next to a 7 kg mass was measured 190 % off).  Where the window has no such
    gap the chain goes on to the next gap that has one (or to the cluster's end).
    """
    gaps = np.diff(np.asarray(points[start:end], dtype=float))
    safe = np.flatnonzero(gaps >= CUT_GAP * near) + start  # gap k lies between k and k + 1
    pieces: list[range] = []
    while end - start > CHAIN_STATIONS:
        offset = start - (end - len(gaps) - 1)
        window = gaps[offset : offset + CHAIN_STATIONS]
        k = int(np.argmax(window))
        if window[k] >= CUT_GAP * near:
            cut = start + k + 1  # first station after the widest gap
        else:
            later = int(np.searchsorted(safe, start))
            if later == len(safe):
                break
            cut = int(safe[later]) + 1
        pieces.append(range(start, cut))
        start = cut
    pieces.append(range(start, end))
    return pieces


def _tether_array(n_nodes: int, station_index: list[int], links: dict[int, int]) -> np.ndarray:
    tether = np.full(n_nodes, -1)
    for i, j in links.items():
        tether[station_index[i]] = station_index[j]
    return tether


def _map_attachments(member: Member, points: list[float], station_nodes: dict[float, int]) -> None:
    """Map every attachment and support position to the node of its station."""
    arr = np.asarray(points)
    positions = _attachment_positions(member) + [s.at for s in member.inner_supports]
    for p in positions:
        if p not in station_nodes:  # given just outside the member, or merged with a support
            nearest = float(arr[int(np.argmin(np.abs(arr - p)))])
            station_nodes[p] = station_nodes[nearest]


def build_mesh(member: Member, element_size: Callable[[int], float] | int) -> Mesh:
    """Build a mesh with nodes at every station.

    Parameters
    ----------
    member : Member
    element_size : callable or int
        Either a function giving the largest element length [m] for a segment
        index, or a total element count to spread over the member in
        proportion to length (at least one element between stations).

    Returns
    -------
    Mesh
    """
    points = stations(member)
    links = _tethers(member, points)
    L = member.length
    counts: list[int] = []
    seg_of: list[int] = []
    station_nodes: dict[float, int] = {points[0]: 0}
    station_index = [0]
    node = 0
    for i, (a, b) in enumerate(zip(points[:-1], points[1:], strict=True)):
        seg = member.segment_index(0.5 * (a + b))
        if links.get(i) == i + 1 or links.get(i + 1) == i:
            n = 1  # a tethered pair: one element, never split
        elif isinstance(element_size, int):
            n = max(1, round(element_size * (b - a) / L))
        else:
            n = max(1, math.ceil((b - a) / element_size(seg) - 1e-9))
        counts.append(n)
        seg_of.append(seg)
        node += n
        station_nodes[b] = node
        station_index.append(node)
    # every interval split evenly, all at once: node k of an interval [a, b] of n elements
    # is at a + (b - a) k / n
    sizes = np.array(counts)
    left = np.repeat(np.array(points[:-1]), sizes)
    width = np.repeat(np.diff(np.array(points)), sizes)
    first = np.repeat(np.cumsum(sizes) - sizes, sizes)
    k = np.arange(node) - first
    x = np.concatenate([left + width * (k / np.repeat(sizes, sizes)), [L]])
    tether = _tether_array(len(x), station_index, links) if links else None
    mesh = Mesh(x, np.repeat(np.array(seg_of, dtype=int), sizes), station_nodes, tether)
    _map_attachments(member, points, station_nodes)
    return mesh


def mesh_through(member: Member, points: np.ndarray) -> Mesh:
    """A mesh whose nodes are the stations and the given points, one element between each.

    Every station is kept; a given point closer than ``POSITION_TOLERANCE`` of the length to
    a node already there is left out.

    Parameters
    ----------
    member : Member
    points : ndarray
        Extra node positions [m], inside [0, L].

    Returns
    -------
    Mesh
    """
    fixed = stations(member)
    links = _tethers(member, fixed)
    L = member.length
    tol = POSITION_TOLERANCE * L
    kept = np.asarray(fixed)
    # interval k = (fixed[k], fixed[k + 1]) of each point, found by bisection (O(log n) a point)
    tethered_gap = np.zeros(len(fixed), dtype=bool)
    tethered_gap[[min(i, j) for i, j in links.items()]] = True
    sorted_points = np.sort(np.clip(np.asarray(points, dtype=float), 0.0, L))
    interval = np.clip(np.searchsorted(kept, sorted_points, side="right") - 1, 0, len(kept) - 1)
    after = np.minimum(interval + 1, len(kept) - 1)
    nearest = np.minimum(
        np.abs(sorted_points - kept[interval]), np.abs(kept[after] - sorted_points)
    )
    inside = (sorted_points > kept[interval]) & (sorted_points < kept[after])
    extra: list[float] = []
    for p, near, k, strictly in zip(sorted_points.tolist(), nearest, interval, inside, strict=True):
        if near <= tol or (extra and p - extra[-1] <= tol):
            continue
        if strictly and tethered_gap[k]:
            continue
        extra.append(p)
    x = np.asarray(sorted([*fixed, *extra]))
    segment = np.array(
        [member.segment_index(0.5 * (a + b)) for a, b in zip(x[:-1], x[1:], strict=True)]
    )
    index = {p: i for i, p in enumerate(x.tolist())}
    station_nodes = {p: index[p] for p in fixed}
    station_index = [index[p] for p in fixed]
    tether = _tether_array(len(x), station_index, links) if links else None
    _map_attachments(member, fixed, station_nodes)
    return Mesh(x, segment, station_nodes, tether)


def interpolate(x_nodes: np.ndarray, w: np.ndarray, theta: np.ndarray, at: float) -> float:
    """Deflection at ``at`` [m] from nodal deflections [m] and slopes [rad] (Hermite cubic)."""
    i = int(np.clip(np.searchsorted(x_nodes, at) - 1, 0, len(x_nodes) - 2))
    h = x_nodes[i + 1] - x_nodes[i]
    t = (at - x_nodes[i]) / h
    n1 = 1 - 3 * t**2 + 2 * t**3
    n2 = h * (t - 2 * t**2 + t**3)
    n3 = 3 * t**2 - 2 * t**3
    n4 = h * (-(t**2) + t**3)
    return float(n1 * w[i] + n2 * theta[i] + n3 * w[i + 1] + n4 * theta[i + 1])
