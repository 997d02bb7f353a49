"""The material library as a worksheet names it: names are forgiving of case, spaces and the
longer name, and give the very material the short name gives.
"""

from __future__ import annotations

import pytest

from beamtone.calc.worksheet import loads
from tests.calc.sheets import BASE, edit


@pytest.mark.parametrize("name", ["steel", "Steel", "STEEL", " steel ", "structural steel"])
def test_library_material_names_are_forgiving(name: str) -> None:
    reference = loads(BASE).member.segments[0].material
    sheet = loads(edit('material = "steel"', f'material = "{name}"'))
    assert sheet.member.segments[0].material == reference
