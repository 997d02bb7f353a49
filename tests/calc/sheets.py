"""Test support shared by the calc tests: one good base worksheet, exact unit factors, and
forgetting what the unit parser remembers.

The exact conversion factors are those of the international yard and pound agreement of 1959
(1 in = 0.0254 m, 1 lb = 0.45359237 kg) and of standard gravity (g_0 = 9.80665 m/s^2, 3rd CGPM,
1901), so 1 lbf = 4.4482216152605 N exactly.
"""

from __future__ import annotations

import math

from beamtone.calc import units

__all__ = [
    "BASE",
    "BASE_SECTION",
    "CHECK",
    "FT",
    "HEAD",
    "IN",
    "KSI",
    "LB",
    "LBF",
    "MASS",
    "MEMBER",
    "PSI",
    "SPRING",
    "SUPPORTS",
    "close",
    "edit",
    "forget_units",
]

IN = 0.0254  # m
FT = 12 * IN  # m
LB = 0.45359237  # kg (pound-mass)
LBF = LB * 9.80665  # N, = 4.4482216152605 N
PSI = LBF / IN**2  # Pa
KSI = 1000 * PSI  # Pa

# One good base worksheet; bad inputs in the tests are small edits of it.
BASE_SECTION = 'section = { shape = "round-tube", outside_diameter = "60 mm", wall = "4 mm" }'
HEAD = 'format = 1\ntitle = "Base worksheet"\n'
MEMBER = f'\n[member]\nlength = "2 m"\nmaterial = "steel"\n{BASE_SECTION}\n'
SUPPORTS = (
    '\n[supports]\nleft = "pinned"\nright = "pinned"\ninner = [{ at = "1 m", kind = "pinned" }]\n'
)
MASS = '\n[[mass]]\nat = "0.5 m"\nmass = "3 kg"\n'
SPRING = '\n[[spring]]\nat = "1.5 m"\nstiffness = "40 kN/m"\n'
CHECK = "\n[check]\nmodes = 3\n"
BASE = HEAD + MEMBER + SUPPORTS + MASS + SPRING + CHECK


def close(a: float, b: float, rel: float = 1e-12) -> bool:
    """``a`` equals ``b`` to the relative tolerance ``rel`` (no absolute slack)."""
    return math.isclose(a, b, rel_tol=rel, abs_tol=0.0)


def edit(old: str, new: str, base: str = BASE) -> str:
    """``base`` with its one occurrence of ``old`` replaced by ``new``."""
    assert base.count(old) == 1, old
    return base.replace(old, new)


def forget_units() -> None:
    """Forget every unit text the parser has read in this process."""
    units._parse_cached.cache_clear()
    units._checked_units.cache_clear()
