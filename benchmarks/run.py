"""beamtone benchmarks: measured against the goals, printed, and written to a results file.

    python benchmarks/run.py            # full run, writes benchmarks/results.md
    python benchmarks/run.py --quick    # smoke run (what CI does), writes nowhere by default

Each line gives the median of several runs, the goal where one is set, and whether it is met.
Benchmarks are never timed tests: the suite does not fail on speed.
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import sys
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
# as the command line and the app do: BLAS single-threaded for these small banded matrices
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

TEN_ATTACHMENTS = """
[[mass]]
at = "0.1 m"
mass = "0.3 kg"
[[mass]]
at = "0.3 m"
mass = "0.3 kg"
[[mass]]
at = "0.5 m"
mass = "0.3 kg"
[[mass]]
at = "0.7 m"
mass = "0.3 kg"
[[mass]]
at = "0.9 m"
mass = "0.3 kg"
[[spring]]
at = "0.2 m"
stiffness = "3 kN/m"
[[spring]]
at = "0.4 m"
stiffness = "3 kN/m"
[[spring]]
at = "0.6 m"
stiffness = "3 kN/m"
[[spring]]
at = "0.8 m"
stiffness = "3 kN/m"
[[spring]]
at = "1.0 m"
stiffness = "3 kN/m"
"""


def ten_attachment_text() -> str:
    """The sensor mast with ten more attachments (eleven in all): the 'typical' worksheet."""
    return (ROOT / "worksheets" / "sensor-mast.toml").read_text() + TEN_ATTACHMENTS


def median_time(fn: Callable[[], object], repeat: int) -> float:
    """Median wall time of ``repeat`` calls [s] after one warm-up call."""
    fn()
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def interleaved_medians(fns: list[Callable[[], object]], repeat: int) -> list[float]:
    """Median wall times [s] of several calls timed in turn, so all see the same machine."""
    for fn in fns:
        fn()
    times: list[list[float]] = [[] for _ in fns]
    for _ in range(repeat):
        for fn, out in zip(fns, times, strict=True):
            start = time.perf_counter()
            fn()
            out.append(time.perf_counter() - start)
    return [statistics.median(t) for t in times]


def bench_solves(repeat: int) -> list[tuple[str, float, float | None]]:
    from beamtone.calc.analysis import analyse
    from beamtone.calc.worksheet import load, loads

    rows = []
    for path in sorted((ROOT / "worksheets").glob("*.toml")):
        sheet = load(path)
        rows.append(
            (
                f"warm solve, all methods: {path.name}",
                median_time(lambda s=sheet: analyse(s), repeat),
                None,
            )
        )
    text = ten_attachment_text()
    rows.append(("warm load + solve, 11 attachments (the app's refresh)",
                 median_time(lambda: analyse(loads(text)), repeat), None))  # fmt: skip
    return rows


def _run_seconds(command: list[str], env: dict[str, str] | None = None) -> float:
    import subprocess

    start = time.perf_counter()
    subprocess.run(
        command, check=True, cwd=ROOT, env=env, stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
    )  # fmt: skip
    return time.perf_counter() - start


def compile_project() -> None:
    """Write the project's bytecode, as an installed package has it.

    numpy, scipy and pint start from the bytecode pip wrote when it installed them; an
    editable checkout run with PYTHONDONTWRITEBYTECODE set would instead compile beamtone's
    own sources on every start, and the cold comparison would measure the compiler.
    """
    import compileall

    for package in ("beamtone", "calc", "cli", "tui"):
        compileall.compile_dir(str(ROOT / package), quiet=1)


def bench_cold(runs: int) -> list[tuple[str, float, float | None, str]]:
    """Cold ``beamtone solve --json`` per example against the bare numeric imports.

    A cold run is a new process on a machine where beamtone has run before: its cache of
    pint's and sympy's answers (calc.diskcache) holds this worksheet's units and shapes.
    The very first run, with empty caches, is reported beside it without a goal.
    """
    import tempfile

    compile_project()
    python = sys.executable
    bare = [python, "-c", "import numpy, scipy.linalg, pint"]
    rows: list[tuple[str, float, float | None, str]] = []
    cli = [python, "-m", "beamtone.cli.main", "solve"]
    with tempfile.TemporaryDirectory(prefix="beamtone-bench-") as scratch:
        kept = {**os.environ, "BEAMTONE_CACHE": str(Path(scratch) / "kept")}
        for path in sorted((ROOT / "worksheets").glob("*.toml")):
            command = [*cli, str(path), "--json"]
            _run_seconds(command, kept)  # this worksheet's units and shapes, as after any use
            cli_times, bare_times, first_times = [], [], []
            for i in range(runs):  # interleaved, so all see the same machine state
                bare_times.append(_run_seconds(bare))
                cli_times.append(_run_seconds(command, kept))
                empty = {**os.environ, "BEAMTONE_CACHE": str(Path(scratch) / f"empty-{i}")}
                first_times.append(_run_seconds(command, empty))
            base = statistics.median(bare_times)
            rows.append(
                (
                    f"cold solve --json / bare import of numpy, scipy.linalg, pint: {path.name}",
                    statistics.median(cli_times) / base,
                    1.5,
                    "ratio",
                )
            )
            rows.append((f"  the same, first run with empty caches: {path.name}",
                         statistics.median(first_times) / base, None, "ratio"))  # fmt: skip
    return rows


def bench_warm_ratio(repeat: int) -> list[tuple[str, float, float | None, str]]:
    """Warm fe.solve of the typical worksheet against the bare eigen solve it needs.

    The goal is set against scipy's sparse eigen solver run bare on the converged matrices
    (shift-invert about the solver's own shift, scipy's defaults otherwise); beside it, the
    same against beamtone's own tuned call of the eigen solver, whose speed-ups shrink the
    denominator too.
    """
    import scipy.sparse.linalg

    from beamtone.calc import fe
    from beamtone.calc.worksheet import loads

    member = loads(ten_attachment_text()).member
    result = fe.solve(member, 5)
    size = result.elements
    mesh = fe.build_mesh(member, size)
    system = fe.assemble(member, mesh)
    shift = -fe.shift_below(member)  # the same shift the solver uses

    def bare() -> None:
        scipy.sparse.linalg.eigsh(system.K.tocsc(), k=5, M=system.M.tocsc(), sigma=shift)

    def own() -> None:
        fe.default_eigensolver(system.K, system.M, 5, shift)

    # interleaved and many times over: a ratio of a few milliseconds is easily skewed
    t_solve, t_bare, t_own = interleaved_medians(
        [lambda: fe.solve(member, 5), bare, own], max(10 * repeat, 20)
    )
    return [
        ("warm fe.solve, 11 attachments, 5 modes, 1e-6 accuracy [s]", t_solve, None, "s"),
        ("warm fe.solve / bare scipy eigsh of its converged matrices", t_solve / t_bare,
         3.0, "ratio"),
        ("  the same, against beamtone's own eigen call on those matrices", t_solve / t_own,
         None, "ratio"),
    ]  # fmt: skip


def bench_directions(repeat: int) -> list[tuple[str, float, float | None, str]]:
    """Every direction (both bending planes, torsion, axial) against the depth plane alone.

    The same worksheet analysed in full (``analyse``) with and without the width plane,
    torsion and axial motion, timed in turn; the goal is at most twice the single-plane
    analysis.  The worst worksheet is an i-beam (its torsion has warping stiffness, a second
    bending solve beside the width plane's).
    """
    from beamtone.calc.analysis import analyse
    from beamtone.calc.worksheet import load, loads

    sheets = [("11 attachments", loads(ten_attachment_text()))]
    sheets += [(p.name, load(p)) for p in sorted((ROOT / "worksheets").glob("*.toml"))]
    rows = []
    for name, sheet in sheets:
        one, every = interleaved_medians(
            [lambda s=sheet: analyse(s, every_direction=False), lambda s=sheet: analyse(s)],
            max(4 * repeat, 10),
        )
        rows.append((f"warm solve, every direction / depth plane alone: {name}", every / one,
                     2.0, "ratio"))  # fmt: skip
    return rows


def bench_theory(repeat: int) -> list[tuple[str, float, float | None, str]]:
    """Timoshenko against Euler-Bernoulli bending (issue 17), on the example worksheets.

    The same worksheet analysed under ``theory = "timoshenko"`` and ``"euler-bernoulli"``
    (``analyse``, timed in turn; goal at most 1.5x).  Both analyses solve each bending plane by
    both theories (the output shows both), so the finite-element solve of the depth plane
    alone, Timoshenko's (three meshes, extrapolated) against Euler-Bernoulli's (two meshes),
    is shown beside it with the same goal.
    """
    from dataclasses import replace

    from beamtone.calc import fe
    from beamtone.calc.analysis import analyse
    from beamtone.calc.worksheet import load

    rows = []
    for path in sorted((ROOT / "worksheets").glob("*.toml")):
        sheet = load(path)
        timo = replace(sheet, member=replace(sheet.member, theory="timoshenko"))
        eb = replace(sheet, member=replace(sheet.member, theory="euler-bernoulli"))
        t_eb, t_timo = interleaved_medians(
            [lambda s=eb: analyse(s), lambda s=timo: analyse(s)], max(2 * repeat, 6)
        )
        rows.append((f"warm solve, Timoshenko / Euler-Bernoulli analysis: {path.name}",
                     t_timo / t_eb, 1.5, "ratio"))  # fmt: skip
        f_eb, f_timo = interleaved_medians(
            [lambda m=eb.member: fe.solve(m, 5), lambda m=timo.member: fe.solve(m, 5)],
            max(4 * repeat, 10),
        )
        rows.append((f"depth-plane FE solve, Timoshenko / Euler-Bernoulli: {path.name}",
                     f_timo / f_eb, 1.5, "ratio"))  # fmt: skip
    return rows


def bench_excitations(repeat: int) -> list[tuple[str, float, float | None, str]]:
    """The margin table and forced response against the same solve without them.

    The example with excitations (two excitations, three lines, a criterion, a force and a
    damping ratio) analysed in full, and the same worksheet with its ``[[excitation]]`` and
    ``[response]`` tables taken out, timed in turn; the goal is at most 10 % more.
    """
    from beamtone.calc.analysis import analyse
    from beamtone.calc.worksheet import from_data, load

    sheet = load(ROOT / "worksheets" / "excitations" / "pump-span.toml")
    bare = {k: v for k, v in sheet.data.items() if k not in ("excitation", "response")}
    plain = from_data(bare)
    without, with_them = interleaved_medians(
        [lambda: analyse(plain), lambda: analyse(sheet)], max(4 * repeat, 10)
    )
    return [("warm solve with margin table and forced response / without: pump span",
             with_them / without, 1.10, "ratio")]  # fmt: skip


def bench_tolerances(
    repeat: int, samples: int, cluster: bool
) -> list[tuple[str, float, float | None, str]]:
    """Tolerance bands and scatter studies (issue 19) on the sensor mast with tolerances.

    First-order bands and sensitivities on top of the plain analysis, against the plain
    analysis, timed in turn: goal at most 1.3x, under the worksheet's default theory
    (Timoshenko, as a user meets it) and under Euler-Bernoulli.  The checked bands of every
    direction (corner solves) against the plain analysis, for information.  A scatter study
    of ``samples`` samples of every direction with the default engine, the worksheet as
    written (goal under 30 s for 10,000), and, with ``cluster``, the same study on a local
    dask cluster: the largest difference of its percentiles, every direction, from the
    local run (goal 0).
    """
    from dataclasses import fields, replace

    from beamtone.calc.analysis import analyse
    from beamtone.calc.band import band
    from beamtone.calc.scatter import scatter
    from beamtone.calc.tolerances import Design
    from beamtone.calc.worksheet import from_data, load

    written = load(ROOT / "worksheets" / "excitations" / "sensor-mast-tolerances.toml")
    rows: list[tuple[str, float, float | None, str]] = []
    for theory in ("default", "euler-bernoulli"):
        sheet = written
        if theory != "default" and "theory" in {f.name for f in fields(sheet.member)}:
            bending = replace(sheet.member, theory=theory)
            sheet = replace(sheet, member=bending, rigid_member=None)
        bare = {k: v for k, v in sheet.data.items() if k != "tolerances"}
        bare["supports"] = {k: v for k, v in bare["supports"].items() if "stiffness" not in k}
        plain = replace(from_data(bare), member=sheet.member)
        design = Design.of(sheet)
        tols = [t for t in sheet.tolerances if t.measure == "value"]

        def first_order(plain=plain, design=design, tols=tols) -> None:  # noqa: ANN001
            a = analyse(plain)
            band(design, a.modes, tols, check=False)

        base, with_bands = interleaved_medians(
            [lambda plain=plain: analyse(plain), first_order], max(4 * repeat, 10)
        )
        what = f"sensor mast, 3 inputs, {sheet.member.theory}"
        rows.append((f"first-order bands and sensitivities / plain analysis: {what}",
                     with_bands / base, 1.3, "ratio"))  # fmt: skip
        if theory == "default":
            checked = median_time(lambda sheet=sheet: analyse(sheet), max(repeat // 2, 2))
            rows.append(("checked bands of every direction (16 corners) / plain analysis: "
                         "sensor mast", checked / base, None, "ratio"))  # fmt: skip
    design = Design.of(written)
    start = time.perf_counter()
    local = scatter(design, written.tolerances, 5, samples)
    took = time.perf_counter() - start
    goal = 30.0 if samples >= 10_000 else None
    rows.append((f"scatter, {samples} samples, 4 inputs, 5 modes of every direction, "
                 f"{written.member.theory} ({local.engine})", took, goal, "s"))  # fmt: skip
    if cluster:
        import numpy as np

        on_dask = scatter(design, written.tolerances, 5, samples, engine="dask", workers=2)
        diff = max(
            float(np.max(np.abs(on_dask.percentiles_of(d) - local.percentiles_of(d))))
            for d in local.directions
        )
        rows.append(("  the same on a local dask cluster: largest percentile difference [Hz]",
                     diff, 0.0, "number"))  # fmt: skip
    return rows


def bench_growth(sizes: list[int]) -> list[tuple[str, float, float | None, str]]:
    """fe.solve time against the number of attachments, with the fitted growth exponent."""
    import numpy as np
    import scipy.linalg

    from beamtone.calc import fe
    from beamtone.calc.materials import LIBRARY
    from beamtone.calc.model import Member, PointMass, Segment, Spring
    from beamtone.calc.sections import build_section

    section = build_section("round-tube", {"outside_diameter": 0.06, "wall": 0.004})
    rows = []
    times = []
    for n in sizes:
        xs = np.linspace(0.0, 10.0, n + 2)[1:-1]
        member = Member(
            (Segment(10.0, LIBRARY["steel"], section),), "pinned", "pinned",
            tuple(PointMass(float(x), 0.05) for x in xs[::2]),
            tuple(Spring(float(x), 500.0) for x in xs[1::2]),
        )  # fmt: skip
        t = median_time(lambda m=member: fe.solve(m, 5), 1 if n >= 1000 else 3)
        times.append(t)
        result = fe.solve(member, 5)
        line = f"fe.solve with {n} attachments ({result.degrees_of_freedom} DOF)"
        if result.degrees_of_freedom <= 2500:
            mesh = fe.build_mesh(member, result.elements)
            system = fe.assemble(member, mesh)
            K, M = system.K.toarray(), system.M.toarray()
            t_dense = median_time(lambda K=K, M=M: scipy.linalg.eigh(K, M), 1)
            line += f"; full dense eigh of the same matrices {t_dense * 1000:.0f} ms"
        rows.append((line, t, None, "s"))
    slope = float(np.polyfit(np.log(sizes[1:]), np.log(times[1:]), 1)[0])
    rows.append((f"growth exponent of solve time, {sizes[1]} to {sizes[-1]} attachments", slope,
                 1.2, "exponent"))  # fmt: skip
    return rows


def attachments_text(n: int) -> str:
    """A 10 m steel tube, pinned at both ends, with n attachments (masses and springs in turn)."""
    parts = ['format = 1\ntitle = "bench"\n[member]\nlength = "10 m"\nmaterial = "steel"\n'
             'section = { shape = "round-tube", outside_diameter = "60 mm", wall = "4 mm" }\n'
             '[supports]\nleft = "pinned"\nright = "pinned"\n']  # fmt: skip
    for k in range(n):
        at = 10.0 * (k + 1) / (n + 1)
        if k % 2 == 0:
            parts.append(f'[[mass]]\nat = "{at:.9g} m"\nmass = "0.05 kg"\n')
        else:
            parts.append(f'[[spring]]\nat = "{at:.9g} m"\nstiffness = "500 N/m"\n')
    return "".join(parts)


def bench_whole_analysis(sizes: list[int]) -> list[tuple[str, float, float | None, str]]:
    """The whole analysis (every method and direction) against the finite-element solve alone.

    A 10 m steel tube, pinned at both ends, with n attachments (masses and springs in turn),
    written as a worksheet and analysed with ``analyse``; its member solved with ``fe.solve``
    for the same modes in the same run is the baseline.  Issue 21: the Rayleigh/Dunkerley
    path built a dense array of unknowns x probes (2,500 point masses: 59 s and 7.4 GB).
    Goal: the analysis stays within 5x the solve it is built on (10x before issue 21's
    vectorized Dunkerley sum; 8x and 13x measured before it, 3.9x and 3.5x after).
    """
    from beamtone.calc import fe
    from beamtone.calc.analysis import analyse
    from beamtone.calc.worksheet import loads

    rows = []
    for n in sizes:
        sheet = loads(attachments_text(n))
        t_fe, t_all = interleaved_medians(
            [lambda s=sheet: fe.solve(s.member, s.modes), lambda s=sheet: analyse(s)], 1
        )
        rows.append((f"whole analysis / fe.solve alone, {n} attachments "
                     f"(fe.solve {t_fe:.2f} s)", t_all / t_fe, 5.0, "ratio"))  # fmt: skip
    return rows


def bench_inner_supports(sizes: list[int]) -> list[tuple[str, float, float | None, str]]:
    """The whole analysis of a tube over many equal pinned spans, in seconds (issue 21).

    A steel tube with n inner supports 0.1 m apart.  Before: 100 inner supports about 26 s,
    300 took 73 s in one Euler-Bernoulli solve and 1,000 did not finish in ten minutes
    (ARPACK about a shift far below a clustered spectrum).  Goal: seconds (10 s).  The
    growth of fe.solve from 100 to 5,000 attachments is the comparison for its size.
    """
    from beamtone.calc.analysis import analyse
    from beamtone.calc.worksheet import loads

    rows = []
    for n in sizes:
        length = n / 10.0
        parts = [f'format = 1\ntitle = "bench"\n[member]\nlength = "{length:g} m"\n'
                 'material = "steel"\n'
                 'section = { shape = "round-tube", outside_diameter = "60 mm", wall = "4 mm" }\n'
                 '[supports]\nleft = "pinned"\nright = "pinned"\n']  # fmt: skip
        for k in range(n):
            at = length * (k + 1) / (n + 1)
            parts.append(f'[[supports.inner]]\nat = "{at:.12g} m"\nkind = "pinned"\n')
        sheet = loads("".join(parts))
        took = median_time(lambda s=sheet: analyse(s), 1)
        rows.append((f"whole analysis, {n} inner supports (every direction, both theories)",
                     took, 10.0, "s"))  # fmt: skip
    return rows


def bench_load(count: int) -> list[tuple[str, float, float | None, str]]:
    """Loading a worksheet of ``count`` attachments against its TOML parse alone (issue 21).

    Before: 5,000 entries took 1.5-4 s, mostly unit parsing.  The baseline is the standard
    library's TOML reader on the same text, in the same run; goal: at most 3x.
    """
    import tomllib

    from beamtone.calc.worksheet import loads

    text = attachments_text(count)
    t_toml, t_load = interleaved_medians([lambda: tomllib.loads(text), lambda: loads(text)], 3)
    return [
        (f"load a worksheet of {count} attachments [s]", t_load, None, "s"),
        (f"  the same / its TOML parse alone (tomllib {t_toml * 1000:.0f} ms)", t_load / t_toml,
         3.0, "ratio"),
    ]  # fmt: skip


def bench_sizing(repeat: int, sweep_points: int) -> list[tuple[str, float, float | None]]:
    """Sizing and sweeps, each as the depth plane alone and as the default (the governing
    modes: every direction solved at each value), with the same goals."""
    from dataclasses import replace

    from beamtone.calc import sizing
    from beamtone.calc.worksheet import load

    spindle = load(ROOT / "worksheets" / "stepped-spindle.toml")
    bar = load(ROOT / "worksheets" / "free-free-bar.toml")
    # groups scale Euler-Bernoulli bending exactly (Timoshenko's depends on slenderness too)
    eb_bar = replace(bar, member=replace(bar.member, theory="euler-bernoulli"))
    mast = load(ROOT / "worksheets" / "sensor-mast.toml")
    side = 100 if sweep_points >= 2000 else 20
    rows = []
    for direction, words in (("depth", "depth plane"), ("governing", "every direction")):
        rows += [
            (f"sizing solve, four attachments (spindle nose diameter for 340 Hz), {words}",
             median_time(lambda d=direction: sizing.size_for_target(
                 spindle, "member.segment[2].section.diameter", 0.02, 0.08, 340.0,
                 direction=d), repeat), 0.3),
            (f"{sweep_points}-point sweep, uniform bar length, {words}"
             + (" (Euler-Bernoulli, scaled by groups)" if direction == "depth" else ""),
             median_time(lambda d=direction: sizing.sweep(
                 eb_bar if d == "depth" else bar, "member.length", 0.3, 1.0, sweep_points,
                 direction=d), 1), 1.0),
            (f"{side}x{side} two-way sweep, mast length x tube diameter, {words}",
             median_time(lambda d=direction: sizing.sweep2(
                 mast, ("member.length", 0.8, 1.6, side),
                 ("member.section.outside_diameter", 0.03, 0.07, side), 3, direction=d), 1),
             5.0),
            (f"{sweep_points}-point sweep with attachments (spindle wheel-hub position), {words}",
             median_time(lambda d=direction: sizing.sweep(
                 spindle, "mass[1].at", 0.41, 0.5, sweep_points, direction=d), 1), 1.0),
        ]  # fmt: skip
    return rows


def bench_app(edits: int) -> list[tuple[str, float, float | None]]:
    import asyncio
    import tempfile

    from beamtone.tui.app import BeamtoneApp
    from beamtone.tui.widgets.debounce import DEBOUNCE

    # a folder of its own: the app keeps an autosave beside the worksheet, and one left from
    # an earlier run would open the recovery question over the workbench
    scratch = tempfile.TemporaryDirectory(prefix="beamtone-bench-")
    path = Path(scratch.name) / "beamtone-bench.toml"
    path.write_text(ten_attachment_text())

    async def scenario() -> tuple[float, list[float]]:
        start = time.perf_counter()
        app = BeamtoneApp(path)
        async with app.run_test(size=(100, 40)) as pilot:
            await _first_results(pilot, app, settled=False)
            first = time.perf_counter() - start
            bench = await _first_results(pilot, app)
            latencies = await _edit_latencies(pilot, bench, 1.2, edits)
        return first, latencies

    first, latencies = asyncio.run(scenario())
    scratch.cleanup()
    return [
        ("app: start to first results (Pilot, headless)", first, 1.5),
        (f"app: edit to refreshed results, median of {edits}, after the "
         f"{DEBOUNCE * 1000:.0f} ms typing pause", statistics.median(latencies), 0.05),
    ]  # fmt: skip


async def _first_results(pilot: Any, app: Any, settled: bool = True) -> Any:
    """Wait until the app shows its first results (with ``settled``, also until the rest of
    the form is built and the solve is done); return its workbench.

    Only the workbench's arrival is polled (every 10 ms, while the app starts); the results
    are awaited on its events, so that no loop waking every millisecond takes the
    interpreter from the solve it times."""
    while True:
        try:
            bench = app.workbench
            break
        except LookupError:
            await pilot.pause(0.01)
    if not bench.solves:
        await bench.results_shown.wait()
    while settled and bench.pending:
        bench.solve_finished.clear()
        if bench.pending:
            await bench.solve_finished.wait()
    return bench


async def _edit_latencies(pilot: Any, bench: Any, length: float, edits: int) -> list[float]:
    """Seconds from each edit of the length [m] to its refreshed results, less the typing
    pause (DEBOUNCE).

    The end is awaited on the workbench's ``results_shown`` event, never polled: a loop
    waking every millisecond takes the interpreter from the solve's worker thread and made
    the very solve it timed half as slow again (42 ms alone, 66 ms beside such a loop).
    """
    from textual.widgets import Input

    from beamtone.tui.widgets.debounce import DEBOUNCE

    field = bench.query_one("#f-member-length", Input)
    latencies = []
    for i in range(edits):
        await pilot.pause(0.2)  # let the last refresh draw, as between keystrokes
        bench.results_shown.clear()
        t0 = time.perf_counter()
        field.value = f"{length + 0.01 * (i + 1):.2f} m"
        await bench.results_shown.wait()
        latencies.append(time.perf_counter() - t0 - DEBOUNCE)
    return latencies


def _app_first_results(path: str, child: str = "spare") -> None:
    """In a process of its own: start the app headless on ``path`` as ``beamtone FILE`` does
    (the file's first solve started first thing, before the worksheet is opened as a document
    or the interface is imported, in a process of its own where a processor is spare), stop
    at its first results and print the moment they were on screen (``time.monotonic``, what
    ``--app-start`` runs: the benchmark counts from before it started the process)."""
    from beamtone.tui.early import EarlySolve, start, worksheet_text

    text = worksheet_text(path)
    # child: "spare" as beamtone FILE decides, "always" the first-solve process, "never" none
    first = {"spare": start, "always": EarlySolve, "never": lambda _: None}[child](text)
    import asyncio

    from beamtone.tui.document import TEMPLATES, Document

    Document.open_or_new(path, TEMPLATES[0])  # as beamtone FILE checks it before the screen
    from beamtone.tui.app import BeamtoneApp

    async def scenario() -> None:
        app = BeamtoneApp(path, first)
        async with app.run_test(size=(80, 24)) as pilot:
            await _first_results(pilot, app, settled=False)
            print(time.monotonic(), int(first is not None), flush=True)

    asyncio.run(scenario())


def _app_seconds(command: list[str], env: dict[str, str]) -> tuple[float, bool]:
    """Seconds from starting ``--app-start`` to the first results it reports on screen (its
    closing down, which waits for the unit registry's build, is not counted), and whether
    its first solve ran in a process of its own."""
    import subprocess

    start = time.monotonic()
    out = subprocess.run(
        command, check=True, cwd=ROOT, env=env, capture_output=True, text=True
    ).stdout.split()  # fmt: skip
    return float(out[-2]) - start, out[-1] == "1"


def bench_app_ratios(runs: int, edits: int) -> list[tuple[str, float, float | None, str]]:
    """The app against the command line and the library, on the same worksheet (issue 20).

    Start to first results: a new process that starts the app headless as ``beamtone FILE``
    does, until its first results are on screen, against a cold ``beamtone solve`` of the
    same worksheet (both new processes, interleaved, with a filled cache folder; goal at most
    1.3x).  An edit to
    refreshed results (typed into the length, after the typing pause) against the warm
    analysis of the same worksheet (``analyse(load(...))``; goal at most 2x). The start is
    also timed with the first solve always in a process of its own and always in the app's
    worker, so both ways show beside the one ``beamtone FILE`` picks by what the machine is
    running at the time.
    """
    import asyncio
    import tempfile

    from beamtone.calc import analyse, load
    from beamtone.tui.app import BeamtoneApp

    compile_project()
    python = sys.executable
    rows: list[tuple[str, float, float | None, str]] = []
    with tempfile.TemporaryDirectory(prefix="beamtone-bench-") as scratch:
        path = Path(scratch) / "machine-span.toml"
        path.write_text((ROOT / "worksheets" / "machine-span.toml").read_text())
        env = {**os.environ, "BEAMTONE_CACHE": str(Path(scratch) / "kept")}
        cli = [python, "-m", "beamtone.cli.main", "solve", str(path)]
        app = [python, str(Path(__file__).resolve()), "--app-start", str(path)]
        ways = {"spare": app, "always": [*app, "--child", "always"],
                "never": [*app, "--child", "never"]}  # fmt: skip
        _run_seconds(cli, env)
        _app_seconds(app, env)
        cli_times: list[float] = []
        app_times: dict[str, list[float]] = {way: [] for way in ways}
        children = 0  # runs as beamtone FILE that found a processor spare
        for _ in range(runs):  # interleaved: every way sees the same machine
            cli_times.append(_run_seconds(cli, env))
            for way, command in ways.items():
                seconds, child = _app_seconds(command, env)
                app_times[way].append(seconds)
                children += child and way == "spare"
        cold = statistics.median(cli_times)
        rows.append((f"app: start to first results / cold solve, machine-span.toml ({children} "
                     f"of {runs} with the first-solve process)",
                     statistics.median(app_times["spare"]) / cold, 1.3, "ratio"))  # fmt: skip
        rows.append(("  the same, first solve always in a process of its own",
                     statistics.median(app_times["always"]) / cold, None, "ratio"))  # fmt: skip
        rows.append(("  the same, first solve always in the app's worker",
                     statistics.median(app_times["never"]) / cold, None, "ratio"))  # fmt: skip
        rows.append(("  the app's start to first results alone",
                     statistics.median(app_times["spare"]), None, "s"))  # fmt: skip
        rows.append(("  the cold solve alone", cold, None, "s"))

        sheet = load(path)
        warm = median_time(lambda: analyse(sheet), max(3, edits))

        async def scenario() -> list[float]:
            bench_app = BeamtoneApp(path)
            async with bench_app.run_test(size=(80, 24)) as pilot:
                bench = await _first_results(pilot, bench_app)
                return await _edit_latencies(pilot, bench, 4.0, edits)

        latencies = asyncio.run(scenario())
        rows.append(("app: edit to refreshed results / warm analysis, machine-span.toml",
                     statistics.median(latencies) / warm, 2.0, "ratio"))  # fmt: skip
        rows.append(("  the edit to refreshed results alone (after the typing pause)",
                     statistics.median(latencies), None, "s"))  # fmt: skip
        rows.append(("  the warm analysis alone", warm, None, "s"))
    return rows


def import_times() -> list[tuple[str, float, float | None, str]]:
    """Start-up: what ``beamtone --help`` and a solve import (python -X importtime)."""
    import subprocess

    rows = []
    for label, code in (
        ("import for beamtone --help", "import beamtone.cli.main"),
        (
            "import for beamtone solve",
            "import beamtone.cli.main, beamtone.calc.analysis, beamtone.calc.worksheet, "
            "beamtone.render.text",
        ),
    ):
        out = subprocess.run(
            [sys.executable, "-X", "importtime", "-c", code],
            capture_output=True, text=True, cwd=ROOT, check=True,
        ).stderr  # fmt: skip
        total = 0.0
        heavy = set()
        for line in out.splitlines():
            if line.startswith("import time:") and "|" in line:
                parts = line.split("|")
                name = parts[2].strip()
                if not parts[2].startswith("  ") and parts[1].strip().isdigit():
                    total += int(parts[1]) / 1e6
                for mod in ("sympy", "textual", "matplotlib", "numpy", "scipy", "pint"):
                    if name == mod:
                        heavy.add(mod)
        note = ", ".join(sorted(heavy)) or "no numpy, scipy, pint, sympy or textual"
        rows.append((f"{label} (loads: {note})", total, None, "s"))
    return rows


def machine() -> str:
    import numpy
    import scipy

    return (
        f"{platform.platform()}, {platform.machine()}, {os.cpu_count()} cores, "
        f"Python {platform.python_version()}, numpy {numpy.__version__}, scipy {scipy.__version__}"
    )


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="a fast smoke run (CI)")
    parser.add_argument("--output", help="results file (default: benchmarks/results.md, full runs)")
    parser.add_argument("--app-start", metavar="FILE", help=argparse.SUPPRESS)
    parser.add_argument("--child", default="spare", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.app_start:  # one timed start of the app (bench_app_ratios runs it)
        _app_first_results(args.app_start, args.child)
        return 0
    repeat = 2 if args.quick else 7
    rows = [(*r, "s") for r in bench_solves(repeat)]
    rows += bench_cold(1 if args.quick else 5)
    rows += bench_warm_ratio(repeat)
    rows += bench_directions(repeat)
    rows += bench_theory(repeat)
    rows += bench_excitations(repeat)
    rows += bench_tolerances(repeat, 500 if args.quick else 10_000, not args.quick)
    rows += bench_growth([10, 30, 100] if args.quick else [10, 30, 100, 300, 1000, 3000, 5000])
    rows += bench_whole_analysis([100, 300] if args.quick else [1000, 5000])
    rows += bench_inner_supports([30] if args.quick else [100, 1000])
    rows += bench_load(500 if args.quick else 5000)
    rows += [(*r, "s") for r in bench_sizing(repeat, 100 if args.quick else 2000)]
    rows += [(*r, "s") for r in bench_app(3 if args.quick else 15)]
    rows += bench_app_ratios(1 if args.quick else 5, 3 if args.quick else 9)
    rows += import_times()
    lines = [
        "# beamtone benchmark results",
        "",
        f"- machine: {machine()}",
        f"- date: {time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}",
        f"- mode: {'quick' if args.quick else 'full'}",
        "- cold runs start from compiled bytecode, as numpy, scipy and pint do (see"
        " compile_project)",
        "",
        "| benchmark | median | goal | met |",
        "|---|---:|---:|---|",
    ]
    for name, value, goal, kind in rows:
        met = "" if goal is None else ("yes" if value <= goal else "NO")
        if kind == "s":
            shown = f"{value * 1000:.1f} ms"
            goal_text = "" if goal is None else f"{goal * 1000:.0f} ms"
        else:
            shown = f"{value:.2f}" + ("x" if kind == "ratio" else "")
            goal_text = "" if goal is None else f"{goal:g}" + ("x" if kind == "ratio" else "")
        lines.append(f"| {name} | {shown} | {goal_text} | {met} |")
    text = "\n".join(lines) + "\n"
    sys.stdout.write(text)
    output = args.output or (None if args.quick else str(ROOT / "benchmarks" / "results.md"))
    if output:
        Path(output).write_text(text)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
