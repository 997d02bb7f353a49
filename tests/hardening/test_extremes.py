"""Numerical extremes against limiting cases: a very stiff spring as a pin, tiny and huge members,
extreme tip-mass ratios, axial load just below buckling.

Published values used: uniform-beam frequency parameters (R. D. Blevins, Formulas for Natural
Frequency and Mode Shape, 1979, Table 8-1, through calc.handbook, itself checked digit by digit
in tests/calc/test_handbook.py); the pinned-pinned beam under axial load,
omega = (pi/L)^2 sqrt(EI/m) sqrt(1 + P L^2/(pi^2 EI)) (common practice).
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest

from beamtone.calc import fe, handbook
from beamtone.calc.model import Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section
from tests.hardening.corpus import STEEL


def scale(member: Member, length: float | None = None) -> float:
    seg = member.segments[0]
    L = member.length if length is None else length
    return math.sqrt(seg.bending_stiffness / seg.mass_per_length) / (2 * math.pi * L**2)


BAR = build_section("rectangle", {"width": 0.04, "depth": 0.008})


def test_very_stiff_spring_is_a_pin() -> None:
    """A 1e15 N/m spring at the free end of a pinned-free bar: the pinned-pinned bar."""
    member = Member((Segment(1.0, STEEL, BAR),), "pinned", "free", springs=(Spring(1.0, 1e15),))
    result = fe.solve(member, 3)
    exact = (np.arange(1, 4) * math.pi) ** 2 * scale(member)
    assert result.frequencies_hz == pytest.approx(exact, rel=1e-6)


@pytest.mark.parametrize(("length", "side"), [(1e-5, 1e-6), (1e-3, 1e-4), (300.0, 2.0)])
def test_tiny_and_huge_members(length: float, side: float) -> None:
    """Micrometre to hundreds of metres: the same frequency parameters (Blevins Table 8-1)."""
    section = build_section("rectangle", {"width": side, "depth": side})
    member = Member((Segment(length, STEEL, section),), "clamped", "free")
    result = fe.solve(member, 3)
    exact = np.array(handbook.frequency_parameters("clamped", "free", 3)) ** 2 * scale(member)
    assert result.frequencies_hz == pytest.approx(exact, rel=1e-6)


@pytest.mark.parametrize("ratio", [1e-6, 1e6])
def test_extreme_tip_mass_ratios(ratio: float) -> None:
    base = Member((Segment(1.0, STEEL, BAR),), "clamped", "free")
    member = replace(base, masses=(PointMass(1.0, ratio * base.member_mass),))
    result = fe.solve(member, 2)
    lam = np.array(handbook.tip_mass_parameters(ratio, 0.0, 2))
    assert result.frequencies_hz == pytest.approx(lam**2 * scale(member), rel=1e-6)


@pytest.mark.parametrize("fraction", [0.999, 0.9999])
def test_axial_load_just_below_buckling(fraction: float) -> None:
    """Within 0.1 % (and 0.01 %) of Euler's load: omega falls as sqrt(1 - P/P_cr)."""
    base = Member((Segment(1.0, STEEL, BAR),), "pinned", "pinned")
    P_cr = math.pi**2 * base.segments[0].bending_stiffness
    result = fe.solve(replace(base, axial_force=-fraction * P_cr), 1)
    exact = math.pi**2 * scale(base) * math.sqrt(1 - fraction)
    assert result.modes[0].frequency_hz == pytest.approx(exact, rel=1e-5)
    assert abs(result.modes[0].frequency_hz - exact) / exact <= result.modes[0].estimated_error
