"""The hardening corpus shared by the files beside it: a good worksheet, bad variants of it
each with the key its message must name, and random members for the property tests.

No reference values here: the worksheets are scenarios of our own (demo data).
"""

from __future__ import annotations

from hypothesis import HealthCheck, settings
from hypothesis import strategies as st

from beamtone.calc import handbook
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section

__all__ = ["BAD", "GOOD", "PROPERTY", "STEEL", "random_member"]

STEEL = LIBRARY["steel"]

GOOD = """\
format = 1
title = "hardening base"

[member]
length = "1.2 m"
material = "steel"
section = { shape = "round-tube", outside_diameter = "48 mm", wall = "3 mm" }

[supports]
left = "clamped"
right = "free"

[[mass]]
at = "1.2 m"
mass = "2.5 kg"
"""

# (name, worksheet text, key the message must name)
BAD: list[tuple[str, str, str]] = [
    ("wrong unit", GOOD.replace('"1.2 m"\nmaterial', '"1.2 kg"\nmaterial'), "member.length"),
    ("negative", GOOD.replace('wall = "3 mm"', 'wall = "-3 mm"'), "member.section.wall"),
    ("zero", GOOD.replace('mass = "2.5 kg"', 'mass = "0 kg"'), "mass[0].mass"),
    ("nan", GOOD.replace('"48 mm"', '"nan mm"'), "member.section.outside_diameter"),
    ("inf", GOOD.replace('"48 mm"', '"inf mm"'), "member.section.outside_diameter"),
    ("bare number", GOOD.replace('"48 mm"', "48"), "member.section.outside_diameter"),
    ("table for string", GOOD.replace('left = "clamped"', "left = { a = 1 }"), "supports.left"),
    ("unknown key", GOOD.replace("[supports]", "[supports]\nmiddle = 1"), "supports.middle"),
    ("unknown support", GOOD.replace('"clamped"', '"welded"'), "supports.left"),
    ("unknown material", GOOD.replace('"steel"', '"unobtainium"'), "member.material"),
    ("unknown shape", GOOD.replace('"round-tube"', '"hexagon"'), "member.section.shape"),
    ("beyond the end", GOOD.replace('at = "1.2 m"', 'at = "1.3 m"'), "mass[0].at"),
    ("thick wall", GOOD.replace('"3 mm"', '"30 mm"'), "member.section.wall"),
    ("future format", GOOD.replace("format = 1", "format = 9"), "format"),
    ("no format", GOOD.replace("format = 1\n", ""), "format"),
    ("malformed", GOOD.replace("[supports]", "[supports"), "file"),
    ("weight density", GOOD.replace('"steel"', '{ youngs_modulus = "200 GPa", '
                                     'density = "0.284 lbf/in^3" }'), "member.material.density"),
    ("inner outside", GOOD.replace('right = "free"', 'right = "free"\ninner = [ { at = "5 m", '
                                   'kind = "pinned" } ]'), "supports.inner[0].at"),
    ("hostile shape", GOOD + '\n[estimate]\nshape = "__import__(\'os\')"\n', "estimate.shape"),
    ("buckling", GOOD.replace("[supports]", "[supports]").replace(
        'section = { shape', 'axial_force = "-1e9 N"\nsection = { shape'), "member.axial_force"),
]  # fmt: skip


def random_member() -> st.SearchStrategy[Member]:
    ends = st.sampled_from(handbook.END_CONDITIONS)
    lengths = st.lists(st.floats(0.2, 0.8), min_size=1, max_size=3)
    depths = st.lists(st.floats(0.006, 0.03), min_size=3, max_size=3)
    masses = st.lists(st.tuples(st.floats(0, 1), st.floats(0.05, 3.0)), max_size=3)
    springs = st.lists(st.tuples(st.floats(0, 1), st.floats(1e2, 1e6)), max_size=2)

    def build(left, right, ls, ds, ms, ks):  # noqa: ANN001, ANN202
        segs = tuple(
            Segment(a, STEEL, build_section("rectangle", {"width": 0.03, "depth": d}))
            for a, d in zip(ls, ds, strict=False)
        )
        total = sum(ls)
        return Member(
            segs, left, right,
            tuple(PointMass(x * total, m) for x, m in ms),
            tuple(Spring(x * total, k) for x, k in ks),
        )  # fmt: skip

    return st.builds(build, ends, ends, lengths, depths, masses, springs)


PROPERTY = settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
