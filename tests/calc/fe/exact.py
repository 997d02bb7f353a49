"""An exact reference for a member in bending: the transfer-matrix determinant in mpmath.

Independent of the finite-element code: on each uniform piece between stations the
Euler-Bernoulli equation with a constant axial force P,

    EI w'''' - P w'' - m omega^2 w = 0,

is solved in closed form (cosh, sinh, cos, sin of the two wavenumbers), and the state
(w, w', EI w'', S = EI w''' - P w') is carried along the member.  At a station a point mass M,
rotary inertia J, spring k and rotational spring k_r make S jump by (M omega^2 - k) w and
EI w'' jump by (k_r - J omega^2) w'; an inner support adds its reaction as an unknown and its
held components as equations (common practice: the transfer-matrix method, e.g. E. C. Pestel
and F. A. Leckie, Matrix Methods in Elastomechanics, 1963).  The natural frequencies are the
roots of the determinant of the end and support conditions, found in 30-digit arithmetic.

The reference is itself checked against the published table of uniform-beam frequency
parameters in ``test_exact_reference.py``.
"""

from __future__ import annotations

import math

import mpmath as mp

from beamtone.calc.model import HOLDS, Member

__all__ = ["determinant", "frequencies", "root_near"]

_DPS = 30

# Which state components an end condition sets to zero: w=0, w'=1, EI w''=2, S=3.
_END_ROWS = {"clamped": (0, 1), "pinned": (0, 2), "guided": (1, 3), "free": (2, 3)}


def _pieces(member: Member) -> list[tuple[float, float, int]]:
    """(start, end, segment index) of the uniform pieces between all stations [m]."""
    points = {0.0, member.length, *member.boundaries}
    points |= {p.at for p in member.masses} | {s.at for s in member.springs}
    points |= {s.at for s in member.inner_supports}
    xs = sorted(min(max(p, 0.0), member.length) for p in points)
    out = []
    for a, b in zip(xs[:-1], xs[1:], strict=True):
        if b > a:
            out.append((a, b, member.segment_index(0.5 * (a + b))))
    return out


def _transfer(EI: mp.mpf, m: mp.mpf, P: mp.mpf, omega: mp.mpf, h: mp.mpf) -> mp.matrix:
    """State transfer matrix over a uniform length h: y(h) = T y(0)."""
    root = mp.sqrt(P * P + 4 * EI * m * omega**2)
    alpha = mp.sqrt((P + root) / (2 * EI))
    beta = mp.sqrt((root - P) / (2 * EI))

    def state(x: mp.mpf) -> mp.matrix:
        ch, sh = mp.cosh(alpha * x), mp.sinh(alpha * x)
        c, s = mp.cos(beta * x), mp.sin(beta * x)
        a, b = alpha, beta
        # columns: cosh, sinh, cos, sin; rows: w, w', w'', w'''
        d = [
            [ch, sh, c, s],
            [a * sh, a * ch, -b * s, b * c],
            [a**2 * ch, a**2 * sh, -(b**2) * c, -(b**2) * s],
            [a**3 * sh, a**3 * ch, b**3 * s, -(b**3) * c],
        ]
        rows = [
            d[0],
            d[1],
            [EI * v for v in d[2]],
            [EI * d[3][j] - P * d[1][j] for j in range(4)],
        ]
        return mp.matrix(rows)

    # The inverse of state(0) in closed form: (w, EI w'') involve only the cosh and cos
    # coefficients, (w', S) only the sinh and sin ones, each a 2x2 system (alpha, beta > 0 for
    # omega > 0).  The matrix mpmath's LU inverse gives, at half the cost of a root scan.
    a2, b2 = alpha**2, beta**2
    s = EI * (a2 + b2)
    d = -s * alpha * beta  # the determinant of the (w', S) block
    inverse = mp.matrix(
        [
            [EI * b2 / s, 0, 1 / s, 0],
            [0, (-EI * beta**3 - P * beta) / d, 0, -beta / d],
            [EI * a2 / s, 0, -1 / s, 0],
            [0, -(EI * alpha**3 - P * alpha) / d, 0, alpha / d],
        ]
    )
    return state(h) * inverse


