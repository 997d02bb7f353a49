"""Eigen solvers behind one table: a name, what each method computes, and when it is used.

Every solve of the member's pencils goes through :data:`SOLVERS`; :func:`method_for` is the
one place that picks dense LAPACK or sparse ARPACK by the size of the model.  The solver that
ran reports its own name (:class:`EigenPairs` carries it), so the result never guesses.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.linalg
import scipy.sparse
import scipy.sparse.linalg

__all__ = [
    "DENSE_LIMIT",
    "EigenMethod",
    "EigenPairs",
    "Eigensolver",
    "SOLVERS",
    "method_for",
    "default_eigensolver",
    "lowest_eigenvalues",
    "largest_eigenvalue",
    "solver_name",
]

DENSE_LIMIT = 160
"""Free DOFs up to which the dense solver finds the lowest modes (measured: faster below)."""
_BUCKLING_DENSE_LIMIT = 2 * DENSE_LIMIT  # one largest eigenvalue: dense pays off longer

Eigensolver = Callable[[object, object, int, float], tuple[np.ndarray, np.ndarray]]
"""(K, M, count, shift) -> (eigenvalues ascending, eigenvectors as columns)."""


class EigenPairs(tuple):  # noqa: SLOT001 - a 2-tuple that also says which solver made it
    """(eigenvalues, vectors) as a plain pair, with the name of the solver that found them.

    Unpacks like the pair an :data:`Eigensolver` returns; ``solver`` is the method's name.
    """

    solver: str

    def __new__(cls, values: np.ndarray, vectors: np.ndarray, solver: str) -> EigenPairs:
        pair = super().__new__(cls, (values, vectors))
        pair.solver = solver
        return pair


@dataclass(frozen=True)
class EigenMethod:
    """One eigen method: its name and the three problems the finite-element code poses.

    Attributes
    ----------
    name : str
        How results name it.
    pairs : callable
        (K, M, count, shift) -> lowest ``count`` eigenvalues ascending and M-orthonormal
        vectors of K x = lambda M x.
    values : callable
        (K, M, count, shift) -> the same eigenvalues without vectors, ascending.
    largest : callable
        (A, B) -> the largest eigenvalue of A x = nu B x (B positive definite).
    """

    name: str
    pairs: Callable[[Any, Any, int, float], tuple[np.ndarray, np.ndarray]]
    values: Callable[[Any, Any, int, float], np.ndarray]
    largest: Callable[[Any, Any], float]


def method_for(n: int, count: int, problem: str = "modes") -> str:
    """The key in :data:`SOLVERS` of the method used for a model of ``n`` free DOFs.

    Parameters
    ----------
    n : int
        Free degrees of freedom.
    count : int
        Eigenvalues wanted.
    problem : str
        ``"modes"`` (the lowest ``count``) or ``"buckling"`` (the largest one).

    Returns
    -------
    str
        ``"dense"`` or ``"arpack"``.
    """
    if problem == "buckling":
        return "dense" if n <= _BUCKLING_DENSE_LIMIT else "arpack"
    return "dense" if n <= DENSE_LIMIT or count >= n - 1 else "arpack"


def _dense_arrays(K: Any, M: Any) -> tuple[np.ndarray, np.ndarray]:
    Kd = K.toarray() if scipy.sparse.issparse(K) else np.asarray(K)
    Md = M.toarray() if scipy.sparse.issparse(M) else np.asarray(M)
    return Kd, Md


def _dense_pairs(K: Any, M: Any, count: int, shift: float) -> tuple[np.ndarray, np.ndarray]:
    Kd, Md = _dense_arrays(K, M)
    count = min(count, Kd.shape[0])
    mu, vecs, used = _dense_inverted(Kd, Md, count, shift, vectors=True)
    assert vecs is not None
    vecs = vecs / np.sqrt(np.einsum("ij,ij->j", vecs, Md @ vecs))
    return 1.0 / mu + used, vecs


def _dense_values(K: Any, M: Any, count: int, shift: float) -> np.ndarray:
    Kd, Md = _dense_arrays(K, M)
    count = min(count, Kd.shape[0])
    mu, _, used = _dense_inverted(Kd, Md, count, shift, vectors=False)
    return np.sort(1.0 / mu + used)


def _dense_largest(A: Any, B: Any) -> float:
    Ad, Bd = _dense_arrays(A, B)
    n = Bd.shape[0]
    nu = scipy.linalg.eigh(Ad, Bd, eigvals_only=True, subset_by_index=[n - 1] * 2)
    return float(nu[-1])


def _arpack_pairs(K: Any, M: Any, count: int, shift: float) -> tuple[np.ndarray, np.ndarray]:
    vals, vecs = _arpack(K, M, count, shift, vectors=True)
    order = np.argsort(vals)
    return vals[order], vecs[:, order]


def _arpack_values(K: Any, M: Any, count: int, shift: float) -> np.ndarray:
    return np.sort(_arpack(K, M, count, shift, vectors=False))


def _arpack_largest(A: Any, B: Any) -> float:
    return float(scipy.sparse.linalg.eigsh(A.tocsc(), k=1, M=B.tocsc(), which="LA")[0][0])


def _arpack(K: Any, M: Any, count: int, shift: float, vectors: bool) -> Any:
    """(eigenvalues, vectors) with ``vectors``, else the eigenvalues alone (unsorted).

    ARPACK in shift-invert mode, from a fixed start so that every run gives the same bits.

    The start is a fixed pseudo-random vector (generic: no mode is missing from it), and
    the Lanczos basis a little smaller than ARPACK's default of 20 (measured: a quarter
    faster on these banded matrices); should it not converge, a wide basis is tried.
    """
    n = K.shape[0]
    start = np.random.default_rng(20261201).standard_normal(n)
    Kc, Mc = K.tocsc(), M.tocsc()
    for ncv in (max(2 * count + 1, 15), 8 * count + 40):
        try:
            return scipy.sparse.linalg.eigsh(
                Kc, k=count, M=Mc, sigma=shift, which="LM", ncv=min(n - 1, ncv), v0=start,
                return_eigenvectors=vectors,
            )  # fmt: skip
        except scipy.sparse.linalg.ArpackNoConvergence:
            if ncv == 8 * count + 40:
                raise
    raise AssertionError("unreachable")  # pragma: no cover


def _dense_inverted(
    Kd: np.ndarray, Md: np.ndarray, count: int, shift: float, vectors: bool
) -> tuple[np.ndarray, np.ndarray | None, float]:
    """Largest ``count`` mu of M x = mu (K - shift M) x, descending, with the shift used.

    In this inverted form the lowest modes become the largest mu and keep their relative
    accuracy (the direct form loses it as the mesh is refined).  Only the wanted end of the
    spectrum is found (measured: a third faster than the whole spectrum by divide and
    conquer from 100 DOFs on, rigid-body modes or not).  K - shift M must be factored; where
    a very short element makes K so stiff that its round-off swamps a small shift (a member
    with rigid-body modes), the shift is made larger: the lowest modes lose a little
    relative accuracy in mu, which the strain-energy quotient restores.
    """
    n = Kd.shape[0]
    for factor in (1.0, 1e2, 1e4):
        used = shift * factor
        try:
            result = scipy.linalg.eigh(
                Md, Kd - used * Md, eigvals_only=not vectors, driver="gvx",
                subset_by_index=[n - count, n - 1],
            )  # fmt: skip
        except np.linalg.LinAlgError:
            if factor == 1e4:
                raise
            continue
        if vectors:
            mu, vecs = result
            return mu[::-1], vecs[:, ::-1], used
        return result[::-1], None, used
    raise AssertionError("unreachable")  # pragma: no cover


SOLVERS: dict[str, EigenMethod] = {
    "dense": EigenMethod("dense (LAPACK)", _dense_pairs, _dense_values, _dense_largest),
    "arpack": EigenMethod(
        "sparse shift-invert (ARPACK)", _arpack_pairs, _arpack_values, _arpack_largest
    ),
}
"""The eigen methods by key; :func:`method_for` says which one a model uses."""


def default_eigensolver(
    K: scipy.sparse.spmatrix, M: scipy.sparse.spmatrix, count: int, shift: float
) -> EigenPairs:
    """Lowest ``count`` eigenpairs of K x = lambda M x (K symmetric semi-definite, M definite).

    Dense LAPACK for small models; otherwise ARPACK in shift-invert mode about
    ``shift`` (a value below the lowest eigenvalue, so K - shift*M is definite).

    Returns
    -------
    EigenPairs
        (eigenvalues ascending [rad^2/s^2], M-orthonormal eigenvectors as columns), and the
        name of the method that ran as ``.solver``.
    """
    method = SOLVERS[method_for(K.shape[0], count)]
    vals, vecs = method.pairs(K, M, count, shift)
    return EigenPairs(vals, vecs, method.name)


def lowest_eigenvalues(
    K: scipy.sparse.csr_matrix, M: scipy.sparse.csr_matrix, count: int, shift: float
) -> np.ndarray:
    """Eigenvalues only, as :func:`default_eigensolver` finds them (for sizing a mesh).

    Returns
    -------
    ndarray
        The lowest ``count`` eigenvalues, ascending [rad^2/s^2].
    """
    return SOLVERS[method_for(K.shape[0], count)].values(K, M, count, shift)


def largest_eigenvalue(A: Any, B: Any, size: int) -> float:
    """Largest eigenvalue of A x = nu B x (B positive definite), by the method for ``size``.

    Parameters
    ----------
    A, B : sparse matrices
    size : int
        DOFs of the model the pencil comes from (decides the method).
    """
    return SOLVERS[method_for(size, 1, "buckling")].largest(A, B)


def solver_name(solver: Eigensolver, result: object) -> str:
    """What a solve reports as its solver: the name the solver gave, else the callable's name."""
    name = getattr(result, "solver", None)
    if isinstance(name, str):
        return name
    label = getattr(solver, "__qualname__", None) or type(solver).__name__
    return f"supplied eigen solver ({label})"
