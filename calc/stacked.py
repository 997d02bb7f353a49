"""Stacked eigen solves: the lowest eigenvalues of many small banded pencils of one layout.

A study solves thousands of members that share a mesh layout; their stiffness and mass
matrices differ in value, not in pattern.  Every element here couples four consecutive
degrees of freedom (two nodes of a Hermite or Timoshenko beam element, the four nodes of a
cubic rod element), so every matrix is banded with half-bandwidth ``BAND`` = 3 and is stored
as its lower band, shape (samples, dofs, BAND + 1): ``band[b, i, j]`` is ``A_b[i, i - j]``.

The lowest eigenvalues of K x = lambda M x come from subspace iteration (K. J. Bathe,
*Finite Element Procedures*, 1996, section 11.6): starting from a basis of ``q`` vectors
(the nominal member's modes), each step solves (K - sigma M) X = M Q with the banded
Cholesky factor and takes the Rayleigh-Ritz values of the pencil in span X.  A sample
stops when the change of each wanted Ritz value over one step is below ``tolerance``
(relative); one that does not settle within ``max_iterations``, or whose K - sigma M is not
positive definite, is returned as not converged (the caller solves it in full).  Each
sample's numbers depend on that sample alone (a settled sample leaves the stack), so the
same sample gives the same bits in any batch.

Held degrees of freedom keep their place in the band: their rows and columns are zero,
with 1 on the stiffness diagonal and 0 on the mass diagonal, so they carry an infinite
eigenvalue that subspace iteration never meets.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "BAND", "assemble", "hold", "to_dense", "band_matmul", "band_cholesky", "band_solve", "lowest"
]  # fmt: skip

BAND = 3
"""Half-bandwidth of every element's coupling (four consecutive degrees of freedom)."""


def assemble(elements: np.ndarray, first: np.ndarray, dofs: int) -> np.ndarray:
    """Lower band of the sum of 4 x 4 element matrices, shape (samples, dofs, BAND + 1).

    Parameters
    ----------
    elements : ndarray, shape (samples, elements, 4, 4)
        Symmetric element matrices.
    first : ndarray of int, shape (elements,)
        Each element's first degree of freedom (it couples first .. first + 3).
    dofs : int
        Degrees of freedom of the assembled matrix.
    """
    out = np.zeros((elements.shape[0], dofs, BAND + 1))
    for a in range(4):
        for c in range(a + 1):
            # for fixed (a, c) the rows first + a are distinct: no two elements collide
            out[:, first + a, a - c] += elements[:, :, a, c]
    return out


def hold(band: np.ndarray, held: np.ndarray, diagonal: float) -> None:
    """Zero the rows and columns of the ``held`` degrees of freedom, ``diagonal`` on them."""
    n = band.shape[1]
    for j in range(BAND + 1):
        band[:, held, j] = 0.0
        rows = held + j
        band[:, rows[rows < n], j] = 0.0
    band[:, held, 0] = diagonal


def to_dense(band: np.ndarray) -> np.ndarray:
    """The full symmetric matrix of one lower band, shape (dofs, BAND + 1) -> (dofs, dofs)."""
    n = band.shape[0]
    out = np.zeros((n, n))
    for j in range(BAND + 1):
        i = np.arange(j, n)
        out[i, i - j] = band[j:, j]
        out[i - j, i] = band[j:, j]
    return out


def band_matmul(band: np.ndarray, x: np.ndarray) -> np.ndarray:
    """A x for symmetric banded A of shape (dofs, BAND + 1, samples) and x of shape
    (dofs, samples, columns): the degree-of-freedom-major layout of the solver's loops."""
    n = band.shape[0]
    out = band[:, 0, :, None] * x
    term = np.empty_like(out)
    for j in range(1, BAND + 1):
        np.multiply(band[j:, j, :, None], x[: n - j], out=term[j:])
        out[j:] += term[j:]
        np.multiply(band[j:, j, :, None], x[j:], out=term[: n - j])
        out[: n - j] += term[: n - j]
    return out


