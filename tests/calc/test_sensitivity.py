"""Checks of :mod:`calc.sensitivity`: first-order eigenvalue sensitivities.

References:

* exact elasticities of a uniform Euler-Bernoulli member, f proportional to
  E^(1/2) rho^(-1/2) L^(-2) and, for a rectangle, to its depth (f ~ sqrt(EI/(rho A))/L^2
  with I/A = d^2/12): dimensional analysis, common practice;
* the eigenvalue derivative d lambda = phi^T (dK - lambda dM) phi (R. L. Fox and M. P.
  Kapoor, AIAA Journal 6(12), 1968), checked against central differences of full
  finite-element solves (scipy's eigen solvers underneath);
* the first-order term of a support stiffness ranging to rigid, lambda(k) = lambda_rigid -
  r^2/k + O(1/k^2), checked against full solves with stiff springs.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from beamtone.calc import fe, worksheet
from beamtone.calc.sensitivity import element_forms, sensitivities
from beamtone.calc.tolerances import COMPLIANCE, Design, Tolerance, nominal_value, vary
from tests.calc.bending import euler_bernoulli

_ROOT = __import__("pathlib").Path(__file__).resolve().parents[2]


def _tol(design: Design, key: str, rel: float = 0.01) -> Tolerance:
    v = nominal_value(design, key)
    hw = rel * abs(v) or 1.0
    return Tolerance(key, v, v - hw, v + hw)


def _rectangle_cantilever(left: str = "clamped", right: str = "free") -> Design:
    return euler_bernoulli(
        Design.of(
            worksheet.loads(
                f"""format = 1
[member]
length = "1 m"
material = "steel"
section = {{ shape = "rectangle", width = "50 mm", depth = "10 mm" }}
[supports]
left = "{left}"
right = "{right}"
"""
            )
        )
    )


@pytest.mark.parametrize(("left", "right"), [("clamped", "free"), ("pinned", "pinned"),
                                             ("free", "free"), ("clamped", "guided")])  # fmt: skip
def test_exact_elasticities_of_a_uniform_member(left: str, right: str) -> None:
    # Dimensional analysis (Euler-Bernoulli): f ~ E^0.5 rho^-0.5 L^-2 depth^1, exactly.
    design = _rectangle_cantilever(left, right)
    result = fe.solve(design.solved_member(), 4)
    keys = ["member.material.youngs_modulus", "member.material.density", "member.length",
            "member.section.depth", "member.section.width"]  # fmt: skip
    s = sensitivities(design, result, [_tol(design, k) for k in keys])
    expected = np.array([0.5, -0.5, -2.0, 1.0, 0.0])
    assert np.max(np.abs(s.elasticities - expected[None, :])) < 1e-6


def _full_lambdas(design: Design, modes: int) -> np.ndarray:
    return np.array([m.omega**2 for m in fe.solve(design.solved_member(), modes).modes])


@pytest.mark.parametrize(
    ("sheet", "keys"),
    [
        ("stepped-spindle.toml", ["spring[0].at", "spring[1].rotational_stiffness",
                                  "spring[1].stiffness", "member.segment[1].length",
                                  "member.segment[0].section.diameter", "mass[1].at",
                                  "mass[0].rotary_inertia", "member.material.youngs_modulus"]),
        ("pipe-on-hangers.toml", ["supports.inner[0].at", "member.length",
                                  "member.section.wall", "member.added_mass"]),
        ("sensor-mast.toml", ["mass[0].mass", "member.section.outside_diameter"]),
        ("machine-span.toml", ["member.material.density", "mass[0].at"]),
    ],
)  # fmt: skip
def test_fox_kapoor_against_differences_of_full_solves(sheet: str, keys: list[str]) -> None:
    # Fox and Kapoor (1968) against central differences of full solves (step 1e-4 relative;
    # the difference's own error is about 1e-8 relative, the FE accuracy 1e-6).
    loaded = worksheet.load(_ROOT / "worksheets" / sheet)
    design = euler_bernoulli(Design.of(loaded))
    modes = min(loaded.modes, 3)
    result = fe.solve(design.solved_member(), modes)
    tols = [_tol(design, k) for k in keys]
    s = sensitivities(design, result, tols)
    lam = np.array([m.omega**2 for m in result.modes])
    for col, t in enumerate(tols):
        h = 1e-4 * abs(t.nominal)
        up = _full_lambdas(vary(design, {t.key: t.nominal + h}), modes)
        down = _full_lambdas(vary(design, {t.key: t.nominal - h}), modes)
        fd = (up - down) / (2 * h)
        # compared as elasticities of lambda: (p / lambda) d lambda / dp
        err = np.abs(fd - s.eigenvalue_derivatives[:, col]) * abs(t.nominal) / lam
        assert np.max(err) < 2e-5, (t.key, err)


def test_an_attachment_moving_along_the_member() -> None:
    # d lambda/da = -lambda (2 M w w' + 2 J w' w'') for a point mass with rotary inertia
    # moving along the member (Fox and Kapoor with the mass moving); at the free end the
    # curvature is the mean of the member's side and the vanishing overhang's (zero).
    # Against one-sided second-order differences of full solves (steps 3e-4 and 1e-3 m
    # agree to 3e-6: the difference's own error).
    loaded = worksheet.load(_ROOT / "worksheets" / "sensor-mast.toml")
    design = euler_bernoulli(Design.of(loaded))
    result = fe.solve(design.solved_member(), 2)
    s = sensitivities(design, result, [Tolerance("mass[0].at", 1.2, 1.1, 1.2)])
    lam = np.array([m.omega**2 for m in result.modes])
    h = 3e-4
    a = _full_lambdas(vary(design, {"mass[0].at": 1.2 - h}), 2)
    b = _full_lambdas(vary(design, {"mass[0].at": 1.2 - 2 * h}), 2)
    fd = (3 * lam - 4 * a + b) / (2 * h)
    assert np.allclose(s.eigenvalue_derivatives[:, 0], fd, rtol=2e-5)


def test_compliance_at_rigid_is_minus_the_reaction_squared() -> None:
    # lambda(k) = lambda_rigid - r^2/k + O(1/k^2): (lambda(k) - lambda_rigid) k -> -r^2.
    design = _rectangle_cantilever()
    result = fe.solve(design.solved_member(), 3)
    for key in ("supports.left_rotational_stiffness", "supports.left_stiffness"):
        s = sensitivities(design, result, [Tolerance(key, 0.0, 0.0, 1e-6, COMPLIANCE)])
        lam = np.array([m.omega**2 for m in result.modes])
        estimates = []
        for k in (1e9, 1e10) if key.endswith("rotational_stiffness") else (1e11, 1e12):
            estimates.append((_full_lambdas(vary(design, {key: k}), 3) - lam) * k)
        # Richardson on the O(1/k) remainder of the quotient (k a factor 10 apart)
        extrapolated = (10 * estimates[1] - estimates[0]) / 9
        assert np.allclose(s.eigenvalue_derivatives[:, 0], extrapolated, rtol=1e-4), key


def test_springs_masses_and_axial_force_are_exact() -> None:
    # K and M are linear in these: the derivative is the mode's own energy term exactly,
    # e.g. d lambda / dk = w(a)^2 and d lambda / dM = -lambda w(a)^2 (Fox and Kapoor).
    design = euler_bernoulli(
        Design.of(
            worksheet.loads(
                """format = 1
