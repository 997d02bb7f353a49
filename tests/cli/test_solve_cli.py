"""Checks of ``beamtone solve`` as a user runs it: its output, exit status and files.

A few runs (``_IN_A_PROCESS``) start a new process, as a user's shell does; the others run
the same ``beamtone.cli.main.main`` in this process (``tests.hardening.bounded.here``), and
``test_a_process_and_this_process_print_the_same`` checks that the two agree, byte for byte.

References used here:

* uniform cantilever roots lambda_1..3 = 1.87510407, 4.69409113, 7.85475744 and
  f_i = lambda_i^2 / (2 pi L^2) sqrt(EI/m): R. D. Blevins, *Formulas for Natural Frequency and
  Mode Shape*, 1979, Table 8-1;
* Euler's buckling load of a pinned-pinned strut, P_cr = pi^2 EI / L^2 (common practice; e.g.
  S. P. Timoshenko and J. M. Gere, *Theory of Elastic Stability*, 1961, from memory);
* an unrestrained beam has two rigid-body modes in its plane, translation and rotation
  (common practice);
* exact unit definitions: 1 in = 0.0254 m and 1 lb = 0.45359237 kg (international yard and pound
  agreement of 1959); 1 lbf = 0.45359237 kg * 9.80665 m/s^2 = 4.4482216152605 N (standard
  gravity, 3rd CGPM, 1901).

The runs of each group are made once (module-scoped fixtures) and shared by its tests.
"""

from __future__ import annotations

import json
import math
import os
import re
import subprocess
import sys
import tomllib
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass
from pathlib import Path

import pytest

from tests.hardening.bounded import here

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((ROOT / "worksheets").glob("*.toml"))

IN = 0.0254  # m, exact
FT = 12 * IN  # m
LB = 0.45359237  # kg, exact (pound-mass)
LBF = 4.4482216152605  # N, exact
KSI = 1000 * LBF / IN**2  # Pa

CANTILEVER_LAMBDA = (1.87510407, 4.69409113, 7.85475744)  # Blevins (1979), Table 8-1


# ---------------------------------------------------------------------------------------------
# Running the command line
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Run:
    """One finished ``beamtone`` process, and the worksheet it read before and after."""

    args: tuple[str, ...]
    returncode: int
    stdout: str
    stderr: str
    file: Path | None = None
    before: tuple[bytes, int] | None = None
    after: tuple[bytes, int] | None = None


def _snapshot(path: Path | None) -> tuple[bytes, int] | None:
    if path is None or not path.is_file():
        return None
    return path.read_bytes(), path.stat().st_mtime_ns


# runs that start a new process (the rest run in this one; see the module's docstring)
_IN_A_PROCESS = {
    "json:free-free-bar.toml", "text:machine-span.toml", "missing-file", "wrong-unit",
    "no-file", "unknown-command", "trailing-operator-unit",
}  # fmt: skip
# the same runs made in this process, for the comparison
_HERE_TOO: dict[str, Run] = {}


def _process(args: tuple[str, ...], file: Path | None = None) -> Run:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT)
    before = _snapshot(file)
    proc = subprocess.run(
        [sys.executable, "-m", "beamtone.cli.main", *args],
        cwd=ROOT,
        env=env,
        capture_output=True,
        text=True,
        timeout=300,
    )
    return Run(args, proc.returncode, proc.stdout, proc.stderr, file, before, _snapshot(file))


def _here(args: tuple[str, ...], file: Path | None = None) -> Run:
    before = _snapshot(file)
    done = here(*args, timeout=300)
    return Run(args, done.returncode, done.stdout, done.stderr, file, before, _snapshot(file))


