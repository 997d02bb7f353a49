"""Banded assembly of the stiffness and mass matrices, with the supports eliminated.

The matrices are banded (three off-diagonals: w and theta of two neighbouring nodes); they
are summed in band storage and the held degrees of freedom are eliminated while the
compressed rows are built, so no general sparse assembly (sorting and summing duplicates)
and no full-size matrix is ever formed.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.sparse

from beamtone.calc.fe.elements import (
    ELEMENT_LAMBDA_MAX,
    GEOMETRIC_LAMBDA_MAX,
    scaled_element_matrices,
)
from beamtone.calc.fe.mesh import Mesh
from beamtone.calc.fe.timoshenko import element_shear, largest_element_eigenvalues
from beamtone.calc.fe.timoshenko import scaled_element_matrices as timoshenko_matrices
from beamtone.calc.model import Member, holds

__all__ = ["System", "Tether", "assemble"]


@dataclass(frozen=True)
class System:
    """Assembled matrices of a mesh, reduced to the free degrees of freedom.

    ``K`` and ``M`` act on the free DOFs in scaled form: slopes are multiplied
    by a reference length ``scale`` [m] so that all entries are of one size.
    ``free`` maps free DOF index to the full DOF index (2*node for w, 2*node+1 for theta).

    Attributes
    ----------
    K, M : scipy.sparse.csr_matrix
        Stiffness (elastic plus geometric of the axial force) [N/m] and mass [kg].
    Kg_unit : scipy.sparse.csr_matrix or None
        Geometric stiffness of a unit tension [1/m], where asked for.
    free : ndarray of int
        Full DOF index of each free DOF.
    n_full : int
        Number of DOFs before the supports are eliminated.
    scale : float
        Slope scale [m].
    influence_load : ndarray
        M times the unit rigid translation, on the free DOFs [kg].
    total_mass : float
        Member plus point masses [kg].
    lambda_max_bound : float
        Upper bound on the largest eigenvalue [rad^2/s^2].
    spring_lambda : float
        The part of ``lambda_max_bound`` that springs add [rad^2/s^2] (their energy is
        evaluated directly, so it enters the round-off differently; see ``fe.adaptive``).
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
    T: scipy.sparse.csr_matrix | None = None
    tethers: tuple[Tether, ...] = ()
    spring_lambda: float = 0.0
    """``T`` maps all DOFs (scaled) to the physical nodal values where nodes are tethered."""
    typical_lambda: float = 0.0
    """The median element's largest eigenvalue [rad^2/s^2] (the round-off of the vectors
    follows the bulk of the elements, not one short element; see ``fe.adaptive``)."""
    shear: tuple[np.ndarray, np.ndarray] | None = None
    """Timoshenko theory: each element's shear parameter phi and rotary inertia per length
    (:func:`calc.fe.timoshenko.element_shear`); None for Euler-Bernoulli."""

    def generalized(self, vectors: np.ndarray) -> np.ndarray:
        """Vectors on the free DOFs spread over all DOFs (zero where held), scaled form."""
        out = np.zeros((self.n_full, vectors.shape[1]))
        out[self.free] = vectors
        return out

    def full(self, vectors: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Nodal deflections and slopes (unscaled) of vectors on the free DOFs.

        Parameters
        ----------
        vectors : ndarray, shape (free DOFs, k)

        Returns
        -------
        w, theta : ndarray, shape (nodes, k)
            Deflections and slopes [rad per unit of the vectors' deflection]; zero where held.
        """
        out = self.generalized(vectors)
        if self.T is not None:
            out = self.T @ out
        return out[0::2], out[1::2] / self.scale

    def observe(self, node: int) -> np.ndarray:
        """Rows giving the deflection [m] and slope [rad] at a node from the free DOFs.

        Returns
        -------
        ndarray, shape (2, free DOFs)
        """
        rows = np.zeros((2, len(self.free)))
        for k, (index, values) in enumerate(self.observe_entries(node)):
            rows[k, index] = values
        return rows

    def observe_entries(self, node: int) -> tuple[tuple[np.ndarray, np.ndarray], ...]:
        """The non-zero entries of :meth:`observe`'s two rows, without full-length rows.

        A node's rows touch its own DOFs and those of its chain of tethers only, so this
        costs O(chain) rather than O(free DOFs) a call (what probes at thousands of
        attachments need).

        Returns
        -------
        ((index, values), (index, values))
            Free-DOF indices (sorted) and values of the deflection row [m] and the slope row
            [rad].
        """
        out = []
        for k in range(2):
            dof = 2 * node + k
            if self.T is None:
                cols, vals = np.array([dof]), np.array([1.0])
            else:  # the row's few entries, read straight from the compressed rows
                span = slice(self.T.indptr[dof], self.T.indptr[dof + 1])
                cols, vals = self.T.indices[span], self.T.data[span]
            at = np.minimum(np.searchsorted(self.free, cols), len(self.free) - 1)
            keep = self.free[at] == cols  # held DOFs read zero
            if len(cols) == 1:  # a node of its own (the common case): nothing to sum
                index, values = at[keep], np.array(vals[keep], dtype=float)
            else:
                index, where = np.unique(at[keep], return_inverse=True)
                values = np.zeros(len(index))
                np.add.at(values, where, vals[keep])
            if k == 1:
                values /= self.scale
            nonzero = values != 0.0
            out.append((index[nonzero], values[nonzero]))
        return tuple(out)


@dataclass(frozen=True)
class Tether:
    """A node solved for relative to its neighbour: u = rigid extension of the neighbour + r.

    Attributes
    ----------
    node, master : int
        The tethered node and its neighbour.
    offset : float
        x[node] - x[master] [m] (either sign).
    stiffness : ndarray, shape (2, 2)
        The element's stiffness on (r_w, s*r_theta) [N/m]: its block at the tethered end.  A
        rigid motion strains no element, so this block is the whole of the element's elastic
        energy in the relative unknowns (a cantilever from the neighbour), taken straight
        from the element matrix of the element's own theory, never from differences.
    geometric : ndarray, shape (2, 2)
        The same block of the geometric stiffness of a unit tension [1/m] (zero where it was
        not assembled).
    """

    node: int
    master: int
    offset: float
    stiffness: np.ndarray
    geometric: np.ndarray

    def energy_matrix(self, axial_force: float) -> np.ndarray:
        """Stiffness on r of the element under the axial force [N/m] (scaled form)."""
        return self.stiffness + axial_force * self.geometric


def _block(out: list[tuple[int, int, float]], j: int, a: float, e: float, b: float) -> None:
    """Add a * (w + e theta)^2 + b theta^2 at node j (theta in scaled units)."""
    w, t = 2 * j, 2 * j + 1
    out += [(w, w, a), (w, t, a * e), (t, w, a * e), (t, t, a * e * e + b)]


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


def _held_dofs(member: Member, mesh: Mesh) -> list[int]:
    """Full DOF indices the rigid supports hold."""
    fixed: list[int] = []
    last = len(mesh.x) - 1
    for hold in holds(member, springs=False, axial=False):
        at = hold.at if hold.at is not None else 0.0
        node = 0 if at == 0.0 else last if at == member.length else mesh.node_at(at)
        if hold.deflection:
            fixed.append(2 * node)
        if hold.slope:
            fixed.append(2 * node + 1)
    return fixed


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
    shear = element_shear(member, mesh.segment, h, EI)
    if shear is None:
        ke, ge, me = scaled_element_matrices(h, EI, m, s, geometric or P != 0.0)
    else:  # shear deformation and rotary inertia (interdependent interpolation element)
        ke, ge, me = timoshenko_matrices(h, EI, m, s, geometric or P != 0.0, *shear)
    n_nodes = len(mesh.x)
    n = 2 * n_nodes

    # Point masses and springs: 2x2 blocks on (w, theta) of their node; an attachment at an
    # offset e from its node acts on w + e*theta (rigid offset).
    point_k: list[tuple[int, int, float]] = []
    point_m: list[tuple[int, int, float]] = []
    for pm in member.masses:
        j, e = mesh.carrier(pm.at)
        _block(point_m, j, pm.mass, e / s, pm.rotary_inertia / s**2)
    for sp in member.springs:
        j, e = mesh.carrier(sp.at)
        _block(point_k, j, sp.stiffness, e / s, sp.rotational_stiffness / s**2)

    held = np.zeros(n, dtype=bool)
    held[_held_dofs(member, mesh)] = True
    free = np.flatnonzero(~held)
    number = np.full(n, -1)
    number[free] = np.arange(len(free))

    pk, pm_ = _triplets(point_k), _triplets(point_m)
    no_points = _triplets([])
    tethered = mesh.tethered
    ke_total = ke + P * ge if ge is not None and P else ke
    if tethered.any():
        # the elements of tethered nodes enter through their own blocks (see _tethered)
        ke_total = np.where(tethered[:, None, None], 0.0, ke_total)
        ge_phys = None if ge is None else np.where(tethered[:, None, None], 0.0, ge)
        K_band = _band(ke_total, pk, n)
        M_band = _band(me, pm_, n)
        G_band = _band(ge_phys, no_points, n) if ge_phys is not None and geometric else None
        K, M, G, T, tethers = _tethered(member, mesh, free, s, K_band, M_band, G_band, ke, ge)
    else:
        pattern = _pattern(free, number)
        K_band = _band(ke_total, pk, n)
        M_band = _band(me, pm_, n)
        K = _reduced(K_band, pattern)
        M = _reduced(M_band, pattern)
        G = _reduced(_band(ge, no_points, n), pattern) if ge is not None and geometric else None
        T, tethers = None, ()

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
    load = (full_load if T is None else T.T @ full_load)[free]
    total_mass = float(full_load[0::2].sum())

    # Largest eigenvalue: bounded by the largest element eigenvalue (element eigenvalue bound,
    # common practice; Weyl's inequality for the axial part), plus what springs add at their
    # degrees of freedom.
    # (A tethered element's energy comes from its relative unknowns, not from differences.)
    element_bound = (ELEMENT_LAMBDA_MAX * EI + GEOMETRIC_LAMBDA_MAX * abs(P) * h**2) / (m * h**4)
    if shear is not None:  # the Timoshenko element's own, computed (see largest_element_...)
        element_bound = largest_element_eigenvalues(ke, ge, me, P)
    lam_elem = float(np.max(np.where(tethered, 0.0, element_bound)))
    untethered = element_bound[~tethered]
    lam_typical = float(np.median(untethered)) if untethered.size else lam_elem
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
        spring_lambda=lam_spring,
        typical_lambda=lam_typical,
        T=T,
        tethers=tethers,
        shear=shear,
    )


def _full(band: np.ndarray) -> scipy.sparse.csr_matrix:
    """The symmetric matrix of upper band storage, on all DOFs."""
    n = band.shape[1]
    upper = scipy.sparse.diags(
        [band[d, : n - d] for d in range(1, _BAND + 1)], list(range(1, _BAND + 1)), shape=(n, n)
    )
    return (scipy.sparse.diags(band[0]) + upper + upper.T).tocsr()


def _tethered(
    member: Member,
    mesh: Mesh,
    free: np.ndarray,
    s: float,
    K_band: np.ndarray,
    M_band: np.ndarray,
    G_band: np.ndarray | None,
    ke: np.ndarray,
    ge: np.ndarray | None,
) -> tuple[Any, Any, Any, scipy.sparse.csr_matrix, tuple[Tether, ...]]:
    """K, M (and G) on the free DOFs where some nodes are tethered to a neighbour.

    A tethered node's unknowns are its deflection and slope relative to the rigid extension
    of its neighbour: u_node = (w_m + e theta_m, theta_m) + r.  The change of unknowns is exact;
    the short element between the two contributes its stiffness on r alone (a rigid motion
    does not strain it), so no entry of size EI/e^3 is ever added to, or subtracted from, the
    entries of the rest of the member, and the attachment stays where the user put it at any
    distance from the station, down to zero.
    """
    assert mesh.tether is not None
    n = K_band.shape[1]
    slaves = [int(j) for j in np.flatnonzero(mesh.tether >= 0)]
    # masters first: a chain of tethers resolves from the station outwards
    depth = {}
    for j in slaves:
        d, k = 0, j
        while mesh.tether[k] >= 0:
            k, d = int(mesh.tether[k]), d + 1
        depth[j] = d
    slaves.sort(key=lambda j: depth[j])
    # Rows of T as (columns, values), built from the master's rows: a tethered node's row has
    # the entries of its chain only (a chain is at most CHAIN_STATIONS long, see fe.mesh), so
    # T is built from triplets in O(n), never from full-length rows.
    rows: dict[int, tuple[np.ndarray, np.ndarray]] = {}

    def row(dof: int) -> tuple[np.ndarray, np.ndarray]:
        return rows.get(dof, (np.array([dof]), np.array([1.0])))

    tethers: list[Tether] = []
    for j in slaves:
        master = int(mesh.tether[j])
        e = float(mesh.x[j] - mesh.x[master])
        element = min(j, master)
        end = slice(2, 4) if j > master else slice(0, 2)  # the tethered node's end
        geo = np.zeros((2, 2)) if ge is None else ge[element, end, end].copy()
        tethers.append(Tether(j, master, e, ke[element, end, end].copy(), geo))
        (cw, vw), (ct, vt) = row(2 * master), row(2 * master + 1)
        rows[2 * j] = (np.concatenate([cw, ct, [2 * j]]), np.concatenate([vw, (e / s) * vt, [1.0]]))
        rows[2 * j + 1] = (np.concatenate([ct, [2 * j + 1]]), np.concatenate([vt, [1.0]]))
    untouched = np.setdiff1d(np.arange(n), np.fromiter(rows, dtype=int, count=len(rows)))
    all_rows = [untouched] + [np.full(len(c), d) for d, (c, _) in rows.items()]
    all_cols = [untouched] + [c for c, _ in rows.values()]
    all_vals = [np.ones(len(untouched))] + [v for _, v in rows.values()]
    Tc = scipy.sparse.csr_matrix(
        (np.concatenate(all_vals), (np.concatenate(all_rows), np.concatenate(all_cols))),
        shape=(n, n),
    )  # duplicates (a chain through both slots of a node) are summed, as the rows were
    P = member.axial_force

    def blocks(elastic: bool, tension: float) -> scipy.sparse.csr_matrix:
        ri: list[np.ndarray] = []
        ci: list[np.ndarray] = []
        vals: list[np.ndarray] = []
        local = np.array([0, 0, 1, 1]), np.array([0, 1, 0, 1])
        for t in tethers:
            block = (t.stiffness if elastic else 0.0) + tension * t.geometric
            ri.append(2 * t.node + local[0])
            ci.append(2 * t.node + local[1])
            vals.append(np.asarray(block, dtype=float)[local])
        if tension:
            # the rigid rotation of the short element under the axial force: tension times
            # |e| theta_m^2 + 2 sign(e) theta_m r_w (theta_m the neighbour's slope); the
            # triplets of theta^T theta and theta^T unit + unit^T theta, summed on conversion
            for t in tethers:
                cols, theta = row(2 * t.master + 1)
                theta = theta / s
                sign = 1.0 if t.offset > 0 else -1.0
                ri += [np.repeat(cols, len(cols)), cols, np.full(len(cols), 2 * t.node)]
                ci += [np.tile(cols, len(cols)), np.full(len(cols), 2 * t.node), cols]
                vals += [
                    tension * abs(t.offset) * np.outer(theta, theta).ravel(),
                    tension * sign * theta,
                    tension * sign * theta,
                ]
        if not ri:
            return scipy.sparse.csr_matrix((n, n))
        return scipy.sparse.csr_matrix(
            (np.concatenate(vals), (np.concatenate(ri), np.concatenate(ci))), shape=(n, n)
        )

    def reduce(matrix: scipy.sparse.csr_matrix) -> scipy.sparse.csr_matrix:
        return matrix[free][:, free].tocsr()

    K = reduce(Tc.T @ _full(K_band) @ Tc + blocks(True, P))
    M = reduce(Tc.T @ _full(M_band) @ Tc)
    G = None if G_band is None else reduce(Tc.T @ _full(G_band) @ Tc + blocks(False, 1.0))
    return K, M, G, Tc, tuple(tethers)
