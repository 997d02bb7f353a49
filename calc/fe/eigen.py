"""Eigen solvers behind one table: a name, what each method computes, and when it is used.

Every solve of the member's pencils goes through :data:`SOLVERS`; :func:`method_for` is the
one place that picks dense LAPACK, sparse ARPACK, or ARPACK about a shift placed at the
bottom of a clustered spectrum, by the size of the model and by whether its lowest modes lie
close together (:func:`clustered`).  The solver that ran reports its own name
(:class:`EigenPairs` carries it), so the result never guesses.

Clustered spectra.  A member over many nearly equal spans has as many modes as spans in a
narrow band (a continuous beam over N equal pinned spans: all N between the single span's
pinned-pinned and pinned-clamped frequencies; common practice).  Shift-invert about a shift
far below that band sees them as nearly equal and converges very slowly (100 inner supports:
about 26 s; 300: 73 s).  About a shift just below the lowest eigenvalue the wanted ones are
well apart, so the clustered method first places the shift: bisection with Sylvester's
inertia (K - sigma M is positive definite exactly when no eigenvalue lies below sigma, tested
by a banded Cholesky factorization; count.py counts the same way), then ARPACK about it.
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
    "clustered",
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


def method_for(n: int, count: int, problem: str = "modes", close: bool = False) -> str:
    """The key in :data:`SOLVERS` of the method used for a model of ``n`` free DOFs.

    Parameters
    ----------
    n : int
        Free degrees of freedom.
    count : int
        Eigenvalues wanted.
    problem : str
        ``"modes"`` (the lowest ``count``) or ``"buckling"`` (the largest one).
    close : bool
        Whether the lowest modes lie close together (:func:`clustered`); only asked for
        models of at least ``CLUSTER_MIN_DOFS``.

    Returns
    -------
    str
        ``"dense"``, ``"arpack"`` or ``"clustered"``.
    """
    if problem == "buckling":
        return "dense" if n <= _BUCKLING_DENSE_LIMIT else "arpack"
    if n <= DENSE_LIMIT or count >= n - 1:
        return "dense"
    return "clustered" if close else "arpack"


CLUSTER_RATIO = 4.0
"""The lowest modes are clustered where the (count + 1)-th eigenvalue is below this multiple
of the lowest (a continuous beam's first band spans a factor of 2.44 at most)."""

CLUSTER_MIN_DOFS = 400
"""Models below this many free DOFs are not checked for clustering: ARPACK about the far
shift finishes even a clustered one in well under a second (300 equal spans on a coarse
mesh, 302 DOFs: 0.4 s measured), and the check (about a third of an ARPACK solve at 200
DOFs) would only add to every sweep's small solves.  From here on it costs about a tenth."""

_PROBE_STEPS = 3  # block inverse iterations before the Rayleigh-Ritz estimate
_PLACED = 1e-7  # the clustered shift is placed within this fraction of the lowest eigenvalue
_SEED = 20261201  # the fixed start of every iteration: every run gives the same bits


def _factor(K: Any, M: Any, shift: float) -> Any:
    """Sparse LU of K - shift M, exactly as ARPACK's shift-invert mode factors it."""
    Kc, Mc = K.tocsc(), M.tocsc()
    return scipy.sparse.linalg.splu(Kc if shift == 0 else Kc - shift * Mc)


def _ritz_estimate(K: Any, M: Any, count: int, lu: Any) -> np.ndarray:
    """Rayleigh-Ritz values [rad^2/s^2] of a few block inverse iterations, ascending.

    Each is an upper bound on the eigenvalue of the same rank (Poincare's separation
    theorem); ``count + 2`` of them from a fixed start.
    """
    n = K.shape[0]
    block = min(count + 2, n)
    X = np.random.default_rng(_SEED).standard_normal((n, block))
    for _ in range(_PROBE_STEPS):
        X, _ = np.linalg.qr(lu.solve(M @ X))
    return scipy.linalg.eigh(X.T @ (K @ X), X.T @ (M @ X), eigvals_only=True)


_LAST: list[tuple[Any, Any, int, float, np.ndarray]] = []


def _estimate(K: Any, M: Any, count: int, shift: float) -> np.ndarray:
    """:func:`_ritz_estimate` about ``shift``, kept for the one pencil last asked about (the
    choice of method and the clustered method both need it; the matrices are never changed
    in place, and are held so that they are the very ones asked about)."""
    if _LAST:
        last = _LAST[0]
        if last[0] is K and last[1] is M and last[2] == count and last[3] == shift:
            return last[4]
    theta = _ritz_estimate(K, M, count, _factor(K, M, shift))
    _LAST[:] = [(K, M, count, shift, theta)]
    return theta


def clustered(K: Any, M: Any, count: int, shift: float) -> bool:
    """Whether the lowest ``count + 1`` eigenvalues of K x = lambda M x lie close together.

    From a cheap estimate (:func:`_ritz_estimate` about ``shift``): the (count + 1)-th
    Ritz value below ``CLUSTER_RATIO`` times the lowest, which is positive (rigid-body
    modes are far apart from the rest).  A wrong answer costs time only: both methods find
    the same modes, and the independent count checks them.
    """
    theta = _estimate(K, M, count, shift)
    top = theta[min(count, len(theta) - 1)]
    return bool(theta[0] > 0.0 and top < CLUSTER_RATIO * theta[0])


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


def _clustered_pairs(K: Any, M: Any, count: int, shift: float) -> tuple[np.ndarray, np.ndarray]:
    vals, vecs = _arpack(K, M, count, _placed_shift(K, M, count, shift), vectors=True)
    order = np.argsort(vals)
    return vals[order], vecs[:, order]


def _clustered_values(K: Any, M: Any, count: int, shift: float) -> np.ndarray:
    return np.sort(_arpack(K, M, count, _placed_shift(K, M, count, shift), vectors=False))


def _placed_shift(K: Any, M: Any, count: int, shift: float) -> float:
    """A shift just below the lowest eigenvalue [rad^2/s^2], placed by inertia.

    K - sigma M is positive definite exactly when no eigenvalue lies below sigma
    (Sylvester's law of inertia); a banded Cholesky factorization tests it.  Bisection
    between ``shift`` (below every eigenvalue) and the lowest Ritz value (above the lowest
    eigenvalue) until the two are within ``_PLACED`` of each other; the lower end is the
    shift.  Should round-off put it a hair above the lowest eigenvalue, the eigenvalues
    nearest it are still the lowest ones (and the independent count checks them).
    """
    theta = float(_estimate(K, M, count, shift)[0])
    definite = _definiteness(K, M)
    high = theta
    if definite(high):  # the estimate is the eigenvalue itself, to round-off
        return high
    low = shift
    for fraction in (0.5, 0.125):  # a tighter start than the given shift, where it holds
        if theta * fraction > low and definite(theta * fraction):
            low = theta * fraction
            break
    while high - low > _PLACED * abs(high):
        middle = 0.5 * (low + high)
        if definite(middle):
            low = middle
        else:
            high = middle
    return low


def _definiteness(K: Any, M: Any) -> Callable[[float], bool]:
    """sigma -> whether K - sigma M is positive definite (banded Cholesky, else sparse LDL^T)."""
    from beamtone.calc.fe.count import count_below

    Kc, Mc = K.tocoo(), M.tocoo()
    n = K.shape[0]
    width = int(max(np.max(np.abs(Kc.row - Kc.col), initial=0),
                    np.max(np.abs(Mc.row - Mc.col), initial=0)))  # fmt: skip
    if width > 64:  # a wide band: the sparse count
        return lambda sigma: count_below(K, M, sigma) == 0
    bands = []
    for A in (Kc, Mc):
        band = np.zeros((width + 1, n))
        lower = A.row >= A.col
        np.add.at(band, ((A.row - A.col)[lower], A.col[lower]), A.data[lower])
        bands.append(band)

    def definite(sigma: float) -> bool:
        try:
            scipy.linalg.cholesky_banded(bands[0] - sigma * bands[1], lower=True)
        except np.linalg.LinAlgError:
            return False
        return True

    return definite


def _arpack(K: Any, M: Any, count: int, shift: float, vectors: bool) -> Any:
    """(eigenvalues, vectors) with ``vectors``, else the eigenvalues alone (unsorted).

    ARPACK in shift-invert mode, from a fixed start so that every run gives the same bits.

    The start is a fixed pseudo-random vector (generic: no mode is missing from it), and
    the Lanczos basis a little smaller than ARPACK's default of 20 (measured: a quarter
    faster on these banded matrices); should it not converge, a wide basis is tried.
    """
    n = K.shape[0]
    start = np.random.default_rng(_SEED).standard_normal(n)
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
    "clustered": EigenMethod(
        "sparse shift-invert about the lowest mode, placed by inertia (clustered spectrum; ARPACK)",
        _clustered_pairs,
        _clustered_values,
        _arpack_largest,
    ),
}
"""The eigen methods by key; :func:`method_for` says which one a model uses."""