def _run_all(jobs: dict[str, tuple[tuple[str, ...], Path | None]]) -> dict[str, Run]:
    """Make every run (those in ``_IN_A_PROCESS`` both ways); returns the runs by name."""
    runs = {}
    with ThreadPoolExecutor(max_workers=max(2, os.cpu_count() or 2)) as pool:
        futures = {name: pool.submit(_process, args, file)
                   for name, (args, file) in jobs.items() if name in _IN_A_PROCESS}  # fmt: skip
        for name, (args, file) in jobs.items():  # meanwhile, the rest in this process
            runs[name] = _here(args, file)
        for name, future in futures.items():
            _HERE_TOO[name] = runs[name]
            runs[name] = future.result()
    return runs


def _solve(path: Path, *options: str) -> tuple[tuple[str, ...], Path]:
    return ("solve", str(path), *options), path


def _json(run: Run) -> dict:
    """The one JSON object a successful ``--json`` run printed."""
    assert run.returncode == 0, run.stderr
    assert "Traceback" not in run.stderr
    obj = json.loads(run.stdout)  # fails on anything but exactly one JSON document
    assert isinstance(obj, dict)
    return obj


def _write(folder: Path, name: str, text: str | bytes) -> Path:
    path = folder / name
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_text(text, encoding="utf-8")
    return path


def _worksheet_modes(path: Path) -> tuple[str, int]:
    """Title and number of modes a worksheet asks for, read with the standard library."""
    with path.open("rb") as handle:
        data = tomllib.load(handle)
    return data.get("title", path.stem), data.get("check", {}).get("modes", 5)


def _close(a: float, b: float, rel: float) -> bool:
    return math.isclose(a, b, rel_tol=rel, abs_tol=0.0)


# ---------------------------------------------------------------------------------------------
# The example worksheets
# ---------------------------------------------------------------------------------------------

_FREE_FREE = ROOT / "worksheets" / "free-free-bar.toml"


@pytest.fixture(scope="module")
def example_runs() -> dict[str, Run]:
    jobs = {}
    for path in EXAMPLES:
        jobs[f"json:{path.name}"] = _solve(path, "--json")
        jobs[f"text:{path.name}"] = _solve(path)
    jobs["modes3"] = _solve(_FREE_FREE, "--modes", "3", "--json")
    jobs["elements40"] = _solve(_FREE_FREE, "--elements", "40", "--json")
    return _run_all(jobs)


def test_there_are_examples() -> None:
    assert len(EXAMPLES) >= 5
    assert _FREE_FREE in EXAMPLES


def _example_params() -> list:
    return [pytest.param(p, id=p.name) for p in EXAMPLES]


def _check_modes_list(modes: list, count: int) -> None:
    assert isinstance(modes, list) and len(modes) == count
    assert [m["number"] for m in modes] == list(range(1, count + 1))
    previous = 0.0
    for mode in modes:
        assert {"number", "frequency_hz", "estimated_error", "effective_mass_fraction"} <= set(mode)
        f, err, frac = (
            mode["frequency_hz"],
            mode["estimated_error"],
            mode["effective_mass_fraction"],
        )
        assert isinstance(f, float) and math.isfinite(f) and f > 0.0
        assert f >= previous
        previous = f
        assert isinstance(err, float) and 0.0 <= err < 1e-3
        assert isinstance(frac, float) and 0.0 <= frac <= 1.0 + 1e-9


@pytest.mark.parametrize("path", _example_params())
def test_example_solves_to_one_json_object(path: Path, example_runs: dict[str, Run]) -> None:
    obj = _json(example_runs[f"json:{path.name}"])
    title, count = _worksheet_modes(path)
    assert {"title", "modes", "rigid_body_modes", "handbook", "warnings"} <= set(obj)
    assert obj["title"] == title
    _check_modes_list(obj["modes"], count)
    rigid = obj["rigid_body_modes"]
    assert type(rigid) is int and 0 <= rigid <= 2
    handbook = obj["handbook"]
    if handbook is not None:
        assert isinstance(handbook["case"], str) and handbook["case"]
        assert len(handbook["frequencies_hz"]) == count
        assert all(isinstance(f, float) and f > 0.0 for f in handbook["frequencies_hz"])
    assert isinstance(obj["warnings"], list)
    assert all(isinstance(w, str) for w in obj["warnings"])
    assert example_runs[f"json:{path.name}"].stderr == ""


