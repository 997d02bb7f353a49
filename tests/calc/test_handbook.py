"""Checks of :mod:`calc.handbook` against published tables and independent formulations.

Independent references used here:

* the published table ``shared/reference/uniform-beam-frequency-parameters.csv`` (R. D. Blevins,
  *Formulas for Natural Frequency and Mode Shape*, 1979, Table 8-1; W. T. Thomson, *Theory of
  Vibration with Applications*, Appendix D), read at test time;
* boundary-condition determinants built here from first principles and evaluated with general
  purpose libraries (numpy, mpmath, sympy), independent of the module's closed forms;
* asymptotic forms and bounds that are common practice.
"""

from __future__ import annotations

import csv
import itertools
import math
from collections.abc import Callable

import mpmath
import numpy as np
import pytest
import sympy as sp
from scipy.optimize import brentq

from beamtone.calc.handbook import (
    END_CONDITIONS,
    equal_span_parameters,
    frequency_parameters,
    rigid_body_modes,
    tip_mass_parameters,
)
from tests.reference import reference_file

_TABLE_PATH = reference_file("uniform-beam-frequency-parameters.csv")

# Derivative orders fixed to zero by each classical end condition (common practice).
_BC_ORDERS: dict[str, tuple[int, int]] = {
    "clamped": (0, 1),
    "pinned": (0, 2),
    "guided": (1, 3),
    "free": (2, 3),
}


def _read_table() -> list[dict[str, str]]:
    """Rows of the published table, skipping its ``#`` header comments."""
    with _TABLE_PATH.open(newline="") as handle:
        lines = [line for line in handle if not line.startswith("#")]
    return list(csv.DictReader(lines))


_TABLE = _read_table()
_TABLE_BY_PAIR = {frozenset({r["end_a"], r["end_b"]}): r for r in _TABLE}
_LAMBDA_COLUMNS = [f"lambda_{i}" for i in range(1, 6)]


def _table_row(a: str, b: str) -> list[float]:
    """Printed lambda values of one end pair in the published table."""
    row = _TABLE_BY_PAIR[frozenset({a, b})]
    return [float(row[c]) for c in _LAMBDA_COLUMNS]


# ---------------------------------------------------------------------------------------------
# Independent boundary-value formulation (numpy): w = a cos + b sin + c e^(-lx) + d e^(-l(1-x))
# on a unit length, derivatives divided by lambda**k so every entry is O(1).
# ---------------------------------------------------------------------------------------------


def _scaled_basis(lam: float, xi: float) -> np.ndarray:
    """Rows k = 0..3: k-th derivative / lam**k of the four basis functions at ``xi``."""
    c, s = math.cos(lam * xi), math.sin(lam * xi)
    e0, e1 = math.exp(-lam * xi), math.exp(-lam * (1.0 - xi))
    return np.array(
        [
            [c, s, e0, e1],
            [-s, c, -e0, e1],
            [-c, -s, e0, e1],
            [s, -c, -e0, e1],
        ]
    )


def _classical_det(a: str, b: str, lam: float) -> float:
    """Scaled 4x4 boundary determinant of a single beam with ends ``a`` (x = 0), ``b`` (x = 1)."""
    basis0, basis1 = _scaled_basis(lam, 0.0), _scaled_basis(lam, 1.0)
    rows = [basis0[k] for k in _BC_ORDERS[a]] + [basis1[k] for k in _BC_ORDERS[b]]
    return float(np.linalg.det(np.array(rows)))


def _tip_mass_det(mu: float, j: float, lam: float) -> float:
    """Clamped at 0; at 1: EI w'' = J omega^2 w' and EI w''' = -M omega^2 w (m = EI = L = 1)."""
    basis0, basis1 = _scaled_basis(lam, 0.0), _scaled_basis(lam, 1.0)
    rows = [
        basis0[0],
        basis0[1],
        basis1[2] - j * lam**3 * basis1[1],
        basis1[3] + mu * lam * basis1[0],
    ]
    return float(np.linalg.det(np.array(rows)))


