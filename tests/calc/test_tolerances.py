"""Checks of :mod:`calc.tolerances`: the member at any value of a key path."""

from __future__ import annotations

import math
import pickle

import pytest

from beamtone.calc import worksheet
from beamtone.calc.errors import InputError
from beamtone.calc.tolerances import COMPLIANCE, Design, Tolerance, nominal_value, vary

_ROOT = __import__("pathlib").Path(__file__).resolve().parents[2]


def _design(name: str) -> Design:
    return Design.of(worksheet.load(_ROOT / "worksheets" / name))


def test_a_length_change_moves_the_end_attachments() -> None:
    d = _design("sensor-mast.toml")
    longer = vary(d, {"member.length": 1.5}).member
    assert longer.length == 1.5 and longer.masses[0].at == 1.5


def test_values_are_exact_and_the_design_is_unchanged() -> None:
    d = _design("stepped-spindle.toml")
    v = 0.1234567890123456
    out = vary(d, {"member.segment[1].section.diameter": v, "spring[0].stiffness": 1.5e8})
    assert out.member.segments[1].section.dimensions["diameter"] == v
    assert out.member.springs[0].stiffness == 1.5e8
    assert nominal_value(d, "member.segment[1].section.diameter") == 0.045
    # member.material applies to every segment that takes it from [member]
    soft = vary(d, {"member.material.youngs_modulus": 1e11}).member
    assert all(s.material.youngs_modulus == 1e11 for s in soft.segments)
    text = (_ROOT / "worksheets" / "stepped-spindle.toml").read_text()
    own = text.replace('length = "320 mm"', 'length = "320 mm"\nmaterial = "steel"', 1)
    only = Design.of(worksheet.loads(own))
    part = vary(only, {"member.material.youngs_modulus": 1e11}).member
    assert [s.material.youngs_modulus for s in part.segments] == [1e11, 200e9, 1e11]


def test_support_stiffness_keys() -> None:
    d = _design("sensor-mast.toml")
    assert nominal_value(d, "supports.left_rotational_stiffness") == math.inf
    soft = vary(d, {"supports.left_rotational_stiffness": 5e4})
    member = soft.solved_member()
    assert member.left == "pinned" and member.springs[-1].rotational_stiffness == 5e4
    t = Tolerance("supports.left_rotational_stiffness", 0.0, 0.0, 2e-5, COMPLIANCE)
    assert t.key_value(0.0) == math.inf and t.key_value(2e-5) == pytest.approx(5e4)
    pickle.loads(pickle.dumps(soft))  # designs travel to other processes


@pytest.mark.parametrize(
    ("key", "value"),
    [("member.length", -1.0), ("mass[0].at", 2.0), ("mass[3].mass", 1.0),
     ("supports.right_stiffness", 1e5),
     ("member.material.youngs_modulus", 0.0), ("nonsense", 1.0),
     ("member.section.wall", 0.03)],
)  # fmt: skip
def test_refusals_name_the_key(key: str, value: float) -> None:
    d = _design("sensor-mast.toml")
    with pytest.raises(InputError) as err:
        vary(d, {key: value}).solved_member()
    assert key.split(".")[0] in err.value.key


@pytest.mark.parametrize(
    "key", ["member.section.depth", "mass[1].mass", "member.segment[0].length", "nonsense",
            "supports.inner[0].stiffness", "member.material.colour"],
)  # fmt: skip
def test_keys_the_worksheet_does_not_have(key: str) -> None:
    with pytest.raises(InputError) as err:
        nominal_value(_design("sensor-mast.toml"), key)
    assert key.startswith(err.value.key) or key in err.value.key or err.value.value == key


def test_a_tolerance_must_contain_its_nominal() -> None:
    with pytest.raises(InputError) as err:
        Tolerance("member.length", 1.0, 1.1, 1.2, written="1.1 m to 1.2 m")
    assert err.value.key == "tolerances.member.length"


# --- the worksheet's [tolerances] and support stiffnesses ------------------------------------

_MAST = """format = 1
[member]
length = "1.2 m"
material = "steel"
section = { shape = "round-tube", outside_diameter = "48 mm", wall = "3 mm" }
[supports]
left = "clamped"
right = "free"
SUPPORT
[[mass]]
at = "1.2 m"
mass = "2.5 kg"
[tolerances]
TOLERANCES
"""


def _sheet(support: str = "", tolerances: str = "") -> worksheet.Worksheet:
    return worksheet.loads(_MAST.replace("SUPPORT", support).replace("TOLERANCES", tolerances))


def test_tolerance_syntax() -> None:
    sheet = _sheet(
        tolerances='"member.material.youngs_modulus" = "5 %"\n'
        '"member.section.wall" = "0.3 mm"\n'
        '"mass[0].mass" = ["2.3 kg", "2.8 kg"]\n'
        '"member.length" = ["-1 %", "+2 %"]\n'
    )
    got = {t.key: (t.low, t.high) for t in sheet.tolerances}
    assert got["member.material.youngs_modulus"] == pytest.approx((190e9, 210e9))
    assert got["member.section.wall"] == pytest.approx((0.0027, 0.0033))
    assert got["mass[0].mass"] == pytest.approx((2.3, 2.8))
    assert got["member.length"] == pytest.approx((1.188, 1.224))
    assert sheet.member == _sheet().member  # tolerances change no number


def test_support_stiffness_syntax() -> None:
    EI = _sheet().member.segments[0].bending_stiffness
    soft = _sheet(f'left_rotational_stiffness = "{10 * EI / 1.2} N*m/rad"')
    assert soft.member.left == "pinned" and soft.rigid_member is not None
    ranged = _sheet('left_rotational_stiffness = ["30 kN*m/rad", "rigid"]')
    assert ranged.member == _sheet().member  # rigid in the analysis: today's numbers
    (t,) = ranged.tolerances
    assert t.measure == COMPLIANCE and t.high == pytest.approx(1 / 30e3)
    assert Design.of(soft).solved_member() == soft.member


@pytest.mark.parametrize(
    ("support", "tolerances", "key"),
    [
        ("", '"member.colour" = "5 %"', "tolerances.member.colour"),
        ("", '"member.section.wall" = "5 kg"', "tolerances.member.section.wall"),
        ("", '"member.section.wall" = "150 %"', "tolerances.member.section.wall"),
        ("", '"member.section.wall" = "3 mm"', "tolerances.member.section.wall"),
        ("", '"mass[0].mass" = ["2.6 kg", "2.8 kg"]', "tolerances.mass[0].mass"),
        ("", '"mass[1].mass" = "5 %"', "tolerances.mass[1].mass"),
        ("", '"member.section.wall" = 5', "tolerances.member.section.wall"),
        ("", '"supports.left_rotational_stiffness" = "5 %"',
         "tolerances.supports.left_rotational_stiffness"),
        ('right_rotational_stiffness = "1 kN*m/rad"', "", "supports.right_rotational_stiffness"),
        ('left_stiffness = ["1 kN/m", "2 kN/m"]', "", "supports.left_stiffness"),
        ('left_stiffness = "-1 kN/m"', "", "supports.left_stiffness"),
        ('left_stiffness = "1 kg"', "", "supports.left_stiffness"),
        ("left_stifness = \"1 kN/m\"", "", "supports.left_stifness"),
    ],
)  # fmt: skip
def test_bad_entries_name_their_key(support: str, tolerances: str, key: str) -> None:
    with pytest.raises(InputError) as err:
        _sheet(support, tolerances)
    assert err.value.key == key, err.value.message