def test_free_free_bar_has_two_rigid_body_modes(example_runs: dict[str, Run]) -> None:
    obj = _json(example_runs["json:free-free-bar.toml"])
    assert obj["rigid_body_modes"] == 2  # translation and rotation (common practice)
    assert obj["handbook"]["case"] == "uniform free-free"


_ROW = re.compile(r"^\s+(\d+)\s+(\d[\d.e+-]*)\s+\d")


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_example_solves_to_a_human_report(path: Path, example_runs: dict[str, Run]) -> None:
    run = example_runs[f"text:{path.name}"]
    assert run.returncode == 0, run.stderr
    assert "Traceback" not in run.stderr
    title, count = _worksheet_modes(path)
    assert title in run.stdout
    assert "Caution" in run.stdout
    header = [line for line in run.stdout.splitlines() if "f [Hz]" in line]
    assert len(header) == 1 and "mode" in header[0]
    rows = [_ROW.match(line) for line in run.stdout.splitlines()]
    numbers = [int(m.group(1)) for m in rows if m]
    assert numbers == list(range(1, count + 1))
    assert all(float(m.group(2)) > 0.0 for m in rows if m)


def test_modes_option_sets_the_number_of_modes(example_runs: dict[str, Run]) -> None:
    obj = _json(example_runs["modes3"])
    _check_modes_list(obj["modes"], 3)
    assert len(obj["handbook"]["frequencies_hz"]) == 3


def test_forced_coarse_mesh_reports_larger_errors(example_runs: dict[str, Run]) -> None:
    auto = _json(example_runs["json:free-free-bar.toml"])["modes"]
    forced = _json(example_runs["elements40"])["modes"]
    assert len(forced) == len(auto)
    for a, f in zip(auto, forced, strict=True):
        assert f["estimated_error"] > a["estimated_error"]
        # the coarser mesh is stiffer: FE frequencies converge from above (common practice)
        assert f["frequency_hz"] >= a["frequency_hz"] * (1 - 1e-12)
        assert _close(f["frequency_hz"], a["frequency_hz"], 1e-3)


# ---------------------------------------------------------------------------------------------
# Bad input: exit 2, one line on stderr naming the key, nothing on stdout, file untouched
# ---------------------------------------------------------------------------------------------

_GOOD = """format = 1
title = "Bad-input base"

[member]
length = "2 m"
material = { youngs_modulus = "200 GPa", density = "7850 kg/m^3" }
section = { shape = "rectangle", width = "50 mm", depth = "10 mm" }

[supports]
left = "pinned"
right = "pinned"

[[mass]]
at = "0.5 m"
mass = "3 kg"
"""


def _bad(old: str, new: str) -> str:
    assert _GOOD.count(old) == 1, old
    return _GOOD.replace(old, new)


# (name, file contents or None for a missing file, key, further text the message must contain)
_BAD_INPUTS: list[tuple[str, str | bytes | None, str, str]] = [
    ("wrong-unit", _bad('"2 m"', '"1.2 kg"'), "member.length", "a length"),
    ("unknown-key", _bad("length =", "lenght ="), "member.lenght", "did you mean 'length'?"),
    ("malformed-toml", _bad("[supports]", "[supports"), "file", "line 9, column"),
    ("binary-file", b"\x7fELF\x02\x01\x01\x00\x00\x00" * 8, "file", "binary"),
    ("invalid-utf-8", _GOOD.encode().replace(b"Bad", b"B\xe4d"), "file", "UTF-8"),
    ("empty-file", b"", "file", "empty"),
    ("missing-file", None, "file", "an existing worksheet file"),
    ("future-format", _bad("format = 1", "format = 2"), "format", "newer version"),
    ("mass-beyond-end", _bad('at = "0.5 m"', 'at = "2.5 m"'), "mass[0].at", "from 0 m to 2 m"),
    ("weight-density", _bad('"7850 kg/m^3"', '"0.284 lbf/in^3"'), "member.material.density",
     "weight density"),
    ("beyond-buckling", _bad('length = "2 m"', 'length = "2 m"\naxial_force = "-1e9 N"'),
     "member.axial_force", "buckling load"),
    ("free-free-compression",
     _bad('length = "2 m"', 'length = "2 m"\naxial_force = "-1 N"').replace('"pinned"', '"free"'),
     "member.axial_force", "no compression"),
]  # fmt: skip


