"""Checks of :mod:`calc.batch`: many worksheets, or one worksheet over a table of values.

Each row must print the same numbers ``beamtone solve`` gives for the same worksheet (the
front door, calc.analysis.analyse); a rectangle's frequency scales with its depth
(Euler-Bernoulli, dimensional analysis, common practice).
"""

from __future__ import annotations

import glob

import pytest

from beamtone.calc import worksheet
from beamtone.calc.analysis import analyse
from beamtone.calc.batch import read_table, solve_files, solve_table
from beamtone.calc.errors import InputError

_ROOT = __import__("pathlib").Path(__file__).resolve().parents[2]
_SHEETS = sorted(glob.glob(str(_ROOT / "worksheets" / "*.toml")))

_BAR = """format = 1
[member]
length = "0.8 m"
material = "aluminium-6061"
section = { shape = "rectangle", width = "40 mm", depth = "8 mm" }
[supports]
left = "clamped"
right = "free"
[check]
modes = 2
"""


def test_files_give_what_solve_gives(tmp_path) -> None:  # noqa: ANN001
    bad = tmp_path / "bad.toml"
    bad.write_text('format = 1\n[member]\nlength = "-1 m"\n')
    paths = [*_SHEETS[:3], str(bad), str(tmp_path / "missing.toml")]
    result = solve_files(paths, engine="local")
    assert [r.name for r in result.rows] == paths
    assert result.failed == 2
    assert "supports" in result.rows[3].error and "cannot be read" in result.rows[4].error
    for row, path in zip(result.rows[:3], paths, strict=False):
        expected = analyse(worksheet.load(path))
        assert row.frequencies_hz == tuple(m.frequency_hz for m in expected.modes.modes)
        assert row.governing_direction is not None


def test_table_rows_scale_with_depth() -> None:
    sheet = worksheet.loads(_BAR)
    rows = read_table(sheet, "name,member.section.depth [mm]\nthin,8\nthick,16\n,12\n")
    assert [r.name for r in rows] == ["thin", "thick", "row 3"]
    assert rows[1].values["member.section.depth"] == pytest.approx(0.016)
    result = solve_table(sheet, rows, engine="local")
    thin, thick, mid = (r.frequencies_hz[0] for r in result.rows)
    # f ~ depth in Euler-Bernoulli bending; shear deformation and rotary inertia (where the
    # worksheet's theory includes them) lower the 16 mm bar, 50 depths long, by under 0.1 %
    assert thick / thin == pytest.approx(2.0, rel=1e-3)
    assert mid / thin == pytest.approx(1.5, rel=1e-3)
    assert result.keys == ("member.section.depth",)


def test_a_bad_row_keeps_its_place() -> None:
    # the clamped root may be given a rotational stiffness; a free tip has none to give
    sheet = worksheet.loads(_BAR)
    table = (
        "supports.left_rotational_stiffness,supports.right_rotational_stiffness\n"
        "1e9 N*m/rad,rigid\n"
        "1e3 N*m/rad,1e3 N*m/rad\n"
    )
    with pytest.raises(InputError):  # "rigid" is not a quantity: the table says where
        read_table(sheet, table)
    rows = read_table(sheet, table.replace("rigid", "1e9 N*m/rad"))
    result = solve_table(sheet, rows, engine="local")
    assert result.rows[0].error is not None and "supports.right" in result.rows[0].error
    assert result.rows[1].error is not None and result.failed == 2
    rows = read_table(sheet, "name,supports.left_rotational_stiffness\nsoft,1e3 N*m/rad\n")
    soft = solve_table(sheet, rows, engine="local").rows[0]
    rigid = solve_table(sheet, read_table(sheet, "member.length\n0.8 m\n"), engine="local")
    assert soft.error is None and soft.frequencies_hz[0] < rigid.rows[0].frequencies_hz[0]


def test_engines_agree() -> None:
    pytest.importorskip("dask.distributed")
    sheet = worksheet.loads(_BAR)
    rows = read_table(sheet, "member.length\n0.5 m\n0.6 m\n0.7 m\n0.9 m\n")
    here = solve_table(sheet, rows, engine="local")
    there = solve_table(sheet, rows, engine="dask", workers=2)
    assert [r.frequencies_hz for r in here.rows] == [r.frequencies_hz for r in there.rows]


@pytest.mark.parametrize(
    ("table", "key"),
    [("", "table"), ("member.colour\n1\n", "table"),
     ("member.length\n", "table"), ("member.length\nabc m\n", "table row 1: member.length"),
     ("member.length,name\n1 m\n", "table row 1"), ("name\nx\n", "table"),
     ("member.length\n5 kg\n", "table row 1: member.length")],
)  # fmt: skip
def test_bad_tables(table: str, key: str) -> None:
    sheet = worksheet.loads(_BAR)
    with pytest.raises(InputError) as err:
        read_table(sheet, table)
    assert err.value.key == key
