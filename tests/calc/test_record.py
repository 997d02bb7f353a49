"""The calculation record: inputs digest, the stored [record] table, and its verification."""

from __future__ import annotations

import csv
import datetime as dt
import math
import tomllib
from pathlib import Path

import pytest
import tomlkit

from beamtone.calc import record
from beamtone.calc.analysis import analyse
from beamtone.calc.errors import InputError
from beamtone.calc.sizing import margins
from beamtone.calc.worksheet import load, loads, replace_value
from tests.reference import reference_file

ROOT = Path(__file__).resolve().parents[2]

CANTILEVER = """\
# A bare steel cantilever: a case with a published answer.
format = 1
title = "bare cantilever"   # trailing comment on a value

[member]
length = "1 m"
material = { youngs_modulus = "200 GPa", density = "7850 kg/m^3" }
section = { shape = "rectangle", width = "40 mm", depth = "8 mm" }
theory = "euler-bernoulli"   # the published answer is Euler-Bernoulli's

# the supports
[supports]
left = "clamped"
right = "free"

[check]
modes = 3
"""


@pytest.fixture(scope="module")
def solved() -> tuple[str, object]:
    return CANTILEVER, analyse(loads(CANTILEVER))


def _recorded(text: str, analysis: object, **kwargs: object) -> str:
    return record.with_record(text, record.build_record(analysis, **kwargs))  # type: ignore[arg-type]


# --- digest --------------------------------------------------------------------------------------


def test_digest_ignores_layout_comments_and_key_order() -> None:
    """Reformatting keeps the digest; every change of a value as entered changes it."""
    base = record.inputs_digest(loads(CANTILEVER).data)
    reordered = CANTILEVER.replace(
        'left = "clamped"\nright = "free"', 'right = "free"\nleft = "clamped"'
    )
    reformatted = "\n".join(line.split("#")[0].rstrip() for line in reordered.splitlines())
    expanded = (
        reformatted.replace(
            'section = { shape = "rectangle", width = "40 mm", depth = "8 mm" }', ""
        )
        + '\n[member.section]\nshape = "rectangle"\nwidth = "40 mm"\ndepth = "8 mm"\n'
    )
    for text in (reordered, reformatted, expanded):
        assert record.inputs_digest(loads(text).data) == base
    for key, value in (
        ("member.length", "1.0 m"),
        ("member.length", "1000 mm"),
        ("member.section.depth", "8.001 mm"),
        ("check.modes", "3"),
    ):
        changed = (
            replace_value(CANTILEVER, key, value)
            if key != "check.modes"
            else (CANTILEVER.replace("modes = 3", "modes = 4"))
        )
        assert record.inputs_digest(loads(changed).data) != base, key


def test_digest_leaves_out_the_record(solved: tuple[str, object]) -> None:
    text, analysis = solved
    with_it = _recorded(text, analysis)
    assert record.inputs_digest(loads(with_it).data) == record.inputs_digest(loads(text).data)


def test_tool_version_of_a_checkout_is_the_pyprojects() -> None:
    with (ROOT / "pyproject.toml").open("rb") as handle:
        expected = tomllib.load(handle)["project"]["version"]
    assert record.tool_version() == expected


# --- writing and reading -------------------------------------------------------------------------


def test_record_keeps_every_line_and_comment(solved: tuple[str, object]) -> None:
    text, analysis = solved
    out = _recorded(text, analysis)
    assert out.startswith(text.rstrip())  # the user's text untouched; the record follows it
    assert "# trailing comment on a value" in out and "# the supports" in out
    again = _recorded(out, analysis)
    assert again.count("[record]") == 1 and again.count("[record.results]") == 1
    assert again.startswith(text.rstrip())


