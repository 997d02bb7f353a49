"""Finite-element eigen solution of a member in bending.

Hermite cubic Euler-Bernoulli beam elements with consistent mass and the
geometric stiffness of a constant axial force; two degrees of freedom per node
(deflection w [m] and slope theta [rad]).  Supports are enforced exactly by
eliminating the degrees of freedom they hold.  The mesh is chosen
automatically so that every reported mode meets a relative accuracy target,
and each mode carries an estimate of its discretization error from two meshes
(the reported one and one twice as coarse, Richardson's argument on the known
h^4 convergence of the eigenvalues).

The element matrices are the standard ones of matrix structural analysis
(common practice; e.g. J. S. Przemieniecki, Theory of Matrix Structural
Analysis, 1968, chapters 5 and 11).
"""

from __future__ import annotations

import bisect
import math
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import scipy.linalg
import scipy.sparse
import scipy.sparse.linalg

from beamtone.calc.errors import InputError
from beamtone.calc.model import HOLDS, POSITION_TOLERANCE, Member, rigid_body_count

__all__ = [
    "ACCURACY",
    "Mesh",
    "Mode",
    "FEResult",
    "Eigensolver",
    "build_mesh",
    "mesh_through",
    "interpolate",
    "assemble",
    "solve",
    "buckling_load",
    "default_eigensolver",
]

ACCURACY = 1e-6
"""Relative accuracy every reported natural frequency meets by default."""

_EPS = np.finfo(float).eps
ATTACHMENT_TOLERANCE = 1e-4
"""Masses and springs closer than this fraction of the length to a station ride on its node."""
_DENSE_LIMIT = 160  # free DOFs up to which the dense solver is used (measured: faster below)
_SAFETY = 2.0  # factor on the asymptotic Richardson estimate
_ROUNDOFF_FACTOR = 10.0  # on eps * lambda_max / lambda_i (see _roundoff_estimate)
_ELEMENT_LAMBDA_MAX = 8400.0  # largest eigenvalue of one element, times m h^4 / EI
_GEOMETRIC_LAMBDA_MAX = (
    170.2  # largest |eigenvalue| of (geometric, mass) per element, times m h^2 / |P|
)
_MAX_REFINEMENTS = 4
_MIN_ELEMENTS = 16  # on the coarser mesh of the two compared
_MAX_DOFS = 400_000

Eigensolver = Callable[[object, object, int, float], tuple[np.ndarray, np.ndarray]]
"""(K, M, count, shift) -> (eigenvalues ascending, eigenvectors as columns)."""


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

    def refined(self) -> Mesh:
        """The mesh with every element split in two."""
        mid = 0.5 * (self.x[:-1] + self.x[1:])
        x = np.empty(2 * len(self.x) - 1)
        x[0::2] = self.x
        x[1::2] = mid
        stations = {p: 2 * n for p, n in self.station_nodes.items()}
        return Mesh(x, np.repeat(self.segment, 2), stations)


@dataclass(frozen=True)
class Mode:
    """One flexible mode of the member.

    Attributes
    ----------
    number : int
        1 for the first flexible mode.
    frequency_hz : float
        Natural frequency f [Hz].
    omega : float
        Circular natural frequency [rad/s].
    estimated_error : float
        Estimated relative error of ``frequency_hz`` (discretization and round-off).
    effective_mass : float
        Effective modal mass in the direction of vibration [kg].
    effective_mass_fraction : float
        ``effective_mass`` over the total mass [-].
    cumulative_mass_fraction : float
        Sum of the fractions of this mode and the ones below it [-].
    x : ndarray
        Node positions [m].
    w : ndarray
        Deflection at the nodes scaled to unit maximum deflection, largest deflection positive [-].
    w_modal : ndarray
        Deflection at the nodes of the mode normalized to unit modal mass [kg^-1/2].
    theta_modal : ndarray
        Slope at the nodes of the mode normalized to unit modal mass [kg^-1/2 m^-1].
    """

    number: int
    frequency_hz: float
    omega: float
    estimated_error: float
    effective_mass: float
    effective_mass_fraction: float
    cumulative_mass_fraction: float
    x: np.ndarray = field(repr=False)
    w: np.ndarray = field(repr=False)
    w_modal: np.ndarray = field(repr=False)
    theta_modal: np.ndarray = field(repr=False)


@dataclass(frozen=True)
class FEResult:
    """Finite-element eigen solution with its soundness checks.

    Attributes
    ----------
    modes : tuple of Mode
        Flexible modes, lowest first.
    rigid_body_modes : int
        Number of rigid-body modes (decided from the restraints), not listed in ``modes``.
    elements : int
        Elements of the reported mesh.
    degrees_of_freedom : int
        Free degrees of freedom of the reported mesh.
    mass_orthogonality : float
        max |Phi^T M Phi - I| over the reported modes [-].
    stiffness_orthogonality : float
        max |Phi^T K Phi - Lambda| / max(Lambda) [-].
    stiffness_definiteness : str
        ``"positive definite"`` or ``"positive semi-definite with N rigid-body modes"``.
    mass_definiteness : str
        ``"positive definite"``.
    total_mass : float
        Member plus point masses [kg].
    solver : str
        Which eigen solver ran.
    roundoff_dominated : bool
        True where round-off, not discretization, limits the accuracy.
    warnings : tuple of str
        Things the user should know about this result.
    """

    modes: tuple[Mode, ...]
    rigid_body_modes: int
    elements: int
    degrees_of_freedom: int
    mass_orthogonality: float
    stiffness_orthogonality: float
    stiffness_definiteness: str
    mass_definiteness: str
    total_mass: float
    solver: str
    roundoff_dominated: bool
    warnings: tuple[str, ...]

    @property
    def frequencies_hz(self) -> np.ndarray:
        """Natural frequencies of the listed modes [Hz]."""
        return np.array([m.frequency_hz for m in self.modes])


