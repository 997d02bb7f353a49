"""The adaptive solve: a mesh sized from a trial solve, compared with one twice as fine.

Each reported mode carries an estimate of its error: Richardson's argument on the known h^4
convergence of the eigenvalues of Hermite cubic elements (common practice) applied to the
two meshes, plus an estimate of the round-off (see :func:`_roundoff_estimate`).  Every mesh's
modes get a Rayleigh-Ritz step in the element-wise strain-energy form, and the mesh is not
refined past the point where round-off, not discretization, keeps a mode from the target.
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np
import scipy.linalg
import scipy.sparse.linalg

from beamtone.calc.errors import InputError
from beamtone.calc.fe.assembly import System, assemble
from beamtone.calc.fe.buckling import check_buckling
from beamtone.calc.fe.checks import (
    Solution,
    build_result,
    check_mass,
    check_system,
    sizing_wavenumber,
)
from beamtone.calc.fe.count import check_count
from beamtone.calc.fe.eigen import (
    Eigensolver,
    default_eigensolver,
    lowest_eigenvalues,
    solver_name,
)
from beamtone.calc.fe.energy import rigid_vectors, strain_energy_matrix
from beamtone.calc.fe.mesh import Mesh, build_mesh
from beamtone.calc.fe.result import FEResult
from beamtone.calc.model import Member, rigid_body_count

__all__ = ["ACCURACY", "solve", "shift_below", "solve_mesh"]

ACCURACY = 1e-6
"""Relative accuracy every reported natural frequency meets by default."""

_EPS = np.finfo(float).eps
_SAFETY = 2.0  # factor on the asymptotic Richardson estimate
_VECTOR_FACTOR = 10.0  # on eps^2 n lambda_max / lambda_i (see _roundoff_estimate)
_EVALUATION_FACTOR = 10.0  # on eps (lambda_max / lambda_i)^(1/4)
_COUPLING_FACTOR = 2.0  # on the mixing with modes not computed (see _roundoff_estimate)
_MAX_REFINEMENTS = 4
_MIN_ELEMENTS = 16  # on the coarser mesh of the two compared
_MAX_DOFS = 400_000


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
    check_mass(member)
    rigid = rigid_body_count(member)
    check_buckling(member)
    warnings: list[str] = []
    shift = -shift_below(member)
    # Timoshenko elements on the automatic mesh: eigenvalues extrapolated (see _extrapolated)
    extrapolate: np.ndarray | None = (
        np.empty(0) if member.theory == "timoshenko" and elements is None else None
    )

    if elements is not None:
        fine_mesh = build_mesh(member, int(elements))
        coarse = solve_mesh(member, fine_mesh, modes, rigid, shift, solver)
        reported = coarse
        check = solve_mesh(member, fine_mesh.refined(), modes, rigid, shift, solver)
        _need_modes(len(reported.lam), modes, int(elements))
        ratio = _richardson(member)
        disc = (ratio + 1.0) * _discretization(member, reported, check, modes)
        lower = check
    else:
        trial_mesh = build_mesh(member, max(4 * modes + 8, 16))
        omega = _trial_omega(member, trial_mesh, modes, rigid, shift, eigensolver)
        size = _designed_size(member, omega, accuracy)
        if extrapolate is not None:  # three meshes from twice the size: extrapolated as h^4
            size = _doubled(size)
        coarse_mesh = build_mesh(member, size)
        lower = solve_mesh(member, coarse_mesh, modes, rigid, shift, solver)
        best: tuple[float, Solution, Solution, np.ndarray] | None = None
        for _ in range(_MAX_REFINEMENTS if extrapolate is None else 0):
            _need_modes(len(lower.lam), modes)
            if 4 * lower.system.K.shape[0] > _MAX_DOFS:
                warnings.append(
                    f"the mesh reached its size limit ({lower.mesh.elements} elements) "
                    "before every mode met the accuracy target"
                )
                reported = lower
                disc = np.full(modes, np.nan)
                best = None
                break
            reported = solve_mesh(member, lower.mesh.refined(), modes, rigid, shift, solver)
            disc = _discretization(member, lower, reported, modes)
            own = _roundoff_estimate(reported)[:modes]
            worst = float(np.max(disc + own))
            if best is None or worst < best[0]:
                best = (worst, lower, reported, disc)
            if worst <= accuracy:
                break
            if np.any((own > accuracy) & (own > disc)):
                # Round-off, which grows as the elements shrink, is what keeps a mode from
                # the target: a finer mesh would only be less accurate.  Keep the best pair.
                warnings.append(
                    "round-off limits the accuracy of this model; the mesh was refined only "
                    "as far as it helped"
                )
                break
            lower = reported
        else:
            if extrapolate is None:
                warnings.append("some modes did not meet the accuracy target after refinement")
        if best is not None:
            _, lower, reported, disc = best
        if extrapolate is not None:
            lower, reported, extrapolate, disc = _extrapolated(
                member, lower, modes, rigid, shift, solver, accuracy, warnings
            )

    roundoff = _roundoff_estimate(reported)[:modes]
    if extrapolate is not None:  # (4 lam_fine - lam_coarse) / 3 carries their round-off
        roundoff = 2.0 * roundoff
    disc = disc[:modes]
    # Finite elements converge from above; a finer mesh giving a higher frequency is round-off.
    wrong_way = (lower.omega - reported.omega)[:modes] < -1e-12 * reported.omega[:modes]
    if elements is not None:
        wrong_way = (reported.omega - check.omega)[:modes] < -1e-12 * check.omega[:modes]
    error = disc + roundoff  # both parts: neither bounds the other
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
    # The count is of the assembled matrices, so it is compared with the eigen solver's own
    # eigenvalues of them, a little below the highest: at least as far below as those differ
    # from the strain-energy values (the matrices' round-off at these modes).
    raw = reported.raw_lam if reported.raw_lam is not None else reported.lam
    raw = raw[:modes]
    spread = float(np.max(np.abs(raw - reported.lam[:modes]) / reported.lam[:modes]))
    count = check_count(reported.system.K, reported.system.M, rigid, raw, 10.0 * spread)
    if not count.ok:
        missing = count.counted - count.found
        warnings.append(
            f"the independent mode count finds {count.counted} modes below "
            f"{count.below_hz:.6g} Hz (rigid-body modes included) where the eigen solver "
            f"returned {count.found}: "
            + (f"{missing} mode(s) missing from this list" if missing > 0 else "a spurious mode")
        )
    result = build_result(
        member, reported, rigid, modes, error, roundoff_dominated, warnings, count
    )
    if extrapolate is not None:
        result = _with_eigenvalues(result, extrapolate[:modes])
    return result


def _discretization(member: Member, lower: Solution, reported: Solution, modes: int) -> np.ndarray:
    """Richardson's estimate of the discretization error of ``reported`` [-].

    From its difference with ``lower`` (a mesh twice as coarse) over 2^p - 1, with the safety
    factor; the round-off both solutions may carry is added to the difference, since it can
    hide part of it.
    """
    n = min(len(lower.lam), len(reported.lam), modes)
    difference = np.abs(lower.omega[:n] - reported.omega[:n]) / reported.omega[:n]
    polluted = _roundoff_estimate(lower)[:n] + _roundoff_estimate(reported)[:n]
    return _SAFETY / _richardson(member) * (difference + polluted)


def _extrapolated(
    member: Member,
    first: Solution,
    modes: int,
    rigid: int,
    shift: float,
    solver: Eigensolver,
    accuracy: float,
    warnings: list[str],
) -> tuple[Solution, Solution, np.ndarray, np.ndarray]:
    """Richardson-extrapolated eigenvalues of the Timoshenko element and their error estimate.

    The element's shear strain is constant in each element, so its eigenvalues converge as
    lam + c2 h^2 + c4 h^4 (the h^2 part from the shear energy).  Each pair of meshes h, h/2
    gives (4 lam_(h/2) - lam_h) / 3, which converges as h^4; two such values from three meshes
    give its error by Richardson's argument again (factor 15, the same safety factor as the
    Hermite elements').  Meshes are halved until that estimate meets the target.

    Returns
    -------
    lower, reported : Solution
        The two finest meshes' raw solutions (``reported`` the finest, whose modes are shown).
    lam : ndarray
        Extrapolated eigenvalues [rad^2/s^2].
    disc : ndarray
        Estimated relative error of the extrapolated frequencies [-].
    """
    sols = [first]
    for _ in range(2):
        sols.append(solve_mesh(member, sols[-1].mesh.refined(), modes, rigid, shift, solver))
    _need_modes(len(first.lam), modes)

    def extrapolate(coarse: Solution, fine: Solution) -> np.ndarray:
        n = min(len(coarse.lam), len(fine.lam))
        return (4.0 * fine.lam[:n] - coarse.lam[:n]) / 3.0

    for _ in range(_MAX_REFINEMENTS):
        old, new = extrapolate(sols[-3], sols[-2]), extrapolate(sols[-2], sols[-1])
        n = min(len(old), len(new), modes)
        w_old = np.sqrt(np.maximum(old[:n], 0.0))
        w_new = np.sqrt(np.maximum(new[:n], 0.0))
        disc = _SAFETY / 15.0 * np.abs(w_old - w_new) / np.maximum(w_new, 1e-300)
        if np.all(disc <= accuracy) or 4 * sols[-1].system.K.shape[0] > _MAX_DOFS:
            break
        sols.append(solve_mesh(member, sols[-1].mesh.refined(), modes, rigid, shift, solver))
    else:
        warnings.append("some modes did not meet the accuracy target after refinement")
    return sols[-2], sols[-1], new, disc


def _doubled(size: Callable[[int], float]) -> Callable[[int], float]:
    """Element sizes twice ``size``'s (the first of the three meshes _extrapolated solves)."""
    return lambda seg: 2.0 * size(seg)


