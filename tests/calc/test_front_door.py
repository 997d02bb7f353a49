"""The front door of ``beamtone.calc``: every public name resolves, importing it stays cheap,
and the orchestration the command line used to do itself gives the same results."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

import beamtone.calc
from beamtone.calc import (
    analyse,
    load,
    loads,
    record,
    report_data,
    worksheet_groups,
    worksheet_master_curve,
)

ROOT = Path(__file__).resolve().parents[2]
SPAN = ROOT / "worksheets" / "machine-span.toml"


@pytest.mark.parametrize("name", beamtone.calc.__all__)
def test_every_public_name_resolves_and_is_documented(name: str) -> None:
    value = getattr(beamtone.calc, name)
    if callable(value):
        assert value.__doc__ and value.__doc__.strip(), name


def test_an_unknown_name_is_an_attribute_error() -> None:
    with pytest.raises(AttributeError, match="analyze"):
        beamtone.calc.analyze  # noqa: B018 - the lookup is the test


def test_importing_the_front_door_loads_no_numerics() -> None:
    code = (
        "import sys, beamtone.calc, beamtone.render; "
        "print(sorted(m for m in ('numpy', 'scipy', 'pint', 'sympy', 'matplotlib') "
        "if m in sys.modules))"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, timeout=60
    )
    assert out.stdout.strip() == "[]"


def test_worksheet_groups_are_the_analysis_groups() -> None:
    sheet = load(SPAN)
    found = worksheet_groups(sheet, like=sheet)
    groups = analyse(sheet).groups
    assert [(g.symbol, g.expression, g.value) for g in found.groups.groups] == [
        (g.symbol, g.expression, g.value) for g in groups.groups
    ]
    assert found.repeating == ("L", "EI", "m") and found.variables[0][:2] == ("L", "m")
    assert found.like is not None and found.like.similar and found.like.scale == 1.0


def test_master_curve_has_at_most_three_frequency_groups() -> None:
    sheet = load(SPAN)
    curve = worksheet_master_curve(sheet, "Pi1", 0.0, 1.0, 3)
    assert len(curve.values) == 3 and all(len(row) == min(sheet.modes, 3) for row in curve.omegas)


def test_report_data_solves_as_recorded() -> None:
    """With a stored record, the report is solved with the record's mode count and verifies
    it; an explicit mode count overrides the record."""
    text = SPAN.read_text(encoding="utf-8")
    analysis = analyse(loads(text), modes=2)
    sheet = loads(record.with_record(text, record.build_record(analysis)))
    content = report_data(sheet)
    assert content.verification is not None and content.verification.passed
    assert len(content.shapes.modes) == 2
    assert report_data(sheet, modes=4).verification is not None
    assert len(report_data(sheet, modes=4).shapes.modes) == 3  # the figure draws three
    assert report_data(loads(text)).verification is None
