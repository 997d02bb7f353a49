"""Sizing and sweeps that follow any direction's modes (--direction)."""

from __future__ import annotations

import json
import math

import pytest

from beamtone.calc import sizing
from beamtone.calc.directions import solve_directions
from beamtone.calc.errors import InputError
from beamtone.calc.materials import LIBRARY
from beamtone.calc.worksheet import loads
from tests.calc.directions.test_worksheet_directions import BRACKET
from tests.cli.inprocess import run

STEEL = LIBRARY["steel"]
EB_BRACKET = BRACKET  # the closed forms below are Euler-Bernoulli's, as the bracket asks
assert 'theory = "euler-bernoulli"' in EB_BRACKET


def _width_plane_hz(b: float, L: float = 0.5) -> float:
    # cantilever, f = 1.87510407^2/(2 pi L^2) sqrt(E I/m) with I/A = b^2/12 in the width plane
    # (Blevins, Formulas for Natural Frequency and Mode Shape, Table 8-1)
    return 1.87510407**2 / (2 * math.pi * L**2) * math.sqrt(STEEL.youngs_modulus * b**2 / 12
                                                            / STEEL.density)  # fmt: skip


def test_size_the_width_for_a_width_plane_target():
    sheet = loads(EB_BRACKET)
    target = _width_plane_hz(0.016)
    result = sizing.size_for_target(
        sheet, "member.section.width", 0.004, 0.030, target, direction="width"
    )
    assert result.recommended is not None
    assert result.solutions[result.recommended].value_si == pytest.approx(0.016, rel=1e-5)
    assert "width plane mode 1" in result.message


def test_governing_target_out_of_reach_is_said():
    # Varying the depth cannot lift the governing mode above the width plane's 26.1 Hz: the
    # depth-plane sizing would report a depth, the governing sizing says it stays below.
    sheet = loads(EB_BRACKET)
    depth = sizing.size_for_target(sheet, "member.section.depth", 0.004, 0.060, 40.0,
                                   direction="depth")  # fmt: skip
    assert depth.recommended is not None and "depth-plane bending only" in depth.message
    governing = sizing.size_for_target(
        sheet, "member.section.depth", 0.004, 0.060, 40.0, direction="governing"
    )
    assert governing.recommended is None
    assert "stays below" in governing.message and "all directions" in governing.message
    assert governing.solutions[0].frequency_hz == pytest.approx(_width_plane_hz(0.008), 1e-6)


def test_sweep_follows_a_direction():
    sheet = loads(EB_BRACKET)
    result = sizing.sweep(sheet, "member.length", 0.4, 0.6, 3, 2, direction="torsion")
    for value, row in zip(result.values_si, result.frequencies_hz, strict=True):
        member = sizing.variation(sheet, "member.length").member(float(value))
        exact = [m.frequency_hz for m in solve_directions(member, 2)["torsion"].modes]
        assert list(row) == pytest.approx(exact, rel=1e-12)


def test_unknown_direction_is_refused_with_a_hint():
    with pytest.raises(InputError) as err:
        sizing.read_request(loads(EB_BRACKET), "member.length", "0.4 m", "0.6 m", target="30 Hz",
                            direction="widht")  # fmt: skip
    assert err.value.key == "--direction" and err.value.hint == "did you mean 'width'?"


def test_command_line_direction(capsys, tmp_path):
    path = tmp_path / "bracket.toml"
    path.write_text(EB_BRACKET)
    target = f"{_width_plane_hz(0.012):.6f} Hz"
    status, out, _ = run(capsys, "size", str(path), "--vary", "member.section.width",
                         "--between", "4 mm", "30 mm", "--target", target, "--direction",
                         "width", "--json")  # fmt: skip
    data = json.loads(out)
    assert status == 0 and data["direction"] == "width"
    best = data["solutions"][data["recommended"]]
    assert best["value_si"] == pytest.approx(0.012, rel=1e-5)
    status, _, err = run(capsys, "sweep", str(path), "--vary", "member.length", "--between",
                         "0.4 m", "0.6 m", "--direction", "sideways")  # fmt: skip
    assert status == 2 and "--direction" in err and "Traceback" not in err


# --- the default: the governing mode (the lowest of every direction) ---------------------------

LAMBDA1 = 1.87510407  # clamped-free, R. D. Blevins, Formulas for Natural Frequency and Mode
# Shape (1979), Table 8-1 (1.87510 to six figures, common practice)