def test_record_in_the_middle_is_replaced_and_the_rest_kept(solved: tuple[str, object]) -> None:
    text, analysis = solved
    recorded = _recorded(text, analysis)
    tail = '\n[estimate]   # moved below the record by hand\nshape = "polynomial"\n'
    moved = recorded + tail
    analysis2 = analyse(loads(moved))
    out = _recorded(moved, analysis2)
    assert out.count("[record]") == 1
    assert "# moved below the record by hand" in out and 'shape = "polynomial"' in out
    assert record.read_record(loads(out)).results.rayleigh_shape == "polynomial"


def test_round_trip_is_exact(solved: tuple[str, object]) -> None:
    text, analysis = solved
    when = dt.datetime(2026, 3, 4, 5, 6, 7, 890, tzinfo=dt.UTC)
    built = record.build_record(analysis, now=when)
    read = record.read_record(loads(record.with_record(text, built)))
    assert read == built  # every float back to the last bit
    assert read.written == "2026-03-04T05:06:07Z"
    assert read.elements is None and read.modes == 3


def test_stored_fundamental_is_the_published_one(solved: tuple[str, object]) -> None:
    """Clamped-free lambda_1 = 1.87510407: Blevins 1979, Table 8-1 (reference file)."""
    _, analysis = solved
    with reference_file("uniform-beam-frequency-parameters.csv").open() as handle:
        rows = [r for r in csv.reader(line for line in handle if not line.startswith("#"))]
    lam = next(float(r[3]) for r in rows if r[:2] == ["clamped", "free"])
    EI = 200e9 * 0.040 * 0.008**3 / 12.0
    m = 7850.0 * 0.040 * 0.008
    f1 = lam**2 / (2.0 * math.pi) * math.sqrt(EI / m)
    stored = record.build_record(analysis).results  # type: ignore[arg-type]
    assert stored.frequencies_hz[0] == pytest.approx(f1, rel=1e-7)
    assert stored.dunkerley_hz < stored.frequencies_hz[0] < stored.rayleigh_hz
    assert stored.bracket_inside is True and stored.rigid_body_modes == 0


def test_loader_accepts_the_record_table_only_as_a_table() -> None:
    with pytest.raises(InputError) as info:
        loads('record = "done"\n' + CANTILEVER.split("\n", 1)[1])
    assert info.value.key == "record"


@pytest.mark.parametrize(
    ("old", "new", "key"),
    [
        ('inputs_sha256 = "', 'inputs_sha256 = "zz', "record.inputs_sha256"),
        ("modes = 3\n\n[record.results]", "modes = 0\n\n[record.results]", "record.modes"),
        ("frequencies_hz = [", 'frequencies_hz = ["fast", ', "record.results.frequencies_hz"),
        ("rayleigh_hz = ", "rayleigh_hz = true\nold_rayleigh = ", "record.results.rayleigh_hz"),
        ("bracket_inside = true", "bracket_inside = 1", "record.results.bracket_inside"),
        ("written = ", 'written = "yesterday"\nwas = ', "record.written"),
        ("at_m = ", "at_x = ", "record.results.equivalent.at_m"),
    ],
)
def test_malformed_record_names_the_key(
    solved: tuple[str, object], old: str, new: str, key: str
) -> None:
    text, analysis = solved
    out = _recorded(text, analysis)
    assert old in out
    sheet = loads(out.replace(old, new, 1))
    with pytest.raises(InputError) as info:
        record.verify(sheet)
    assert info.value.key == key
    assert "beamtone solve --record" in (info.value.hint or "")


# --- verification --------------------------------------------------------------------------------


def test_fresh_record_verifies(solved: tuple[str, object]) -> None:
    text, analysis = solved
    result = record.verify(loads(_recorded(text, analysis)))
    assert result is not None
    assert result.passed and result.inputs_unchanged and not result.failures
    assert "reproduces within tolerance" in result.message
    assert {c.key for c in result.comparisons} >= {
        "results.frequencies_hz[0]",
        "results.rayleigh_hz",
        "results.dunkerley_hz",
        "results.bracket_inside",
        "results.equivalent.mass_kg",
    }


def test_no_record_gives_none(solved: tuple[str, object]) -> None:
    assert record.verify(loads(solved[0])) is None


