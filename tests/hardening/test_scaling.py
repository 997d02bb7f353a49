"""Thousands of attachments and hundreds of inner supports, each in a fresh process under a
time bound (issue 21, "the whole analysis scales like the finite-element solve").

Reproduced first: the whole analysis at 5,000 attachments took 13-16x the finite-element
solve (a pure-Python band inverse and per-probe work in Dunkerley's sum); 300 inner supports
took 73 s in one Euler-Bernoulli solve and 1,000 did not finish in ten minutes (ARPACK about
a shift far below a clustered spectrum); a worksheet of 5,000 entries took 1.5-4 s to load.
The time bounds are generous (a loaded two-core machine): they catch a hang or a return to
minutes, never a speed goal, which the benchmarks measure (benchmarks/run.py).
"""

from __future__ import annotations

import json
import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from beamtone.calc import fe, rayleigh
from beamtone.calc.fe import eigen
from beamtone.calc.worksheet import loads
from tests.hardening.bounded import beamtone, python
from tests.reference import reference_file

_HEAD = """format = 1
title = "{title}"
[member]
length = "{length} m"
material = "steel"
section = {{ shape = "round-tube", outside_diameter = "60 mm", wall = "4 mm" }}
{theory}
[supports]
left = "pinned"
right = "pinned"
"""


def spans_text(supports: int, length: float, theory: str = "") -> str:
    """A steel tube over ``supports + 1`` equal pinned spans (a scenario of our own)."""
    parts = [_HEAD.format(title="spans", length=length, theory=theory)]
    for k in range(supports):
        at = length * (k + 1) / (supports + 1)
        parts.append(f'[[supports.inner]]\nat = "{at:.12g} m"\nkind = "pinned"\n')
    return "".join(parts)


def attachments_text(count: int, rotary: bool = False) -> str:
    """A 10 m pinned tube with ``count`` masses and springs in turn (as the benchmark)."""
    parts = [_HEAD.format(title="attachments", length=10, theory="")]
    for k in range(count):
        at = 10.0 * (k + 1) / (count + 1)
        if k % 2 == 0:
            inertia = 'rotary_inertia = "0.001 kg*m^2"\n' if rotary else ""
            parts.append(f'[[mass]]\nat = "{at:.9g} m"\nmass = "0.05 kg"\n{inertia}')
        else:
            parts.append(f'[[spring]]\nat = "{at:.9g} m"\nstiffness = "500 N/m"\n')
    return "".join(parts)


def _pinned_parameters() -> tuple[float, float]:
    """lambda_1 of a pinned-pinned and of a clamped-pinned single span (Blevins, Table 8-1)."""
    rows = {}
    for line in reference_file("uniform-beam-frequency-parameters.csv").read_text().splitlines():
        if line and not line.startswith(("#", "end_a")):
            cells = line.split(",")
            rows[(cells[0], cells[1])] = float(cells[3])
    return rows[("pinned", "pinned")], rows[("clamped", "pinned")]


@pytest.mark.parametrize("supports", [100, 1000])
def test_many_equal_spans_meet_the_exact_band(tmp_path: Path, supports: int) -> None:
    """N equal pinned spans: the lowest N frequencies lie between the single span's
    pinned-pinned and pinned-clamped values, and the lowest is the pinned-pinned one,
    lambda^2/(2 pi l^2) sqrt(EI/(rho A)) (common practice; lambda from R. D. Blevins,
    Formulas for Natural Frequency and Mode Shape, 1979, Table 8-1).  Each within the
    solver's own error estimate, found by the clustered method, in seconds not minutes."""
    length = supports / 10.0  # 0.1 m spans
    sheet = tmp_path / "spans.toml"
    sheet.write_text(spans_text(supports, length, 'theory = "euler-bernoulli"'), "utf-8")
    done = beamtone("solve", str(sheet), "--json", timeout=240)
    assert done.returncode == 0, done.stderr
    out = json.loads(done.stdout)
    modes = out["modes"]
    member = loads(sheet.read_text("utf-8")).member
    segment = member.segments[0]
    span = length / (supports + 1)
    scale = math.sqrt(segment.bending_stiffness / segment.mass_per_length) / (2 * math.pi)
    pinned, clamped = _pinned_parameters()
    low, high = (lam**2 / span**2 * scale for lam in (pinned, clamped))
    first = modes[0]
    assert first["frequency_hz"] == pytest.approx(low, rel=max(first["estimated_error"], 1e-9))
    for mode in modes:
        tol = mode["estimated_error"] * mode["frequency_hz"]
        assert low - tol <= mode["frequency_hz"] <= high + tol
    assert "clustered" in done.stdout  # the method that ran names itself


