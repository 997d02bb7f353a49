"""Finite-element eigen solution against exact and published results.

Exact frequency parameters come from ``calc.handbook`` (itself checked digit by digit against
R. D. Blevins, Formulas for Natural Frequency and Mode Shape, 1979, Table 8-1, in
tests/calc/test_handbook.py) and from the published table in ../shared/reference/.
"""

from __future__ import annotations

import csv
import math
from dataclasses import replace

import numpy as np
import pytest
import scipy.integrate
import scipy.linalg

from beamtone.calc import fe, handbook
from beamtone.calc.errors import InputError
from beamtone.calc.materials import LIBRARY, Material
from beamtone.calc.model import InnerSupport, Member, PointMass, Segment, Spring, rigid_body_count
from beamtone.calc.sections import build_section
from tests.reference import reference_file

REFERENCE = reference_file("uniform-beam-frequency-parameters.csv")
STEEL = LIBRARY["steel"]
BAR = build_section("rectangle", {"width": 0.04, "depth": 0.008})
PAIRS = [(a, b) for i, a in enumerate(handbook.END_CONDITIONS) for b in handbook.END_CONDITIONS[i:]]


def uniform(left: str, right: str, length: float = 1.0, **kw: object) -> Member:
    return Member((Segment(length, STEEL, BAR),), left, right, **kw)


def scale(member: Member, length: float | None = None) -> float:
    """sqrt(EI/m) / (2 pi l^2) [Hz]: f = lambda^2 * scale."""
    seg = member.segments[0]
    L = member.length if length is None else length
    return math.sqrt(seg.bending_stiffness / seg.mass_per_length) / (2.0 * math.pi * L**2)


def published_rows() -> list[dict[str, str]]:
    lines = [ln for ln in REFERENCE.read_text().splitlines() if not ln.startswith("#")]
    return list(csv.DictReader(lines))


# --- classical ends ------------------------------------------------------------------------------


@pytest.mark.parametrize("row", published_rows(), ids=lambda r: f"{r['end_a']}-{r['end_b']}")
def test_published_table(row: dict[str, str]) -> None:
    """All ten end pairs against Blevins (1979) Table 8-1 / Thomson, Appendix D, as printed.

    The table prints 8 decimals of lambda, so lambda^2 (and f) is known to about 1e-8.
    """
    member = uniform(row["end_a"], row["end_b"])
    result = fe.solve(member, 5)
    assert result.rigid_body_modes == int(row["rigid_body_modes"])
    for i, mode in enumerate(result.modes):
        exact = float(row[f"lambda_{i + 1}"]) ** 2 * scale(member)
        assert mode.frequency_hz == pytest.approx(exact, rel=1e-6 + 2e-8)


@pytest.mark.parametrize(("left", "right"), PAIRS)
def test_error_estimate_is_honest(left: str, right: str) -> None:
    """Every mode meets 1e-6 and its true error never exceeds its estimate (roots to 1e-12)."""
    member = uniform(left, right, length=0.8)
    result = fe.solve(member, 6)
    exact = np.array(handbook.frequency_parameters(left, right, 6)) ** 2 * scale(member)
    error = np.abs(result.frequencies_hz - exact) / exact
    estimate = np.array([m.estimated_error for m in result.modes])
    assert np.all(error <= 1e-6)
    assert np.all(error <= estimate)
    # converged from above (consistent mass), to within round-off
    assert np.all(result.frequencies_hz >= exact * (1.0 - 1e-11))


def test_convergence_rate_is_h4() -> None:
    """Hermite cubic elements: frequency error falls as h^4 (common practice)."""
    member = uniform("clamped", "free")
    exact = np.array(handbook.frequency_parameters("clamped", "free", 3)) ** 2 * scale(member)
    counts = np.array([4, 8, 16, 32])
    errors = []
    for n in counts:
        result = fe.solve(member, 3, elements=int(n))
        errors.append(np.abs(result.frequencies_hz - exact) / exact)
    errors_arr = np.array(errors)
    for mode in range(3):
        slope = np.polyfit(np.log(1.0 / counts), np.log(errors_arr[:, mode]), 1)[0]
        assert slope == pytest.approx(4.0, abs=0.25)


