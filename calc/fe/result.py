"""What a finite-element solve returns: the modes and the soundness checks beside them."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from beamtone.calc.fe.count import ModeCount

__all__ = ["ASSUMPTIONS", "ESTIMATE_MEANING", "Mode", "FEResult", "model_assumptions"]

ESTIMATE_MEANING = (
    "est. error is the numerical error of the solution of the stated model (discretization "
    "and round-off); it does not include the model assumptions listed"
)
"""What a mode's estimated error is, in one line for every output."""

ASSUMPTIONS: tuple[str, ...] = (
    "bending in one plane (the depth plane of the section), uncoupled from the other plane, "
    "torsion and axial motion",
    "Euler-Bernoulli beam: no shear deformation and no rotary inertia of the section",
    "rigid supports exactly as given: no support compliance unless given as springs",
    "nominal values: dimensions, material properties, masses and stiffnesses as given, "
    "without tolerances",
    "linear, undamped, small vibration about the straight member under a constant axial force",
    "point masses rigid and acting at a point; springs grounded and massless",
)
"""What the finite-element result leaves out (later capabilities remove lines)."""

_SHEAR_LINE = 1


def model_assumptions(member: object) -> tuple[str, ...]:
    """The assumptions that hold for a solve of ``member`` (its beam theory decides one line)."""
    if getattr(member, "theory", None) == "timoshenko":
        return ASSUMPTIONS[:_SHEAR_LINE] + ASSUMPTIONS[_SHEAR_LINE + 1 :]
    return ASSUMPTIONS


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
        Which eigen solver ran, as the solver itself reported it.
    roundoff_dominated : bool
        True where round-off, not discretization, limits the accuracy.
    warnings : tuple of str
        Things the user should know about this result.
    mode_count : ModeCount or None
        The independent count of the modes below the highest reported one (inertia of
        K - omega^2 M on the reported mesh) against the modes found.
    assumptions : tuple of str
        What the model leaves out; the estimated errors do not include these.
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
    mode_count: ModeCount | None = None
    assumptions: tuple[str, ...] = ASSUMPTIONS

    @property
    def estimate_meaning(self) -> str:
        """What the per-mode estimated error is (and is not), in one line."""
        return ESTIMATE_MEANING

    @property
    def frequencies_hz(self) -> np.ndarray:
        """Natural frequencies of the listed modes [Hz]."""
        return np.array([m.frequency_hz for m in self.modes])
