"""The Timoshenko beam element and the two theories (issue 17), against published values.

Each check names its source beside it.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np
import pytest
import scipy.linalg
import scipy.optimize

from beamtone.calc import fe
from beamtone.calc.errors import InputError
from beamtone.calc.fe import timoshenko
from beamtone.calc.fe.adaptive import shift_below, solve_mesh
from beamtone.calc.fe.mesh import build_mesh
from beamtone.calc.materials import Material
from beamtone.calc.model import Member, Segment
from beamtone.calc.sections import build_section
from beamtone.calc.shear import cowper_coefficient, engesser_load, pinned_timoshenko_hz
from beamtone.calc.worksheet import loads

STEEL = Material("steel", 200e9, 8000.0, 0.3)


def _member(length, section, left, right, theory="timoshenko", material=STEEL, P=0.0):
    return Member((Segment(length, material, section),), left, right, axial_force=P, theory=theory)


def _props(section, material=STEEL, kappa=None):
    kappa = cowper_coefficient(section, material.poisson_ratio) if kappa is None else kappa
    G = material.shear_modulus_or_none
    return (
        material.youngs_modulus * section.second_moment,
        material.density * section.area,
        material.density * section.second_moment,
        kappa * G * section.area,
    )


# --- the element -------------------------------------------------------------------------------


def _shapes(xi, phi, h):
    """The interdependent shape functions (Friedman and Kosmatka 1993), for an independent
    numerical integration of the coefficient tables."""
    d = 1.0 + phi
    Nw = np.array([
        (2 * xi**3 - 3 * xi**2 - phi * xi + 1 + phi) / d,
        h * (xi**3 - (2 + phi / 2) * xi**2 + (1 + phi / 2) * xi) / d,
        (-2 * xi**3 + 3 * xi**2 + phi * xi) / d,
        h * (xi**3 - (1 - phi / 2) * xi**2 - phi / 2 * xi) / d,
    ])  # fmt: skip
    dNw = np.array([
        (6 * xi**2 - 6 * xi - phi) / d / h,
        (3 * xi**2 - 2 * (2 + phi / 2) * xi + (1 + phi / 2)) / d,
        (-6 * xi**2 + 6 * xi + phi) / d / h,
        (3 * xi**2 - 2 * (1 - phi / 2) * xi - phi / 2) / d,
    ])  # fmt: skip
    Np = np.array([
        6 * (xi**2 - xi) / (d * h),
        (3 * xi**2 - (4 + phi) * xi + 1 + phi) / d,
        -6 * (xi**2 - xi) / (d * h),
        (3 * xi**2 - (2 - phi) * xi) / d,
    ])  # fmt: skip
    dNp = np.array([
        6 * (2 * xi - 1) / (d * h * h),
        (6 * xi - (4 + phi)) / d / h,
        -6 * (2 * xi - 1) / (d * h * h),
        (6 * xi - (2 - phi)) / d / h,
    ])  # fmt: skip
    return Nw, dNw, Np, dNp


@pytest.mark.parametrize("phi", [0.0, 0.3, 2.0, 50.0])
def test_element_matrices_integrate_the_shape_functions(phi):
    """Stiffness, mass and geometric stiffness equal Gauss integrals of the shape functions."""
    h, EI, m, rI = 0.7, 3.0, 5.0, 0.2
    kGA = math.inf if phi == 0.0 else 12 * EI / (phi * h * h)
    K, G, M = timoshenko.element_matrices(h, EI, m, kGA, rI, P=1.0)
    xg, wg = np.polynomial.legendre.leggauss(6)
    xi, wt = (xg + 1) / 2, wg / 2 * h
    Nw, dNw, Np, dNp = _shapes(xi, phi, h)
    shear = 0.0 if phi == 0.0 else kGA
    K_ref = EI * (dNp * wt) @ dNp.T + shear * ((dNw - Np) * wt) @ (dNw - Np).T
    M_ref = m * (Nw * wt) @ Nw.T + rI * (Np * wt) @ Np.T
    G_ref = (dNw * wt) @ dNw.T
    assert pytest.approx(K_ref, rel=1e-12, abs=1e-9) == K
    assert pytest.approx(M_ref, rel=1e-12, abs=1e-12) == M
    assert pytest.approx(G_ref, rel=1e-12, abs=1e-12) == G


def test_element_reduces_to_the_hermite_element():
    """phi = 0 and no rotary inertia: the Euler-Bernoulli element's matrices (common practice)."""
    K, G, M = timoshenko.element_matrices(1.3, 7.0, 2.0, math.inf, P=1.0)
    K0, G0, M0 = fe.element_matrices(1.3, 7.0, 2.0, P=1.0)
    assert pytest.approx(K0, rel=1e-13) == K
    assert pytest.approx(M0, rel=1e-13) == M
    assert pytest.approx(G0, rel=1e-13) == G


