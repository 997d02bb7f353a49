"""Positions written from the right end: read as the same number as from the left end."""

from __future__ import annotations

import pytest

from beamtone.calc.analysis import analyse
from beamtone.calc.errors import InputError
from beamtone.calc.worksheet import loads

SHEET = """\
format = 1
[member]
length = "{length}"
material = {{ youngs_modulus = "200 GPa", density = "7850 kg/m^3" }}
section = {{ shape = "rectangle", width = "40 mm", depth = "8 mm" }}
[supports]
left = "clamped"
right = "free"
inner = [{{ at = "{inner}", kind = "pinned" }}]
[[mass]]
at = "{mass}"
mass = "1 kg"
[[spring]]
at = "{spring}"
stiffness = "1 kN/m"
"""


def sheet(length: str, mass: str, spring: str, inner: str):  # noqa: ANN201
    return loads(SHEET.format(length=length, mass=mass, spring=spring, inner=inner), "<test>")


@pytest.mark.parametrize("length", ["1 m", "1.37 m", "53 in"])
def test_from_the_right_end_is_the_length_less_the_distance(length: str) -> None:
    relative = sheet(length, "right end", "200 mm from the right end", "25 cm from right")
    L = relative.member.length
    assert relative.member.masses[0].at == L
    assert relative.member.springs[0].at == pytest.approx(L - 0.2, abs=1e-15)
    assert relative.member.inner_supports[0].at == pytest.approx(L - 0.25, abs=1e-15)
    absolute = sheet(length, f"{L!r} m", f"{L - 0.2!r} m", f"{L - 0.25!r} m")
    assert analyse(relative).modes.frequencies_hz == pytest.approx(
        analyse(absolute).modes.frequencies_hz, rel=1e-12
    )


def test_a_tip_mass_follows_the_length() -> None:
    short, long = (
        sheet("1 m", "right end", "0.5 m", "0.3 m"),
        sheet("2 m", "right end", "0.5 m", "0.3 m"),
    )
    assert short.member.masses[0].at == 1.0 and long.member.masses[0].at == 2.0


@pytest.mark.parametrize(
    ("text", "hint"),
    [("-3 mm from the right end", None), ("3 kg from right", "mass"), ("from right", None)],
)
def test_bad_distances_are_named(text: str, hint: str | None) -> None:
    with pytest.raises(InputError) as caught:
        sheet("1 m", text, "0.5 m", "0.3 m")
    assert caught.value.key == "mass[0].at"
    assert "from the right end" in caught.value.message
    if hint:
        assert hint in caught.value.message


def test_where_no_length_is_known_it_is_refused() -> None:
    from beamtone.calc import schema

    with pytest.raises(InputError, match="no member length"):
        schema.entry("mass[0].at").parse("right end", "mass[0].at")