def test_forced_mesh_estimate_covers_its_error() -> None:
    member = uniform("pinned", "pinned")
    exact = np.array(handbook.frequency_parameters("pinned", "pinned", 5)) ** 2 * scale(member)
    result = fe.solve(member, 5, elements=24)
    error = np.abs(result.frequencies_hz - exact) / exact
    assert np.all(error <= [m.estimated_error for m in result.modes])
    assert any("forced mesh" in w for w in result.warnings)


def test_fine_forced_mesh_stays_accurate_and_warns_of_roundoff() -> None:
    """Thousands of elements: round-off, not discretization, limits accuracy; results hold."""
    member = uniform("clamped", "free")
    exact = np.array(handbook.frequency_parameters("clamped", "free", 3)) ** 2 * scale(member)
    result = fe.solve(member, 3, elements=3000)
    error = np.abs(result.frequencies_hz - exact) / exact
    assert np.all(error <= 1e-7)
    assert np.all(error <= [m.estimated_error for m in result.modes])
    assert result.roundoff_dominated
    assert any("round-off" in w for w in result.warnings)


# --- soundness checks --------------------------------------------------------------------------


def test_orthogonality_and_definiteness() -> None:
    member = uniform("clamped", "free", masses=(PointMass(0.7, 0.4, 1e-4),))
    result = fe.solve(member, 5)
    assert result.mass_orthogonality < 1e-10
    assert result.stiffness_orthogonality < 1e-9
    assert result.stiffness_definiteness == "positive definite"
    assert result.mass_definiteness == "positive definite"
    free = fe.solve(uniform("free", "free"), 3)
    assert free.stiffness_definiteness == "positive semi-definite with 2 rigid-body modes"


def test_unit_modal_mass_and_display_shape() -> None:
    member = uniform("clamped", "free")
    mesh = fe.build_mesh(member, 60)
    system = fe.assemble(member, mesh)
    result = fe.solve(member, 2, elements=60)
    mode = result.modes[0]
    vec = np.zeros(system.n_full)
    vec[0::2] = mode.w_modal
    vec[1::2] = mode.theta_modal * system.scale
    phi = vec[system.free]
    assert float(phi @ (system.M @ phi)) == pytest.approx(1.0, rel=1e-10)
    assert mode.w[-1] == pytest.approx(1.0)  # largest deflection at the tip, scaled to 1
    assert np.max(np.abs(mode.w)) == pytest.approx(1.0)


def cantilever_shape(lam: float, x: np.ndarray) -> np.ndarray:
    sigma = (math.sinh(lam) - math.sin(lam)) / (math.cosh(lam) + math.cos(lam))
    return np.cosh(lam * x) - np.cos(lam * x) - sigma * (np.sinh(lam * x) - np.sin(lam * x))


def test_effective_mass_of_uniform_cantilever() -> None:
    """Effective modal mass fractions against the exact mode shapes, integrated with scipy.

    For a uniform cantilever the fractions are about 61.3, 18.8, 6.5, 3.3 % (common
    practice, from memory); here they are computed from the exact shapes by quadrature.
    """
    member = uniform("clamped", "free")
    result = fe.solve(member, 4)
    lams = handbook.frequency_parameters("clamped", "free", 4)
    for mode, lam in zip(result.modes, lams, strict=True):
        num = scipy.integrate.quad(lambda x, q: cantilever_shape(q, np.array(x)), 0, 1, (lam,))[0]
        den = scipy.integrate.quad(
            lambda x, q: cantilever_shape(q, np.array(x)) ** 2, 0, 1, (lam,)
        )[0]
        assert mode.effective_mass_fraction == pytest.approx(num**2 / den, rel=1e-6)
    fractions = [m.effective_mass_fraction for m in result.modes]
    assert fractions == pytest.approx([0.613, 0.188, 0.065, 0.033], abs=6e-4)
    assert result.modes[-1].cumulative_mass_fraction == pytest.approx(sum(fractions))


# --- rigid-body freedom ------------------------------------------------------------------------