def _with_eigenvalues(result: FEResult, lam: np.ndarray) -> FEResult:
    """The result with each mode's frequency taken from ``lam`` [rad^2/s^2]."""
    from dataclasses import replace

    modes = tuple(
        replace(m, omega=float(w), frequency_hz=float(w / (2.0 * math.pi)))
        for m, w in zip(result.modes, np.sqrt(np.maximum(lam, 0.0)), strict=True)
    )
    return replace(result, modes=modes)


def _need_modes(available: int, modes: int, elements: int | None = None) -> None:
    if available < modes and elements is not None:  # the forced mesh is too coarse
        raise InputError(
            "check.modes",
            modes,
            f"at most {available} modes on the forced mesh of {elements} elements",
            "give more elements (--elements) or ask for fewer modes",
        )
    if available < modes:
        raise InputError(
            "check.modes",
            modes,
            f"at most {available} modes for this model; ask for fewer or give --elements",
        )


def shift_below(member: Member) -> float:
    """A positive number below the lowest flexible eigenvalue scale [rad^2/s^2].

    The solver shifts by minus this value, so that K + value*M is definite even where the
    member has rigid-body modes.
    """
    EI = min(s.bending_stiffness for s in member.segments)
    m = max(s.mass_per_length for s in member.segments)
    extra = sum(p.mass for p in member.masses)
    L = member.length
    return 0.1 * EI / ((m + extra / L) * L**4)


