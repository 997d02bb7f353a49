"""Error estimates that mean what they say (issue 15), against the exact reference.

The reference is tests/calc/fe/exact.py (transfer-matrix determinant in 30-digit arithmetic,
itself checked against Blevins 1979, Table 8-1 in test_exact_reference.py).  The requirement:
every reported mode's true error is within its estimate, and the estimate is within a factor
100 of the true error wherever that exceeds 1e-12.  The members are scenarios of our own.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from beamtone.calc import fe
from beamtone.calc.fe import adaptive
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section
from tests.calc.fe import exact

STEEL = LIBRARY["steel"]
ROD = build_section("round", {"diameter": 0.02})
FACTOR = 100.0  # the estimate may exceed the true error by at most this factor ...
FLOOR = 1e-12  # ... where the true error is above this


def _true_errors(member: Member, result: fe.FEResult) -> np.ndarray:
    out = []
    for mode in result.modes:
        window = max(1e-7, 100 * mode.estimated_error)
        root = exact.root_near(member, mode.frequency_hz, window)
        assert root is not None, f"no exact root near mode {mode.number}"
        out.append(abs(mode.frequency_hz - root) / root)
    return np.array(out)


def _check(member: Member, result: fe.FEResult) -> None:
    true = _true_errors(member, result)
    estimate = np.array([m.estimated_error for m in result.modes])
    assert np.all(true <= estimate), (true, estimate)
    judged = true > FLOOR
    assert np.all(estimate[judged] <= FACTOR * true[judged]), (true, estimate)


def test_fine_mesh_fundamental_is_not_overstated() -> None:
    """A uniform steel cantilever, 1 m, 20 mm round, asked for eight modes: the mesh that
    resolves mode 8 resolves mode 1 far better than needed.  Before, mode 1's estimate was
    the round-off bound 10 eps sqrt(lambda_max / lambda_1): 2.7e-9 against a true error of
    3.9e-12, 690 times too large (reproduced); mode 2 4.3e-10 against 1.5e-10."""
    member = Member((Segment(1.0, STEEL, ROD),), "clamped", "free")
    result = fe.solve(member, 8)
    _check(member, result)
    assert result.modes[0].estimated_error < 1e-10


def test_forced_fine_meshes_keep_the_estimate_honest() -> None:
    """Forced meshes from 16 to 2048 elements of a uniform cantilever: where round-off takes
    over from discretization (beyond about 1000 elements) the estimate follows it.  Blevins
    1979, Table 8-1 gives the cantilever's lambda_1 = 1.87510407 (via the exact reference)."""
    member = Member((Segment(1.0, STEEL, ROD),), "clamped", "free")
    for elements in (16, 128, 512, 2048):
        result = fe.solve(member, 3, elements=elements)
        true = _true_errors(member, result)
        estimate = np.array([m.estimated_error for m in result.modes])
        assert np.all(true <= estimate), (elements, true, estimate)


def test_the_mesh_is_not_refined_past_the_round_off() -> None:
    """Where round-off, not discretization, keeps a mode from the target the adaptive mesh
    stops refining and keeps the best pair of meshes, with a warning; the mode stays within
    its estimate (a target of 1e-14 cannot be met in double precision)."""
    member = Member((Segment(1.0, STEEL, ROD),), "pinned", "free", springs=(Spring(1.0, 1e4),))
    result = fe.solve(member, 2, accuracy=1e-14)
    assert any("round-off" in w for w in result.warnings)
    _check(member, result)


@settings(
    max_examples=10, deadline=None, suppress_health_check=[HealthCheck.too_slow], derandomize=True
)
@given(
    st.sampled_from(["clamped", "pinned", "guided", "free"]),
    st.sampled_from(["clamped", "pinned", "free"]),
    st.floats(0.3, 12.0),
    st.floats(0.005, 0.08),
    st.floats(0.2, 0.8),
    st.floats(0.5, 2.0),
    st.lists(st.tuples(st.floats(0.0, 1.0), st.floats(0.05, 20.0)), max_size=2),
    st.lists(st.tuples(st.floats(0.0, 1.0), st.floats(1e2, 1e9)), max_size=1),
    st.sampled_from([1, 3, 5, 8]),
)
def test_estimates_are_honest_and_not_pessimistic(
    left: str,
    right: str,
    length: float,
    diameter: float,
    split: float,
    ratio: float,
    masses: list[tuple[float, float]],
    springs: list[tuple[float, float]],
    modes: int,
) -> None:
    """Random two-segment members with masses and springs: every mode's true error is within
    its estimate and the estimate within a factor 100 of it (where it exceeds 1e-12)."""
    member = Member(
        (
            Segment(split * length, STEEL, build_section("round", {"diameter": diameter})),
            Segment(
                (1 - split) * length,
                STEEL,
                build_section("round", {"diameter": diameter * ratio}),
            ),
        ),
        left,
        right,
        masses=tuple(PointMass(a * length, m) for a, m in masses),
        springs=tuple(Spring(a * length, k) for a, k in springs),
    )
    result = fe.solve(member, modes)
    _check(member, result)
    assert result.mode_count is not None and result.mode_count.ok


def test_roundoff_estimate_follows_the_model_not_the_worst_element() -> None:
    """The round-off estimate of the finest mesh of a cantilever is within a factor 100 of
    what is observed: the old bound was 1e4 times it (structural check of the formula)."""
    member = Member((Segment(1.0, STEEL, ROD),), "clamped", "free")
    mesh = fe.build_mesh(member, 2048)
    sol = adaptive.solve_mesh(
        member, mesh, 2, 0, -adaptive.shift_below(member), fe.default_eigensolver
    )
    estimate = adaptive._roundoff_estimate(sol)
    true = _true_errors_of(member, sol.omega / (2 * np.pi))
    assert np.all(true <= estimate)
    assert estimate[0] <= FACTOR * max(true[0], FLOOR)


def _true_errors_of(member: Member, f_hz: np.ndarray) -> np.ndarray:
    out = []
    for f in f_hz:
        root = exact.root_near(member, float(f), 1e-6)
        assert root is not None
        out.append(abs(f - root) / root)
    return np.array(out)


@pytest.mark.parametrize("gap", [1e-4, 1e-5])
def test_an_ordinary_short_element_gets_an_honest_estimate(
    gap: float, monkeypatch: pytest.MonkeyPatch
) -> None:
    """Seven 1 kg masses ``gap`` of the length apart on a 10 m pinned steel tube (60 x 4 mm),
    forced through ordinary short elements (no tethers).  Before: 4.19 Hz for the exact
    1.456 Hz with an estimate of 2 %, and the fundamental missing (reproduced).  Now the
    Rayleigh-Ritz step on the element-wise energy form keeps the error small and the estimate
    covers it."""
    from beamtone.calc.fe import mesh as fe_mesh

    monkeypatch.setattr(fe_mesh, "ATTACHMENT_TOLERANCE", 0.0)
    tube = build_section("round-tube", {"outside_diameter": 0.06, "wall": 0.004})
    member = Member(
        (Segment(10.0, STEEL, tube),),
        "pinned",
        "pinned",
        tuple(PointMass(3.0 + gap * 10.0 * k, 1.0) for k in range(7)),
    )
    result = fe.solve(member, 3)
    expected = exact.frequencies(member, 20.0, 400)[:3]
    assert expected[0] == pytest.approx(1.456, abs=5e-4)
    for mode, root in zip(result.modes, expected, strict=True):
        assert abs(mode.frequency_hz - root) / root <= mode.estimated_error