def _span_det(spans: int, ends: str, lam: float) -> float:
    """Global 4N x 4N determinant of a beam over equal unit spans with pinned inner supports."""
    size = 4 * spans
    matrix = np.zeros((size, size))
    basis0, basis1 = _scaled_basis(lam, 0.0), _scaled_basis(lam, 1.0)
    outer = _BC_ORDERS[ends]
    row = 0
    for k in outer:
        matrix[row, 0:4] = basis0[k]
        row += 1
    for s in range(spans - 1):
        left, right = slice(4 * s, 4 * s + 4), slice(4 * s + 4, 4 * s + 8)
        matrix[row, left] = basis1[0]
        matrix[row + 1, right] = basis0[0]
        matrix[row + 2, left], matrix[row + 2, right] = basis1[1], -basis0[1]
        matrix[row + 3, left], matrix[row + 3, right] = basis1[2], -basis0[2]
        row += 4
    for k in outer:
        matrix[row, size - 4 : size] = basis1[k]
        row += 1
    return float(np.linalg.det(matrix))


def _det_roots(
    func: Callable[[float], float], start: float, stop: float, step: float
) -> list[float]:
    """All sign changes of ``func`` on ``[start, stop]``, refined with brentq."""
    grid = np.arange(start, stop, step)
    values = np.array([func(x) for x in grid])
    roots = []
    for i in np.nonzero(values[:-1] * values[1:] < 0.0)[0]:
        roots.append(brentq(func, grid[i], grid[i + 1], xtol=1e-14, rtol=1e-15))
    return roots


# ---------------------------------------------------------------------------------------------
# Classical end pairs
# ---------------------------------------------------------------------------------------------


def test_table_is_present_and_complete() -> None:
    """The published table lists all ten classical end pairs."""
    pairs = {frozenset({r["end_a"], r["end_b"]}) for r in _TABLE}
    expected = {frozenset({a, b}) for a in END_CONDITIONS for b in END_CONDITIONS}
    assert pairs == expected
    assert len(_TABLE) == 10


@pytest.mark.parametrize("row", _TABLE, ids=lambda r: f"{r['end_a']}-{r['end_b']}")
def test_matches_published_table(row: dict[str, str]) -> None:
    """Every printed digit of Blevins (1979) Table 8-1, as transcribed in the shared table.

    Source: R. D. Blevins, Formulas for Natural Frequency and Mode Shape, 1979, Table 8-1
    (8 decimals); first modes also in W. T. Thomson, Theory of Vibration with Applications,
    Appendix D.
    """
    a, b = row["end_a"], row["end_b"]
    for left, right in ((a, b), (b, a)):
        ours = frequency_parameters(left, right, len(_LAMBDA_COLUMNS))
        for value, column in zip(ours, _LAMBDA_COLUMNS, strict=True):
            printed = row[column]
            assert abs(value - float(printed)) <= 0.5e-8, (left, right, column)
            assert f"{value:.8f}" == printed, (left, right, column)
        assert rigid_body_modes(left, right) == int(row["rigid_body_modes"])