@pytest.mark.parametrize(("left", "right"), PAIRS)
def test_rigid_body_count_matches_handbook(left: str, right: str) -> None:
    assert rigid_body_count(uniform(left, right)) == handbook.rigid_body_modes(left, right)


@pytest.mark.parametrize(
    ("springs", "expected"),
    [
        ((), 2),
        ((Spring(0.5, 1e4),), 1),
        ((Spring(0.2, 1e4), Spring(0.8, 1e4)), 0),
        ((Spring(0.5, 0.0, 10.0),), 1),
        ((Spring(0.5, 1e4, 10.0),), 0),
        ((Spring(0.3, 1e4), Spring(0.3, 2e4)), 1),  # two springs at one point hold one motion
    ],
)
def test_rigid_body_count_with_springs(springs: tuple[Spring, ...], expected: int) -> None:
    member = uniform("free", "free", springs=springs)
    assert rigid_body_count(member) == expected
    result = fe.solve(member, 3)
    assert result.rigid_body_modes == expected
    # no spurious near-zero frequencies: the listed modes are genuinely flexible
    assert result.modes[0].frequency_hz > 1e-3 * result.modes[1].frequency_hz


def test_soft_spring_mode_is_reported_not_dropped() -> None:
    """A very soft spring gives a real, low bounce mode: sqrt(k/(mL)) (rigid-body limit)."""
    k = 1e-3
    member = uniform("free", "free", springs=(Spring(0.5, k),))
    result = fe.solve(member, 2)
    mass = member.member_mass
    assert result.rigid_body_modes == 1
    assert result.modes[0].omega == pytest.approx(math.sqrt(k / mass), rel=1e-6)


# --- attachments ---------------------------------------------------------------------------------


@pytest.mark.parametrize(("mu", "j"), [(0.2, 0.0), (1.0, 0.0), (0.5, 0.01), (3.0, 0.05)])
def test_tip_mass_against_frequency_equation(mu: float, j: float) -> None:
    member = uniform("clamped", "free")
    mL = member.member_mass
    loaded = replace(member, masses=(PointMass(1.0, mu * mL, j * mL),))
    result = fe.solve(loaded, 4)
    exact = np.array(handbook.tip_mass_parameters(mu, j, 4)) ** 2 * scale(member)
    error = np.abs(result.frequencies_hz - exact) / exact
    assert np.all(error <= 1e-6)
    assert np.all(error <= [m.estimated_error for m in result.modes])


def test_tip_mass_published_value() -> None:
    """mu = M/(mL) = 1: lambda_1 = 1.2479 (R. D. Blevins 1979, Table 8-? tip mass; from memory)."""
    member = uniform("clamped", "free")
    loaded = replace(member, masses=(PointMass(1.0, member.member_mass),))
    lam = math.sqrt(fe.solve(loaded, 1).modes[0].frequency_hz / scale(member))
    assert lam == pytest.approx(1.2479, abs=1e-4)


def test_flipped_member_gives_same_frequencies() -> None:
    member = uniform("clamped", "free", masses=(PointMass(0.3, 0.5),), springs=(Spring(0.6, 5e3),))
    flipped = uniform("free", "clamped", masses=(PointMass(0.7, 0.5),), springs=(Spring(0.4, 5e3),))
    a = fe.solve(member, 4).frequencies_hz
    b = fe.solve(flipped, 4).frequencies_hz
    assert b == pytest.approx(a, rel=1e-9)


def test_stepped_member_of_equal_segments_is_uniform() -> None:
    seg = Segment(0.25, STEEL, BAR)
    stepped = Member((seg, seg, seg, seg), "pinned", "free")
    a = fe.solve(stepped, 4).frequencies_hz
    b = fe.solve(uniform("pinned", "free"), 4).frequencies_hz
    assert a == pytest.approx(b, rel=2e-8)