# --- mesh ----------------------------------------------------------------------------------------


def _stations(member: Member) -> list[float]:
    """Positions that are nodes of every mesh [m].

    Segment ends and supports always are.  A mass or spring is a station of its own unless
    it lies within ``ATTACHMENT_TOLERANCE`` of the member length from another station; it
    is then carried by that station's node through a rigid offset (exact but for the
    bending of so short a piece), since an element that short would ruin the conditioning.
    """
    L = member.length
    tol = POSITION_TOLERANCE * L
    points = [*member.boundaries, *(s.at for s in member.inner_supports)]
    stations: list[float] = []
    for p in sorted(min(max(p, 0.0), L) for p in points):
        if not stations or p - stations[-1] > tol:
            stations.append(p)
    stations[-1] = L
    near = ATTACHMENT_TOLERANCE * L
    attached = sorted({min(max(a, 0.0), L) for a in _attachment_positions(member)})
    for p in attached:
        i = bisect.bisect_left(stations, p)
        gaps = [abs(stations[j] - p) for j in (i - 1, i) if 0 <= j < len(stations)]
        if min(gaps) > near:
            stations.insert(i, p)
    return stations


def _attachment_positions(member: Member) -> list[float]:
    return [m.at for m in member.masses] + [s.at for s in member.springs]


def _node_offset(mesh: Mesh, position: float) -> tuple[int, float]:
    """Node carrying an attachment at ``position`` [m], and its offset from that node [m]."""
    j = mesh.node_at(position)
    return j, float(position - mesh.x[j])


def _block(out: list[tuple[int, int, float]], j: int, a: float, e: float, b: float) -> None:
    """Add a * (w + e theta)^2 + b theta^2 at node j (theta in scaled units)."""
    w, t = 2 * j, 2 * j + 1
    out += [(w, w, a), (w, t, a * e), (t, w, a * e), (t, t, a * e * e + b)]


def _map_attachments(
    member: Member, stations: list[float], station_nodes: dict[float, int]
) -> None:
    """Map every attachment and support position to the node of its station."""
    arr = np.asarray(stations)
    points = [m.at for m in member.masses] + [s.at for s in member.springs]
    points += [s.at for s in member.inner_supports]
    for p in points:
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
    stations = _stations(member)
    L = member.length
    counts: list[int] = []
    seg_of: list[int] = []
    station_nodes: dict[float, int] = {stations[0]: 0}
    node = 0
    for a, b in zip(stations[:-1], stations[1:], strict=True):
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
    left = np.repeat(np.array(stations[:-1]), sizes)
    width = np.repeat(np.diff(np.array(stations)), sizes)
    first = np.repeat(np.cumsum(sizes) - sizes, sizes)
    k = np.arange(node) - first
    x = np.concatenate([left + width * (k / np.repeat(sizes, sizes)), [L]])
    mesh = Mesh(x, np.repeat(np.array(seg_of, dtype=int), sizes), station_nodes)
    _map_attachments(member, stations, station_nodes)
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
    stations = _stations(member)
    L = member.length
    tol = POSITION_TOLERANCE * L
    merged: list[float] = []
    for p in sorted([*stations, *np.clip(points, 0.0, L).tolist()]):
        if not merged or p - merged[-1] > tol:
            merged.append(p)
        elif p in stations:
            merged[-1] = p
    merged[-1] = L
    x = np.asarray(merged)
    segment = np.array(
        [member.segment_index(0.5 * (a + b)) for a, b in zip(x[:-1], x[1:], strict=True)]
    )
    station_nodes = {p: int(np.argmin(np.abs(x - p))) for p in stations}
    _map_attachments(member, stations, station_nodes)
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


# --- assembly ------------------------------------------------------------------------------------


@dataclass(frozen=True)
class System:
    """Assembled matrices of a mesh, reduced to the free degrees of freedom.

    ``K`` and ``M`` act on the free DOFs in scaled form: slopes are multiplied
    by a reference length ``scale`` [m] so that all entries are of one size.
    ``full`` maps free DOF index to the full DOF index (2*node for w, 2*node+1 for theta).
    """

    K: scipy.sparse.csr_matrix
    M: scipy.sparse.csr_matrix
    Kg_unit: scipy.sparse.csr_matrix | None
    free: np.ndarray
    n_full: int
    scale: float
    influence_load: np.ndarray
    total_mass: float
    lambda_max_bound: float


def _polynomial_in_r(
    c0: list[list[float]], c1: list[list[float]], c2: list[list[float]]
) -> np.ndarray:
    return np.array([c0, c1, c2], dtype=float)


# Element matrices in scaled DOFs as c0 + c1 r + c2 r^2, r = h / s (the standard Hermite
# cubic stiffness, geometric stiffness and consistent mass, common practice).
_STIFFNESS = _polynomial_in_r(
    [[12, 0, -12, 0], [0, 0, 0, 0], [-12, 0, 12, 0], [0, 0, 0, 0]],
    [[0, 6, 0, 6], [6, 0, -6, 0], [0, -6, 0, -6], [6, 0, -6, 0]],
    [[0, 0, 0, 0], [0, 4, 0, 2], [0, 0, 0, 0], [0, 2, 0, 4]],
)
_GEOMETRIC = _polynomial_in_r(
    [[36, 0, -36, 0], [0, 0, 0, 0], [-36, 0, 36, 0], [0, 0, 0, 0]],
    [[0, 3, 0, 3], [3, 0, -3, 0], [0, -3, 0, -3], [3, 0, -3, 0]],
    [[0, 0, 0, 0], [0, 4, 0, -1], [0, 0, 0, 0], [0, -1, 0, 4]],
)
_MASS = _polynomial_in_r(
    [[156, 0, 54, 0], [0, 0, 0, 0], [54, 0, 156, 0], [0, 0, 0, 0]],
    [[0, 22, 0, -13], [22, 0, 13, 0], [0, 13, 0, -22], [-13, 0, -22, 0]],
    [[0, 0, 0, 0], [0, 4, 0, -3], [0, 0, 0, 0], [0, -3, 0, 4]],
)


