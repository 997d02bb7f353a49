"""The exact reference of these tests (tests/calc/fe/exact.py) checked against published values.

- Uniform beams with the ten classical end pairs: R. D. Blevins, Formulas for Natural
  Frequency and Mode Shape, 1979, Table 8-1, as in ../shared/reference/.
- A pinned-pinned beam under tension: omega_n = (n pi / L)^2 sqrt(EI/m) sqrt(1 + P L^2 /
  (n^2 pi^2 EI)) (common practice; e.g. S. Timoshenko, D. H. Young and W. Weaver, Vibration
  Problems in Engineering, the beam with axial force).
"""

from __future__ import annotations

import csv
import math

import pytest

from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import Member, PointMass, Segment
from beamtone.calc.sections import build_section
from tests.calc.fe import exact
from tests.reference import reference_file

REFERENCE = reference_file("uniform-beam-frequency-parameters.csv")
BAR = build_section("rectangle", {"width": 0.04, "depth": 0.008})
STEEL = LIBRARY["steel"]


def _rows() -> list[dict[str, str]]:
    lines = [ln for ln in REFERENCE.read_text().splitlines() if not ln.startswith("#")]
    return list(csv.DictReader(lines))


def _scale(member: Member) -> float:
    seg = member.segments[0]
    return math.sqrt(seg.bending_stiffness / seg.mass_per_length) / (2 * math.pi * member.length**2)


@pytest.mark.parametrize("row", _rows(), ids=lambda r: f"{r['end_a']}-{r['end_b']}")
def test_reference_reproduces_the_published_table(row: dict[str, str]) -> None:
    """Every tabulated lambda (8 decimals, so lambda^2 to about 1e-8)."""
    member = Member((Segment(1.0, STEEL, BAR),), row["end_a"], row["end_b"])
    published = [float(row[f"lambda_{i}"]) ** 2 * _scale(member) for i in range(1, 6)]
    found = exact.frequencies(member, published[-1] * 1.01, 250)
    assert len(found) == 5
    assert found == pytest.approx(published, rel=2e-8)


def test_reference_splits_a_member_anywhere() -> None:
    """Stations that hold nothing (a zero mass, a segment end between equal segments) change
    nothing: the transfer over two pieces is the transfer over one."""
    whole = Member((Segment(1.0, STEEL, BAR),), "clamped", "free")
    split = Member(
        (Segment(0.37, STEEL, BAR), Segment(0.63, STEEL, BAR)),
        "clamped",
        "free",
        masses=(PointMass(0.81, 0.0),),
    )
    a = exact.frequencies(whole, 900.0, 150)
    b = exact.frequencies(split, 900.0, 150)
    assert a == pytest.approx(b, rel=1e-12)


@pytest.mark.parametrize("tension", [50.0, 5e3, 5e5])
def test_reference_with_tension_matches_the_closed_form(tension: float) -> None:
    member = Member((Segment(1.3, STEEL, BAR),), "pinned", "pinned", axial_force=tension)
    seg = member.segments[0]
    EI, m, L = seg.bending_stiffness, seg.mass_per_length, member.length
    closed = [
        (n * math.pi / L) ** 2
        * math.sqrt(EI / m)
        * math.sqrt(1 + tension * L**2 / (n**2 * math.pi**2 * EI))
        / (2 * math.pi)
        for n in (1, 2, 3)
    ]
    for f in closed:
        assert exact.root_near(member, f, 1e-3) == pytest.approx(f, rel=1e-12)
