"""Element matrices of the two-node Timoshenko beam element with interdependent interpolation.

Shear deformation and the rotary inertia of the section, on the element's degrees of freedom
(w1, psi1, w2, psi2), psi the rotation of the section (the slope of the Euler-Bernoulli
element).  The deflection is a cubic and the rotation a quadratic in x, tied together so that
the element solves the static Timoshenko equations exactly under end loads (no shear locking
however short or slender the element): A. Friedman and J. B. Kosmatka, An improved two-node
Timoshenko beam finite element, Computers & Structures 47 (1993) 473-481; J. N. Reddy, On
locking-free shear deformable beam finite elements, Comput. Methods Appl. Mech. Engrg. 149
(1997) 113-132.  With phi = 12 EI / (kappa G A h^2):

- stiffness EI / ((1 + phi) h^3) * [[12, 6h, -12, 6h], [6h, (4 + phi) h^2, -6h, (2 - phi) h^2],
  ...]: bending plus the constant shear strain, exact;
- consistent mass: rho A times the integral of the deflection shape functions squared, plus
  rho I times that of the rotation shape functions (rotary inertia), each entry a quadratic in
  phi over (1 + phi)^2;
- geometric stiffness of a unit tension: the integral of w'^2 (Engesser's form of the axial
  force's work, so the buckling load of a pinned member is P_E / (1 + P_E / kappa G A)).

The coefficients below were integrated exactly from the shape functions (sympy; the tests
integrate them again numerically).  At phi = 0 and no rotary inertia the matrices are the
Hermite cubic ones of :mod:`calc.fe.elements`.  Inside the solver the rotations are scaled by a
reference length s as there: each matrix is a polynomial in r = h / s and in phi.
"""

from __future__ import annotations

import numpy as np

from beamtone.calc.model import Member

__all__ = [
    "largest_element_eigenvalues",
    "element_shear",
    "segment_properties",
    "element_quotient",
    "geometric_quotient",
    "element_form",
    "geometric_form",
    "scaled_element_matrices",
    "element_matrices",
]


def _c(rows: list[list[list[list[float]]]]) -> np.ndarray:
    """Coefficients [r power][phi power] of a 4x4 matrix, shape (3, 3, 4, 4)."""
    return np.array(rows, dtype=float)


_Z = [[0.0] * 4 for _ in range(4)]

# Stiffness times (1 + phi) h^3 / EI: r^0, r^1, r^2 parts; phi^0 and phi^1.
_STIFFNESS = _c(
    [
        [[[12, 0, -12, 0], [0, 0, 0, 0], [-12, 0, 12, 0], [0, 0, 0, 0]], _Z, _Z],
        [[[0, 6, 0, 6], [6, 0, -6, 0], [0, -6, 0, -6], [6, 0, -6, 0]], _Z, _Z],
        [
            [[0, 0, 0, 0], [0, 4, 0, 2], [0, 0, 0, 0], [0, 2, 0, 4]],
            [[0, 0, 0, 0], [0, 1, 0, -1], [0, 0, 0, 0], [0, -1, 0, 1]],
            _Z,
        ],
    ]
)

# Translational mass times 840 (1 + phi)^2 / (rho A h).
_MASS = _c(
    [
        [
            [[312, 0, 108, 0], [0, 0, 0, 0], [108, 0, 312, 0], [0, 0, 0, 0]],
            [[588, 0, 252, 0], [0, 0, 0, 0], [252, 0, 588, 0], [0, 0, 0, 0]],
            [[280, 0, 140, 0], [0, 0, 0, 0], [140, 0, 280, 0], [0, 0, 0, 0]],
        ],
        [
            [[0, 44, 0, -26], [44, 0, 26, 0], [0, 26, 0, -44], [-26, 0, -44, 0]],
            [[0, 77, 0, -63], [77, 0, 63, 0], [0, 63, 0, -77], [-63, 0, -77, 0]],
            [[0, 35, 0, -35], [35, 0, 35, 0], [0, 35, 0, -35], [-35, 0, -35, 0]],
        ],
        [
            [[0, 0, 0, 0], [0, 8, 0, -6], [0, 0, 0, 0], [0, -6, 0, 8]],
            [[0, 0, 0, 0], [0, 14, 0, -14], [0, 0, 0, 0], [0, -14, 0, 14]],
            [[0, 0, 0, 0], [0, 7, 0, -7], [0, 0, 0, 0], [0, -7, 0, 7]],
        ],
    ]
)

