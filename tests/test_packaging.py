"""The installed distribution owns exactly one top-level name, ``beamtone``.

Installed beside another distribution that ships a ``cli`` (or ``calc``, ``tui``) package, a
top-level ``cli`` of ours would be shadowed or deleted; a wheel whose only top-level package
is ``beamtone`` cannot collide that way.
"""

from __future__ import annotations

import subprocess
import sys
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_the_wheel_installs_one_top_level_package(tmp_path: Path) -> None:
    subprocess.run(
        [sys.executable, "-m", "pip", "wheel", "--quiet", "--no-deps",
         "--wheel-dir", str(tmp_path), str(ROOT)],
        check=True, capture_output=True, text=True, timeout=300,
    )  # fmt: skip
    (wheel,) = tmp_path.glob("beamtone-*.whl")
    names = zipfile.ZipFile(wheel).namelist()
    top = {name.split("/")[0] for name in names if not name.split("/")[0].endswith(".dist-info")}
    assert top == {"beamtone"}
    # Every source file of the mapped folders ships (a new subpackage must be listed in
    # pyproject.toml's packages, or it would be missing from the wheel).
    folders = {"beamtone": "", "calc": "calc/", "cli": "cli/", "render": "render/", "tui": "tui/"}
    for folder, inside in folders.items():
        for source in (ROOT / folder).rglob("*"):
            if source.suffix in (".py", ".tcss", ".toml", ".json") and "__pycache__" not in str(
                source
            ):
                relative = source.relative_to(ROOT / folder).as_posix()
                assert f"beamtone/{inside}{relative}" in names, relative
    assert any(name.startswith("beamtone/tui/templates/") for name in names)
    entry = next(n for n in names if n.endswith("entry_points.txt"))
    assert "beamtone = beamtone.cli.main:run" in zipfile.ZipFile(wheel).read(entry).decode()
