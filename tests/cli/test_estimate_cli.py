"""The Rayleigh estimate, Ritz bounds, bracket and equivalent model on the command line.

Runs ``cli.main.main`` in-process (it returns the exit status) for speed; the subprocess
tests in test_solve_cli.py cover the console behaviour itself.
"""

from __future__ import annotations

import json
import math
import time
from pathlib import Path

import pytest

from tests.cli.inprocess import run

ROOT = Path(__file__).resolve().parents[2]

CANTILEVER = """\
format = 1
title = "bare cantilever"

[member]
length = "1 m"
material = {{ youngs_modulus = "200 GPa", density = "7850 kg/m^3" }}
section = {{ shape = "rectangle", width = "40 mm", depth = "8 mm" }}

[supports]
left = "clamped"
right = "free"

[estimate]
shape = {shape}
"""


def test_json_carries_every_method(capsys: pytest.CaptureFixture[str], tmp_path: Path) -> None:
    # Rayleigh, Ritz and Dunkerley bound the Euler-Bernoulli solve: the example solved so
    text = (ROOT / "worksheets" / "machine-span.toml").read_text(encoding="utf-8")
    sheet = tmp_path / "machine-span.toml"
    sheet.write_text(text.replace("[member]", '[member]\ntheory = "euler-bernoulli"', 1))
    status, out, err = run(capsys, "solve", str(sheet), "--json")
    assert status == 0, err
    obj = json.loads(out)
    est = obj["estimate"]
    assert est["method"] == "rayleigh" and est["shape"] == "sin(pi*x/L)"
    assert est["formula"] and "pi**4" in est["formula"]
    low = obj["lower_bound"]
    assert low["method"] == "dunkerley"
    f1 = obj["modes"][0]["frequency_hz"]
    assert low["frequency_hz"] <= f1 <= est["frequency_hz"]
    assert obj["bracket"]["inside"] is True
    assert len(obj["ritz"]["frequencies_hz"]) == 4
    assert obj["ritz"]["frequencies_hz"][0] >= f1 * (1 - 1e-9)
    eq = obj["equivalent"]
    omega = 2 * math.pi * f1
    assert math.sqrt(eq["stiffness_n_per_m"] / eq["mass_kg"]) == pytest.approx(omega, rel=1e-9)


def test_quarter_cosine_formula_in_text(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """The classical 3.66 coefficient (W. T. Thomson, Theory of Vibration with Applications;
    from memory) shows in the human output."""
    sheet = tmp_path / "c.toml"
    sheet.write_text(CANTILEVER.format(shape='"1 - cos(pi*x/(2*L))"'))
    status, out, err = run(capsys, "solve", str(sheet))
    assert status == 0, err
    assert "omega = 3.664*sqrt(EI/(m*L^4))" in out
    assert "Dunkerley" in out and "bracket" in out


@pytest.mark.parametrize(
    "shape",
    [
        "__import__('os').system('touch MARKER')",
        "open('MARKER', 'w')",
        "x.__class__.__bases__",
        "lambda: 1",
        "[x for x in (1,)]",
        "9**9**9**9",
        "x**100000",
        "(" * 300 + "x" + ")" * 300,
        "exec('1')",
        "sin(pi*x/L)",  # admissible syntax, but turns the clamp: refused for the physics
        "1 + x/L",  # moves the clamp
    ],
)
def test_hostile_or_inadmissible_shapes_exit_2(
    shape: str, tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.chdir(tmp_path)
    sheet = tmp_path / "c.toml"
    sheet.write_text(CANTILEVER.format(shape=json.dumps(shape)))
    before = sheet.read_bytes()
    start = time.perf_counter()
    status, out, err = run(capsys, "solve", str(sheet))
    assert time.perf_counter() - start < 10.0  # a sanity bound against hangs, not a benchmark
    assert status == 2
    assert out == ""
    assert err.startswith("beamtone: estimate.shape: ") and err.count("\n") == 1
    assert not (tmp_path / "MARKER").exists()
    assert sheet.read_bytes() == before


@pytest.mark.parametrize(
    ("table", "key"),
    [
        ("shape = 3", "estimate.shape"),
        ('shapes = "x"', "estimate.shapes"),
        ("shapes = 0", "estimate.shapes"),
        ("shapes = [1]", "estimate.shapes[0]"),
        ('shapes = ["sin(pi*x/L)"]', "estimate.shapes[0]"),
        ('reference = "2 kg"', "estimate.reference"),
        ('referense = "1 m"', "estimate.referense"),
    ],
)
def test_bad_estimate_tables(
    table: str, key: str, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    sheet = tmp_path / "c.toml"
    if table.startswith("shape ="):
        text = CANTILEVER.format(shape=table.split("=", 1)[1].strip())
    else:
        text = CANTILEVER.format(shape='"static"') + table + "\n"
    sheet.write_text(text)
    status, _, err = run(capsys, "solve", str(sheet))
    assert status == 2
    assert err.startswith(f"beamtone: {key}: "), err