# Rotary mass times 30 (1 + phi)^2 h / (rho I).
_ROTARY = _c(
    [
        [[[36, 0, -36, 0], [0, 0, 0, 0], [-36, 0, 36, 0], [0, 0, 0, 0]], _Z, _Z],
        [
            [[0, 3, 0, 3], [3, 0, -3, 0], [0, -3, 0, -3], [3, 0, -3, 0]],
            [[0, -15, 0, -15], [-15, 0, 15, 0], [0, 15, 0, 15], [-15, 0, 15, 0]],
            _Z,
        ],
        [
            [[0, 0, 0, 0], [0, 4, 0, -1], [0, 0, 0, 0], [0, -1, 0, 4]],
            [[0, 0, 0, 0], [0, 5, 0, -5], [0, 0, 0, 0], [0, -5, 0, 5]],
            [[0, 0, 0, 0], [0, 10, 0, 5], [0, 0, 0, 0], [0, 5, 0, 10]],
        ],
    ]
)

# Geometric stiffness of a unit tension times 60 (1 + phi)^2 h.
_GEOMETRIC = _c(
    [
        [
            [[72, 0, -72, 0], [0, 0, 0, 0], [-72, 0, 72, 0], [0, 0, 0, 0]],
            [[120, 0, -120, 0], [0, 0, 0, 0], [-120, 0, 120, 0], [0, 0, 0, 0]],
            [[60, 0, -60, 0], [0, 0, 0, 0], [-60, 0, 60, 0], [0, 0, 0, 0]],
        ],
        [[[0, 6, 0, 6], [6, 0, -6, 0], [0, -6, 0, -6], [6, 0, -6, 0]], _Z, _Z],
        [
            [[0, 0, 0, 0], [0, 8, 0, -2], [0, 0, 0, 0], [0, -2, 0, 8]],
            [[0, 0, 0, 0], [0, 10, 0, -10], [0, 0, 0, 0], [0, -10, 0, 10]],
            [[0, 0, 0, 0], [0, 5, 0, -5], [0, 0, 0, 0], [0, -5, 0, 5]],
        ],
    ]
)


def _evaluate(coefficients: np.ndarray, r: np.ndarray, phi: np.ndarray) -> np.ndarray:
    rp = np.stack([np.ones_like(r), r, r * r], axis=1)
    pp = np.stack([np.ones_like(phi), phi, phi * phi], axis=1)
    return np.einsum("ep,eq,pqij->eij", rp, pp, coefficients)


def scaled_element_matrices(
    h: np.ndarray,
    EI: np.ndarray,
    m: np.ndarray,
    s: float,
    geometric: bool,
    phi: np.ndarray,
    rotary: np.ndarray,
) -> tuple[np.ndarray, np.ndarray | None, np.ndarray]:
    """Element stiffness, geometric stiffness of a unit tension (if asked), and mass.

    Parameters
    ----------
    h : ndarray, shape (elements,)
        Element lengths [m].
    EI : ndarray
        Bending stiffness of each element [N*m^2].
    m : ndarray
        Mass per length of each element [kg/m] (translational).
    s : float
        Rotation scale [m]: the DOFs are (w, s*psi, w, s*psi).
    geometric : bool
        Also return the geometric stiffness of a unit tension.
    phi : ndarray
        Shear parameter 12 EI / (kappa G A h^2) of each element [-] (0: no shear flexibility).
    rotary : ndarray
        Rotary inertia per length rho I of each element [kg*m].

    Returns
    -------
    k, g, mm : ndarray, shape (elements, 4, 4)
        Stiffness [N/m], geometric stiffness per unit tension [1/m] (None unless asked),
        consistent mass [kg], all in the scaled DOFs.
    """
    r = h / s
    d = 1.0 + phi
    k = _evaluate(_STIFFNESS, r, phi) * (EI / (d * h**3))[:, None, None]
    g = None
    if geometric:
        g = _evaluate(_GEOMETRIC, r, phi) * (1.0 / (60.0 * d * d * h))[:, None, None]
    mm = _evaluate(_MASS, r, phi) * (m * h / (840.0 * d * d))[:, None, None]
    if np.any(rotary):
        mm = mm + _evaluate(_ROTARY, r, phi) * (rotary / (30.0 * d * d * h))[:, None, None]
    return k, g, mm


def element_quotient(a: np.ndarray, b: np.ndarray, phi: np.ndarray) -> np.ndarray:
    """Elastic energy (times two) per EI / h of an element, from its end rotations [-].

    ``a`` and ``b`` are the end rotations less the chord slope, ``phi`` the shear parameter:
    3 (a + b)^2 / (1 + phi) + (a - b)^2, bending and shear together (the stiffness matrix's
    quadratic form, written in differences so that no large terms cancel).
    """
    s = a + b
    t = a - b
    return 3.0 * s * s / (1.0 + phi) + t * t


def geometric_quotient(d: np.ndarray, a: np.ndarray, b: np.ndarray, phi: np.ndarray) -> np.ndarray:
    """Integral of w'^2 over an element, per its length [-], from the chord slope ``d`` and the
    end rotations less the chord slope: d^2 + (a + b)^2 / (20 (1 + phi)^2) + (a - b)^2 / 12."""
    s = a + b
    t = a - b
    return d * d + s * s / (20.0 * (1.0 + phi) ** 2) + t * t / 12.0