@pytest.mark.parametrize("a", END_CONDITIONS)
@pytest.mark.parametrize("b", END_CONDITIONS)
def test_roots_accurate_to_1e_12_up_to_mode_50(a: str, b: str) -> None:
    """The exact 4x4 boundary determinant, evaluated with mpmath at 50 digits, changes sign
    within +-1e-12 of every returned root (modes 1..50), so each root is good to 1e-12."""

    def basis_row(lam: mpmath.mpf, k: int, x: int) -> list[mpmath.mpf]:
        # k-th derivative of cos, sin, cosh, sinh of (lam x), divided by lam**k
        arg = lam * x
        shift = k * mpmath.pi / 2
        hyper = (mpmath.cosh(arg), mpmath.sinh(arg))
        return [mpmath.cos(arg + shift), mpmath.sin(arg + shift), hyper[k % 2], hyper[(k + 1) % 2]]

    def det(lam: mpmath.mpf) -> mpmath.mpf:
        rows = [basis_row(lam, k, 0) for k in _BC_ORDERS[a]]
        rows += [basis_row(lam, k, 1) for k in _BC_ORDERS[b]]
        # Leibniz expansion: plain 50-digit arithmetic, no pivoting tolerance
        total = mpmath.mpf(0)
        for perm in itertools.permutations(range(4)):
            inversions = sum(perm[i] > perm[k] for i in range(4) for k in range(i + 1, 4))
            term = mpmath.fprod(rows[i][perm[i]] for i in range(4))
            total += -term if inversions % 2 else term
        return total

    roots = frequency_parameters(a, b, 50)
    with mpmath.workdps(50):
        for n, root in enumerate(roots, start=1):
            lam = mpmath.mpf(root)
            lo, hi = det(lam - mpmath.mpf("1e-12")), det(lam + mpmath.mpf("1e-12"))
            assert lo * hi < 0, (a, b, n)


@pytest.mark.parametrize("a", END_CONDITIONS)
@pytest.mark.parametrize("b", END_CONDITIONS)
def test_no_root_missed(a: str, b: str) -> None:
    """A fine independent scan of the boundary determinant finds exactly the returned roots."""
    ours = frequency_parameters(a, b, 20)
    found = _det_roots(lambda x: _classical_det(a, b, x), 0.3, ours[-1] + 0.5, 0.01)
    assert len(found) == len(ours)
    assert np.allclose(found, ours, rtol=0.0, atol=1e-10)


@pytest.mark.parametrize(
    ("a", "b", "asymptote", "correction"),
    [
        # common practice: cos x cosh x = -1 gives x_n ~ (2n - 1) pi / 2, error ~ 2 exp(-x_n)
        ("clamped", "free", lambda n: (2 * n - 1) * math.pi / 2, lambda x: 2.0 * math.exp(-x)),
        # common practice: cos x cosh x = 1 gives x_n ~ (2n + 1) pi / 2, error ~ 2 exp(-x_n)
        ("clamped", "clamped", lambda n: (2 * n + 1) * math.pi / 2, lambda x: 2.0 * math.exp(-x)),
        ("free", "free", lambda n: (2 * n + 1) * math.pi / 2, lambda x: 2.0 * math.exp(-x)),
        # common practice: tan x = tanh x gives x_n ~ (4n + 1) pi / 4, error ~ exp(-2 x_n)
        ("clamped", "pinned", lambda n: (4 * n + 1) * math.pi / 4, lambda x: math.exp(-2 * x)),
        # common practice: tan x = -tanh x gives x_n ~ (4n - 1) pi / 4, error ~ exp(-2 x_n)
        ("clamped", "guided", lambda n: (4 * n - 1) * math.pi / 4, lambda x: math.exp(-2 * x)),
    ],
    ids=["clamped-free", "clamped-clamped", "free-free", "clamped-pinned", "clamped-guided"],
)
def test_higher_modes_approach_asymptotic_form(
    a: str,
    b: str,
    asymptote: Callable[[int], float],
    correction: Callable[[float], float],
) -> None:
    """lambda_n tends to its asymptotic form with the exponentially small error expected.

    The error bound is the leading correction term (common practice); beyond mode 8 the
    difference is below 1e-10.
    """
    roots = frequency_parameters(a, b, 50)
    for n in range(6, 51):
        x_n = asymptote(n)
        diff = abs(roots[n - 1] - x_n)
        assert diff <= 1.001 * correction(x_n) + 1e-12, (n, diff)
        if n >= 9:
            assert diff <= 1e-10, (n, diff)