def test_element_is_exact_for_a_cantilever_tip_load():
    """One element gives the Timoshenko cantilever's tip deflection P L^3/3EI + P L/kGA exactly
    (common practice: the element solves the static equations under end loads)."""
    L, EI, kGA = 0.4, 5.0e4, 2.0e6
    K, _, _ = timoshenko.element_matrices(L, EI, 1.0, kGA)
    tip = np.linalg.solve(K[2:, 2:], [1.0, 0.0])[0]
    assert tip == pytest.approx(L**3 / (3 * EI) + L / kGA, rel=1e-12)


# --- published checks ----------------------------------------------------------------------------


def _both_branches(L, EI, rA, rI, kGA, count):
    """Every frequency of the pinned-pinned member below the count-th: both roots of the
    quadratic in omega^2 for each n (the second, shear branch can fall among the first)."""
    out = []
    for n in range(1, count + 1):
        k = n * math.pi / L
        a, b, c = rA * rI, kGA * k * k * rI + (kGA + EI * k * k) * rA, EI * kGA * k**4
        root = math.sqrt(b * b - 4 * a * c)
        out += [
            math.sqrt(2 * c / (b + root)) / (2 * math.pi),
            math.sqrt((b + root) / (2 * a)) / (2 * math.pi),
        ]
    return sorted(out)[:count]


@pytest.mark.parametrize("slenderness", [5.0, 10.0, 30.0])
def test_pinned_pinned_against_timoshenko_closed_form(slenderness):
    """Pinned-pinned uniform member: Timoshenko's frequency equation (Phil. Mag. 41, 1921, as
    written in Han, Benaroya & Wei, J. Sound Vib. 225 (1999) 935), modes 1-5, to 1e-6."""
    sec = build_section("rectangle", {"width": 0.05, "depth": 0.1})
    L = slenderness * 0.1
    result = fe.solve(_member(L, sec, "pinned", "pinned"), 5)
    EI, rA, rI, kGA = _props(sec)
    exact_all = _both_branches(L, EI, rA, rI, kGA, 5)
    assert exact_all[0] == pytest.approx(pinned_timoshenko_hz(L, EI, rA, rI, kGA, 1), rel=1e-12)
    for mode in result.modes:
        exact = exact_all[mode.number - 1]
        error = abs(mode.frequency_hz - exact) / exact
        assert error < 1e-6
        assert error <= mode.estimated_error


def test_nafems_deep_beam():
    """NAFEMS free-vibration benchmark of a simply supported deep beam (10 m, 2 m x 2 m,
    E = 200 GPa, nu = 0.3, rho = 8000 kg/m^3, Cowper's 0.8497): 42.65, 148.15, 283.47 Hz, and
    Euler-Bernoulli 45.35, 181.4, 408.1 Hz (as quoted in issue 17, from memory)."""
    sec = build_section("rectangle", {"width": 2.0, "depth": 2.0})
    assert cowper_coefficient(sec, 0.3) == pytest.approx(0.8497, abs=5e-5)
    timo = fe.solve(_member(10.0, sec, "pinned", "pinned"), 3)
    eb = fe.solve(_member(10.0, sec, "pinned", "pinned", "euler-bernoulli"), 3)
    assert timo.frequencies_hz == pytest.approx([42.65, 148.15, 283.47], abs=0.006)
    assert eb.frequencies_hz == pytest.approx([45.35, 181.4, 408.1], abs=0.06)


def _timoshenko_matrix(omega, EI, rA, rI, kGA):
    """First-order system of the Timoshenko beam, state (w, psi, M, V) with M = EI psi' and
    V = kGA (w' - psi): w' = psi + V/kGA, psi' = M/EI, M' = -V - rI omega^2 psi,
    V' = -rA omega^2 w (the Euler-Lagrange equations of its energy; common practice)."""
    w2 = omega * omega
    return np.array([
        [0.0, 1.0, 0.0, 1.0 / kGA],
        [0.0, 0.0, 1.0 / EI, 0.0],
        [0.0, -rI * w2, 0.0, -1.0],
        [-rA * w2, 0.0, 0.0, 0.0],
    ])  # fmt: skip


