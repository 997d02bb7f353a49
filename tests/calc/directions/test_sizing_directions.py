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
    depth = sizing.size_for_target(sheet, "member.section.depth", 0.004, 0.060, 40.0)
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
