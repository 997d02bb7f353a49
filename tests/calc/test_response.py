"""Forced response by modal superposition against closed forms and scipy."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.signal

from beamtone.calc import fe
from beamtone.calc.errors import InputError
from beamtone.calc.excitation import Excitation
from beamtone.calc.materials import Material
from beamtone.calc.model import Member, PointMass, Segment, Spring
from beamtone.calc.response import amplification, forced_response, modal_displacement
from beamtone.calc.sections import build_section

STEEL = Material("test steel", 200e9, 7850.0, "test data")
SECTION = build_section("rectangle", {"width": 0.05, "depth": 0.01})
L = 1.0
EI = 200e9 * SECTION.second_moment


def cantilever(**kw: object) -> Member:
    return Member((Segment(L, STEEL, SECTION),), "clamped", "free", **kw)  # type: ignore[arg-type]


@pytest.mark.parametrize(("r", "expected"), [(1.0, 25.0), (0.8, 2.77), (1.2, 2.26)])
def test_single_dof_amplification(r: float, expected: float) -> None:
    # 1/sqrt((1-r^2)^2 + (2 zeta r)^2) with zeta = 0.02: the figures of a vibration
    # textbook's chapter on harmonic excitation (e.g. Rao, Mechanical Vibrations, ch. 3;
    # from memory), to the digits quoted.
    assert amplification(r, 0.02) == pytest.approx(expected, abs=0.005)


def test_amplification_against_scipy_transfer_function() -> None:
    # |H(j Omega)| of wn^2 / (s^2 + 2 zeta wn s + wn^2), by scipy.signal (a reference library).
    wn, zeta = 7.0, 0.05
    w = np.linspace(0.1, 20.0, 50)
    _, h = scipy.signal.freqresp(([wn**2], [1.0, 2 * zeta * wn, wn**2]), w)
    assert amplification(w / wn, zeta) == pytest.approx(np.abs(h), rel=1e-12)


def test_static_limit_of_a_tip_loaded_cantilever_and_convergence() -> None:
    # r -> 0: the tip deflection is F L^3 / 3EI (common practice); the modal sum converges
    # to it from below as modes are added.
    F = 10.0
    result = fe.solve(cantilever(), 16)
    static = F * L**3 / (3 * EI)
    errors = []
    for n in (1, 2, 4, 8, 16):
        u = modal_displacement(result.modes[:n], 0.02, F, L, [L], 1e-9)
        errors.append(static - abs(u[0, 0]))
    assert all(e > 0 for e in errors)
    assert all(b < a for a, b in zip(errors, errors[1:], strict=False))
    # the first mode alone gives 12/lambda1^4 of it (tip of the mass-normalized mode: 2/sqrt(mL);
    # lambda1 = 1.87510407, Blevins 1979, Table 8-1)
    assert 1 - errors[0] / static == pytest.approx(12 / 1.87510407**4, rel=1e-6)
    assert errors[-1] / static < 2e-5


def _tip_receptance(omega: float) -> float:
    """Undamped tip receptance of a uniform cantilever [m/N]:
    (sin bL cosh bL - cos bL sinh bL) / (EI b^3 (1 + cos bL cosh bL)), b^4 = m omega^2/EI
    (the cantilever's point receptance in receptance tables such as Bishop and Johnson,
    The Mechanics of Vibration; from memory; its static limit is L^3/3EI, checked here)."""
    m = STEEL.density * SECTION.area
    b = (m * omega**2 / EI) ** 0.25
    x = b * L
    num = math.sin(x) * math.cosh(x) - math.cos(x) * math.sinh(x)
    return num / (EI * b**3 * (1 + math.cos(x) * math.cosh(x)))


@pytest.mark.parametrize("ratio", [0.5, 1.7, 4.0])
def test_dynamic_tip_receptance_against_closed_form(ratio: float) -> None:
    assert _tip_receptance(1e-3) == pytest.approx(L**3 / (3 * EI), rel=1e-6)
    result = fe.solve(cantilever(), 20)
    omega = ratio * result.modes[0].omega
    u = modal_displacement(result.modes, 1e-7, 1.0, L, [L], omega / (2 * math.pi))
    # 20 modes: the truncated tail is a few parts in 10^4 (it falls as about N^-3)
    assert abs(u[0, 0]) == pytest.approx(abs(_tip_receptance(omega)), rel=1e-3)


def test_response_at_the_forcing_point_and_each_attachment() -> None:
    member = cantilever(masses=(PointMass(0.5, 0.3),), springs=(Spring(0.8, 2e3),))
    result = fe.solve(member, 8)
    motor = Excitation("motor", 20.0, 20.0, (1.0, 2.0), force=10.0, force_at=L)
    out = forced_response(member, result, [motor], 0.02)
    assert [ln.order for ln in out.lines] == [1.0, 2.0]
    first = out.lines[0]
    assert [p.name for p in first.points] == ["force", "mass[0]", "spring[0]"]
    f1 = result.modes[0].frequency_hz
    assert first.amplification[0] == pytest.approx(amplification(20.0 / f1, 0.02))
    p = first.points[0]
    big = 2 * math.pi * 20.0
    assert (p.velocity, p.acceleration) == pytest.approx(
        (big * p.displacement, big**2 * p.displacement)
    )
    direct = modal_displacement(result.modes, 0.02, 10.0, L, [0.5], 20.0)
    assert first.points[1].displacement == pytest.approx(abs(direct[0, 0]))
    assert 0 < first.last_mode_share < 1e-2


def test_range_takes_the_resonant_peak() -> None:
    member = cantilever()
    result = fe.solve(member, 6)
    f1 = result.modes[0].frequency_hz
    drive = Excitation("vfd", 0.5 * f1, 1.5 * f1, (1.0,), force=1.0, force_at=L)
    line = forced_response(member, result, [drive], 0.02).lines[0]
    # the peak of the first mode's amplification, 1/(2 zeta sqrt(1 - zeta^2)) (common practice)
    assert line.amplification[0] == pytest.approx(1 / (2 * 0.02 * math.sqrt(1 - 0.02**2)), rel=1e-9)
    assert line.points[0].frequency_hz == pytest.approx(f1, rel=1e-3)


def test_no_amplitudes_for_a_member_free_as_a_rigid_body() -> None:
    member = Member((Segment(L, STEEL, SECTION),), "free", "free")
    result = fe.solve(member, 4)
    out = forced_response(
        member, result, [Excitation("m", 40.0, 40.0, force=1.0, force_at=0.0)], 0.02
    )
    assert out.lines[0].points == ()
    assert any("rigid body" in n for n in out.notes)


def test_lines_above_the_computed_modes_say_so() -> None:
    member = cantilever()
    result = fe.solve(member, 2)
    high = Excitation("fast", 500.0, 500.0, force=1.0, force_at=L)
    assert any(
        "compute more modes" in n for n in forced_response(member, result, [high], 0.02).notes
    )


@pytest.mark.parametrize("zeta", [0.0, -0.1, 1.0, math.nan])
def test_bad_damping_is_refused(zeta: float) -> None:
    member = cantilever()
    with pytest.raises(InputError):
        forced_response(member, fe.solve(member, 2), [], zeta)
