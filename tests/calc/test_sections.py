"""Section properties of the built-in shapes against hand formulas, read through a worksheet.

References used here: area and second moment of area of simple cross-sections, and the
parallel-axis theorem, as in any strength-of-materials text (common practice); exact
conversion factor 1 in = 0.0254 m (international yard and pound agreement of 1959).
"""

from __future__ import annotations

import math

import pytest

from beamtone.calc.worksheet import loads
from tests.calc.sheets import BASE_SECTION, IN, close, edit

# Hand formulas of elementary strength of materials (common practice).
_SECTION_CASES = [
    pytest.param(
        '{ shape = "rectangle", width = "40 mm", depth = "10 mm" }',
        0.040 * 0.010,
        0.040 * 0.010**3 / 12,
        id="rectangle",
    ),
    pytest.param(
        '{ shape = "rectangle", width = "2 in", depth = "0.5 in" }',
        (2 * IN) * (0.5 * IN),
        (2 * IN) * (0.5 * IN) ** 3 / 12,
        id="rectangle-inches",
    ),
    pytest.param(
        '{ shape = "round", diameter = "30 mm" }',
        math.pi * 0.030**2 / 4,
        math.pi * 0.030**4 / 64,
        id="round",
    ),
    pytest.param(
        '{ shape = "round-tube", outside_diameter = "60 mm", wall = "4 mm" }',
        math.pi * (0.060**2 - 0.052**2) / 4,
        math.pi * (0.060**4 - 0.052**4) / 64,
        id="round-tube",
    ),
    pytest.param(
        '{ shape = "round-tube", outside_diameter = "30 mm", wall = "15 mm" }',
        math.pi * 0.030**2 / 4,
        math.pi * 0.030**4 / 64,
        id="round-tube-solid-limit",
    ),
    pytest.param(
        '{ shape = "box", width = "50 mm", depth = "80 mm", wall = "5 mm" }',
        0.050 * 0.080 - 0.040 * 0.070,
        # two webs (5 x 80) plus two flanges (40 x 5) by the parallel-axis theorem
        2 * 0.005 * 0.080**3 / 12 + 2 * (0.040 * 0.005**3 / 12 + 0.040 * 0.005 * 0.0375**2),
        id="box",
    ),
    pytest.param(
        '{ shape = "i-beam", width = "100 mm", depth = "200 mm", flange = "8.5 mm", '
        'web = "5.6 mm" }',
        2 * 0.100 * 0.0085 + (0.200 - 2 * 0.0085) * 0.0056,
        # web plus two flanges by the parallel-axis theorem
        0.0056 * 0.183**3 / 12 + 2 * (0.100 * 0.0085**3 / 12 + 0.100 * 0.0085 * 0.09575**2),
        id="i-beam",
    ),
    pytest.param(
        '{ area = "1200 mm^2", second_moment = "5e5 mm^4" }',
        1200e-6,
        5e5 * 1e-12,
        id="properties-implied",
    ),
    pytest.param(
        '{ shape = "properties", area = "0.7 in^2", second_moment = "2.9 in^4", depth = "6 in" }',
        0.7 * IN**2,
        2.9 * IN**4,
        id="properties-with-depth",
    ),
]


@pytest.mark.parametrize(("section", "area", "second_moment"), _SECTION_CASES)
def test_section_properties_match_hand_formulas(
    section: str, area: float, second_moment: float
) -> None:
    text = edit(BASE_SECTION, f"section = {section}")
    sec = loads(text).member.segments[0].section
    assert close(sec.area, area)
    assert close(sec.second_moment, second_moment)