@pytest.mark.parametrize(
    ("a", "b", "exact"),
    [
        ("pinned", "pinned", lambda n: n * math.pi),  # common practice: sin x = 0
        ("guided", "guided", lambda n: n * math.pi),  # common practice: cos(n pi x / L) shapes
        ("pinned", "guided", lambda n: (2 * n - 1) * math.pi / 2),  # common practice
    ],
)
def test_trigonometric_pairs_exact(a: str, b: str, exact: Callable[[int], float]) -> None:
    """Pairs with purely trigonometric mode shapes have exact roots (common practice)."""
    roots = frequency_parameters(a, b, 50)
    for n, value in enumerate(roots, start=1):
        assert abs(value - exact(n)) <= 1e-12


def test_shared_roots_of_related_pairs() -> None:
    """Pairs with the same characteristic equation agree (common practice): pinned-free with
    clamped-pinned, guided-free with clamped-guided, free-free with clamped-clamped,
    guided-guided with pinned-pinned; and order of the ends does not matter."""
    assert frequency_parameters("pinned", "free", 30) == frequency_parameters(
        "clamped", "pinned", 30
    )
    assert frequency_parameters("guided", "free", 30) == frequency_parameters(
        "clamped", "guided", 30
    )
    assert frequency_parameters("free", "free", 30) == frequency_parameters(
        "clamped", "clamped", 30
    )
    assert frequency_parameters("guided", "guided", 30) == frequency_parameters(
        "pinned", "pinned", 30
    )
    for a in END_CONDITIONS:
        for b in END_CONDITIONS:
            assert frequency_parameters(a, b, 12) == frequency_parameters(b, a, 12)


def test_roots_increase_and_count() -> None:
    for a in END_CONDITIONS:
        for b in END_CONDITIONS:
            roots = frequency_parameters(a, b, 60)
            assert len(roots) == 60
            assert all(isinstance(v, float) for v in roots)
            assert all(y - x > 2.5 for x, y in zip(roots, roots[1:], strict=False))


@pytest.mark.parametrize(
    ("a", "b", "expected"),
    [
        # common practice: the number of rigid-body motions the supports leave free
        ("clamped", "free", 0),
        ("pinned", "pinned", 0),
        ("pinned", "free", 1),
        ("free", "pinned", 1),
        ("guided", "free", 1),
        ("guided", "guided", 1),
        ("free", "free", 2),
    ],
)
def test_rigid_body_modes(a: str, b: str, expected: int) -> None:
    assert rigid_body_modes(a, b) == expected


# ---------------------------------------------------------------------------------------------
# Cantilever with tip mass and rotary inertia
# ---------------------------------------------------------------------------------------------


def test_tip_mass_equation_matches_symbolic_determinant() -> None:
    """sympy: the 4x4 boundary determinant equals 2 lambda^6 times the module's equation.

    Boundary conditions (derived from Hamilton's principle, common practice): w(0) = w'(0) = 0,
    EI w''(L) = J omega^2 w'(L), EI w'''(L) = -M omega^2 w(L).
    """
    lam, mu, j, x = sp.symbols("lambda mu j x", positive=True)
    basis = [sp.cos(lam * x), sp.sin(lam * x), sp.cosh(lam * x), sp.sinh(lam * x)]
    rows = [
        [f.subs(x, 0) for f in basis],
        [sp.diff(f, x).subs(x, 0) for f in basis],
        [(sp.diff(f, x, 2) - j * lam**4 * sp.diff(f, x)).subs(x, 1) for f in basis],
        [(sp.diff(f, x, 3) + mu * lam**4 * f).subs(x, 1) for f in basis],
    ]
    det = sp.Matrix(rows).det()
    c, s, ch, sh = sp.cos(lam), sp.sin(lam), sp.cosh(lam), sp.sinh(lam)
    stated = (
        1
        + c * ch
        + mu * lam * (c * sh - s * ch)
        - j * lam**3 * (s * ch + c * sh)
        + mu * j * lam**4 * (1 - c * ch)
    )
    assert sp.simplify((det - 2 * lam**6 * stated).rewrite(sp.exp)) == 0


