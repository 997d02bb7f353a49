"""Every direction through the worksheet, the command line's text and its JSON."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from beamtone.calc.errors import InputError
from beamtone.calc.worksheet import loads
from tests.calc.directions.exact import rectangle_j_series, tip_inertia_betas
from tests.cli.inprocess import run

# The figures were measured when beamtone solved Euler-Bernoulli bending only: these
# worksheets ask for that theory to reproduce them.
BRACKET = """
format = 1
title = "Flat bracket drawn deep"
[member]
length = "0.5 m"
material = "steel"
theory = "euler-bernoulli"
section = { shape = "rectangle", width = "8 mm", depth = "40 mm" }
[supports]
left = "clamped"
right = "free"
"""

PUMP_SPAN = """
format = 1
title = "Pump span"
[member]
length = "6 m"
material = "steel"
theory = "euler-bernoulli"
section = { shape = "i-beam", width = "215 mm", depth = "162 mm", flange = "10 mm", web = "7 mm" }
added_mass = "100 kg/m"
[supports]
left = "pinned"
right = "pinned"
[[mass]]
at = "3 m"
mass = "291 kg"
[check]
modes = 3
"""


def _solve(capsys, tmp_path: Path, text: str, *options: str) -> tuple[int, str, str]:
    path = tmp_path / "sheet.toml"
    path.write_text(text)
    return run(capsys, "solve", str(path), *options)


def test_bracket_json_keeps_modes_and_adds_every_direction(capsys, tmp_path):
    # The figures: 130.5 Hz in the depth plane, 26.1 Hz the flat way.
    status, out, _ = _solve(capsys, tmp_path, BRACKET, "--json")
    assert status == 0
    data = json.loads(out)
    assert round(data["modes"][0]["frequency_hz"], 1) == 130.5  # "modes": the depth plane
    assert set(data["modes"][0]) >= {  # the keys modes had before every direction
        "number", "frequency_hz", "omega_rad_s", "estimated_error", "effective_mass_kg",
        "effective_mass_fraction", "cumulative_mass_fraction",
    }  # fmt: skip
    every = data["all_modes"]
    assert all(  # the issue's keys (bending modes also carry both theories' values)
        set(m) >= {"direction", "number", "frequency_hz", "omega_rad_s", "estimated_error"}
        for m in every
    )
    assert [m["frequency_hz"] for m in every] == sorted(m["frequency_hz"] for m in every)
    assert len(every) == 4 * 5  # five modes (the default) in each of four directions
    assert every[0]["direction"] == "width" and round(every[0]["frequency_hz"], 1) == 26.1
    assert data["governing"]["direction"] == "width"
    assert list(data["directions"]) == ["depth", "width", "torsion", "axial"]
    for name, d in data["directions"].items():
        assert d["computed"] and d["reason"] is None, name
        assert d["handbook"] is not None, name  # a uniform cantilever: every one a known case
        assert [m["direction"] for m in d["modes"]] == [name] * 5
    assert (
        data["directions"]["depth"]["modes"][0]["frequency_hz"] == data["modes"][0]["frequency_hz"]
    )


def test_text_leads_with_the_governing_mode(capsys, tmp_path):
    status, out, _ = _solve(capsys, tmp_path, BRACKET, "--modes", "2")
    assert status == 0
    lines = out.splitlines()
    assert lines[2].startswith("  governing 26.0922 Hz, width plane mode 1")
    for heading in ("  depth plane  ", "  width plane  ", "  torsion  ", "  axial  "):
        assert any(line.startswith(heading) for line in lines), heading
    assert "bending-torsion coupling" in out  # the model's assumption, stated


def test_modes_option_gives_n_per_direction(capsys, tmp_path):
    status, out, _ = _solve(capsys, tmp_path, PUMP_SPAN, "--json", "--modes", "2")
    data = json.loads(out)
    assert status == 0 and len(data["all_modes"]) == 8
    assert all(len(d["modes"]) == 2 for d in data["directions"].values())


def test_pump_span_weak_axis_mode_governs_and_is_named(capsys, tmp_path):
    # The figures: strong axis 6.5 and 33.8 Hz; weak axis 26.7 Hz (its second mode),
    # inside 1480 rpm +- 20 %.
    status, out, _ = _solve(capsys, tmp_path, PUMP_SPAN, "--json")
    data = json.loads(out)
    assert [round(m["frequency_hz"], 1) for m in data["modes"][:2]] == [6.5, 33.8]
    width = data["directions"]["width"]["modes"]
    assert round(width[1]["frequency_hz"], 1) == 26.7
    assert data["governing"]["direction"] == "width"
    notes = " ".join(data["directions"]["torsion"]["notes"])
    assert "warping" in notes and "polar_inertia" in notes


def test_support_overrides_and_per_direction_keys_load():
    sheet = loads(BRACKET.replace('right = "free"', 'right = "free"\nleft_torsion = "fork"\n'
                                  'left_axial = "free"') + """