def _element_matrices(
    h: np.ndarray, EI: np.ndarray, m: np.ndarray, s: float, geometric: bool
) -> tuple[np.ndarray, np.ndarray | None, np.ndarray]:
    """Element stiffness, geometric stiffness for unit tension (if asked), and mass.

    All in scaled DOFs; each is (elements, 4, 4).
    """
    r = h / s  # element length in units of the slope scale
    powers = np.stack([np.ones_like(r), r, r * r], axis=1)  # (elements, 3)
    k = np.einsum("ep,pij->eij", powers * (EI / h**3)[:, None], _STIFFNESS)
    g = None
    if geometric:
        g = np.einsum("ep,pij->eij", powers * (1.0 / (30.0 * h))[:, None], _GEOMETRIC)
    mm = np.einsum("ep,pij->eij", powers * (m * h / 420.0)[:, None], _MASS)
    return k, g, mm


# Local (a, b) pairs of the upper triangle of a 4x4 element matrix, and their band offsets.
_UPPER_A = np.array([a for a in range(4) for b in range(a, 4)])
_UPPER_B = np.array([b for a in range(4) for b in range(a, 4)])
_BAND = 3  # off-diagonals of the assembled matrices (w and theta of two neighbouring nodes)
_OFFSETS = np.arange(-_BAND, _BAND + 1)