def band_cholesky(band: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Banded Cholesky factor L (A = L L^T, in the same storage) of every sample's A, both of
    shape (dofs, BAND + 1, samples).

    Returns
    -------
    factor : ndarray, shape (dofs, BAND + 1, samples)
    ok : ndarray of bool, shape (samples,)
        False where the matrix is not positive definite (its factor is meaningless).
    """
    n, _, B = band.shape
    L = np.zeros_like(band)
    ok = np.ones(B, dtype=bool)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # failed samples
        _factor_rows(band, L, ok)
    return L, ok


def _factor_rows(band: np.ndarray, L: np.ndarray, ok: np.ndarray) -> None:
    n = band.shape[0]
    for i in range(n):
        for j in range(max(0, i - BAND), i + 1):
            # L[i, j] = (A[i, j] - sum_k L[i, k] L[j, k]) / L[j, j], k from i - BAND to j - 1
            s = band[i, i - j].copy()
            for k in range(max(0, i - BAND), j):
                s -= L[i, i - k] * L[j, j - k]
            if i == j:
                good = s > 0.0
                ok &= good
                L[i, 0] = np.sqrt(np.where(good, s, 1.0))
            else:
                L[i, i - j] = s / L[j, 0]


def band_solve(factor: np.ndarray, b: np.ndarray) -> np.ndarray:
    """x with L L^T x = b, for the factor of :func:`band_cholesky` and b of shape
    (dofs, samples, columns)."""
    n = factor.shape[0]
    y = b.copy()
    for i in range(n):
        for j in range(1, min(BAND, i) + 1):
            y[i] -= factor[i, j, :, None] * y[i - j]
        y[i] /= factor[i, 0, :, None]
    for i in range(n - 1, -1, -1):
        for j in range(1, min(BAND, n - 1 - i) + 1):
            y[i] -= factor[i + j, j, :, None] * y[i + j]
        y[i] /= factor[i, 0, :, None]
    return y


def lowest(
    K: np.ndarray,
    M: np.ndarray,
    want: int,
    start: np.ndarray,
    shift: float,
    *,
    tolerance: float = 1e-7,
    max_iterations: int = 30,
) -> tuple[np.ndarray, np.ndarray]:
    """The ``want`` lowest eigenvalues of K x = lambda M x for every sample.

    Parameters
    ----------
    K, M : ndarray, shape (samples, dofs, BAND + 1)
        Lower bands of the stiffness and mass matrices (held DOFs as :func:`hold` leaves them).
    want : int
        Eigenvalues wanted (rigid-body modes included).
    start : ndarray, shape (dofs, q)
        The starting basis, q > want (the nominal member's lowest modes).
    shift : float
        sigma, below the lowest eigenvalue, so that K - sigma M is positive definite
        [same unit as the eigenvalues].
    tolerance : float
        Relative change of every wanted Ritz value over one step at which a sample stops.
    max_iterations : int

    Returns
    -------
    eigenvalues : ndarray, shape (samples, want)
        Ascending (NaN where not converged).
    converged : ndarray of bool, shape (samples,)
    """
    B = K.shape[0]
    out = np.full((B, want), np.nan)
    converged = np.zeros(B, dtype=bool)
    K = np.ascontiguousarray(np.transpose(K, (1, 2, 0)))  # (dofs, BAND + 1, samples)
    M = np.ascontiguousarray(np.transpose(M, (1, 2, 0)))
    factor, ok = band_cholesky(K - shift * M)
    active = np.flatnonzero(ok)
    factor, M = factor[:, :, active], M[:, :, active]
    Q = np.ascontiguousarray(np.broadcast_to(start[:, None, :], (len(start), len(active),
                                                                  start.shape[1])))  # fmt: skip
    previous = np.full((len(active), want), np.inf)
    R = band_matmul(M, Q)
    for _ in range(max_iterations):
        if not len(active):
            break
        X = band_solve(factor, R)
        MX = np.transpose(band_matmul(M, X), (1, 0, 2))  # (samples, dofs, q)
        Xt = np.transpose(X, (1, 2, 0))
        Kr = Xt @ np.transpose(R, (1, 0, 2))
        Mr = Xt @ MX
        Kr = 0.5 * (Kr + np.swapaxes(Kr, 1, 2))
        Mr = 0.5 * (Mr + np.swapaxes(Mr, 1, 2))
        try:
            Lr = np.linalg.cholesky(Mr)
        except np.linalg.LinAlgError:  # a basis that lost its rank: leave the whole rest
            break
        Li = np.linalg.inv(Lr)
        theta, V = np.linalg.eigh(Li @ Kr @ np.swapaxes(Li, 1, 2))
        Y = np.swapaxes(Li, 1, 2) @ V
        MQb = MX @ Y  # M times the M-orthonormal Ritz vectors: the next right-hand side
        lam = theta[:, :want] + shift
        change = np.max(np.abs(lam - previous) / np.maximum(np.abs(theta[:, :want]), 1e-300),
                        axis=1)  # fmt: skip
        done = change <= tolerance
        out[active[done]] = lam[done]
        converged[active[done]] = True
        keep = ~done
        active, previous = active[keep], lam[keep]
        factor, M = factor[:, :, keep], M[:, :, keep]
        R = np.ascontiguousarray(np.transpose(MQb[keep], (1, 0, 2)))
    return out, converged