def test_stiff_spring_approaches_pinned_end() -> None:
    """A pinned-free member with a growing spring at its free end tends to pinned-pinned."""
    base = uniform("pinned", "free")
    EI = base.segments[0].bending_stiffness
    exact = math.pi**2 * scale(base)
    previous = 0.0
    for c in (1e2, 1e4, 1e6):
        member = replace(base, springs=(Spring(1.0, c * EI),))
        f = fe.solve(member, 1).modes[0].frequency_hz
        assert previous < f < exact
        previous = f
    assert previous == pytest.approx(exact, rel=1e-5)


# --- axial force -------------------------------------------------------------------------------


@pytest.mark.parametrize("ratio", [0.5, 2.0, 10.0])
def test_tension_on_pinned_pinned(ratio: float) -> None:
    """omega_n = (n pi/L)^2 sqrt(EI/m) sqrt(1 + P L^2/(n^2 pi^2 EI)), exact (common practice)."""
    base = uniform("pinned", "pinned")
    EI = base.segments[0].bending_stiffness
    P = ratio * math.pi**2 * EI
    result = fe.solve(replace(base, axial_force=P), 4)
    n = np.arange(1, 5)
    exact = (n * math.pi) ** 2 * scale(base) * np.sqrt(1.0 + P / (n**2 * math.pi**2 * EI))
    assert result.frequencies_hz == pytest.approx(exact, rel=1e-6)


def test_compression_lowers_frequency_toward_zero() -> None:
    base = uniform("pinned", "pinned")
    EI = base.segments[0].bending_stiffness
    P_cr = math.pi**2 * EI
    f = fe.solve(replace(base, axial_force=-0.75 * P_cr), 1).modes[0].frequency_hz
    assert f == pytest.approx(math.pi**2 * scale(base) * math.sqrt(0.25), rel=1e-6)


@pytest.mark.parametrize(
    ("left", "right", "coefficient"),
    [
        # Euler buckling loads P = c EI / L^2 (S. P. Timoshenko and J. M. Gere, Theory of Elastic
        # Stability, 1961, chapter 2); clamped-pinned c = 4.4934^2 = 20.19 (root of tan x = x).
        ("pinned", "pinned", math.pi**2),
        ("clamped", "free", math.pi**2 / 4.0),
        ("clamped", "clamped", 4.0 * math.pi**2),
        ("clamped", "pinned", 20.1907),
        ("clamped", "guided", math.pi**2),
    ],
)
def test_buckling_load(left: str, right: str, coefficient: float) -> None:
    member = uniform(left, right)
    EI = member.segments[0].bending_stiffness
    assert fe.buckling_load(member) == pytest.approx(coefficient * EI, rel=1e-4)


def test_compression_beyond_buckling_is_refused() -> None:
    member = uniform("pinned", "pinned")
    P_cr = math.pi**2 * member.segments[0].bending_stiffness
    with pytest.raises(InputError) as info:
        fe.solve(replace(member, axial_force=-1.01 * P_cr), 2)
    assert info.value.key == "member.axial_force"
    assert f"{P_cr:.5g}" in info.value.message


def test_compression_on_free_rotating_member_is_refused() -> None:
    with pytest.raises(InputError) as info:
        fe.solve(uniform("pinned", "free", axial_force=-1.0), 2)
    assert info.value.key == "member.axial_force"
    assert "rigid body" in info.value.message


# --- inner supports ----------------------------------------------------------------------------


def test_two_equal_spans_exact() -> None:
    """Two equal pinned spans: antisymmetric modes are pinned-pinned spans (lambda = k pi),
    symmetric ones clamped-pinned spans (lambda = 3.92660231, 7.06858275: Blevins 1979,
    Table 8-1); exact, common practice."""
    member = uniform("pinned", "pinned", length=2.0, inner_supports=(InnerSupport(1.0, "pinned"),))
    result = fe.solve(member, 4)
    lam = [math.pi, 3.92660231, 2 * math.pi, 7.06858275]
    exact = np.array(lam) ** 2 * scale(member, length=1.0)
    assert result.frequencies_hz == pytest.approx(exact, rel=1e-6 + 2e-8)


