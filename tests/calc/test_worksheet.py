"""Checks of the worksheet loader :mod:`calc.worksheet`.

References used here:

* exact unit definitions: 1 in = 0.0254 m and 1 lb = 0.45359237 kg (international yard and
  pound agreement of 1959), standard gravity g_0 = 9.80665 m/s^2 (3rd CGPM, 1901), so
  1 lbf = 0.45359237 kg * 9.80665 m/s^2 = 4.4482216152605 N exactly;
* area and second moment of area of simple cross-sections, and the parallel-axis theorem, as in
  any strength-of-materials text (common practice);
* the TOML 1.0.0 specification (toml.io) for what is and is not a valid document;
* property-based fuzzing with the general-purpose libraries hypothesis and tomlkit.

Every bad input must raise :class:`calc.errors.InputError` with the exact key path, and a
one-line message that names that key and says what was expected.
"""

from __future__ import annotations

import math
import os
import re
import string
import subprocess
import sys
import tokenize
from pathlib import Path

import pytest
import tomlkit
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from beamtone.calc.errors import InputError
from beamtone.calc.model import Member
from beamtone.calc.worksheet import MAX_BYTES, MAX_MODES, Worksheet, load, loads
from tests.calc.sheets import BASE as _BASE
from tests.calc.sheets import BASE_SECTION as _BASE_SECTION
from tests.calc.sheets import CHECK as _CHECK
from tests.calc.sheets import FT, IN, KSI, LB, LBF, PSI
from tests.calc.sheets import HEAD as _HEAD
from tests.calc.sheets import MASS as _MASS
from tests.calc.sheets import MEMBER as _MEMBER
from tests.calc.sheets import SPRING as _SPRING
from tests.calc.sheets import SUPPORTS as _SUPPORTS
from tests.calc.sheets import close as _close
from tests.calc.sheets import edit as _edit
from tests.fuzz import EXAMPLES as FUZZ_EXAMPLES

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((ROOT / "worksheets").glob("*.toml"))


def _error(text: str) -> InputError:
    with pytest.raises(InputError) as info:
        loads(text)
    return info.value


def _assert_well_formed(err: InputError, key: str) -> None:
    """The error names ``key``, says what was expected, and fits on one line."""
    assert err.key == key, err.message
    msg = err.message
    assert msg.startswith(f"{key}: "), msg
    assert err.expected, msg
    assert f"expected {err.expected}" in msg, msg
    assert len(msg.splitlines()) == 1, repr(msg)
    assert str(err) == msg


# The bad inputs below are small edits of the base worksheet (tests/calc/sheets.py).
_STEPPED = (
    _HEAD
    + '\n[member]\nmaterial = "steel"\nsection = { shape = "round", diameter = "30 mm" }\n'
    + '[[member.segment]]\nlength = "200 mm"\n[[member.segment]]\nlength = "300 mm"\n'
    + '\n[supports]\nleft = "clamped"\nright = "free"\n'
)


def _parts(**replace: str) -> str:
    """The base worksheet with whole tables replaced (an empty string drops one)."""
    parts = {"head": _HEAD, "member": _MEMBER, "supports": _SUPPORTS, "mass": _MASS}
    parts |= {"spring": _SPRING, "check": _CHECK}
    return "".join(replace.get(name, text) for name, text in parts.items())


# ---------------------------------------------------------------------------------------------
# Good inputs
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_every_example_worksheet_loads(path: Path) -> None:
    sheet = load(path)
    assert isinstance(sheet, Worksheet)
    assert isinstance(sheet.member, Member)
    assert sheet.source == str(path)
    assert sheet.member.length > 0.0
    assert 1 <= sheet.modes <= MAX_MODES
    assert sheet.title == sheet.data["title"]
    assert sheet.modes == sheet.data.get("check", {}).get("modes", 5)


def test_examples_exist() -> None:
    assert len(EXAMPLES) >= 5


def test_data_holds_plain_values_as_written() -> None:
    sheet = load(ROOT / "worksheets" / "pipe-on-hangers.toml")

    def plain(value: object) -> None:
        assert type(value) in (dict, list, str, int, float, bool), type(value)
        if isinstance(value, dict):
            for k, v in value.items():
                assert type(k) is str
                plain(v)
        elif isinstance(value, list):
            for v in value:
                plain(v)

    plain(sheet.data)
    assert sheet.data["member"]["added_mass"] == "2.3 kg/m"  # the trailing comment is not kept
    assert sheet.data["member"]["section"]["wall"] == "2.77 mm"
    assert sheet.data["supports"]["inner"][1] == {"at": "5.0 m", "kind": "pinned"}
    assert sheet.data["check"] == {"modes": 4}


def test_titles_notes_and_default_modes(tmp_path: Path) -> None:
    text = _BASE.replace('title = "Base worksheet"\n', "").replace("[check]\nmodes = 3\n", "")
    assert loads(text).title == ""
    assert loads(text).modes == 5
    path = tmp_path / "untitled-beam.toml"
    path.write_text(text, encoding="utf-8")
    assert load(path).title == "untitled-beam"
    assert loads(_BASE).title == "Base worksheet"
    assert loads(_BASE).notes == ""
    assert loads(_edit("format = 1\n", 'format = 1\nnotes = "two\\nlines"\n')).notes == "two\nlines"


def test_byte_order_mark_is_accepted(tmp_path: Path) -> None:
    path = tmp_path / "bom.toml"
    path.write_bytes(b"\xef\xbb\xbf" + _BASE.encode("utf-8"))
    assert load(path).member.length == 2.0


