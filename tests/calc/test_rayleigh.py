"""Rayleigh, Rayleigh-Ritz and Dunkerley against closed forms and the FE solution.

Closed forms derived independently here with sympy (a general-purpose library), or quoted from
standard vibration texts where named.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
import sympy as sp
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from beamtone.calc import fe, handbook, rayleigh
from beamtone.calc.errors import InputError
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import InnerSupport, Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section

STEEL = LIBRARY["steel"]
BAR = build_section("rectangle", {"width": 0.04, "depth": 0.008})


def uniform(left: str, right: str, length: float = 1.0, **kw: object) -> Member:
    return Member((Segment(length, STEEL, BAR),), left, right, **kw)


def props(member: Member) -> tuple[float, float, float]:
    seg = member.segments[0]
    return seg.bending_stiffness, seg.mass_per_length, member.length


def quotient(w: sp.Expr, EI: float, m: float, L: float, tip_mass: float = 0.0) -> float:
    """Rayleigh's quotient of w(x) on [0, L], exactly with sympy."""
    x = sp.Symbol("x")
    num = sp.integrate(sp.diff(w, x, 2) ** 2, (x, 0, L)) * EI
    den = sp.integrate(w**2, (x, 0, L)) * m + tip_mass * w.subs(x, L) ** 2
    return math.sqrt(float(num / den))


# --- Dunkerley -----------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("left", "right", "c2"),
    [
        # sum 1/omega_i^2 = int m a(x,x) dx with a(x,x) the static flexibility (common practice):
        # cantilever a = x^3/(3EI) -> 12; pinned-pinned a = x^2(L-x)^2/(3EIL) -> 90;
        # clamped-clamped a = x^3(L-x)^3/(3EIL^3) -> 420.
        ("clamped", "free", 12.0),
        ("pinned", "pinned", 90.0),
        ("clamped", "clamped", 420.0),
    ],
)
def test_dunkerley_closed_forms(left: str, right: str, c2: float) -> None:
    member = uniform(left, right)
    EI, m, L = props(member)
    bound = rayleigh.dunkerley(member)
    assert bound.exact
    assert bound.frequency_hz == pytest.approx(
        math.sqrt(c2 * EI / (m * L**4)) / (2 * math.pi), rel=1e-10
    )


def test_dunkerley_with_tip_mass_and_inertia() -> None:
    """Tip flexibilities L^3/(3EI) and L/(EI) (common practice) add M and J terms."""
    M, J = 0.7, 2e-3
    member = uniform("clamped", "free", masses=(PointMass(1.0, M, J),))
    EI, m, L = props(member)
    trace = m * L**4 / (12 * EI) + M * L**3 / (3 * EI) + J * L / EI
    assert rayleigh.dunkerley(member).trace == pytest.approx(trace, rel=1e-10)


def test_dunkerley_none_with_rigid_freedom() -> None:
    bound = rayleigh.dunkerley(uniform("free", "free"))
    assert bound.frequency_hz is None and bound.reason and "rigid" in bound.reason


def test_dunkerley_with_spring_against_two_span_limit() -> None:
    """A middle spring of growing stiffness: the bound rises toward that of two pinned spans."""
    rigid = uniform("pinned", "pinned", inner_supports=(InnerSupport(0.5, "pinned"),))
    target = rayleigh.dunkerley(rigid).trace
    EI = props(rigid)[0]
    traces = [
        rayleigh.dunkerley(uniform("pinned", "pinned", springs=(Spring(0.5, c * EI),))).trace
        for c in (1e5, 1e6)
    ]
    assert traces[0] > traces[1] > target
    # the excess falls like 1/k: a Richardson step on the two lands on the rigid value
    assert traces[1] - (traces[0] - traces[1]) / 9.0 == pytest.approx(target, rel=1e-6)


# --- Rayleigh with the static shape --------------------------------------------------------------


def test_static_shape_pinned_pinned_matches_sympy() -> None:
    """Uniform-load deflection x(L^3 - 2Lx^2 + x^3): omega = 9.8767 sqrt(EI/(mL^4)), just above
    pi^2 (S. Timoshenko, Vibration Problems in Engineering; value from memory)."""
    member = uniform("pinned", "pinned")
    EI, m, L = props(member)
    x = sp.Symbol("x")
    exact = quotient(x * (L**3 - 2 * L * x**2 + x**3), EI, m, L)
    est = rayleigh.rayleigh_static(member)
    assert est.omega == pytest.approx(exact, rel=1e-8)
    assert est.omega / math.sqrt(EI / (m * L**4)) == pytest.approx(9.8767, abs=1e-4)


