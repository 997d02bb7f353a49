"""The calculation record's data from the library: the element matrices it shows are the
finite-element code's own."""

from __future__ import annotations

from typing import Any

import pytest


def test_element_matrices_shown_are_the_fe_code_s() -> None:
    """Hermite cubic beam element: stiffness, consistent mass and geometric stiffness as in
    Przemieniecki, Theory of Matrix Structural Analysis, 1968, chapters 5 and 11 (common
    practice; the entries are written here from memory of that standard form)."""
    from beamtone.calc.report import element_matrix_lines

    assert element_matrix_lines() == (
        "K_e = EI/h^3 [[12, 6h, -12, 6h], [6h, 4h^2, -6h, 2h^2],",
        "              [-12, -6h, 12, -6h], [6h, 2h^2, -6h, 4h^2]]",
        "M_e = m h/420 [[156, 22h, 54, -13h], [22h, 4h^2, 13h, -3h^2],",
        "               [54, 13h, 156, -22h], [-13h, -3h^2, -22h, 4h^2]]",
        "G_e = P/(30h) [[36, 3h, -36, 3h], [3h, 4h^2, -3h, -h^2],",
        "               [-36, -3h, 36, -3h], [3h, -h^2, -3h, 4h^2]]",
    )


def test_element_matrices_follow_the_fe_code(monkeypatch: pytest.MonkeyPatch) -> None:
    """The formulas are read from the finite-element code, not typed: a changed element
    matrix shows in the report."""
    from beamtone.calc import fe
    from beamtone.calc.report import element_matrix_lines

    real = fe.element_matrices

    def changed(h: float, EI: float, m: float, P: float = 0.0) -> Any:
        k, g, mm = real(h, EI, m, P)
        k = k.copy()
        k[0, 0] *= 2.0
        return k, g, mm

    monkeypatch.setattr(fe, "element_matrices", changed)
    assert element_matrix_lines()[0].startswith("K_e = EI/h^3 [[24, 6h,")
