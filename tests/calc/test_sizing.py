"""Sizing and sweeps against closed forms, handbook roots and direct solves."""

from __future__ import annotations

import math
import os
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from beamtone.calc import fe, handbook, sizing
from beamtone.calc.errors import InputError
from beamtone.calc.worksheet import load, loads, replace_value, write_atomic

LAMBDA1 = 1.87510407  # clamped-free (R. D. Blevins 1979, Table 8-1)

CANTILEVER = """\
format = 1
title = "bar cantilever"   # a comment that must survive --apply

[member]
length = "800 mm"
material = { youngs_modulus = "200 GPa", density = "7850 kg/m^3" }
section = { shape = "rectangle", width = "30 mm", depth = "10 mm" }   # keep me
theory = "euler-bernoulli"   # the closed forms checked here are Euler-Bernoulli's

[supports]
left = "clamped"
right = "free"
"""

E, RHO, B = 200e9, 7850.0, 0.03


def cantilever_f(length: float, depth: float) -> float:
    """f = lambda^2/(2 pi L^2) sqrt(EI/m), EI/m = E d^2/(12 rho) for a rectangle."""
    return LAMBDA1**2 / (2 * math.pi * length**2) * depth * math.sqrt(E / (12 * RHO))


def test_depth_for_target_matches_closed_form() -> None:
    sheet = loads(CANTILEVER)
    target = 40.0
    result = sizing.size_for_target(
        sheet, "member.section.depth", 0.002, 0.05, target, direction="depth"
    )
    assert len(result.solutions) == 1 and result.recommended == 0
    s = result.solutions[0]
    exact = target * 2 * math.pi * 0.8**2 / LAMBDA1**2 * math.sqrt(12 * RHO / E)
    assert s.value_si == pytest.approx(exact, rel=1e-6)
    assert s.value.endswith(" mm")  # written in the worksheet's unit
    assert s.above == "above"  # deeper is stiffer relative to its mass


def test_length_for_target_matches_closed_form() -> None:
    sheet = loads(CANTILEVER)
    result = sizing.size_for_target(sheet, "member.length", 0.2, 2.0, 25.0, direction="depth")
    (s,) = result.solutions
    assert cantilever_f(s.value_si, 0.01) == pytest.approx(25.0, rel=1e-6)
    assert s.above == "below"


def test_tip_mass_a_cantilever_can_carry() -> None:
    """The largest tip mass for a target, checked through the tip-mass frequency equation."""
    text = CANTILEVER + '\n[[mass]]\nat = "800 mm"\nmass = "1 kg"\n'
    sheet = loads(text)
    target = 10.0
    result = sizing.size_for_target(sheet, "mass[0].mass", 0.01, 20.0, target, direction="depth")
    (s,) = result.solutions
    seg = sheet.member.segments[0]
    mL = seg.mass_per_length * 0.8
    lam = handbook.tip_mass_parameters(s.value_si / mL, 0.0, 1)[0]
    f = lam**2 / (2 * math.pi * 0.8**2) * math.sqrt(seg.bending_stiffness / seg.mass_per_length)
    assert f == pytest.approx(target, rel=1e-6)


def test_every_solution_re_solved_hits_its_target() -> None:
    sheet = load(Path(__file__).resolve().parents[2] / "worksheets" / "stepped-spindle.toml")
    key = "member.segment[2].section.diameter"
    result = sizing.size_for_target(sheet, key, 0.02, 0.08, 340.0, direction="depth")
    assert result.solutions
    var = sizing.variation(sheet, key)
    for s in result.solutions:
        f = fe.solve(var.member(s.value_si), 1).modes[0].frequency_hz
        assert f == pytest.approx(340.0, rel=1e-3)


def test_non_monotonic_variable_gives_both_crossings() -> None:
    """Moving the inner hanger of a three-span pipe: the fundamental peaks in between."""
    sheet = load(Path(__file__).resolve().parents[2] / "worksheets" / "pipe-on-hangers.toml")
    # the peak sits just above 20 Hz under Euler-Bernoulli (under Timoshenko just below it)
    sheet = replace(sheet, member=replace(sheet.member, theory="euler-bernoulli"))
    result = sizing.size_for_target(
        sheet, "supports.inner[0].at", 1.0, 4.5, 20.0, direction="depth"
    )
    assert len(result.solutions) == 2
    low, high = result.solutions
    assert low.above == "above" and high.above == "below"
    var = sizing.variation(sheet, "supports.inner[0].at")
    for s in result.solutions:
        assert fe.solve(var.member(s.value_si), 1).modes[0].frequency_hz == pytest.approx(
            20.0, rel=1e-3
        )


