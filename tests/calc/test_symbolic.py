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


# --- the built-in shapes' shipped facts, checked against sympy -------------------------------


def _shipped() -> dict[str, dict]:
    from importlib import resources

    text = resources.files("beamtone.calc").joinpath("shape_facts.json").read_text("utf-8")
    return json.loads(text)["entries"]


def test_shipped_facts_cover_every_builtin_shape() -> None:
    texts = set()
    for pair in rayleigh.NAMED_SHAPES.values():
        for template in pair:
            texts |= {template.replace("X", "(x/L)"), template.replace("X", "(1 - x/L)")}
    assert set(_shipped()) == texts


@pytest.mark.parametrize("text", sorted(_shipped()))
def test_shipped_facts_agree_with_sympy(text: str) -> None:
    """Each shipped fact against sympy (a general-purpose reference library), independently:
    the printed form, the exact end values, and the integrals by mpmath quadrature."""
    import mpmath

    entry = _shipped()[text]
    x, L = symbols()
    expr = parse_shape(text)
    assert sp.simplify(sp.sympify(entry["expression"], locals={"L": L, "x": x}) - expr) == 0
    derivs = [expr, sp.diff(expr, x), sp.diff(expr, x, 2), sp.diff(expr, x, 3)]
    for key, state in entry["ends"].items():
        order, end = key.split("@")
        value = derivs[int(order)].subs(x, 0 if end == "0" else L)
        if state == "zero":
            assert sp.simplify(value) == 0, key
        elif state == "nonzero":
            assert sp.simplify(value) != 0, key
    facts = symbolic._from_json(entry)
    assert facts is not None and facts.note is None and entry["integrals"] is not None
    length = 1.3
    mine = symbolic.integral_values(facts, length)
    mpmath.mp.dps = 30
    for k, value in zip((2, 1, 0), mine, strict=True):
        f = sp.lambdify(x, (derivs[k] ** 2).subs(L, length), "mpmath")
        assert value == pytest.approx(float(mpmath.quad(f, [0, length])), rel=1e-12)
    c2 = sp.sympify(entry["c_squared"])
    assert float(c2) == pytest.approx(length**4 * mine[0] / mine[2], rel=1e-12)
    assert entry["c_squared_value"] == pytest.approx(float(c2), rel=1e-15)


def test_builtin_shapes_need_no_sympy(tmp_path: Path) -> None:
    from tests.hardening.bounded import python

    code = (
        "import sys; from beamtone.calc import symbolic\n"
        f"for t in {sorted(_shipped())!r}: symbolic.shape_facts(t)\n"
        "print('sympy' in sys.modules)"
    )
    done = python(code, env={"BEAMTONE_CACHE": str(tmp_path)}, timeout=60)
    assert done.stdout.strip() == "False", done.stderr


# --- facts read back are checked, not trusted ------------------------------------------------


@pytest.mark.parametrize(
    "change",
    [
        lambda e: e["integrals"][0].__setitem__(1, ["num", 3, 5]),  # pi^4/(2 L^3) -> 3/5
        lambda e: e.__setitem__("c_squared_value", 100.0),
        lambda e: e.__setitem__("c_squared", "100"),
        lambda e: e["integral_texts"].__setitem__(0, "pi**4/(3*L**3)"),
        lambda e: e.__setitem__("expression", "sin(2*pi*x/L)"),
        lambda e: e["ends"].__setitem__("0@L", "nonzero"),
        lambda e: e["ends"].__setitem__("2@0", "nonzero"),
    ],
)
def test_a_changed_number_in_the_cache_changes_nothing(change: object, fresh_cache: Path) -> None:
    """Issue 21: a changed integral coefficient raised the Rayleigh estimate, formula unchanged."""
    member = _members()[0]
    text = "sin(pi*x/L)"
    expected = rayleigh.rayleigh_shape(member, text)
    data = json.loads(fresh_cache.read_text(encoding="utf-8"))
    entry = data["entries"][text]
    good = json.loads(json.dumps(entry))
    change(entry)  # type: ignore[operator]
    fresh_cache.write_text(json.dumps(data), encoding="utf-8")
    symbolic._facts.cache_clear()
    assert rayleigh.rayleigh_shape(member, text) == expected
    assert json.loads(fresh_cache.read_text(encoding="utf-8"))["entries"][text] == good


def test_cache_keys_name_beamtone_and_sympy(fresh_cache: Path) -> None:
    from importlib.metadata import version

    symbolic.shape_facts("x*(L - x)")
    written = json.loads(fresh_cache.read_text(encoding="utf-8"))["version"]
    assert f"beamtone {version('beamtone')}" in written and f"sympy {sp.__version__}" in written


def test_nothing_is_read_or_written_when_bypassed(
    fresh_cache: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    from beamtone.calc import diskcache

    symbolic.shape_facts("x*(L - x)")
    before = fresh_cache.read_bytes()
    symbolic._facts.cache_clear()

    def refuse(*args: object) -> None:
        raise AssertionError("a cache was read")

    refuse.cache_clear = lambda: None  # type: ignore[attr-defined]
    monkeypatch.setattr(diskcache, "json", None)  # any read or write would fail loudly
    monkeypatch.setattr(symbolic, "_remembered", refuse)
    with diskcache.bypassed():
        assert diskcache.read("shapes", diskcache.version_key("sympy")) == {}
        facts = symbolic.shape_facts("x*(L - x)")
        assert facts.c_squared == "120"
    assert fresh_cache.read_bytes() == before