def test_static_shape_cantilever_with_tip_weight() -> None:
    """Own weight plus tip weight: w = q x^2(6L^2-4Lx+x^2)/24EI + P x^2(3L-x)/6EI."""
    M = 0.9
    member = uniform("clamped", "free", masses=(PointMass(1.0, M),))
    EI, m, L = props(member)
    x = sp.Symbol("x")
    q, P = m * 9.80665, M * 9.80665
    w = q * x**2 * (6 * L**2 - 4 * L * x + x**2) / (24 * EI) + P * x**2 * (3 * L - x) / (6 * EI)
    assert rayleigh.rayleigh_static(member).omega == pytest.approx(
        quotient(w, EI, m, L, M), rel=1e-8
    )


@pytest.mark.parametrize(
    ("left", "right"),
    [(a, b) for i, a in enumerate(handbook.END_CONDITIONS) for b in handbook.END_CONDITIONS[i:]],
)
def test_static_estimate_bounds_the_fundamental(left: str, right: str) -> None:
    member = uniform(left, right)
    EI, m, L = props(member)
    lam = handbook.frequency_parameters(left, right, 1)[0]
    exact = lam**2 * math.sqrt(EI / (m * L**4))
    est = rayleigh.rayleigh_static(member)
    assert exact <= est.omega <= 1.05 * exact


# --- Ritz ----------------------------------------------------------------------------------------


def test_ritz_polynomial_family_converges_from_above() -> None:
    member = uniform("clamped", "free")
    exact = np.array(fe.solve(member, 3).frequencies_hz)
    result = rayleigh.ritz(member, 6)
    first = [row[0] for row in result.convergence]
    assert all(a >= b - 1e-12 * a for a, b in zip(first, first[1:], strict=False))
    for row in result.convergence:
        k = min(len(row), 3)
        assert np.all(np.array(row[:k]) >= exact[:k] * (1 - 1e-9))
    assert result.frequencies_hz[0] == pytest.approx(exact[0], rel=1e-6)


def test_ritz_one_polynomial_on_cantilever() -> None:
    """One function: the lowest polynomial meeting w(0)=w'(0)=0 is x^2, giving
    omega = sqrt(20) sqrt(EI/(mL^4)) (a classical textbook exercise; derived here)."""
    member = uniform("clamped", "free")
    EI, m, L = props(member)
    f = rayleigh.ritz(member, 1).frequencies_hz[0]
    assert f == pytest.approx(math.sqrt(20 * EI / (m * L**4)) / (2 * math.pi), rel=1e-10)


def test_ritz_with_rigid_freedom_and_springs() -> None:
    member = uniform("free", "free", springs=(Spring(0.2, 5e3), Spring(0.8, 5e3)))
    exact = fe.solve(member, 3).frequencies_hz
    result = rayleigh.ritz(member, 8)
    assert np.all(np.array(result.frequencies_hz[:3]) >= exact * (1 - 1e-9))
    assert result.frequencies_hz[0] == pytest.approx(exact[0], rel=1e-3)


def test_ritz_inner_support() -> None:
    member = uniform("pinned", "pinned", inner_supports=(InnerSupport(0.4, "pinned"),))
    exact = fe.solve(member, 2).frequencies_hz
    result = rayleigh.ritz(member, 8)
    assert np.all(np.array(result.frequencies_hz[:2]) >= exact * (1 - 1e-9))
    # polynomials cannot follow the jump in shear at the support: slow, but from above
    assert result.frequencies_hz[0] == pytest.approx(exact[0], rel=5e-3)


# --- bracket and equivalent model ----------------------------------------------------------------


def test_equivalent_mass_of_cantilever_tip() -> None:
    """Uniform cantilever at its tip: effective mass m L / 4 (the exact mode shape has
    int phi^2 = L for phi(L) = 2; common practice)."""
    member = uniform("clamped", "free")
    result = fe.solve(member, 1)
    eq = rayleigh.equivalent_system(member, result)
    assert eq.at_m == pytest.approx(1.0)
    assert eq.mass_kg == pytest.approx(member.member_mass / 4, rel=1e-6)
    assert math.sqrt(eq.stiffness_n_per_m / eq.mass_kg) == pytest.approx(result.modes[0].omega)