def default_eigensolver(
    K: scipy.sparse.spmatrix, M: scipy.sparse.spmatrix, count: int, shift: float
) -> EigenPairs:
    """Lowest ``count`` eigenpairs of K x = lambda M x (K symmetric semi-definite, M definite).

    Dense LAPACK for small models; otherwise ARPACK in shift-invert mode about
    ``shift`` (a value below the lowest eigenvalue, so K - shift*M is definite), or, where
    the lowest modes are clustered, about a shift placed just below the lowest eigenvalue
    (:func:`method_for` decides).

    Returns
    -------
    EigenPairs
        (eigenvalues ascending [rad^2/s^2], M-orthonormal eigenvectors as columns), and the
        name of the method that ran as ``.solver``.
    """
    method = SOLVERS[_method(K, M, count, shift)]
    vals, vecs = method.pairs(K, M, count, shift)
    return EigenPairs(vals, vecs, method.name)


def _method(K: Any, M: Any, count: int, shift: float) -> str:
    """The key of the method for the lowest ``count`` modes of this pencil."""
    n = K.shape[0]
    if method_for(n, count) == "dense" or n < CLUSTER_MIN_DOFS:
        return method_for(n, count)
    return method_for(n, count, close=clustered(K, M, count, shift))


def lowest_eigenvalues(
    K: scipy.sparse.csr_matrix, M: scipy.sparse.csr_matrix, count: int, shift: float
) -> np.ndarray:
    """Eigenvalues only, as :func:`default_eigensolver` finds them (for sizing a mesh).

    Returns
    -------
    ndarray
        The lowest ``count`` eigenvalues, ascending [rad^2/s^2].
    """
    return SOLVERS[_method(K, M, count, shift)].values(K, M, count, shift)


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
