"""Exact frequency parameters of uniform Euler-Bernoulli beams.

This module is the pure-mathematics cross-check for the numerical solvers: it solves the
characteristic equations of uniform, slender (Euler-Bernoulli) beams whose answers are known in
closed form up to a transcendental equation, and returns the frequency parameters ``lambda_i``.

A frequency parameter is dimensionless. The natural frequency follows from

.. math:: f_i = \\frac{\\lambda_i^2}{2 \\pi L^2} \\sqrt{\\frac{E I}{m}}

with ``f_i`` [Hz], ``L`` the reference length [m], ``E I`` the bending stiffness [N m^2] and ``m``
the mass per unit length [kg/m].

End conditions (trade terms):

``"clamped"``
    Deflection and slope zero.
``"pinned"``
    Deflection and bending moment zero (simply supported).
``"guided"``
    Slope and shear force zero: the end slides without rotating.
``"free"``
    Bending moment and shear force zero.

Every root is bracketed by a sign change of an overflow-safe form of its characteristic equation
and then refined by our own bracketed regula falsi (the Anderson-Bjorck step, with bisection
where that step would not shrink the bracket enough) to an absolute accuracy better than
``1e-12`` in ``lambda``.

References
----------
.. [1] R. D. Blevins, *Formulas for Natural Frequency and Mode Shape*, Van Nostrand Reinhold,
   1979, Table 8-1 (single-span beams with classical ends). From memory, the same chapter also
   tabulates beams continuous over several equal spans.
.. [2] W. T. Thomson, *Theory of Vibration with Applications*, Appendix D (characteristic
   functions of uniform beams).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from numbers import Integral, Real
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.model import Member

__all__ = [
    "END_CONDITIONS",
    "HandbookCheck",
    "check",
    "equal_span_parameters",
    "frequency_parameters",
    "rigid_body_modes",
    "tip_mass_parameters",
]

END_CONDITIONS: tuple[str, ...] = ("clamped", "pinned", "guided", "free")
"""Classical end conditions understood by this module, in order of decreasing restraint."""

_SPAN_END_CONDITIONS: tuple[str, ...] = ("pinned", "clamped")

# Settings of the bracketed refinement (_refine): the bracket is shrunk to ``xtol + rtol |x|``,
# which bounds the error of a root near lambda = 160 (mode 50) to well under 1e-12.
_XTOL = 1e-14
_RTOL = 4.0 * np.finfo(float).eps
_MAXITER = 200

# Scan steps [-] used to bracket roots. Roots of the classical equations are about pi apart; the
# tip-mass equation is scanned more finely because its roots move with the attached mass.
_CLASSICAL_STEP = math.pi / 16.0
_TIP_MASS_STEP = 0.02
_TIP_MASS_LOG_RATIO = 1.01
_SCAN_CHUNK = 512

_Residual = Callable[[np.ndarray], np.ndarray]


# ---------------------------------------------------------------------------------------------
# Overflow-safe elementary functions and characteristic equations
# ---------------------------------------------------------------------------------------------


def _sech(x: np.ndarray) -> np.ndarray:
    """Hyperbolic secant without overflow for large arguments.

    Parameters
    ----------
    x : numpy.ndarray
        Argument [-].

    Returns
    -------
    numpy.ndarray
        ``1 / cosh(x)`` [-].
    """
    e = np.exp(-np.abs(x))
    return 2.0 * e / (1.0 + e * e)


def _cos_cosh_minus_one(x: np.ndarray) -> np.ndarray:
    """``cos x cosh x = 1`` divided by ``cosh x``: clamped-clamped and free-free."""
    return np.cos(x) - _sech(x)


def _cos_cosh_plus_one(x: np.ndarray) -> np.ndarray:
    """``cos x cosh x = -1`` divided by ``cosh x``: clamped-free."""
    return np.cos(x) + _sech(x)


def _tan_minus_tanh(x: np.ndarray) -> np.ndarray:
    """``tan x = tanh x`` as ``sin x - cos x tanh x``: clamped-pinned and pinned-free."""
    return np.sin(x) - np.cos(x) * np.tanh(x)


def _tan_plus_tanh(x: np.ndarray) -> np.ndarray:
    """``tan x = -tanh x`` as ``sin x + cos x tanh x``: clamped-guided and guided-free."""
    return np.sin(x) + np.cos(x) * np.tanh(x)


def _sine(x: np.ndarray) -> np.ndarray:
    """``sin x = 0``: pinned-pinned and guided-guided."""
    return np.sin(x)


def _cosine(x: np.ndarray) -> np.ndarray:
    """``cos x = 0``: pinned-guided."""
    return np.cos(x)


# Each unordered end pair maps to (characteristic residual, number of rigid-body modes). The
# residuals are the 4x4 boundary determinants of A cos + B sin + C cosh + D sinh divided by
# powers of lambda and by cosh(lambda), which removes the trivial root and the overflow.
_PAIRS: dict[frozenset[str], tuple[_Residual, int]] = {
    frozenset({"clamped"}): (_cos_cosh_minus_one, 0),
    frozenset({"clamped", "pinned"}): (_tan_minus_tanh, 0),
    frozenset({"clamped", "guided"}): (_tan_plus_tanh, 0),
    frozenset({"clamped", "free"}): (_cos_cosh_plus_one, 0),
    frozenset({"pinned"}): (_sine, 0),
    frozenset({"pinned", "guided"}): (_cosine, 0),
    frozenset({"pinned", "free"}): (_tan_minus_tanh, 1),
    frozenset({"guided"}): (_sine, 1),
    frozenset({"guided", "free"}): (_tan_plus_tanh, 1),
    frozenset({"free"}): (_cos_cosh_minus_one, 2),
}

# No classical pair has a flexible root below pi/2, so scans start safely above lambda = 0,
# where the residuals of the pairs with rigid-body modes vanish.
_CLASSICAL_START = 0.5


# ---------------------------------------------------------------------------------------------
# Argument checks
# ---------------------------------------------------------------------------------------------


def _check_choice(name: str, value: object, choices: tuple[str, ...]) -> str:
    """Return ``value`` if it is one of ``choices``, otherwise raise ``ValueError``."""
    if not isinstance(value, str) or value not in choices:
        expected = ", ".join(repr(c) for c in choices)
        raise ValueError(f"{name} must be one of {expected}; got {value!r}")
    return value


def _check_positive_int(name: str, value: object) -> int:
    """Return ``value`` as ``int`` if it is an integer >= 1, otherwise raise ``ValueError``."""
    if isinstance(value, bool) or not isinstance(value, Integral) or value < 1:
        raise ValueError(f"{name} must be an integer >= 1; got {value!r}")
    return int(value)


def _check_ratio(name: str, value: object) -> float:
    """Return ``value`` as ``float`` if it is finite and >= 0, otherwise raise ``ValueError``."""
    if isinstance(value, bool) or not isinstance(value, Real):
        raise ValueError(f"{name} must be a finite real number >= 0; got {value!r}")
    result = float(value)
    if not math.isfinite(result) or result < 0.0:
        raise ValueError(f"{name} must be a finite real number >= 0; got {value!r}")
    return result


# ---------------------------------------------------------------------------------------------
# Root finding
# ---------------------------------------------------------------------------------------------


def _refine(residual: _Residual, a: float, b: float) -> float:
    """Refine a bracketed root of ``residual`` on ``[a, b]``.

    Regula falsi with the Anderson-Bjorck step (superlinear, and the bracket is kept at
    every step), down to a bracket of ``_XTOL + _RTOL |x|``; a plain bisection step is taken
    whenever the interpolated point would not shrink the bracket enough.  Written here
    rather than taken from scipy.optimize to keep start-up light.
    """
    fa = float(residual(np.float64(a)))
    fb = float(residual(np.float64(b)))
    if fa == 0.0:
        return a
    if fb == 0.0:
        return b
    for _ in range(_MAXITER):
        width = b - a
        if abs(width) <= _XTOL + _RTOL * max(abs(a), abs(b)):
            break
        x = b - fb * width / (fb - fa) if fb != fa else 0.5 * (a + b)
        if (
            not (min(a, b) < x < max(a, b))
            or abs(x - a) < 1e-3 * abs(width)
            or (abs(b - x) < 1e-3 * abs(width))
        ):
            x = 0.5 * (a + b)
        fx = float(residual(np.float64(x)))
        if fx == 0.0:
            return x
        if (fx > 0.0) == (fb > 0.0):
            # the new point replaces b; keep a, and scale fa down (Anderson-Bjorck)
            m = 1.0 - fx / fb
            fa = fa * (m if m > 0.0 else 0.5)
            b, fb = x, fx
        else:
            a, fa = b, fb
            b, fb = x, fx
    return 0.5 * (a + b)


def _scan_roots(residual: _Residual, grid: Iterator[np.ndarray], count: int) -> list[float]:
    """Find the first ``count`` roots of ``residual`` by scanning ``grid`` for sign changes.

    Parameters
    ----------
    residual : callable
        Vectorised residual of the characteristic equation.
    grid : iterator of numpy.ndarray
        Increasing abscissae [-], delivered in consecutive chunks.
    count : int
        Number of roots wanted.

    Returns
    -------
    list of float
        The roots in increasing order [-].
    """
    roots: list[float] = []
    prev_x: float | None = None
    prev_f = 0.0
    for chunk in grid:
        values = residual(chunk)
        if prev_x is None:
            xs, fs = chunk, values
        else:
            xs = np.concatenate(([prev_x], chunk))
            fs = np.concatenate(([prev_f], values))
        for i in range(len(xs) - 1):
            if fs[i + 1] == 0.0:
                roots.append(float(xs[i + 1]))
            elif fs[i] * fs[i + 1] < 0.0:
                roots.append(_refine(residual, float(xs[i]), float(xs[i + 1])))
            if len(roots) == count:
                return roots
        prev_x, prev_f = float(xs[-1]), float(fs[-1])
    raise RuntimeError("root scan ended before the requested number of roots was found")


def _linear_grid(start: float, step: float) -> Iterator[np.ndarray]:
    """Yield an unbounded, evenly spaced grid from ``start`` in chunks."""
    offset = 0
    while True:
        yield start + step * np.arange(offset, offset + _SCAN_CHUNK, dtype=float)
        offset += _SCAN_CHUNK


def _classical_roots(residual: _Residual, count: int) -> tuple[float, ...]:
    """First ``count`` positive roots of a classical characteristic residual."""
    grid = _linear_grid(_CLASSICAL_START, _CLASSICAL_STEP)
    return tuple(_scan_roots(residual, grid, count))


# ---------------------------------------------------------------------------------------------
# Public functions
# ---------------------------------------------------------------------------------------------


def rigid_body_modes(left: str, right: str) -> int:
    """Number of rigid-body modes of a free-standing uniform beam.

    Parameters
    ----------
    left, right : str
        End conditions, each one of :data:`END_CONDITIONS`. Their order does not matter.

    Returns
    -------
    int
        Number of zero-frequency modes: 0, 1 (pinned-free: rotation about the pin; guided-free and
        guided-guided: translation) or 2 (free-free: translation and rotation).

    Raises
    ------
    ValueError
        If either end is not one of :data:`END_CONDITIONS`.
    """
    left = _check_choice("left", left, END_CONDITIONS)
    right = _check_choice("right", right, END_CONDITIONS)
    return _PAIRS[frozenset({left, right})][1]


def frequency_parameters(left: str, right: str, count: int) -> tuple[float, ...]:
    """Frequency parameters of the flexible modes of a uniform beam with classical ends.

    Parameters
    ----------
    left, right : str
        End conditions, each one of :data:`END_CONDITIONS`. Their order does not matter.
    count : int
        Number of flexible modes wanted (>= 1). Rigid-body modes (``lambda = 0``) are excluded.

    Returns
    -------
    tuple of float
        ``lambda_1 < lambda_2 < ...`` [-], with ``f_i = lambda_i**2 / (2 pi L**2) sqrt(EI/m)``
        for beam length ``L`` [m], bending stiffness ``EI`` [N m^2], mass per length ``m`` [kg/m].

    Raises
    ------
    ValueError
        If an end is unknown or ``count`` is not a positive integer.

    Notes
    -----
    Characteristic equations, written with ``x = lambda`` in overflow-safe form:

    =================================  ===============================  ============
    ends                               equation                         rigid modes
    =================================  ===============================  ============
    clamped-clamped, free-free         ``cos x - 1/cosh x = 0``         0, 2
    clamped-free                       ``cos x + 1/cosh x = 0``         0
    clamped-pinned, pinned-free        ``sin x - cos x tanh x = 0``     0, 1
    clamped-guided, guided-free        ``sin x + cos x tanh x = 0``     0, 1
    pinned-pinned, guided-guided       ``sin x = 0``                    0, 1
    pinned-guided                      ``cos x = 0``                    0
    =================================  ===============================  ============

    Examples
    --------
    >>> round(frequency_parameters("clamped", "free", 1)[0], 6)
    1.875104
    """
    left = _check_choice("left", left, END_CONDITIONS)
    right = _check_choice("right", right, END_CONDITIONS)
    count = _check_positive_int("count", count)
    residual, _ = _PAIRS[frozenset({left, right})]
    return _classical_roots(residual, count)


def _tip_mass_residual(mass_ratio: float, inertia_ratio: float) -> _Residual:
    """Overflow-safe frequency equation of a cantilever with tip mass and rotary inertia.

    With ``x = lambda``, ``mu = mass_ratio`` and ``j = inertia_ratio`` the boundary determinant is
    proportional to

    ``1 + cos x cosh x + mu x (cos x sinh x - sin x cosh x)
    - j x^3 (sin x cosh x + cos x sinh x) + mu j x^4 (1 - cos x cosh x)``,

    which is divided here by ``cosh x``.
    """
    mu, j = mass_ratio, inertia_ratio

    def residual(x: np.ndarray) -> np.ndarray:
        c, s, t, h = np.cos(x), np.sin(x), np.tanh(x), _sech(x)
        return c + h + mu * x * (c * t - s) - j * x**3 * (s + c * t) + mu * j * x**4 * (h - c)

    return residual


def _tip_mass_grid(mass_ratio: float, inertia_ratio: float) -> Iterator[np.ndarray]:
    """Scan grid for the tip-mass equation: geometric below ``lambda = 1``, linear above.

    The start lies below half of Dunkerley's lower bound on the fundamental,
    ``lambda_1**4 >= 1 / (1/12 + mu/3 + j)`` (sum of the flexibility-weighted masses of the
    cantilever, its tip mass and its tip inertia), so no root is missed below the grid.
    """
    bound = (1.0 / (1.0 / 12.0 + mass_ratio / 3.0 + inertia_ratio)) ** 0.25
    start = min(0.5 * bound, 0.5)
    steps = math.ceil(math.log(1.0 / start) / math.log(_TIP_MASS_LOG_RATIO))
    yield np.geomspace(start, 1.0, steps + 1)[:-1]
    yield from _linear_grid(1.0, _TIP_MASS_STEP)


def tip_mass_parameters(mass_ratio: float, inertia_ratio: float, count: int) -> tuple[float, ...]:
    """Frequency parameters of a cantilever carrying a tip mass with rotary inertia.

    The beam is clamped at ``x = 0`` and free at ``x = L``, where it carries a rigid body of mass
    ``M = mass_ratio * m * L`` [kg] and rotary inertia ``J = inertia_ratio * m * L**3`` [kg m^2]
    about the bending axis through the tip.

    Parameters
    ----------
    mass_ratio : float
        ``M / (m L)`` [-], finite and >= 0.
    inertia_ratio : float
        ``J / (m L**3)`` [-], finite and >= 0.
    count : int
        Number of modes wanted (>= 1).

    Returns
    -------
    tuple of float
        ``lambda_1 < lambda_2 < ...`` [-], with ``f_i = lambda_i**2 / (2 pi L**2) sqrt(EI/m)``.

    Raises
    ------
    ValueError
        If a ratio is negative or not finite, or ``count`` is not a positive integer.

    Notes
    -----
    Boundary conditions, for harmonic motion at circular frequency ``omega`` [rad/s]:
    ``w(0) = w'(0) = 0``, ``EI w''(L) = J omega**2 w'(L)`` and ``EI w'''(L) = -M omega**2 w(L)``.
    The 4x4 determinant of ``w = A cos + B sin + C cosh + D sinh`` (of ``lambda x / L``) then
    reduces, with ``x = lambda``, ``mu = mass_ratio``, ``j = inertia_ratio``, to

    ``1 + cos x cosh x + mu x (cos x sinh x - sin x cosh x)
    - j x^3 (sin x cosh x + cos x sinh x) + mu j x^4 (1 - cos x cosh x) = 0``.

    ``mu = j = 0`` gives the plain cantilever; as ``mu`` grows the first root falls towards zero
    and the others approach the clamped-pinned roots.

    Examples
    --------
    >>> round(tip_mass_parameters(0.0, 0.0, 1)[0], 6)
    1.875104
    """
    mu = _check_ratio("mass_ratio", mass_ratio)
    j = _check_ratio("inertia_ratio", inertia_ratio)
    count = _check_positive_int("count", count)
    residual = _tip_mass_residual(mu, j)
    return tuple(_scan_roots(residual, _tip_mass_grid(mu, j), count))


def _band_residual(cos_phase: float) -> _Residual:
    """Band equation of a beam over equal pinned spans, divided by ``cosh x``.

    ``sin x cosh x - cos x sinh x + cos_phase (sinh x - sin x) = 0``, where ``cos_phase`` is
    ``cos(p pi / N)``.
    """

    def residual(x: np.ndarray) -> np.ndarray:
        t = np.tanh(x)
        return np.sin(x) - np.cos(x) * t + cos_phase * (t - np.sin(x) * _sech(x))

    return residual


def equal_span_parameters(spans: int, count: int, ends: str = "pinned") -> tuple[float, ...]:
    """Frequency parameters of a uniform beam continuous over equal spans.

    The beam of total length ``L`` [m] rests on ``spans - 1`` rigid inner supports (zero
    deflection, free rotation) that divide it into ``spans`` equal spans of length
    ``l = L / spans`` [m]. Both outer ends are ``ends``.

    Parameters
    ----------
    spans : int
        Number of equal spans (>= 1).
    count : int
        Number of modes wanted (>= 1).
    ends : {"pinned", "clamped"}, optional
        Condition at both outer ends. Default ``"pinned"``.

    Returns
    -------
    tuple of float
        ``lambda_1 <= lambda_2 <= ...`` [-] based on the SPAN length ``l``:
        ``f_i = lambda_i**2 / (2 pi l**2) sqrt(EI/m)``.

    Raises
    ------
    ValueError
        If ``spans`` or ``count`` is not a positive integer or ``ends`` is unknown.

    Notes
    -----
    Exact solution by the slope-deflection (dynamic stiffness) method. A span with zero end
    deflections and end slopes ``theta_a``, ``theta_b`` carries end curvatures
    ``a theta_a + b theta_b`` and ``-(b theta_a + a theta_b)``, with
    ``a / b = (sin x cosh x - cos x sinh x) / (sinh x - sin x)`` and ``x = lambda``. Continuity
    of the bending moment at the supports gives ``b theta_(k-1) + 2 a theta_k + b theta_(k+1) = 0``,
    solved by ``theta_k = cos(k p pi / N)`` (pinned ends) or ``sin(k p pi / N)`` (clamped ends),
    so for each ``p = 1, ..., N - 1`` the modes satisfy

    ``sin x cosh x - cos x sinh x + cos(p pi / N) (sinh x - sin x) = 0``.

    The spectrum falls into bands ``k pi <= lambda <= lambda_k^CC`` (``lambda_k^CC`` the k-th
    clamped-clamped root). Each band holds exactly one root for every ``p`` plus one more: the
    band's lower edge ``k pi`` (every span a pinned-pinned mode) for pinned ends, or its upper
    edge ``lambda_k^CC`` (every span a clamped-clamped mode) for clamped ends. Each band
    equation changes sign between the band edges, so every root is bracketed without a scan.

    A published table for beams over equal spans: R. D. Blevins, *Formulas for Natural
    Frequency and Mode Shape*, 1979, chapter 8 (from memory).

    Examples
    --------
    >>> [round(v, 6) for v in equal_span_parameters(2, 2)]
    [3.141593, 3.926602]
    """
    spans = _check_positive_int("spans", spans)
    count = _check_positive_int("count", count)
    ends = _check_choice("ends", ends, _SPAN_END_CONDITIONS)

    bands = -(-count // spans)
    clamped_clamped = _classical_roots(_cos_cosh_minus_one, bands)
    phases = [math.cos(p * math.pi / spans) for p in range(1, spans)]
    result: list[float] = []
    for k in range(1, bands + 1):
        lower, upper = k * math.pi, clamped_clamped[k - 1]
        band = [_refine(_band_residual(c), lower, upper) for c in phases]
        band.append(lower if ends == "pinned" else upper)
        result.extend(sorted(band))
    return tuple(result[:count])


# ---------------------------------------------------------------------------------------------
# Cross-check of a member against the handbook cases
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class HandbookCheck:
    """Handbook frequencies of a member that matches a tabulated case.

    Attributes
    ----------
    case : str
        Plain description of the case, e.g. ``"uniform clamped-free"``.
    parameters : tuple of float
        Frequency parameters lambda_i [-] of the flexible modes.
    reference_length : float
        The length the parameters refer to [m] (the member, or one span).
    frequencies_hz : tuple of float
        f_i = lambda_i^2 / (2 pi l^2) sqrt(EI/m) [Hz].
    source : str
        The published source the case is tabulated in.
    """

    case: str
    parameters: tuple[float, ...]
    reference_length: float
    frequencies_hz: tuple[float, ...]
    source: str


_TABLE_SOURCE = (
    "R. D. Blevins, Formulas for Natural Frequency and Mode Shape (1979), Table 8-1; "
    "W. T. Thomson, Theory of Vibration with Applications, Appendix D"
)
_TIP_SOURCE = (
    "cantilever with tip mass and rotary inertia, frequency equation from the boundary "
    "conditions (standard vibration texts; R. D. Blevins, Formulas for Natural Frequency and "
    "Mode Shape, 1979, chapter 8)"
)
_SPAN_SOURCE = (
    "uniform beam continuous over equal spans, exact slope-deflection solution (R. D. Blevins, "
    "Formulas for Natural Frequency and Mode Shape, 1979, chapter 8, multi-span beams)"
)


def check(member: Member, count: int) -> HandbookCheck | None:
    """Handbook frequencies for a member that is one of the tabulated cases, else None.

    Cases: a uniform member with classical ends and nothing attached; a uniform
    cantilever carrying only a point mass (and rotary inertia) at its free end;
    a uniform member over equal spans on pinned inner supports with both outer
    ends pinned or both clamped.  No axial force in any case.

    Parameters
    ----------
    member : Member
    count : int
        Number of flexible modes.

    Returns
    -------
    HandbookCheck or None
    """
    if not member.is_uniform or member.axial_force != 0.0 or member.springs:
        return None
    seg = member.segments[0]
    EI, m, L = seg.bending_stiffness, seg.mass_per_length, member.length

    def result(case: str, lam: tuple[float, ...], length: float, source: str) -> HandbookCheck:
        scale = math.sqrt(EI / m) / (2.0 * math.pi * length**2)
        return HandbookCheck(case, lam, length, tuple(x * x * scale for x in lam), source)

    if not member.masses and not member.inner_supports:
        lam = frequency_parameters(member.left, member.right, count)
        return result(f"uniform {member.left}-{member.right}", lam, L, _TABLE_SOURCE)
    if member.masses and not member.inner_supports:
        ends = (member.left, member.right)
        if sorted(ends) != ["clamped", "free"]:
            return None
        tip = L if member.right == "free" else 0.0
        if any(abs(p.at - tip) > 1e-9 * L for p in member.masses):
            return None
        M = sum(p.mass for p in member.masses)
        J = sum(p.rotary_inertia for p in member.masses)
        lam = tip_mass_parameters(M / (m * L), J / (m * L**3), count)
        return result("uniform cantilever with tip mass", lam, L, _TIP_SOURCE)
    if member.inner_supports and not member.masses:
        if member.left != member.right or member.left not in _SPAN_END_CONDITIONS:
            return None
        if any(s.kind != "pinned" for s in member.inner_supports):
            return None
        spans = len(member.inner_supports) + 1
        span = L / spans
        positions = sorted(s.at for s in member.inner_supports)
        if any(abs(p - (i + 1) * span) > 1e-9 * L for i, p in enumerate(positions)):
            return None
        lam = equal_span_parameters(spans, count, member.left)
        return result(f"{spans} equal spans, {member.left} ends", lam, span, _SPAN_SOURCE)
    return None
