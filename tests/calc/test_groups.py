"""Checks of :mod:`calc.groups` (Buckingham's Pi theorem by repeating variables).

Independent references used here:

* classical dimensional-analysis examples with their known groups, each source named beside
  its case (textbook chapters recalled, marked "from memory"; facts of the trade marked
  "common practice");
* pint's own Buckingham-Pi helper (``pint.pi_theorem``, a general-purpose library), which must
  give the same number of groups and a basis of the same space of groups;
* pint's dimensional bookkeeping, which must find every group dimensionless.
"""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import pint
import pytest
import sympy as sp

from beamtone.calc.errors import InputError
from beamtone.calc.groups import (
    Group,
    GroupsResult,
    Variable,
    parse_variables,
    pi_groups,
    variable,
)
from beamtone.calc.units import registry

Spec = list[tuple[str, str]]

BEAM: Spec = [("f", "Hz"), ("L", "m"), ("EI", "N*m^2"), ("m", "kg/m")]
BEAM_E_I: Spec = [("f", "Hz"), ("L", "m"), ("E", "Pa"), ("I", "m^4"), ("m", "kg/m")]
PIPE: Spec = [
    ("Δp", "Pa"),
    ("ρ", "kg/m^3"),
    ("V", "m/s"),
    ("D", "m"),
    ("ℓ", "m"),
    ("μ", "Pa*s"),
    ("ε", "m"),
]
SPHERE: Spec = [("F", "N"), ("ρ", "kg/m^3"), ("V", "m/s"), ("D", "m"), ("μ", "Pa*s")]
PENDULUM: Spec = [("T", "s"), ("ℓ", "m"), ("g", "m/s^2"), ("M", "kg")]
OSCILLATOR: Spec = [("f", "Hz"), ("k", "N/m"), ("m", "kg"), ("c", "N*s/m")]
# Transient conduction in a solid cooled by convection: mass and temperature enter h and k
# only as the combination [mass]/[temperature], so the rank (3) is below the 4 base dimensions.
CONDUCTION: Spec = [("h", "W/(m^2*K)"), ("k", "W/(m*K)"), ("L", "m"), ("α", "m^2/s"), ("t", "s")]


def build(spec: Spec) -> list[Variable]:
    return [variable(name, unit) for name, unit in spec]


def groups_of(spec: Spec, **kw: object) -> GroupsResult:
    return pi_groups(build(spec), **kw)


def r(p: int, q: int = 1) -> sp.Rational:
    return sp.Rational(p, q)


def is_power_of(exponents: dict[str, sp.Rational], known: dict[str, sp.Rational]) -> bool:
    """True when the group equals the known group raised to some non-zero power."""
    names = set(exponents) | set(known)
    pivot = next(iter(known))
    if exponents.get(pivot, 0) == 0:
        return False
    power = sp.Rational(exponents[pivot]) / known[pivot]
    return all(exponents.get(n, 0) == power * known.get(n, 0) for n in names)


def find_power_of(result: GroupsResult, known: dict[str, sp.Rational]) -> Group:
    matches = [g for g in result.groups if is_power_of(g.exponents, known)]
    assert matches, f"no group is a power of {known}: {[g.expression for g in result.groups]}"
    return matches[0]


def assert_dimensionless_with_pint(result: GroupsResult) -> None:
    ureg = registry()
    units = {v.name: v.unit for v in result.variables}
    for group in result.groups:
        product = ureg.Quantity(1.0)
        for name, e in group.exponents.items():
            product = product * ureg.Quantity(1.0, units[name]) ** float(e)
        left = {k: x for k, x in dict(product.dimensionality).items() if abs(x) > 1e-12}
        assert not left, f"{group.expression} has dimension {left}"


def dimension_matrix_rows(result: GroupsResult) -> int:
    return len({key for v in result.variables for key in v.dimension})


# --- classical examples ------------------------------------------------------------------------