def test_changed_input_fails_with_the_date(solved: tuple[str, object]) -> None:
    text, analysis = solved
    out = _recorded(text, analysis, now=dt.datetime(2026, 1, 2, 3, 4, 5, tzinfo=dt.UTC))
    result = record.verify(loads(replace_value(out, "member.length", "1.01 m")))
    assert not result.passed and not result.inputs_unchanged
    assert "inputs changed since the record was written on 2026-01-02T03:04:05Z" in result.message
    assert any(c.key == "results.frequencies_hz[0]" for c in result.failures)
    # a change that leaves the results alone is still a change of inputs
    same = record.verify(loads(out.replace('"1 m"', '"1000 mm"', 1)))
    assert not same.passed and same.reproduced and "describe other inputs" in same.message


def _tamper(text: str, path: list[str | int], change: object) -> str:
    document = tomlkit.parse(text)
    node = document["record"]
    for part in path[:-1]:
        node = node[part]
    node[path[-1]] = change(node[path[-1]]) if callable(change) else change
    return tomlkit.dumps(document)


@pytest.mark.parametrize(
    ("path", "change", "key"),
    [
        (["results", "frequencies_hz", 1], lambda f: f * (1 + 2e-6), "results.frequencies_hz[1]"),
        (["results", "estimated_errors", 0], lambda e: 0.01, "results.estimated_errors[0]"),
        (["results", "rayleigh_hz"], lambda f: f * 1.001, "results.rayleigh_hz"),
        (["results", "dunkerley_hz"], lambda f: f * 0.999, "results.dunkerley_hz"),
        (["results", "bracket_inside"], False, "results.bracket_inside"),
        (["results", "rigid_body_modes"], 1, "results.rigid_body_modes"),
        (["results", "equivalent", "mass_kg"], lambda m: m * 1.01, "results.equivalent.mass_kg"),
        (["results", "rayleigh_shape"], "polynomial", "results.rayleigh_shape"),
    ],
)
def test_tampered_result_fails(
    solved: tuple[str, object], path: list[str | int], change: object, key: str
) -> None:
    text, analysis = solved
    tampered = _tamper(_recorded(text, analysis), path, change)
    result = record.verify(loads(tampered))
    assert result.inputs_unchanged and not result.passed
    assert [c.key for c in result.failures] == [key]
    assert "does not reproduce" in result.message


def test_fewer_stored_modes_fail(solved: tuple[str, object]) -> None:
    text, analysis = solved
    out = _recorded(text, analysis)
    out = _tamper(out, ["modes"], 2)
    out = _tamper(out, ["results", "frequencies_hz"], lambda f: list(f)[:2])
    out = _tamper(out, ["results", "estimated_errors"], lambda e: list(e)[:2])
    result = record.verify(loads(out))
    assert result.passed  # solved again with the stored count, the two modes agree
    assert len([c for c in result.comparisons if "frequency" in c.quantity]) == 2


def test_difference_within_tolerance_passes(solved: tuple[str, object]) -> None:
    """Round-off of another platform (1e-9) is well inside the 1e-6 accuracy target."""
    text, analysis = solved
    out = _tamper(
        _recorded(text, analysis), ["results", "frequencies_hz", 0], lambda f: f * (1 + 1e-9)
    )
    result = record.verify(loads(out))
    assert result.passed
    c = next(c for c in result.comparisons if c.key == "results.frequencies_hz[0]")
    assert 0 < c.relative < c.tolerance == record.FREQUENCY_TOLERANCE


def test_forced_mesh_is_solved_again_with_that_mesh(solved: tuple[str, object]) -> None:
    text, _ = solved
    coarse = analyse(loads(text), elements=4)
    out = _recorded(text, coarse, elements=4)
    assert "elements = 4" in out
    result = record.verify(loads(out))
    assert result.passed and result.record.elements == 4


