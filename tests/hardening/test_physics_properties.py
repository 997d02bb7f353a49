"""Hardening: bad input through every command and the app, physics as properties, numerical
extremes against limiting cases, and no lost work.

Published values used: uniform-beam frequency parameters (R. D. Blevins, Formulas for Natural
Frequency and Mode Shape, 1979, Table 8-1, through calc.handbook, itself checked digit by digit
in tests/calc/test_handbook.py); the pinned-pinned beam under axial load,
omega = (pi/L)^2 sqrt(EI/m) sqrt(1 + P L^2/(pi^2 EI)) (common practice).
"""

from __future__ import annotations

import asyncio
import errno
import math
import os
import tempfile
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from beamtone.calc import fe, handbook
from beamtone.calc.errors import InputError
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section
from beamtone.calc.worksheet import loads, write_atomic
from tests.cli.inprocess import run

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

COMMANDS: list[list[str]] = [
    ["solve"],
    ["solve", "--json"],
    ["size", "--vary", "member.length", "--between", "0.5 m", "2 m", "--target", "20 Hz"],
    ["sweep", "--vary", "member.length", "--between", "0.5 m", "2 m", "--points", "3"],
    ["groups"],
    ["verify"],
    ["report", "-o", "REPORT.md"],
]


@pytest.mark.parametrize("command", COMMANDS, ids=lambda c: " ".join(c[:2]))
@pytest.mark.parametrize(("name", "text", "key"), BAD, ids=[b[0] for b in BAD])
def test_bad_input_through_every_command(
    name: str,
    text: str,
    key: str,
    command: list[str],
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
) -> None:
    """140 cases: exit 2, one line naming the key, no traceback, the file untouched."""
    sheet = tmp_path / "bad.toml"
    sheet.write_text(text)
    before = sheet.read_bytes()
    args = [command[0], str(sheet), *(str(tmp_path / a) if a == "REPORT.md" else a
                                      for a in command[1:])]  # fmt: skip
    status, out, err = run(capsys, *args)
    assert status == 2, (status, err)
    assert err.startswith(f"beamtone: {key}: "), err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert out == ""
    assert sheet.read_bytes() == before
    assert not (tmp_path / "REPORT.md").exists()