def _triplets(points: list[tuple[int, int, float]]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    rows = np.array([t[0] for t in points], dtype=int)
    cols = np.array([t[1] for t in points], dtype=int)
    return rows, cols, np.array([t[2] for t in points], dtype=float)


def _band(
    element: np.ndarray, points: tuple[np.ndarray, np.ndarray, np.ndarray], n: int
) -> np.ndarray:
    """Sum element matrices (elements, 4, 4) and point entries into upper band storage.

    Returns ``band`` of shape (4, n) with ``band[d, i]`` the entry at row i, column i + d.
    """
    start = 2 * np.arange(element.shape[0])[:, None]
    index = (_UPPER_B - _UPPER_A) * n + start + _UPPER_A
    rows, cols, values = points
    upper = rows <= cols
    index = np.concatenate([index.ravel(), (cols - rows)[upper] * n + rows[upper]])
    weights = np.concatenate([element[:, _UPPER_A, _UPPER_B].ravel(), values[upper]])
    return np.bincount(index, weights=weights, minlength=(_BAND + 1) * n).reshape(_BAND + 1, n)


@dataclass(frozen=True)
class _Pattern:
    """Where the entries of a banded matrix go once the held DOFs are eliminated."""

    offset: np.ndarray  # band row (|column - row|) of each kept entry
    start: np.ndarray  # band column (the smaller of row and column) of each kept entry
    indices: np.ndarray  # column of each kept entry in the reduced matrix
    indptr: np.ndarray
    size: int


def _pattern(free: np.ndarray, number: np.ndarray) -> _Pattern:
    n = len(number)
    j = free[:, None] + _OFFSETS
    inside = (j >= 0) & (j < n)
    j = np.clip(j, 0, n - 1)
    keep = inside & (number[j] >= 0)
    indptr = np.zeros(len(free) + 1, dtype=np.int32)
    np.cumsum(keep.sum(axis=1), out=indptr[1:])
    offset = np.broadcast_to(np.abs(_OFFSETS), keep.shape)[keep]
    start = np.minimum(free[:, None], j)[keep]
    return _Pattern(offset, start, number[j][keep].astype(np.int32), indptr, len(free))


def _reduced(band: np.ndarray, pattern: _Pattern) -> scipy.sparse.csr_matrix:
    """The symmetric banded matrix on the free DOFs, in compressed rows."""
    return scipy.sparse.csr_matrix(
        (band[pattern.offset, pattern.start], pattern.indices, pattern.indptr),
        shape=(pattern.size, pattern.size),
    )


def assemble(member: Member, mesh: Mesh, geometric: bool = False) -> System:
    """Assemble stiffness and mass matrices and eliminate the supported DOFs.

    Parameters
    ----------
    member : Member
    mesh : Mesh
    geometric : bool
        Also assemble the geometric stiffness of a unit tension (``Kg_unit``, for buckling).

    Returns
    -------
    System
        Sparse K (elastic plus geometric) and M on the free DOFs, in scaled form.
    """
    h = np.diff(mesh.x)
    segs = member.segments
    EI = np.array([seg.bending_stiffness for seg in segs])[mesh.segment]
    m = np.array([seg.mass_per_length for seg in segs])[mesh.segment]
    s = float(np.median(h))
    P = member.axial_force
    ke, ge, me = _element_matrices(h, EI, m, s, geometric or P != 0.0)
    n_nodes = len(mesh.x)
    n = 2 * n_nodes

    # Point masses and springs: 2x2 blocks on (w, theta) of their node; an attachment at an
    # offset e from its node acts on w + e*theta (rigid offset).
    point_k: list[tuple[int, int, float]] = []
    point_m: list[tuple[int, int, float]] = []
    for pm in member.masses:
        j, e = _node_offset(mesh, pm.at)
        _block(point_m, j, pm.mass, e / s, pm.rotary_inertia / s**2)
    for sp in member.springs:
        j, e = _node_offset(mesh, sp.at)
        _block(point_k, j, sp.stiffness, e / s, sp.rotational_stiffness / s**2)

    fixed: list[int] = []
    ends = [(0, member.left), (n_nodes - 1, member.right)]
    ends += [(mesh.node_at(sp.at), sp.kind) for sp in member.inner_supports]
    for node, kind in ends:
        holds_w, holds_slope = HOLDS[kind]
        if holds_w:
            fixed.append(2 * node)
        if holds_slope:
            fixed.append(2 * node + 1)
    held = np.zeros(n, dtype=bool)
    held[fixed] = True
    free = np.flatnonzero(~held)
    number = np.full(n, -1)
    number[free] = np.arange(len(free))

    pk, pm_ = _triplets(point_k), _triplets(point_m)
    no_points = _triplets([])
    # The matrices are banded (three off-diagonals); they are summed in band storage and the
    # supports eliminated while the compressed rows are built, so no general sparse
    # assembly (sorting and summing duplicates) and no full-size matrix is ever formed.
    pattern = _pattern(free, number)
    K_band = _band(ke + P * ge if ge is not None and P else ke, pk, n)
    M_band = _band(me, pm_, n)
    K = _reduced(K_band, pattern)
    M = _reduced(M_band, pattern)
    G = _reduced(_band(ge, no_points, n), pattern) if ge is not None and geometric else None

    # Mass-weighted rigid translation of member and ground together (all DOFs, held or not):
    # M_full @ 1_w, without the full matrix.  Element rows: consistent mass times [1, 0, 1, 0].
    unit = np.array([1.0, 0.0, 1.0, 0.0])
    element_load = me @ unit  # (elements, 4)
    dofs = 2 * np.arange(mesh.elements)[:, None] + np.arange(4)[None, :]
    w_cols = pm_[1] % 2 == 0
    full_load = np.bincount(
        np.concatenate([dofs.ravel(), pm_[0][w_cols]]),
        weights=np.concatenate([element_load.ravel(), pm_[2][w_cols]]),
        minlength=n,
    )
    load = full_load[free]
    total_mass = float(full_load[0::2].sum())

    # Largest eigenvalue: bounded by the largest element eigenvalue (element eigenvalue bound,
    # common practice; Weyl's inequality for the axial part), plus what springs add at their
    # degrees of freedom.
    lam_elem = float(np.max((_ELEMENT_LAMBDA_MAX * EI + _GEOMETRIC_LAMBDA_MAX * abs(P) * h**2)
                            / (m * h**4)))  # fmt: skip
    on_diagonal = pk[0] == pk[1]
    diag_k = np.bincount(pk[0][on_diagonal], weights=pk[2][on_diagonal], minlength=n)
    mass_diag = M_band[0]
    lam_spring = float(np.max(diag_k / mass_diag, initial=0.0))

    return System(
        K=K,
        M=M,
        Kg_unit=G,
        free=free,
        n_full=n,
        scale=s,
        influence_load=load,
        total_mass=total_mass,
        lambda_max_bound=lam_elem + lam_spring,
    )


# --- eigen solution ------------------------------------------------------------------------------


def default_eigensolver(
    K: scipy.sparse.spmatrix, M: scipy.sparse.spmatrix, count: int, shift: float
) -> tuple[np.ndarray, np.ndarray]:
    """Lowest ``count`` eigenpairs of K x = lambda M x (K symmetric semi-definite, M definite).

    Dense LAPACK for small models; otherwise ARPACK in shift-invert mode about
    ``shift`` (a value below the lowest eigenvalue, so K - shift*M is definite).

    Returns
    -------
    eigenvalues : ndarray, shape (count,)
        Ascending [rad^2/s^2].
    vectors : ndarray, shape (n, count)
        M-orthonormal eigenvectors.
    """
    n = K.shape[0]
    if n <= _DENSE_LIMIT or count >= n - 1:
        Kd = K.toarray() if scipy.sparse.issparse(K) else np.asarray(K)
        Md = M.toarray() if scipy.sparse.issparse(M) else np.asarray(M)
        count = min(count, n)
        mu, vecs, used = _dense_inverted(Kd, Md, count, shift, vectors=True)
        vecs = vecs / np.sqrt(np.einsum("ij,ij->j", vecs, Md @ vecs))
        return 1.0 / mu + used, vecs
    vals, vecs = _arpack(K, M, count, shift, vectors=True)
    order = np.argsort(vals)
    return vals[order], vecs[:, order]


def _arpack(
    K: scipy.sparse.spmatrix, M: scipy.sparse.spmatrix, count: int, shift: float, vectors: bool
) -> Any:
    """(eigenvalues, vectors) with ``vectors``, else the eigenvalues alone (unsorted).

    ARPACK in shift-invert mode, from a fixed start so that every run gives the same bits.

    The start is a fixed pseudo-random vector (generic: no mode is missing from it), and
    the Lanczos basis a little smaller than ARPACK's default of 20 (measured: a quarter
    faster on these banded matrices); should it not converge, a wide basis is tried.
    """
    n = K.shape[0]
    start = np.random.default_rng(20261201).standard_normal(n)
    Kc, Mc = K.tocsc(), M.tocsc()
    for ncv in (max(2 * count + 1, 15), 8 * count + 40):
        try:
            return scipy.sparse.linalg.eigsh(
                Kc, k=count, M=Mc, sigma=shift, which="LM", ncv=min(n - 1, ncv), v0=start,
                return_eigenvectors=vectors,
            )  # fmt: skip
        except scipy.sparse.linalg.ArpackNoConvergence:
            if ncv == 8 * count + 40:
                raise
    raise AssertionError("unreachable")  # pragma: no cover


def _dense_inverted(
    Kd: np.ndarray, Md: np.ndarray, count: int, shift: float, vectors: bool
) -> tuple[np.ndarray, np.ndarray | None, float]:
    """Largest ``count`` mu of M x = mu (K - shift M) x, descending, with the shift used.

    In this inverted form the lowest modes become the largest mu and keep their relative
    accuracy (the direct form loses it as the mesh is refined).  Only the wanted end of the
    spectrum is found (measured: a third faster than the whole spectrum by divide and
    conquer from 100 DOFs on, rigid-body modes or not).  K - shift M must be factored; where
    a very short element makes K so stiff that its round-off swamps a small shift (a member
    with rigid-body modes), the shift is made larger: the lowest modes lose a little
    relative accuracy in mu, which the strain-energy quotient restores.
    """
    n = Kd.shape[0]
    for factor in (1.0, 1e2, 1e4):
        used = shift * factor
        try:
            result = scipy.linalg.eigh(
                Md, Kd - used * Md, eigvals_only=not vectors, driver="gvx",
                subset_by_index=[n - count, n - 1],
            )  # fmt: skip
        except np.linalg.LinAlgError:
            if factor == 1e4:
                raise
            continue
        if vectors:
            mu, vecs = result
            return mu[::-1], vecs[:, ::-1], used
        return result[::-1], None, used
    raise AssertionError("unreachable")  # pragma: no cover


def _lowest_eigenvalues(
    K: scipy.sparse.csr_matrix, M: scipy.sparse.csr_matrix, count: int, shift: float
) -> np.ndarray:
    """Eigenvalues only, as :func:`default_eigensolver` finds them (for sizing a mesh)."""
    n = K.shape[0]
    if n <= _DENSE_LIMIT or count >= n - 1:
        count = min(count, n)
        mu, _, used = _dense_inverted(K.toarray(), M.toarray(), count, shift, vectors=False)
        return np.sort(1.0 / mu + used)
    return np.sort(_arpack(K, M, count, shift, vectors=False))


def _trial_omega(
    member: Member, mesh: Mesh, modes: int, rigid: int, shift: float, solver: Eigensolver | None
) -> float:
    """Circular frequency [rad/s] of the highest wanted mode on a coarse trial mesh.

    It only sizes the elements of the meshes that follow, whose two-mesh comparison decides
    the accuracy; so eigenvalues alone are found, straight from the matrices.
    """
    if solver is not None:
        return float(_omega(_solve_mesh(member, mesh, modes, rigid, shift, solver))[-1])
    system = assemble(member, mesh)
    _mass_check(system)
    n = system.K.shape[0]
    want = min(modes + rigid, n)
    if want - rigid < modes:  # the plain solve says what is wrong
        _need_modes(_solve_mesh(member, mesh, modes, rigid, shift, default_eigensolver), modes)
    try:
        lam = _lowest_eigenvalues(system.K, system.M, want, shift)[rigid:]
    except (np.linalg.LinAlgError, scipy.sparse.linalg.ArpackNoConvergence):
        sol = _solve_mesh(member, mesh, modes, rigid, shift, default_eigensolver)
        return float(_omega(sol)[-1])
    return math.sqrt(max(float(lam[-1]), 0.0))


def _mass_check(system: System) -> None:
    diag = system.M.diagonal()
    if diag.size == 0:
        raise InputError(
            "supports", None, "a member with at least one unrestrained degree of freedom"
        )
    if not np.all(diag > 0.0) or not np.all(np.isfinite(diag)):
        raise InputError(
            "member",
            None,
            "mass at every free degree of freedom; the mass matrix is not positive definite "
            "(a massless part of the member cannot be solved for)",
        )


@dataclass(frozen=True)
class _Solution:
    lam: np.ndarray  # flexible eigenvalues [rad^2/s^2]
    vecs: np.ndarray  # free DOF eigenvectors (scaled form), M-orthonormal
    system: System
    mesh: Mesh
    solver: str


def _solve_mesh(
    member: Member, mesh: Mesh, count: int, rigid: int, shift: float, solver: Eigensolver
) -> _Solution:
    system = assemble(member, mesh)
    _mass_check(system)
    n = system.K.shape[0]
    want = min(count + rigid, n)
    if want - rigid < 1:
        raise InputError(
            "supports", None, "a member left with some freedom to vibrate; every DOF is held"
        )
    try:
        vals, vecs = solver(system.K, system.M, want, shift)
    except np.linalg.LinAlgError:
        raise InputError(
            "member",
            None,
            "a model the eigen solver can factor; its matrices are numerically singular "
            "(a massless part, or stiffnesses of wildly different size)",
        ) from None
    name = "dense (LAPACK)" if n <= _DENSE_LIMIT else "sparse shift-invert (ARPACK)"
    flexible = vecs[:, rigid:]
    if rigid:
        # Purify: make the flexible vectors exactly mass-orthogonal to the exact rigid motions.
        R = _rigid_vectors(member, mesh, system)
        flexible = flexible - R @ (R.T @ (system.M @ flexible))
        flexible = flexible / np.sqrt(np.einsum("ij,ij->j", flexible, system.M @ flexible))
    lam = _strain_energy_quotient(member, mesh, system, flexible)
    order = np.argsort(lam)
    return _Solution(lam[order], flexible[:, order], system, mesh, name)


def _rigid_vectors(member: Member, mesh: Mesh, system: System) -> np.ndarray:
    """Mass-orthonormal basis of the rigid motions w = a + b*x the restraints leave free."""
    rows: list[list[float]] = []
    supports = [(0.0, member.left), (member.length, member.right)]
    supports += [(s.at, s.kind) for s in member.inner_supports]
    for x, kind in supports:
        holds_w, holds_slope = HOLDS[kind]
        if holds_w:
            rows.append([1.0, x / member.length])
        if holds_slope:
            rows.append([0.0, 1.0])
    for sp in member.springs:
        if sp.stiffness > 0.0:
            rows.append([1.0, sp.at / member.length])
        if sp.rotational_stiffness > 0.0:
            rows.append([0.0, 1.0])
    if member.axial_force != 0.0:
        rows.append([0.0, 1.0])
    rigid = rigid_body_count(member)
    if rows:
        _, _, vt = np.linalg.svd(np.array(rows))
        null = vt[-rigid:]
    else:
        null = np.eye(2)
    xs = mesh.x / member.length
    full = np.zeros((system.n_full, rigid))
    for i, (a, b) in enumerate(null):
        full[0::2, i] = a + b * xs
        full[1::2, i] = b / member.length * system.scale
    R = full[system.free]
    # M-orthonormalize (Cholesky of the small Gram matrix)
    gram = R.T @ (system.M @ R)
    chol = np.linalg.cholesky(gram)
    return np.linalg.solve(chol, R.T).T


def _strain_energy_quotient(
    member: Member, mesh: Mesh, system: System, vecs: np.ndarray
) -> np.ndarray:
    """Eigenvalues recomputed as Rayleigh quotients of the computed eigenvectors.

    The strain energy is summed element by element from curvatures and chord
    rotations (differences of nodal values), never through the assembled
    stiffness matrix, whose entries cancel badly for smooth modes on fine
    meshes.  The round-off in the lowest eigenvalues then grows like the
    square root of the matrix condition number instead of like the condition
    number itself; the quotient is stationary, so eigenvector errors enter
    only squared.
    """
    full = np.zeros((system.n_full, vecs.shape[1]))
    full[system.free] = vecs
    w = full[0::2]
    theta = full[1::2] / system.scale
    h = np.diff(mesh.x)[:, None]
    EI = np.array([seg.bending_stiffness for seg in member.segments])[mesh.segment][:, None]
    d = (w[1:] - w[:-1]) / h
    a = theta[:-1] - d
    b = theta[1:] - d
    k1 = (-4.0 * a - 2.0 * b) / h
    k2 = (2.0 * a + 4.0 * b) / h
    energy = (EI * h * (k1 * k1 + k1 * k2 + k2 * k2) / 3.0).sum(axis=0)
    if member.axial_force != 0.0:
        slope2 = h * (d * d + (2.0 * a * a - a * b + 2.0 * b * b) / 15.0)
        energy = energy + member.axial_force * slope2.sum(axis=0)
    for sp in member.springs:
        j, e = _node_offset(mesh, sp.at)
        at = w[j] + e * theta[j]
        energy = energy + sp.stiffness * at**2 + sp.rotational_stiffness * theta[j] ** 2
    kinetic = np.einsum("ij,ij->j", vecs, system.M @ vecs)
    return energy / kinetic


def _wavenumber(member: Member, omega: float) -> list[float]:
    """Bending wavenumber [1/m] of each segment at circular frequency omega [rad/s]."""
    out = []
    for seg in member.segments:
        EI, m = seg.bending_stiffness, seg.mass_per_length
        p = max(0.0, -member.axial_force) / EI
        q = omega**2 * m / EI
        out.append(math.sqrt(0.5 * (p + math.sqrt(p * p + 4.0 * q))))
    return out


def _designed_size(member: Member, omega: float, accuracy: float) -> Callable[[int], float]:
    # Hermite cubic elements with consistent mass: relative frequency error about (kh)^4 / 1440
    # for a uniform beam (h^4 convergence of the eigenvalues, common practice); aim for a tenth
    # of the target on the coarser of the two meshes compared.
    # At least _MIN_ELEMENTS over the member keeps the error estimate in its asymptotic range
    # even for modes that barely bend it (a member bouncing on soft springs).
    kh = (1440.0 * accuracy * 0.1 * 16.0) ** 0.25
    k = _wavenumber(member, omega)
    longest = member.length / _MIN_ELEMENTS
    return lambda seg: min(kh / max(k[seg], 1e-300), longest)


def _roundoff_estimate(sol: _Solution) -> np.ndarray:
    # With eigenvalues taken from element strain energies (see _strain_energy_quotient) the
    # relative round-off of lambda_i stays near eps * sqrt(lambda_max / lambda_i); lambda_max is
    # bounded by the largest element eigenvalue (element eigenvalue bound, common practice)
    # plus what springs add.  The frequency error is half the eigenvalue error; the factor
    # keeps the estimate above what is observed against exact roots.
    return _ROUNDOFF_FACTOR * _EPS * np.sqrt(sol.system.lambda_max_bound / sol.lam)


def solve(
    member: Member,
    modes: int = 5,
    *,
    elements: int | None = None,
    accuracy: float = ACCURACY,
    eigensolver: Eigensolver | None = None,
) -> FEResult:
    """Natural frequencies and mode shapes of a member by finite elements.

    Parameters
    ----------
    member : Member
        The member, in SI.
    modes : int
        Number of flexible modes to report.
    elements : int, optional
        Force a mesh of about this many elements (nodes stay at every station);
        by default the mesh is chosen to meet ``accuracy``.
    accuracy : float
        Relative accuracy target of every reported frequency [-].
    eigensolver : callable, optional
        Replacement eigen solver with the signature of :func:`default_eigensolver`.

    Returns
    -------
    FEResult

    Raises
    ------
    InputError
        For compression at or beyond the buckling load, or a model with no
        freedom or no mass to solve for.

    Examples
    --------
    >>> from beamtone.calc.materials import LIBRARY
    >>> from beamtone.calc.sections import build_section
    >>> from beamtone.calc.model import Member, Segment
    >>> sec = build_section("rectangle", {"width": 0.05, "depth": 0.01})
    >>> beam = Member((Segment(1.0, LIBRARY["steel"], sec),), "clamped", "free")
    >>> round(solve(beam, 1).modes[0].frequency_hz, 3)
    8.154
    """
    if modes < 1:
        raise InputError("check.modes", modes, "a whole number of modes, 1 or more")
    solver = eigensolver or default_eigensolver
    _check_mass(member)
    rigid = rigid_body_count(member)
    _check_buckling(member)
    warnings: list[str] = []
    shift = -_shift_scale(member)

    if elements is not None:
        fine_mesh = build_mesh(member, int(elements))
        coarse = _solve_mesh(member, fine_mesh, modes, rigid, shift, solver)
        reported = coarse
        check = _solve_mesh(member, fine_mesh.refined(), modes, rigid, shift, solver)
        _need_modes(reported, modes)
        disc = _SAFETY * 16.0 / 15.0 * np.abs(_omega(reported) - _omega(check)) / _omega(check)
        lower = check
    else:
        trial_mesh = build_mesh(member, max(4 * modes + 8, 16))
        omega = _trial_omega(member, trial_mesh, modes, rigid, shift, eigensolver)
        coarse_mesh = build_mesh(member, _designed_size(member, omega, accuracy))
        lower = _solve_mesh(member, coarse_mesh, modes, rigid, shift, solver)
        for _ in range(_MAX_REFINEMENTS):
            _need_modes(lower, modes)
            if 4 * lower.system.K.shape[0] > _MAX_DOFS:
                warnings.append(
                    f"the mesh reached its size limit ({lower.mesh.elements} elements) "
                    "before every mode met the accuracy target"
                )
                reported = lower
                disc = np.full(modes, np.nan)
                break
            reported = _solve_mesh(member, lower.mesh.refined(), modes, rigid, shift, solver)
            disc = _SAFETY / 15.0 * np.abs(_omega(lower) - _omega(reported)) / _omega(reported)
            if np.all(disc <= accuracy):
                break
            lower = reported
        else:
            warnings.append("some modes did not meet the accuracy target after refinement")

    roundoff = _roundoff_estimate(reported)[:modes]
    disc = disc[:modes]
    # Finite elements converge from above; a finer mesh giving a higher frequency is round-off.
    wrong_way = (_omega(lower) - _omega(reported))[:modes] < -1e-12 * _omega(reported)[:modes]
    if elements is not None:
        wrong_way = (_omega(reported) - _omega(check))[:modes] < -1e-12 * _omega(check)[:modes]
    error = np.fmax(disc, roundoff)
    # A forced mesh is an experiment: say whenever round-off dominates.  The automatic mesh
    # only says so where round-off keeps a mode from its accuracy target.
    limiting = (roundoff > disc) if elements is not None else (roundoff > disc) & (error > accuracy)
    roundoff_dominated = bool(np.any(wrong_way | limiting))
    if roundoff_dominated:
        worst = int(np.argmax(np.where(wrong_way, np.inf, roundoff / np.maximum(disc, 1e-300))))
        worst += 1
        warnings.append(
            f"round-off, not discretization, limits the accuracy (mode {worst}); "
            "a coarser mesh (--elements) would not be less accurate"
        )
    if elements is not None and np.any(error > accuracy):
        warnings.append(
            f"the forced mesh of {reported.mesh.elements} elements leaves an estimated "
            f"error of {float(np.max(error)):.1e}, above the {accuracy:.0e} target"
        )
    return _result(member, reported, rigid, modes, error, roundoff_dominated, warnings)


def _check_mass(member: Member) -> None:
    for i, seg in enumerate(member.segments):
        if not seg.mass_per_length > 0.0:
            key = f"member.segment[{i}]" if len(member.segments) > 1 else "member"
            raise InputError(
                f"{key}.material.density",
                seg.material.density,
                "mass along the whole member: a massless length has degrees of freedom with "
                "no inertia, whose frequencies cannot be found (give its density or added mass)",
            )


def _need_modes(sol: _Solution, modes: int) -> None:
    _need_modes_count(len(sol.lam), modes)


def _need_modes_count(available: int, modes: int) -> None:
    if available < modes:
        raise InputError(
            "check.modes",
            modes,
            f"at most {available} modes for this model; ask for fewer or give --elements",
        )


def _omega(sol: _Solution) -> np.ndarray:
    return np.sqrt(np.maximum(sol.lam, 0.0))


def _shift_scale(member: Member) -> float:
    EI = min(s.bending_stiffness for s in member.segments)
    m = max(s.mass_per_length for s in member.segments)
    extra = sum(p.mass for p in member.masses)
    L = member.length
    return 0.1 * EI / ((m + extra / L) * L**4)


def _result(
    member: Member,
    sol: _Solution,
    rigid: int,
    modes: int,
    error: np.ndarray,
    roundoff_dominated: bool,
    warnings: list[str],
) -> FEResult:
    system = sol.system
    lam = sol.lam[:modes]
    vecs = sol.vecs[:, :modes]
    K, M = system.K, system.M
    MPhi = M @ vecs
    KPhi = K @ vecs
    gram_m = vecs.T @ MPhi
    gram_k = vecs.T @ KPhi
    mass_res = float(np.max(np.abs(gram_m - np.eye(len(lam)))))
    stiff_res = float(np.max(np.abs(gram_k - np.diag(lam))) / max(float(np.max(lam)), 1e-300))

    if np.any(lam <= 0.0):
        raise InputError(
            "member.axial_force",
            f"{member.axial_force:.6g} N",
            "a stable member; the stiffness matrix is not positive definite",
        )
    stiff_def = "positive definite"
    if rigid:
        stiff_def = f"positive semi-definite with {rigid} rigid-body mode" + (
            "s" if rigid > 1 else ""
        )

    full = np.zeros((system.n_full, len(lam)))
    full[system.free] = vecs
    w_modal = full[0::2]
    theta_modal = full[1::2] / system.scale
    gamma = vecs.T @ system.influence_load
    meff = gamma**2
    fraction = meff / system.total_mass
    cumulative = np.cumsum(fraction)
    omega = np.sqrt(lam)
    out: list[Mode] = []
    for i in range(len(lam)):
        w = w_modal[:, i]
        peak = w[int(np.argmax(np.abs(w)))]
        out.append(
            Mode(
                number=i + 1,
                frequency_hz=float(omega[i] / (2.0 * math.pi)),
                omega=float(omega[i]),
                estimated_error=float(error[i]),
                effective_mass=float(meff[i]),
                effective_mass_fraction=float(fraction[i]),
                cumulative_mass_fraction=float(cumulative[i]),
                x=sol.mesh.x,
                w=w / peak if peak != 0.0 else w,
                w_modal=w,
                theta_modal=theta_modal[:, i],
            )
        )
    warnings.extend(_shear_warnings(member, out))
    return FEResult(
        modes=tuple(out),
        rigid_body_modes=rigid,
        elements=sol.mesh.elements,
        degrees_of_freedom=int(system.K.shape[0]),
        mass_orthogonality=mass_res,
        stiffness_orthogonality=stiff_res,
        stiffness_definiteness=stiff_def,
        mass_definiteness="positive definite",
        total_mass=system.total_mass,
        solver=sol.solver,
        roundoff_dominated=roundoff_dominated,
        warnings=tuple(warnings),
    )


def _shear_warnings(member: Member, modes: list[Mode]) -> list[str]:
    # Euler-Bernoulli theory loses accuracy when a half-wavelength is short against the depth:
    # below about ten depths shear and rotary inertia lower the frequency (common practice).
    for mode in modes:
        k = _wavenumber(member, mode.omega)
        for i, seg in enumerate(member.segments):
            half = math.pi / k[i]
            depth = seg.section.effective_depth
            if half < 10.0 * depth:
                where = f" in segment {i}" if len(member.segments) > 1 else ""
                return [
                    f"mode {mode.number} and above: half-wavelength {half:.3g} m{where} is under "
                    f"ten section depths ({10 * depth:.3g} m); shear deformation and rotary "
                    "inertia make the true frequency lower than this bending-only result"
                ]
    return []


# --- buckling ------------------------------------------------------------------------------------


def buckling_load(member: Member, elements: int | None = None) -> float:
    """Lowest compressive buckling load of the member with its supports and springs [N].

    The axial force of ``member`` itself is ignored.  Returns 0.0 when the
    member can rotate as a rigid body (it then carries no compression).

    Parameters
    ----------
    member : Member
    elements : int, optional
        Mesh size; by default one fine enough for the lowest buckling modes.

    Returns
    -------
    float
        P_cr [N] (finite elements converge to it from above).
    """
    from dataclasses import replace

    unloaded = replace(member, axial_force=0.0)
    rigid = rigid_body_count(unloaded)
    # With rigid freedom the only rigid motions left are either a rotation (no compression can be
    # carried) or a pure translation, which geometric stiffness does not see.
    if rigid and _rigid_rotation_free(unloaded):
        return 0.0
    mesh = build_mesh(unloaded, elements or max(64, 16 * len(member.segments)))
    loads = []
    for msh in (mesh, mesh.refined()):
        system = assemble(unloaded, msh, geometric=True)
        K = system.K.toarray() if system.K.shape[0] <= 2 * _DENSE_LIMIT else None
        G = system.Kg_unit
        assert G is not None
        if rigid:
            # drop one deflection DOF: both K and G vanish on a rigid translation
            keep = np.arange(1, system.K.shape[0])
            Ks = system.K[keep][:, keep]
            Gs = G[keep][:, keep]
        else:
            Ks, Gs = system.K, G
        if K is not None:
            nu = scipy.linalg.eigh(
                Gs.toarray(), Ks.toarray(), eigvals_only=True, subset_by_index=[Ks.shape[0] - 1] * 2
            )
            top = float(nu[-1])
        else:
            top = float(scipy.sparse.linalg.eigsh(Gs.tocsc(), k=1, M=Ks.tocsc(), which="LA")[0][0])
        loads.append(1.0 / top if top > 0 else math.inf)
    coarse, fine = loads
    return fine - (coarse - fine) / 15.0 if math.isfinite(fine) else math.inf


def _rigid_rotation_free(member: Member) -> bool:
    L = member.length
    tol = POSITION_TOLERANCE * L
    slope = any(HOLDS[k][1] for k in (member.left, member.right))
    slope = slope or any(HOLDS[s.kind][1] for s in member.inner_supports)
    slope = slope or any(s.rotational_stiffness > 0 for s in member.springs)
    if slope:
        return False
    points = [0.0] if HOLDS[member.left][0] else []
    points += [L] if HOLDS[member.right][0] else []
    points += [s.at for s in member.inner_supports if HOLDS[s.kind][0]]
    points += [s.at for s in member.springs if s.stiffness > 0]
    points.sort()
    return not any(b - a > tol for a, b in zip(points, points[1:], strict=False))


def _check_buckling(member: Member) -> None:
    if member.axial_force >= 0.0:
        return
    P_cr = buckling_load(member)
    compression = -member.axial_force
    if P_cr == 0.0:
        raise InputError(
            "member.axial_force",
            f"{member.axial_force:.6g} N",
            "no compression: this member can rotate as a rigid body, so any compression "
            "makes it unstable (give tension, or restrain it)",
        )
    if compression >= P_cr:
        raise InputError(
            "member.axial_force",
            f"{member.axial_force:.6g} N",
            f"a compression below the buckling load of this member, {P_cr:.6g} N",
        )
