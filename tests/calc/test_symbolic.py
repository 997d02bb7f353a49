"""Shape formulas without sympy: forward derivatives and the on-disk cache of sympy's facts.

The derivatives are checked against sympy's own differentiation (a general-purpose reference
library), and every quantity read back from the cache against what sympy derives afresh.
"""

from __future__ import annotations

import json
import math
from collections.abc import Iterator
from pathlib import Path

import numpy as np
import pytest
import sympy as sp

from beamtone.calc import rayleigh, symbolic
from beamtone.calc.errors import InputError
from beamtone.calc.expressions import derivatives, evaluate, parse_formula, parse_shape, symbols
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section
from tests.processes import cold_solves

ROOT = Path(__file__).resolve().parents[2]
LENGTH = 1.3
POSITIONS = np.linspace(0.011, 1.29, 41)
SHAPES = [
    "sin(pi*x/L)",
    "1 - cos(pi*x/(2*L))",
    "(x/L)^2*(3 - x/L)",
    "x**0.5*(L - x)",
    "x**-1.5 + x",
    "sqrt(x + L)",
    "tan(x/L)",
    "tanh(2*x/L)*exp(-x/L)",
    "log(1 + x/L)",
    "(x/L)**(1/3)*(1 - x/L)",
    "cosh(x/L) - cos(x/L)",
    "x/(L + x)",
    "(2*x/L - 1)**4 - 6*(2*x/L - 1)**2",
    "x^2*(3*L - x)/L^3",
    "pi*x/L - sin(pi*x/L)",
    "abs(x/L + 1)**2",
    "-x**2",
    "e*x - x**3/L**2",
]


