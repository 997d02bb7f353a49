"""Excitation lines, separation margins, the margin table and the verdict."""

from __future__ import annotations

import pytest

from beamtone.calc.errors import InputError
from beamtone.calc.excitation import (
    CRITERIA,
    Excitation,
    ModeRef,
    criterion,
    lines,
    margin_table,
)

PUMP_HZ = 1480.0 / 60.0  # 1480 rpm


def pump(**kw: object) -> Excitation:
    return Excitation("pump", PUMP_HZ, PUMP_HZ, (1.0, 2.0), **kw)  # type: ignore[arg-type]


def test_band_is_the_margin_around_each_order() -> None:
    # |f - h f_e| < margin h f_e: the separation margin is common practice.
    first, second = lines(pump())
    assert (first.band_low_hz, first.band_high_hz) == pytest.approx((0.8 * PUMP_HZ, 1.2 * PUMP_HZ))
    assert second.low_hz == pytest.approx(2 * PUMP_HZ)
    assert second.band_high_hz == pytest.approx(2.4 * PUMP_HZ)


def test_a_mode_on_the_band_edge_is_not_clear() -> None:
    # The pump span: mode 2 at 29.6000 Hz, exactly 1.2 x 1480 rpm.
    edge = 1.2 * PUMP_HZ
    modes = [ModeRef("depth", 1, 6.5, 1e-7), ModeRef("depth", 2, edge, 1e-7)]
    modes.append(ModeRef("depth", 3, 90.0, 1e-7))
    table = margin_table([pump()], modes)
    assert not table.verdict.clear
    g = table.verdict.governing
    assert (g.mode, g.order, g.clear) == (2, 1.0, False)
    assert g.separation == pytest.approx(0.2)
    assert table.verdict.text.startswith("NOT CLEAR: depth mode 2")


def test_a_mode_just_outside_by_more_than_its_error_is_clear() -> None:
    f = 1.2 * PUMP_HZ * (1 + 1e-5)
    modes = [ModeRef("depth", 1, 6.5, 1e-7), ModeRef("depth", 2, f, 1e-7)]
    modes.append(ModeRef("depth", 3, 90.0, 1e-7))
    assert margin_table([pump()], modes).verdict.clear
    # the same mode with an estimated error larger than its distance to the edge is not
    uncertain = [modes[0], ModeRef("depth", 2, f, 1e-4), modes[2]]
    assert not margin_table([pump()], uncertain).verdict.clear


def test_every_direction_is_checked_and_the_weak_axis_governs() -> None:
    # A pump span: strong axis 6.5 and 33.8 Hz, weak axis 26.7 Hz (issue 16's figures).
    modes = [
        ModeRef("depth", 1, 6.5),
        ModeRef("depth", 2, 33.8),
        ModeRef("depth", 3, 76.0),
        ModeRef("width", 1, 26.7),
        ModeRef("width", 2, 107.0),
    ]
    table = margin_table([pump()], modes)
    assert len(table.rows) == 2 * 5
    g = table.verdict.governing
    assert (g.direction, g.mode, g.clear) == ("width", 1, False)
    assert g.separation == pytest.approx(26.7 / PUMP_HZ - 1)


def test_range_lines_have_zero_separation_inside() -> None:
    drive = Excitation("fan", 10.0, 20.0, (1.0,), below=0.1, above=0.1)
    table = margin_table([drive], [ModeRef("depth", 1, 15.0), ModeRef("depth", 2, 60.0)])
    row = table.rows[0]
    assert row.separation == 0.0 and not row.clear
    assert table.lines[0].band_low_hz == pytest.approx(9.0)
    assert table.lines[0].band_high_hz == pytest.approx(22.0)
    below = margin_table([drive], [ModeRef("depth", 1, 8.0), ModeRef("depth", 2, 60.0)])
    assert below.rows[0].separation == pytest.approx(-0.2)  # from the range's low end