def test_no_crossing_says_so() -> None:
    sheet = loads(CANTILEVER)
    result = sizing.size_for_target(
        sheet, "member.section.depth", 0.002, 0.004, 500.0, direction="depth"
    )
    assert result.recommended is None
    assert "below" in result.message
    assert len(result.solutions) == 1 and result.solutions[0].value_si == pytest.approx(0.004)


def test_margins_flag_exactly_the_modes_inside() -> None:
    check = sizing.margins((10.0, 19.0, 21.0, 29.0, 45.0), 25.0, (1, 2), 0.2)
    # bands: 20..30 and 40..60 Hz
    assert check.inside == (
        (False, False),
        (False, False),
        (True, False),
        (True, False),
        (False, True),
    )
    assert not check.clear


def test_excitation_sizing_keeps_every_mode_clear() -> None:
    sheet = loads(CANTILEVER)
    result = sizing.size_for_excitation(
        sheet, "member.length", 0.3, 1.5, 1480 / 60, (1, 2), 0.2, modes=3, direction="depth"
    )
    assert result.recommended is not None and result.margins is not None
    assert result.margins.clear
    var = sizing.variation(sheet, "member.length")
    for s in result.solutions:
        freqs = fe.solve(var.member(s.value_si), 3).frequencies_hz
        check = sizing.margins(freqs * (1 - 1e-7), 1480 / 60, (1, 2), 0.2)
        assert sum(map(sum, check.inside)) <= 1  # on a band edge at most


def test_timoshenko_sweep_is_not_scaled_by_bending_groups() -> None:
    """The groups scale Euler-Bernoulli bending exactly; Timoshenko's frequencies depend on
    the slenderness too, so a Timoshenko bar varied in length is solved, not scaled (scaled
    from 0.3 m to 1 m its fundamental came out 0.5 % high)."""
    sheet = load(Path(__file__).resolve().parents[2] / "worksheets" / "free-free-bar.toml")
    assert sheet.member.theory == "timoshenko"
    result = sizing.sweep(sheet, "member.length", 0.3, 1.0, 4, modes=2, direction="depth")
    var = sizing.variation(sheet, "member.length")
    for value, row in zip(result.values_si, result.frequencies_hz, strict=True):
        direct = fe.solve(var.member(float(value)), 2).frequencies_hz
        assert row == pytest.approx(direct, rel=1e-12)


def test_sweep_agrees_with_direct_solves_and_scales_by_groups() -> None:
    sheet = loads(CANTILEVER)
    result = sizing.sweep(sheet, "member.length", 0.4, 1.2, 9, modes=3, direction="depth")
    assert result.solved == 1  # a bare uniform member: one solve, the rest by similitude
    var = sizing.variation(sheet, "member.length")
    for v, row in zip(result.values_si, result.frequencies_hz, strict=True):
        direct = fe.solve(var.member(float(v)), 3)
        error = max(m.estimated_error for m in direct.modes)
        assert row == pytest.approx(direct.frequencies_hz, rel=max(2 * error, 1e-9))


def test_sweep_with_attachments_solves_each_point() -> None:
    text = CANTILEVER + '\n[[mass]]\nat = "500 mm"\nmass = "0.4 kg"\n'
    sheet = loads(text)
    result = sizing.sweep(sheet, "mass[0].at", 0.1, 0.8, 5, modes=2, direction="depth")
    assert result.solved == 5
    assert np.all(np.diff(result.frequencies_hz[:, 0]) < 0)  # a mass further out lowers f1
    assert np.all(result.member_mass_kg == result.member_mass_kg[0])


def test_apply_changes_only_that_value(tmp_path: Path) -> None:
    path = tmp_path / "c.toml"
    path.write_text(CANTILEVER)
    new = replace_value(CANTILEVER, "member.section.depth", "12.5 mm")
    write_atomic(path, new)
    before, after = CANTILEVER.splitlines(), path.read_text().splitlines()
    changed = [(a, b) for a, b in zip(before, after, strict=True) if a != b]
    assert changed == [
        (
            'section = { shape = "rectangle", width = "30 mm", depth = "10 mm" }   # keep me',
            'section = { shape = "rectangle", width = "30 mm", depth = "12.5 mm" }   # keep me',
        )
    ]
    assert load(path).member.segments[0].section.depth == pytest.approx(0.0125)


