"""Every bound that is printed holds, against the exact reference of tests/calc/fe/exact.py.

Dunkerley's sum bounds the fundamental from below (common practice; S. Timoshenko, D. H.
Young and W. Weaver, Vibration Problems in Engineering, chapter 5), Rayleigh's quotient from
above (the same text).  With a tension beamtone takes Dunkerley's sum of the member without
it; with a compression it gives no lower bound.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from beamtone.calc import fe, rayleigh
from beamtone.calc.errors import InputError
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section
from tests.calc.fe import exact

BAR = build_section("rectangle", {"width": 0.04, "depth": 0.01})
STEEL = LIBRARY["steel"]


def _exact_fundamental(member: Member, fe_hz: float, error: float) -> float:
    """The exact fundamental: the root near the FE one, with no root below it."""
    root = exact.root_near(member, fe_hz, max(1e-4, 100 * error))
    assert root is not None
    assert exact.frequencies(member, root * (1 - 1e-6), 200) == []
    return root


def _check_bounds(member: Member) -> rayleigh.Bracket:
    result = fe.solve(member, 1)
    mode = result.modes[0]
    f1 = _exact_fundamental(member, mode.frequency_hz, mode.estimated_error)
    low = rayleigh.dunkerley(member)
    up = rayleigh.rayleigh_static(member)
    br = rayleigh.bracket(low, result, up)
    if low.frequency_hz is not None:
        assert low.uncertainty <= rayleigh.DUNKERLEY_UNCERTAINTY_LIMIT
        assert low.frequency_hz * (1 - low.uncertainty) <= f1 * (1 + 1e-12)
    else:
        assert low.reason
    assert up.frequency_hz >= f1 * (1 - 1e-12)
    assert br.inside
    assert br.status == ("bracketed" if low.frequency_hz is not None else "upper bound only")
    return br


def test_free_pinned_member_in_compression_claims_no_false_bracket() -> None:
    """Free-pinned, a 0.2 N/m spring at the free end, compressed to half its buckling load.

    Before, Dunkerley's sum with the compression printed "lower 0.040168 Hz <= FE 0.0401661 Hz"
    with ``inside: true`` (reproduced): a lower bound above the fundamental.
    """
    base = Member((Segment(1.5, STEEL, BAR),), "free", "pinned", springs=(Spring(0.0, 0.2),))
    P_cr = fe.buckling_load(base)
    member = Member(base.segments, "free", "pinned", springs=base.springs, axial_force=-0.5 * P_cr)
    br = _check_bounds(member)
    if br.lower_hz is not None:
        assert br.lower_hz <= br.fe_hz


@pytest.mark.parametrize("tension", [10.0, 1e3, 1e5])
def test_tension_bound_is_the_bound_without_it(tension: float) -> None:
    member = Member(
        (Segment(1.2, STEEL, BAR),), "pinned", "free", springs=(Spring(1.2, 5e3),),
        axial_force=tension,
    )  # fmt: skip
    _check_bounds(member)


ENDS = st.sampled_from(["clamped", "pinned", "guided", "free"])


@settings(
    max_examples=12, deadline=None, suppress_health_check=[HealthCheck.too_slow], derandomize=True
)
@given(
    ENDS,
    ENDS,
    st.floats(0.4, 2.0),
    st.floats(-0.95, 3.0),
    st.floats(0.0, 1.0),
    st.floats(0.0, 20.0),
    st.floats(-1.0, 7.0),
)
def test_every_printed_bound_holds_with_an_axial_force(
    left: str, right: str, length: float, load: float, where: float, mass: float, stiff: float
) -> None:
    """Random members under tension or compression (up to 95 % of the buckling load)."""
    springs = (Spring(where * length, 10.0**stiff),)
    masses = (PointMass((1 - where) * length, mass),) if mass > 0.1 else ()
    base = Member((Segment(length, STEEL, BAR),), left, right, masses, springs)
    if load < 0:
        try:
            P_cr = fe.buckling_load(base)
        except InputError:
            P_cr = 0.0
        assume(P_cr > 0.0 and math.isfinite(P_cr))
        P = load * P_cr
    else:
        P = 10.0 ** (2 * load)
    try:
        member = Member(base.segments, left, right, masses, springs, axial_force=P)
        _check_bounds(member)
    except InputError:
        assume(False)


def test_shear_warning_wavenumber_includes_the_axial_force() -> None:
    """A taut deep member: mode 1's half-wavelength is the member (taut-string limit, common
    practice: f = n/(2L) sqrt(P/m)), not the tension-free bending value that warned before."""
    deep = build_section("rectangle", {"width": 0.05, "depth": 0.05})
    member = Member((Segment(4.0, STEEL, deep),), "pinned", "pinned", axial_force=5e7)
    slack = Member((Segment(4.0, STEEL, deep),), "pinned", "pinned")
    k_taut = fe.wavenumber(member, fe.solve(member, 1).modes[0].omega)[0]
    assert math.pi / k_taut == pytest.approx(4.0, rel=1e-3)
    k_slack = fe.wavenumber(slack, fe.solve(slack, 1).modes[0].omega)[0]
    assert math.pi / k_slack == pytest.approx(4.0, rel=1e-6)  # sin(pi x / L) exactly
    assert not any("ten section depths" in w for w in fe.solve(member, 1).warnings)


def test_shear_warning_never_names_a_half_wavelength_longer_than_the_member() -> None:
    stubby = build_section("rectangle", {"width": 0.1, "depth": 0.1})
    member = Member(
        (Segment(0.5, STEEL, stubby),), "free", "free", springs=(Spring(0.25, 1e3),)
    )  # a block bouncing on a soft spring: its wavenumber is tiny
    warnings = [w for w in fe.solve(member, 2).warnings if "ten section depths" in w]
    assert warnings
    for w in warnings:
        if "half-wavelength " in w and "shorter than" not in w:
            half = float(w.split("half-wavelength ")[1].split(" m")[0])
            assert half <= member.length