@pytest.fixture(scope="module")
def bad_runs(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Run]:
    folder = tmp_path_factory.mktemp("bad")
    jobs = {}
    for name, contents, _key, _fragment in _BAD_INPUTS:
        path = folder / f"{name}.toml"
        if contents is not None:
            _write(folder, path.name, contents)
        jobs[name] = _solve(path)
    return _run_all(jobs)


@pytest.mark.parametrize(
    ("name", "key", "fragment"), [pytest.param(n, k, f, id=n) for n, _c, k, f in _BAD_INPUTS]
)
def test_bad_input_exits_2_with_one_line(
    name: str, key: str, fragment: str, bad_runs: dict[str, Run]
) -> None:
    run = bad_runs[name]
    assert run.returncode == 2, (run.returncode, run.stderr)
    assert run.stdout == ""
    assert "Traceback" not in run.stderr + run.stdout
    assert run.stderr.endswith("\n") and run.stderr.count("\n") == 1, repr(run.stderr)
    assert run.stderr.startswith(f"beamtone: {key}: "), run.stderr
    assert "expected" in run.stderr
    assert fragment in run.stderr, run.stderr
    assert run.file is not None
    if run.before is None:
        assert not run.file.exists()  # a missing worksheet is not created
    else:
        assert run.after == run.before  # same bytes, same modification time


def test_buckling_message_states_the_euler_load(bad_runs: dict[str, Run]) -> None:
    stderr = bad_runs["beyond-buckling"].stderr
    match = re.search(r"buckling load of this member, ([\d.e+]+) N", stderr)
    assert match, stderr
    E, b, h, L = 200e9, 0.050, 0.010, 2.0
    euler = math.pi**2 * E * (b * h**3 / 12) / L**2  # pinned-pinned, common practice
    assert _close(float(match.group(1)), euler, 1e-5)  # printed to 6 significant figures


# ---------------------------------------------------------------------------------------------
# Bad command-line arguments
# ---------------------------------------------------------------------------------------------

_BAD_ARGS = {
    "modes-0": ("solve", str(_FREE_FREE), "--modes", "0"),
    "modes-x": ("solve", str(_FREE_FREE), "--modes", "x"),
    "modes-51": ("solve", str(_FREE_FREE), "--modes", "51"),
    "elements-negative": ("solve", str(_FREE_FREE), "--elements", "-3"),
    "elements-float": ("solve", str(_FREE_FREE), "--elements", "4.5"),
    "unknown-option": ("solve", str(_FREE_FREE), "--frobnicate"),
    "unknown-command": ("resolve", str(_FREE_FREE)),
    "no-file": ("solve",),
}


@pytest.fixture(scope="module")
def arg_runs() -> dict[str, Run]:
    return _run_all({name: (args, None) for name, args in _BAD_ARGS.items()})


@pytest.mark.parametrize("name", list(_BAD_ARGS))
def test_bad_arguments_exit_2_without_traceback(name: str, arg_runs: dict[str, Run]) -> None:
    run = arg_runs[name]
    assert run.returncode == 2, (run.returncode, run.stderr)
    assert "Traceback" not in run.stderr + run.stdout
    assert run.stdout == ""
    assert "beamtone: error:" in run.stderr


# ---------------------------------------------------------------------------------------------
# The main job against published values, and unit invariance
# ---------------------------------------------------------------------------------------------