def _length_for(f_hz: float, b: float) -> float:
    # the cantilever length whose fundamental in the plane of thickness b is f_hz:
    # f = LAMBDA1^2 / (2 pi L^2) sqrt(E b^2 / (12 rho))
    return math.sqrt(LAMBDA1**2 / (2 * math.pi * f_hz)
                     * math.sqrt(STEEL.youngs_modulus * b**2 / (12 * STEEL.density)))  # fmt: skip


def test_default_sizing_follows_the_governing_width_plane():
    # the flat 40 x 8 mm steel bracket drawn deep: the width plane governs (26.1 Hz against
    # the depth plane's 130.5 Hz), so by default a target sizes the width plane's mode
    sheet = loads(EB_BRACKET)
    result = sizing.size_for_target(sheet, "member.length", 0.2, 0.8, 30.0)
    (s,) = result.solutions
    assert s.value_si == pytest.approx(_length_for(30.0, 0.008), rel=1e-6)
    assert result.message.startswith("mode 1 of all directions equals 30 Hz")
    assert result.message.endswith("there it is the width plane mode 1")
    # the depth plane, asked for explicitly, gives the length the old default gave
    depth = sizing.size_for_target(sheet, "member.length", 0.2, 1.6, 30.0, direction="depth")
    assert depth.solutions[0].value_si == pytest.approx(_length_for(30.0, 0.040), rel=1e-6)
    assert "depth-plane bending only" in depth.message


def test_default_sweep_is_the_lowest_of_every_direction():
    # more than 64 points: the sweep interpolates each direction's modes and takes the lowest
    # afterwards; every point agrees with a direct solve of every direction (to 1e-6, the
    # solver's accuracy) although the width plane's second mode crosses torsion's first here
    sheet = loads(EB_BRACKET)
    result = sizing.sweep(sheet, "member.section.width", 0.004, 0.040, 101, modes=3)
    var = sizing.variation(sheet, "member.section.width")
    crossings = 0
    previous = None
    for i in range(0, 101, 7):
        member = var.member(float(result.values_si[i]))
        modes = solve_directions(member, 3, checks=False).all_modes[:3]
        assert list(result.frequencies_hz[i]) == pytest.approx(
            [m.frequency_hz for m in modes], rel=1e-6
        )
        order = [m.direction for m in modes]
        crossings += previous is not None and order != previous
        previous = order
    assert crossings > 0  # the order of the directions changes along the sweep
    assert result.solved < 101


def test_default_excitation_sizing_checks_every_direction():
    # the pump span of the issue: strong axis 6.5 and 33.8 Hz look clear of 1480 rpm, its
    # weak-axis mode near 26.7 Hz is in the band; sizing the depth now keeps every mode
    # of every direction out of the band (each checked against a direct solve)
    from tests.calc.directions.test_worksheet_directions import PUMP_SPAN

    sheet = loads(PUMP_SPAN)
    result = sizing.size_for_excitation(sheet, "member.section.width", 0.1, 0.4, 1480 / 60,
                                        (1,), 0.2, modes=3)  # fmt: skip
    assert result.recommended is not None
    assert "every mode of every direction computed was checked" in result.message
    var = sizing.variation(sheet, "member.section.width")
    chosen = result.solutions[result.recommended]
    dirs = solve_directions(var.member(chosen.value_si), 3, checks=False)
    assert all(not 0.8 * 1480 / 60 < m.frequency_hz < 1.2 * 1480 / 60 for m in dirs.all_modes)


def test_command_line_names_the_governing_direction(capsys, tmp_path):
    path = tmp_path / "bracket.toml"
    path.write_text(EB_BRACKET)
    status, out, err = run(capsys, "size", str(path), "--vary", "member.length", "--between",
                           "0.2 m", "0.8 m", "--target", "30 Hz", "--json")  # fmt: skip
    data = json.loads(out)
    assert status == 0, err
    assert data["direction"] == "governing"
    assert data["solutions"][0]["value_si"] == pytest.approx(_length_for(30.0, 0.008), 1e-6)
    assert "width plane mode 1" in data["message"]
    status, out, _ = run(capsys, "sweep", str(path), "--vary", "member.length", "--between",
                         "0.4 m", "0.6 m", "--points", "3")  # fmt: skip
    assert status == 0 and "modes: the lowest of all directions together" in out
    status, out, _ = run(capsys, "sweep", str(path), "--vary", "member.length", "--between",
                         "0.4 m", "0.6 m", "--points", "3", "--direction", "depth")  # fmt: skip
    assert status == 0 and "modes: depth plane only (--direction depth)" in out