def element_form(
    au: np.ndarray, bu: np.ndarray, av: np.ndarray, bv: np.ndarray, phi: np.ndarray
) -> np.ndarray:
    """The bilinear form of :func:`element_quotient` between two motions [-]."""
    return 3.0 * (au + bu) * (av + bv) / (1.0 + phi) + (au - bu) * (av - bv)


def geometric_form(
    du: np.ndarray,
    au: np.ndarray,
    bu: np.ndarray,
    dv: np.ndarray,
    av: np.ndarray,
    bv: np.ndarray,
    phi: np.ndarray,
) -> np.ndarray:
    """The bilinear form of :func:`geometric_quotient` between two motions [-]."""
    return (
        du * dv + (au + bu) * (av + bv) / (20.0 * (1.0 + phi) ** 2) + (au - bu) * (av - bv) / 12.0
    )


def element_matrices(
    h: float, EI: float, m: float, kGA: float, rho_I: float = 0.0, P: float = 0.0
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The element's stiffness, geometric stiffness and consistent mass, on (w1, psi1, w2, psi2).

    Parameters
    ----------
    h : float
        Element length [m].
    EI : float
        Bending stiffness [N*m^2].
    m : float
        Mass per length [kg/m].
    kGA : float
        Shear stiffness kappa G A [N] (``math.inf``: no shear flexibility).
    rho_I : float
        Rotary inertia per length [kg*m].
    P : float
        Axial force [N], tension positive.

    Returns
    -------
    K, K_G, M : ndarray, shape (4, 4)
        In the unscaled DOFs (deflections [m], rotations [rad]).

    Examples
    --------
    >>> K, KG, M = element_matrices(2.0, 8.0, 420.0, 12.0)   # phi = 12 * 8 / (12 * 4) = 2
    >>> (K[0] * 3.0).tolist()
    [12.0, 12.0, -12.0, 12.0]
    """
    phi = 0.0 if kGA == np.inf else 12.0 * EI / (kGA * h * h)
    k, g, mm = scaled_element_matrices(
        np.array([float(h)]),
        np.array([float(EI)]),
        np.array([float(m)]),
        1.0,
        True,
        np.array([phi]),
        np.array([float(rho_I)]),
    )
    assert g is not None
    return k[0], P * g[0], mm[0]


def segment_properties(member: Member) -> tuple[np.ndarray, np.ndarray] | None:
    """Shear stiffness kappa G A [N] (inf: none known) and rotary inertia rho I [kg*m] of each
    segment, or None for a member solved by the Euler-Bernoulli theory."""
    if member.theory != "timoshenko":
        return None
    from beamtone.calc.shear import segment_shear

    found = [segment_shear(s.material, s.section, s.section.plane) for s in member.segments]
    return (
        np.array([f.shear_stiffness for f in found]),
        np.array([f.rotary_inertia for f in found]),
    )


def element_shear(
    member: Member, segment: np.ndarray, h: np.ndarray, EI: np.ndarray
) -> tuple[np.ndarray, np.ndarray] | None:
    """Shear parameter phi = 12 EI / (kappa G A h^2) [-] and rotary inertia per length [kg*m]
    of each element, or None for a member solved by the Euler-Bernoulli theory.

    Parameters
    ----------
    member : Member
    segment : ndarray of int
        Segment index of each element.
    h : ndarray
        Element lengths [m].
    EI : ndarray
        Bending stiffness of each element [N*m^2].
    """
    props = segment_properties(member)
    if props is None:
        return None
    kGA, rotary = props
    phi = 12.0 * EI / (kGA[segment] * h * h)  # zero where kGA is inf
    return phi, rotary[segment]


def largest_element_eigenvalues(
    k: np.ndarray, g: np.ndarray | None, mm: np.ndarray, P: float
) -> np.ndarray:
    """An upper bound on the largest eigenvalue of each element [rad^2/s^2].

    The Euler-Bernoulli element's closed bound (``ELEMENT_LAMBDA_MAX``) does not hold here:
    shear flexibility and rotary inertia give the element a shear mode of its own.  So each
    element's largest eigenvalue of (k, m) is computed (4 x 4, all elements at once), plus,
    for a tension, that of (P g, m) (Weyl's inequality; a compression only lowers it).

    Parameters
    ----------
    k, g, mm : ndarray, shape (elements, 4, 4)
        Stiffness, geometric stiffness of a unit tension (or None), mass (scaled DOFs).
    P : float
        Axial force [N], tension positive.
    """
    chol = np.linalg.cholesky(mm)

    def top(matrix: np.ndarray) -> np.ndarray:
        left = np.linalg.solve(chol, matrix)
        both = np.linalg.solve(chol, np.swapaxes(left, 1, 2))
        return np.linalg.eigvalsh(0.5 * (both + np.swapaxes(both, 1, 2)))[:, -1]

    bound = top(k)
    if g is not None and P > 0.0:
        bound = bound + P * np.maximum(top(g), 0.0)
    return bound * (1.0 + 1e-12)
