"""Both principal second moments, torsion and warping constants of every built-in shape."""

from __future__ import annotations

import math

import pytest

from beamtone.calc.errors import InputError
from beamtone.calc.sections import build_section, rectangle_torsion_constant
from tests.calc.directions.exact import rectangle_j_series


@pytest.mark.parametrize("ratio", [1.0, 1.2, 1.5, 2.0, 3.0, 5.0, 10.0, 100.0, 1e4])
def test_rectangle_j_matches_the_exact_series(ratio):
    # The theory-of-elasticity series (Timoshenko and Goodier, Theory of Elasticity,
    # section 109) summed independently in mpmath at 40 digits; beamtone claims 1e-13.
    a, b = 0.03 * ratio, 0.03
    assert rectangle_torsion_constant(a, b) == pytest.approx(rectangle_j_series(a, b), rel=1e-13)
    assert rectangle_torsion_constant(b, a) == rectangle_torsion_constant(a, b)


@pytest.mark.parametrize(
    ("ratio", "k1"),
    # J = k1 a b^3: Timoshenko and Goodier, Theory of Elasticity, table in section 109
    # (3 digits; from memory).
    [
        (1.0, 0.141),
        (1.5, 0.196),
        (2.0, 0.229),
        (2.5, 0.249),
        (3.0, 0.263),
        (4.0, 0.281),
        (5.0, 0.291),
        (10.0, 0.312),
    ],
)
def test_rectangle_j_against_the_published_table(ratio, k1):
    assert rectangle_torsion_constant(ratio, 1.0) / ratio == pytest.approx(k1, abs=6e-4)


def test_square_bar_j_is_not_the_polar_moment():
    # Square bar: J = 0.1406 a^4 (Timoshenko and Goodier, section 109; the figure);
    # the polar moment a^4/6 would give torsional frequencies about 9 % too high.
    sec = build_section("rectangle", {"width": 0.05, "depth": 0.05})
    assert sec.torsion_constant / 0.05**4 == pytest.approx(0.1406, abs=5e-5)
    assert sec.polar_moment == pytest.approx(0.05**4 / 6.0, rel=1e-15)
    too_high = math.sqrt(sec.polar_moment / sec.torsion_constant) - 1.0
    assert 0.08 < too_high < 0.10
    assert sec.second_moment_width == sec.second_moment
    assert sec.warping_constant == 0.0


def test_flat_rectangle_planes_swap_width_and_depth():
    # 40 x 8 mm bar drawn deep: b h^3/12 and h b^3/12 (common practice).
    deep = build_section("rectangle", {"width": 0.008, "depth": 0.040})
    flat = build_section("rectangle", {"width": 0.040, "depth": 0.008})
    assert deep.second_moment == pytest.approx(flat.second_moment_width, rel=1e-15)
    assert deep.second_moment_width == pytest.approx(flat.second_moment, rel=1e-15)
    assert deep.second_moment / deep.second_moment_width == pytest.approx(25.0, rel=1e-14)
    assert deep.torsion_constant == flat.torsion_constant
    assert (deep.width, deep.depth) == (0.008, 0.040)


def test_round_and_tube_torsion_is_the_polar_moment():
    # Circular sections: J = Ip = pi D^4/32 (exact; common practice).
    D = 0.06
    rod = build_section("round", {"diameter": D})
    assert rod.torsion_constant == pytest.approx(math.pi * D**4 / 32.0, rel=1e-15)
    assert rod.polar_moment == rod.torsion_constant
    assert rod.second_moment_width == rod.second_moment
    tube = build_section("round-tube", {"outside_diameter": D, "wall": 0.004})
    Di = D - 0.008
    assert tube.torsion_constant == pytest.approx(math.pi * (D**4 - Di**4) / 32.0, rel=1e-15)
    # thin-walled limit (Bredt): J -> 2 pi r^3 t with r the mean radius; within (t/r)^2
    thin = build_section("round-tube", {"outside_diameter": 1.0, "wall": 0.001})
    r = (1.0 - 0.001) / 2.0
    assert thin.torsion_constant == pytest.approx(2 * math.pi * r**3 * 0.001, rel=1e-5)
    assert tube.warping_constant == rod.warping_constant == 0.0