CASES = {
    # Pressure drop in a rough pipe: Δp/(ρV²) = F(ρVD/μ, ℓ/D, ε/D), 4 groups (F. M. White,
    # Fluid Mechanics, chapter 5; Y. A. Cengel & J. M. Cimbala, Fluid Mechanics, chapter 7;
    # from memory).
    "pipe": (
        PIPE,
        ["ρ", "V", "D"],
        3,
        4,
        [
            {"ρ": r(1), "V": r(1), "D": r(1), "μ": r(-1)},  # Reynolds number
            {"Δp": r(1), "ρ": r(-1), "V": r(-2)},  # pressure coefficient
            {"ε": r(1), "D": r(-1)},  # relative roughness
        ],
    ),
    # Drag on a sphere: F/(ρV²D²) = F(ρVD/μ), drag coefficient and Reynolds number (F. M. White,
    # Fluid Mechanics, chapter 5, from memory).
    "sphere": (
        SPHERE,
        None,
        3,
        2,
        [
            {"F": r(1), "ρ": r(-1), "V": r(-2), "D": r(-2)},
            {"ρ": r(1), "V": r(1), "D": r(1), "μ": r(-1)},
        ],
    ),
    # Simple pendulum: T = 2π√(ℓ/g), the mass drops out (common practice).
    "pendulum": (PENDULUM, None, 3, 1, [{"T": r(1), "g": r(1, 2), "ℓ": r(-1, 2)}]),
    # Spring-mass-damper: ω_n = √(k/m) and ζ = c/(2√(km)) (common practice; e.g. W. T. Thomson,
    # Theory of Vibration with Applications, chapter 2, from memory).
    "oscillator": (
        OSCILLATOR,
        ["m", "k"],
        2,
        2,
        [{"f": r(1), "m": r(1, 2), "k": r(-1, 2)}, {"c": r(1), "k": r(-1, 2), "m": r(-1, 2)}],
    ),
    # Transient conduction with convection: Biot number hL/k and Fourier number αt/L² (F. P.
    # Incropera and D. P. DeWitt, Fundamentals of Heat and Mass Transfer, chapter 5, from memory).
    "conduction": (
        CONDUCTION,
        None,
        3,
        2,
        [{"h": r(1), "L": r(1), "k": r(-1)}, {"α": r(1), "t": r(1), "L": r(-2)}],
    ),
    # Euler-Bernoulli beam: f = (λ²/2π)·√(EI/(mL⁴)), so f·L²·√(m/EI) is a constant for each
    # end pair (common practice; R. D. Blevins, Formulas for Natural Frequency and Mode Shape,
    # chapter 8, from memory).
    "beam": (BEAM, None, 3, 1, [{"f": r(1), "L": r(2), "m": r(1, 2), "EI": r(-1, 2)}]),
    # With E and I apart, the ratio I/L⁴ appears as a second group (same sources).
    "beam E, I": (
        BEAM_E_I,
        None,
        3,
        2,
        [
            {"f": r(1), "L": r(2), "m": r(1, 2), "E": r(-1, 2), "I": r(-1, 2)},
            {"I": r(1), "L": r(-4)},
        ],
    ),
}


@pytest.mark.parametrize("case", list(CASES))
def test_classical_groups(case: str) -> None:
    spec, repeating, rank, count, known = CASES[case]
    result = groups_of(spec, repeating=repeating)
    assert result.rank == rank
    assert len(result.groups) == count == len(spec) - rank
    assert [g.symbol for g in result.groups] == [f"Π{i + 1}" for i in range(count)]
    for group_exponents in known:
        if case == "beam E, I" and "E" in group_exponents:
            # f·L²·√(m/(E·I)) is a product of two of our groups, not one of them alone.
            assert in_span(group_exponents, result)
        else:
            find_power_of(result, group_exponents)
    assert_dimensionless_with_pint(result)


def in_span(exponents: dict[str, sp.Rational], result: GroupsResult) -> bool:
    names = [v.name for v in result.variables]
    basis = sp.Matrix([[g.exponents.get(n, 0) for n in names] for g in result.groups]).T
    target = sp.Matrix([exponents.get(n, 0) for n in names])
    try:
        basis.gauss_jordan_solve(target)
    except ValueError:
        return False
    return True


