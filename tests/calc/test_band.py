"""Checks of :mod:`calc.band`: the band of each mode over the tolerances.

References: frequencies are monotonic in E, rho, masses and spring stiffnesses (Rayleigh's
principle: adding stiffness raises, adding mass lowers every eigenvalue; common practice),
so for these inputs the extremes over a box are at its corners and the reported band must
contain every corner solve; first order is exact for a single input f ~ sqrt(E)
to within its second-order term (Taylor, common practice).
"""

from __future__ import annotations

import math

import numpy as np

from beamtone.calc import fe, worksheet
from beamtone.calc.band import (
    CORNERS,
    FIRST_ORDER,
    SAMPLED,
    band,
    corner_values,
    latin_hypercube,
)
from beamtone.calc.tolerances import COMPLIANCE, Design, Tolerance, nominal_value, vary
from tests.calc.bending import euler_bernoulli

_ROOT = __import__("pathlib").Path(__file__).resolve().parents[2]


def _sheet(name: str) -> tuple[Design, fe.FEResult, int]:
    sheet = worksheet.load(_ROOT / "worksheets" / name)
    design = euler_bernoulli(Design.of(sheet))
    return design, fe.solve(design.solved_member(), sheet.modes), sheet.modes


def _relative(design: Design, key: str, rel: float) -> Tolerance:
    v = nominal_value(design, key)
    return Tolerance(key, v, v * (1 - rel), v * (1 + rel), written=f"{100 * rel:g} %")


def test_band_contains_every_corner_for_monotonic_inputs() -> None:
    design, result, modes = _sheet("stepped-spindle.toml")
    tols = [_relative(design, "member.material.youngs_modulus", 0.05),
            _relative(design, "mass[1].mass", 0.10),
            _relative(design, "spring[1].stiffness", 0.30),
            _relative(design, "member.material.density", 0.02)]  # fmt: skip
    out = band(design, result, tols)
    assert out.solves == 16
    for point in corner_values(tols):
        member = vary(design, {t.key: v for t, v in zip(tols, point, strict=True)})
        f = fe.solve(member.solved_member(), modes).frequencies_hz
        for b, fi in zip(out.modes, f, strict=True):
            assert b.low_hz - 1e-9 * fi <= fi <= b.high_hz + 1e-9 * fi
    for b in out.modes:
        assert b.low_hz < b.frequency_hz < b.high_hz
        assert b.method in (FIRST_ORDER, CORNERS)
        # ranked: largest contribution first; the JSON shape
        c = [abs(e.contribution_hz) for e in b.effects]
        assert c == sorted(c, reverse=True)
        d = b.as_dict()
        assert set(d["band"]) == {"low_hz", "high_hz", "method"}
        assert set(d["sensitivities"][0]) == {"key", "elasticity", "contribution_hz"}


def test_first_order_band_of_youngs_modulus() -> None:
    # f ~ sqrt(E): the exact band over E (1 +- 10 %) is f0 sqrt(0.9) .. f0 sqrt(1.1); first
    # order gives f0 (1 -+ 0.05).  The difference (1.3e-3 f0) is above 1 % of the width
    # (1e-3 f0), so the checked (corner) band is reported, and it is the exact one.
    design, result, _ = _sheet("machine-span.toml")
    out = band(design, result, [_relative(design, "member.material.youngs_modulus", 0.10)])
    for b in out.modes:
        f0 = b.frequency_hz
        assert math.isclose(b.first_order[0], f0 * 0.95, rel_tol=1e-6)
        assert math.isclose(b.first_order[1], f0 * 1.05, rel_tol=1e-6)
        assert b.method == CORNERS
        assert math.isclose(b.low_hz, f0 * math.sqrt(0.9), rel_tol=1e-5)
        assert math.isclose(b.high_hz, f0 * math.sqrt(1.1), rel_tol=1e-5)
        assert b.effects[0].elasticity is not None
        assert abs(b.effects[0].elasticity - 0.5) < 1e-6
    assert any("checked band is reported" in n for n in out.notes)


def test_small_tolerances_keep_the_first_order_band() -> None:
    # E within 5 %: first order is off by 3.2e-4 f0, under 1 % of the width (5e-4 f0)
    design, result, _ = _sheet("machine-span.toml")
    out = band(design, result, [_relative(design, "member.material.youngs_modulus", 0.05)])
    assert all(b.method == FIRST_ORDER for b in out.modes)