def test_tip_mass_zero_is_cantilever() -> None:
    """mu = j = 0 reproduces the clamped-free row of Blevins (1979) Table 8-1 (shared table)."""
    ours = tip_mass_parameters(0.0, 0.0, 5)
    for value, printed in zip(ours, _table_row("clamped", "free"), strict=True):
        assert abs(value - printed) <= 0.5e-8
    assert ours == pytest.approx(frequency_parameters("clamped", "free", 5), abs=1e-12)


def test_tip_mass_large_mass_tends_to_clamped_pinned() -> None:
    """A very heavy tip mass (no inertia) holds the tip still for all but the first mode, which
    falls towards zero; the others tend to clamped-pinned (common practice)."""
    mu = 1e9
    ours = tip_mass_parameters(mu, 0.0, 6)
    assert ours[0] == pytest.approx((3.0 / mu) ** 0.25, rel=1e-6)  # massless-spring limit
    for value, printed in zip(ours[1:], _table_row("clamped", "pinned"), strict=True):
        assert abs(value - printed) <= 1e-8


def test_tip_mass_large_inertia_tends_to_clamped_guided() -> None:
    """A very large tip inertia (no mass) stops the tip rotating: modes 2.. tend to
    clamped-guided (common practice; values from the shared Blevins 1979 table)."""
    ours = tip_mass_parameters(0.0, 1e9, 6)
    for value, printed in zip(ours[1:], _table_row("clamped", "guided"), strict=True):
        assert abs(value - printed) <= 1e-8


def test_tip_mass_large_mass_and_inertia_tend_to_clamped_clamped() -> None:
    """Heavy tip mass with large inertia: two low modes, then clamped-clamped (common practice)."""
    ours = tip_mass_parameters(1e9, 1e9, 7)
    assert ours[1] < 1e-1
    for value, printed in zip(ours[2:], _table_row("clamped", "clamped"), strict=True):
        assert abs(value - printed) <= 1e-8


def test_tip_mass_textbook_value() -> None:
    """Tip mass equal to the beam mass: lambda_1 = 1.2479 (from memory, handbook tables of a
    cantilever with end mass)."""
    assert tip_mass_parameters(1.0, 0.0, 1)[0] == pytest.approx(1.2479, abs=1e-4)


@pytest.mark.parametrize("mu", [0.1, 0.5, 1.0, 5.0, 50.0])
def test_tip_mass_rayleigh_bound(mu: float) -> None:
    """Rayleigh's quotient with the static deflection shape bounds the fundamental from above:
    lambda_1^4 <= 3 / (mu + 33/140) (common practice), and is close for a heavy tip mass."""
    lam1 = tip_mass_parameters(mu, 0.0, 1)[0]
    rayleigh = (3.0 / (mu + 33.0 / 140.0)) ** 0.25
    assert lam1 <= rayleigh
    assert lam1 >= 0.995 * rayleigh


@pytest.mark.parametrize(
    ("mu", "j"), [(0.2, 0.0), (1.0, 0.0), (0.0, 0.05), (2.0, 0.3), (10.0, 1.0), (0.5, 0.01)]
)
def test_tip_mass_against_independent_determinant(mu: float, j: float) -> None:
    """The numpy 4x4 boundary determinant, scanned finely, has exactly the returned roots."""
    ours = tip_mass_parameters(mu, j, 8)
    found = _det_roots(lambda x: _tip_mass_det(mu, j, x), 0.05, ours[-1] + 0.3, 0.004)
    assert len(found) == len(ours)
    assert np.allclose(found, ours, rtol=0.0, atol=1e-10)