_UNITS_TEMPLATE = string.Template(
    """format = 1
[member]
length = "$length"
material = { youngs_modulus = "$modulus", density = "$density" }
section = { shape = "properties", area = "$area", second_moment = "$second_moment" }
added_mass = "$added_mass"
axial_force = "$axial_force"
[supports]
left = "clamped"
right = "free"
[[mass]]
at = "$at"
mass = "$mass"
rotary_inertia = "$rotary_inertia"
[[spring]]
at = "$at"
stiffness = "$stiffness"
rotational_stiffness = "$rotational_stiffness"
"""
)
_UNITS_DEFAULTS = {
    "length": "1.2 m",
    "modulus": "200 GPa",
    "density": "7850 kg/m^3",
    "area": "450 mm^2",
    "second_moment": "1.2e4 mm^4",
    "added_mass": "0.8 kg/m",
    "axial_force": "2 kN",
    "at": "0.6 m",
    "mass": "2.5 kg",
    "rotary_inertia": "0.004 kg*m^2",
    "stiffness": "40 kN/m",
    "rotational_stiffness": "2 kN*m/rad",
}
_GETTERS = {
    "length": lambda m: m.length,
    "modulus": lambda m: m.segments[0].material.youngs_modulus,
    "density": lambda m: m.segments[0].material.density,
    "area": lambda m: m.segments[0].section.area,
    "second_moment": lambda m: m.segments[0].section.second_moment,
    "added_mass": lambda m: m.segments[0].added_mass,
    "axial_force": lambda m: m.axial_force,
    "at": lambda m: m.masses[0].at,
    "mass": lambda m: m.masses[0].mass,
    "rotary_inertia": lambda m: m.masses[0].rotary_inertia,
    "stiffness": lambda m: m.springs[0].stiffness,
    "rotational_stiffness": lambda m: m.springs[0].rotational_stiffness,
}
# (field, as written, SI value by the exact definitions above)
_UNIT_CASES = [
    ("length", "1.2 m", 1.2),
    ("length", "1200 mm", 1.2),
    ("length", "48 in", 48 * IN),
    ("length", "4 ft", 4 * FT),
    ("at", "20 in", 20 * IN),
    ("at", "600 mm", 0.6),
    ("modulus", "200 GPa", 200e9),
    ("modulus", "200000 N/mm^2", 200e9),
    ("modulus", "29000 ksi", 29000 * KSI),
    ("modulus", "29e6 psi", 29e6 * PSI),
    ("density", "7850 kg/m^3", 7850.0),
    ("density", "7.85 tonne/m^3", 7850.0),
    ("density", "7.85 g/cm^3", 7850.0),
    ("density", "0.284 lb/in^3", 0.284 * LB / IN**3),
    ("density", "490 lb/ft^3", 490 * LB / FT**3),
    ("area", "450 mm^2", 450e-6),
    ("area", "0.7 in^2", 0.7 * IN**2),
    ("second_moment", "1.2e6 mm^4", 1.2e-6),
    ("second_moment", "2.9 in^4", 2.9 * IN**4),
    ("added_mass", "0.8 kg/m", 0.8),
    ("added_mass", "0.5 lb/ft", 0.5 * LB / FT),
    ("added_mass", "0 kg/m", 0.0),
    ("axial_force", "2 kN", 2000.0),
    ("axial_force", "450 lbf", 450 * LBF),
    ("axial_force", "-450 lbf", -450 * LBF),
    ("axial_force", "0 N", 0.0),
    ("mass", "2.5 kg", 2.5),
    ("mass", "5.5 lb", 5.5 * LB),  # lb is the pound-mass
    ("mass", "1 lb", LB),
    ("mass", "0.0025 tonne", 2.5),
    ("rotary_inertia", "0.004 kg*m^2", 0.004),
    ("rotary_inertia", "4000 kg*mm^2", 0.004),
    ("rotary_inertia", "10 lb*in^2", 10 * LB * IN**2),
    ("stiffness", "40 kN/m", 40e3),
    ("stiffness", "40 N/mm", 40e3),
    ("stiffness", "200 lbf/in", 200 * LBF / IN),
    ("rotational_stiffness", "2 kN*m/rad", 2000.0),
    ("rotational_stiffness", "2e6 N*mm/rad", 2000.0),
    ("rotational_stiffness", "1500 lbf*in/rad", 1500 * LBF * IN),
]


@pytest.mark.parametrize(("name", "written", "si"), _UNIT_CASES)
def test_si_and_us_customary_units(name: str, written: str, si: float) -> None:
    sheet = loads(_UNITS_TEMPLATE.substitute({**_UNITS_DEFAULTS, name: written}))
    assert _close(_GETTERS[name](sheet.member), si)


def test_unit_defaults_load_in_si() -> None:
    member = loads(_UNITS_TEMPLATE.substitute(_UNITS_DEFAULTS)).member
    assert _close(member.segments[0].section.second_moment, 1.2e-8)
    assert member.springs[0].at == member.masses[0].at == 0.6


def test_pound_force_is_exact() -> None:
    # 1 lbf = 0.45359237 kg * 9.80665 m/s^2 = 4.4482216152605 N, exactly (see module docstring)
    sheet = loads(_UNITS_TEMPLATE.substitute({**_UNITS_DEFAULTS, "axial_force": "1 lbf"}))
    assert _close(sheet.member.axial_force, 4.4482216152605, rel=1e-15)


def test_inline_material() -> None:
    text = _edit(
        'material = "steel"',
        'material = { youngs_modulus = "68.9 GPa", density = "2700 kg/m^3", '
        'poisson_ratio = 0.33, name = "6061-T6 bar" }',
    )
    mat = loads(text).member.segments[0].material
    assert mat.name == "6061-T6 bar"
    assert _close(mat.youngs_modulus, 68.9e9)
    assert _close(mat.density, 2700.0)
    assert mat.poisson_ratio == 0.33
    bare = loads(_edit('material = "steel"', 'material = { youngs_modulus = "1 GPa", '
                       'density = "1000 kg/m^3" }')).member.segments[0].material  # fmt: skip
    assert bare.poisson_ratio is None
    assert bare.name == "inline"


