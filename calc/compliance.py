"""Support compliance: a holding support with a finite translational or rotational stiffness.

A real support is never rigid.  A support that holds a deflection or a slope may be given a
finite stiffness for what it holds; the member is then solved with that restraint released
and a grounded spring of that stiffness at the support, which is exact (a grounded spring
at the support's position is the same boundary term in the energy as an elastic support).
A rigid compliance (``math.inf``) leaves the support exactly as written, so a rigid limit
gives today's numbers bit for bit.  The stiffness acts in both bending planes (the width
plane too, unless the worksheet sets that plane apart); torsion and axial motion keep what
the support held as written.  An inner support released in both bending directions is
replaced by its spring alone and no longer holds torsion or axial motion: give a
``[[spring]]`` with ``torsional_stiffness``/``axial_stiffness`` where it does.

Key paths (the worksheet's names): ``supports.left_stiffness``,
``supports.left_rotational_stiffness``, ``supports.right_stiffness``,
``supports.right_rotational_stiffness``, ``supports.inner[i].stiffness``,
``supports.inner[i].rotational_stiffness``.

How stiff a real support is stays the user's judgement; beamtone gives no typical values.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from beamtone.calc.errors import InputError
from beamtone.calc.model import HOLDS, Member, Spring

__all__ = ["Compliance", "compliant_member", "compliance_key", "support_position"]

_KIND_OF = {
    (True, True): "clamped",
    (True, False): "pinned",
    (False, True): "guided",
    (False, False): "free",
}


@dataclass(frozen=True)
class Compliance:
    """The stiffness of one holding support.

    Attributes
    ----------
    support : str
        ``"left"``, ``"right"`` or ``"inner[i]"`` (index from 0).
    stiffness : float
        Translational stiffness [N/m]; ``math.inf`` for rigid.
    rotational_stiffness : float
        Rotational stiffness [N*m/rad]; ``math.inf`` for rigid.
    """

    support: str
    stiffness: float = math.inf
    rotational_stiffness: float = math.inf


def compliance_key(support: str, rotational: bool) -> str:
    """Key path of a support's stiffness, e.g. ``supports.left_rotational_stiffness``."""
    name = "rotational_stiffness" if rotational else "stiffness"
    if support in ("left", "right"):
        return f"supports.{support}_{name}"
    return f"supports.{support}.{name}"


def _inner_index(support: str) -> int | None:
    if support.startswith("inner[") and support.endswith("]") and support[6:-1].isdigit():
        return int(support[6:-1])
    return None


def support_position(member: Member, support: str) -> tuple[float, str]:
    """Position [m] and kind of a support named ``left``, ``right`` or ``inner[i]``.

    Raises
    ------
    InputError
        For a support the member does not have.
    """
    if support == "left":
        return 0.0, member.left
    if support == "right":
        return member.length, member.right
    i = _inner_index(support)
    if i is None or i >= len(member.inner_supports):
        raise InputError(
            f"supports.{support}",
            support,
            f"left, right or inner[0] to inner[{len(member.inner_supports) - 1}]"
            if member.inner_supports
            else "left or right (the member has no inner supports)",
        )
    sup = member.inner_supports[i]
    return sup.at, sup.kind


def compliant_member(member: Member, compliances: tuple[Compliance, ...]) -> Member:
    """The member with each compliant support released and replaced by a grounded spring.

    Parameters
    ----------
    member : Member
        The member with its supports as written (rigid).
    compliances : tuple of Compliance
        At most one per support.

    Returns
    -------
    Member
        The same member where every compliance is rigid; otherwise each support keeps
        what it still holds rigidly and a spring at its position carries the rest.
        The added springs follow the worksheet's own springs in ``member.springs``.

    Raises
    ------
    InputError
        For a stiffness given for a direction the support does not hold, or a stiffness
        that is not positive, keyed by the compliance's key path.
    """
    from beamtone.calc.restraints import member_restraints

    original = member_restraints(member)
    left, right = member.left, member.right
    inner = list(member.inner_supports)
    drop: set[int] = set()
    springs: list[Spring] = []
    seen: set[str] = set()
    for c in compliances:
        if c.support in seen:
            raise InputError(f"supports.{c.support}", c.support, "one stiffness entry per support")
        seen.add(c.support)
        at, kind = support_position(member, c.support)
        holds_w, holds_slope = HOLDS[kind]
        k, kr = c.stiffness, c.rotational_stiffness
        for value, holds, rotational in ((k, holds_w, False), (kr, holds_slope, True)):
            key = compliance_key(c.support, rotational)
            if math.isinf(value) and value > 0:
                continue
            if not holds:
                what = "rotation" if rotational else "deflection"
                raise InputError(
                    key,
                    value,
                    f"no stiffness here: a {kind} support does not hold {what} "
                    "(give the stiffness of what it holds, or add a [[spring]])",
                )
            if not (math.isfinite(value) and value > 0.0):
                raise InputError(key, value, "a positive stiffness, or rigid")
        release_w = holds_w and math.isfinite(k)
        release_slope = holds_slope and math.isfinite(kr)
        if not (release_w or release_slope):
            continue
        new_kind = _KIND_OF[(holds_w and not release_w, holds_slope and not release_slope)]
        spring = Spring(at, k if release_w else 0.0, kr if release_slope else 0.0)
        if _restraint(original, c.support).width != kind:  # the width plane was set apart
            spring = replace(spring, stiffness_width=0.0, rotational_stiffness_width=0.0)
        springs.append(spring)
        if c.support == "left":
            left = new_kind
        elif c.support == "right":
            right = new_kind
        else:
            i = _inner_index(c.support)
            assert i is not None
            if new_kind == "free":
                drop.add(i)
            else:
                inner[i] = replace(inner[i], kind=new_kind)
    if not springs:
        return member
    # Torsion and axial motion keep what each support held as written (and the width plane
    # what it was set to apart from the depth plane).
    rl, rr, ri = original
    kept = tuple(
        replace(s, overrides=_kept(ri[i], s.kind)) for i, s in enumerate(inner) if i not in drop
    )
    return replace(
        member,
        left=left,
        right=right,
        inner_supports=kept,
        springs=(*member.springs, *springs),
        left_overrides=_kept(rl, left),
        right_overrides=_kept(rr, right),
    )


def _restraint(original: tuple, support: str):  # noqa: ANN202 - restraints.Restraint
    left, right, inner = original
    if support == "left":
        return left
    if support == "right":
        return right
    i = _inner_index(support)
    assert i is not None
    return inner[i]


def _kept(restraint, kind: str) -> tuple[tuple[str, str], ...]:  # noqa: ANN001, ARG001
    """Overrides that keep a support's torsion, axial and set-apart width kinds."""
    out = []
    if restraint.width != restraint.depth:  # else the width plane follows the new kind
        out.append(("width", restraint.width))
    out += [("torsion", restraint.torsion), ("axial", restraint.axial)]
    return tuple(out)
