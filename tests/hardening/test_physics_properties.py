"""Physics as properties: unit invariance (SI, US customary, mm-N-tonne), scale invariance
through the groups, masses never raise and springs never lower the fundamental, order does not
matter, and the mesh converges from above.

Published values used: none; the checks are exact conversion factors (common practice) and
the invariances of the beam equation (common practice).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from hypothesis import assume, given
from hypothesis import strategies as st

from beamtone.calc import fe
from beamtone.calc.model import Member, PointMass, Spring
from beamtone.calc.worksheet import loads
from tests.hardening.corpus import GOOD, PROPERTY, random_member

US_GOOD = GOOD.replace('"1.2 m"\nmaterial', f'"{1.2 / 0.0254!r} in"\nmaterial')
MM_N_TONNE = """\
format = 1
[member]
length = "1200 mm"
material = { youngs_modulus = "200000 N/mm^2", density = "7.85e-9 tonne/mm^3" }
section = { shape = "round-tube", outside_diameter = "48 mm", wall = "3 mm" }
[supports]
left = "clamped"
right = "free"
[[mass]]
at = "1200 mm"
mass = "0.0025 tonne"
"""


def test_unit_invariance_si_us_and_mm_n_tonne() -> None:
    si = loads(GOOD.replace('"steel"', '{ youngs_modulus = "200 GPa", density = "7850 kg/m^3" }'))
    us = loads(US_GOOD.replace('"steel"', '{ youngs_modulus = "200 GPa", density = "7850 kg/m^3" }')
               .replace('"48 mm"', f'"{48 / 25.4!r} in"').replace('"3 mm"', f'"{3 / 25.4!r} in"')
               .replace('at = "1.2 m"', f'at = "{1.2 / 0.0254!r} in"')
               .replace('"2.5 kg"', f'"{2.5 / 0.45359237!r} lb"'))  # fmt: skip
    mm = loads(MM_N_TONNE)
    f = [fe.solve(s.member, 3).frequencies_hz for s in (si, us, mm)]
    assert f[1] == pytest.approx(f[0], rel=1e-9)
    assert f[2] == pytest.approx(f[0], rel=1e-9)


@PROPERTY
@given(random_member(), st.tuples(st.floats(0, 1), st.floats(0.01, 5.0)))
def test_adding_a_mass_never_raises_the_fundamental(member: Member, extra: tuple) -> None:
    x, m = extra
    base = fe.solve(member, 1).modes[0]
    heavier = replace(member, masses=(*member.masses, PointMass(x * member.length, m)))
    loaded = fe.solve(heavier, 1).modes[0]
    assert loaded.frequency_hz <= base.frequency_hz * (1 + base.estimated_error + 1e-9)


@PROPERTY
@given(random_member(), st.tuples(st.floats(0, 1), st.floats(1.0, 1e6)))
def test_adding_a_spring_never_lowers_the_fundamental(member: Member, extra: tuple) -> None:
    x, k = extra
    base = fe.solve(member, 2)
    stiffer = replace(member, springs=(*member.springs, Spring(x * member.length, k)))
    result = fe.solve(stiffer, 2)
    # a spring can free no rigid motion; it may hold one, which then appears as a mode
    assert result.rigid_body_modes <= base.rigid_body_modes
    assume(result.rigid_body_modes == base.rigid_body_modes)
    f0, f1 = base.modes[0], result.modes[0]
    assert f1.frequency_hz >= f0.frequency_hz * (1 - f0.estimated_error - 1e-9)


@PROPERTY
@given(random_member(), st.randoms(use_true_random=False))
def test_order_of_masses_and_springs_does_not_matter(member: Member, rnd) -> None:  # noqa: ANN001
    masses, springs = list(member.masses), list(member.springs)
    rnd.shuffle(masses)
    rnd.shuffle(springs)
    shuffled = replace(member, masses=tuple(masses), springs=tuple(springs))
    a, b = fe.solve(member, 3).frequencies_hz, fe.solve(shuffled, 3).frequencies_hz
    assert b == pytest.approx(a, rel=1e-12)


@PROPERTY
@given(random_member())
def test_frequencies_converge_from_above_as_the_mesh_is_refined(member: Member) -> None:
    coarse = fe.solve(member, 3, elements=20)
    fine = fe.solve(member, 3, elements=80)
    tol = np.array([m.estimated_error for m in fine.modes]) + 1e-12
    assert np.all(fine.frequencies_hz <= coarse.frequencies_hz * (1 + tol))


def _worksheet(L: float, D: float, t: float, M: float, system: str) -> str:
    """The same tube cantilever written in SI, US customary or mm-N-tonne."""
    if system == "si":
        q = (f"{L!r} m", f"{D!r} m", f"{t!r} m", f"{M!r} kg", '"200 GPa"', '"7850 kg/m^3"')
    elif system == "us":
        q = (f"{L / 0.0254!r} in", f"{D / 0.0254!r} in", f"{t / 0.0254!r} in",
             f"{M / 0.45359237!r} lb", f'"{200e9 / 6894.757293168361!r} psi"',
             f'"{7850 / 27679.904710203125!r} lb/in^3"')  # fmt: skip
    else:
        q = (f"{L * 1000!r} mm", f"{D * 1000!r} mm", f"{t * 1000!r} mm", f"{M / 1000!r} tonne",
             '"200000 N/mm^2"', '"7.85e-9 tonne/mm^3"')  # fmt: skip
    length, dia, wall, mass, E, rho = q
    return (
        f'format = 1\n[member]\nlength = "{length}"\nmaterial = {{ youngs_modulus = {E}, '
        f'density = {rho} }}\nsection = {{ shape = "round-tube", outside_diameter = "{dia}", '
        f'wall = "{wall}" }}\n[supports]\nleft = "clamped"\nright = "free"\n'
        f'[[mass]]\nat = "{length}"\nmass = "{mass}"\n'
    )


@PROPERTY
@given(st.floats(0.3, 3.0), st.floats(0.02, 0.1), st.floats(0.1, 0.4), st.floats(0.01, 10.0))
def test_unit_invariance_as_a_property(L: float, D: float, wall_ratio: float, M: float) -> None:
    """SI, US customary and mm-N-tonne give the same Hz (exact conversion factors)."""
    t = wall_ratio * D
    f = [fe.solve(loads(_worksheet(L, D, t, M, s)).member, 2).frequencies_hz
         for s in ("si", "us", "mm")]  # fmt: skip
    assert f[1] == pytest.approx(f[0], rel=1e-9)
    assert f[2] == pytest.approx(f[0], rel=1e-9)


@PROPERTY
@given(random_member(), st.floats(0.1, 10.0))
def test_scale_invariance_through_the_groups(member: Member, s: float) -> None:
    """Every length times s at fixed groups: every frequency divided by s^2."""
    scaled = replace(
        member,
        segments=tuple(replace(g, length=g.length * s) for g in member.segments),
        masses=tuple(
            PointMass(p.at * s, p.mass * s, p.rotary_inertia * s**3) for p in member.masses
        ),  # fmt: skip
        springs=tuple(
            Spring(k.at * s, k.stiffness / s**3, k.rotational_stiffness / s) for k in member.springs
        ),  # fmt: skip
    )
    a = fe.solve(member, 3)
    b = fe.solve(scaled, 3)
    tol = max(m.estimated_error for m in a.modes) * 2 + 1e-9
    assert b.frequencies_hz == pytest.approx(a.frequencies_hz / s**2, rel=tol)
