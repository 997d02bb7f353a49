"""Unit parsing through the cache of pint's answers, against pint itself.

pint (a general-purpose units library) is the reference: every value read back from the
cache must equal what a fresh pint registry gives for the same text, to the last bit.
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
    monkeypatch.setattr(units, "_unit_entries", None)
    units._parse_cached.cache_clear()
    yield tmp_path / "units.json"
    units._parse_cached.cache_clear()


def _forget(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(units, "_unit_entries", None)
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
    assert fresh_cache.exists()
    _forget(monkeypatch)
    again = units.parse_quantity(text, dim, "k")  # from the file
    assert first == again
    assert first == pytest.approx(expected, rel=1e-15)


def test_angular_frequencies_from_the_cache(
    fresh_cache: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    for _ in range(2):
        assert units.parse_frequency("1800 rpm", "k") == pytest.approx(30.0, rel=1e-15)
        assert units.parse_frequency("100 rad/s", "k") == pytest.approx(100 / (2 * math.pi))
        assert units.parse_frequency("30 Hz", "k") == 30.0
        _forget(monkeypatch)
    entries = json.loads(fresh_cache.read_text(encoding="utf-8"))["entries"]
    assert entries["angular|rpm"] is True and entries["angular|Hz"] is False


def test_conversion_from_si_uses_the_same_cache(
    fresh_cache: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    first = units.convert_from_si(0.0254, "in")
    _forget(monkeypatch)
    assert units.convert_from_si(0.0254, "in") == first == pytest.approx(1.0, rel=1e-15)


def test_refusals_are_never_cached(fresh_cache: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    for _ in range(2):
        with pytest.raises(InputError, match="unknown unit"):
            units.parse_quantity("3 furlongz", units.LENGTH, "member.length")
        with pytest.raises(InputError, match="gives a weight"):
            units.parse_quantity("5 lbf", units.MASS, "mass[0].mass")
        _forget(monkeypatch)
    assert not fresh_cache.exists()


@pytest.mark.parametrize("bad", [-1.0, 0.0, "0.001", None, [1], float("nan")])
def test_a_tampered_entry_is_ignored(
    bad: object, fresh_cache: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    assert units.parse_quantity("3 mm", units.LENGTH, "k") == 0.003
    data = json.loads(fresh_cache.read_text(encoding="utf-8"))
    assert data["entries"]["m|[length]|mm"] == 0.001
    data["entries"]["m|[length]|mm"] = bad
    fresh_cache.write_text(json.dumps(data), encoding="utf-8")
    _forget(monkeypatch)
    assert units.parse_quantity("3 mm", units.LENGTH, "k") == 0.003


def test_a_cached_solve_needs_no_registry(fresh_cache: Path) -> None:
    sheet = ROOT / "worksheets" / "slide-rail-us.toml"
    first, again = cold_solves(sheet, "a.modes.modes[0].frequency_hz", "pint", fresh_cache.parent)
    assert first[1] and not again[1]
    assert float(first[0]) == pytest.approx(float(again[0]), rel=1e-12)


def test_no_home_folder_means_no_cache(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    from beamtone.calc import diskcache

    monkeypatch.delenv("BEAMTONE_CACHE", raising=False)
    monkeypatch.delenv("XDG_CACHE_HOME", raising=False)
    monkeypatch.setenv("HOME", "")
    monkeypatch.setattr(diskcache.os.path, "expanduser", lambda text: text)
    monkeypatch.chdir(tmp_path)
    _forget(monkeypatch)
    assert diskcache.folder() is None
    assert units.parse_quantity("2 in", units.LENGTH, "k") == pytest.approx(0.0508, rel=1e-15)
    assert list(tmp_path.iterdir()) == []
    _forget(monkeypatch)
