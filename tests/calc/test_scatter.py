"""Checks of :mod:`calc.scatter`: studies over the tolerances.

References: every batched sample is a finite-element solve of the same model as the full
adaptive solver's (checked here against it, scipy's eigen solvers underneath), in every
direction (both bending planes, torsion, axial motion: against calc.directions' full solves); Latin-
hypercube strata (McKay, Beckman and Conover, Technometrics 21(2), 1979); the band of a
monotonic input contains every sample (Rayleigh's principle, common practice).
"""

from __future__ import annotations

import numpy as np
import pytest

from beamtone.calc import fe, worksheet
from beamtone.calc.band import band
from beamtone.calc.directions import solve_directions
from beamtone.calc.errors import InputError
from beamtone.calc.excitation import Excitation, lines
from beamtone.calc.scatter import PERCENTILES, histogram, sample_points, scatter
from beamtone.calc.tolerances import COMPLIANCE, Design, Tolerance, nominal_value, vary
from tests.calc.bending import euler_bernoulli

_ROOT = __import__("pathlib").Path(__file__).resolve().parents[2]


def _design(name: str) -> tuple[Design, int]:
    sheet = worksheet.load(_ROOT / "worksheets" / name)
    return euler_bernoulli(Design.of(sheet)), min(sheet.modes, 3)


def _rel(design: Design, key: str, r: float) -> Tolerance:
    v = nominal_value(design, key)
    return Tolerance(key, v, v * (1 - r), v * (1 + r))


_CASES = {
    "sensor-mast.toml": ["member.material.youngs_modulus", "mass[0].mass", "member.length",
                         "member.section.wall"],
    "stepped-spindle.toml": ["spring[0].at", "spring[1].stiffness", "member.segment[1].length",
                             "mass[0].at", "member.segment[0].section.diameter"],
    "free-free-bar.toml": ["member.material.density", "member.length"],
    "pipe-on-hangers.toml": ["supports.inner[0].at", "member.added_mass"],
}  # fmt: skip


@pytest.mark.parametrize("name", sorted(_CASES))
def test_batched_samples_match_full_solves(name: str) -> None:
    design, modes = _design(name)
    tols = [_rel(design, k, 0.05) for k in _CASES[name]]
    result = scatter(design, tols, modes, 40, engine="local")
    assert result.individually_solved == 0
    for i in (0, 13, 39):
        member = vary(design, {t.key: v for t, v in zip(tols, result.points[i], strict=True)})
        full = fe.solve(member.solved_member(), modes).frequencies_hz
        assert np.allclose(result.frequencies_hz[i], full, rtol=1e-4)
    assert result.checked_difference < 1e-4


def test_compliant_support_and_percentiles_inside_the_band() -> None:
    design, modes = _design("sensor-mast.toml")
    EI = design.member.segments[0].bending_stiffness
    tols = [
        _rel(design, "member.material.youngs_modulus", 0.05),
        _rel(design, "mass[0].mass", 0.1),
        Tolerance("supports.left_rotational_stiffness", 0.0, 0.0, 1.2 / (10 * EI), COMPLIANCE),
    ]
    result = scatter(design, tols, modes, 300, engine="local")
    bands = band(design, fe.solve(design.solved_member(), modes), tols)
    for j, b in enumerate(bands.modes):
        f = result.frequencies_hz[:, j]
        assert b.low_hz * (1 - 1e-4) <= f.min() and f.max() <= b.high_hz * (1 + 1e-4)
        p = result.percentiles[:, j]
        assert np.all(np.diff(p) >= 0) and len(p) == len(PERCENTILES)
    counts, edges = histogram(result.frequencies_hz[:, 0], 12)
    assert counts.sum() == 300 and len(edges) == 13


