"""beamtone benchmarks: measured against the goals, printed, and written to a results file.

    python benchmarks/run.py            # full run, writes benchmarks/results.md
    python benchmarks/run.py --quick    # smoke run (what CI does), writes nowhere by default

Each line gives the median of several runs, the goal where one is set, and whether it is met.
Benchmarks are never timed tests: the suite does not fail on speed.
"""

from __future__ import annotations

import argparse
import asyncio
import os
import platform
import statistics
import sys
import time
from collections.abc import Callable
from pathlib import Path

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


def bench_solves(repeat: int) -> list[tuple[str, float, float | None]]:
    from calc.analysis import analyse
    from calc.worksheet import load, loads

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


def bench_sizing(repeat: int, sweep_points: int) -> list[tuple[str, float, float | None]]:
    from calc import sizing
    from calc.worksheet import load

    spindle = load(ROOT / "worksheets" / "stepped-spindle.toml")
    bar = load(ROOT / "worksheets" / "free-free-bar.toml")
    rows = [
        ("sizing solve, four attachments (spindle nose diameter for 340 Hz)",
         median_time(lambda: sizing.size_for_target(
             spindle, "member.segment[2].section.diameter", 0.02, 0.08, 340.0), repeat), 0.3),
        (f"{sweep_points}-point sweep, uniform bar length (scaled by groups)",
         median_time(lambda: sizing.sweep(bar, "member.length", 0.3, 1.0, sweep_points), 1), 1.0),
    ]  # fmt: skip
    rows.append((f"{sweep_points}-point sweep with attachments (spindle wheel-hub position)",
                 median_time(lambda: sizing.sweep(spindle, "mass[1].at", 0.41, 0.5, sweep_points),
                             1), 1.0))  # fmt: skip
    return rows


def bench_app(edits: int) -> list[tuple[str, float, float | None]]:
    from tui.app import BeamtoneApp
    from tui.screens import workbench

    path = Path(os.environ.get("TMPDIR", "/tmp")) / "beamtone-bench.toml"
    path.write_text(ten_attachment_text())

    async def scenario() -> tuple[float, list[float]]:
        start = time.perf_counter()
        app = BeamtoneApp(path)
        async with app.run_test(size=(100, 40)) as pilot:
            while True:
                await pilot.pause(0.005)
                try:
                    bench = app.workbench
                except LookupError:
                    continue
                if not bench.pending and bench.solves:
                    break
            first = time.perf_counter() - start
            from textual.widgets import Input

            field = bench.query_one("#f-member-length", Input)
            latencies = []
            for i in range(edits):
                await pilot.pause(0.2)  # let the last refresh draw, as between keystrokes
                solves = bench.solves
                t0 = time.perf_counter()
                field.value = f"{1.2 + 0.01 * (i + 1):.2f} m"
                while bench.solves == solves:
                    await asyncio.sleep(0.001)
                latencies.append(time.perf_counter() - t0 - workbench.DEBOUNCE)
        return first, latencies

    first, latencies = asyncio.run(scenario())
    path.unlink(missing_ok=True)
    return [
        ("app: start to first results (Pilot, headless)", first, 1.5),
        (f"app: edit to refreshed results, median of {edits}, after the "
         f"{workbench.DEBOUNCE * 1000:.0f} ms typing pause", statistics.median(latencies), 0.05),
    ]  # fmt: skip


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
    args = parser.parse_args()
    repeat = 2 if args.quick else 7
    rows = bench_solves(repeat)
    rows += bench_sizing(repeat, 100 if args.quick else 2000)
    rows += bench_app(3 if args.quick else 15)
    lines = [
        "# beamtone benchmark results",
        "",
        f"- machine: {machine()}",
        f"- date: {time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}",
        f"- mode: {'quick' if args.quick else 'full'}",
        "",
        "| benchmark | median | goal | met |",
        "|---|---:|---:|---|",
    ]
    for name, seconds, goal in rows:
        met = "" if goal is None else ("yes" if seconds <= goal else "NO")
        goal_text = "" if goal is None else f"{goal * 1000:.0f} ms"
        lines.append(f"| {name} | {seconds * 1000:.1f} ms | {goal_text} | {met} |")
    text = "\n".join(lines) + "\n"
    sys.stdout.write(text)
    output = args.output or (None if args.quick else str(ROOT / "benchmarks" / "results.md"))
    if output:
        Path(output).write_text(text)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
