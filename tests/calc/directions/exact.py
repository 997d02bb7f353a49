"""Closed-form natural frequencies that the direction solvers are checked against.

Each function states the problem and where its exact answer is published.  Everything
is in SI (m, kg, s, rad); frequencies are circular [rad/s] unless a name says Hz.
"""

from __future__ import annotations

import math

import mpmath
from scipy.optimize import brentq

__all__ = [
    "rod_omegas",
    "tip_inertia_betas",
    "fork_warping_omega",
    "rectangle_j_series",
]


def rod_omegas(left: str, right: str, length: float, wave_speed: float, count: int) -> list:
    """Flexible natural frequencies of a uniform rod in torsion or axial motion [rad/s].

    The one-dimensional wave equation k u'' = mu u_tt with each end ``"held"`` (u = 0)
    or ``"free"`` (k u' = 0), wave speed c = sqrt(k/mu) [m/s] (c = sqrt(G J/(rho Ip))
    in torsion, sqrt(E/rho) axially).  Held-held and free-free: omega_n = n pi c/L;
    held-free: (2n - 1) pi c/(2L) (e.g. W. T. Thomson, *Theory of Vibration with
    Applications*, section 9.2, from memory; common practice).  The rigid-body mode
    of a free-free rod is not listed.
    """
    quarter = (left == "held") != (right == "held")
    return [
        (2 * n - 1 if quarter else 2 * n) * math.pi * wave_speed / (2.0 * length)
        for n in range(1, count + 1)
    ]


def tip_inertia_betas(mu: float, count: int) -> list[float]:
    """Roots of beta * tan(beta) = mu, lowest first.

    A uniform rod held at one end with a rigid tip inertia at the other (a shaft
    with a disc in torsion, a rod with an end mass axially): omega = beta * c / L,
    mu = (inertia of the rod) / (tip inertia) (Thomson, *Theory of Vibration with
    Applications*, section 9.2 and its table of roots, from memory).  Root n lies
    in ((n - 1) pi, (n - 1/2) pi).
    """
    roots = []
    for n in range(count):
        lo, hi = n * math.pi + 1e-15, (n + 0.5) * math.pi - 1e-12
        roots.append(brentq(lambda b: b * math.sin(b) - mu * math.cos(b), lo, hi, xtol=1e-15))
    return roots


def fork_warping_omega(
    n: int, length: float, G: float, J: float, E: float, Cw: float, rho: float, Ip: float
) -> float:
    """Torsion of a member on fork supports with warping stiffness [rad/s].

    E Cw phi'''' - G J phi'' + rho Ip phi_tt = 0 with phi = phi'' = 0 at both ends:
    omega_n^2 = (n pi/L)^2 [G J + E Cw (n pi/L)^2] / (rho Ip) (e.g. S. P. Timoshenko
    and J. M. Gere, *Theory of Elastic Stability*, chapter 5, and the standard texts on
    thin-walled members; from memory).
    """
    k = n * math.pi / length
    return math.sqrt(k**2 * (G * J + E * Cw * k**2) / (rho * Ip))


def rectangle_j_series(a: float, b: float, digits: int = 40) -> float:
    """Saint-Venant J of an a x b rectangle from the exact series, in mpmath [m^4].

    J = a b^3/3 (1 - 192 b/(pi^5 a) sum_{n odd} tanh(n pi a/(2b))/n^5), a >= b
    (S. P. Timoshenko and J. N. Goodier, *Theory of Elasticity*, 3rd ed., 1970,
    section 109), summed term by term at ``digits`` significant digits until the
    terms fall below the working precision (independent of beamtone's own summation).
    """
    a, b = max(a, b), min(a, b)
    with mpmath.workdps(digits):
        A, B = mpmath.mpf(a), mpmath.mpf(b)
        total = mpmath.nsum(
            lambda k: mpmath.tanh((2 * k + 1) * mpmath.pi * A / (2 * B)) / (2 * k + 1) ** 5,
            [0, mpmath.inf],
        )
        return float(A * B**3 / 3 * (1 - 192 * B / (mpmath.pi**5 * A) * total))
