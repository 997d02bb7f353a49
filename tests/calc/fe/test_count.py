"""The independent mode count: inertia of K - lambda M against a plain eigenvalue count.

Sylvester's law of inertia (common practice; K. J. Bathe, Finite Element Procedures, 1996,
section 11.4.3, the Sturm sequence property) is checked against scipy.linalg.eigh of the
same matrices, and a solver that skips a mode is caught and reported.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.linalg

from beamtone.calc import fe
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import InnerSupport, Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section

ROD = build_section("round", {"diameter": 0.02})
STEEL = LIBRARY["steel"]

MEMBERS = [
    Member((Segment(1.0, STEEL, ROD),), "free", "free", masses=(PointMass(0.3, 0.4, 1e-3),)),
    Member((Segment(1.2, STEEL, ROD),), "clamped", "pinned", springs=(Spring(0.5, 2e4),)),
    Member(
        (Segment(2.0, STEEL, ROD),),
        "pinned",
        "pinned",
        inner_supports=(InnerSupport(1.0, "clamped"),),  # two equal spans: repeated modes
    ),
    Member((Segment(1.0, STEEL, ROD),), "clamped", "free", masses=(PointMass(1e-7, 3.0, 0.1),)),
]


@pytest.mark.parametrize("member", MEMBERS)
def test_inertia_count_matches_the_eigenvalues(member: Member) -> None:
    system = fe.assemble(member, fe.build_mesh(member, 30))
    lam = scipy.linalg.eigh(system.K.toarray(), system.M.toarray(), eigvals_only=True)
    for sigma in np.geomspace(lam[lam > 1e-6 * lam.max()][0] * 0.5, lam[20], 9):
        if np.min(np.abs(lam - sigma)) < 1e-9 * sigma:
            continue
        assert fe.count_below(system.K, system.M, sigma) == int(np.sum(lam < sigma))


@pytest.mark.parametrize("member", MEMBERS)
def test_every_solve_reports_its_count(member: Member) -> None:
    result = fe.solve(member, 5)
    count = result.mode_count
    assert count is not None and count.ok
    assert (
        count.found
        == result.rigid_body_modes
        + 4
        + sum(
            abs(m.frequency_hz - result.modes[-1].frequency_hz) > 1e-6 * m.frequency_hz
            for m in result.modes[4:]
        )
        or count.found >= result.rigid_body_modes + 4
    )
    assert count.below_hz < result.modes[-1].frequency_hz
    assert "none skipped" in count.describe()


def test_a_skipped_mode_is_found_and_reported() -> None:
    """A solver that drops the second mode: the count finds it missing and says so."""

    def skipping(K: object, M: object, count: int, shift: float) -> tuple[np.ndarray, np.ndarray]:
        vals, vecs = fe.default_eigensolver(K, M, count + 1, shift)  # type: ignore[arg-type]
        keep = [i for i in range(count + 1) if i != 1]
        return vals[keep], vecs[:, keep]

    member = MEMBERS[1]
    result = fe.solve(member, 3, eigensolver=skipping)
    assert result.mode_count is not None and not result.mode_count.ok
    assert result.mode_count.counted == result.mode_count.found + 1
    assert any("missing" in w for w in result.warnings)