_CANTILEVER = """format = 1
title = "Uniform steel cantilever"

[member]
length = "1 m"
material = { youngs_modulus = "200 GPa", density = "7850 kg/m^3" }
section = { shape = "rectangle", width = "50 mm", depth = "10 mm" }
theory = "euler-bernoulli"   # the published roots are Euler-Bernoulli's

[supports]
left = "clamped"
right = "free"

[check]
modes = 3
"""


def _cantilever_hz() -> list[float]:
    E, rho, b, h, L = 200e9, 7850.0, 0.050, 0.010, 1.0
    EI, m = E * b * h**3 / 12, rho * b * h
    return [lam**2 / (2 * math.pi * L**2) * math.sqrt(EI / m) for lam in CANTILEVER_LAMBDA]


_MEMBER_US = {
    "length": "48 in",
    "modulus": "29000 ksi",
    "density": "0.284 lb/in^3",
    "width": "2 in",
    "depth": "0.5 in",
    "added_mass": "0.5 lb/ft",
    "axial_force": "450 lbf",
    "at": "20 in",
    "mass": "4.5 lb",
    "rotary_inertia": "10 lb*in^2",
    "end": "48 in",
    "stiffness": "200 lbf/in",
    "rotational_stiffness": "1500 lbf*in/rad",
}
# The same values in SI by the exact definitions (floats written with all their digits).
_MEMBER_SI = {
    "length": f"{48 * IN!r} m",
    "modulus": f"{29000 * KSI!r} Pa",
    "density": f"{0.284 * LB / IN**3!r} kg/m^3",
    "width": f"{2 * IN!r} m",
    "depth": f"{0.5 * IN!r} m",
    "added_mass": f"{0.5 * LB / FT!r} kg/m",
    "axial_force": f"{450 * LBF!r} N",
    "at": f"{20 * IN!r} m",
    "mass": f"{4.5 * LB!r} kg",
    "rotary_inertia": f"{10 * LB * IN**2!r} kg*m^2",
    "end": f"{48 * IN!r} m",
    "stiffness": f"{200 * LBF / IN!r} N/m",
    "rotational_stiffness": f"{1500 * LBF * IN!r} N*m/rad",
}
_MEMBER_TEMPLATE = """format = 1
title = "Unit invariance"

[member]
length = "{length}"
material = {{ youngs_modulus = "{modulus}", density = "{density}" }}
section = {{ shape = "rectangle", width = "{width}", depth = "{depth}" }}
added_mass = "{added_mass}"
axial_force = "{axial_force}"

[supports]
left = "clamped"
right = "free"

[[mass]]
at = "{at}"
mass = "{mass}"
rotary_inertia = "{rotary_inertia}"

[[spring]]
at = "{end}"
stiffness = "{stiffness}"
rotational_stiffness = "{rotational_stiffness}"

[check]
modes = 4
"""


@pytest.fixture(scope="module")
def main_runs(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Run]:
    folder = tmp_path_factory.mktemp("main")
    cantilever = _write(folder, "cantilever.toml", _CANTILEVER)
    si = _write(folder, "member-si.toml", _MEMBER_TEMPLATE.format(**_MEMBER_SI))
    us = _write(folder, "member-us.toml", _MEMBER_TEMPLATE.format(**_MEMBER_US))
    return _run_all(
        {
            "cantilever-json": _solve(cantilever, "--json"),
            "cantilever-text": _solve(cantilever),
            "cantilever-fine": _solve(cantilever, "--elements", "200", "--json"),
            "si": _solve(si, "--json"),
            "us": _solve(us, "--json"),
        }
    )


# The published roots are printed to 9 significant figures: lambda^2 is good to about 3e-9.
_ROOT_ROUNDING = 3e-9


