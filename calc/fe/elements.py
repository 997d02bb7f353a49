"""Element matrices of the Hermite cubic Euler-Bernoulli beam element.

Stiffness, consistent mass and the geometric stiffness of a constant axial force, on the
element's degrees of freedom (w1, theta1, w2, theta2): the standard matrices of matrix
structural analysis (common practice; e.g. J. S. Przemieniecki, Theory of Matrix Structural
Analysis, 1968, chapters 5 and 11).  Inside the solver the slopes are scaled by a reference
length s so that all entries are of one size; each matrix is then a polynomial in r = h / s.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "ELEMENT_LAMBDA_MAX",
    "GEOMETRIC_LAMBDA_MAX",
    "ElementMatrices",
    "element_matrices",
    "scaled_element_matrices",
]

ELEMENT_LAMBDA_MAX = 8400.0
"""Largest eigenvalue of one element (stiffness over consistent mass), times m h^4 / EI."""
GEOMETRIC_LAMBDA_MAX = 170.2
"""Largest |eigenvalue| of (geometric stiffness, consistent mass) per element, times m h^2/|P|."""


def _polynomial_in_r(
    c0: list[list[float]], c1: list[list[float]], c2: list[list[float]]
) -> np.ndarray:
    return np.array([c0, c1, c2], dtype=float)


# Element matrices in scaled DOFs as c0 + c1 r + c2 r^2, r = h / s.
_STIFFNESS = _polynomial_in_r(
    [[12, 0, -12, 0], [0, 0, 0, 0], [-12, 0, 12, 0], [0, 0, 0, 0]],
    [[0, 6, 0, 6], [6, 0, -6, 0], [0, -6, 0, -6], [6, 0, -6, 0]],
    [[0, 0, 0, 0], [0, 4, 0, 2], [0, 0, 0, 0], [0, 2, 0, 4]],
)
_GEOMETRIC = _polynomial_in_r(
    [[36, 0, -36, 0], [0, 0, 0, 0], [-36, 0, 36, 0], [0, 0, 0, 0]],
    [[0, 3, 0, 3], [3, 0, -3, 0], [0, -3, 0, -3], [3, 0, -3, 0]],
    [[0, 0, 0, 0], [0, 4, 0, -1], [0, 0, 0, 0], [0, -1, 0, 4]],
)
_MASS = _polynomial_in_r(
    [[156, 0, 54, 0], [0, 0, 0, 0], [54, 0, 156, 0], [0, 0, 0, 0]],
    [[0, 22, 0, -13], [22, 0, 13, 0], [0, 13, 0, -22], [-13, 0, -22, 0]],
    [[0, 0, 0, 0], [0, 4, 0, -3], [0, 0, 0, 0], [0, -3, 0, 4]],
)

ElementMatrices = tuple[np.ndarray, np.ndarray | None, np.ndarray]
"""(stiffness, geometric stiffness or None, mass), each of shape (elements, 4, 4)."""


def scaled_element_matrices(
    h: np.ndarray, EI: np.ndarray, m: np.ndarray, s: float, geometric: bool
) -> ElementMatrices:
    """Element stiffness, geometric stiffness for unit tension (if asked), and mass.

    Parameters
    ----------
    h : ndarray, shape (elements,)
        Element lengths [m].
    EI : ndarray
        Bending stiffness of each element [N*m^2].
    m : ndarray
        Mass per length of each element [kg/m].
    s : float
        Slope scale [m]: the DOFs are (w, s*theta, w, s*theta).
    geometric : bool
        Also return the geometric stiffness of a unit tension.

    Returns
    -------
    k, g, mm : ndarray, shape (elements, 4, 4)
        Stiffness [N/m], geometric stiffness per unit tension [1/m] (None unless asked),
        consistent mass [kg], all in the scaled DOFs.
    """
    r = h / s  # element length in units of the slope scale
    powers = np.stack([np.ones_like(r), r, r * r], axis=1)  # (elements, 3)
    k = np.einsum("ep,pij->eij", powers * (EI / h**3)[:, None], _STIFFNESS)
    g = None
    if geometric:
        g = np.einsum("ep,pij->eij", powers * (1.0 / (30.0 * h))[:, None], _GEOMETRIC)
    mm = np.einsum("ep,pij->eij", powers * (m * h / 420.0)[:, None], _MASS)
    return k, g, mm


def element_matrices(
    h: float, EI: float, m: float, P: float = 0.0
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The element's stiffness, geometric stiffness and consistent mass, on (w1, t1, w2, t2).

    Parameters
    ----------
    h : float
        Element length [m].
    EI : float
        Bending stiffness [N*m^2].
    m : float
        Mass per length [kg/m].
    P : float
        Axial force [N], tension positive.

    Returns
    -------
    K, K_G, M : ndarray, shape (4, 4)
        Stiffness, geometric stiffness of the force P, and consistent mass, in the
        unscaled DOFs (deflections [m], slopes [rad]); K + K_G is the element's total stiffness.

    Examples
    --------
    >>> K, KG, M = element_matrices(2.0, 8.0, 420.0)
    >>> K[0].tolist(), M[0].tolist()
    ([12.0, 12.0, -12.0, 12.0], [312.0, 88.0, 108.0, -52.0])
    """
    k, g, mm = scaled_element_matrices(
        np.array([float(h)]), np.array([float(EI)]), np.array([float(m)]), 1.0, True
    )
    assert g is not None
    return k[0], P * g[0], mm[0]
