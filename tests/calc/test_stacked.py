"""Checks of :mod:`calc.stacked` against general-purpose reference libraries.

References: numpy's dense Cholesky factor and scipy's dense generalized symmetric eigen
solver (``scipy.linalg.eigh``, LAPACK) on the same matrices; subspace iteration's
convergence to the lowest eigenvalues (K. J. Bathe, Finite Element Procedures, 1996,
section 11.6).
"""

from __future__ import annotations

import numpy as np
import scipy.linalg

from beamtone.calc import stacked
from beamtone.calc.fe.elements import scaled_element_matrices


def _beams(samples: int, elements: int = 24) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Cantilevers of scattered stiffness along their length (Hermite elements), banded."""
    rng = np.random.default_rng(7)
    h = np.full((samples, elements), 1.0 / elements)
    EI = 1e4 * (1.0 + 0.3 * rng.random((samples, elements)))
    m = 2.0 * (1.0 + 0.3 * rng.random((samples, elements)))
    k, _, mm = scaled_element_matrices(h.ravel(), EI.ravel(), m.ravel(), 1.0 / elements, False)
    first = 2 * np.arange(elements)
    n = 2 * (elements + 1)
    K = stacked.assemble(k.reshape(samples, elements, 4, 4), first, n)
    M = stacked.assemble(mm.reshape(samples, elements, 4, 4), first, n)
    held = np.array([0, 1])  # clamped left end
    stacked.hold(K, held, 1.0)
    stacked.hold(M, held, 0.0)
    return K, M, held


def test_banded_factor_and_product_against_dense() -> None:
    K, M, _ = _beams(5)
    factor, ok = stacked.band_cholesky(np.transpose(K, (1, 2, 0)))
    assert ok.all()
    for b in range(5):
        A = stacked.to_dense(K[b])
        L = np.linalg.cholesky(A)
        mine = stacked.to_dense(factor[:, :, b])  # lower band of L, mirrored
        assert np.allclose(np.tril(mine), L, rtol=1e-12, atol=1e-12 * np.abs(L).max())
    x = np.random.default_rng(1).random((K.shape[1], 5, 3))
    product = stacked.band_matmul(np.transpose(M, (1, 2, 0)), x)
    for b in range(5):
        assert np.allclose(product[:, b], stacked.to_dense(M[b]) @ x[:, b], rtol=1e-13)
    y = stacked.band_solve(factor, x)
    for b in range(5):
        assert np.allclose(stacked.to_dense(K[b]) @ y[:, b], x[:, b], rtol=1e-9)


def test_lowest_eigenvalues_against_scipy() -> None:
    K, M, held = _beams(40)
    free = np.setdiff1d(np.arange(K.shape[1]), held)
    K0, M0 = stacked.to_dense(K[0]), stacked.to_dense(M[0])
    lam0, vecs = scipy.linalg.eigh(K0[np.ix_(free, free)], M0[np.ix_(free, free)])
    start = np.zeros((K.shape[1], 12))
    start[free] = vecs[:, :12]
    lam, converged = stacked.lowest(K, M, 5, start, -0.05 * lam0[0])
    assert converged.all()
    for b in range(40):
        Kd, Md = stacked.to_dense(K[b]), stacked.to_dense(M[b])
        exact = scipy.linalg.eigh(Kd[np.ix_(free, free)], Md[np.ix_(free, free)],
                                  eigvals_only=True)[:5]  # fmt: skip
        assert np.allclose(lam[b], exact, rtol=1e-8)
    # Each sample's bits do not depend on the others in its stack.
    alone, _ = stacked.lowest(K[7:8], M[7:8], 5, start, -0.05 * lam0[0])
    assert np.array_equal(alone[0], lam[7])


def test_a_matrix_that_is_not_positive_definite_is_reported() -> None:
    K, M, held = _beams(3)
    K[1, 5, 0] = -1.0  # a negative diagonal
    start = np.zeros((K.shape[1], 8))
    start[2:10] = np.eye(8)
    lam, converged = stacked.lowest(K, M, 3, start, -1.0)
    assert list(converged) == [True, False, True] and np.all(np.isnan(lam[1]))