def test_the_solver_table_picks_the_clustered_method() -> None:
    member = replace(loads(spans_text(100, 10.0)).member, theory="euler-bernoulli")
    system = fe.assemble(member, fe.build_mesh(member, 1200))
    assert system.K.shape[0] >= eigen.CLUSTER_MIN_DOFS
    shift = -fe.shift_below(member)
    assert eigen.method_for(system.K.shape[0], 5, close=True) == "clustered"
    assert eigen.clustered(system.K, system.M, 5, shift)
    pairs = eigen.default_eigensolver(system.K, system.M, 5, shift)
    assert pairs.solver == eigen.SOLVERS["clustered"].name
    # the same pencil by the plain method, about the far shift: the same eigenvalues
    plain = eigen.SOLVERS["arpack"].values(system.K, system.M, 5, shift)
    np.testing.assert_allclose(pairs[0], plain, rtol=1e-10)


def test_an_ordinary_member_keeps_the_plain_method() -> None:
    member = loads(attachments_text(300)).member
    system = fe.assemble(member, fe.build_mesh(member, 200))
    assert not eigen.clustered(system.K, system.M, 5, -fe.shift_below(member))
    assert fe.solve(member, 5).solver == eigen.SOLVERS["arpack"].name


@pytest.mark.parametrize("count", [40, 301])
def test_dunkerley_matches_dense_flexibility(count: int) -> None:
    """The banded selected inverse against a dense inverse of the same matrices (numpy)."""
    member = loads(attachments_text(count, rotary=True)).member
    mesh = fe.mesh_through(member, np.linspace(0.1, 9.9, 50))
    system = fe.assemble(member, mesh)
    nodes = np.arange(len(mesh.x))
    probes = rayleigh._observer(system)[np.concatenate([2 * nodes, 2 * nodes + 1])].tocsr()
    probes.eliminate_zeros()
    probes = probes[np.diff(probes.indptr) > 0]
    banded = rayleigh._flexibilities(system.K, probes)
    dense = probes.toarray()
    expected = np.einsum("ij,ji->i", dense, np.linalg.solve(system.K.toarray(), dense.T))
    np.testing.assert_allclose(banded, expected, rtol=1e-9)
    by_solves = rayleigh._flexibilities_by_solves(system.K, probes)
    np.testing.assert_allclose(by_solves, expected, rtol=1e-9)


def test_five_thousand_attachments_in_bounded_time_and_memory(tmp_path: Path) -> None:
    """The whole analysis of 5,000 attachments: finishes, and its peak memory stays far from
    a dense n x probes array (2,500 masses once asked for 7.4 GB)."""
    sheet = tmp_path / "many.toml"
    sheet.write_text(attachments_text(5000), "utf-8")
    code = (
        "import resource, sys\n"
        "from beamtone.calc import analyse, load\n"
        "a = analyse(load(sys.argv[1]))\n"
        "print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)\n"
    )
    done = python(code, str(sheet), timeout=240)
    assert done.returncode == 0, done.stderr
    assert int(done.stdout.split()[-1]) < 1_500_000  # kB: 1.5 GB


def test_a_worksheet_of_five_thousand_entries_loads(tmp_path: Path) -> None:
    sheet = tmp_path / "many.toml"
    sheet.write_text(attachments_text(5000), "utf-8")
    code = (
        "import sys\nfrom beamtone.calc import load\n"
        "s = load(sys.argv[1])\nprint(len(s.member.masses), len(s.member.springs))\n"
    )
    done = python(code, str(sheet), timeout=60)
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == ["2500", "2500"]


def test_the_app_draws_a_thousand_inner_supports(tmp_path: Path) -> None:
    """The app opens a worksheet of 1,000 inner supports and shows its results (before: it
    never drew; then 76 s on a quiet two-core machine, nearly all of it textual mounting the
    form's fields for 1,000 supports).  The form now builds the first rows of a list and a
    button for more (tests/tui/test_long_lists.py): 7.5 s on the quiet machine.  Headless, in
    a fresh process under a time bound that catches a return to minutes."""
    sheet = tmp_path / "spans.toml"
    sheet.write_text(spans_text(1000, 100.0), "utf-8")
    code = (
        "import asyncio, sys\n"
        "from pathlib import Path\n"
        "from beamtone.tui.app import BeamtoneApp\n"
        "from tests.tui.driving import settled\n"
        "async def main():\n"
        "    app = BeamtoneApp(Path(sys.argv[1]))\n"
        "    async with app.run_test(size=(100, 40)) as pilot:\n"
        "        view = await settled(pilot, app)\n"
        "        print(view.state, view.analysis.modes.modes[0].frequency_hz)\n"
        "asyncio.run(main())\n"
    )
    done = python(code, str(sheet), timeout=180)
    assert done.returncode == 0, done.stderr
    state, frequency = done.stdout.split()
    member = loads(sheet.read_text("utf-8")).member
    assert state == "current"
    assert float(frequency) == pytest.approx(fe.solve(member, 1).frequencies_hz[0], rel=1e-6)
