"""Design values rounded to a step or to sizes, solved again, never on a band edge."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.optimize
from hypothesis import given, settings
from hypothesis import strategies as st

from beamtone.calc import fe
from beamtone.calc.design_values import default_step, grid_text, practical_values
from beamtone.calc.errors import InputError
from beamtone.calc.excitation import Excitation, MarginTable, margin_table, mode_refs
from beamtone.calc.materials import Material
from beamtone.calc.model import Member, PointMass, Segment
from beamtone.calc.sections import build_section
from tests.fuzz import EXAMPLES

STEEL = Material("test steel", 200e9, 7850.0, "test data")
PUMP = Excitation("pump", 1480 / 60, 1480 / 60, (1.0, 2.0))  # 1480 rpm, orders 1 and 2


def span(depth_mm: float) -> Member:
    """A 2 m pinned span of a 60 mm wide bar carrying a 40 kg machine at 0.8 m (demo data)."""
    section = build_section("rectangle", {"width": 0.06, "depth": depth_mm / 1000})
    return Member((Segment(2.0, STEEL, section),), "pinned", "pinned", (PointMass(0.8, 40.0),))


def evaluate(depth_mm: float) -> tuple[MarginTable, float]:
    member = span(depth_mm)
    return margin_table([PUMP], mode_refs(fe.solve(member, 5))), member.member_mass


def clear_intervals(low: float, high: float) -> list[tuple[float, float]]:
    """Where every mode clears every band, by a scan and Brent roots on the band edges."""
    edges = sorted(
        {
            e
            for line in margin_table([PUMP], []).lines
            for e in (line.band_low_hz, line.band_high_hz)
        }
    )
    grid = np.linspace(low, high, 25)
    freqs = np.array([fe.solve(span(d), 5).frequencies_hz for d in grid])
    cuts = {low, high}
    for m in range(freqs.shape[1]):
        for e in edges:
            g = freqs[:, m] - e
            for i in np.nonzero(np.sign(g[:-1]) != np.sign(g[1:]))[0]:
                cuts.add(
                    scipy.optimize.brentq(
                        lambda d, m=m, e=e: fe.solve(span(d), 5).frequencies_hz[m] - e,
                        grid[i], grid[i + 1], xtol=1e-10,
                    )
                )  # fmt: skip
    points = sorted(cuts)
    return [
        (a, b)
        for a, b in zip(points[:-1], points[1:], strict=True)
        if evaluate(0.5 * (a + b))[0].verdict.clear
    ]


def test_default_step_is_three_significant_figures() -> None:
    assert default_step(176.7650483) == 1.0
    assert default_step(6.02) == 0.01
    assert default_step(40.3) == 0.1
    assert grid_text(6.0100000001, 0.01) == "6.01"
    assert grid_text(177.5, 2.5) == "177.5"


@pytest.fixture(scope="module")
def intervals() -> list[tuple[float, float]]:
    return clear_intervals(40.0, 200.0)


def test_rounded_value_keeps_its_margin_and_the_edge_does_not(
    intervals: list[tuple[float, float]],
) -> None:
    assert intervals
    # the exact interval edge puts a mode on a band edge: not clear
    a, b = intervals[1]  # both ends on band edges
    assert not evaluate(a)[0].verdict.clear and not evaluate(b)[0].verdict.clear
    choice = practical_values(evaluate, intervals, 40.0, 200.0, step=1.0, unit="mm")
    rec = choice.recommended
    assert rec is not None and rec.clear
    assert rec.value == round(rec.value)  # on the 1 mm grid
    assert any(lo <= rec.value <= hi for lo, hi in intervals)
    assert rec.achieved > 0
    assert all(evaluate(c.value)[0].verdict.clear == c.clear for c in choice.candidates)
    lightest = min(c.mass for c in choice.candidates if c.clear)
    assert rec.mass == lightest
    assert "recommended" in choice.message and " mm" in choice.message


def test_passage_through_resonance_and_the_stiff_alternative(
    intervals: list[tuple[float, float]],
) -> None:
    choice = practical_values(evaluate, intervals, 40.0, 200.0, step=1.0, unit="mm")
    rec = choice.recommended
    assert rec is not None
    if rec.table.passages:  # a light member below the running speed
        assert "passes through resonance" in choice.message
        assert choice.stiff is not None and choice.stiff.mass > rec.mass
        assert "stiff alternative" in choice.message
        low = min(m.frequency_hz for m in mode_refs(fe.solve(span(choice.stiff.value), 5)))
        assert low > 1.2 * 2 * PUMP.high_hz  # every mode above every band
    else:
        pytest.fail("the demo span was chosen so the lightest clear depth sits below 1480 rpm")


def test_sizes_from_a_list(intervals: list[tuple[float, float]]) -> None:
    sizes = [50, 60, 80, 100, 120, 140, 160, 180, 200]
    choice = practical_values(evaluate, intervals, 40.0, 200.0, sizes=sizes, unit="mm")
    assert [c.value for c in choice.candidates] == sizes
    assert choice.recommended is not None and choice.recommended.value in sizes


def test_step_and_sizes_together_are_refused() -> None:
    with pytest.raises(InputError):
        practical_values(evaluate, [(1.0, 2.0)], 1.0, 2.0, step=0.1, sizes=[1.5])
    with pytest.raises(InputError):
        practical_values(evaluate, [(1.0, 2.0)], 1.0, 2.0, step=-1.0)


# --- property: sizing never recommends a value inside or on a band after rounding ----------------

_SHEET = """\
format = 1
[member]
length = "{length} m"
material = "steel"
section = {{ shape = "rectangle", width = "40 mm", depth = "10 mm" }}
[supports]
left = "{left}"
right = "{right}"
[[mass]]
at = "{at} m"
mass = "{mass} kg"
[check]
modes = 3
"""


@settings(max_examples=EXAMPLES(3), deadline=None, derandomize=True)
@given(
    length=st.sampled_from([0.4, 0.8, 1.5]),
    ends=st.sampled_from([("clamped", "free"), ("pinned", "pinned"), ("clamped", "pinned")]),
    where=st.floats(0.2, 1.0),
    mass=st.sampled_from([0.5, 3.0, 20.0]),
    excitation=st.floats(8.0, 250.0),
    orders=st.sampled_from([(1,), (1, 2), (1, 3)]),
    margin=st.sampled_from([0.1, 0.2, 0.3]),
    step=st.sampled_from([None, "1 mm", "0.5 mm"]),
)
def test_sizing_never_recommends_inside_or_on_a_band(
    length: float,
    ends: tuple[str, str],
    where: float,
    mass: float,
    excitation: float,
    orders: tuple[int, ...],
    margin: float,
    step: str | None,
) -> None:
    """Random members and excitations: the recommended (rounded) value, solved afresh, has
    every mode strictly outside every closed band (checked here without calc.excitation)."""
    from beamtone.calc import sizing
    from beamtone.calc.worksheet import loads

    text = _SHEET.format(length=length, left=ends[0], right=ends[1], at=where * length, mass=mass)
    sheet = loads(text)
    import inspect

    # the depth plane, checked here independently (sizing checks every direction by default
    # where it can follow one)
    plane = (
        {"direction": "depth"}
        if "direction" in inspect.signature(sizing.read_request).parameters
        else {}
    )
    request = sizing.read_request(
        sheet, "member.section.depth", "3 mm", "60 mm", excitation=f"{excitation} Hz",
        harmonics=",".join(map(str, orders)), margin=f"{100 * margin}%", step=step, **plane,
    )  # fmt: skip
    result = sizing.run_request(request)
    if result.recommended is None:
        return
    chosen = result.solutions[result.recommended]
    assert chosen.above == "rounded"
    unit_step = 1.0 if step is None or step == "1 mm" else 0.5
    if step is not None:  # on the grid of the step, in mm
        assert (
            abs(chosen.value_si * 1000 / unit_step - round(chosen.value_si * 1000 / unit_step))
            < 1e-9
        )
    member = sizing.variation(sheet, "member.section.depth").member(chosen.value_si)
    fresh = fe.solve(member, 3).frequencies_hz
    for h in orders:
        low, high = h * excitation * (1 - margin), h * excitation * (1 + margin)
        assert all(f < low or f > high for f in fresh), (chosen.value, fresh, low, high)
