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
    "Mesh",
    "stations",
    "build_mesh",
    "mesh_through",
    "interpolate",
]

ATTACHMENT_TOLERANCE = 1e-4
"""Masses and springs closer than this fraction of the length to a station ride on its node."""


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
    """

    x: np.ndarray
    segment: np.ndarray
    station_nodes: dict[float, int]

    @property
    def elements(self) -> int:
        """Number of elements."""
        return len(self.segment)

    def node_at(self, position: float) -> int:
        """Node index at a station position [m]."""
        node = self.station_nodes.get(position)
        if node is not None:
            return node
        return int(np.argmin(np.abs(self.x - position)))

    def carrier(self, position: float) -> tuple[int, float]:
        """Node carrying an attachment at ``position`` [m], and its offset from that node [m]."""
        j = self.node_at(position)
        return j, float(position - self.x[j])

    def refined(self) -> Mesh:
        """The mesh with every element split in two."""
        mid = 0.5 * (self.x[:-1] + self.x[1:])
        x = np.empty(2 * len(self.x) - 1)
        x[0::2] = self.x
        x[1::2] = mid
        station_nodes = {p: 2 * n for p, n in self.station_nodes.items()}
        return Mesh(x, np.repeat(self.segment, 2), station_nodes)


def stations(member: Member) -> list[float]:
    """Positions that are nodes of every mesh [m], ascending, from 0 to L.

    Segment ends and supports always are.  A mass or spring is a station of its own unless
    it lies within ``ATTACHMENT_TOLERANCE`` of the member length from another station; it
    is then carried by that station's node through a rigid offset (exact but for the
    bending of so short a piece), since an element that short would ruin the conditioning.
    """
    L = member.length
    tol = POSITION_TOLERANCE * L
    points = [*member.boundaries, *(s.at for s in member.inner_supports)]
    out: list[float] = []
    for p in sorted(min(max(p, 0.0), L) for p in points):
        if not out or p - out[-1] > tol:
            out.append(p)
    out[-1] = L
    near = ATTACHMENT_TOLERANCE * L
    attached = sorted({min(max(a, 0.0), L) for a in _attachment_positions(member)})
    for p in attached:
        i = bisect.bisect_left(out, p)
        gaps = [abs(out[j] - p) for j in (i - 1, i) if 0 <= j < len(out)]
        if min(gaps) > near:
            out.insert(i, p)
    return out


def _attachment_positions(member: Member) -> list[float]:
    return [m.at for m in member.masses] + [s.at for s in member.springs]


def _map_attachments(member: Member, points: list[float], station_nodes: dict[float, int]) -> None:
    """Map every attachment and support position to the node of its station."""
    arr = np.asarray(points)
    positions = _attachment_positions(member) + [s.at for s in member.inner_supports]
    for p in positions:
        if p not in station_nodes:  # one riding on a nearby station's node
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
    L = member.length
    counts: list[int] = []
    seg_of: list[int] = []
    station_nodes: dict[float, int] = {points[0]: 0}
    node = 0
    for a, b in zip(points[:-1], points[1:], strict=True):
        seg = member.segment_index(0.5 * (a + b))
        if isinstance(element_size, int):
            n = max(1, round(element_size * (b - a) / L))
        else:
            n = max(1, math.ceil((b - a) / element_size(seg) - 1e-9))
        counts.append(n)
        seg_of.append(seg)
        node += n
        station_nodes[b] = node
    # every interval split evenly, all at once: node k of an interval [a, b] of n elements
    # is at a + (b - a) k / n
    sizes = np.array(counts)
    left = np.repeat(np.array(points[:-1]), sizes)
    width = np.repeat(np.diff(np.array(points)), sizes)
    first = np.repeat(np.cumsum(sizes) - sizes, sizes)
    k = np.arange(node) - first
    x = np.concatenate([left + width * (k / np.repeat(sizes, sizes)), [L]])
    mesh = Mesh(x, np.repeat(np.array(seg_of, dtype=int), sizes), station_nodes)
    _map_attachments(member, points, station_nodes)
    return mesh


def mesh_through(member: Member, points: np.ndarray) -> Mesh:
    """A mesh whose nodes are the stations and the given points, one element between each.

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
    L = member.length
    tol = POSITION_TOLERANCE * L
    merged: list[float] = []
    for p in sorted([*fixed, *np.clip(points, 0.0, L).tolist()]):
        if not merged or p - merged[-1] > tol:
            merged.append(p)
        elif p in fixed:
            merged[-1] = p
    merged[-1] = L
    x = np.asarray(merged)
    segment = np.array(
        [member.segment_index(0.5 * (a + b)) for a, b in zip(x[:-1], x[1:], strict=True)]
    )
    station_nodes = {p: int(np.argmin(np.abs(x - p))) for p in fixed}
    _map_attachments(member, fixed, station_nodes)
    return Mesh(x, segment, station_nodes)


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