def test_pipe_reynolds_group_with_rho_v_d_repeating() -> None:
    result = groups_of(PIPE, repeating=["ρ", "V", "D"])
    assert result.repeating == ("ρ", "V", "D")
    reynolds = find_power_of(result, {"ρ": r(1), "V": r(1), "D": r(1), "μ": r(-1)})
    assert reynolds.expression == "μ/(ρ·V·D)"
    assert [g.expression for g in result.groups] == ["Δp/(ρ·V²)", "ℓ/D", "μ/(ρ·V·D)", "ε/D"]


def test_pendulum_mass_drops_out() -> None:
    (group,) = groups_of(PENDULUM).groups
    assert "M" not in group.exponents
    assert group.expression == "T·√(g/ℓ)"


def test_oscillator_expressions() -> None:
    result = groups_of(OSCILLATOR, repeating=["m", "k"])
    assert [g.expression for g in result.groups] == ["f·√(m/k)", "c/√(k·m)"]


def test_conduction_rank_below_base_dimensions() -> None:
    result = groups_of(CONDUCTION)
    assert dimension_matrix_rows(result) == 4  # mass, length, time, temperature
    assert result.rank == 3 < dimension_matrix_rows(result)
    assert [g.expression for g in result.groups] == ["h·L/k", "α·t/L²"]


def test_beam_group_expression_and_preferred_choice() -> None:
    result = groups_of(BEAM)
    assert result.repeating == ("L", "EI", "m")
    (group,) = result.groups
    assert group.exponents == {"f": 1, "L": 2, "EI": r(-1, 2), "m": r(1, 2)}
    assert group.expression == "f·L²·√(m/EI)"


def test_root_notation_for_other_fractions() -> None:
    # A length and a volume: d/∛V (common practice: a cube root of a volume is a length).
    (group,) = groups_of([("d", "m"), ("V", "m^3")]).groups
    assert group.exponents == {"d": 1, "V": r(-1, 3)}
    assert group.expression == "d/∛V"


def test_dimensionless_variables_are_their_own_groups() -> None:
    result = groups_of([("ν", "1"), ("ζ", "percent")])
    assert result.rank == 0 and result.repeating == ()
    assert [g.expression for g in result.groups] == ["ν", "ζ"]


# --- exactness and dimensionlessness -------------------------------------------------------------


@pytest.mark.parametrize("case", list(CASES))
def test_exponents_are_exact_rationals_and_cancel_exactly(case: str) -> None:
    spec, repeating, *_ = CASES[case]
    result = groups_of(spec, repeating=repeating)
    dims = {v.name: v.dimension for v in result.variables}
    for v in result.variables:
        assert all(isinstance(e, sp.Rational) for e in v.dimension.values())
    for group in result.groups:
        assert all(isinstance(e, sp.Rational) for e in group.exponents.values())
        assert all(e != 0 for e in group.exponents.values())
        own = next(iter(group.exponents))
        assert group.exponents[own] == 1 and own not in result.repeating
        assert set(group.exponents) - {own} <= set(result.repeating)
        bases = {key for d in dims.values() for key in d}
        for base in bases:
            assert sum(e * dims[n].get(base, 0) for n, e in group.exponents.items()) == 0


# --- cross-check with pint's Buckingham-Pi helper ------------------------------------------------


def pint_groups(spec: Spec) -> list[dict[str, sp.Rational]]:
    found = pint.pi_theorem(dict(spec), registry())
    return [{n: sp.Rational(x).limit_denominator(1000) for n, x in g.items()} for g in found]


@pytest.mark.parametrize("case", list(CASES))
def test_same_group_space_as_pint(case: str) -> None:
    spec, repeating, *_ = CASES[case]
    ours = groups_of(spec, repeating=repeating)
    theirs = pint_groups(spec)
    assert len(theirs) == len(ours.groups)
    names = [n for n, _ in spec]
    their_rows = sp.Matrix([[g.get(n, 0) for n in names] for g in theirs])
    for group in ours.groups:
        target = sp.Matrix([group.exponents.get(n, 0) for n in names])
        solution, params = their_rows.T.gauss_jordan_solve(target)  # raises if not in the span
        assert params.shape[0] == 0
        assert their_rows.T * solution == target
    our_rows = sp.Matrix([[g.exponents.get(n, 0) for n in names] for g in ours.groups])
    assert our_rows.rank() == len(ours.groups)  # ours are independent, so a basis too