def test_stepped_member_inherits_member_level_entries() -> None:
    text = """format = 1
[member]
material = "aluminium-6061"
section = { shape = "round", diameter = "30 mm" }
added_mass = "0.2 kg/m"
[[member.segment]]
length = "80 mm"
[[member.segment]]
length = "320 mm"
section = { shape = "round", diameter = "45 mm" }
[[member.segment]]
length = "100 mm"
material = "steel"
added_mass = "0 kg/m"
[supports]
left = "free"
right = "free"
"""
    member = loads(text).member
    alu = loads(_edit('material = "steel"', 'material = "aluminium-6061"')).member
    steel = loads(_BASE).member
    s0, s1, s2 = member.segments
    assert all(_close(s.length, x) for s, x in zip(member.segments, [0.08, 0.32, 0.1], strict=True))
    assert member.boundaries[-1] == pytest.approx(0.5, rel=1e-15)
    assert s0.material == s1.material == alu.segments[0].material
    assert s2.material == steel.segments[0].material
    assert s0.section.shape == "round" and _close(s0.section.area, math.pi * 0.030**2 / 4)
    assert _close(s1.section.area, math.pi * 0.045**2 / 4)
    assert s2.section == s0.section
    assert s0.added_mass == s1.added_mass == 0.2
    assert s2.added_mass == 0.0


@pytest.mark.parametrize("length", ["500 mm", "0.5 m", "0.5000000001 m", "19.68503937 in"])
def test_member_length_consistent_with_segments_is_accepted(length: str) -> None:
    # 19.68503937 in = 0.4999999999980 m: within the 1e-9 relative tolerance
    text = _STEPPED.replace("[member]\n", f'[member]\nlength = "{length}"\n')
    member = loads(text).member
    assert len(member.segments) == 2
    assert _close(member.length, 0.5, rel=1e-9)


def test_single_array_entries_may_be_written_as_tables() -> None:
    text = _edit(_INNER, 'inner = { at = "1 m", kind = "pinned" }')
    assert loads(text).member.inner_supports[0].at == 1.0


def test_positions_at_the_ends_are_accepted() -> None:
    text = _edit('at = "0.5 m"', 'at = "0 m"').replace('at = "1.5 m"', 'at = "2 m"')
    member = loads(text).member
    assert member.masses[0].at == 0.0
    assert member.springs[0].at == 2.0


def test_rotary_inertia_alone_is_a_valid_point_mass() -> None:
    text = _edit('mass = "3 kg"', 'mass = "0 kg"\nrotary_inertia = "0.01 kg*m^2"')
    mass = loads(text).member.masses[0]
    assert (mass.mass, mass.rotary_inertia) == (0.0, 0.01)


def test_loader_never_writes_the_file(tmp_path: Path) -> None:
    path = tmp_path / "w.toml"
    path.write_bytes(_BASE.encode("utf-8"))
    before = (path.read_bytes(), path.stat().st_mtime_ns)
    load(path)
    with pytest.raises(InputError):
        load(_write(tmp_path, "bad.toml", _edit('length = "2 m"', 'length = "2 kg"').encode()))
    assert (path.read_bytes(), path.stat().st_mtime_ns) == before


# ---------------------------------------------------------------------------------------------
# Bad inputs: small edits of the base worksheet
# ---------------------------------------------------------------------------------------------


def test_base_worksheet_is_good() -> None:
    member = loads(_BASE).member
    assert member.length == 2.0
    assert (member.left, member.right) == ("pinned", "pinned")
    assert len(member.masses) == len(member.springs) == len(member.inner_supports) == 1
    assert loads(_STEPPED).member.length == pytest.approx(0.5)


_SEG2 = '[[member.segment]]\nlength = "300 mm"\n'


def _case(case_id: str, text: str, key: str, fragment: str | None = None) -> object:
    return pytest.param(text, key, fragment, id=case_id)


def _length(new: str) -> str:
    return _edit('length = "2 m"', f"length = {new}")


def _section(new: str) -> str:
    return _edit(_BASE_SECTION, f"section = {{ {new} }}")


def _material(new: str) -> str:
    return _edit('material = "steel"', f"material = {new}")


def _inline(extra: str) -> str:
    return _material(f'{{ youngs_modulus = "200 GPa", density = "7850 kg/m^3", {extra} }}')


def _segment(new: str) -> str:
    return _edit(_SEG2, f"[[member.segment]]\n{new}\n", _STEPPED)


def _top(extra: str, **drop: str) -> str:
    """A top-level key written before the first table (so that it stays top-level)."""
    return _parts(head=_HEAD + extra + "\n", **drop)


_TUBE = 'shape = "round-tube", outside_diameter = "30 mm"'
_IBEAM = 'shape = "i-beam", width = "100 mm", depth = "200 mm"'
_INNER = 'inner = [{ at = "1 m", kind = "pinned" }]'
_INNER_TWICE = 'inner = [{ at = "1 m", kind = "pinned" }, { at = "1000 mm", kind = "clamped" }]'
_STEEL_3MM = '\n[member]\nmaterial = "steel"\nsection = { shape = "round", diameter = "3 mm" }\n'