def test_probability_of_landing_in_a_band() -> None:
    design, modes = _design("sensor-mast.toml")
    tols = [_rel(design, "member.material.youngs_modulus", 0.3)]
    f1 = fe.solve(design.solved_member(), 1).frequencies_hz[0]
    pump = Excitation("pump", f1 * 1.1, f1 * 1.1, (1.0,), below=0.05, above=0.05)
    result = scatter(design, tols, modes, 200, engine="local", lines=lines(pump))
    line = result.lines[0]
    f = result.frequencies_hz
    inside = np.any((f >= line.band_low_hz) & (f <= line.band_high_hz), axis=1)
    assert line.probability == pytest.approx(inside.mean())
    assert 0.0 < line.probability < 1.0 and result.any_in_band == line.probability
    assert line.standard_error == pytest.approx(np.sqrt(inside.mean() * (1 - inside.mean()) / 200))


def test_engines_give_the_same_percentiles() -> None:
    # The same samples solved the same way in this process, in local processes and on a
    # local dask cluster (as CI runs it): identical numbers.
    pytest.importorskip("dask.distributed")
    design, modes = _design("stepped-spindle.toml")
    tols = [_rel(design, k, 0.05) for k in _CASES["stepped-spindle.toml"][:3]]
    here = scatter(design, tols, modes, 120, engine="local")
    procs = scatter(design, tols, modes, 120, engine="processes", workers=2)
    cluster = scatter(design, tols, modes, 120, engine="dask", workers=2)
    assert np.array_equal(here.frequencies_hz, procs.frequencies_hz)
    assert np.array_equal(here.percentiles, cluster.percentiles)
    for name in here.directions:  # every direction, the same bits
        assert np.array_equal(here.percentiles_of(name), cluster.percentiles_of(name))
        assert np.array_equal(here.sampled_hz[name], procs.sampled_hz[name], equal_nan=True)
    assert "dask" in cluster.engine and "process" in procs.engine


def test_an_attachment_leaving_the_end_is_solved_in_full() -> None:
    # The tip mass of the sensor mast shares the end node; moved inward it needs a node of
    # its own, which the batched layout does not have: those samples go to the full solver.
    design, modes = _design("sensor-mast.toml")
    tols = [Tolerance("mass[0].at", 1.2, 1.15, 1.2), _rel(design, "mass[0].mass", 0.1)]
    result = scatter(design, tols, modes, 12, engine="local")
    assert result.individually_solved == 12
    assert result.checked_difference < 1e-4


def test_a_sample_the_model_refuses_names_the_input() -> None:
    design, modes = _design("stepped-spindle.toml")
    tols = [_rel(design, "member.segment[2].length", 0.5), _rel(design, "mass[1].at", 0.05)]
    with pytest.raises(InputError) as err:
        scatter(design, tols, modes, 50, engine="local")
    assert err.value.key == "mass[1].at" and "tolerances" in err.value.hint


def test_sampling_methods() -> None:
    tols = [Tolerance("a", 1.0, 0.0, 2.0), Tolerance("b", 5.0, 4.0, 6.0)]
    lhs = sample_points(tols, 100)
    mc = sample_points(tols, 100, "monte-carlo")
    assert lhs.shape == mc.shape == (100, 2)
    assert np.array_equal(lhs, sample_points(tols, 100))  # repeatable
    for pts in (lhs, mc):
        assert np.all((pts >= [0.0, 4.0]) & (pts <= [2.0, 6.0]))


@pytest.mark.parametrize(
    ("kwargs", "key"),
    [({"samples": 0}, "--samples"), ({"samples": 1.5}, "--samples"),
     ({"engine": "gpu"}, "--engine"), ({"method": "sobol"}, "--method")],
)  # fmt: skip
def test_bad_study_settings(kwargs: dict, key: str) -> None:
    design, modes = _design("sensor-mast.toml")
    args = {"samples": 10, **kwargs}
    with pytest.raises(InputError) as err:
        scatter(design, [_rel(design, "mass[0].mass", 0.1)], modes, **args)
    assert err.value.key == key
    with pytest.raises(InputError):
        scatter(design, [], modes, 10)


# --- every direction ---------------------------------------------------------------------------

