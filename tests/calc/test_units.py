"""Unit parsing through the one guarded parser, against pint itself.

pint (a general-purpose units library) is the reference: every value must equal what a
fresh pint registry gives for the same text, to the last bit.  Nothing about units is read
from disk (issue 21: a tampered cached factor changed a frequency with exit 0).
"""

from __future__ import annotations

import json
import math
from collections.abc import Iterator
from pathlib import Path

import pint
import pytest

from beamtone.calc import units
from beamtone.calc.errors import InputError
from tests.calc.sheets import forget_units
from tests.processes import cold_solves

ROOT = Path(__file__).resolve().parents[2]
CASES = [
    ("48 in", units.LENGTH, "m"),
    ("1.2 m", units.LENGTH, "m"),
    ("5.5 lb", units.MASS, "kg"),
    ("0.284 lb/in^3", units.DENSITY, "kg/m^3"),
    ("29000 ksi", units.PRESSURE, "Pa"),
    ("200 GPa", units.PRESSURE, "Pa"),
    ("1.2e6 mm^4", units.SECOND_MOMENT, "m^4"),
    ("0.5 lb/ft", units.MASS_PER_LENGTH, "kg/m"),
    ("450 lbf", units.FORCE, "N"),
    ("200 lbf/in", units.STIFFNESS, "N/m"),
    ("1500 lbf*in/rad", units.ROTATIONAL_STIFFNESS, "N*m/rad"),
    ("0.004 kg*m^2", units.ROTARY_INERTIA, "kg*m^2"),
    ("60 Hz", units.FREQUENCY, "Hz"),
    ("3 kN m / rad", units.ROTATIONAL_STIFFNESS, "N*m/rad"),
]