def test_tip_mass_lowers_every_mode() -> None:
    """Adding mass or inertia never raises a natural frequency (Rayleigh, common practice)."""
    base = tip_mass_parameters(0.0, 0.0, 10)
    for mu, j in [(0.3, 0.0), (0.0, 0.02), (1.0, 0.1)]:
        loaded = tip_mass_parameters(mu, j, 10)
        assert all(b >= a for a, b in zip(loaded, base, strict=True))
    heavier = tip_mass_parameters(2.0, 0.1, 10)
    assert all(b >= a for a, b in zip(heavier, tip_mass_parameters(1.0, 0.1, 10), strict=True))


def test_tip_mass_many_modes() -> None:
    roots = tip_mass_parameters(0.7, 0.05, 50)
    assert len(roots) == 50
    assert all(y > x for x, y in zip(roots, roots[1:], strict=False))
    # With mass and inertia at the tip the high modes approach clamped-clamped (common practice).
    cc = frequency_parameters("clamped", "clamped", 48)
    assert abs(roots[-1] - cc[-1]) < 1e-2


# ---------------------------------------------------------------------------------------------
# Beams over equal spans
# ---------------------------------------------------------------------------------------------


def test_two_spans_pinned() -> None:
    """Two equal pinned spans alternate between antisymmetric modes (each span pinned-pinned,
    lambda = k pi) and symmetric modes (each span clamped-pinned), exact and common practice;
    clamped-pinned digits from the shared Blevins (1979) Table 8-1."""
    ours = equal_span_parameters(2, 10)
    cp = _table_row("clamped", "pinned")
    for k in range(5):
        assert abs(ours[2 * k] - (k + 1) * math.pi) <= 1e-12
        assert abs(ours[2 * k + 1] - cp[k]) <= 0.5e-8
    assert f"{ours[1]:.8f}" == "3.92660231"


def test_two_spans_clamped() -> None:
    """Two equal spans with clamped ends: antisymmetric modes are clamped-pinned spans, symmetric
    ones clamped-clamped spans (common practice; digits from the shared Blevins 1979 table)."""
    ours = equal_span_parameters(2, 10, ends="clamped")
    cp, cc = _table_row("clamped", "pinned"), _table_row("clamped", "clamped")
    for k in range(5):
        assert abs(ours[2 * k] - cp[k]) <= 0.5e-8
        assert abs(ours[2 * k + 1] - cc[k]) <= 0.5e-8


def test_three_spans_pinned() -> None:
    """Three equal pinned spans: lambda = pi is a root and the first band holds three roots
    between pi and the first clamped-clamped root 4.73004074 (shared Blevins 1979 table)."""
    ours = equal_span_parameters(3, 6)
    assert abs(ours[0] - math.pi) <= 1e-12
    cc1 = _table_row("clamped", "clamped")[0]
    assert all(math.pi <= v < cc1 for v in ours[:3])
    assert ours[3] == pytest.approx(2 * math.pi, abs=1e-12)
    # Blevins (1979), table of beams over equal spans, three spans: 3.142, 3.556, 4.297,
    # 6.283, 6.707, 7.430 (from memory, 3 decimals).
    assert ours == pytest.approx((3.142, 3.556, 4.297, 6.283, 6.707, 7.430), abs=1e-3)


@pytest.mark.parametrize("ends", ["pinned", "clamped"])
def test_one_span_is_single_beam(ends: str) -> None:
    """One span reproduces the pinned-pinned or clamped-clamped row of the shared table."""
    ours = equal_span_parameters(1, 5, ends=ends)
    for value, printed in zip(ours, _table_row(ends, ends), strict=True):
        assert abs(value - printed) <= 0.5e-8
    assert ours == pytest.approx(frequency_parameters(ends, ends, 5), abs=1e-12)


@pytest.mark.parametrize("spans", [2, 3, 4, 5, 7])
@pytest.mark.parametrize("ends", ["pinned", "clamped"])
def test_equal_spans_against_global_determinant(spans: int, ends: str) -> None:
    """An independent 4N x 4N boundary/continuity determinant (numpy), scanned finely, has
    exactly the returned roots in the first three bands."""
    ours = equal_span_parameters(spans, 3 * spans, ends=ends)
    step = 0.2 / spans**2
    found = _det_roots(lambda x: _span_det(spans, ends, x), 2.0, ours[-1] + 0.3, step)
    assert len(found) == len(ours)
    assert np.allclose(found, ours, rtol=0.0, atol=1e-9)