_BAR = """format = 1
title = "flat bar"
[member]
length = "0.9 m"
material = "steel"
section = {{ shape = "rectangle", width = "{width}", depth = "40 mm" }}
[supports]
left = "clamped"
right = "free"
[[mass]]
at = "0.9 m"
mass = "1.5 kg"
polar_inertia = "0.002 kg*m^2"
[check]
modes = 3
"""


def _bar(width: str, keys: tuple[str, ...]) -> tuple[Design, list[Tolerance]]:
    design = Design.of(worksheet.loads(_BAR.format(width=width)))
    return design, [_rel(design, k, 0.08) for k in keys]


def _full_directions(design: Design, tols: list[Tolerance], point: np.ndarray, modes: int):
    member = vary(design, {t.key: v for t, v in zip(tols, point, strict=True)}).solved_member()
    return solve_directions(member, modes, checks=False)


def test_a_flat_bar_whose_width_plane_governs() -> None:
    # A 10 mm x 40 mm flat bar bends most easily in its width plane: that plane's first mode
    # is about a quarter of the depth plane's (f ~ sqrt(I), I ~ d b^3 against b d^3; common
    # practice).  Every direction's samples must match full solves of that point.
    design, tols = _bar("10 mm", ("member.material.youngs_modulus", "member.section.width",
                                  "mass[0].mass"))  # fmt: skip
    result = scatter(design, tols, 3, 60, engine="local")
    assert result.directions == ("depth", "width", "torsion", "axial")
    assert result.same_as == {} and result.individually_solved == 0
    for i in (0, 29, 59):
        full = _full_directions(design, tols, result.points[i], 3)
        for name in result.directions:
            exact = [m.frequency_hz for m in full[name].modes]
            assert np.allclose(result.sampled_hz[name][i], exact, rtol=1e-4), name
    width, depth = result.percentiles_of("width"), result.percentiles_of("depth")
    assert width[-1, 0] < depth[0, 0]  # the width plane governs in every sample
    ratio = result.nominal_by_direction["width"][0] / result.nominal_by_direction["depth"][0]
    assert ratio == pytest.approx(0.25, rel=0.03)  # shear lowers the deep plane a little
    # The width plane's mode 1 is inside a band no depth-plane mode reaches: the chance counts it.
    f1 = result.nominal_by_direction["width"][0]
    shaker = Excitation("shaker", f1, f1, (1.0,), below=0.02, above=0.02)
    chances = scatter(design, tols, 3, 60, engine="local", lines=lines(shaker))
    depth_inside = np.any(
        (chances.frequencies_hz >= chances.lines[0].band_low_hz)
        & (chances.frequencies_hz <= chances.lines[0].band_high_hz)
    )
    assert not depth_inside and 0.0 < chances.lines[0].probability <= 1.0
    assert chances.any_in_band == chances.lines[0].probability


def test_a_square_section_has_both_planes_alike() -> None:
    # Width = depth: the two bending planes are the same problem in every sample.
    design, tols = _bar("40 mm", ("member.material.youngs_modulus", "mass[0].mass"))
    result = scatter(design, tols, 3, 40, engine="local")
    assert result.same_as == {"width": "depth"}
    assert np.array_equal(result.percentiles_of("width"), result.percentiles_of("depth"))
    full = _full_directions(design, tols, result.points[7], 3)
    exact = [m.frequency_hz for m in full["width"].modes]
    assert np.allclose(result.sampled_hz["width"][7], exact, rtol=1e-4)


def test_a_direction_that_cannot_be_described_says_why() -> None:
    # A section given by its properties without a torsion constant: no torsion, with the reason.
    text = _BAR.format(width="10 mm").replace(
        'section = { shape = "rectangle", width = "10 mm", depth = "40 mm" }',
        'section = { shape = "properties", area = "400 mm^2", second_moment = "53333 mm^4", '
        'second_moment_width = "3333 mm^4", depth = "40 mm" }',
    )
    design = Design.of(worksheet.loads(text))
    result = scatter(design, [_rel(design, "mass[0].mass", 0.1)], 2, 10, engine="local")
    assert "torsion" not in result.directions
    assert dict(result.not_computed)["torsion"]