def _clamped_free_exact(L, EI, rA, rI, kGA, n):
    """The lowest n roots of the exact transfer-matrix determinant, clamped at x = 0 (w = psi =
    0) and free at x = L (M = V = 0) [Hz]."""

    def det(omega):
        T = scipy.linalg.expm(_timoshenko_matrix(omega, EI, rA, rI, kGA) * L)
        return np.linalg.det(T[2:, 2:])

    roots, grid = [], np.linspace(1e-3, 1.0, 601) * 120 * math.sqrt(EI / (rA * L**4))
    values = [det(w) for w in grid]
    for a, b, fa, fb in zip(grid[:-1], grid[1:], values[:-1], values[1:], strict=True):
        if fa * fb < 0:
            roots.append(scipy.optimize.brentq(det, a, b, xtol=1e-14, rtol=1e-14))
        if len(roots) == n:
            break
    return [r / (2 * math.pi) for r in roots]


@pytest.mark.parametrize(
    ("slenderness", "ratios"), [(5.0, (0.970, 0.833, 0.708)), (10.0, (0.992, 0.949, 0.891))]
)
def test_clamped_free_ratios(slenderness, ratios):
    """Clamped-free rectangular steel, kappa = 5/6, nu = 0.3: Timoshenko / Euler-Bernoulli
    0.970 / 0.833 / 0.708 at L/d = 5 and 0.992 / 0.949 / 0.891 at L/d = 10 (issue 17, by an
    exact transfer-matrix solution, written here); the FE solution against that solution."""
    depth = 0.1
    sec = build_section(
        "properties", {"area": 0.005, "second_moment": 0.05 * depth**3 / 12, "depth": depth,
                       "shear_area": 0.005 * 5 / 6}
    )  # fmt: skip
    L = slenderness * depth
    EI, rA, rI, kGA = _props(sec, kappa=5 / 6)
    exact = _clamped_free_exact(L, EI, rA, rI, kGA, 3)
    timo = fe.solve(_member(L, sec, "clamped", "free"), 3)
    eb = fe.solve(_member(L, sec, "clamped", "free", "euler-bernoulli"), 3)
    for mode, f in zip(timo.modes, exact, strict=True):
        assert abs(mode.frequency_hz - f) / f < 1e-6
        assert abs(mode.frequency_hz - f) / f <= mode.estimated_error
    got = [t / e for t, e in zip(exact, eb.frequencies_hz, strict=True)]
    assert got == pytest.approx(ratios, abs=0.0006)


def test_convergence_rate_of_the_element():
    """Raw eigenvalues of the element on a deep member converge as h^2 (its shear strain is
    constant per element), the extrapolated ones as h^4: log-log fit of the error against the
    element length, as for the Hermite element (common practice of convergence studies)."""
    sec = build_section("rectangle", {"width": 2.0, "depth": 2.0})
    member = _member(10.0, sec, "pinned", "pinned")
    EI, rA, rI, kGA = _props(sec)
    exact = pinned_timoshenko_hz(10.0, EI, rA, rI, kGA, 2) * 2 * math.pi
    counts = [8, 16, 32, 64]
    lam = []
    for n in counts:
        sol = solve_mesh(member, build_mesh(member, n), 2, 0, -shift_below(member),
                         fe.default_eigensolver)  # fmt: skip
        lam.append(sol.lam[1])
    lam = np.array(lam)
    raw = np.abs(lam - exact**2) / exact**2
    rate = np.polyfit(np.log(10.0 / np.array(counts)), np.log(raw), 1)[0]
    assert rate == pytest.approx(2.0, abs=0.1)
    extrapolated = np.abs((4 * lam[1:] - lam[:-1]) / 3 - exact**2) / exact**2
    rate4 = np.polyfit(np.log(10.0 / np.array(counts[1:])), np.log(extrapolated), 1)[0]
    assert rate4 > 3.5


