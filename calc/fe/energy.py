"""Energies of vectors on a mesh: the strain-energy quotient and the rigid motions."""

from __future__ import annotations

import numpy as np

from beamtone.calc.fe.assembly import System
from beamtone.calc.fe.mesh import Mesh
from beamtone.calc.fe.timoshenko import element_quotient, geometric_quotient
from beamtone.calc.model import Member, rigid_body_count, rigid_motion_rows

__all__ = ["strain_energy_quotient", "rigid_vectors"]


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
    w, theta = system.full(vecs)
    h = np.diff(mesh.x)[:, None]
    EI = np.array([seg.bending_stiffness for seg in member.segments])[mesh.segment][:, None]
    d = (w[1:] - w[:-1]) / h
    a = theta[:-1] - d
    b = theta[1:] - d
    k1 = (-4.0 * a - 2.0 * b) / h
    k2 = (2.0 * a + 4.0 * b) / h
    P = member.axial_force
    if system.shear is None:
        bending = EI * h * (k1 * k1 + k1 * k2 + k2 * k2) / 3.0
        if P != 0.0:
            bending = bending + P * h * (d * d + (2.0 * a * a - a * b + 2.0 * b * b) / 15.0)
    else:  # Timoshenko: bending and shear energy together, and w'^2 of its deflection shape
        phi = system.shear[0][:, None]
        bending = EI / h * element_quotient(a, b, phi)
        if P != 0.0:
            bending = bending + P * h * geometric_quotient(d, a, b, phi)
    tethered = mesh.tethered
    energy = bending[~tethered].sum(axis=0)
    if system.tethers:
        # a tethered element's energy from its relative unknowns r (see assembly._tethered)
        q = system.generalized(vecs)
        for t in system.tethers:
            r = q[2 * t.node : 2 * t.node + 2]
            block = t.energy_matrix(P)
            energy = energy + np.einsum("ik,ij,jk->k", r, block, r)
            if P != 0.0:
                th = theta[t.master]
                sign = 1.0 if t.offset > 0 else -1.0
                energy = energy + P * (abs(t.offset) * th * th + 2.0 * sign * th * r[0])
    for sp in member.springs:
        j, e = mesh.carrier(sp.at)
        at = w[j] + e * theta[j]
        energy = energy + sp.stiffness * at**2 + sp.rotational_stiffness * theta[j] ** 2
    kinetic = np.einsum("ij,ij->j", vecs, system.M @ vecs)
    return energy / kinetic


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
