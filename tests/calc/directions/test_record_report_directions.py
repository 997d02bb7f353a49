"""The stored record and the calculation record show every direction."""

from __future__ import annotations

import pytest
import tomlkit

from beamtone.calc import record
from beamtone.calc.analysis import analyse
from beamtone.calc.worksheet import loads
from beamtone.render import report
from tests.calc.directions.test_worksheet_directions import PUMP_SPAN


@pytest.fixture(scope="module")
def solved() -> tuple[str, object]:
    return PUMP_SPAN, analyse(loads(PUMP_SPAN))


def _recorded(solved) -> str:
    text, analysis = solved
    return record.with_record(text, record.build_record(analysis))


def test_record_stores_and_verifies_every_direction(solved):
    out = _recorded(solved)
    stored = tomlkit.parse(out)["record"]["results"]
    assert stored["governing"] == "width"
    assert len(stored["width_hz"]) == len(stored["torsion_hz"]) == len(stored["axial_hz"]) == 3
    assert record.verify(loads(out)).passed


def test_a_record_from_before_directions_still_verifies(solved):
    document = tomlkit.parse(_recorded(solved))
    for key in ("governing", "width_hz", "torsion_hz", "axial_hz"):
        del document["record"]["results"][key]
    result = record.verify(loads(tomlkit.dumps(document)))
    assert result.passed
    assert not any("width" in c.key for c in result.comparisons)


@pytest.mark.parametrize(
    ("key", "change", "failed"),
    [
        ("width_hz", lambda v: [v[0] * (1 + 1e-4), *v[1:]], "results.width_hz[0]"),
        ("torsion_hz", lambda v: v[:1], "results.torsion_hz[1]"),
        ("governing", lambda v: "depth", "results.governing"),
    ],
)
def test_a_changed_direction_result_does_not_verify(solved, key, change, failed):
    document = tomlkit.parse(_recorded(solved))
    results = document["record"]["results"]
    results[key] = change(
        results[key].unwrap() if hasattr(results[key], "unwrap") else results[key]
    )
    result = record.verify(loads(tomlkit.dumps(document)))
    assert not result.passed
    assert failed in [c.key for c in result.failures]


def test_report_shows_every_direction(solved):
    _, analysis = solved
    md = report.build(analysis, figure=False).markdown()
    assert "Governing mode: 5.13" in md and "width plane mode 1" in md
    for label in ("| width plane | 2 | 26.7", "| torsion | 1 |", "| axial | 1 |"):
        assert label in md, label
    assert "J = sum of b t^3/3" in md  # how the torsion constant was found
    assert "bending-torsion coupling" in md  # the assumption, in the assumptions list
    assert "left fork, right fork" in md