def test_very_large_file_refused_by_its_size_before_parsing(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    """A 30 MB worksheet is refused by its size: never parsed, never read whole (pathlib)."""
    import tomllib

    import tomlkit

    big = tmp_path / "big.toml"
    big.write_text(GOOD + "# padding\n" * 3_000_000)  # about 30 MB, a valid worksheet

    def guarded(real, what: str):  # noqa: ANN001, ANN202
        def call(source, *args: object, **kwargs: object):  # noqa: ANN001, ANN202
            if isinstance(source, Path):
                assert source != big, f"the oversized file was {what}"
            else:
                assert len(source) < 2_000_000, f"the oversized text was {what}"
            return real(source, *args, **kwargs)

        return call

    monkeypatch.setattr(Path, "read_bytes", guarded(Path.read_bytes, "read"))
    monkeypatch.setattr(Path, "read_text", guarded(Path.read_text, "read"))
    for module, name in ((tomlkit, "parse"), (tomlkit, "loads"), (tomllib, "loads")):
        monkeypatch.setattr(module, name, guarded(getattr(module, name), "parsed"))
    status, _, err = run(capsys, "solve", str(big))
    assert status == 2 and err.startswith("beamtone: file: ")
    assert "at most 1000 kB" in err  # the message states the limit


def test_bad_input_in_the_app_keeps_it_running(tmp_path: Path) -> None:
    """Each bad worksheet loaded into the app: an inline NOT SOLVED, the app keeps running."""
    from beamtone.tui.app import BeamtoneApp
    from beamtone.tui.document import Document
    from tests.tui.driving import settled

    good = tmp_path / "good.toml"
    good.write_text(GOOD)

    async def scenario() -> None:
        app = BeamtoneApp(good)
        async with app.run_test(size=(100, 40)) as pilot:
            await settled(pilot, app)
            for name, text, key in BAD:
                if key == "file":
                    with pytest.raises(InputError):
                        Document.from_text(text)
                    continue
                # the whole worksheet replaced at once, as opening or recovering one does
                document = Document.from_text(text)
                await app._replace(document)  # noqa: SLF001
                view = await settled(pilot, app, until=lambda d=document: app.document is d)
                assert view.state in ("stale", "failed"), name
                assert key in view.problem, (name, view.problem)
                assert app.is_running

    asyncio.run(scenario())


# --- physics as properties -----------------------------------------------------------------------

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


# --- extremes against limiting cases -------------------------------------------------------------


def scale(member: Member, length: float | None = None) -> float:
    seg = member.segments[0]
    L = member.length if length is None else length
    return math.sqrt(seg.bending_stiffness / seg.mass_per_length) / (2 * math.pi * L**2)


BAR = build_section("rectangle", {"width": 0.04, "depth": 0.008})


def test_very_stiff_spring_is_a_pin() -> None:
    """A 1e15 N/m spring at the free end of a pinned-free bar: the pinned-pinned bar."""
    member = Member((Segment(1.0, STEEL, BAR),), "pinned", "free", springs=(Spring(1.0, 1e15),))
    result = fe.solve(member, 3)
    exact = (np.arange(1, 4) * math.pi) ** 2 * scale(member)
    assert result.frequencies_hz == pytest.approx(exact, rel=1e-6)


@pytest.mark.parametrize(("length", "side"), [(1e-5, 1e-6), (1e-3, 1e-4), (300.0, 2.0)])
def test_tiny_and_huge_members(length: float, side: float) -> None:
    """Micrometre to hundreds of metres: the same frequency parameters (Blevins Table 8-1)."""
    section = build_section("rectangle", {"width": side, "depth": side})
    member = Member((Segment(length, STEEL, section),), "clamped", "free")
    result = fe.solve(member, 3)
    exact = np.array(handbook.frequency_parameters("clamped", "free", 3)) ** 2 * scale(member)
    assert result.frequencies_hz == pytest.approx(exact, rel=1e-6)


@pytest.mark.parametrize("ratio", [1e-6, 1e6])
def test_extreme_tip_mass_ratios(ratio: float) -> None:
    base = Member((Segment(1.0, STEEL, BAR),), "clamped", "free")
    member = replace(base, masses=(PointMass(1.0, ratio * base.member_mass),))
    result = fe.solve(member, 2)
    lam = np.array(handbook.tip_mass_parameters(ratio, 0.0, 2))
    assert result.frequencies_hz == pytest.approx(lam**2 * scale(member), rel=1e-6)


@pytest.mark.parametrize("fraction", [0.999, 0.9999])
def test_axial_load_just_below_buckling(fraction: float) -> None:
    """Within 0.1 % (and 0.01 %) of Euler's load: omega falls as sqrt(1 - P/P_cr)."""
    base = Member((Segment(1.0, STEEL, BAR),), "pinned", "pinned")
    P_cr = math.pi**2 * base.segments[0].bending_stiffness
    result = fe.solve(replace(base, axial_force=-fraction * P_cr), 1)
    exact = math.pi**2 * scale(base) * math.sqrt(1 - fraction)
    assert result.modes[0].frequency_hz == pytest.approx(exact, rel=1e-5)
    assert abs(result.modes[0].frequency_hz - exact) / exact <= result.modes[0].estimated_error


# --- no lost work --------------------------------------------------------------------------------


def test_full_disk_leaves_the_original(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    path = tmp_path / "w.toml"
    path.write_text(GOOD)
    real_fdopen = os.fdopen

    class FullDisk:
        def __init__(self, handle) -> None:  # noqa: ANN001
            self.handle = handle

        def __enter__(self):  # noqa: ANN204
            return self

        def __exit__(self, *exc: object) -> None:
            self.handle.close()

        def write(self, text: str) -> int:
            raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(os, "fdopen", lambda fd, *a, **k: FullDisk(real_fdopen(fd, *a, **k)))
    with pytest.raises(InputError) as info:
        write_atomic(path, GOOD.replace("2.5 kg", "3 kg"))
    assert info.value.key == "file" and "space" in info.value.message.lower()
    assert path.read_text() == GOOD
    assert sorted(p.name for p in tmp_path.iterdir()) == ["w.toml"]


def test_read_only_folder_leaves_the_original(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    path = tmp_path / "w.toml"
    path.write_text(GOOD)

    def refuse(*args: object, **kwargs: object) -> tuple[int, str]:
        raise PermissionError(errno.EACCES, "Permission denied")

    monkeypatch.setattr(tempfile, "mkstemp", refuse)
    with pytest.raises(InputError) as info:
        write_atomic(path, "anything")
    assert info.value.key == "file" and "write" in info.value.message
    assert path.read_text() == GOOD


def test_apply_in_a_read_only_folder_tells_the_user(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    path = tmp_path / "w.toml"
    path.write_text(GOOD)

    def refuse(*args: object, **kwargs: object) -> tuple[int, str]:
        raise PermissionError(errno.EACCES, "Permission denied")

    monkeypatch.setattr(tempfile, "mkstemp", refuse)
    status, _, err = run(capsys, "size", str(path), "--vary", "member.length", "--between",
                         "0.5 m", "2 m", "--target", "20 Hz", "--apply")  # fmt: skip
    assert status == 2 and err.startswith("beamtone: file: ")
    assert path.read_text() == GOOD


# --- fuzzing the quantity parser, and invariance as properties -----------------------------------

from beamtone.calc.units import LENGTH, PRESSURE, STIFFNESS, parse_quantity  # noqa: E402
from tests.fuzz import EXAMPLES  # noqa: E402

_UNITISH = st.text(
    alphabet=st.sampled_from(list("0123456789.eE+-*/^() mkgNPaMGinlbftsrad_µ°·\t")), max_size=40
)


@settings(max_examples=EXAMPLES(400), deadline=None)
@given(st.one_of(_UNITISH, st.text(max_size=40)), st.sampled_from([LENGTH, PRESSURE, STIFFNESS]))
def test_fuzz_quantity_parser_raises_only_input_error(text: str, dim) -> None:  # noqa: ANN001
    try:
        value = parse_quantity(text, dim, "k", allow_zero=True, allow_negative=True)
    except InputError as exc:
        assert "\n" not in exc.message
        return
    assert math.isfinite(value)


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