def test_equivalent_at_a_node_is_refused() -> None:
    member = uniform("pinned", "pinned")
    result = fe.solve(member, 1)
    with pytest.raises(InputError) as info:
        rayleigh.equivalent_system(member, result, at=0.0)
    assert info.value.key == "estimate.reference"


def members() -> st.SearchStrategy[Member]:
    ends = st.sampled_from(handbook.END_CONDITIONS)
    pos = st.floats(0.0, 1.0)
    masses = st.lists(
        st.builds(PointMass, pos, st.floats(0.01, 5.0), st.floats(0.0, 1e-3)), max_size=3
    )
    springs = st.lists(st.builds(Spring, pos, st.floats(10.0, 1e5)), max_size=2)
    lengths = st.lists(st.floats(0.2, 0.6), min_size=1, max_size=3)
    depths = st.lists(st.floats(0.005, 0.02), min_size=3, max_size=3)

    def build(left, right, ms, ks, ls, ds):  # noqa: ANN001, ANN202
        segs = tuple(
            Segment(l_, STEEL, build_section("rectangle", {"width": 0.03, "depth": d}))
            for l_, d in zip(ls, ds, strict=False)
        )
        total = sum(ls)
        return Member(
            segs,
            left,
            right,
            tuple(replace(p, at=p.at * total) for p in ms),
            tuple(replace(s, at=s.at * total) for s in ks),
        )

    return st.builds(build, ends, ends, masses, springs, lengths, depths)


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(members())
def test_bracket_holds_for_random_members(member: Member) -> None:
    """Rayleigh >= converged FE fundamental >= Dunkerley, over random stepped members."""
    result = fe.solve(member, 1)
    upper = rayleigh.rayleigh_static(member)
    lower = rayleigh.dunkerley(member)
    br = rayleigh.bracket(lower, result, upper)
    assert br.inside, br.message
    f = result.modes[0].frequency_hz
    tol = 1e-6 * f
    assert f <= upper.frequency_hz + tol
    if lower.frequency_hz is not None:
        # within its own round-off estimate (large where a soft spring nearly frees the member)
        assert lower.frequency_hz * (1.0 - lower.uncertainty) <= f + tol


# --- expression shapes ---------------------------------------------------------------------------


def test_quarter_cosine_on_cantilever() -> None:
    """w = 1 - cos(pi x/(2L)) gives omega = 3.66 sqrt(EI/(mL^4)) (W. T. Thomson, Theory of
    Vibration with Applications, Rayleigh's method; from memory); exactly
    C^2 = pi^5/(16 (3 pi - 8)), derived here with sympy."""
    member = uniform("clamped", "free")
    est = rayleigh.rayleigh_shape(member, "1 - cos(pi*x/(2*L))")
    assert est.coefficient == pytest.approx(3.66, abs=5e-3)
    assert est.coefficient**2 == pytest.approx(math.pi**5 / (16 * (3 * math.pi - 8)), rel=1e-12)
    assert est.formula is not None and "3.664" in est.formula
    assert est.numeric_check is not None and est.numeric_check < 1e-10


def test_tip_load_shape_with_tip_mass() -> None:
    """Static tip-load shape x^2(3L - x) with tip mass M: omega^2 = 3EI/(L^3 (M + 33/140 mL))
    (standard vibration textbooks, e.g. Thomson, Rayleigh's method with the static curve)."""
    M = 2.0
    member = uniform("clamped", "free", masses=(PointMass(1.0, M),))
    EI, m, L = props(member)
    est = rayleigh.rayleigh_shape(member, "x**2*(3*L - x)")
    assert est.omega**2 == pytest.approx(3 * EI / (L**3 * (M + 33 / 140 * m * L)), rel=1e-12)
    assert est.numeric_check is not None and est.numeric_check < 1e-10


@pytest.mark.parametrize("name", ["polynomial", "trigonometric"])
@pytest.mark.parametrize(
    ("left", "right"),
    [(a, b) for i, a in enumerate(handbook.END_CONDITIONS) for b in handbook.END_CONDITIONS[i:]],
)
def test_named_shapes_are_admissible_upper_bounds(left: str, right: str, name: str) -> None:
    for pair in ((left, right), (right, left)):
        member = uniform(*pair)
        est = rayleigh.rayleigh_shape(member, name)
        EI, m, L = props(member)
        exact = handbook.frequency_parameters(left, right, 1)[0] ** 2 * math.sqrt(EI / (m * L**4))
        # an upper bound (equal where the shape is the exact mode), and a useful one
        assert exact * (1 - 1e-12) <= est.omega <= 1.05 * exact