@pytest.mark.parametrize(("spans", "ends"), [(3, "pinned"), (4, "pinned"), (3, "clamped")])
def test_equal_spans_against_exact_solution(spans: int, ends: str) -> None:
    inner = tuple(InnerSupport(float(i), "pinned") for i in range(1, spans))
    member = uniform(ends, ends, length=float(spans), inner_supports=inner)
    result = fe.solve(member, 6)
    exact = np.array(handbook.equal_span_parameters(spans, 6, ends)) ** 2 * scale(member, 1.0)
    assert result.frequencies_hz == pytest.approx(exact, rel=1e-6)
    check = handbook.check(member, 6)
    assert check is not None and check.frequencies_hz == pytest.approx(tuple(exact), rel=1e-12)


def test_three_spans_published_values() -> None:
    """Three equal pinned spans: lambda = 3.142, 3.556, 4.297 per span (Blevins 1979, multi-span
    beams; from memory)."""
    inner = (InnerSupport(1.0, "pinned"), InnerSupport(2.0, "pinned"))
    member = uniform("pinned", "pinned", length=3.0, inner_supports=inner)
    lam = np.sqrt(fe.solve(member, 3).frequencies_hz / scale(member, 1.0))
    assert lam == pytest.approx([3.142, 3.556, 4.297], abs=1.5e-3)


def test_unequal_spans_match_stiff_spring_limit() -> None:
    """Rigid inner supports are the limit of ever stiffer springs: f(k) rises toward f(rigid)
    with a gap that shrinks like 1/k, so a Richardson step on two stiff springs lands on it."""
    supports = (InnerSupport(0.9, "pinned"), InnerSupport(2.1, "pinned"))
    rigid = uniform("pinned", "pinned", length=3.0, inner_supports=supports)
    target = fe.solve(rigid, 3).frequencies_hz
    EI = rigid.segments[0].bending_stiffness
    found = []
    for c in (1e6, 1e7):
        springs = tuple(Spring(s.at, c * EI) for s in supports)
        f = fe.solve(uniform("pinned", "pinned", length=3.0, springs=springs), 3).frequencies_hz
        assert np.all(f < target)
        found.append(f)
    extrapolated = found[1] + (found[1] - found[0]) / 9.0
    assert extrapolated == pytest.approx(target, rel=1e-6)


def test_moving_a_support_changes_results_continuously() -> None:
    def fundamental(at: float) -> float:
        member = uniform(
            "pinned", "pinned", length=3.0, inner_supports=(InnerSupport(at, "pinned"),)
        )
        return fe.solve(member, 1).modes[0].frequency_hz

    f0 = fundamental(1.2)
    for delta in (1e-3, 1e-5):
        assert abs(fundamental(1.2 + delta) - f0) / f0 < 50 * delta


def test_inner_clamp_makes_two_cantilevers() -> None:
    """Free-free member clamped at its middle: each half is a cantilever (lambda 1.8751...)."""
    member = uniform("free", "free", length=2.0, inner_supports=(InnerSupport(1.0, "clamped"),))
    result = fe.solve(member, 2)
    exact = handbook.frequency_parameters("clamped", "free", 1)[0] ** 2 * scale(member, 1.0)
    assert result.rigid_body_modes == 0
    assert result.frequencies_hz == pytest.approx([exact, exact], rel=1e-6)


def test_inner_guide_at_midspan() -> None:
    """A guide (slope held, deflection free) at midspan of a pinned-pinned member: symmetric
    modes make each half pinned-guided (lambda = pi, 3 pi over the whole length), antisymmetric
    ones, with zero deflection and slope at the middle, make each half clamped-pinned (half-length
    lambda 3.92660231); Blevins 1979, Table 8-1, common practice."""
    member = uniform("pinned", "pinned", inner_supports=(InnerSupport(0.5, "guided"),))
    result = fe.solve(member, 3)
    lam = np.array([math.pi, 2.0 * 3.92660231, 3.0 * math.pi])
    assert result.frequencies_hz == pytest.approx(lam**2 * scale(member), rel=1e-6 + 2e-8)


