"""Lowest buckling load of the member, and the check that its compression is below it."""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from beamtone.calc.errors import InputError
from beamtone.calc.fe.assembly import assemble
from beamtone.calc.fe.eigen import largest_eigenvalue
from beamtone.calc.fe.mesh import Mesh, build_mesh
from beamtone.calc.model import Member, rigid_body_count, rotation_free

__all__ = ["buckling_load", "check_buckling"]


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
    unloaded = replace(member, axial_force=0.0)
    rigid = rigid_body_count(unloaded)
    # With rigid freedom the only rigid motions left are either a rotation (no compression can be
    # carried) or a pure translation, which geometric stiffness does not see.
    if rigid and rotation_free(unloaded):
        return 0.0
    mesh = build_mesh(unloaded, elements or max(64, 16 * len(member.segments)))
    loads = [_lowest_load(unloaded, msh, rigid) for msh in (mesh, mesh.refined())]
    coarse, fine = loads
    # Richardson on h^4 (Hermite elements) or h^2 (Timoshenko: constant shear strain)
    rate = 3.0 if member.theory == "timoshenko" else 15.0
    return fine - (coarse - fine) / rate if math.isfinite(fine) else math.inf


def _lowest_load(unloaded: Member, mesh: Mesh, rigid: int) -> float:
    """Lowest buckling load [N] of one mesh (inf where no compression buckles it)."""
    system = assemble(unloaded, mesh, geometric=True)
    G = system.Kg_unit
    assert G is not None
    if rigid:
        # drop one deflection DOF: both K and G vanish on a rigid translation
        keep = np.arange(1, system.K.shape[0])
        Ks = system.K[keep][:, keep]
        Gs = G[keep][:, keep]
    else:
        Ks, Gs = system.K, G
    top = largest_eigenvalue(Gs, Ks, system.K.shape[0])
    return 1.0 / top if top > 0 else math.inf


def check_buckling(member: Member) -> None:
    """Refuse a compression at or beyond the buckling load (an unstable member has no modes).

    Raises
    ------
    InputError
        Naming ``member.axial_force``.
    """
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