[member]
length = "1.5 m"
material = "steel"
section = { shape = "round", diameter = "30 mm" }
axial_force = "5 kN"
[supports]
left = "pinned"
right = "free"
[[mass]]
at = "1 m"
mass = "2 kg"
rotary_inertia = "0.001 kg*m^2"
[[spring]]
at = "1.5 m"
stiffness = "200 kN/m"
rotational_stiffness = "300 N*m/rad"
"""
            )
        )
    )
    member = design.member
    result = fe.solve(member, 3)
    keys = ["spring[0].stiffness", "mass[0].mass", "member.axial_force"]
    s = sensitivities(design, result, [_tol(design, k) for k in keys])
    w_tip = np.array([fe.interpolate(m.x, m.w_modal, m.theta_modal, 1.5) for m in result.modes])
    w_mass = np.array([fe.interpolate(m.x, m.w_modal, m.theta_modal, 1.0) for m in result.modes])
    lam = np.array([m.omega**2 for m in result.modes])
    assert np.allclose(s.eigenvalue_derivatives[:, 0], w_tip**2, rtol=1e-9)
    assert np.allclose(s.eigenvalue_derivatives[:, 1], -lam * w_mass**2, rtol=1e-9)
    # axial force: phi^T G phi = integral of w'^2 >= 0 (tension stiffens)
    assert np.all(s.eigenvalue_derivatives[:, 2] > 0)


def test_element_forms_reproduce_the_eigenvalues() -> None:
    # The forms are phi^T K phi and phi^T M phi: for mass-normalized modes T = 1, U = lambda.
    member = _rectangle_cantilever("pinned", "pinned").member
    result = fe.solve(member, 3)
    m = result.modes
    seg = member.segments[0]
    n = len(m[0].x) - 1
    U, T = element_forms(
        m[0].x, np.full(n, seg.bending_stiffness), np.full(n, seg.mass_per_length), 0.0,
        np.column_stack([md.w_modal for md in m]), np.column_stack([md.theta_modal for md in m]),
    )  # fmt: skip
    assert np.allclose(T, 1.0, rtol=1e-12)
    assert np.allclose(U, [md.omega**2 for md in m], rtol=1e-10)
    assert math.isclose(m[0].frequency_hz, m[0].omega / (2 * math.pi))


def test_timoshenko_sensitivities() -> None:
    # The shear (Timoshenko) element: every stiffness of the member scales with E (EI and
    # kappa G A, G = E / (2 (1 + nu))), so the elasticity to E is exactly 0.5 (dimensional
    # analysis; the tip mass keeps rho's from -0.5); the rest against central differences of
    # full solves (Fox and Kapoor 1968).  The element forms here and the solver's reported
    # frequencies agree to about 4e-5, which bounds the agreement.
    loaded = worksheet.load(_ROOT / "worksheets" / "sensor-mast.toml")
    design = Design.of(loaded)
    if getattr(design.member, "theory", "euler-bernoulli") != "timoshenko":
        pytest.skip("this version solves the examples by Euler-Bernoulli bending")
    result = fe.solve(design.solved_member(), 3)
    keys = ["member.material.youngs_modulus", "member.material.density", "member.length",
            "member.section.outside_diameter", "mass[0].mass"]  # fmt: skip
    tols = [_tol(design, k) for k in keys]
    s = sensitivities(design, result, tols)
    assert np.max(np.abs(s.elasticities[:, 0] - 0.5)) < 1e-4
    lam = np.array([m.omega**2 for m in result.modes])
    for col, t in enumerate(tols[1:], start=1):
        h = 1e-4 * abs(t.nominal)
        up = _full_lambdas(vary(design, {t.key: t.nominal + h}), 3)
        down = _full_lambdas(vary(design, {t.key: t.nominal - h}), 3)
        err = np.abs((up - down) / (2 * h) - s.eigenvalue_derivatives[:, col]) * t.nominal / lam
        assert np.max(err) < 1e-3, (t.key, err)