# --- repeating variables -------------------------------------------------------------------------


def test_dependent_repeating_names_the_power() -> None:
    with pytest.raises(InputError) as err:
        groups_of(BEAM_E_I, repeating=["L", "I", "m"])
    assert err.value.key == "--repeat"
    assert "L and I are not independent: I has the dimension of L⁴" in str(err.value)


def test_dependent_repeating_product_of_several() -> None:
    with pytest.raises(InputError) as err:
        groups_of(PIPE, repeating=["ρ", "V", "Δp"])
    assert "ρ, V and Δp are not independent: Δp has the dimension of ρ·V²" in str(err.value)


def test_dimensionless_repeating_refused() -> None:
    with pytest.raises(InputError) as err:
        groups_of(BEAM + [("ν", "1")], repeating=["ν", "L", "m"])
    assert "ν is dimensionless" in str(err.value)


def test_wrong_count_of_repeating() -> None:
    with pytest.raises(InputError) as err:
        groups_of(BEAM_E_I, repeating=["L", "m"])
    assert err.value.key == "--repeat"
    assert "needs 3 repeating variables, got 2" in str(err.value)


def test_unknown_repeating_name() -> None:
    with pytest.raises(InputError) as err:
        groups_of(BEAM, repeating=["L", "Ei", "m"])
    assert err.value.key == "--repeat"
    assert err.value.value == "Ei"
    assert "did you mean EI?" in str(err.value)


def test_repeated_repeating_name() -> None:
    with pytest.raises(InputError, match="L is given twice") as err:
        groups_of(BEAM, repeating=["L", "L", "m"])
    assert err.value.key == "--repeat"


def test_first_variable_avoided_unless_needed() -> None:
    assert "f" not in groups_of(BEAM_E_I).repeating
    assert groups_of(BEAM_E_I).repeating == ("L", "m", "E")
    # Only the first variable carries time, so it must repeat.
    result = groups_of([("V", "m/s"), ("L", "m"), ("x", "m")])
    assert set(result.repeating) == {"L", "V"}
    assert [g.expression for g in result.groups] == ["x/L"]


def test_automatic_choice_is_deterministic() -> None:
    for spec in (BEAM, BEAM_E_I, PIPE, CONDUCTION):
        first, second = groups_of(spec), groups_of(spec)
        assert first == second
        assert [g.expression for g in first.groups] == [g.expression for g in second.groups]


def test_preferred_is_a_parameter() -> None:
    result = groups_of(OSCILLATOR, preferred=("k", "m"))
    assert result.repeating == ("k", "m")
    assert [g.expression for g in result.groups] == ["f·√(m/k)", "c/√(k·m)"]


# --- values ------------------------------------------------------------------------------------


def test_beam_group_value_by_hand() -> None:
    values = {"f": 10.0, "L": 2.0, "EI": 1000.0, "m": 5.0}
    (group,) = groups_of(BEAM, values=values).groups
    # By hand: 10 * 2² * √(5/1000) = 40 * √0.005 = 2√2.
    assert group.value == pytest.approx(2.0 * math.sqrt(2.0), rel=1e-14)


def test_values_in_the_units_given() -> None:
    spec = [("f", "Hz"), ("L", "mm"), ("EI", "kN*m^2"), ("m", "kg/m")]
    values = {"f": 10.0, "L": 2000.0, "EI": 1.0, "m": 5.0}
    (group,) = groups_of(spec, values=values).groups
    assert group.value == pytest.approx(2.0 * math.sqrt(2.0), rel=1e-12)


def test_partial_values_leave_other_groups_empty() -> None:
    result = groups_of(BEAM_E_I, values={"I": 16.0, "L": 2.0})
    assert [g.value for g in result.groups] == [None, pytest.approx(1.0)]
    assert all(g.value is None for g in groups_of(BEAM_E_I).groups)


