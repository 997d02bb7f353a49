"""Checks of :mod:`calc.compliance`: supports with a finite stiffness.

References:

* a cantilever whose root is held against deflection by a rigid support and against
  rotation by a spring k, R = k L / (EI): lambda_1 = 1.2479 (R = 1), 1.7227 (R = 10),
  1.8568 (R = 100), 1.8751 (rigid).  The four-digit values are the ones commonly tabulated
  for this case (from memory); the test derives the exact frequency equation of the
  Euler-Bernoulli beam here and solves it with scipy's brentq, then checks both the
  quoted values and the finite-element solution against its roots;
* the rigid limit is the support as written (exact by construction).
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
from scipy.optimize import brentq

from beamtone.calc import fe, worksheet
from beamtone.calc.compliance import Compliance, compliant_member
from beamtone.calc.errors import InputError
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import InnerSupport, Member, PointMass, Segment
from beamtone.calc.sections import build_section
from beamtone.calc.tolerances import Design
from tests.calc.bending import euler_bernoulli

_ROOT = __import__("pathlib").Path(__file__).resolve().parents[2]


def _determinant(lam: float, R: float) -> float:
    """Frequency determinant of a cantilever with a root rotational spring, divided by R.

    w = A cosh + B sinh + C cos + D sin (of beta x); w(0) = 0 gives C = -A; the root moment
    EI w''(0) = k w'(0) gives 2 A lambda / R - B - D = 0; the free tip w''(L) = w'''(L) = 0
    (derivatives of the four functions taken by hand, cos' = -sin).
    """
    ch, sh, c, s = math.cosh(lam), math.sinh(lam), math.cos(lam), math.sin(lam)
    rows = np.array(
        [[2.0 * lam / R if math.isfinite(R) else 0.0, -1.0, -1.0],
         [ch + c, sh, -s],
         [sh - s, ch, -c]]
    )  # fmt: skip
    return float(np.linalg.det(rows))


def _lambda_1(R: float) -> float:
    grid = np.linspace(0.05, 2.5, 400)
    values = [_determinant(g, R) for g in grid]
    for a, b, fa, fb in zip(grid[:-1], grid[1:], values[:-1], values[1:], strict=True):
        if fa * fb < 0:
            return brentq(_determinant, a, b, args=(R,), xtol=1e-14)
    raise AssertionError("no root")


@pytest.mark.parametrize(
    ("R", "quoted"), [(1.0, 1.2479), (10.0, 1.7227), (100.0, 1.8568), (math.inf, 1.8751)]
)
def test_cantilever_with_a_root_rotational_spring(R: float, quoted: float) -> None:
    exact = _lambda_1(R)
    assert abs(exact - quoted) < 5e-5  # the quoted four digits
    sec = build_section("round", {"diameter": 0.02})
    seg = Segment(0.8, LIBRARY["steel"], sec)
    member = Member((seg,), "clamped", "free")
    EI, m, L = seg.bending_stiffness, seg.mass_per_length, seg.length
    kr = R * EI / L
    solved = compliant_member(member, (Compliance("left", rotational_stiffness=kr),))
    f = fe.solve(solved, 1).modes[0].frequency_hz
    lam_fe = math.sqrt(2 * math.pi * f * L * L * math.sqrt(m / EI))
    assert abs(lam_fe - exact) / exact < 1e-6


def test_sensor_mast_with_a_compliant_root() -> None:
    # The figure of issue 19: a root rotational stiffness of 10 EI/L instead of a rigid clamp
    # lowers the sensor mast's fundamental from 16.37 Hz to 14.19 Hz (-13 %).
    sheet = worksheet.load(_ROOT / "worksheets" / "sensor-mast.toml")
    member = euler_bernoulli(Design.of(sheet)).member  # the figures are bending-only
    EI = member.segments[0].bending_stiffness
    rigid = fe.solve(member, 1).modes[0].frequency_hz
    soft = compliant_member(member, (Compliance("left", rotational_stiffness=10 * EI / 1.2),))
    f = fe.solve(soft, 1).modes[0].frequency_hz
    assert round(rigid, 2) == 16.37
    assert round(f, 2) == 14.19
    assert round(100 * (f - rigid) / rigid) == -13


def test_rigid_limit_is_the_support_as_written() -> None:
    sheet = worksheet.load(_ROOT / "worksheets" / "pipe-on-hangers.toml")
    member = sheet.member
    same = compliant_member(
        member, (Compliance("left"), Compliance("inner[1]", math.inf, math.inf))
    )
    assert same is member
    a, b = fe.solve(member, 3), fe.solve(same, 3)
    assert np.array_equal(a.frequencies_hz, b.frequencies_hz)


def test_stiff_support_tends_to_rigid_from_below() -> None:
    # Softening a support lowers every frequency (Rayleigh's principle, common practice);
    # stiffer and stiffer springs approach the rigid support.
    sheet = worksheet.load(_ROOT / "worksheets" / "pipe-on-hangers.toml")
    rigid = fe.solve(sheet.member, 3).frequencies_hz
    previous = np.zeros(3)
    for k in (1e5, 1e7, 1e9):
        soft = compliant_member(sheet.member, (Compliance("inner[0]", stiffness=k),))
        assert [(s.at, s.kind) for s in soft.inner_supports] == [(5.0, "pinned")]
        f = fe.solve(soft, 3).frequencies_hz
        assert np.all(f < rigid * (1 + 1e-6)) and np.all(f >= previous * (1 - 1e-9))
        previous = f
    assert np.allclose(previous, rigid, rtol=1e-3)


def test_released_kinds() -> None:
    sec = build_section("round", {"diameter": 0.02})
    member = Member(
        (Segment(1.0, LIBRARY["steel"], sec),), "clamped", "clamped",
        masses=(PointMass(0.5, 1.0),), inner_supports=(InnerSupport(0.3, "clamped"),),
    )  # fmt: skip
    out = compliant_member(
        member,
        (Compliance("left", rotational_stiffness=1e4), Compliance("right", 1e6, 1e3),
         Compliance("inner[0]", stiffness=1e6)),
    )  # fmt: skip
    assert (out.left, out.right) == ("pinned", "free")
    assert [(s.at, s.kind) for s in out.inner_supports] == [(0.3, "guided")]
    # torsion and axial keep what the supports held as written
    assert dict(out.left_overrides) == {"torsion": "clamped", "axial": "held"}
    assert dict(out.right_overrides) == {"torsion": "clamped", "axial": "held"}
    assert [(s.at, s.stiffness, s.rotational_stiffness) for s in out.springs] == [
        (0.0, 0.0, 1e4), (1.0, 1e6, 1e3), (0.3, 1e6, 0.0)]  # fmt: skip


def test_torsion_and_axial_keep_the_written_support() -> None:
    # A rotational stiffness at a clamped root is a bending matter: the i-beam's warping
    # torsion and its axial modes stay those of the clamp (restraints of calc.restraints).
    from beamtone.calc.directions import solve_directions

    sec = build_section("i-beam", {"width": 0.1, "depth": 0.2, "flange": 0.008, "web": 0.006})
    member = Member((Segment(3.0, LIBRARY["steel"], sec),), "clamped", "free")
    soft = compliant_member(member, (Compliance("left", rotational_stiffness=1e6),))
    rigid, loose = solve_directions(member, 2), solve_directions(soft, 2)
    for name in ("torsion", "axial"):
        a = [m.frequency_hz for m in rigid[name].modes]
        b = [m.frequency_hz for m in loose[name].modes]
        assert np.allclose(a, b, rtol=1e-9), name
    assert loose["depth"].modes[0].frequency_hz < rigid["depth"].modes[0].frequency_hz
    assert loose["width"].modes[0].frequency_hz < rigid["width"].modes[0].frequency_hz


@pytest.mark.parametrize(
    ("compliance", "key"),
    [
        (Compliance("left", rotational_stiffness=1e3), "supports.left_rotational_stiffness"),
        (Compliance("right", stiffness=0.0), "supports.right_stiffness"),
        (Compliance("right", stiffness=-5.0), "supports.right_stiffness"),
        (Compliance("right", stiffness=math.nan), "supports.right_stiffness"),
        (Compliance("inner[3]", stiffness=1.0), "supports.inner[3]"),
        (Compliance("middle", stiffness=1.0), "supports.middle"),
    ],
)
def test_refusals_name_the_key(compliance: Compliance, key: str) -> None:
    sec = build_section("round", {"diameter": 0.02})
    member = Member((Segment(1.0, LIBRARY["steel"], sec),), "pinned", "pinned")
    member = replace(member, inner_supports=(InnerSupport(0.5, "pinned"),))
    with pytest.raises(InputError) as err:
        compliant_member(member, (compliance,))
    assert err.value.key == key