def _richardson(member: Member) -> float:
    """2^p - 1 for the convergence rate p of the eigenvalues: 4 for Hermite cubic elements
    (common practice); 2 for the Timoshenko element, whose shear strain is constant in each
    element (its shear energy converges as h^2; measured in tests/calc/fe/test_timoshenko.py).
    Where the bending part dominates the faster h^4 makes the h^2 estimate conservative."""
    return 15.0 if member.theory != "timoshenko" else 3.0


def _designed_size(member: Member, omega: float, accuracy: float) -> Callable[[int], float]:
    # Hermite cubic elements with consistent mass: relative frequency error about (kh)^4 / 1440
    # for a uniform beam (h^4 convergence of the eigenvalues, common practice); aim for a tenth
    # of the target on the coarser of the two meshes compared.
    # At least _MIN_ELEMENTS over the member keeps the error estimate in its asymptotic range
    # even for modes that barely bend it (a member bouncing on soft springs).
    kh = (1440.0 * accuracy * 0.1 * 16.0) ** 0.25
    k = sizing_wavenumber(member, omega)
    longest = member.length / _MIN_ELEMENTS
    return lambda seg: min(kh / max(k[seg], 1e-300), longest)


def _roundoff_estimate(sol: Solution) -> np.ndarray:
    """Relative round-off of each eigenvalue's frequency on one mesh [-].

    The eigenvalues are strain-energy quotients of the computed vectors (see
    :func:`~beamtone.calc.fe.energy.strain_energy_quotient`).  The quotient is stationary, so
    a vector error enters squared: the solver leaves each vector with components of relative
    size about eps along every other mode j, each adding (lambda_j - lambda_i) times their
    square to the quotient; over n free DOFs that is about eps^2 n lambda_max / lambda_i
    (lambda_max bounded by the largest element eigenvalue, element eigenvalue bound, common
    practice).  A spring's energy is evaluated directly, so its own eigenvalue enters once,
    not n times.  Evaluating the quotient adds about eps / (k h) for each element's chord
    rotation differences, eps (lambda_max / lambda_i)^(1/4).  ``_VECTOR_FACTOR`` and
    ``_EVALUATION_FACTOR`` keep the sum above what is observed against exact roots and within
    a factor 100 of it where it dominates (tests/calc/fe/test_estimates.py).

    The older bound eps sqrt(lambda_max / lambda_i) held too, but overstated the round-off of
    fine meshes by 1e2 to 1e5.
    """
    system = sol.system
    lam = np.maximum(sol.lam, 1e-300)
    elements = max(system.lambda_max_bound - system.spring_lambda, 0.0)
    typical = min(system.typical_lambda or elements, elements)
    n = system.K.shape[0]
    vector = _VECTOR_FACTOR * _EPS * _EPS * (n * typical + system.spring_lambda) / lam
    evaluation = _EVALUATION_FACTOR * _EPS * (1.0 + (elements / lam) ** 0.25)
    # What Rayleigh-Ritz on the computed vectors cannot remove: the mixing with the modes not
    # computed, sum_j c_ij^2 lambda_j / (lambda_j - lambda_i) with c_ij the form over
    # sqrt(lambda_i lambda_j).  c_ij falls off with j; it is taken as large as against the
    # highest computed modes, its sum as _COUPLING_FACTOR times that first term.
    mixing = np.zeros_like(lam)
    if sol.coupling is not None:
        above = sol.next_lam / np.maximum(sol.next_lam - lam, 1e-300 * sol.next_lam)
        above = np.where(np.isfinite(sol.next_lam), above, 1.0)
        mixing = _COUPLING_FACTOR * sol.coupling**2 * above
    # frequency error is half the eigenvalue error
    return 0.5 * (vector + evaluation + mixing)


