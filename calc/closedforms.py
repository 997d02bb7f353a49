"""Closed-form frequencies of uniform members in torsion and axial motion.

The cross-check of the second-order directions, as :mod:`calc.handbook` is for bending:

- a uniform rod with each end held or free: omega_n = n pi c / L (both held, or both free)
  or (2n - 1) pi c / (2L) (one held), c = sqrt(k/mu) the wave speed;
- a uniform rod held at one end carrying a rigid tip inertia at the other (a shaft with a
  disc, a rod with an end mass): omega = beta c / L with beta tan(beta) = mu, mu = inertia
  of the rod / tip inertia (W. T. Thomson, *Theory of Vibration with Applications*,
  section 9.2, from memory);
- a uniform member with warping stiffness on fork supports at both ends (twist held,
  warping free): omega_n^2 = (n pi/L)^2 [G J + E Cw (n pi/L)^2] / (rho Ip) (the standard
  torsion and stability texts, e.g. S. P. Timoshenko and J. M. Gere, *Theory of Elastic
  Stability*, chapter 5, from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from beamtone.calc.fe.rod import RodProblem

__all__ = ["ClosedForm", "rod_closed_form", "fork_warping_closed_form", "tip_inertia_roots"]

_ROD_SOURCE = "uniform rod, wave equation with held or free ends (common practice)"
_TIP_SOURCE = (
    "uniform rod with a tip inertia, beta tan(beta) = mu (W. T. Thomson, Theory of Vibration "
    "with Applications, section 9.2, from memory)"
)
_FORK_SOURCE = (
    "fork-supported member with warping stiffness, omega^2 = (n pi/L)^2 [GJ + ECw (n pi/L)^2]"
    "/(rho Ip) (S. P. Timoshenko and J. M. Gere, Theory of Elastic Stability, chapter 5, "
    "from memory)"
)


@dataclass(frozen=True)
class ClosedForm:
    """Closed-form frequencies of a member in one direction.

    Attributes
    ----------
    case : str
        Plain description, e.g. ``"uniform held-free"``.
    frequencies_hz : tuple of float
        Flexible natural frequencies [Hz], lowest first.
    source : str
        Where the formula is published.
    """

    case: str
    frequencies_hz: tuple[float, ...]
    source: str


def tip_inertia_roots(mu: float, count: int) -> tuple[float, ...]:
    """The lowest roots of beta tan(beta) = mu (mu > 0), each to 1e-14.

    Root n lies in ((n - 1) pi, (n - 1/2) pi), where beta sin(beta) - mu cos(beta) changes
    sign once; it is found by bisection on that bracket.
    """
    out = []
    for n in range(count):
        lo, hi = n * math.pi, (n + 0.5) * math.pi
        sign = -1.0 if n % 2 == 0 else 1.0  # of beta sin(beta) - mu cos(beta) at n pi
        for _ in range(200):
            mid = 0.5 * (lo + hi)
            if (mid * math.sin(mid) - mu * math.cos(mid)) * sign > 0.0:
                lo = mid
            else:
                hi = mid
            if hi - lo < 1e-14 * hi:
                break
        out.append(0.5 * (lo + hi))
    return tuple(out)


def rod_closed_form(problem: RodProblem, count: int, what: str) -> ClosedForm | None:
    """Closed-form frequencies where the problem is a uniform classical case, else None.

    Parameters
    ----------
    problem : RodProblem
    count : int
        Flexible modes wanted.
    what : str
        ``"torsion"`` or ``"axial"`` (names the case).

    Returns
    -------
    ClosedForm or None
    """
    k, mu = problem.stiffness[0], problem.inertia[0]
    uniform = all(math.isclose(s, k, rel_tol=1e-12) for s in problem.stiffness) and all(
        math.isclose(m, mu, rel_tol=1e-12) for m in problem.inertia
    )
    if not uniform or any(s > 0.0 for _, s in problem.springs):
        return None
    L = problem.length
    tol = 1e-9 * L
    held = sorted({0.0 if p < tol else L if p > L - tol else p for p in problem.held})
    if any(tol < p < L - tol for p in held):
        return None
    c = math.sqrt(k / mu)
    inertias = [(p, j) for p, j in problem.point_inertias if j > 0.0]
    names = {(True, True): "held-held", (False, False): "free-free"}
    if not inertias:
        left, right = 0.0 in held, L in held
        quarter = left != right
        case = names.get((left, right), "held-free")
        omegas = [
            (2 * n - 1 if quarter else 2 * n) * math.pi * c / (2.0 * L) for n in range(1, count + 1)
        ]
        return ClosedForm(f"uniform {what}, {case}", _hz(omegas), _ROD_SOURCE)
    if len(held) != 1:
        return None
    tip = L if held[0] == 0.0 else 0.0
    if any(abs(p - tip) > tol for p, _ in inertias):
        return None
    ratio = mu * L / sum(j for _, j in inertias)
    omegas = [b * c / L for b in tip_inertia_roots(ratio, count)]
    return ClosedForm(f"uniform {what}, held with a tip inertia", _hz(omegas), _TIP_SOURCE)


def fork_warping_closed_form(
    length: float, GJ: float, ECw: float, rho_Ip: float, count: int
) -> ClosedForm:
    """Torsion of a uniform member with warping stiffness on fork supports at both ends.

    Parameters
    ----------
    length : float
        L [m].
    GJ : float
        Saint-Venant torsional stiffness [N*m^2].
    ECw : float
        Warping stiffness [N*m^4].
    rho_Ip : float
        Polar mass moment of inertia per length [kg*m].
    count : int
        Modes wanted.
    """
    omegas = []
    for n in range(1, count + 1):
        kn = n * math.pi / length
        omegas.append(math.sqrt(kn**2 * (GJ + ECw * kn**2) / rho_Ip))
    return ClosedForm("uniform torsion with warping, fork-fork", _hz(omegas), _FORK_SOURCE)


def _hz(omegas: list[float]) -> tuple[float, ...]:
    return tuple(w / (2.0 * math.pi) for w in omegas)