# (id, worksheet text, exact key, a fragment the message must contain, or None)
_BAD = [
    # --- quantities ---
    _case("length-in-kg", _length('"1.2 kg"'), "member.length", "'kg' is of dimension"),
    _case("length-in-seconds", _length('"2 s"'), "member.length", "a length"),
    _case("length-as-area", _length('"2 m^2"'), "member.length", "[length] ** 2"),
    _case("bare-number", _length("2"), "member.length", "bare number"),
    _case("bare-float", _length("2.5"), "member.length", "bare number"),
    _case("unit-missing", _length('"2"'), "member.length", "unit is missing"),
    _case("unknown-unit", _length('"2 furlongz"'), "member.length", "unknown unit"),
    _case("not-a-number", _length('"two m"'), "member.length", "a length"),
    _case("unit-twice", _length('"2 m m"'), "member.length", "[length] ** 2"),
    _case("unit-symbol", _length('"2 $"'), "member.length", "not a unit expression"),
    _case("zero-length", _length('"0 m"'), "member.length", "non-zero"),
    _case("negative-length", _length('"-2 m"'), "member.length", "positive"),
    _case("nan-text", _length('"nan m"'), "member.length", "finite"),
    _case("inf-text", _length('"inf m"'), "member.length", "finite"),
    _case("minus-inf-text", _length('"-inf m"'), "member.length", "finite"),
    _case("overflowing-number", _length('"1e999 m"'), "member.length", "finite"),
    _case("toml-nan", _length("nan"), "member.length", "bare number"),
    _case("toml-inf", _length("inf"), "member.length", "bare number"),
    _case("boolean", _length("true"), "member.length", "a string"),
    _case("table-for-quantity", _length('{ value = 2, unit = "m" }'), "member.length", "a dict"),
    _case("array-for-quantity", _length('["2 m"]'), "member.length", "a list"),
    _case("date-for-quantity", _length("1979-05-27"), "member.length", "a string"),
    _case("too-long", _length('"2' + " " * 80 + 'm"'), "member.length", "longer than"),
    _case("underflow-to-zero", _length('"1e-400 m"'), "member.length", "non-zero"),
    # --- sections ---
    _case("tube-wall-too-thick", _section(f'{_TUBE}, wall = "16 mm"'), "member.section.wall",
          "half the outside diameter"),
    _case("tube-wall-in-kg", _section(f'{_TUBE}, wall = "4 kg"'), "member.section.wall",
          "a length"),
    _case("tube-wall-negative", _section(f'{_TUBE}, wall = "-4 mm"'), "member.section.wall",
          "positive"),
    _case("tube-wall-missing", _section(_TUBE), "member.section.wall", "missing"),
    _case("unknown-shape", _section('shape = "hexagon", diameter = "3 mm"'),
          "member.section.shape", "one of rectangle"),
    _case("shape-near-miss", _section('shape = "round_tube"'), "member.section.shape",
          "did you mean 'round-tube'?"),
    _case("shape-number", _section("shape = 3"), "member.section.shape"),
    _case("shape-missing", _section('outside_diameter = "30 mm", wall = "3 mm"'),
          "member.section.shape", "missing"),
    _case("section-unknown-key", _section(f'{_TUBE}, wall = "3 mm", colour = "red"'),
          "member.section.colour", "unknown key"),
    _case("section-string", _edit(_BASE_SECTION, 'section = "round-tube"'), "member.section",
          "a table"),
    _case("box-wall-too-thick",
          _section('shape = "box", width = "40 mm", depth = "30 mm", wall = "16 mm"'),
          "member.section.wall", "half the smaller side"),
    _case("i-beam-flange-too-thick", _section(f'{_IBEAM}, flange = "100 mm", web = "5 mm"'),
          "member.section.flange", "half the depth"),
    _case("i-beam-web-too-thick", _section(f'{_IBEAM}, flange = "8 mm", web = "101 mm"'),
          "member.section.web", "flange width"),
    _case("rectangle-near-miss-key", _section('shape = "rectangle", width = "4 mm", dept = "1 mm"'),
          "member.section.dept", "did you mean 'depth'?"),
    _case("properties-impossible",
          _section('area = "100 mm^2", second_moment = "1e6 mm^4", depth = "20 mm"'),
          "member.section.second_moment", "A*depth^2/4"),
    _case("area-as-length", _section('area = "100 mm", second_moment = "1e4 mm^4"'),
          "member.section.area", "an area"),
    _case("properties-incomplete", _section('area = "100 mm^2"'),
          "member.section.second_moment", "missing"),
    # --- materials ---
    _case("unknown-material", _material('"concrete"'), "member.material",
          "or give youngs_modulus and density"),
    _case("unknown-material-with-hint", _material('"unobtainium"'), "member.material",
          "a library material: steel"),
    _case("material-near-miss", _material('"stel"'), "member.material", "did you mean 'steel'?"),
    _case("material-number", _material("7850"), "member.material", "a table"),
    _case("weight-density",
          _material('{ youngs_modulus = "200 GPa", density = "0.284 lbf/in^3" }'),
          "member.material.density", "weight density"),
    _case("density-per-area", _material('{ youngs_modulus = "200 GPa", density = "7 kg/m^2" }'),
          "member.material.density", "a density"),
    _case("modulus-in-kg", _material('{ youngs_modulus = "200 kg", density = "7 kg/m^3" }'),
          "member.material.youngs_modulus", "a modulus"),
    _case("modulus-zero", _material('{ youngs_modulus = "0 GPa", density = "7 kg/m^3" }'),
          "member.material.youngs_modulus", "non-zero"),
    _case("density-missing", _material('{ youngs_modulus = "200 GPa" }'),
          "member.material.density", "missing"),
    _case("material-near-miss-key",
          _material('{ youngs_modulus = "200 GPa", densty = "7850 kg/m^3" }'),
          "member.material.densty", "did you mean 'density'?"),
    _case("poisson-too-high", _inline("poisson_ratio = 0.5"), "member.material.poisson_ratio",
          "between -1 and 0.5"),
    _case("poisson-string", _inline('poisson_ratio = "0.3"'), "member.material.poisson_ratio"),
    _case("poisson-nan", _inline("poisson_ratio = nan"), "member.material.poisson_ratio"),
    _case("material-name-number", _inline("name = 3"), "member.material.name", "a text name"),
    # --- member ---
    _case("member-near-miss-key", _edit('length = "2 m"', 'lenght = "2 m"'), "member.lenght",
          "did you mean 'length'?"),
    _case("member-length-missing", _edit('length = "2 m"\n', ""), "member.length", "missing"),
    _case("member-material-missing", _edit('material = "steel"\n', ""), "member.material",
          "missing"),
    _case("member-section-missing", _edit(_BASE_SECTION + "\n", ""), "member.section",
          "missing"),
    _case("added-mass-negative", _length('"2 m"\nadded_mass = "-1 kg/m"'), "member.added_mass",
          "zero or positive"),
    _case("added-mass-weight", _length('"2 m"\nadded_mass = "1 lbf/ft"'), "member.added_mass",
          "weight per length"),
    _case("axial-force-in-kg", _length('"2 m"\naxial_force = "5 kg"'), "member.axial_force",
          "a force"),
    _case("axial-force-nan", _length('"2 m"\naxial_force = "nan N"'), "member.axial_force",
          "finite"),
    _case("member-string", _parts(member='\nmember = "steel"\n'), "member", "a table"),
    _case("member-missing", _parts(member=""), "member", "missing"),
    # --- segments ---
    _case("segment-sum-mismatch", _STEPPED.replace("[member]\n", '[member]\nlength = "2 m"\n'),
          "member.length", "sum of the segment lengths"),
    _case("segmented-length-in-kg",
          _STEPPED.replace("[member]\n", '[member]\nlength = "2 kg"\n'), "member.length",
          "a length"),
    _case("segment-near-miss-key", _segment('lenth = "300 mm"'), "member.segment[1].lenth",
          "did you mean 'length'?"),
    _case("segment-length-missing", _segment('section = { shape = "round", diameter = "3 mm" }'),
          "member.segment[1].length", "missing"),
    _case("segment-wall-too-thick",
          _segment(f'length = "300 mm"\nsection = {{ {_TUBE}, wall = "16 mm" }}'),
          "member.segment[1].section.wall", "half the outside diameter"),
    _case("segment-material-missing", _edit('material = "steel"\n', "", _STEPPED),
          "member.segment[0].material", "missing"),
    _case("segment-axial-force", _segment('length = "300 mm"\naxial_force = "1 N"'),
          "member.segment[1].axial_force", "unknown key"),
    _case("segments-empty", _parts(member=_STEEL_3MM + "segment = []\n"), "member.segment",
          "at least one segment"),
    _case("segments-string", _parts(member=_STEEL_3MM + 'segment = "x"\n'), "member.segment",
          "an array of tables"),
    # --- supports ---
    _case("supports-missing", _parts(supports=""), "supports", "missing"),
    _case("supports-string", _top('supports = "pinned"', supports=""), "supports", "a table"),
    _case("unknown-support-kind", _edit('left = "pinned"', 'left = "fixed"'), "supports.left",
          "one of clamped, pinned, guided, free"),
    _case("support-kind-near-miss", _edit('left = "pinned"', 'left = "pined"'), "supports.left",
          "did you mean 'pinned'?"),
    _case("support-kind-spring", _edit('left = "pinned"', 'left = "spring"'), "supports.left",
          "[[spring]]"),
    _case("support-kind-table", _edit('left = "pinned"', 'left = { kind = "pinned" }'),
          "supports.left"),
    _case("support-right-missing", _edit('right = "pinned"\n', ""), "supports.right",
          "missing"),
    _case("supports-unknown-key", _edit('right = "pinned"', 'right = "pinned"\nmiddle = "x"'),
          "supports.middle", "unknown key"),
    _case("inner-at-left-end", _edit('at = "1 m", kind', 'at = "0 m", kind'),
          "supports.inner[0].at", "strictly inside"),
    _case("inner-at-right-end", _edit('at = "1 m", kind', 'at = "2 m", kind'),
          "supports.inner[0].at", "strictly inside"),
    _case("inner-outside", _edit('at = "1 m", kind', 'at = "2.5 m", kind'),
          "supports.inner[0].at", "strictly inside"),
    _case("inner-negative", _edit('at = "1 m", kind', 'at = "-0.5 m", kind'),
          "supports.inner[0].at", "strictly inside"),
    _case("inner-two-at-one-place", _edit(_INNER, _INNER_TWICE), "supports.inner[1].at",
          "supports.inner[0].at"),
    _case("inner-kind-free", _edit('kind = "pinned"', 'kind = "free"'), "supports.inner[0].kind",
          "one of pinned, clamped, guided"),
    _case("inner-kind-missing", _edit(', kind = "pinned"', ""), "supports.inner[0].kind",
          "missing"),
    _case("inner-near-miss-key", _edit('kind = "pinned"', 'knd = "pinned"'),
          "supports.inner[0].knd", "did you mean 'kind'?"),
    _case("inner-at-in-kg", _edit('at = "1 m", kind', 'at = "1 kg", kind'),
          "supports.inner[0].at", "a length"),
    # --- point masses ---
    _case("mass-beyond-end", _edit('at = "0.5 m"', 'at = "2.5 m"'), "mass[0].at",
          "from 0 m to 2 m"),
    _case("mass-before-start", _edit('at = "0.5 m"', 'at = "-1 mm"'), "mass[0].at",
          "from 0 m to 2 m"),
    _case("mass-at-missing", _edit('at = "0.5 m"\n', ""), "mass[0].at", "missing"),
    _case("mass-in-lbf", _edit('mass = "3 kg"', 'mass = "6.6 lbf"'), "mass[0].mass",
          "lb is pound-mass"),
    _case("mass-negative", _edit('mass = "3 kg"', 'mass = "-3 kg"'), "mass[0].mass",
          "zero or positive"),
    _case("mass-zero", _edit('mass = "3 kg"', 'mass = "0 kg"'), "mass[0].mass",
          "a positive mass or rotary inertia"),
    _case("mass-missing", _edit('mass = "3 kg"\n', ""), "mass[0].mass", "missing"),
    _case("mass-near-miss-key", _edit('mass = "3 kg"', 'mas = "3 kg"'), "mass[0].mas",
          "did you mean 'mass'?"),
    _case("rotary-inertia-wrong-dimension",
          _edit('mass = "3 kg"', 'mass = "3 kg"\nrotary_inertia = "1 kg*m"'),
          "mass[0].rotary_inertia", "a rotary inertia"),
    _case("mass-string", _top('mass = "3 kg"', mass=""), "mass", "an array of tables"),
    _case("mass-array-of-numbers", _top("mass = [1, 2]", mass=""), "mass[0]", "a table"),
    # --- springs ---
    _case("spring-no-stiffness", _edit('stiffness = "40 kN/m"\n', ""), "spring[0].stiffness",
          "a positive stiffness"),
    _case("spring-zero-stiffness", _edit('"40 kN/m"', '"0 N/m"'), "spring[0].stiffness",
          "a positive stiffness"),
    _case("spring-stiffness-in-kN", _edit('"40 kN/m"', '"40 kN"'), "spring[0].stiffness",
          "a stiffness"),
    _case("rotational-stiffness-wrong",
          _edit('stiffness = "40 kN/m"', 'rotational_stiffness = "2 kN/rad"'),
          "spring[0].rotational_stiffness", "a rotational stiffness"),
    _case("spring-beyond-end", _edit('at = "1.5 m"', 'at = "3 m"'), "spring[0].at",
          "from 0 m to 2 m"),
    _case("spring-near-miss-key", _edit('stiffness = "40 kN/m"', 'stifness = "40 kN/m"'),
          "spring[0].stifness", "did you mean 'stiffness'?"),
    # --- check ---
    _case("modes-zero", _edit("modes = 3", "modes = 0"), "check.modes", "from 1 to 50"),
    _case("modes-51", _edit("modes = 3", "modes = 51"), "check.modes", "from 1 to 50"),
    _case("modes-string", _edit("modes = 3", 'modes = "five"'), "check.modes", "a whole number"),
    _case("modes-float", _edit("modes = 3", "modes = 2.5"), "check.modes", "a whole number"),
    _case("modes-boolean", _edit("modes = 3", "modes = true"), "check.modes", "a whole number"),
    _case("check-near-miss-key", _edit("modes = 3", "mode = 3"), "check.mode",
          "did you mean 'modes'?"),
    _case("check-number", _top("check = 5", check=""), "check", "a table"),
    # --- format and top level ---
    _case("format-missing", _edit("format = 1\n", ""), "format", "format = 1"),
    _case("format-future", _edit("format = 1", "format = 2"), "format", "newer version"),
    _case("format-string", _edit("format = 1", 'format = "1"'), "format", "the whole number 1"),
    _case("format-float", _edit("format = 1", "format = 1.0"), "format", "the whole number 1"),
    _case("format-boolean", _edit("format = 1", "format = true"), "format",
          "the whole number 1"),
    _case("format-zero", _edit("format = 1", "format = 0"), "format"),
    _case("format-negative", _edit("format = 1", "format = -1"), "format"),
    _case("top-near-miss-key", _edit("title =", "titel ="), "titel", "did you mean 'title'?"),
    _case("table-near-miss", _edit("[supports]", "[supprots]"), "supprots",
          "did you mean 'supports'?"),
    _case("top-unknown-key", _edit("title =", "colour = 3\ntitle ="), "colour", "unknown key"),
    _case("title-table", _edit('title = "Base worksheet"', 'title = { text = "x" }'), "title",
          "a text title"),
    _case("notes-number", _edit('title = "Base worksheet"', "notes = 5"), "notes", "text notes"),
    # --- TOML text given to loads ---
    _case("toml-missing-value", _length(""), "file", "line 5"),
    _case("toml-unterminated-string", _length('"2 m'), "file", "line 5"),
    _case("toml-bad-header", _edit("[check]", "[check"), "file", "valid TOML"),
    _case("toml-duplicate-key", _edit("modes = 3", "modes = 3\nmodes = 4"), "file",
          "already exists"),
    _case("toml-duplicate-table", _edit("[check]", "[member]"), "file", "valid TOML"),
    _case("empty-text", "", "file", "empty"),
    _case("whitespace-text", " \n\t\n  ", "file", "empty"),
]  # fmt: skip