def _trial_omega(
    member: Member, mesh: Mesh, modes: int, rigid: int, shift: float, solver: Eigensolver | None
) -> float:
    """Circular frequency [rad/s] of the highest wanted mode on a coarse trial mesh.

    It only sizes the elements of the meshes that follow, whose two-mesh comparison decides
    the accuracy; so eigenvalues alone are found, straight from the matrices.
    """
    if solver is not None:
        return float(solve_mesh(member, mesh, modes, rigid, shift, solver).omega[-1])
    system = assemble(member, mesh)
    check_system(system)
    n = system.K.shape[0]
    want = min(modes + rigid, n)
    if want - rigid < modes:  # the plain solve says what is wrong
        sol = solve_mesh(member, mesh, modes, rigid, shift, default_eigensolver)
        _need_modes(len(sol.lam), modes)
    try:
        lam = lowest_eigenvalues(system.K, system.M, want, shift)[rigid:]
    except (np.linalg.LinAlgError, scipy.sparse.linalg.ArpackNoConvergence):
        sol = solve_mesh(member, mesh, modes, rigid, shift, default_eigensolver)
        return float(sol.omega[-1])
    return math.sqrt(max(float(lam[-1]), 0.0))


def solve_mesh(
    member: Member, mesh: Mesh, count: int, rigid: int, shift: float, solver: Eigensolver
) -> Solution:
    """The lowest ``count`` flexible modes on one mesh.

    Parameters
    ----------
    member : Member
    mesh : Mesh
    count : int
        Flexible modes wanted.
    rigid : int
        Rigid-body modes of the member (solved for and set aside).
    shift : float
        Shift below the lowest eigenvalue [rad^2/s^2].
    solver : Eigensolver

    Returns
    -------
    Solution
        Eigenvalues from the strain-energy quotient, ascending.
    """
    system = assemble(member, mesh)
    check_system(system)
    n = system.K.shape[0]
    want = min(count + 1 + rigid, n)  # one more than asked: the gap to the modes not kept
    if want - rigid < 1:
        raise InputError(
            "supports", None, "a member left with some freedom to vibrate; every DOF is held"
        )
    try:
        found = solver(system.K, system.M, want, shift)
    except np.linalg.LinAlgError:
        raise InputError(
            "member",
            None,
            "a model the eigen solver can factor; its matrices are numerically singular "
            "(a massless part, or stiffnesses of wildly different size)",
        ) from None
    vals, vecs = found
    flexible = vecs[:, rigid:]
    if rigid:
        # Purify: make the flexible vectors exactly mass-orthogonal to the exact rigid motions.
        R = rigid_vectors(member, mesh, system)
        flexible = flexible - R @ (R.T @ (system.M @ flexible))
    lam, flexible, coupling = _ritz(member, mesh, system, flexible)
    keep = min(count, len(lam))
    next_lam = float(lam[keep]) if len(lam) > keep else math.inf
    raw = np.sort(np.asarray(vals, dtype=float)[rigid:])[:keep]
    return Solution(
        lam[:keep],
        flexible[:, :keep],
        system,
        mesh,
        solver_name(solver, found),
        coupling[:keep],
        next_lam,
        raw,
    )


