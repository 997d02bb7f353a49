"""Checks of :mod:`calc.scatter`: studies over the tolerances.

References: every batched sample is a finite-element solve of the same model as the full
adaptive solver's (checked here against it, scipy's eigen solvers underneath); Latin-
hypercube strata (McKay, Beckman and Conover, Technometrics 21(2), 1979); the band of a
monotonic input contains every sample (Rayleigh's principle, common practice).
"""

from __future__ import annotations

import numpy as np
import pytest

from beamtone.calc import fe, worksheet
from beamtone.calc.band import band
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
