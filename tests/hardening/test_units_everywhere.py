"""Every place that reads a unit goes through the one guarded parser (issues 14 item 5, 21).

The command line runs in the test's own process (``tests.hardening.bounded.here``), bounded
in time as a new process would be; one check starts a new process as a user's shell does.

Before: ``beamtone groups "f=m**9**9**9" L=m`` ran until killed while the same text in a
worksheet was refused at once; logarithmic units (dB, Np, octave, decade) exited 1 from
``groups``; ``ton`` was read as the US short ton and ``B`` as a byte without a word.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from beamtone.calc.errors import InputError
from beamtone.calc.groups import variable
from tests.hardening.bounded import ROOT, beamtone, here

SHEET = ROOT / "worksheets" / "free-free-bar.toml"
HOSTILE = ["m**9**9**9", "m^9^9^9", "((m**12)**12)**12", "m^1e9", "10**10**10*m"]
LEVELS = ["dB", "Np", "octave", "decade", "dB*m"]


@pytest.mark.parametrize("unit", HOSTILE + LEVELS + ["ton", "B*m", "degC"])
def test_groups_refuses_bad_units_at_once(unit: str) -> None:
    done = here("groups", f"f={unit}", "L=m", "t=s", timeout=20)
    assert done.returncode == 2, done.stderr
    assert done.stderr.startswith("beamtone: f: ") and "Traceback" not in done.stderr
    assert done.stderr.count("\n") == 1


@pytest.mark.parametrize("unit", HOSTILE + LEVELS)
def test_worksheet_refuses_the_same_text(unit: str, tmp_path: Path) -> None:
    text = SHEET.read_text(encoding="utf-8").replace('length = "600 mm"', f'length = "1 {unit}"')
    sheet = tmp_path / "w.toml"
    sheet.write_text(text, encoding="utf-8")
    done = here("solve", str(sheet), timeout=20)
    assert done.returncode == 2, done.stderr
    assert "member.length" in done.stderr and "Traceback" not in done.stderr


@pytest.mark.parametrize(
    ("option", "value"),
    [("--between", "40 dB*mm"), ("--between", "1 m**9**9**9"), ("--target", "60 dB*Hz")],
)
def test_sizing_options_use_the_guarded_parser(option: str, value: str) -> None:
    args = ["size", str(SHEET), "--vary", "member.length", "--target", "500 Hz"]
    args += ["--between", "400 mm", "900 mm"]
    where = args.index(option) + 1
    args[where] = value
    done = here(*args, timeout=20)
    assert done.returncode == 2, done.stderr
    assert option in done.stderr and "Traceback" not in done.stderr


def test_a_hostile_unit_is_refused_at_once_by_a_new_process_too() -> None:
    """The command as a user's shell starts it (the other checks here run the same command
    line in the test's own process, bounded by the same time)."""
    done = beamtone("groups", "f=m**9**9**9", "L=m", "t=s", timeout=20)
    assert done.returncode == 2, done.stderr
    assert done.stderr.startswith("beamtone: f: ") and "Traceback" not in done.stderr


@pytest.mark.parametrize("unit", HOSTILE + LEVELS + ["ton", "B"])
def test_the_library_function_behind_the_app_calculator(unit: str) -> None:
    """The app's groups calculator calls calc.groups.variable: refused, naming the variable."""
    with pytest.raises(InputError) as err:
        variable("f", unit)
    assert err.value.key == "f"