def test_compliant_clamp_to_rigid() -> None:
    # "clamped, between 10 EI/L and rigid" on the sensor mast: the band runs from the
    # compliant root (14.19 Hz, the figure) to the rigid clamp (16.37 Hz); first order
    # in the compliance is far off for so soft a root, so the corners are reported.
    design, result, _ = _sheet("sensor-mast.toml")
    EI = design.member.segments[0].bending_stiffness
    c = 1.2 / (10 * EI)
    tol = Tolerance("supports.left_rotational_stiffness", 0.0, 0.0, c, COMPLIANCE)
    out = band(design, result, [tol])
    first = out.modes[0]
    assert first.method == CORNERS
    assert round(first.low_hz, 2) == 14.19 and first.high_hz == first.frequency_hz
    assert first.effects[0].elasticity is None
    assert first.first_order[0] < first.low_hz  # first order over-shoots a stiffening curve


def test_many_inputs_are_checked_by_sampling() -> None:
    design, result, _ = _sheet("pipe-on-hangers.toml")
    keys = [
        "member.material.youngs_modulus",
        "member.material.density",
        "member.added_mass",
        "member.section.wall",
        "member.section.outside_diameter",
        "supports.inner[0].at",
    ]
    tols = [_relative(design, k, 0.02) for k in keys]
    out = band(design, result, tols, samples=12)
    assert 12 <= out.solves <= 12 + 2 * len(result.modes)
    assert any(SAMPLED in n for n in out.notes)
    for b in out.modes:
        assert b.checked is not None and b.low_hz <= b.frequency_hz <= b.high_hz


def test_unchecked_band_says_so() -> None:
    design, result, _ = _sheet("sensor-mast.toml")
    out = band(design, result, [_relative(design, "mass[0].mass", 0.1)], check=False)
    assert out.solves == 0 and all(b.method == FIRST_ORDER for b in out.modes)
    assert any("not checked" in n for n in out.notes)


def test_latin_hypercube_strata() -> None:
    # McKay, Beckman and Conover (1979): one point in each of the N strata of every input.
    tols = [Tolerance("a", 1.0, 0.0, 2.0), Tolerance("b", 5.0, 4.0, 6.0)]
    pts = latin_hypercube(tols, 50)
    for j, t in enumerate(tols):
        strata = np.floor((pts[:, j] - t.low) / (t.high - t.low) * 50).astype(int)
        assert sorted(strata) == list(range(50))


def test_the_verdict_holds_over_the_band() -> None:
    # The nominal fundamental (about 16.3 Hz) clears the band 18.9-23.1 Hz around a 21 Hz line;
    # with Young's modulus anywhere from -10 % to +60 % the mode reaches 16.3 sqrt(1.6) =
    # 20.7 Hz (f ~ sqrt(E), dimensional analysis), inside it: not clear, E named to tighten.
    from beamtone.calc.analysis import analyse

    text = (_ROOT / "worksheets" / "sensor-mast.toml").read_text()
    plain_text = text
    # a base between 60 kN*m/rad and rigid can only lower the mode: it is not the one to
    # tighten for a line above, although it moves the mode most
    text = text.replace(
        'right = "free"', 'right = "free"\nleft_rotational_stiffness = ["60 kN*m/rad", "rigid"]', 1
    )
    text += (
        '\n[tolerances]\n"member.material.youngs_modulus" = ["-10 %", "+60 %"]\n'
        '\n[[excitation]]\nname = "fan"\nfrequency = "21 Hz"\nmargin = "10 %"\n'
    )
    analysis = analyse(worksheet.loads(text))
    first = next(b for b in analysis.bands.modes if b.direction == "depth" and b.number == 1)
    assert first.frequency_hz < 18.9 < first.high_hz
    assert math.isclose(first.high_hz, first.frequency_hz * math.sqrt(1.6), rel_tol=1e-4)
    assert analysis.margins is not None and not analysis.margins.verdict.clear
    assert any("tighten member.material.youngs_modulus" in t for t in analysis.bands.tighten)
    assert first.effects[0].key == "supports.left_rotational_stiffness"
    # without the tolerance the same member is clear of that line
    plain = analyse(worksheet.loads(plain_text + "\n" + text.split('+60 %"]\n')[1]))
    assert plain.margins is not None and plain.bands is None
    rows = [r for r in plain.margins.rows if r.mode == 1 and r.order == 1.0]
    assert all(r.clear for r in rows)