@pytest.mark.parametrize("spans", [2, 3, 4, 6, 10])
@pytest.mark.parametrize("ends", ["pinned", "clamped"])
def test_equal_span_bands(spans: int, ends: str) -> None:
    """Each band k pi <= lambda <= lambda_k(clamped-clamped) holds exactly `spans` roots; k pi is
    a root for pinned ends and the clamped-clamped root for clamped ends (common practice)."""
    bands = 4
    ours = equal_span_parameters(spans, bands * spans, ends=ends)
    cc = frequency_parameters("clamped", "clamped", bands)
    for k in range(1, bands + 1):
        band = ours[(k - 1) * spans : k * spans]
        assert all(k * math.pi - 1e-12 <= v <= cc[k - 1] + 1e-12 for v in band)
        assert all(y > x for x, y in zip(band, band[1:], strict=False))
        edge = k * math.pi if ends == "pinned" else cc[k - 1]
        assert min(abs(v - edge) for v in band) <= 1e-12


def test_equal_spans_more_spans_lower_fundamental_band() -> None:
    """Adding spans fills the band from below the clamped-clamped root (pinned ends)."""
    for spans in (2, 3, 5, 8):
        ours = equal_span_parameters(spans, spans)
        assert ours[0] == pytest.approx(math.pi, abs=1e-12)
        assert ours[-1] < 4.73004074


# ---------------------------------------------------------------------------------------------
# Bad arguments
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("call", "name"),
    [
        (lambda: frequency_parameters("fixed", "free", 3), "left"),
        (lambda: frequency_parameters("clamped", "Free", 3), "right"),
        (lambda: frequency_parameters("clamped", None, 3), "right"),
        (lambda: rigid_body_modes("sliding", "free"), "left"),
        (lambda: rigid_body_modes("free", 1), "right"),
    ],
)
def test_unknown_end_raises(call: Callable[[], object], name: str) -> None:
    with pytest.raises(ValueError, match=rf"^{name} must be one of 'clamped', 'pinned'"):
        call()


@pytest.mark.parametrize("count", [0, -1, 2.5, True, "3", None])
def test_bad_count_raises(count: object) -> None:
    for call in (
        lambda: frequency_parameters("clamped", "free", count),
        lambda: tip_mass_parameters(1.0, 0.0, count),
        lambda: equal_span_parameters(2, count),
    ):
        with pytest.raises(ValueError, match=r"^count must be an integer >= 1"):
            call()


@pytest.mark.parametrize("value", [-0.1, math.nan, math.inf, "1", None, True])
def test_bad_tip_ratios_raise(value: object) -> None:
    with pytest.raises(ValueError, match=r"^mass_ratio must be a finite real number >= 0"):
        tip_mass_parameters(value, 0.0, 2)
    with pytest.raises(ValueError, match=r"^inertia_ratio must be a finite real number >= 0"):
        tip_mass_parameters(0.0, value, 2)


def test_bad_span_arguments_raise() -> None:
    with pytest.raises(ValueError, match=r"^spans must be an integer >= 1"):
        equal_span_parameters(0, 3)
    with pytest.raises(ValueError, match=r"^ends must be one of 'pinned', 'clamped'; got 'free'"):
        equal_span_parameters(2, 3, ends="free")


def test_numpy_integer_arguments_accepted() -> None:
    assert frequency_parameters("clamped", "free", np.int64(2)) == frequency_parameters(
        "clamped", "free", 2
    )
    assert equal_span_parameters(np.int32(2), 2) == equal_span_parameters(2, 2)
    assert tip_mass_parameters(np.float64(1.0), 0, 1) == tip_mass_parameters(1.0, 0.0, 1)