def test_engesser_buckling_refuses_compression():
    """Pinned-pinned buckling with shear flexibility: Engesser's P_E / (1 + P_E / kGA)
    (Timoshenko and Gere, Theory of Elastic Stability, section 2.17, from memory); a
    compression between it and Euler's load is refused under Timoshenko only."""
    sec = build_section("rectangle", {"width": 0.1, "depth": 0.1})
    EI, _, _, kGA = _props(sec)
    L = 0.5
    euler = math.pi**2 * EI / L**2
    engesser = engesser_load(euler, kGA)
    timo = _member(L, sec, "pinned", "pinned")
    assert fe.buckling_load(timo) == pytest.approx(engesser, rel=1e-6)
    between = -0.5 * (euler + engesser)
    fe.solve(replace(timo, theory="euler-bernoulli", axial_force=between), 1)
    with pytest.raises(InputError) as info:
        fe.solve(replace(timo, axial_force=between), 1)
    assert "buckling" in str(info.value)


# --- the worksheet and the figures ------------------------------------------------------

_BRACKET = """
format = 1
title = "stocky bracket"
[member]
length = "150 mm"
material = "steel"
section = { shape = "rectangle", width = "40 mm", depth = "50 mm" }
[supports]
left = "clamped"
right = "free"
[[mass]]
at = "150 mm"
mass = "%s"
[check]
modes = 3
"""


def test_stocky_bracket_with_tip_mass():
    """A bracket 3 depths long with a tip mass 5x its own mass: Euler-Bernoulli is about 4 %
    high (issue 17 measured 4.1 %); the default theory is Timoshenko and the output shows both."""
    from beamtone.calc import analyse

    own = 7850 * 0.04 * 0.05 * 0.15
    sheet = loads(_BRACKET % f"{5 * own} kg")
    assert sheet.member.theory == "timoshenko"
    analysis = analyse(sheet)
    pair = analysis.theories
    high = pair.euler_bernoulli.modes[0].frequency_hz / pair.timoshenko.modes[0].frequency_hz - 1
    assert 0.03 < high < 0.05
    assert analysis.modes is pair.timoshenko
    assert analysis.bracket.inside  # Euler-Bernoulli bounds against the Euler-Bernoulli solve
    text = (_BRACKET % f"{5 * own} kg").replace("[member]", '[member]\ntheory = "euler-bernoulli"')
    eb = analyse(loads(text))
    assert eb.modes is eb.theories.euler_bernoulli
    assert "Euler-Bernoulli theory chosen" in eb.theories.note()


def test_unknown_theory_is_refused_with_a_hint():
    """A misspelt theory names the key and the choices."""
    with pytest.raises(InputError) as info:
        loads((_BRACKET % "1 kg").replace("[member]", '[member]\ntheory = "timoshenco"'))
    assert info.value.key == "member.theory"
    assert "timoshenko" in info.value.message


def test_direct_properties_without_shear_area_say_so():
    """A section given by its properties without shear_area: rotary inertia only, said."""
    from beamtone.calc.theories import shear_reasons

    sec = build_section("properties", {"area": 0.005, "second_moment": 4e-6})
    reasons = shear_reasons(_member(1.0, sec, "clamped", "free"))
    assert reasons and "shear_area" in reasons[0]


def test_euler_bernoulli_chosen_shows_the_computed_effect_not_the_rule():
    """Under Euler-Bernoulli the rule-of-thumb warning gives way to the computed effect."""
    from beamtone.calc import analyse

    text = (_BRACKET % "1 kg").replace("[member]", '[member]\ntheory = "euler-bernoulli"')
    analysis = analyse(loads(text))
    assert any("ten section depths" in w for w in analysis.modes.warnings)  # fe's own rule
    assert not any("ten section depths" in w for w in analysis.warnings)
    assert any("Euler-Bernoulli theory chosen" in w for w in analysis.warnings)


def test_record_keeps_its_theory_and_an_old_one_verifies_under_euler_bernoulli():
    """A record stores the theory; one without it (written before the choice) is verified
    under Euler-Bernoulli, the theory it was made with, and says so."""
    import tomlkit

    from beamtone.calc import analyse, record

    text = _BRACKET % "1 kg"
    recorded = record.with_record(text, record.build_record(analyse(loads(text))))
    assert tomlkit.parse(recorded)["record"]["theory"] == "timoshenko"
    assert record.verify(loads(recorded)).passed
    # as an older beamtone wrote it: the same inputs, Euler-Bernoulli numbers, no theory key
    sheet = loads(text)
    eb = replace(sheet, member=replace(sheet.member, theory="euler-bernoulli"))
    old = tomlkit.parse(record.with_record(text, record.build_record(analyse(eb))))
    assert "theory" not in old["record"]  # Euler-Bernoulli records look as they always did
    result = record.verify(loads(tomlkit.dumps(old)))
    assert result.passed
    assert "euler-bernoulli theory the record was made with" in result.message


