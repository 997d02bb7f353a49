"""The one worksheet schema: every reader agrees with it, and varying a value on the model
gives the member the loader makes of the rewritten text."""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from beamtone.calc import schema, sizing
from beamtone.calc.errors import InputError
from beamtone.calc.sections import SHAPES
from beamtone.calc.worksheet import load, loads

EXAMPLES = sorted((Path(__file__).resolve().parents[2] / "worksheets").glob("*.toml"))

CANTILEVER = """\
format = 1
[member]
length = "800 mm"
material = { youngs_modulus = "200 GPa", density = "7850 kg/m^3", poisson_ratio = 0.3 }
section = { shape = "round-tube", outside_diameter = "40 mm", wall = "3 mm" }
added_mass = "0.5 kg/m"
axial_force = "-2 kN"
[supports]
left = "clamped"
right = "free"
inner = [ { at = "300 mm", kind = "pinned" } ]
[[mass]]
at = "800 mm"
mass = "1.5 kg"
rotary_inertia = "0.002 kg*m^2"
[[spring]]
at = "500 mm"
stiffness = "20 kN/m"
rotational_stiffness = "1 kN*m/rad"
[estimate]
reference = "800 mm"
"""


def _keys(node: object, prefix: str = "") -> list[str]:
    out = []
    if isinstance(node, dict):
        for name, value in node.items():
            key = f"{prefix}.{name}" if prefix else name
            out.append(key)
            if name != "record":
                out += _keys(value, key)
    elif isinstance(node, list):
        for i, item in enumerate(node):
            if isinstance(item, dict):
                out += _keys(item, f"{prefix}[{i}]")
    return out


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.stem)
def test_every_key_of_the_examples_is_in_the_schema(path: Path) -> None:
    sheet = load(path)
    for key in _keys(sheet.data):
        assert schema.find(key) is not None, key


def test_the_loader_refuses_what_the_schema_does_not_list() -> None:
    for table in ("", "member", "member.segment[]", "member.material", "supports", "mass[]"):
        assert "typo_key" not in schema.children(table)
    with pytest.raises(InputError) as info:
        loads(CANTILEVER.replace('added_mass = "0.5', 'added_mas = "0.5'))
    assert info.value.key == "member.added_mas"
    assert info.value.hint == "did you mean 'added_mass'?"
    assert info.value.expected == "one of the keys " + ", ".join(schema.children("member"))


def test_section_shapes_are_the_schemas() -> None:
    assert list(SHAPES) == list(schema.SECTION_SHAPES)
    for shape, (required, optional) in schema.SECTION_SHAPES.items():
        assert tuple(n for n, _ in SHAPES[shape].required) == required
        assert tuple(n for n, _ in SHAPES[shape].optional) == optional
        for name in (*required, *optional):
            assert schema.entry(f"member.section.{name}").dimension == schema.section_dimension(
                name
            )


QUANTITY_KEYS = schema.quantity_keys(loads(CANTILEVER).data, variable_only=False)


def test_the_cantilever_has_a_quantity_of_every_table() -> None:
    assert QUANTITY_KEYS == [
        "member.length", "member.material.youngs_modulus", "member.material.density",
        "member.section.outside_diameter", "member.section.wall", "member.added_mass",
        "member.axial_force", "supports.inner[0].at", "mass[0].at", "mass[0].mass",
        "mass[0].rotary_inertia", "spring[0].at", "spring[0].stiffness",
        "spring[0].rotational_stiffness", "estimate.reference",
    ]  # fmt: skip
    assert "estimate.reference" not in sizing.quantity_keys(loads(CANTILEVER).data)


@pytest.mark.parametrize("key", QUANTITY_KEYS)
def test_the_loader_checks_each_quantity_with_the_schemas_dimension(key: str) -> None:
    """A value of the wrong dimension at any quantity key is refused, named by that key."""
    import tomlkit

    doc = tomlkit.parse(CANTILEVER)
    node = doc
    parts = key.replace("[0]", ".0").split(".")
    for part in parts[:-1]:
        node = node[int(part)] if part.isdigit() else node[part]
    wrong = "3 s" if schema.entry(key).dimension.si_unit != "s" else "3 m"
    node[parts[-1]] = wrong
    with pytest.raises(InputError) as info:
        loads(tomlkit.dumps(doc))
    assert info.value.key == key
    assert schema.entry(key).dimension.name in info.value.expected


@pytest.mark.parametrize("key", QUANTITY_KEYS)
@pytest.mark.parametrize("si", [0.0, -2.0, 2.0, 1e-30, 1e30, math.inf])
def test_check_on_si_agrees_with_parsing_text(key: str, si: float) -> None:
    """Sizing checks an SI value exactly as the loader checks the same value written."""
    e = schema.entry(key)
    text = f"{si!r} {e.dimension.si_unit}"
    try:
        e.parse(text, key)
    except InputError as exc:
        with pytest.raises(InputError) as info:
            e.check(si, key, text)
        assert (info.value.key, info.value.expected) == (exc.key, exc.expected)
    else:
        assert e.check(si, key, text) == si


def _fields(member: object) -> list[float]:
    """Every SI number of a member, flattened, for comparison."""
    out: list[float] = [member.axial_force]
    for seg in member.segments:
        out += [seg.length, seg.added_mass, seg.material.youngs_modulus, seg.material.density,
                seg.section.area, seg.section.second_moment]  # fmt: skip
    for m in member.masses:
        out += [m.at, m.mass, m.rotary_inertia]
    for k in member.springs:
        out += [k.at, k.stiffness, k.rotational_stiffness]
    out += [s.at for s in member.inner_supports]
    return out