def test_bad_corpus_is_large_and_distinct() -> None:
    texts = [p.values[0] for p in _BAD]
    assert len(texts) >= 45
    assert len(set(texts)) == len(texts)


@pytest.mark.parametrize(("text", "key", "fragment"), _BAD)
def test_bad_input_names_the_key(text: str, key: str, fragment: str | None) -> None:
    err = _error(text)
    _assert_well_formed(err, key)
    if fragment is not None:
        assert fragment in err.message, err.message


def test_future_format_asks_for_an_update() -> None:
    err = _error(_edit("format = 1", "format = 2"))
    assert "newer version" in err.message
    assert "update beamtone" in err.message


def test_malformed_toml_gives_line_and_column() -> None:
    err = _error(_edit('length = "2 m"', "length = "))
    assert err.key == "file"
    assert re.search(r"line \d+, column \d+", err.message), err.message


def test_near_miss_hint_is_in_the_hint_field() -> None:
    err = _error(_edit('length = "2 m"', 'lenght = "2 m"'))
    assert err.hint == "did you mean 'length'?"
    assert err.value == "lenght"
    assert "length" in err.expected


def _write(tmp_path: Path, name: str, raw: bytes) -> Path:
    path = tmp_path / name
    path.write_bytes(raw)
    return path


_FILE_CASES = [
    pytest.param(b"", "empty", id="empty-file"),
    pytest.param(b"  \n\n\t \r\n", "empty", id="whitespace-only-file"),
    pytest.param(b"\xef\xbb\xbf\n", "empty", id="bom-only-file"),
    pytest.param(_BASE.encode() + b"\x00\x01\x02", "binary data", id="nul-bytes"),
    pytest.param(b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR", "binary data", id="png-header"),
    pytest.param(_BASE.encode().replace(b"Base", b"B\xe4se"), "UTF-8", id="latin-1-byte"),
    pytest.param(b"\xff\xfe" + "format = 1".encode("utf-16-le"), "binary data", id="utf-16"),
    pytest.param(b"format = 1\n\xc3\x28 = 2\n", "UTF-8", id="invalid-utf-8"),
    pytest.param(_edit("[check]", "[check").encode(), "line", id="malformed-toml"),
    pytest.param(b"format = 1\n[member\n", "column", id="malformed-header"),
    pytest.param(b"#" * (MAX_BYTES + 1), "kB", id="too-large"),
]


@pytest.mark.parametrize(("raw", "fragment"), _FILE_CASES)
def test_bad_files(tmp_path: Path, raw: bytes, fragment: str) -> None:
    path = _write(tmp_path, "sheet.toml", raw)
    with pytest.raises(InputError) as info:
        load(path)
    _assert_well_formed(info.value, "file")
    assert fragment in info.value.message
    assert path.read_bytes() == raw


def test_malformed_file_names_line_and_column(tmp_path: Path) -> None:
    path = _write(tmp_path, "sheet.toml", b'format = 1\ntitle = "x"\n[member\n')
    with pytest.raises(InputError) as info:
        load(path)
    assert info.value.key == "file"
    assert "line 3" in info.value.message
    assert re.search(r"column \d+", info.value.message)
    assert info.value.value == str(path)


def test_missing_file_and_folder(tmp_path: Path) -> None:
    with pytest.raises(InputError) as info:
        load(tmp_path / "nowhere.toml")
    _assert_well_formed(info.value, "file")
    assert "an existing worksheet file" in info.value.message
    with pytest.raises(InputError) as info:
        load(tmp_path)
    _assert_well_formed(info.value, "file")
    assert "not a folder" in info.value.message


def test_oversized_text() -> None:
    err = _error(_BASE + "#" * MAX_BYTES)
    _assert_well_formed(err, "file")


# ---------------------------------------------------------------------------------------------
# Regressions: inputs that once escaped the loader or hung it
# ---------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "length",
    ["2 m(", "2 m)", "2 m (", "2 m*", "2 m/", "2 m^", "2 m^-", "2 m**", "2 m-", "2 m ()",
     "2 km^9^9/m^9^9*m", "2 Ym^9*Ym^9/m^9/m^9*m"],
)  # fmt: skip
def test_malformed_unit_text_is_an_input_error(length: str) -> None:
    err = _error(_edit('"2 m"', f'"{length}"'))
    _assert_well_formed(err, "member.length")