def test_pinned_pinned_worksheet_shows_the_closed_form():
    """The solve of a uniform pinned-pinned member names Timoshenko's closed form beside the FE
    modes (Phil. Mag. 41, 1921, as written in Han, Benaroya & Wei 1999), equal to 1e-6."""
    from beamtone.calc import analyse
    from beamtone.render.text import solve_json

    text = """
format = 1
[member]
length = "10 m"
material = { youngs_modulus = "200 GPa", density = "8000 kg/m^3", poisson_ratio = 0.3 }
section = { shape = "rectangle", width = "2 m", depth = "2 m" }
[supports]
left = "pinned"
right = "pinned"
[check]
modes = 3
"""
    data = solve_json(analyse(loads(text)))
    assert data["theory"] == "timoshenko"
    exact = data["timoshenko_closed_form_hz"]
    for mode, f in zip(data["modes"], exact, strict=True):
        assert mode["frequency_hz"] == pytest.approx(f, rel=1e-6)
        assert mode["timoshenko_hz"] == mode["frequency_hz"]
    assert data["modes"][0]["euler_bernoulli_hz"] == pytest.approx(45.35, abs=0.01)


def test_excitation_margins_use_the_timoshenko_modes():
    """Under either theory the margins check the more accurate, Timoshenko, frequencies."""
    from pathlib import Path

    from beamtone.calc import analyse
    from beamtone.calc.worksheet import load

    sheet = load(Path(__file__).parents[3] / "worksheets" / "excitations" / "pump-span.toml")
    for theory in ("timoshenko", "euler-bernoulli"):
        chosen = replace(sheet, member=replace(sheet.member, theory=theory))
        analysis = analyse(chosen)
        timo = {
            (d.name, m.number): m.frequency_hz
            for d in analysis.directions.directions
            if d.theories is not None
            for m in d.theories.timoshenko.modes
        }
        rows = [r for r in analysis.margins.rows if r.direction in ("depth", "width")]
        assert rows
        for r in rows:
            assert r.frequency_hz in {f for (name, _), f in timo.items() if name == r.direction}


def test_euler_bernoulli_choice_warns_where_timoshenko_would_buckle():
    """A compression between Engesser's and Euler's loads: solved under Euler-Bernoulli, with a
    warning first that with shear flexibility the member would buckle."""
    from beamtone.calc import analyse

    text = """
format = 1
[member]
length = "0.5 m"
material = "steel"
theory = "euler-bernoulli"
section = { shape = "rectangle", width = "100 mm", depth = "100 mm" }
axial_force = "-62 MN"
[supports]
left = "pinned"
right = "pinned"
"""
    analysis = analyse(loads(text))
    assert analysis.theories.timoshenko is None
    assert "would not be stable" in analysis.warnings[0]
    with pytest.raises(InputError):
        analyse(loads(text.replace('theory = "euler-bernoulli"\n', "")))


def test_shear_modulus_without_poissons_ratio():
    """G alone: isotropic where E/(2G) - 1 is a Poisson's ratio, else (timber, E/G near 16,
    EN 338 C24) Cowper at nu = 0, the classical 5/6 of a rectangle (common practice)."""
    from beamtone.calc.shear import segment_shear

    sec = build_section("rectangle", {"width": 0.1, "depth": 0.2})
    steel_g = Material("s", 200e9, 7850.0, None, shear_modulus=200e9 / 2.6)
    timber = Material("t", 11.0e9, 420.0, None, shear_modulus=0.69e9)
    assert segment_shear(steel_g, sec).shear_stiffness == pytest.approx(
        cowper_coefficient(sec, 0.3) * 200e9 / 2.6 * sec.area, rel=1e-12
    )
    assert segment_shear(timber, sec).shear_stiffness == pytest.approx(
        5 / 6 * 0.69e9 * sec.area, rel=1e-12
    )