def determinant(member: Member, omega: float) -> mp.mpf:
    """The determinant of the end and support conditions at circular frequency omega [rad/s]."""
    with mp.workdps(_DPS):
        w2 = mp.mpf(omega) ** 2
        P = mp.mpf(member.axial_force)
        inner = {s.at: s.kind for s in member.inner_supports}
        extra = sum(HOLDS[k][0] + HOLDS[k][1] for k in inner.values())
        n = 4 + extra
        Y = mp.zeros(4, n)
        for i in range(4):
            Y[i, i] = 1
        equations: list[list[mp.mpf]] = []
        for row in _END_ROWS[member.left]:
            equations.append([Y[row, j] for j in range(n)])
        column = 4

        def station(x: float, Y: mp.matrix, column: int) -> int:
            for pm in member.masses:
                if pm.at == x:
                    for j in range(n):
                        Y[3, j] += pm.mass * w2 * Y[0, j]
                        Y[2, j] -= pm.rotary_inertia * w2 * Y[1, j]
            for sp in member.springs:
                if sp.at == x:
                    for j in range(n):
                        Y[3, j] -= sp.stiffness * Y[0, j]
                        Y[2, j] += sp.rotational_stiffness * Y[1, j]
            if x in inner:
                holds_w, holds_slope = HOLDS[inner[x]]
                if holds_w:
                    equations.append([Y[0, j] for j in range(n)])
                    Y[3, column] += 1
                    column += 1
                if holds_slope:
                    equations.append([Y[1, j] for j in range(n)])
                    Y[2, column] += 1
                    column += 1
            return column

        pieces = _pieces(member)
        column = station(0.0, Y, column)
        for a, b, seg in pieces:
            s = member.segments[seg]
            T = _transfer(
                mp.mpf(s.bending_stiffness),
                mp.mpf(s.mass_per_length),
                P,
                mp.sqrt(w2),
                mp.mpf(b) - mp.mpf(a),
            )
            Y = T * Y
            column = station(b, Y, column)
        for row in _END_ROWS[member.right]:
            equations.append([Y[row, j] for j in range(n)])
        A = mp.matrix(equations)
        # scale each row to unit size: only the sign and the roots matter
        for i in range(A.rows):
            big = max(abs(A[i, j]) for j in range(A.cols)) or 1
            for j in range(A.cols):
                A[i, j] /= big
        try:
            return mp.det(A)
        except (TypeError, ZeroDivisionError):  # a column of zeros: mpmath's LU gives up
            return mp.mpf(0)


def root_near(member: Member, f_hz: float, window: float = 1e-3) -> float | None:
    """The exact natural frequency [Hz] within ``f_hz * (1 +- window)``, or None.

    Where the window holds several roots, the one nearest ``f_hz``.
    """
    grid = [f_hz * (1.0 + window * (2.0 * k / 40.0 - 1.0)) for k in range(41)]
    roots = _roots_on(member, grid)
    if not roots:
        return None
    return min(roots, key=lambda r: abs(r - f_hz))


def frequencies(member: Member, f_max: float, points: int = 4000) -> list[float]:
    """Every exact natural frequency [Hz] up to ``f_max`` found by sign changes on a grid.

    The grid is uniform in sqrt(f) (roots of beams are about evenly spaced in it).  Two roots
    closer than one grid step can hide from the scan; callers compare with a list found
    independently.
    """
    lo = math.sqrt(f_max) * 1e-4
    grid = [(lo + (math.sqrt(f_max) - lo) * k / points) ** 2 for k in range(points + 1)]
    return _roots_on(member, grid)


def _roots_on(member: Member, grid: list[float]) -> list[float]:
    values = [determinant(member, 2.0 * math.pi * f) for f in grid]
    roots = []
    for (a, fa), (b, fb) in zip(
        zip(grid[:-1], values[:-1], strict=True),
        zip(grid[1:], values[1:], strict=True),
        strict=True,
    ):
        if fa == 0:
            roots.append(a)
        elif fa * fb < 0:
            roots.append(_bisect(member, a, b, fa))
    return roots


def _bisect(member: Member, a: float, b: float, fa: mp.mpf) -> float:
    """The root in [a, b] [Hz] by regula falsi with the Illinois step (the bracket is kept)."""
    with mp.workdps(_DPS):
        lo, hi = mp.mpf(a), mp.mpf(b)
        flo, fhi = fa, determinant(member, 2 * mp.pi * hi)  # type: ignore[arg-type]
        side = 0
        for _ in range(200):
            x = hi - fhi * (hi - lo) / (fhi - flo) if fhi != flo else (lo + hi) / 2
            if not min(lo, hi) < x < max(lo, hi):
                x = (lo + hi) / 2
            fx = determinant(member, 2 * mp.pi * x)  # type: ignore[arg-type]
            if fx == 0 or hi - lo <= mp.mpf(10) ** -15 * hi:
                return float(x)
            if (fx > 0) == (fhi > 0):
                hi, fhi = x, fx
                if side == 1:
                    flo /= 2
                side = 1
            else:
                lo, flo = x, fx
                if side == -1:
                    fhi /= 2
                side = -1
            if abs(hi - lo) <= mp.mpf(10) ** -15 * abs(x):
                break
        return float((lo + hi) / 2)
