"""Energies of vectors on a mesh: the strain-energy quotient and the rigid motions."""

from __future__ import annotations

import numpy as np

from beamtone.calc.fe.assembly import System
from beamtone.calc.fe.mesh import Mesh
from beamtone.calc.fe.timoshenko import element_form, geometric_form
from beamtone.calc.model import Member, rigid_body_count, rigid_motion_rows

__all__ = ["strain_energy_quotient", "strain_energy_matrix", "rigid_vectors"]


def strain_energy_quotient(
    member: Member, mesh: Mesh, system: System, vecs: np.ndarray
) -> np.ndarray:
    """Eigenvalues recomputed as Rayleigh quotients of the given vectors [rad^2/s^2].

    The strain energy is summed element by element from curvatures and chord
    rotations (differences of nodal values), never through the assembled
    stiffness matrix, whose entries cancel badly for smooth modes on fine
    meshes.  The round-off in the lowest eigenvalues then grows like the
    square root of the matrix condition number instead of like the condition
    number itself; the quotient is stationary, so eigenvector errors enter
    only squared.

    Parameters
    ----------
    member : Member
    mesh : Mesh
    system : System
        Assembled on ``mesh``.
    vecs : ndarray, shape (free DOFs, k)
        Vectors on the free DOFs (scaled form).

    Returns
    -------
    ndarray, shape (k,)
        Strain energy over kinetic energy (per omega^2) of each vector.
    """
    energy = _energies(member, mesh, system, vecs, vecs)
    kinetic = np.einsum("ij,ij->j", vecs, system.M @ vecs)
    return energy / kinetic


def strain_energy_matrix(
    member: Member, mesh: Mesh, system: System, vecs: np.ndarray
) -> np.ndarray:
    """The strain-energy form between every pair of the given vectors [N/m in scaled form].

    The bilinear form of :func:`strain_energy_quotient`'s energy (element by element, from
    differences of nodal values), so its diagonal over the kinetic form is that quotient.
    Between two computed modes it is zero but for their error: what the eigen solver mixed
    into each vector from the other shows here (see ``fe.adaptive``).

    Parameters
    ----------
    member, mesh, system
        As for :func:`strain_energy_quotient`.
    vecs : ndarray, shape (free DOFs, k)

    Returns
    -------
    ndarray, shape (k, k)
        Symmetric; entry (i, j) is twice the strain energy of the pair, per unit amplitude.
    """
    k = vecs.shape[1]
    left = np.repeat(vecs, k, axis=1)
    right = np.tile(vecs, (1, k))
    out = _energies(member, mesh, system, left, right).reshape(k, k)
    return 0.5 * (out + out.T)


def _energies(
    member: Member, mesh: Mesh, system: System, u: np.ndarray, v: np.ndarray
) -> np.ndarray:
    """The strain-energy form of the columns of ``u`` with those of ``v``, column by column."""
    wu, tu = system.full(u)
    wv, tv = system.full(v) if v is not u else (wu, tu)
    h = np.diff(mesh.x)[:, None]
    EI = np.array([seg.bending_stiffness for seg in member.segments])[mesh.segment][:, None]

    def rotations(w: np.ndarray, theta: np.ndarray) -> tuple[np.ndarray, ...]:
        d = (w[1:] - w[:-1]) / h
        return d, theta[:-1] - d, theta[1:] - d

    du, au, bu = rotations(wu, tu)
    dv, av, bv = (du, au, bu) if v is u else rotations(wv, tv)
    P = member.axial_force
    if system.shear is None:
        k1u, k2u = (-4.0 * au - 2.0 * bu) / h, (2.0 * au + 4.0 * bu) / h
        k1v, k2v = (-4.0 * av - 2.0 * bv) / h, (2.0 * av + 4.0 * bv) / h
        bending = EI * h * (k1u * k1v + 0.5 * (k1u * k2v + k2u * k1v) + k2u * k2v) / 3.0
        if P != 0.0:
            bending = bending + P * h * (
                du * dv + (2.0 * au * av - 0.5 * (au * bv + bu * av) + 2.0 * bu * bv) / 15.0
            )
    else:  # Timoshenko: bending and shear energy together, and w'^2 of its deflection shape
        phi = system.shear[0][:, None]
        bending = EI / h * element_form(au, bu, av, bv, phi)
        if P != 0.0:
            bending = bending + P * h * geometric_form(du, au, bu, dv, av, bv, phi)
    tethered = mesh.tethered
    energy = bending[~tethered].sum(axis=0)
    if system.tethers:
        # a tethered element's energy from its relative unknowns r (see assembly._tethered)
        qu = system.generalized(u)
        qv = qu if v is u else system.generalized(v)
        for t in system.tethers:
            ru = qu[2 * t.node : 2 * t.node + 2]
            rv = qv[2 * t.node : 2 * t.node + 2]
            block = t.energy_matrix(P)
            energy = energy + np.einsum("ik,ij,jk->k", ru, block, rv)
            if P != 0.0:
                thu, thv = tu[t.master], tv[t.master]
                sign = 1.0 if t.offset > 0 else -1.0
                energy = energy + P * (
                    abs(t.offset) * thu * thv + sign * (thu * rv[0] + thv * ru[0])
                )
    for sp in member.springs:
        j, e = mesh.carrier(sp.at)
        at_u, at_v = wu[j] + e * tu[j], wv[j] + e * tv[j]
        energy = energy + sp.stiffness * at_u * at_v + sp.rotational_stiffness * tu[j] * tv[j]
    return energy


def rigid_vectors(member: Member, mesh: Mesh, system: System) -> np.ndarray:
    """Mass-orthonormal basis of the rigid motions w = a + b*x the restraints leave free.

    Returns
    -------
    ndarray, shape (free DOFs, rigid-body modes)
        On the free DOFs of ``system`` (scaled form).
    """
    rows = rigid_motion_rows(member)
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
    if system.tethers:  # a rigid motion leaves a tethered node nothing relative
        for t in system.tethers:
            full[2 * t.node : 2 * t.node + 2] = 0.0
    R = full[system.free]
    # M-orthonormalize (Cholesky of the small Gram matrix)
    gram = R.T @ (system.M @ R)
    chol = np.linalg.cholesky(gram)
    return np.linalg.solve(chol, R.T).T