[[spring]]
at = "0.5 m"
stiffness = "1 kN/m"
stiffness_width = "0 N/m"
torsional_stiffness = "20 N*m/rad"
axial_stiffness = "1 MN/m"
[[mass]]
at = "0.5 m"
mass = "0.2 kg"
rotary_inertia = "1e-5 kg*m^2"
rotary_inertia_width = "2e-5 kg*m^2"
polar_inertia = "3e-5 kg*m^2"
""")  # fmt: skip
    m = sheet.member
    assert m.left_overrides == (("torsion", "fork"), ("axial", "free"))
    s, p = m.springs[0], m.masses[0]
    assert (s.stiffness_width, s.torsional_stiffness, s.axial_stiffness) == (0.0, 20.0, 1e6)
    assert (p.rotary_inertia_width, p.polar_inertia) == (2e-5, 3e-5)


@pytest.mark.parametrize(
    ("old", "new", "key", "hint"),
    [
        ('right = "free"', 'right = "free"\nleft_torsion = "hinged"', "supports.left_torsion",
         None),
        ('right = "free"', 'right = "free"\nleft_torsoin = "fork"', "supports.left_torsoin",
         "did you mean 'left_torsion'?"),
        ('right = "free"', 'right = "free"\nright_axial = "held"\nright_width = "free"\n'
         'left_width = 3', "supports.left_width", None),
        ('material = "steel"', 'material = { youngs_modulus = "200 GPa", density = '
         '"7850 kg/m^3", shear_modulus = "80 m" }', "member.material.shear_modulus", None),
    ],
)  # fmt: skip
def test_bad_direction_keys_name_what_is_wrong(old, new, key, hint):
    with pytest.raises(InputError) as err:
        loads(BRACKET.replace(old, new))
    assert err.value.key == key
    if hint:
        assert err.value.hint == hint


def test_bad_override_exits_2_with_one_line(capsys, tmp_path):
    text = BRACKET.replace('right = "free"', 'right = "free"\nright_torsion = "held"')
    status, out, err = _solve(capsys, tmp_path, text)
    assert status == 2 and out == ""
    assert "supports.right_torsion" in err and "clamped, fork, free" in err
    assert "Traceback" not in err


def test_direct_properties_with_and_without_the_width_plane(capsys, tmp_path):
    text = BRACKET.replace(
        'section = { shape = "rectangle", width = "8 mm", depth = "40 mm" }',
        'section = { area = "320 mm^2", second_moment = "42667 mm^4", depth = "40 mm" }',
    )
    status, out, _ = _solve(capsys, tmp_path, text, "--json")
    data = json.loads(out)
    assert status == 0
    width = data["directions"]["width"]
    assert not width["computed"] and "second_moment_width" in width["reason"]
    assert not data["directions"]["torsion"]["computed"]
    assert {m["direction"] for m in data["all_modes"]} == {"depth", "axial"}
    text = text.replace('depth = "40 mm" }', 'depth = "40 mm", second_moment_width = '
                        '"1706.7 mm^4", torsion_constant = "5966 mm^4" }')  # fmt: skip
    status, out, _ = _solve(capsys, tmp_path, text, "--json")
    data = json.loads(out)
    assert round(data["governing"]["frequency_hz"], 1) == 26.1
    assert data["directions"]["torsion"]["computed"]


def test_shear_modulus_from_the_material():
    # timber: G from EN 338 (C24, G_mean = 0.69 GPa, from memory), not E/(2(1 + nu))
    sheet = loads(BRACKET.replace('material = "steel"', 'material = "timber-c24"'))
    assert sheet.member.segments[0].material.shear_modulus_or_none == 0.69e9
    inline = loads(BRACKET.replace(
        'material = "steel"',
        'material = { youngs_modulus = "200 GPa", density = "7850 kg/m^3", poisson_ratio = 0.25 }',
    ))  # fmt: skip
    assert inline.member.segments[0].material.shear_modulus_or_none == pytest.approx(80e9)


SQUARE_SHAFT = """
format = 1
title = "Square shaft with a ring"
[member]
length = "0.4 m"
material = "steel"
theory = "euler-bernoulli"
section = { shape = "rectangle", width = "30 mm", depth = "30 mm" }
[supports]
left = "clamped"
right = "free"
[[mass]]
at = "0.4 m"
mass = "5 kg"
rotary_inertia = "0.625 kg*m^2"   # a thin ring of 0.5 m radius: m r^2/2 about a diameter
polar_inertia = "1.25 kg*m^2"     # and m r^2 about its axis
"""


def test_square_shaft_with_a_ring_governs_in_torsion(capsys, tmp_path):
    # Torsion with the exact J of the square (0.1406 a^4, Timoshenko and Goodier, section 109)
    # and the ring at the tip: omega = beta c / L with beta tan(beta) = mu = rho Ip L / J_ring
    # (Thomson, section 9.2, from memory); the two bending planes coincide, both reported.
    status, out, _ = _solve(capsys, tmp_path, SQUARE_SHAFT, "--json")
    data = json.loads(out)
    assert status == 0
    assert data["governing"]["direction"] == "torsion"
    torsion = data["directions"]["torsion"]
    assert "tip inertia" in torsion["handbook"]["case"]
    a, L, rho, G = 0.03, 0.4, 7850.0, 200e9 / 2.6
    J, Ip = rectangle_j_series(a, a), a**4 / 6
    beta = tip_inertia_betas(rho * Ip * L / 1.25, 1)[0]
    exact = beta * math.sqrt(G * J / (rho * Ip)) / L / (2 * math.pi)
    assert torsion["modes"][0]["frequency_hz"] == pytest.approx(exact, rel=1e-6)
    assert J / a**4 == pytest.approx(0.1406, abs=5e-5)
    assert data["directions"]["width"]["same_as"] == "depth"


@pytest.mark.parametrize(
    "name", sorted(p.name for p in (Path(__file__).parents[3] / "worksheets").glob("*.toml"))
)
def test_example_depth_plane_results_are_the_depth_plane_solved_alone(name):
    # Every direction is added beside the depth plane, never into it: the depth plane's modes,
    # handbook values and bounds are bit for bit those of the depth plane solved alone (what
    # the width plane reuses from it is scaled copies, never the depth plane's own results).
    from beamtone.calc.analysis import analyse
    from beamtone.calc.worksheet import load

    sheet = load(Path(__file__).parents[3] / "worksheets" / name)
    every, alone = analyse(sheet), analyse(sheet, every_direction=False)
    assert [m.frequency_hz for m in every.modes.modes] == [
        m.frequency_hz for m in alone.modes.modes
    ]
    assert [m.estimated_error for m in every.modes.modes] == [
        m.estimated_error for m in alone.modes.modes
    ]
    assert every.handbook == alone.handbook
    assert every.estimate == alone.estimate and every.lower_bound == alone.lower_bound
    assert every.modes.warnings == alone.modes.warnings
    assert every.directions is not None and every.directions["depth"].solution is every.modes
