"""Fuzzing the quantity parser: any text raises only InputError with a one-line message, or
gives a finite value.
"""

from __future__ import annotations

import math

from hypothesis import given, settings
from hypothesis import strategies as st

from beamtone.calc.errors import InputError
from beamtone.calc.units import LENGTH, PRESSURE, STIFFNESS, parse_quantity
from tests.fuzz import EXAMPLES

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