@pytest.mark.parametrize(
    ("path", "key"),
    [(CANTILEVER, k) for k in sizing.quantity_keys(loads(CANTILEVER).data)]
    + [(p, k) for p in EXAMPLES for k in sizing.quantity_keys(load(p).data)],
    ids=str,
)
def test_varied_model_equals_the_loaded_rewritten_text(path: str | Path, key: str) -> None:
    """dataclasses.replace on the model gives the member the loader reads from the text that
    --apply would write (to the 10 digits written), for every variable key of every example."""
    text = path.read_text(encoding="utf-8") if isinstance(path, Path) else path
    sheet = loads(text)
    var = sizing.variation(sheet, key)
    assert _fields(var.member(var.value)) == pytest.approx(_fields(sheet.member), rel=1e-12)
    new = var.value * 1.03 if var.value else 0.01
    try:
        varied = var.member(new)
    except InputError as exc:  # then the text must be refused too
        assert exc.key == "--between"
        with pytest.raises(InputError):
            var.rewrite(text, new)
        return
    reread = loads(var.rewrite(text, new)).member
    assert _fields(varied) == pytest.approx(_fields(reread), rel=1e-9, abs=1e-12)


def test_a_varied_value_the_member_cannot_take_names_the_key() -> None:
    sheet = loads(CANTILEVER)
    var = sizing.variation(sheet, "member.section.wall")
    with pytest.raises(InputError) as info:
        var.member(0.025)  # thicker than half the 40 mm tube
    assert info.value.key == "--between"
    assert "member.section.wall" in info.value.expected
    with pytest.raises(InputError) as info:
        sizing.variation(sheet, "mass[0].mass").member(-1.0)
    assert "a zero or positive mass" in info.value.expected


def test_length_change_carries_the_tip_mass() -> None:
    sheet = loads(CANTILEVER)
    member = sizing.variation(sheet, "member.length").member(1.0)
    assert member.length == 1.0 and member.masses[0].at == 1.0
    assert member.springs[0].at == 0.5  # not at the end: stays


def test_input_rows_give_the_loaded_si_values() -> None:
    sheet = loads(CANTILEVER)
    rows = {r.key: r for r in schema.input_rows(sheet.data)}
    assert rows["member.length"].si == sheet.member.length
    assert rows["member.length"].written == "800 mm" and rows["member.length"].unit == "m"
    assert rows["member.axial_force"].si == sheet.member.axial_force
    assert rows["mass[0].rotary_inertia"].label == "rot. inertia"
    assert rows["supports.left"].written == "clamped" and rows["supports.left"].si is None
    assert rows["member.material.poisson_ratio"].written == "0.3"
    assert rows["spring[0].rotational_stiffness"].unit == "N*m/rad"
    assert rows["spring[0].rotational_stiffness"].si == 1e3


@pytest.mark.parametrize(
    ("options", "key"),
    [
        ({"target": "fast"}, "--target"),
        ({"excitation": "20 Hz", "harmonics": "one"}, "--harmonics"),
        ({"excitation": "20 Hz", "margin": "200%"}, "--margin"),
        ({"target": "20 Hz", "mode": "first"}, "--mode"),
        ({"target": "20 Hz", "mode": 51}, "--mode"),
        ({}, "--target"),
    ],
)
def test_sizing_request_is_checked_in_one_place(options: dict[str, object], key: str) -> None:
    sheet = loads(CANTILEVER)
    with pytest.raises(InputError) as info:
        sizing.read_request(sheet, "member.length", "0.5 m", "1 m", **options)
    assert info.value.key == key
    names = {"target": "frequency", "excitation": "frequency", "mode": "mode",
             "harmonics": "orders", "margin": "margin"}  # fmt: skip
    with pytest.raises(InputError) as info:
        sizing.read_request(sheet, "member.length", "0.5 m", "1 m", **options, names=names)
    assert info.value.key == names[key.lstrip("-")]
    with pytest.raises(InputError) as info:
        sizing.read_request(sheet, "member.length", "0.5 kg", "1 m", target="5 Hz")
    assert info.value.key == "--between"


def test_sizing_request_in_si() -> None:
    request = sizing.read_request(
        loads(CANTILEVER), "member.length", "500 mm", "1 m", excitation="1200 rpm",
        harmonics="2,1", margin="15%",
    )  # fmt: skip
    assert (request.low, request.high, request.excitation_hz) == (0.5, 1.0, 20.0)
    assert request.harmonics == (1, 2) and request.margin == pytest.approx(0.15)


def test_set_value_is_the_one_way_to_vary_the_model() -> None:
    sheet = loads(CANTILEVER)
    member = sizing.set_value(sheet, sheet.member, "member.material.density", 2700.0)
    assert member.segments[0].material.density == 2700.0
    assert (
        member.segments[0].material.youngs_modulus
        == sheet.member.segments[0].material.youngs_modulus
    )
    for key in ("estimate.reference", "supports.left", "member.section.shape"):
        with pytest.raises(InputError) as info:
            sizing.set_value(sheet, sheet.member, key, 1.0)
        assert info.value.key == key
    with pytest.raises(InputError) as info:
        sizing.set_value(sheet, sheet.member, "member.section.wall", -0.001)
    assert info.value.key == "member.section.wall"


def test_a_frequency_entry_reads_cycles_per_second() -> None:
    """1480 rpm is 1480/60 Hz, not 1480 * 2 pi / 60 (pint reads rpm as an angular velocity)."""
    from beamtone.calc.units import FREQUENCY

    e = schema.Entry("speed", schema.QUANTITY, "speed", "a running speed", FREQUENCY)
    assert e.parse("1480 rpm", "speed") == pytest.approx(1480 / 60, rel=1e-12)
    assert e.parse("120 Hz", "speed") == 120.0