def test_failure_before_rename_leaves_the_original(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    path = tmp_path / "c.toml"
    path.write_text(CANTILEVER)

    def crash(src: object, dst: object) -> None:
        raise OSError(5, "simulated crash")

    monkeypatch.setattr(os, "replace", crash)
    with pytest.raises(InputError) as info:
        write_atomic(path, "garbage")
    assert info.value.key == "file"
    assert path.read_text() == CANTILEVER
    assert list(tmp_path.iterdir()) == [path]  # no temporary file left behind


def test_replace_value_refuses_a_result_that_would_not_load() -> None:
    with pytest.raises(InputError):
        replace_value(CANTILEVER, "member.section.depth", "12.5 kg")


@pytest.mark.parametrize(
    ("key", "message"),
    [
        ("member.section.diameter", "member.section has"),
        ("mass[0].mass", "the worksheet has"),
        ("supports.left", "a quantity"),
        ("member..length", "a worksheet key"),
    ],
)
def test_bad_keys(key: str, message: str) -> None:
    with pytest.raises(InputError) as info:
        sizing.variation(loads(CANTILEVER), key)
    assert info.value.key == "--vary"
    assert message in info.value.message


def test_long_sweep_interpolates_within_tolerance_of_direct_solves() -> None:
    """Sweeps over 64 points interpolate between verified solves: every point must still
    agree with an independent solve to the solver's accuracy (1e-6)."""
    sheet = load(Path(__file__).resolve().parents[2] / "worksheets" / "stepped-spindle.toml")
    result = sizing.sweep(sheet, "mass[1].at", 0.41, 0.5, 300, modes=3, direction="depth")
    assert result.solved < 300  # work reused between neighbouring points
    var = sizing.variation(sheet, "mass[1].at")
    for i in range(0, 300, 23):
        member = var.member(float(result.values_si[i]))
        direct = fe.solve(member, 3).frequencies_hz
        assert result.frequencies_hz[i] == pytest.approx(direct, rel=1e-6)
        # values pass through the worksheet's text (10 digits): mass agrees to ~1e-10
        assert result.member_mass_kg[i] == pytest.approx(member.member_mass, rel=1e-9)


def test_two_variable_sweep_agrees_with_direct_solves() -> None:
    sheet = loads(CANTILEVER + '\n[[mass]]\nat = "800 mm"\nmass = "0.2 kg"\n')
    result = sizing.sweep2(
        sheet, ("member.length", 0.5, 1.0, 30), ("member.section.depth", 0.008, 0.016, 30),
        modes=2, direction="depth",
    )  # fmt: skip
    assert result.frequencies_hz.shape == (30, 30, 2)
    assert result.solved < 30 * 30
    var1 = sizing.variation(sheet, "member.length")
    var2 = sizing.variation(sheet, "member.section.depth")
    for i, j in ((0, 0), (7, 22), (15, 15), (29, 29), (28, 1)):
        a, b = float(result.values_si[0][i]), float(result.values_si[1][j])
        member = var1.member(a, (var2, b))
        direct = fe.solve(member, 2).frequencies_hz
        assert result.frequencies_hz[i, j] == pytest.approx(direct, rel=1e-6)
        assert result.member_mass_kg[i, j] == pytest.approx(member.member_mass, rel=1e-9)
    with pytest.raises(InputError):
        sizing.sweep2(sheet, ("member.length", 0.5, 1, 3), ("member.length", 0.5, 1, 3))


ROOT_SPRING = CANTILEVER.replace(
    'right = "free"', 'right = "free"\nleft_rotational_stiffness = "2 kN*m/rad"'
)


def test_a_support_stiffness_is_sized_like_any_other_key() -> None:
    # A cantilever with a root rotational spring k: R = k L / (EI) = 10 gives lambda_1 =
    # 1.7227 (the exact frequency equation, solved in tests/calc/test_compliance.py, whose
    # four digits are the commonly tabulated ones, from memory).  Sizing the spring for that
    # frequency must find k = 10 EI / L.
    from tests.calc.test_compliance import _lambda_1

    sheet = loads(ROOT_SPRING)
    EI = E * B * 0.01**3 / 12.0
    m = RHO * B * 0.01
    lam = _lambda_1(10.0)
    target = lam**2 / (2 * math.pi * 0.8**2) * math.sqrt(EI / m)
    key = "supports.left_rotational_stiffness"
    result = sizing.size_for_target(sheet, key, 1000.0, 20000.0, target)
    (s,) = result.solutions
    assert s.value_si == pytest.approx(10.0 * EI / 0.8, rel=1e-4)
    assert s.value.endswith(" kN*m/rad")  # written in the worksheet's unit
    swept = sizing.sweep(sheet, key, 1000.0, 20000.0, 3)
    assert swept.frequencies_hz[1][0] == pytest.approx(
        fe.solve(sizing.variation(sheet, key).member(10500.0), 1).frequencies_hz[0], rel=1e-6
    )


def test_a_stiffness_range_to_rigid_is_not_sized() -> None:
    text = ROOT_SPRING.replace('"2 kN*m/rad"', '["2 kN*m/rad", "rigid"]')
    with pytest.raises(InputError) as info:
        sizing.variation(loads(text), "supports.left_rotational_stiffness")
    assert info.value.key == "--vary" and "written as one quantity" in info.value.message