def test_chained_powers_do_not_hang() -> None:
    code = (
        "from beamtone.calc.errors import InputError\n"
        "from beamtone.calc.worksheet import loads\n"
        "import sys\n"
        "try:\n"
        "    loads(sys.stdin.read())\n"
        "except InputError as exc:\n"
        "    print(exc.key)\n"
    )
    proc = subprocess.run(
        [sys.executable, "-c", code],
        input=_edit('"2 m"', '"2 m^9^9^9"'),
        capture_output=True,
        text=True,
        cwd=ROOT,
        env={**os.environ, "PYTHONPATH": str(ROOT)},
        # A hang never ends: the bound only has to outlast the child's imports
        # on a loaded machine (about 4 s seen under a load of 14 on 2 cores).
        timeout=30,
    )
    assert proc.stdout.strip() == "member.length"


@pytest.mark.parametrize(
    ("text", "key"),
    [
        pytest.param(_edit('length = "2 m"', '"len\\ngth" = "2 m"'), "member.len\ngth", id="key"),
        pytest.param(_edit('left = "pinned"', 'left = "pin\\rned"'), "supports.left", id="value"),
    ],
)
def test_control_characters_keep_the_message_on_one_line(text: str, key: str) -> None:
    err = _error(text)
    assert err.key == key
    assert len(err.message.splitlines()) == 1, repr(err.message)