def test_rigid_count_with_inner_supports() -> None:
    one = uniform("free", "free", inner_supports=(InnerSupport(0.5, "pinned"),))
    two = uniform(
        "free", "free", inner_supports=(InnerSupport(0.3, "pinned"), InnerSupport(0.6, "pinned"))
    )
    assert rigid_body_count(one) == 1
    assert rigid_body_count(two) == 0
    assert fe.solve(one, 2).rigid_body_modes == 1


@pytest.mark.parametrize("at", [0.0, 1.0, -0.1, 1.5])
def test_inner_support_must_be_inside(at: float) -> None:
    with pytest.raises(InputError) as info:
        uniform("pinned", "pinned", inner_supports=(InnerSupport(at, "pinned"),))
    assert info.value.key == "supports.inner[0].at"


def test_two_inner_supports_at_one_place_refused() -> None:
    with pytest.raises(InputError) as info:
        uniform(
            "pinned",
            "pinned",
            inner_supports=(InnerSupport(0.4, "pinned"), InnerSupport(0.4, "clamped")),
        )
    assert info.value.key == "supports.inner[1].at"


# --- solver plumbing ---------------------------------------------------------------------------


def dense_solver(calls: list[int]) -> fe.Eigensolver:
    def solver(K: object, M: object, count: int, shift: float) -> tuple[np.ndarray, np.ndarray]:
        calls.append(count)
        Kd, Md = K.toarray(), M.toarray()  # type: ignore[attr-defined]
        return scipy.linalg.eigh(Kd, Md, subset_by_index=[0, count - 1])

    return solver


def test_eigensolver_is_swappable() -> None:
    member = uniform("clamped", "pinned", masses=(PointMass(0.4, 0.3),))
    calls: list[int] = []
    a = fe.solve(member, 4, eigensolver=dense_solver(calls)).frequencies_hz
    b = fe.solve(member, 4).frequencies_hz
    assert calls
    assert a == pytest.approx(b, rel=1e-9)


def test_sparse_path_matches_dense() -> None:
    """Hundreds of attachments push the model past the dense limit: ARPACK shift-invert."""
    xs = np.linspace(0.01, 0.99, 350)
    masses = tuple(PointMass(float(x), 0.002) for x in xs[::2])
    springs = tuple(Spring(float(x), 50.0) for x in xs[1::2])
    member = uniform("clamped", "free", masses=masses, springs=springs)
    sparse = fe.solve(member, 4)
    assert "ARPACK" in sparse.solver
    dense = fe.solve(member, 4, eigensolver=dense_solver([]))
    assert sparse.frequencies_hz == pytest.approx(dense.frequencies_hz, rel=1e-9)


def test_massless_member_is_diagnosed() -> None:
    weightless = Material("weightless", 200e9, 0.0)
    member = Member((Segment(1.0, weightless, BAR),), "clamped", "free")
    with pytest.raises(InputError) as info:
        fe.solve(member, 1)
    assert "mass" in info.value.message


def test_too_many_modes_for_a_forced_mesh() -> None:
    with pytest.raises(InputError) as info:
        fe.solve(uniform("clamped", "clamped"), 10, elements=2)
    assert info.value.key == "check.modes"


def test_shear_warning_for_deep_short_member() -> None:
    deep = build_section("rectangle", {"width": 0.05, "depth": 0.1})
    member = Member((Segment(0.5, STEEL, deep),), "clamped", "free")
    result = fe.solve(member, 3)
    assert any("ten section depths" in w for w in result.warnings)
    slender = fe.solve(uniform("clamped", "free", length=2.0), 2)
    assert not any("ten section depths" in w for w in slender.warnings)


# --- fast paths against plain ones ---------------------------------------------------------------


