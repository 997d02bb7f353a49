"""An independent count of the modes: the inertia of K - lambda M (Sylvester's law).

The number of eigenvalues of K x = lambda M x below a value sigma equals the number of
negative pivots of an LDL^T factorization of K - sigma M (Sylvester's law of inertia; the
Sturm sequence property, common practice, e.g. K. J. Bathe, Finite Element Procedures, 1996,
section 11.4.3).  It does not use the eigen solver, so a mode the solver skipped shows up as
a count larger than the modes it returned.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.linalg
import scipy.sparse
import scipy.sparse.linalg

__all__ = ["ModeCount", "count_below", "check_count"]

_BELOW = 1e-6  # the count is taken this fraction below the highest reported eigenvalue
_CLEAR = 1e-9  # and kept this far from every found eigenvalue


@dataclass(frozen=True)
class ModeCount:
    """The modes below a frequency, counted from the matrices and as found.

    Attributes
    ----------
    below_hz : float
        The frequency the count is taken at [Hz], just below the highest reported mode.
    counted : int
        Eigenvalues below it by the inertia of K - omega^2 M (rigid-body modes included).
    found : int
        Modes the eigen solver returned below it (rigid-body modes included).
    mode : int
        The highest reported flexible mode, on the reported mesh, which the count is just
        below (with a Richardson-extrapolated frequency the mode's value may be lower).
    """

    below_hz: float
    counted: int
    found: int
    mode: int = 0

    @property
    def ok(self) -> bool:
        """True where the count agrees: no mode was skipped below ``below_hz``."""
        return self.counted == self.found

    def describe(self) -> str:
        """One line for the soundness checks."""
        verdict = (
            "none skipped"
            if self.ok
            else "MODES MISSING"
            if self.counted > self.found
            else ("MORE FOUND THAN COUNTED")
        )
        return (
            f"mode count just below mode {self.mode} of the final mesh ({self.below_hz:.6g} Hz) "
            f"by the inertia of K - omega^2 M (LDL^T): {self.counted}, solver found "
            f"{self.found} (rigid-body modes included): {verdict}"
        )


def count_below(K: scipy.sparse.spmatrix, M: scipy.sparse.spmatrix, sigma: float) -> int:
    """Number of eigenvalues of K x = lambda M x below ``sigma`` [rad^2/s^2].

    LDL^T of the banded K - sigma M in its own order (no pivoting: the count is then the
    number of negative pivots); should a pivot vanish, a dense Bunch-Kaufman LDL^T.
    """
    A = (K - sigma * M).tocsc()
    n = A.shape[0]
    try:
        lu = scipy.sparse.linalg.splu(
            A, permc_spec="NATURAL", diag_pivot_thresh=0.0, options={"SymmetricMode": True}
        )
        order = np.arange(n)
        if np.array_equal(lu.perm_r, order) and np.array_equal(lu.perm_c, order):
            pivots = lu.U.diagonal()
            if np.all(np.isfinite(pivots)) and np.all(pivots != 0.0):
                return int(np.count_nonzero(pivots < 0.0))
    except RuntimeError:  # an exactly singular pivot
        pass
    _, D, _ = scipy.linalg.ldl(A.toarray())
    return int(np.count_nonzero(np.linalg.eigvalsh(D) < 0.0))


def check_count(
    K: scipy.sparse.spmatrix,
    M: scipy.sparse.spmatrix,
    rigid: int,
    lam: np.ndarray,
    below: float = _BELOW,
) -> ModeCount:
    """Count the modes below the highest of ``lam`` and compare with those found.

    Parameters
    ----------
    K, M : sparse matrices
        The reported mesh's matrices.
    rigid : int
        Rigid-body modes (eigenvalue zero).
    lam : ndarray
        The flexible eigenvalues the eigen solver found for these matrices, ascending
        [rad^2/s^2].
    below : float
        How far below the highest of ``lam`` the count is taken, relative [-]: at least the
        matrices' own round-off at those eigenvalues, so that the factorization and the eigen
        solver, each exact for a matrix that close, agree.

    Returns
    -------
    ModeCount
    """
    sigma = float(lam[-1]) * (1.0 - max(below, _BELOW))
    for _ in range(len(lam)):
        close = np.abs(lam - sigma) <= _CLEAR * float(lam[-1])
        if not np.any(close):
            break
        below = lam[lam < sigma - _CLEAR * float(lam[-1])]
        floor = float(below[-1]) if below.size else 0.0
        sigma = 0.5 * (floor + float(np.min(lam[close])))
    found = rigid + int(np.count_nonzero(lam < sigma))
    counted = count_below(K, M, sigma)
    return ModeCount(math.sqrt(max(sigma, 0.0)) / (2.0 * math.pi), counted, found, len(lam))
