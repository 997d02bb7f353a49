"""Finite-element eigen solution of a member in bending.

Hermite cubic Euler-Bernoulli beam elements with consistent mass and the
geometric stiffness of a constant axial force; two degrees of freedom per node
(deflection w [m] and slope theta [rad]).  Supports are enforced exactly by
eliminating the degrees of freedom they hold.  The mesh is chosen
automatically so that every reported mode meets a relative accuracy target,
and each mode carries an estimate of its discretization error from two meshes
(the reported one and one twice as coarse, Richardson's argument on the known
h^4 convergence of the eigenvalues).

The package is split the way the method is:

- ``mesh``: nodes at every station, elements between;
- ``elements``: the element matrices (common practice; e.g. J. S. Przemieniecki, Theory of
  Matrix Structural Analysis, 1968, chapters 5 and 11);
- ``assembly``: banded assembly with the supports eliminated;
- ``energy``: the strain-energy quotient and the rigid motions;
- ``eigen``: the eigen solvers behind one name -> method table;
- ``adaptive``: the two-mesh solve and its error estimate;
- ``checks``: soundness checks and the result;
- ``count``: the independent mode count (inertia of K - omega^2 M);
- ``buckling``: the lowest buckling load.
"""

from __future__ import annotations

from beamtone.calc.fe.adaptive import ACCURACY, shift_below, solve, solve_mesh
from beamtone.calc.fe.assembly import System, assemble
from beamtone.calc.fe.buckling import buckling_load, check_buckling
from beamtone.calc.fe.checks import Solution, scaled_result, wavenumber
from beamtone.calc.fe.count import ModeCount, count_below
from beamtone.calc.fe.eigen import (
    DENSE_LIMIT,
    SOLVERS,
    EigenMethod,
    EigenPairs,
    Eigensolver,
    default_eigensolver,
    largest_eigenvalue,
    lowest_eigenvalues,
    method_for,
)
from beamtone.calc.fe.elements import element_matrices
from beamtone.calc.fe.energy import rigid_vectors, strain_energy_quotient
from beamtone.calc.fe.mesh import (
    ATTACHMENT_TOLERANCE,
    Mesh,
    build_mesh,
    interpolate,
    mesh_through,
    stations,
)
from beamtone.calc.fe.result import ASSUMPTIONS, ESTIMATE_MEANING, FEResult, Mode

__all__ = [
    "ACCURACY",
    "ASSUMPTIONS",
    "ESTIMATE_MEANING",
    "ModeCount",
    "count_below",
    "ATTACHMENT_TOLERANCE",
    "DENSE_LIMIT",
    "SOLVERS",
    "EigenMethod",
    "EigenPairs",
    "Eigensolver",
    "FEResult",
    "Mesh",
    "Mode",
    "Solution",
    "System",
    "assemble",
    "buckling_load",
    "build_mesh",
    "check_buckling",
    "default_eigensolver",
    "element_matrices",
    "interpolate",
    "largest_eigenvalue",
    "lowest_eigenvalues",
    "mesh_through",
    "method_for",
    "rigid_vectors",
    "scaled_result",
    "shift_below",
    "solve",
    "solve_mesh",
    "stations",
    "strain_energy_quotient",
    "wavenumber",
]