def _ritz(
    member: Member, mesh: Mesh, system: System, vecs: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Rayleigh-Ritz on the computed vectors with the element-wise strain-energy form.

    The eigen solver works on the assembled matrices, whose round-off mixes a little of each
    computed mode into the others (much more where a short element makes K ill-conditioned);
    the strain-energy form (differences of nodal values, element by element) sees that mixing
    as off-diagonal entries, and the small eigenproblem in the computed vectors removes it.

    Returns
    -------
    lam : ndarray
        Ritz values, ascending [rad^2/s^2].
    vecs : ndarray
        Their M-orthonormal vectors (free DOFs, scaled form).
    coupling : ndarray
        Per Ritz value, the largest form between its computed vector and one of the two
        highest computed modes before the step, over sqrt(lambda_i lambda_j) [-].
    """
    if vecs.shape[1] == 0:  # no flexible mode on this mesh (the caller says what is wrong)
        return np.zeros(0), vecs, np.zeros(0)
    energy = strain_energy_matrix(member, mesh, system, vecs)
    gram = vecs.T @ (system.M @ vecs)
    gram = 0.5 * (gram + gram.T)
    diagonal = np.diag(energy) / np.diag(gram)
    try:
        _, y = scipy.linalg.eigh(energy, gram)
    except (np.linalg.LinAlgError, ValueError):  # a degenerate set of vectors: quotients only
        y = np.eye(len(diagonal))
    # The small solve's eigenvalues carry an error of eps times the largest (normwise); its
    # vectors are what is wanted, their quotients are recomputed in the element-wise form.
    lam = np.einsum("ij,ij->j", y, energy @ y) / np.einsum("ij,ij->j", y, gram @ y)
    order = np.argsort(lam)
    lam, y = lam[order], y[:, order]
    y = y / np.sqrt(np.einsum("ij,ij->j", y, gram @ y))
    # the form between two computed vectors, relative to sqrt(lambda_i lambda_j); its size
    # against the highest computed modes stands for the modes above them, not computed
    size = np.sqrt(np.abs(np.diag(energy)))
    relative = np.abs(energy) / np.maximum(np.outer(size, size), 1e-300)
    np.fill_diagonal(relative, 0.0)
    top = relative[:, -2:] if relative.shape[1] > 2 else relative
    coupling = top.max(axis=1, initial=0.0)
    # each Ritz vector's coupling: that of the computed vector it is mostly made of
    origin = np.argmax(np.abs(y) * np.sqrt(np.diag(gram))[:, None], axis=0)
    return lam, vecs @ y, coupling[origin]