def test_box_uses_bredt_on_the_mid_line():
    # Bredt: J = 4 A_m^2 / (perimeter / t) for a constant wall (Timoshenko and Goodier,
    # section 115), A_m and the perimeter on the wall's mid-line.
    b, h, t = 0.10, 0.16, 0.005
    sec = build_section("box", {"width": b, "depth": h, "wall": t})
    Am = (b - t) * (h - t)
    assert sec.torsion_constant == pytest.approx(4 * Am**2 * t / (2 * (b - t + h - t)), rel=1e-14)
    assert sec.second_moment_width == pytest.approx(
        (h * b**3 - (h - 2 * t) * (b - 2 * t) ** 3) / 12.0, rel=1e-14
    )
    # a thin square box and a thin round tube of the same mid-line length and wall: the
    # square's J is pi^2/16 of the round's (4 A_m^2 t / perimeter: A_m = s^2 against pi r^2
    # with 4 s = 2 pi r)
    s = 1.0
    square = build_section("box", {"width": s + 1e-4, "depth": s + 1e-4, "wall": 1e-4})
    r = 2 * s / math.pi
    tube = build_section("round-tube", {"outside_diameter": 2 * r + 1e-4, "wall": 1e-4})
    assert square.torsion_constant / tube.torsion_constant == pytest.approx(
        math.pi**2 / 16, rel=1e-3
    )


def test_i_beam_open_section_constants():
    # Open thin-walled: J = sum b t^3/3; Cw = Iy_flanges h0^2/4 with h0 = h - tf
    # (common practice; AISC Design Guide 9 for doubly symmetric I-shapes, from memory).
    b, h, tf, tw = 0.15, 0.30, 0.0107, 0.0071
    sec = build_section("i-beam", {"width": b, "depth": h, "flange": tf, "web": tw})
    hw = h - 2 * tf
    assert sec.torsion_constant == pytest.approx((2 * b * tf**3 + hw * tw**3) / 3, rel=1e-14)
    Iy_flanges = 2 * tf * b**3 / 12
    assert sec.warping_constant == pytest.approx(Iy_flanges * (h - tf) ** 2 / 4, rel=1e-14)
    assert sec.second_moment_width == pytest.approx(Iy_flanges + hw * tw**3 / 12, rel=1e-14)
    assert sec.second_moment_width < sec.second_moment
    assert sec.polar_moment == pytest.approx(sec.second_moment + sec.second_moment_width)
    assert sec.torsion_constant < sec.polar_moment


def test_direct_properties_width_plane_and_torsion_are_optional():
    base = {"area": 1e-3, "second_moment": 2e-6}
    sec = build_section("properties", base)
    assert sec.second_moment_width is None and sec.torsion_constant is None
    assert sec.polar_moment is None and sec.warping_constant is None
    full = build_section(
        "properties", {**base, "second_moment_width": 5e-7, "torsion_constant": 1e-7}
    )
    assert full.polar_moment == pytest.approx(2.5e-6)  # perpendicular-axis theorem
    assert full.warping_constant == 0.0


def test_direct_properties_refuse_impossible_values():
    base = {"area": 1e-3, "second_moment": 2e-6, "second_moment_width": 5e-7}
    # J never exceeds the polar moment (Saint-Venant; equal for a circle), common practice
    with pytest.raises(InputError) as err:
        build_section("properties", {**base, "torsion_constant": 3e-6})
    assert err.value.key == "section.torsion_constant"
    with pytest.raises(InputError) as err:
        build_section("properties", {**base, "width": 0.01})  # A w^2/4 = 2.5e-8 < 5e-7
    assert err.value.key == "section.second_moment_width"