def test_bands_above_the_highest_computed_mode_are_not_shown_clear() -> None:
    # The 2x line's band reaches 59.2 Hz; with only two modes computed, a third could be there.
    modes = [ModeRef("depth", 1, 6.5), ModeRef("depth", 2, 33.8)]
    verdict = margin_table([pump()], modes).verdict
    assert not verdict.clear
    assert "compute more modes" in verdict.unchecked[0]
    assert verdict.text.startswith("NOT SHOWN CLEAR")


def test_directions_not_computed_keep_the_verdict_from_clear() -> None:
    modes = [ModeRef("depth", 1, 6.5), ModeRef("depth", 2, 33.8), ModeRef("depth", 3, 76.0)]
    verdict = margin_table([pump()], modes, unchecked=["width plane not computed"]).verdict
    assert not verdict.clear and verdict.unchecked == ("width plane not computed",)


def test_octave_and_rigid_criteria_allow_no_mode_below() -> None:
    octave = criterion("bracket-octave")
    motor = Excitation(
        "motor", 120.0, 120.0, (1.0,), below=octave.below, above=octave.above,
        criterion=octave.name,
    )  # fmt: skip
    low = margin_table([motor], [ModeRef("depth", 1, 45.0), ModeRef("depth", 2, 400.0)])
    assert not low.verdict.clear  # far below the line, yet inside the band down to 0 Hz
    assert low.rows[0].required == 1.0
    high = margin_table([motor], [ModeRef("depth", 1, 245.0), ModeRef("depth", 2, 900.0)])
    assert high.verdict.clear
    assert not high.passages
    rigid = CRITERIA["rigid-support-25"]
    assert (rigid.below, rigid.above) == (1.0, 0.25)


def test_lower_frequency_limit_rows() -> None:
    # EN 1990 Annex A2, A2.4.3.2: footbridges below 5 Hz need a comfort check (from memory).
    c = criterion("footbridge-comfort")
    walking = Excitation(
        "walking", 1.8, 2.2, (1.0, 2.0, 3.0), below=c.below, above=c.above,
        minimum_hz=c.minimum_hz, criterion=c.name,
    )  # fmt: skip
    modes = [ModeRef("depth", 1, 4.2), ModeRef("depth", 2, 16.8)]
    table = margin_table([walking], modes)
    limit = [r for r in table.rows if r.order is None]
    assert [r.clear for r in limit] == [False, True]
    assert not table.verdict.clear


def test_passages_are_modes_below_a_line() -> None:
    modes = [ModeRef("depth", 1, 6.5), ModeRef("depth", 2, 33.8), ModeRef("depth", 3, 76.0)]
    table = margin_table([pump()], modes)
    assert {(r.mode, r.order) for r in table.passages} == {(1, 1.0), (1, 2.0), (2, 2.0)}


def test_criteria_carry_their_sources() -> None:
    for c in CRITERIA.values():
        assert c.document and c.clause
        assert "check against the current edition" in c.source
        assert c.from_memory  # none of the documents was at hand: every value says so


def test_unknown_criterion_gets_a_hint() -> None:
    with pytest.raises(InputError) as err:
        criterion("bracket-octav", key="excitation[0].criterion")
    assert err.value.key == "excitation[0].criterion"
    assert "bracket-octave" in str(err.value)


@pytest.mark.parametrize(
    ("kw", "key"),
    [
        ({"low_hz": 0.0, "high_hz": 1.0}, "frequency"),
        ({"low_hz": 5.0, "high_hz": 4.0}, "frequency"),
        ({"orders": ()}, "orders"),
        ({"below": 1.5}, "margin"),
    ],
)
def test_bad_excitations_are_refused(kw: dict[str, object], key: str) -> None:
    base: dict[str, object] = {"name": "x", "low_hz": 10.0, "high_hz": 10.0}
    base.update(kw)
    with pytest.raises(InputError) as err:
        Excitation(**base)  # type: ignore[arg-type]
    assert err.value.key.endswith(key)


def test_unknown_direction_is_refused() -> None:
    with pytest.raises(InputError):
        ModeRef("sideways", 1, 3.0)