# ---------------------------------------------------------------------------------------------
# Fuzzing: nothing but InputError may escape the loader
# ---------------------------------------------------------------------------------------------

# The known bugs above are kept out of the fuzzing, so that it looks for new ones: a unit text
# that pint itself cannot parse without TokenError or AssertionError, or whose conversion factor
# overflows, or that chains powers (which hangs; it is not tried).
_SPLIT = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,3})?\s*(.*?)\s*$")
_CHAINED_POWER = re.compile(r"(\^|\*\*)[\s(]*[+-]?[\d.]+[\s)]*(\^|\*\*)")


def _pint_crashes(unit: str) -> bool:
    if _CHAINED_POWER.search(unit):
        return True
    from beamtone.calc.units import registry

    try:
        (1.0 * registry().parse_units(unit)).to_base_units()
    except (tokenize.TokenError, AssertionError, OverflowError):
        return True
    except Exception:  # noqa: BLE001 - any other outcome is for the loader to handle
        return False
    return False


def _known_bug(text: str) -> bool:
    strings = re.findall(r'"([^"\n]*)"', text) + re.findall(r"'([^'\n]*)'", text) + [text]
    return any((m := _SPLIT.match(s)) is not None and _pint_crashes(m.group(1)) for s in strings)


_KEYS = [
    "format", "title", "notes", "member", "supports", "mass", "spring", "check", "length",
    "material", "section", "added_mass", "axial_force", "segment", "youngs_modulus", "density",
    "poisson_ratio", "name", "shape", "width", "depth", "diameter", "outside_diameter", "wall",
    "flange", "web", "area", "second_moment", "left", "right", "inner", "at", "kind",
    "rotary_inertia", "stiffness", "rotational_stiffness", "modes", "estimate", "shapes",
    "reference",
]  # fmt: skip
_WORDS = [
    "steel", "stel", "aluminium", "round", "round-tube", "rectangle", "box", "i-beam",
    "properties", "clamped", "pinned", "guided", "free", "spring", "",
]  # fmt: skip
_UNITS = [
    "m", "mm", "in", "ft", "kg", "lb", "lbf", "N", "kN", "Pa", "GPa", "psi", "ksi", "kg/m^3",
    "lb/in^3", "lbf/in^3", "tonne", "N/mm^2", "mm^2", "mm^4", "kg/m", "kN/m", "kN*m/rad",
    "kg*m^2", "Hz", "s", "", "m^2", "1/m", "furlong",
]  # fmt: skip
_number_text = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-(10**6), 10**6).map(str),
    st.sampled_from(["0", "-0", "1e999", "1e-400", "nan", "inf", ".5", "5.", "1e3", "+2"]),
)
_unit_text = st.one_of(
    st.sampled_from(_UNITS),
    st.text(alphabet="mkgsNinftlb^*/()0123456789 .-_", max_size=10),
)
_quantity = st.builds(
    lambda n, sep, u: f"{n}{sep}{u}", _number_text, st.sampled_from([" ", "", "  "]), _unit_text
).filter(lambda s: not _known_bug(s))
_scalar = st.one_of(
    _quantity,
    st.sampled_from(_WORDS),
    st.text(max_size=12).filter(lambda s: not _known_bug(s)),
    st.integers(-(2**63), 2**63 - 1),
    st.floats(allow_nan=True, allow_infinity=True),
    st.booleans(),
)
_key = st.one_of(st.sampled_from(_KEYS), st.text(min_size=1, max_size=8))
_value = st.recursive(
    _scalar,
    lambda inner: st.one_of(st.lists(inner, max_size=3), st.dictionaries(_key, inner, max_size=4)),
    max_leaves=12,
)