def test_symbolic_and_quadrature_agree_with_attachments() -> None:
    member = uniform(
        "pinned",
        "pinned",
        masses=(PointMass(0.3, 0.5, 1e-3),),
        springs=(Spring(0.7, 2e3, 5.0),),
    )
    est = rayleigh.rayleigh_shape(member, "sin(pi*x/L) + sin(2*pi*x/L)/10")
    assert est.numeric_check is not None and est.numeric_check < 1e-10


@pytest.mark.parametrize(
    ("left", "right", "shape", "condition"),
    [
        ("clamped", "free", "sin(pi*x/L)", "w' = 0"),
        ("clamped", "free", "1 + (x/L)**2", "w = 0"),
        ("pinned", "pinned", "(x/L)**2", "w = 0"),
        ("clamped", "guided", "(x/L)**2", "w' = 0"),
    ],
)
def test_violating_shape_is_refused(left: str, right: str, shape: str, condition: str) -> None:
    with pytest.raises(InputError) as info:
        rayleigh.rayleigh_shape(uniform(left, right), shape)
    assert info.value.key == "estimate.shape"
    assert condition in info.value.message


def test_inner_support_condition_checked() -> None:
    member = uniform("pinned", "pinned", inner_supports=(InnerSupport(0.5, "pinned"),))
    with pytest.raises(InputError):
        rayleigh.rayleigh_shape(member, "sin(pi*x/L)")
    est = rayleigh.rayleigh_shape(member, "sin(2*pi*x/L)")
    # the exact mode of two equal pinned spans: lambda = pi per span (Blevins 1979, Table 8-1)
    EI, m, L = props(member)
    assert est.omega == pytest.approx(math.pi**2 * math.sqrt(EI / (m * (L / 2) ** 4)), rel=1e-12)


def test_kinked_shape_is_refused() -> None:
    member = uniform("pinned", "pinned", inner_supports=(InnerSupport(0.5, "pinned"),))
    with pytest.raises(InputError) as info:
        rayleigh.rayleigh_shape(member, "sin(pi*x/L)*abs(1 - 2*x/L)")
    assert "kink" in info.value.message or "continuous" in info.value.message


def test_ritz_with_given_shapes() -> None:
    member = uniform("clamped", "free")
    result = rayleigh.ritz(member, ["(x/L)**2", "(x/L)**3", "(x/L)**4"])
    exact = fe.solve(member, 2).frequencies_hz
    assert len(result.convergence) == 3
    assert result.convergence[0][0] >= result.convergence[1][0] >= result.convergence[2][0]
    assert np.all(np.array(result.frequencies_hz[:2]) >= exact * (1 - 1e-9))
    with pytest.raises(InputError) as info:
        rayleigh.ritz(member, ["(x/L)**2", "2*(x/L)**2"])
    assert info.value.key == "estimate.shapes"


coefficients = st.lists(st.integers(-1000, 1000).map(lambda n: n / 1000), min_size=3, max_size=3)


@settings(max_examples=20, deadline=None)
@given(coefficients, st.floats(0.5, 3.0))
def test_random_admissible_shapes_bound_the_fe_value(c: list[float], length: float) -> None:
    """Any shape (x/L)^2 (1 + a x/L + b (x/L)^2 + d (x/L)^3) meets a clamp at x = 0."""
    member = uniform("clamped", "free", length=length, masses=(PointMass(length, 0.3),))
    shape = f"(x/L)**2*(1 + ({c[0]})*x/L + ({c[1]})*(x/L)**2 + ({c[2]})*(x/L)**3)"
    est = rayleigh.rayleigh_shape(member, shape)
    mode = fe.solve(member, 1).modes[0]
    assert est.omega >= mode.omega * (1 - mode.estimated_error)
    assert est.numeric_check is not None and est.numeric_check < 1e-9
    with pytest.raises(InputError):
        rayleigh.rayleigh_shape(member, f"{shape} + {abs(c[0]) + 0.01}")