def _plain_assembly(member: Member, mesh: fe.Mesh) -> tuple[np.ndarray, np.ndarray]:
    """Dense K and M on the free DOFs, one element at a time from the textbook matrices.

    Hermite cubic stiffness and consistent mass in unscaled DOFs (w, theta), e.g.
    J. S. Przemieniecki, Theory of Matrix Structural Analysis, 1968, chapters 5 and 11.
    """
    n = 2 * len(mesh.x)
    K = np.zeros((n, n))
    M = np.zeros((n, n))
    P = member.axial_force
    for e in range(mesh.elements):
        h = mesh.x[e + 1] - mesh.x[e]
        seg = member.segments[mesh.segment[e]]
        EI, m = seg.bending_stiffness, seg.mass_per_length
        k = EI / h**3 * np.array(
            [[12, 6 * h, -12, 6 * h], [6 * h, 4 * h * h, -6 * h, 2 * h * h],
             [-12, -6 * h, 12, -6 * h], [6 * h, 2 * h * h, -6 * h, 4 * h * h]]
        )  # fmt: skip
        g = P / (30 * h) * np.array(
            [[36, 3 * h, -36, 3 * h], [3 * h, 4 * h * h, -3 * h, -h * h],
             [-36, -3 * h, 36, -3 * h], [3 * h, -h * h, -3 * h, 4 * h * h]]
        )  # fmt: skip
        mm = m * h / 420 * np.array(
            [[156, 22 * h, 54, -13 * h], [22 * h, 4 * h * h, 13 * h, -3 * h * h],
             [54, 13 * h, 156, -22 * h], [-13 * h, -3 * h * h, -22 * h, 4 * h * h]]
        )  # fmt: skip
        dofs = slice(2 * e, 2 * e + 4)
        K[dofs, dofs] += k + g
        M[dofs, dofs] += mm
    for pm in member.masses:
        j = mesh.node_at(pm.at)
        off = pm.at - mesh.x[j]
        t = np.zeros(n)
        t[2 * j], t[2 * j + 1] = 1.0, off
        M += pm.mass * np.outer(t, t)
        M[2 * j + 1, 2 * j + 1] += pm.rotary_inertia
    for sp in member.springs:
        j = mesh.node_at(sp.at)
        off = sp.at - mesh.x[j]
        t = np.zeros(n)
        t[2 * j], t[2 * j + 1] = 1.0, off
        K += sp.stiffness * np.outer(t, t)
        K[2 * j + 1, 2 * j + 1] += sp.rotational_stiffness
    return K, M


@pytest.mark.parametrize(
    "member",
    [
        uniform("clamped", "free", masses=(PointMass(0.37, 0.2, 1e-4), PointMass(1.0, 0.5))),
        uniform("pinned", "guided", springs=(Spring(0.5, 4e3, 20.0),), axial_force=-300.0),
        uniform("free", "free", masses=(PointMass(0.50002, 0.3),), axial_force=800.0),
        uniform("clamped", "clamped", inner_supports=(InnerSupport(0.4, "pinned"),)),
    ],
)
def test_banded_assembly_equals_a_plain_one(member: Member) -> None:
    mesh = fe.build_mesh(member, 17)
    system = fe.assemble(member, mesh, geometric=True)
    K, M = _plain_assembly(member, mesh)
    # the assembled system works in scaled slopes: theta = theta_scaled / scale
    unscale = np.ones(system.n_full)
    unscale[1::2] = 1.0 / system.scale
    D = np.diag(unscale[system.free])
    Kf = K[np.ix_(system.free, system.free)]
    Mf = M[np.ix_(system.free, system.free)]
    assert np.allclose(D @ Kf @ D, system.K.toarray(), rtol=1e-12, atol=1e-12 * abs(Kf).max())
    assert np.allclose(D @ Mf @ D, system.M.toarray(), rtol=1e-12, atol=1e-12 * abs(Mf).max())
    assert system.K.nnz <= 7 * system.K.shape[0]  # banded, no fill


