"""Soundness checks of a solution and the result built from it.

Orthogonality of the modes in mass and stiffness, definiteness of the matrices, mass at
every free degree of freedom, and the warning where a half-wavelength is short against the
section depth (where the bending-only model leaves shear deformation out).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from beamtone.calc.errors import InputError
from beamtone.calc.fe.assembly import System
from beamtone.calc.fe.count import ModeCount
from beamtone.calc.fe.mesh import Mesh
from beamtone.calc.fe.result import FEResult, Mode, model_assumptions
from beamtone.calc.model import Member

__all__ = [
    "Solution",
    "wavenumber",
    "sizing_wavenumber",
    "check_mass",
    "check_system",
    "build_result",
    "scaled_result",
]


@dataclass(frozen=True)
class Solution:
    """The eigen solution of one mesh.

    Attributes
    ----------
    lam : ndarray
        Flexible eigenvalues [rad^2/s^2], ascending.
    vecs : ndarray
        Free-DOF eigenvectors (scaled form), M-orthonormal.
    system : System
    mesh : Mesh
    solver : str
        The name the eigen solver gave.
    coupling : ndarray, optional
        Per mode, the largest strain-energy form between its computed vector and one of the
        two highest computed modes before the Rayleigh-Ritz step, over sqrt(lambda_i
        lambda_j) [-]: what the eigen solver's round-off mixed into it (zero for an exact
        solve), standing for the mixing with the modes not computed.
    raw_lam : ndarray, optional
        The eigen solver's own eigenvalues of the assembled matrices for the same modes,
        ascending [rad^2/s^2] (what an inertia count of those matrices is compared with).
    next_lam : float
        The next flexible eigenvalue above the last of ``lam`` [rad^2/s^2] (inf where the
        mesh has none): the gap to the modes that were not computed.
    """

    lam: np.ndarray
    vecs: np.ndarray
    system: System
    mesh: Mesh
    solver: str
    coupling: np.ndarray | None = None
    next_lam: float = math.inf
    raw_lam: np.ndarray | None = None

    @property
    def omega(self) -> np.ndarray:
        """Circular frequencies [rad/s] (negative eigenvalues read as zero)."""
        return np.sqrt(np.maximum(self.lam, 0.0))


def wavenumber(member: Member, omega: float) -> list[float]:
    """Bending wavenumber [1/m] of each segment at circular frequency omega [rad/s].

    The wavenumber k of w = sin(k x) in EI k^4 + P k^2 = m omega^2, with the axial force P
    (tension positive): tension lengthens the waves, compression shortens them.
    """
    out = []
    for seg in member.segments:
        EI, m = seg.bending_stiffness, seg.mass_per_length
        p = -member.axial_force / EI
        q = omega**2 * m / EI
        root = math.sqrt(p * p + 4.0 * q)
        k2 = 0.5 * (p + root) if p >= 0.0 else 2.0 * q / (root - p) if root > p else 0.0
        out.append(math.sqrt(max(k2, 0.0)))
    return out


def sizing_wavenumber(member: Member, omega: float) -> list[float]:
    """Wavenumber [1/m] the mesh is sized by: tension left out (a finer mesh, never coarser)."""
    out = []
    for seg in member.segments:
        EI, m = seg.bending_stiffness, seg.mass_per_length
        p = max(0.0, -member.axial_force) / EI
        q = omega**2 * m / EI
        out.append(math.sqrt(0.5 * (p + math.sqrt(p * p + 4.0 * q))))
    return out


def check_mass(member: Member) -> None:
    """Refuse a segment without mass (its DOFs would have no inertia)."""
    for i, seg in enumerate(member.segments):
        if not seg.mass_per_length > 0.0:
            key = f"member.segment[{i}]" if len(member.segments) > 1 else "member"
            raise InputError(
                f"{key}.material.density",
                seg.material.density,
                "mass along the whole member: a massless length has degrees of freedom with "
                "no inertia, whose frequencies cannot be found (give its density or added mass)",
            )


def check_system(system: System) -> None:
    """Refuse a system with no free DOF, or with a DOF without mass."""
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


def build_result(
    member: Member,
    sol: Solution,
    rigid: int,
    modes: int,
    error: np.ndarray,
    roundoff_dominated: bool,
    warnings: list[str],
    mode_count: ModeCount | None = None,
) -> FEResult:
    """The result of a solve, with the soundness checks of the reported modes."""
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

    w_modal, theta_modal = system.full(vecs)
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
    if member.theory != "timoshenko":  # the Timoshenko solve includes what it warns of
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
        mode_count=mode_count,
        assumptions=model_assumptions(member),
    )


def scaled_result(
    result: FEResult, source: Member, member: Member, factor: float
) -> FEResult | None:
    """An Euler-Bernoulli solve of ``source`` as that of ``member``, whose stiffness matrix is
    ``factor`` times ``source``'s with the same mass matrix (or None where it cannot be).

    K' = c K with M unchanged has the eigenvalues c lambda and the same M-normalized vectors;
    the mesh the automatic solve chooses depends on omega^2 m / EI alone, so it is the same
    mesh, and every relative quantity (estimated errors, orthogonality, mass fractions) is
    unchanged.  The section-depth warning is made again for ``member``'s sections.

    Parameters
    ----------
    result : FEResult
        The Euler-Bernoulli solve of ``source``.
    source, member : Member
        Euler-Bernoulli members with the same supports, attachments and mass per length, no
        springs and no axial force, each segment's bending stiffness ``factor`` times.
    factor : float
        The ratio of the stiffnesses [-].

    Returns
    -------
    FEResult or None
        None where the solve's independent mode count disagreed (its warning names a
        frequency of its own): solve ``member`` instead.
    """
    if result.mode_count is not None and not result.mode_count.ok:
        return None
    root = math.sqrt(factor)
    modes = [
        replace(m, omega=m.omega * root, frequency_hz=m.omega * root / (2.0 * math.pi))
        for m in result.modes
    ]
    own = _shear_warnings(source, list(result.modes))
    warnings = [w for w in result.warnings if w not in own] + _shear_warnings(member, modes)
    count = result.mode_count
    if count is not None:
        count = replace(count, below_hz=count.below_hz * root)
    return replace(
        result,
        modes=tuple(modes),
        warnings=tuple(warnings),
        mode_count=count,
        assumptions=model_assumptions(member),
    )


def _shear_warnings(member: Member, modes: list[Mode]) -> list[str]:
    # Euler-Bernoulli theory loses accuracy when a half-wavelength is short against the depth:
    # below about ten depths shear and rotary inertia lower the frequency (common practice).
    # The half-wavelength includes the axial force, and is never taken longer than the member.
    L = member.length
    for mode in modes:
        k = wavenumber(member, mode.omega)
        for i, seg in enumerate(member.segments):
            half = min(math.pi / k[i], L) if k[i] > 0.0 else L
            depth = seg.section.effective_depth
            if half < 10.0 * depth:
                where = f" in segment {i}" if len(member.segments) > 1 else ""
                what = (
                    f"half-wavelength {half:.3g} m{where}"
                    if half < L
                    else f"the member's length {L:.3g} m (shorter than the half-wavelength{where})"
                )
                return [
                    f"mode {mode.number} and above: {what} is under ten section depths "
                    f"({10 * depth:.3g} m); shear deformation and rotary inertia make the true "
                    "frequency lower than this bending-only result"
                ]
    return []
