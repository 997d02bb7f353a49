"""Finite elements for the second-order directions: Saint-Venant torsion and axial motion.

Both directions obey the one-dimensional wave equation ``(k u')' = mu u_tt`` on uniform
segments: in torsion u is the twist phi [rad], k = G J [N*m^2] and mu = rho Ip [kg*m]; axially
u is the displacement [m], k = E A [N] and mu = rho A [kg/m].  Point inertias (polar
inertias of attached masses, or the masses themselves), grounded springs (torsional or
axial) and held points act at stations.

Elements are C0 cubic Lagrange elements (four equally spaced nodes) with the consistent mass
matrix; their eigenvalues converge from above as h^6 (common practice for p-th order
elements, h^(2p); e.g. G. Strang and G. J. Fix, *An Analysis of the Finite Element Method*,
chapter 6).  As in the bending solve, the member is solved on two meshes (the reported one
and one twice as coarse) and each frequency carries twice the Richardson estimate of its
error plus a round-off bound; the mesh is refined until every reported mode meets the
accuracy target.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import scipy.linalg
import scipy.sparse
import scipy.sparse.linalg

from beamtone.calc.errors import InputError

__all__ = [
    "RodProblem",
    "RodMode",
    "RodResult",
    "solve_rod",
    "REFERENCE_ELEMENT",
    "mesh_layout",
    "station_positions",
    "coarse_mesh",
]

_SAFETY = 2.0
_ORDER = 6  # eigenvalue convergence rate of cubic elements, h^6
_MAX_REFINEMENTS = 5
_DENSE_LIMIT = 200
_MAX_DOFS = 200_000
_EPS = np.finfo(float).eps


@dataclass(frozen=True)
class RodProblem:
    """A member in a second-order direction, all in SI.

    Attributes
    ----------
    boundaries : tuple of float
        Segment ends from 0 to L [m].
    stiffness : tuple of float
        k of each segment: G J [N*m^2] in torsion, E A [N] axially.
    inertia : tuple of float
        mu of each segment: rho Ip [kg*m] in torsion, rho A [kg/m] axially (with any added
        mass's share).
    point_inertias : tuple of (float, float)
        (position [m], inertia [kg*m^2 or kg]) of attached bodies.
    springs : tuple of (float, float)
        (position [m], stiffness [N*m/rad or N/m]) of grounded springs.
    held : tuple of float
        Positions where the motion is held [m].
    """

    boundaries: tuple[float, ...]
    stiffness: tuple[float, ...]
    inertia: tuple[float, ...]
    point_inertias: tuple[tuple[float, float], ...] = ()
    springs: tuple[tuple[float, float], ...] = ()
    held: tuple[float, ...] = ()

    @property
    def length(self) -> float:
        """L [m]."""
        return self.boundaries[-1]

    @property
    def total_inertia(self) -> float:
        """Inertia of the member and its point inertias [kg*m^2 or kg]."""
        own = sum(
            mu * (b - a)
            for mu, a, b in zip(
                self.inertia, self.boundaries[:-1], self.boundaries[1:], strict=True
            )
        )
        return own + sum(j for _, j in self.point_inertias)

    @property
    def rigid_body_modes(self) -> int:
        """1 when nothing holds the member (no held point, no spring), else 0."""
        return 0 if self.held or any(k > 0.0 for _, k in self.springs) else 1


@dataclass(frozen=True)
class RodMode:
    """One flexible mode of a second-order direction.

    Attributes
    ----------
    number : int
        1 for the first flexible mode.
    frequency_hz : float
        Natural frequency [Hz].
    omega : float
        Circular natural frequency [rad/s].
    estimated_error : float
        Estimated relative error of the frequency [-].
    effective_inertia : float
        Effective modal inertia for a rigid motion of the whole member: effective polar
        inertia [kg*m^2] in torsion, effective mass [kg] axially.
    effective_fraction : float
        ``effective_inertia`` over the total [-].
    cumulative_fraction : float
        Sum of the fractions of this mode and those below it [-].
    x : ndarray
        Node positions [m].
    u : ndarray
        Motion at the nodes scaled to unit largest magnitude, largest positive [-].
    """

    number: int
    frequency_hz: float
    omega: float
    estimated_error: float
    effective_inertia: float
    effective_fraction: float
    cumulative_fraction: float
    x: np.ndarray = field(repr=False)
    u: np.ndarray = field(repr=False)


@dataclass(frozen=True)
class RodResult:
    """The finite-element solution of a second-order direction.

    Attributes
    ----------
    modes : tuple of RodMode
        Flexible modes, lowest first.
    rigid_body_modes : int
        0 or 1 (a member nothing holds turns or slides freely); not listed in ``modes``.
    elements : int
        Elements of the reported mesh.
    degrees_of_freedom : int
        Free degrees of freedom of the reported mesh.
    solver : str
        The eigen solver that ran.
    warnings : tuple of str
    """

    modes: tuple[RodMode, ...]
    rigid_body_modes: int
    elements: int
    degrees_of_freedom: int
    solver: str
    warnings: tuple[str, ...] = ()


def _reference_element() -> tuple[np.ndarray, np.ndarray]:
    """Stiffness and mass of the cubic Lagrange element on [0, 1] (exact Gauss quadrature)."""
    nodes = np.linspace(0.0, 1.0, 4)
    coeffs = np.linalg.inv(np.vander(nodes, 4, increasing=True))  # column j: N_j's monomials
    g, wq = np.polynomial.legendre.leggauss(4)
    g, wq = 0.5 * (g + 1.0), 0.5 * wq
    V = np.vander(g, 4, increasing=True)
    dV = np.column_stack([np.zeros_like(g), np.ones_like(g), 2 * g, 3 * g**2])
    N, dN = V @ coeffs, dV @ coeffs
    return dN.T @ (wq[:, None] * dN), N.T @ (wq[:, None] * N)


_K_REF, _M_REF = _reference_element()
_K_MAX = float(np.max(scipy.linalg.eigh(_K_REF, _M_REF, eigvals_only=True)))
REFERENCE_ELEMENT = (_K_REF, _M_REF)
"""Stiffness and mass of the cubic element on [0, 1]: an element of length h and segment
values k, mu has k/h times the first and mu h times the second (four nodes, in order)."""


def station_positions(problem: RodProblem) -> np.ndarray:
    """Where the meshes of ``problem`` have nodes whatever their size [m]: segment ends, held
    points, point inertias and springs, in order (coincident ones once)."""
    return np.asarray(_stations(problem))


def coarse_mesh(problem: RodProblem, modes: int, accuracy: float) -> np.ndarray:
    """Node positions [m] of a mesh sized for ``accuracy`` (relative) of the first ``modes``
    flexible modes by the error model of :func:`solve_rod`'s first trial, 5e-6 (k h)^6 with
    a factor 10 to spare; for stacked studies, which check it against full solves."""
    L = problem.length
    c = np.sqrt(np.asarray(problem.stiffness) / np.asarray(problem.inertia))
    k_top = (modes + problem.rigid_body_modes + 0.5) * math.pi / L * float(np.max(c)) / c
    kh = (accuracy / 10.0 / 5e-6) ** (1.0 / _ORDER)
    return _mesh(problem, _stations(problem), np.minimum(kh / k_top, L / 8.0)).x


def mesh_layout(problem: RodProblem, x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The stations of ``problem``, the node at each, and each element's segment, on the mesh
    whose nodes are ``x`` [m] (a mode's ``x``: element e has nodes 3e to 3e + 3).

    Returns
    -------
    stations : ndarray [m]
    station_nodes : ndarray of int
    element_segment : ndarray of int
    """
    stations = station_positions(problem)
    nodes = np.array([int(np.argmin(np.abs(x - s))) for s in stations], dtype=int)
    mid = 0.5 * (x[0:-1:3] + x[3::3])
    segment = np.array([_segment_of(problem, float(p)) for p in mid], dtype=int)
    return stations, nodes, segment


@dataclass(frozen=True)
class _Mesh:
    x: np.ndarray  # all node positions
    element_segment: np.ndarray
    element_h: np.ndarray
    station_node: dict[float, int]


def _stations(problem: RodProblem) -> list[float]:
    L = problem.length
    tol = 1e-9 * L
    points = [*problem.boundaries, *problem.held]
    points += [p for p, _ in problem.point_inertias] + [p for p, _ in problem.springs]
    out: list[float] = []
    for p in sorted(min(max(p, 0.0), L) for p in points):
        if not out or p - out[-1] > tol:
            out.append(p)
    out[-1] = L
    return out


def _segment_of(problem: RodProblem, x: float) -> int:
    for i, end in enumerate(problem.boundaries[1:]):
        if x <= end:
            return i
    return len(problem.boundaries) - 2


def _mesh(problem: RodProblem, stations: list[float], size: np.ndarray) -> _Mesh:
    """Each station interval split evenly into elements no longer than its segment's size."""
    xs, seg, hs = [stations[0]], [], []
    node_of = {stations[0]: 0}
    for a, b in zip(stations[:-1], stations[1:], strict=True):
        s = _segment_of(problem, 0.5 * (a + b))
        n = max(1, math.ceil((b - a) / size[s] - 1e-9))
        h = (b - a) / n
        for e in range(n):
            left = a + e * h
            xs += [left + h / 3.0, left + 2.0 * h / 3.0, b if e == n - 1 else left + h]
        seg += [s] * n
        hs += [h] * n
        node_of[b] = len(xs) - 1
    return _Mesh(np.asarray(xs), np.asarray(seg), np.asarray(hs), node_of)


def _node(mesh: _Mesh, at: float) -> int:
    node = mesh.station_node.get(at)
    return node if node is not None else int(np.argmin(np.abs(mesh.x - at)))


def _matrices(problem: RodProblem, mesh: _Mesh) -> tuple[object, object, np.ndarray]:
    """Assembled K and M reduced to the free nodes (dense arrays for small models, else
    sparse), and the indices of the free nodes."""
    n_el = len(mesh.element_h)
    k = np.asarray(problem.stiffness)[mesh.element_segment] / mesh.element_h
    mu = np.asarray(problem.inertia)[mesh.element_segment] * mesh.element_h
    dofs = 3 * np.arange(n_el)[:, None] + np.arange(4)[None, :]
    rows = np.repeat(dofs, 4, axis=1).ravel()
    cols = np.tile(dofs, (1, 4)).ravel()
    kv = (k[:, None, None] * _K_REF[None]).ravel()
    mv = (mu[:, None, None] * _M_REF[None]).ravel()
    n = len(mesh.x)
    point_k = [(_node(mesh, at), kk) for at, kk in problem.springs]
    point_m = [(_node(mesh, at), jj) for at, jj in problem.point_inertias]
    held = {_node(mesh, p) for p in problem.held}
    free = np.array([i for i in range(n) if i not in held], dtype=int)
    if n - len(held) <= _DENSE_LIMIT:
        K, M = np.zeros((n, n)), np.zeros((n, n))
        np.add.at(K, (rows, cols), kv)
        np.add.at(M, (rows, cols), mv)
        for j, kk in point_k:
            K[j, j] += kk
        for j, jj in point_m:
            M[j, j] += jj
        return K[np.ix_(free, free)], M[np.ix_(free, free)], free
    extra = point_k + point_m
    rows = np.concatenate([rows, [j for j, _ in extra]]).astype(int)
    cols = np.concatenate([cols, [j for j, _ in extra]]).astype(int)
    kv = np.concatenate([kv, [v for _, v in point_k], np.zeros(len(point_m))])
    mv = np.concatenate([mv, np.zeros(len(point_k)), [v for _, v in point_m]])
    Ks = scipy.sparse.csr_matrix((kv, (rows, cols)), shape=(n, n))
    Ms = scipy.sparse.csr_matrix((mv, (rows, cols)), shape=(n, n))
    return Ks[free][:, free].tocsc(), Ms[free][:, free].tocsc(), free


def _eigen(K: object, M: object, count: int, shift: float) -> tuple[np.ndarray, np.ndarray, str]:
    n = K.shape[0]  # type: ignore[attr-defined]
    count = min(count, n)
    dense = isinstance(K, np.ndarray)
    if dense or count >= n - 1:
        Kd = K if dense else K.toarray()  # type: ignore[attr-defined]
        Md = M if dense else M.toarray()  # type: ignore[attr-defined]
        vals, vecs = scipy.linalg.eigh(Kd, Md, subset_by_index=[0, count - 1], driver="gvx")
        return vals, vecs, "dense (LAPACK)"
    v0 = np.ones(n) / math.sqrt(n)
    vals, vecs = scipy.sparse.linalg.eigsh(K, k=count, M=M, sigma=shift, which="LM", v0=v0)
    order = np.argsort(vals)
    return vals[order], vecs[:, order], "sparse shift-invert (ARPACK)"


@dataclass(frozen=True)
class _Solution:
    lam: np.ndarray
    vecs: np.ndarray
    free: np.ndarray
    mesh: _Mesh
    M: object
    solver: str
    lam_max: float


def _solve_mesh(problem: RodProblem, mesh: _Mesh, count: int, shift: float) -> _Solution:
    K, M, free = _matrices(problem, mesh)
    vals, vecs, solver = _eigen(K, M, count, shift)
    k = np.asarray(problem.stiffness)[mesh.element_segment]
    mu = np.asarray(problem.inertia)[mesh.element_segment]
    lam_max = float(np.max(_K_MAX * k / (mu * mesh.element_h**2)))
    return _Solution(vals, vecs, free, mesh, M, solver, lam_max)


def _omegas(sol: _Solution, rigid: int, count: int) -> np.ndarray:
    return np.sqrt(np.maximum(sol.lam[rigid : rigid + count], 0.0))


def solve_rod(problem: RodProblem, modes: int = 5, *, accuracy: float = 1e-6) -> RodResult:
    """Natural frequencies of a second-order direction by finite elements.

    Parameters
    ----------
    problem : RodProblem
    modes : int
        Flexible modes wanted.
    accuracy : float
        Relative accuracy target of every reported frequency [-].

    Returns
    -------
    RodResult

    Raises
    ------
    InputError
        For a member with no stiffness or no inertia in this direction.

    Examples
    --------
    >>> p = RodProblem((0.0, 1.0), (1.0,), (1.0,), held=(0.0,))   # c = 1 m/s, held-free
    >>> round(solve_rod(p, 1).modes[0].omega, 9)                 # pi c / (2 L)
    1.570796327
    """
    if modes < 1:
        raise InputError("check.modes", modes, "a whole number of modes, 1 or more")
    if min(problem.stiffness) <= 0.0 or min(problem.inertia) <= 0.0:
        raise InputError("member", None, "a positive stiffness and inertia in every segment")
    rigid = problem.rigid_body_modes
    want = modes + rigid
    stations = _stations(problem)
    L = problem.length
    c = np.sqrt(np.asarray(problem.stiffness) / np.asarray(problem.inertia))
    # first trial from the error of cubic elements, about 5e-6 (k h)^6 relative for the
    # wavenumber k of a mode (measured on uniform rods): k h = 0.45 gives 4e-8, with k of the
    # highest wanted mode of a uniform member of the stiffest segment's wave speed
    k_top = (want + 0.5) * math.pi / L * float(np.max(c)) / c
    size = np.minimum(0.45 / k_top, L / 8.0)
    warnings: list[str] = []
    for _ in range(_MAX_REFINEMENTS):
        coarse_mesh = _mesh(problem, stations, 2.0 * size)
        fine_mesh = _mesh(problem, stations, size)
        if len(fine_mesh.x) > _MAX_DOFS:
            warnings.append("the accuracy target was not met within the largest mesh allowed")
            break
        fine = _solve_mesh(problem, fine_mesh, want, -1e-3 * _shift(problem))
        coarse = _solve_mesh(problem, coarse_mesh, want, -1e-3 * _shift(problem))
        available = min(len(fine.lam), len(coarse.lam)) - rigid
        n = min(modes, available)
        wf, wc = _omegas(fine, rigid, n), _omegas(coarse, rigid, n)
        disc = _SAFETY * np.abs(wc - wf) / (2.0**_ORDER - 1.0) / wf
        roundoff = 10.0 * _EPS * fine.lam_max / np.maximum(fine.lam[rigid : rigid + n], 1e-300)
        error = np.maximum(disc, roundoff)
        if n == modes and np.all(error <= accuracy / 10.0):
            break
        worst = float(np.max(disc / (accuracy / 10.0))) if n == modes else 2.0**_ORDER
        size = size / min(max(worst ** (1.0 / _ORDER) * 1.2, 1.5), 8.0)
    else:
        if np.any(error > accuracy):
            warnings.append(
                f"accuracy target {accuracy:g} not met: largest estimated error {error.max():.2g}"
            )
    return RodResult(
        _modes(problem, fine, rigid, n, error),
        rigid,
        len(fine.mesh.element_h),
        len(fine.free),
        fine.solver,
        tuple(warnings),
    )


def _shift(problem: RodProblem) -> float:
    """A scale of the eigenvalues [rad^2/s^2] for the shift that keeps K - shift M regular."""
    k = float(np.min(problem.stiffness))
    mu = float(np.max(problem.inertia))
    return k / (mu * problem.length**2)


def _modes(
    problem: RodProblem, sol: _Solution, rigid: int, n: int, error: np.ndarray
) -> tuple[RodMode, ...]:
    total = problem.total_inertia
    ones = np.ones(len(sol.free))
    Mr = sol.M @ ones
    out: list[RodMode] = []
    cumulative = 0.0
    for i in range(n):
        vec = sol.vecs[:, rigid + i]
        vec = vec / math.sqrt(float(vec @ (sol.M @ vec)))
        full = np.zeros(len(sol.mesh.x))
        full[sol.free] = vec
        peak = int(np.argmax(np.abs(full)))
        shape = full / full[peak]
        effective = float(vec @ Mr) ** 2
        cumulative += effective / total
        omega = math.sqrt(max(float(sol.lam[rigid + i]), 0.0))
        out.append(
            RodMode(
                i + 1,
                omega / (2.0 * math.pi),
                omega,
                float(error[i]),
                effective,
                effective / total,
                cumulative,
                sol.mesh.x,
                shape,
            )
        )
    return tuple(out)