@pytest.mark.parametrize(
    ("values", "key", "text"),
    [
        ({"Q": 1.0}, "Q", "the name of a listed variable"),
        ({"L": True}, "L", "a number"),
        ({"L": math.inf}, "L", "a finite number"),
        ({"f": 1.0, "L": 1.0, "EI": 1.0, "m": -5.0}, "m", "a positive value"),
        ({"f": 1.0, "L": 1.0, "EI": 0.0, "m": 5.0}, "EI", "a non-zero value"),
    ],
)
def test_bad_values(values: dict[str, float], key: str, text: str) -> None:
    with pytest.raises(InputError, match=text) as err:
        groups_of(BEAM, values=values)
    assert err.value.key == key


# --- bad variable lists --------------------------------------------------------------------------


def test_duplicate_names() -> None:
    with pytest.raises(InputError) as err:
        pi_groups(build([("L", "m"), ("f", "Hz"), ("L", "mm")]))
    assert err.value.key == "L"


def test_unknown_unit() -> None:
    with pytest.raises(InputError, match="unknown unit") as err:
        variable("L", "metres_of_nothing")
    assert err.value.key == "L"


@pytest.mark.parametrize("unit", ["1000*m", "m^1e9", "m^(2/3)^(3/2)", "", "m)(", "m*", "m(", "*"])
def test_bad_unit_text(unit: str) -> None:
    with pytest.raises(InputError) as err:
        variable("L", unit)
    assert err.value.key == "L"


def test_offset_temperature_refused() -> None:
    with pytest.raises(InputError, match="delta_degC"):
        variable("T", "degC")


def test_dimension_must_match_unit() -> None:
    with pytest.raises(InputError) as err:
        pi_groups([Variable("L", "m", {"[mass]": 1}), variable("D", "m")])
    assert err.value.key == "L"


@pytest.mark.parametrize("spec", [[("L", "m")], [("f", "Hz"), ("L", "m")], []])
def test_no_group(spec: Spec) -> None:
    with pytest.raises(InputError, match="a list that admits a dimensionless group") as err:
        groups_of(spec)
    assert err.value.key == "variables"
    assert "rank" in str(err.value)


def test_fractional_unit_powers_are_exact() -> None:
    assert variable("x", "m^(1/3)").dimension == {"[length]": r(1, 3)}
    assert variable("y", "m^0.5*s").dimension == {"[length]": r(1, 2), "[time]": r(1)}


# --- parse_variables -----------------------------------------------------------------------------


def test_parse_variables() -> None:
    items = ["f=Hz", " L = m ", "EI=N*m^2", "ρ=kg/m^3", "c_2=N*s/m"]
    assert parse_variables(items) == [
        ("f", "Hz"),
        ("L", "m"),
        ("EI", "N*m^2"),
        ("ρ", "kg/m^3"),
        ("c_2", "N*s/m"),
    ]


@pytest.mark.parametrize(
    ("item", "text"),
    [
        ("L", "the '=' is missing"),
        ("L=m=s", "give one '=' per item"),
        ("=m", "the name is empty"),
        ("2L=m", "a name is made of"),
        ("_L=m", "a name is made of"),
        ("L-1=m", "a name is made of"),
        ("L=", "the unit is empty"),
    ],
)
def test_parse_variables_syntax_errors(item: str, text: str) -> None:
    with pytest.raises(InputError, match=text) as err:
        parse_variables([item])
    assert err.value.key == item


def test_parse_variables_duplicate() -> None:
    with pytest.raises(InputError, match="L is given twice") as err:
        parse_variables(["L=m", "f=Hz", "L=mm"])
    assert err.value.key == "L"


# --- module weight -------------------------------------------------------------------------------


def test_import_is_light() -> None:
    code = "import sys, calc.groups; print('sympy' in sys.modules, 'pint' in sys.modules)"
    root = Path(__file__).resolve().parents[2]
    out = subprocess.run(
        [sys.executable, "-c", code], cwd=root, capture_output=True, text=True, check=True
    )
    assert out.stdout.split() == ["False", "False"]
