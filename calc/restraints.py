"""What each support kind holds in every direction, and how a worksheet overrides it.

A member moves in four uncoupled directions: bending in the *depth plane* (the plane of a
format 1 worksheet), bending in the *width plane*, twist about its axis (*torsion*) and
stretching along it (*axial*).  Each end and inner support kind has one stated meaning in
every direction (the table below, also in the README); any direction can be overridden per
support in the worksheet (``supports.left = { kind = "pinned", torsion = "free" }``).

================  ==========  ==========  =====================  ==========================
support kind      depth       width       torsion                axial
================  ==========  ==========  =====================  ==========================
clamped           clamped     clamped     clamped (twist and     held
                                          warping held)
pinned            pinned      pinned      fork (twist held,      held; free at the right end
                                          warping free)          of a member pinned at both
                                                                 ends (a pin and a roller)
guided            guided      guided      fork                   free (the end slides)
free              free        free        free                   free
inner pinned      pinned      pinned      fork                   free
inner clamped     clamped     clamped     clamped                held
inner guided      guided      guided      fork                   free
================  ==========  ==========  =====================  ==========================

Bending kinds are those of the depth plane (clamped, pinned, guided, free; inside the
member pinned, clamped or guided).  Torsion kinds: ``clamped`` holds the twist and the
warping of the section, ``fork`` holds the twist only, ``free`` holds neither.  Axial
kinds: ``held`` or ``free``.  These defaults are common practice for idealized supports;
the engineer decides what the real support holds.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING

from beamtone.calc.errors import InputError

if TYPE_CHECKING:
    from beamtone.calc.model import Member

__all__ = [
    "DIRECTIONS",
    "DIRECTION_KINDS",
    "OVERRIDES",
    "Restraint",
    "end_restraint",
    "inner_restraint",
    "member_restraints",
]

OVERRIDES = ("width", "torsion", "axial")
"""The directions a support may set for itself (its kind is its depth-plane condition)."""

DIRECTIONS = ("depth", "width", "torsion", "axial")
"""The four directions a member vibrates in, in the order results list them."""

_BENDING = ("clamped", "pinned", "guided", "free")
DIRECTION_KINDS: dict[str, tuple[str, ...]] = {
    "depth": _BENDING,
    "width": _BENDING,
    "torsion": ("clamped", "fork", "free"),
    "axial": ("held", "free"),
}
"""What a support may hold in each direction (inner supports: no ``free`` in bending)."""

_TORSION = {"clamped": "clamped", "pinned": "fork", "guided": "fork", "free": "free"}
_AXIAL = {"clamped": "held", "pinned": "held", "guided": "free", "free": "free"}


@dataclass(frozen=True)
class Restraint:
    """What one support holds in each direction.

    Attributes
    ----------
    depth, width : str
        Bending kind in each plane: clamped, pinned, guided or free.
    torsion : str
        clamped (twist and warping held), fork (twist held) or free.
    axial : str
        held or free.
    overridden : tuple of str
        The directions the worksheet set itself (the rest are the kind's defaults).
    """

    depth: str
    width: str
    torsion: str
    axial: str
    overridden: tuple[str, ...] = ()

    def kind(self, direction: str) -> str:
        """The kind in one of ``DIRECTIONS``."""
        return str(getattr(self, direction))

    @property
    def holds_twist(self) -> bool:
        """True where the twist is held (clamped or fork)."""
        return self.torsion != "free"


def _apply(
    defaults: dict[str, str], overrides: Mapping[str, str], key: str, inner: bool
) -> Restraint:
    values = dict(defaults)
    for direction, kind in overrides.items():
        if direction not in DIRECTION_KINDS or direction == "depth":
            raise InputError(
                f"{key}.{direction}",
                kind,
                "one of the directions width, torsion, axial (kind sets the depth plane)",
            )
        allowed = DIRECTION_KINDS[direction]
        if inner and direction in ("depth", "width"):
            allowed = tuple(k for k in allowed if k != "free")
        if kind not in allowed:
            raise InputError(f"{key}.{direction}", kind, "one of " + ", ".join(allowed))
        values[direction] = kind
    return Restraint(**values, overridden=tuple(d for d in DIRECTIONS if d in overrides))


def end_restraint(
    kind: str,
    side: str,
    other: str,
    overrides: Mapping[str, str] | None = None,
    key: str = "supports.left",
) -> Restraint:
    """What an end support holds in every direction.

    Parameters
    ----------
    kind : str
        The end's kind (clamped, pinned, guided, free): its depth-plane condition.
    side : str
        ``"left"`` or ``"right"``.
    other : str
        The kind of the other end (a member pinned at both ends is held axially at the left
        end only).
    overrides : mapping of str to str, optional
        Direction -> kind, as the worksheet gives them.
    key : str
        Key path of the support, named in errors.

    Returns
    -------
    Restraint

    Examples
    --------
    >>> end_restraint("pinned", "right", "pinned").axial
    'free'
    >>> end_restraint("pinned", "left", "pinned", {"torsion": "free"}).torsion
    'free'
    """
    axial = _AXIAL[kind]
    if kind == "pinned" and other == "pinned" and side == "right":
        axial = "free"
    defaults = {"depth": kind, "width": kind, "torsion": _TORSION[kind], "axial": axial}
    return _apply(defaults, overrides or {}, key, inner=False)


def inner_restraint(
    kind: str, overrides: Mapping[str, str] | None = None, key: str = "supports.inner[0]"
) -> Restraint:
    """What an inner support (pinned, clamped or guided) holds in every direction.

    Parameters
    ----------
    kind : str
        Its depth-plane kind.
    overrides : mapping of str to str, optional
        Direction -> kind, as the worksheet gives them.
    key : str
        Key path of the support, named in errors.

    Returns
    -------
    Restraint
    """
    axial = "held" if kind == "clamped" else "free"
    defaults = {"depth": kind, "width": kind, "torsion": _TORSION[kind], "axial": axial}
    return _apply(defaults, overrides or {}, key, inner=True)


def member_restraints(member: Member) -> tuple[Restraint, Restraint, tuple[Restraint, ...]]:
    """The left end's, the right end's and each inner support's restraint.

    Raises
    ------
    InputError
        For an override naming an unknown direction or kind (keyed as in the worksheet).
    """
    left = end_restraint(
        member.left, "left", member.right, dict(member.left_overrides), "supports.left"
    )
    right = end_restraint(
        member.right, "right", member.left, dict(member.right_overrides), "supports.right"
    )
    inner = tuple(
        inner_restraint(s.kind, dict(s.overrides), f"supports.inner[{i}]")
        for i, s in enumerate(member.inner_supports)
    )
    return left, right, inner