def _toml_or_none(data: dict) -> str | None:
    try:
        return tomlkit.dumps(data)
    except Exception:  # noqa: BLE001 - a structure tomlkit cannot write is simply skipped
        return None


def _only_input_error(text: str) -> None:
    try:
        sheet = loads(text)
    except InputError as err:
        assert isinstance(err.key, str) and err.key
        # control characters in a key are shown escaped, so the message stays one line
        shown = "".join(c if c.isprintable() else repr(c)[1:-1] for c in err.key)
        assert err.message.startswith(f"{shown}: ")
        assert isinstance(err.expected, str) and err.expected
        return
    assert isinstance(sheet, Worksheet)


_FUZZ = settings(
    max_examples=FUZZ_EXAMPLES(200),
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much],
)


@_FUZZ
@given(st.text(max_size=300))
def test_random_text_raises_only_input_error(text: str) -> None:
    if _known_bug(text):
        return
    _only_input_error(text)


@_FUZZ
@given(st.dictionaries(_key, _value, max_size=6), st.booleans())
def test_random_toml_structures_raise_only_input_error(data: dict, with_format: bool) -> None:
    if with_format:
        data = {"format": 1, **data}
    text = _toml_or_none(data)
    if text is None or _known_bug(text):
        return
    _only_input_error(text)


_SCHEMA_MEMBER = st.fixed_dictionaries(
    {},
    optional={
        "length": _scalar,
        "material": st.one_of(st.sampled_from(_WORDS), st.dictionaries(
            st.sampled_from(["youngs_modulus", "density", "poisson_ratio", "name"]), _scalar)),
        "section": st.dictionaries(
            st.sampled_from(["shape", "width", "depth", "diameter", "outside_diameter", "wall",
                             "flange", "web", "area", "second_moment", "colour"]), _scalar),
        "added_mass": _quantity,
        "axial_force": _quantity,
    },
)  # fmt: skip
_SCHEMA_POINT = st.dictionaries(
    st.sampled_from(["at", "mass", "rotary_inertia", "stiffness", "rotational_stiffness"]),
    _quantity,
    max_size=4,
)


@_FUZZ
@given(
    member=_SCHEMA_MEMBER,
    left=st.sampled_from(_WORDS),
    right=st.sampled_from(_WORDS),
    inner=st.lists(st.fixed_dictionaries({"at": _quantity, "kind": st.sampled_from(_WORDS)}),
                   max_size=3),
    mass=st.lists(_SCHEMA_POINT, max_size=2),
    spring=st.lists(_SCHEMA_POINT, max_size=2),
    modes=st.one_of(st.integers(-5, 60), _scalar),
)  # fmt: skip
def test_random_worksheets_of_the_right_shape_raise_only_input_error(
    member: dict, left: str, right: str, inner: list, mass: list, spring: list, modes: object
) -> None:
    data = {
        "format": 1,
        "member": member,
        "supports": {"left": left, "right": right, "inner": inner},
        "mass": mass,
        "spring": spring,
        "check": {"modes": modes},
    }
    text = _toml_or_none(data)
    if text is None or _known_bug(text):
        return
    _only_input_error(text)


@_FUZZ
@given(
    st.integers(0, len(_BASE) - 1),
    st.integers(0, 8),
    st.text(alphabet='"=[]{},.#\n \\abm0123456789kgin^*/', max_size=6),
)
def test_edited_base_worksheet_raises_only_input_error(start: int, cut: int, insert: str) -> None:
    text = _BASE[:start] + insert + _BASE[start + cut :]
    if _known_bug(text):
        return
    _only_input_error(text)