def test_excitation_margins_are_kept_and_checked(solved: tuple[str, object]) -> None:
    text, analysis = solved
    f = analysis.modes.frequencies_hz  # type: ignore[attr-defined]
    check = margins(f, float(f[1]) * 1.1, (1, 2), 0.2)  # mode 2 inside the 1x band
    out = _recorded(text, analysis, margins=check)
    stored = record.read_record(loads(out)).results.margins
    assert stored.harmonics == (1, 2) and stored.margin == pytest.approx(0.2)
    assert stored.excitation_hz == pytest.approx(float(f[1]) * 1.1)
    assert stored.inside[1][0] is True and not stored.clear
    assert record.verify(loads(out)).passed
    tampered = _tamper(out, ["results", "margins", "inside", 1, 0], False)
    result = record.verify(loads(tampered))
    assert [c.key for c in result.failures] == ["results.margins.inside[1][0]"]


def test_save_record_writes_atomically_and_keeps_the_text(tmp_path: Path) -> None:
    path = tmp_path / "mast.toml"
    original = (ROOT / "worksheets" / "slide-rail-us.toml").read_text(encoding="utf-8")
    path.write_text(original, encoding="utf-8")
    saved = record.save_record(path, analyse(load(path)))
    text = path.read_text(encoding="utf-8")
    assert text.startswith(original.rstrip())
    assert record.read_record(load(path)) == saved
    assert [p.name for p in tmp_path.iterdir()] == ["mast.toml"]  # no temporary file left


def test_save_record_refuses_a_worksheet_changed_meanwhile(tmp_path: Path) -> None:
    path = tmp_path / "rail.toml"
    path.write_bytes((ROOT / "worksheets" / "slide-rail-us.toml").read_bytes())
    analysis = analyse(load(path))
    changed = replace_value(path.read_text(encoding="utf-8"), "member.length", "37 in")
    path.write_text(changed, encoding="utf-8")
    with pytest.raises(InputError) as info:
        record.save_record(path, analysis)
    assert info.value.key == "file" and "changed while it was being solved" in info.value.message
    assert path.read_text(encoding="utf-8") == changed


def test_windows_line_endings_are_kept(solved: tuple[str, object]) -> None:
    text, analysis = solved
    crlf = text.replace("\n", "\r\n")
    out = _recorded(crlf, analysis)
    assert out.startswith(crlf.rstrip()) and "\n" not in out.replace("\r\n", "")
    assert record.verify(loads(out)).passed


BEFORE_TABLE = ROOT / "tests" / "calc" / "records" / "machine-span-before-table.toml"


def test_a_record_written_before_the_table_reads_writes_and_verifies_the_same() -> None:
    """A record written by the record code as it was before one table drove writing, reading
    and verifying (Ritz bounds, Dunkerley's bound, the inline 1-DOF table and an excitation
    check, the excitation 10 % above mode 1): read back it writes the same bytes, and it
    verifies with every comparison in the order and under the rule it had."""
    text = BEFORE_TABLE.read_text(encoding="utf-8")
    sheet = loads(text)
    stored = record.read_record(sheet)
    assert stored is not None and stored.results.margins is not None
    assert record.with_record(text, stored) == text
    result = record.verify(sheet)
    assert result is not None and result.passed, result.failures
    rows = [(c.key, c.unit, c.rule) for c in result.comparisons]
    assert rows[:5] == [
        ("results.rigid_body_modes", "", "equal"),
        ("results.frequencies_hz[0]", "Hz", rows[1][2]),
        ("results.estimated_errors[0]", "", "within x10"),
        ("results.frequencies_hz[1]", "Hz", rows[3][2]),
        ("results.estimated_errors[1]", "", "within x10"),
    ]
    assert rows[7:12] == [
        ("results.rayleigh_hz", "Hz", "1e-06"),
        ("results.rayleigh_shape", "", "equal"),
        ("results.dunkerley_hz", "Hz", rows[9][2]),
        ("results.bracket_inside", "", "equal"),
        ("results.ritz_hz[0]", "Hz", "1e-06"),
    ]
    assert rows[15:18] == [
        ("results.equivalent.at_m", "m", "1e-03 of L"),
        ("results.equivalent.mass_kg", "kg", "1e-03"),
        ("results.equivalent.stiffness_n_per_m", "N/m", "1e-03"),
    ]
    assert [r[0] for r in rows[18:]] == [
        f"results.margins.inside[{i}][{j}]" for i in range(3) for j in range(2)
    ]
    assert result.comparisons[18].stored is True  # mode 1 inside the 1x band