@pytest.mark.parametrize("elements", [20, 70, 130])
@pytest.mark.parametrize(("left", "right"), [("free", "free"), ("clamped", "pinned")])
def test_eigen_solvers_match_scipy_dense(left: str, right: str, elements: int) -> None:
    """The subset and value-only paths against scipy.linalg.eigh of the whole spectrum."""
    member = uniform(left, right, masses=(PointMass(0.3, 0.1),))
    system = fe.assemble(member, fe.build_mesh(member, elements))
    shift = -fe.shift_below(member)
    Kd, Md = system.K.toarray(), system.M.toarray()
    # the plain solve: the whole spectrum of the inverted problem by divide and conquer (the
    # direct form K x = lambda M x loses the lowest modes' relative accuracy on fine meshes)
    mu = scipy.linalg.eigh(Md, Kd - shift * Md, eigvals_only=True, driver="gvd")
    exact = np.sort(1.0 / mu + shift)[:7]
    rigid = rigid_body_count(member)
    vals, vecs = fe.default_eigensolver(system.K, system.M, 7, shift)
    only = fe.lowest_eigenvalues(system.K, system.M, 7, shift)
    scale = exact[rigid]
    assert np.allclose(vals, exact, rtol=1e-9, atol=1e-9 * scale)
    assert np.allclose(only, exact, rtol=1e-9, atol=1e-9 * scale)
    assert np.allclose(vecs.T @ Md @ vecs, np.eye(7), atol=1e-9)
    residual = Kd @ vecs - Md @ vecs * vals
    assert np.max(np.abs(residual)) <= 1e-7 * np.max(np.abs(Kd @ vecs))  # ARPACK: 2e-8 seen


def test_a_very_short_element_beside_rigid_modes_still_solves() -> None:
    """A mass 0.5 mm from a step of a guided-guided member: K's round-off swamps the shift.

    Found by the property tests; the frequencies must match a mesh without the short element
    (the mass moved onto the step), to the accuracy of so small a move.
    """
    segs = tuple(
        Segment(a, STEEL, build_section("rectangle", {"width": 0.03, "depth": d}))
        for a, d in ((0.6796875, 0.015625), (0.6953125, 0.0234375), (0.22115118412813822, 0.015625))
    )
    total = sum(s.length for s in segs)
    near = Member(segs, "guided", "guided", (PointMass(0.861328125 * total, 1.0),))
    on_step = Member(segs, "guided", "guided", (PointMass(0.6796875 + 0.6953125, 1.0),))
    a, b = fe.solve(near, 2), fe.solve(on_step, 2)
    assert a.rigid_body_modes == 1
    assert a.frequencies_hz == pytest.approx(b.frequencies_hz, rel=2e-3)


def test_sparse_solves_repeat_to_the_bit() -> None:
    """ARPACK starts from a fixed vector: the same model gives the same digits every time."""
    masses = tuple(PointMass(0.05 + 0.09 * i, 0.05) for i in range(11))
    member = uniform("clamped", "free", masses=masses)
    first = fe.solve(member, 5)
    assert first.degrees_of_freedom > fe.DENSE_LIMIT
    assert "ARPACK" in first.solver
    for _ in range(3):
        again = fe.solve(member, 5)
        assert np.array_equal(again.frequencies_hz, first.frequencies_hz)
        assert all(np.array_equal(a.w, b.w) for a, b in zip(again.modes, first.modes, strict=True))


def test_the_solver_that_ran_names_itself() -> None:
    """A supplied eigen solver is reported as such, never as the built-in dense path."""
    member = uniform("clamped", "pinned", masses=(PointMass(0.4, 0.3),))
    supplied = fe.solve(member, 3, eigensolver=dense_solver([]))
    assert supplied.solver.startswith("supplied eigen solver")
    assert "LAPACK" not in supplied.solver
    small = fe.solve(member, 3, elements=20)
    assert small.solver == fe.SOLVERS["dense"].name
    assert fe.method_for(small.degrees_of_freedom, 3) == "dense"


def test_public_element_matrices_are_the_textbook_ones() -> None:
    """fe.element_matrices against the matrices typed out in _plain_assembly (Przemieniecki)."""
    member = uniform("pinned", "pinned", axial_force=250.0)
    mesh = fe.Mesh(np.array([0.0, 0.3]), np.array([0]), {0.0: 0, 0.3: 1})
    K, M = _plain_assembly(member, mesh)
    seg = member.segments[0]
    k, g, m = fe.element_matrices(0.3, seg.bending_stiffness, seg.mass_per_length, 250.0)
    assert np.allclose(k + g, K, rtol=1e-13, atol=1e-13 * abs(K).max())
    assert np.allclose(m, M, rtol=1e-13, atol=1e-13 * abs(M).max())
