"""The vendored reference copies match the shared reference folder, where it is present."""

from __future__ import annotations

import pytest

from tests.reference import SHARED, VENDORED


@pytest.mark.parametrize("path", sorted(VENDORED.glob("*.csv")), ids=lambda p: p.name)
def test_vendored_copy_matches_shared(path) -> None:  # noqa: ANN001
    shared = SHARED / path.name
    if not shared.is_file():
        pytest.skip("no shared reference folder beside this checkout")
    assert path.read_bytes() == shared.read_bytes()