@pytest.fixture
def fresh_cache(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Iterator[Path]:
    """An empty cache folder, nothing remembered in this process."""
    monkeypatch.setenv("BEAMTONE_CACHE", str(tmp_path))
    units._parse_cached.cache_clear()
    yield tmp_path / "units.json"
    units._parse_cached.cache_clear()


@pytest.mark.parametrize(("text", "dim", "si"), CASES)
def test_fresh_and_cached_values_equal_pint(
    text: str, dim: units.Dimension, si: str, fresh_cache: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    reference = pint.UnitRegistry()
    number, unit = text.split(" ", 1)
    unit = unit.replace("^", "**").replace(" / ", "/").replace(" ", "*")
    expected = float(number) * float((1.0 * reference.parse_units(unit)).to(si).magnitude)
    first = units.parse_quantity(text, dim, "k")
    assert not fresh_cache.exists()  # nothing about units is kept on disk
    forget_units()
    again = units.parse_quantity(text, dim, "k")
    assert first == again
    assert first == pytest.approx(expected, rel=1e-15)


def test_angular_frequencies(fresh_cache: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    for _ in range(2):
        assert units.parse_frequency("1800 rpm", "k") == pytest.approx(30.0, rel=1e-15)
        assert units.parse_frequency("100 rad/s", "k") == pytest.approx(100 / (2 * math.pi))
        assert units.parse_frequency("30 Hz", "k") == 30.0
        forget_units()
    assert not fresh_cache.exists()


def test_conversion_from_si(fresh_cache: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    first = units.convert_from_si(0.0254, "in")
    forget_units()
    assert units.convert_from_si(0.0254, "in") == first == pytest.approx(1.0, rel=1e-15)


def test_refusals_are_never_cached(fresh_cache: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    for _ in range(2):
        with pytest.raises(InputError, match="unknown unit"):
            units.parse_quantity("3 furlongz", units.LENGTH, "member.length")
        with pytest.raises(InputError, match="gives a weight"):
            units.parse_quantity("5 lbf", units.MASS, "mass[0].mass")
        forget_units()
    assert not fresh_cache.exists()


@pytest.mark.parametrize("bad", [-1.0, 0.0, "0.001", None, [1], float("nan"), 0.0011])
def test_a_planted_unit_file_changes_nothing(
    bad: object, fresh_cache: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    """Issue 21: a cached millimetre of 0.0011 m changed f1 from 16.58 to 19.50 Hz."""
    entries = {"m|[length]|mm": bad, "base|mm": bad}
    data = {"format": 1, "version": pint.__version__, "entries": entries}
    fresh_cache.write_text(json.dumps(data), encoding="utf-8")
    forget_units()
    assert units.parse_quantity("3 mm", units.LENGTH, "k") == 0.003
    assert units.convert_from_si(0.003, "mm") == pytest.approx(3.0, rel=1e-15)


def test_a_solve_reads_no_unit_file(fresh_cache: Path) -> None:
    """A planted units.json written as the old cache was makes no difference to a solve."""
    sheet = ROOT / "worksheets" / "slide-rail-us.toml"
    shown = "a.modes.modes[0].frequency_hz"
    (clean,) = {row[0] for row in cold_solves(sheet, shown, "pint", fresh_cache.parent)}
    entries = {"m|[length]|in": 0.03, "m|[length]|ft": 0.4, "kg|[mass]|lb": 0.5}
    data = {"format": 1, "version": pint.__version__, "entries": entries}
    fresh_cache.write_text(json.dumps(data), encoding="utf-8")
    tampered = cold_solves(sheet, shown, "pint", fresh_cache.parent)
    assert {row[0] for row in tampered} == {clean}


def test_the_registry_keeps_no_pint_cache_folder() -> None:
    """pint unpickles what it finds in its cache folder: the registry must not have one."""
    assert getattr(units.registry(), "_diskcache", None) is None


@pytest.mark.parametrize(
    ("text", "reason"),
    [
        ("3 dB*m", "logarithmic"),
        ("3 Np*m", "logarithmic"),
        ("3 octave*m", "logarithmic"),
        ("3 decade*m", "logarithmic"),
        ("1.2 B*m", "read as a byte"),
    ],
)
def test_levels_and_bytes_are_refused_with_the_reason(text: str, reason: str) -> None:
    """pint reads dB, Np, octave and decade as logarithmic units and B as a byte."""
    with pytest.raises(InputError, match=reason) as err:
        units.parse_quantity(text, units.LENGTH, "member.length")
    assert err.value.key == "member.length"


@pytest.mark.parametrize("text", ["0.0025 ton", "2 tons", "1 kton"])
def test_ton_asks_for_the_unambiguous_unit(text: str) -> None:
    """pint's ``ton`` is the US short ton, 2000 lb (common practice: 907.18474 kg)."""
    with pytest.raises(InputError, match="write t or tonne") as err:
        units.parse_quantity(text, units.MASS, "mass[0].mass")
    assert "short_ton" in str(err.value.hint)
    assert units.parse_quantity("0.0025 t", units.MASS, "k") == pytest.approx(2.5)
    assert units.parse_quantity("0.0025 tonne", units.MASS, "k") == pytest.approx(2.5)
    assert units.parse_quantity("1 short_ton", units.MASS, "k") == pytest.approx(907.18474)


@pytest.mark.parametrize(
    "text", ["m**9**9**9", "m^99", "(((((m)))))", "m^(1/0)", "1000*m", "m^(40/3)", "__import__"]
)
def test_parse_unit_refuses_outside_the_grammar(text: str) -> None:
    with pytest.raises(InputError) as err:
        units.parse_unit(text, "f", "a unit")
    assert err.value.key == "f"


def test_parse_unit_accepts_fractional_powers() -> None:
    reference = pint.UnitRegistry(cache_folder=None)
    assert units.parse_unit("m^(1/3)", "x", "a unit").dimensionality == (
        reference.parse_units("m**(1/3)").dimensionality
    )
    assert units.parse_unit("kg/m^(-2)", "x", "a unit") == units.registry().parse_units("kg*m**2")