def test_one_table_holds_every_stored_result() -> None:
    covered = {entry.parent for entry in record._RESULTS}
    assert covered == set(record.StoredResults.__dataclass_fields__)


# --- tolerance bands -----------------------------------------------------------------------------

TOLERANCED = CANTILEVER.replace(
    "[check]",
    'left_rotational_stiffness = ["20 kN*m/rad", "rigid"]\n\n[[mass]]\nat = "1 m"\n'
    'mass = "0.5 kg"\n\n[tolerances]\n"member.material.youngs_modulus" = "5 %"\n'
    '"mass[0].mass" = ["0.45 kg", "0.6 kg"]\n\n[check]',
)


@pytest.fixture(scope="module")
def banded() -> tuple[str, object]:
    return TOLERANCED, analyse(loads(TOLERANCED))


def test_bands_and_sensitivities_are_stored_and_verified(banded: tuple[str, object]) -> None:
    text, analysis = banded
    out = _recorded(text, analysis)
    stored = record.read_record(loads(out)).results.bands
    assert stored is not None and len(stored) == len(analysis.bands.modes)
    first = stored[0]
    band = analysis.bands.modes[0]
    assert (first.direction, first.mode) == (band.direction, band.number)
    assert (first.low_hz, first.high_hz, first.method) == (band.low_hz, band.high_hz, band.method)
    assert set(first.keys) == {t.key for t in analysis.bands.tolerances}
    # the elasticity of E is 1/2 (f ~ sqrt(E), dimensional analysis), stored as computed
    e = first.elasticities[first.keys.index("member.material.youngs_modulus")]
    assert e == pytest.approx(0.5, abs=1e-6)
    result = record.verify(loads(out))
    assert result.passed, [c.key for c in result.failures]
    keys = {c.key for c in result.comparisons}
    leaves = ("low_hz", "high_hz", "method", "elasticities", "contributions_hz")
    assert {f"results.bands[0].{leaf}" for leaf in leaves} <= keys


@pytest.mark.parametrize(
    ("leaf", "change", "key"),
    [
        ("high_hz", lambda f: f * (1 + 1e-4), "results.bands[0].high_hz"),
        ("method", "first-order", "results.bands[0].method"),
        ("elasticities", lambda v: [x + 0.01 for x in v], "results.bands[0].elasticities"),
        ("contributions_hz", lambda v: [x * 1.01 for x in v], "results.bands[0].contributions_hz"),
    ],
)
def test_a_tampered_band_fails(
    banded: tuple[str, object], leaf: str, change: object, key: str
) -> None:
    text, analysis = banded
    document = tomlkit.parse(_recorded(text, analysis))
    row = document["record"]["results"]["bands"][0]
    if leaf == "method" and row[leaf] == "first-order":
        change = "corners"
    row[leaf] = change(list(row[leaf]) if isinstance(row[leaf], list) else row[leaf]) if callable(
        change
    ) else change  # fmt: skip
    result = record.verify(loads(tomlkit.dumps(document)))
    assert result.inputs_unchanged and not result.passed
    assert {c.key for c in result.failures} == {key}


def test_a_malformed_band_names_its_key(banded: tuple[str, object]) -> None:
    text, analysis = banded
    document = tomlkit.parse(_recorded(text, analysis))
    document["record"]["results"]["bands"][1]["keys"] = ["only one"]
    with pytest.raises(InputError) as err:
        record.read_record(loads(tomlkit.dumps(document)))
    assert err.value.key.startswith("record.results.bands[1].")