@pytest.fixture
def fresh_cache(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> Iterator[Path]:
    """An empty cache folder, and no facts remembered in this process."""
    monkeypatch.setenv("BEAMTONE_CACHE", str(tmp_path))
    symbolic._facts.cache_clear()
    yield tmp_path / "shapes.json"
    symbolic._facts.cache_clear()


@pytest.mark.parametrize("text", SHAPES)
def test_forward_derivatives_match_sympy(text: str) -> None:
    x, _ = symbols()
    expr = parse_shape(text)
    w, d1, d2 = derivatives(parse_formula(text), POSITIONS, LENGTH)
    for mine, order in ((w, 0), (d1, 1), (d2, 2)):
        exact = evaluate(sp.diff(expr, x, order), POSITIONS, LENGTH)
        assert np.allclose(mine, exact, rtol=1e-12, atol=1e-12 * np.max(np.abs(exact)))


def test_derivatives_keep_the_shape_of_the_positions() -> None:
    grid = np.linspace(0.1, 0.9, 6).reshape(2, 3)
    parts = derivatives(parse_formula("3 + 0*x"), grid, 1.0)
    assert all(p.shape == (2, 3) for p in parts)
    assert np.all(parts[0] == 3.0)
    w, d1, d2 = derivatives(parse_formula("x**2"), np.array([-2.0]), 1.0)
    assert (w[0], d1[0], d2[0]) == (4.0, -4.0, 2.0)  # integer powers of a negative base


@pytest.mark.parametrize("text", SHAPES)
def test_cached_facts_equal_fresh_ones(text: str, fresh_cache: Path) -> None:
    derived = symbolic.shape_facts(text)
    assert fresh_cache.exists()
    symbolic._facts.cache_clear()
    assert symbolic.shape_facts(text) == derived  # read back from the file


def _members() -> list[Member]:
    steel = LIBRARY["steel"]
    bar = build_section("rectangle", {"width": 0.04, "depth": 0.008})
    return [
        Member((Segment(LENGTH, steel, bar),), "pinned", "pinned"),
        Member((Segment(LENGTH, steel, bar),), "clamped", "free", masses=(PointMass(LENGTH, 0.4),)),
        Member((Segment(LENGTH, steel, bar),), "pinned", "pinned", springs=(Spring(0.5, 2000.0),)),
    ]


@pytest.mark.parametrize(
    ("index", "text"),
    [(0, "sin(pi*x/L)"), (0, "x*(L - x)"), (1, "x^2*(3*L - x)"), (1, "1 - cos(pi*x/(2*L))"),
     (2, "sin(pi*x/L)")],
)  # fmt: skip
def test_closed_form_from_the_cache_equals_sympy(index: int, text: str, fresh_cache: Path) -> None:
    member = _members()[index]
    first = rayleigh.rayleigh_shape(member, text)
    symbolic._facts.cache_clear()
    again = rayleigh.rayleigh_shape(member, text)
    assert again == first
    assert first.formula is not None and first.numeric_check is not None
    assert first.numeric_check < 1e-9
    # the integrals as sympy gives them, at this length
    x, L = symbols()
    expr = parse_shape(text)
    exact = [
        float(sp.integrate(f, (x, 0, L)).subs(L, member.length))
        for f in (sp.diff(expr, x, 2) ** 2, sp.diff(expr, x) ** 2, expr**2)
    ]
    mine = symbolic.integral_values(symbolic.shape_facts(text), member.length)
    assert mine is not None
    assert np.allclose(mine, exact, rtol=1e-13)


def test_refusals_are_kept_too(fresh_cache: Path) -> None:
    for _ in range(2):
        with pytest.raises(InputError, match="divides by zero"):
            symbolic.shape_facts("x + log(0)", "estimate.shape")
        with pytest.raises(InputError, match="constant"):
            symbolic.shape_facts("L + 1", "estimate.shapes[2]")
        symbolic._facts.cache_clear()


@pytest.mark.parametrize(
    "content",
    [
        "not json",
        "[]",
        '{"format": 1, "version": "0.0", "entries": {}}',
        "{}",
        "\u0000\u0001",
    ],
)
def test_a_damaged_or_foreign_cache_is_ignored(content: str, fresh_cache: Path) -> None:
    member = _members()[0]
    expected = rayleigh.rayleigh_shape(member, "x*(L - x)")
    symbolic._facts.cache_clear()
    fresh_cache.write_text(content, encoding="utf-8")
    assert rayleigh.rayleigh_shape(member, "x*(L - x)") == expected


def test_a_tampered_entry_is_never_evaluated(fresh_cache: Path) -> None:
    member = _members()[0]
    expected = rayleigh.rayleigh_shape(member, "x*(L - x)")
    data = json.loads(fresh_cache.read_text(encoding="utf-8"))
    entry = data["entries"]["x*(L - x)"]
    good = json.dumps(entry)
    for field, bad in (("integrals", [["fn", "__import__", ["num", 1, 1]], None, None]),
                       ("ends", {"0@0": "maybe"}), ("c_squared_value", "10")):  # fmt: skip
        tampered = {**json.loads(good), field: bad}
        fresh_cache.write_text(
            json.dumps({**data, "entries": {"x*(L - x)": tampered}}), encoding="utf-8"
        )
        symbolic._facts.cache_clear()
        assert rayleigh.rayleigh_shape(member, "x*(L - x)") == expected
        # refused and derived again, so the file holds a sound entry once more
        kept = json.loads(fresh_cache.read_text(encoding="utf-8"))["entries"]["x*(L - x)"]
        assert kept == json.loads(good)


def test_an_unwritable_cache_folder_only_costs_time(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    blocker = tmp_path / "a-file"
    blocker.write_text("", encoding="utf-8")
    monkeypatch.setenv("BEAMTONE_CACHE", str(blocker / "below"))
    symbolic._facts.cache_clear()
    est = rayleigh.rayleigh_shape(_members()[0], "sin(pi*x/L)")
    assert est.coefficient == pytest.approx(math.pi**2, rel=1e-14)  # exact mode (common practice)
    symbolic._facts.cache_clear()


def test_the_cache_stays_bounded(fresh_cache: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(symbolic, "_MAX_ENTRIES", 3)
    for k in range(1, 6):
        symbolic.shape_facts(f"x**{k}")
    shapes = json.loads(fresh_cache.read_text(encoding="utf-8"))["entries"]
    assert list(shapes) == ["x**3", "x**4", "x**5"]


def test_a_cached_solve_does_not_import_sympy(fresh_cache: Path) -> None:
    sheet = ROOT / "worksheets" / "machine-span.toml"
    first, again = cold_solves(sheet, "a.estimate.formula", "sympy", fresh_cache.parent)
    assert first[1] and not again[1]
    assert first[0] == again[0] and first[0].startswith("omega^2 = (EI*(pi**4")


def test_abs_that_sympy_drops_has_its_slope_at_zero() -> None:
    """abs(x) is x for x >= 0 (sympy drops it): a rotational spring at x = 0 sees slope L."""
    steel = LIBRARY["steel"]
    bar = build_section("rectangle", {"width": 0.04, "depth": 0.008})
    member = Member(
        (Segment(LENGTH, steel, bar),), "pinned", "pinned", springs=(Spring(0.0, 0.0, 50.0),)
    )
    plain = rayleigh.rayleigh_shape(member, "x*(L - x)")
    with_abs = rayleigh.rayleigh_shape(member, "abs(x)*(L - x)")
    assert with_abs.omega == pytest.approx(plain.omega, rel=1e-13)
    w, d1, d2 = derivatives(parse_formula("abs(-x)"), np.array([0.0, 0.5]), 1.0)
    assert list(d1) == [1.0, 1.0] and list(d2) == [0.0, 0.0]
