"""Member groups, similitude and master curves against direct solves and the general engine."""

from __future__ import annotations

import math
from dataclasses import replace

import pytest

from beamtone.calc import fe, groups, similitude
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import InnerSupport, Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section

STEEL = LIBRARY["steel"]


def stepped() -> Member:
    thin = build_section("round", {"diameter": 0.03})
    thick = build_section("round", {"diameter": 0.045})
    return Member(
        (Segment(0.3, STEEL, thin), Segment(0.5, STEEL, thick, 0.4)),
        "pinned",
        "free",
        masses=(PointMass(0.8, 1.5, 2e-3),),
        springs=(Spring(0.6, 3e4, 150.0),),
        inner_supports=(InnerSupport(0.45, "pinned"),),
        axial_force=800.0,
    )


def scaled(member: Member, s: float) -> Member:
    """Every length times s, keeping every group (EI and m of each segment unchanged)."""
    segs = tuple(replace(seg, length=seg.length * s) for seg in member.segments)
    return replace(
        member,
        segments=segs,
        masses=tuple(
            PointMass(p.at * s, p.mass * s, p.rotary_inertia * s**3) for p in member.masses
        ),
        springs=tuple(
            Spring(k.at * s, k.stiffness / s**3, k.rotational_stiffness / s) for k in member.springs
        ),
        inner_supports=tuple(InnerSupport(i.at * s, i.kind) for i in member.inner_supports),
        axial_force=member.axial_force / s**2,
    )


def test_doubling_lengths_keeps_groups_and_scales_frequencies() -> None:
    """f ~ 1/L^2 at fixed groups (f = Omega/(2 pi L^2) sqrt(EI/m))."""
    a = stepped()
    b = scaled(a, 2.0)
    ga, gb = similitude.member_groups(a), similitude.member_groups(b)
    for x, y in zip(ga.groups, gb.groups, strict=True):
        assert y.value == pytest.approx(x.value, rel=1e-12)
    fa = fe.solve(a, 4).frequencies_hz
    fb = fe.solve(b, 4).frequencies_hz
    assert fb == pytest.approx(fa / 4.0, rel=1e-9)


def test_like_prediction_matches_direct_solve() -> None:
    a = stepped()
    b = scaled(a, 1.7)
    # change the material stiffness and density too: same groups, other repeating variables
    soft = replace(STEEL, youngs_modulus=70e9, density=2700.0)
    b = replace(b, segments=tuple(replace(s, material=soft) for s in b.segments))
    ratio_ei, ratio_m = 70e9 / STEEL.youngs_modulus, 2700.0 / STEEL.density
    # keep the groups: springs and masses and load scale with EI and m
    b = replace(
        b,
        masses=tuple(
            replace(p, mass=p.mass * ratio_m, rotary_inertia=p.rotary_inertia * ratio_m)
            for p in b.masses
        ),
        springs=tuple(
            replace(
                k,
                stiffness=k.stiffness * ratio_ei,
                rotational_stiffness=k.rotational_stiffness * ratio_ei,
            )
            for k in b.springs
        ),
        axial_force=b.axial_force * ratio_ei,
        segments=tuple(replace(s, added_mass=s.added_mass * ratio_m) for s in b.segments),
    )
    fa = fe.solve(a, 3).frequencies_hz
    sim = similitude.compare(a, b, tuple(fa))
    assert sim.similar, sim.differences
    assert sim.predicted_hz == pytest.approx(tuple(fe.solve(b, 3).frequencies_hz), rel=1e-8)


def test_dissimilar_members_list_their_differences() -> None:
    a = stepped()
    b = replace(a, masses=(PointMass(0.8, 3.0, 2e-3),))
    sim = similitude.compare(a, b)
    assert not sim.similar
    assert [d[0] for d in sim.differences] == ["M0/(L·m)"]
    assert sim.differences[0][3] == pytest.approx(0.5)


def test_member_groups_agree_with_the_general_engine() -> None:
    """Closed-form exponents against calc.groups.pi_groups with L, EI, m repeating."""
    member = stepped()
    result = fe.solve(member, 2)
    mine = similitude.member_groups(member, [m.omega for m in result.modes])
    names = similitude.variables_with_units(member)
    variables = [groups.variable(n, u) for n, u, _ in names]
    variables += [groups.variable(f"omega{i}", "rad/s") for i in (1, 2)]
    values = {n: v for n, _, v in names} | {
        f"omega{i + 1}": m.omega for i, m in enumerate(result.modes)
    }
    engine = groups.pi_groups(variables, ["L", "EI", "m"], values)
    assert len(engine.groups) == len(mine.groups)
    for ours, theirs in zip(mine.groups, engine.groups, strict=True):
        assert {k: str(v) for k, v in ours.exponents.items()} == {
            k: str(v) for k, v in theirs.exponents.items()
        }
        assert ours.value == pytest.approx(theirs.value, rel=1e-12)


def test_frequency_group_restates_the_result() -> None:
    member = stepped()
    result = fe.solve(member, 2)
    g = similitude.member_groups(member, [m.omega for m in result.modes])
    omega_1 = g.by_variable()["omega1"].value
    f = omega_1 / (2 * math.pi * g.length**2) * math.sqrt(g.bending_stiffness / g.mass_per_length)
    assert f == pytest.approx(result.modes[0].frequency_hz, rel=1e-12)


def test_master_curve_point_matches_dimensional_solve() -> None:
    member = stepped()
    curve = similitude.master_curve(member, "M0", 0.5, 2.0, points=4, modes=2)
    g = similitude.member_groups(member)
    m0 = g.mass_per_length * g.length
    for value, omegas in zip(curve.values, curve.omegas, strict=True):
        varied = replace(member, masses=(replace(member.masses[0], mass=value * m0),))
        direct = fe.solve(varied, 2)
        predicted = [o * g.frequency_scale for o in omegas]
        assert predicted == pytest.approx([m.omega for m in direct.modes], rel=1e-8)


def test_master_curve_unknown_group() -> None:
    from beamtone.calc.errors import InputError

    with pytest.raises(InputError) as info:
        similitude.master_curve(stepped(), "Q7", 0, 1)
    assert info.value.key == "--sweep"