def test_cantilever_matches_published_roots(main_runs: dict[str, Run]) -> None:
    expected = _cantilever_hz()
    # The automatic mesh aims at the 1e-6 accuracy target, so the 1e-7 comparison uses a
    # forced fine mesh ...
    fine = _json(main_runs["cantilever-fine"])
    found = [m["frequency_hz"] for m in fine["modes"]]
    assert len(found) == 3
    for f, ref in zip(found, expected, strict=True):
        assert _close(f, ref, 1e-7), (f, ref)
    # ... and the automatic mesh must be within its own estimated error, and the target.
    auto = _json(main_runs["cantilever-json"])
    assert auto["rigid_body_modes"] == 0
    assert len(auto["modes"]) == 3
    for mode, ref in zip(auto["modes"], expected, strict=True):
        error = abs(mode["frequency_hz"] / ref - 1.0)
        assert error <= mode["estimated_error"] + _ROOT_ROUNDING, (mode, ref)
        assert mode["estimated_error"] <= 1e-6
    assert auto["handbook"]["case"] == "uniform clamped-free"
    for f, ref in zip(auto["handbook"]["frequencies_hz"], expected, strict=True):
        assert _close(f, ref, 1e-7), (f, ref)


def test_cantilever_report_matches_published_roots(main_runs: dict[str, Run]) -> None:
    run = main_runs["cantilever-text"]
    assert run.returncode == 0, run.stderr
    rows = [m for m in map(_ROW.match, run.stdout.splitlines()) if m]
    found = [float(m.group(2)) for m in rows]
    assert len(found) == 3
    for f, ref in zip(found, _cantilever_hz(), strict=True):
        assert _close(f, ref, 1e-5), (f, ref)  # the report prints 6 significant figures


def test_si_and_us_customary_worksheets_agree(main_runs: dict[str, Run]) -> None:
    si, us = _json(main_runs["si"]), _json(main_runs["us"])
    f_si = [m["frequency_hz"] for m in si["modes"]]
    f_us = [m["frequency_hz"] for m in us["modes"]]
    assert len(f_si) == len(f_us) == 4
    for a, b in zip(f_si, f_us, strict=True):
        assert _close(a, b, 1e-9), (a, b)
    assert _close(si["member"]["member_mass_kg"], us["member"]["member_mass_kg"], 1e-12)


# ---------------------------------------------------------------------------------------------
# Regressions: inputs that once ended in an internal error
# ---------------------------------------------------------------------------------------------

_INTERNAL = {
    "trailing-operator-unit": _bad('"2 m"', '"2 m*"'),
    "unbalanced-parenthesis-unit": _bad('"2 m"', '"2 m("'),
    "tiny-length": _bad('"2 m"', '"1e-300 m"').replace('"0.5 m"', '"0 m"'),
}


@pytest.fixture(scope="module")
def internal_runs(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Run]:
    folder = tmp_path_factory.mktemp("internal")
    jobs = {name: _solve(_write(folder, f"{name}.toml", text)) for name, text in _INTERNAL.items()}
    return _run_all(jobs)


@pytest.mark.parametrize("name", list(_INTERNAL))
def test_odd_inputs_are_input_errors(name: str, internal_runs: dict[str, Run]) -> None:
    run = internal_runs[name]
    assert "Traceback" not in run.stderr
    assert run.returncode == 2, run.stderr
    assert run.stderr.startswith("beamtone: ") and run.stderr.count("\n") == 1


def test_a_process_and_this_process_print_the_same(
    example_runs: dict[str, Run],
    bad_runs: dict[str, Run],
    arg_runs: dict[str, Run],
    internal_runs: dict[str, Run],
) -> None:
    """The runs made both ways (a success as JSON and as text, bad input, bad arguments, an
    input that once ended in an internal error): the same exit status and the same output,
    byte for byte; the other runs of this file rely on that."""
    runs = {**example_runs, **bad_runs, **arg_runs, **internal_runs}
    assert set(_HERE_TOO) == _IN_A_PROCESS
    for name in sorted(_IN_A_PROCESS):
        process, here_run = runs[name], _HERE_TOO[name]
        assert (here_run.returncode, here_run.stdout, here_run.stderr) == (
            process.returncode,
            process.stdout,
            process.stderr,
        ), name
