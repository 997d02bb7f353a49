"""Many attachments scale like the mesh (issue 21): structural checks, never timed.

A long run of closely spaced attachments (each closer than ATTACHMENT_TOLERANCE to the next)
is one cluster of tethers; a chain through all of it made the tie matrix, and with it K and M,
fill in with the square of the number of attachments.  The member is a scenario of our own.
"""

from __future__ import annotations

import numpy as np
import pytest

from beamtone.calc import fe
from beamtone.calc.fe import mesh as fe_mesh
from beamtone.calc.materials import LIBRARY
from beamtone.calc.model import Member, PointMass, Segment
from beamtone.calc.sections import build_section

TUBE = build_section("round-tube", {"outside_diameter": 0.06, "wall": 0.004})


def _run_of_masses(count: int) -> Member:
    """A 10 m pinned steel tube with ``count`` 50 g masses 5 mm apart (0.5e-3 of the length)."""
    xs = 1.0 + 0.005 * np.arange(count)
    return Member(
        (Segment(10.0, LIBRARY["steel"], TUBE),),
        "pinned",
        "pinned",
        tuple(PointMass(float(x), 0.05) for x in xs),
    )


def _chain_depth(mesh: fe.Mesh) -> int:
    assert mesh.tether is not None
    deepest = 0
    for j in np.flatnonzero(mesh.tether >= 0):
        depth, k = 0, int(j)
        while mesh.tether[k] >= 0:
            k, depth = int(mesh.tether[k]), depth + 1
        deepest = max(deepest, depth)
    return deepest


@pytest.mark.parametrize("count", [100, 1000])
def test_tie_matrix_has_o_of_n_nonzeros(count: int) -> None:
    member = _run_of_masses(count)
    mesh = fe.build_mesh(member, 40)
    system = fe.assemble(member, mesh)
    assert system.T is not None and len(system.tethers) > count // 2  # the run is tethered
    assert _chain_depth(mesh) <= fe_mesh.CHAIN_STATIONS - 1
    # a row holds its node's chain only: w rows at most (depth+1)(depth+2)/2 + depth + 1
    # entries before duplicates are summed, theta rows depth + 1
    d = fe_mesh.CHAIN_STATIONS
    assert system.T.nnz <= system.n_full * (d * (d + 1) // 2 + d)
    assert system.K.nnz <= 40 * system.K.shape[0]
    assert system.M.nnz <= 40 * system.M.shape[0]


def test_observe_entries_are_the_observed_rows() -> None:
    member = _run_of_masses(60)
    mesh = fe.build_mesh(member, 40)
    system = fe.assemble(member, mesh)
    for node in range(len(mesh.x)):
        dense = system.observe(node)
        for k, (index, values) in enumerate(system.observe_entries(node)):
            assert np.array_equal(np.flatnonzero(dense[k]), index)
            assert np.array_equal(dense[k][index], values)


def test_a_short_cluster_is_one_chain_as_before() -> None:
    """A cluster of CHAIN_STATIONS stations is not cut: every attachment tethered in a chain."""
    count = fe_mesh.CHAIN_STATIONS - 1  # plus the pin the run starts from
    xs = 0.005 * np.arange(1, count + 1)
    member = Member(
        (Segment(10.0, LIBRARY["steel"], TUBE),),
        "pinned",
        "pinned",
        tuple(PointMass(float(x), 0.05) for x in xs),
    )
    mesh = fe.build_mesh(member, 40)
    assert int(np.sum(mesh.tether >= 0)) == count
    assert _chain_depth(mesh) == count


def test_cutting_the_chain_keeps_the_frequencies(monkeypatch: pytest.MonkeyPatch) -> None:
    """The same member with one chain through the whole run (the cut turned off) gives the
    same frequencies: both are exact changes of unknowns of meshes through the same stations,
    so they agree within the solver's error estimate (common practice: the estimate bounds
    the discretisation error, checked against exact references in test_attachments.py)."""
    member = _run_of_masses(200)
    cut = fe.solve(member, 4)
    monkeypatch.setattr(fe_mesh, "CHAIN_STATIONS", 10**6)
    whole = fe.solve(member, 4)
    assert _chain_depth(fe.build_mesh(member, 40)) == 199
    for a, b, mode in zip(cut.frequencies_hz, whole.frequencies_hz, cut.modes, strict=True):
        assert a == pytest.approx(b, rel=max(2 * mode.estimated_error, 1e-9))


def test_a_run_too_close_to_cut_stays_one_chain(monkeypatch: pytest.MonkeyPatch) -> None:
    """Seven masses 1e-6 of the length apart: no gap is wide enough for an ordinary element
    (CUT_GAP), so the run stays one chain and solves as the uncut chain does, bit for bit."""
    member = Member(
        (Segment(10.0, LIBRARY["steel"], TUBE),),
        "pinned",
        "pinned",
        tuple(PointMass(3.0 + 1e-5 * k, 1.0) for k in range(7)),
    )
    mesh = fe.build_mesh(member, 40)
    assert _chain_depth(mesh) == 6
    cut = fe.solve(member, 3)
    monkeypatch.setattr(fe_mesh, "CHAIN_STATIONS", 10**6)
    whole = fe.solve(member, 3)
    assert np.array_equal(cut.frequencies_hz, whole.frequencies_hz)
