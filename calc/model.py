"""The member model: immutable SI dataclasses that map one-to-one onto the worksheet.

A member is a straight Euler-Bernoulli beam made of uniform segments, laid out
left to right along x (x = 0 at the left end), vibrating in bending in one
plane.  It may carry point masses and rotary inertias, grounded translational
and rotational springs, rigid inner supports, distributed added mass, and a
constant axial force (tension positive).
"""

from __future__ import annotations

import bisect
import math
from dataclasses import dataclass, field

from beamtone.calc.errors import InputError
from beamtone.calc.materials import Material
from beamtone.calc.sections import Section

__all__ = [
    "HOLDS",
    "POSITION_TOLERANCE",
    "END_KINDS",
    "INNER_KINDS",
    "Segment",
    "PointMass",
    "Spring",
    "InnerSupport",
    "Member",
    "Hold",
    "holds",
    "supports",
    "rigid_body_count",
    "rigid_motion_rows",
    "rotation_free",
]

END_KINDS = ("clamped", "pinned", "guided", "free")
INNER_KINDS = ("pinned", "clamped", "guided")

# What each support kind holds: (deflection, slope).  Read it through ``holds``.
HOLDS = {
    "clamped": (True, True),
    "pinned": (True, False),
    "guided": (False, True),
    "free": (False, False),
}

# Two positions closer than this fraction of the member length are one station (a tiny
# element between them would only ruin the conditioning of the stiffness matrix).
POSITION_TOLERANCE = 1e-6


@dataclass(frozen=True)
class Segment:
    """A uniform length of the member.

    Attributes
    ----------
    length : float
        Segment length [m].
    material : Material
        Its material.
    section : Section
        Its cross-section.
    added_mass : float
        Non-structural mass per length carried along it [kg/m].
    """

    length: float
    material: Material
    section: Section
    added_mass: float = 0.0

    @property
    def bending_stiffness(self) -> float:
        """EI [N*m^2]."""
        return self.material.youngs_modulus * self.section.second_moment

    @property
    def mass_per_length(self) -> float:
        """rho*A + added mass [kg/m]."""
        return self.material.density * self.section.area + self.added_mass


@dataclass(frozen=True)
class PointMass:
    """A point mass at ``at`` [m]: mass [kg], rotary inertia about the bending axis [kg*m^2].

    ``rotary_inertia_width`` [kg*m^2] is the rotary inertia for bending in the width plane
    (None: the same as ``rotary_inertia``); ``polar_inertia`` [kg*m^2] its moment of inertia
    about the member's axis (torsion).  The mass acts in both bending planes and axially.
    """

    at: float
    mass: float
    rotary_inertia: float = 0.0
    rotary_inertia_width: float | None = None
    polar_inertia: float = 0.0


@dataclass(frozen=True)
class Spring:
    """A grounded spring at ``at`` [m]: stiffness [N/m], rotational stiffness [N*m/rad].

    Both act in the depth plane, and in the width plane too unless ``stiffness_width`` [N/m]
    or ``rotational_stiffness_width`` [N*m/rad] are given; ``torsional_stiffness``
    [N*m/rad] and ``axial_stiffness`` [N/m] act in torsion and axially.
    """

    at: float
    stiffness: float = 0.0
    rotational_stiffness: float = 0.0
    stiffness_width: float | None = None
    rotational_stiffness_width: float | None = None
    torsional_stiffness: float = 0.0
    axial_stiffness: float = 0.0


@dataclass(frozen=True)
class InnerSupport:
    """A rigid support strictly inside the member at ``at`` [m]; kind pinned, clamped or guided.

    ``overrides`` are (direction, kind) pairs the worksheet sets for the width plane, torsion
    or axial motion (:mod:`calc.restraints` states each kind's defaults).
    """

    at: float
    kind: str
    overrides: tuple[tuple[str, str], ...] = ()


@dataclass(frozen=True)
class Member:
    """A beam-like member, all in SI.

    Attributes
    ----------
    segments : tuple of Segment
        Left to right; a uniform member has one.
    left, right : str
        End conditions, each one of ``END_KINDS``.
    masses : tuple of PointMass
    springs : tuple of Spring
    inner_supports : tuple of InnerSupport
    axial_force : float
        Constant axial force [N], tension positive.
    left_overrides, right_overrides : tuple of (str, str)
        (direction, kind) pairs an end sets for the width plane, torsion or axial motion
        (:mod:`calc.restraints`).
    theory : str
        The beam theory of the bending solve: ``"euler-bernoulli"`` (the default of the model;
        the worksheet's default is ``"timoshenko"``), or ``"timoshenko"`` (shear deformation
        and rotary inertia of the section, :mod:`calc.shear`).

    Raises
    ------
    InputError
        When the description is inconsistent; the key path names the worksheet entry.
    """

    segments: tuple[Segment, ...]
    left: str = "clamped"
    right: str = "free"
    masses: tuple[PointMass, ...] = ()
    springs: tuple[Spring, ...] = ()
    inner_supports: tuple[InnerSupport, ...] = ()
    axial_force: float = 0.0
    left_overrides: tuple[tuple[str, str], ...] = ()
    right_overrides: tuple[tuple[str, str], ...] = ()
    theory: str = "euler-bernoulli"
    _boundaries: tuple[float, ...] = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        if not self.segments:
            raise InputError("member", None, "a length, material and section, or segments")
        edges = [0.0]
        for seg in self.segments:
            edges.append(edges[-1] + seg.length)
        object.__setattr__(self, "_boundaries", tuple(edges))
        _validate(self)

    @property
    def length(self) -> float:
        """Total length L [m]."""
        return self._boundaries[-1]

    @property
    def boundaries(self) -> tuple[float, ...]:
        """Positions of segment ends, 0 to L [m]."""
        return self._boundaries

    @property
    def is_uniform(self) -> bool:
        """True when every segment has the same EI and mass per length."""
        first = self.segments[0]
        return all(
            math.isclose(s.bending_stiffness, first.bending_stiffness, rel_tol=1e-12)
            and math.isclose(s.mass_per_length, first.mass_per_length, rel_tol=1e-12)
            for s in self.segments
        )

    @property
    def member_mass(self) -> float:
        """Mass of the member itself including added mass [kg]."""
        return sum(s.mass_per_length * s.length for s in self.segments)

    @property
    def total_mass(self) -> float:
        """Member mass plus point masses [kg]."""
        return self.member_mass + sum(m.mass for m in self.masses)

    def segment_index(self, x: float) -> int:
        """Index of the segment containing position ``x`` [m] (the left one at a boundary)."""
        for i, end in enumerate(self._boundaries[1:]):
            if x <= end:
                return i
        return len(self.segments) - 1


def _validate(member: Member) -> None:
    L = member.length
    tol = POSITION_TOLERANCE * L
    if member.theory not in ("euler-bernoulli", "timoshenko"):
        raise InputError("member.theory", member.theory, "timoshenko or euler-bernoulli")
    for key, kind in (("supports.left", member.left), ("supports.right", member.right)):
        if kind not in END_KINDS:
            raise InputError(key, kind, "one of " + ", ".join(END_KINDS))
    for i, m in enumerate(member.masses):
        _check_position(f"mass[{i}].at", m.at, L, tol)
    for i, s in enumerate(member.springs):
        _check_position(f"spring[{i}].at", s.at, L, tol)
    seen: list[float] = []  # positions, ascending
    order: list[int] = []  # their indices
    for i, sup in enumerate(member.inner_supports):
        key = f"supports.inner[{i}]"
        if sup.kind not in INNER_KINDS:
            raise InputError(f"{key}.kind", sup.kind, "one of " + ", ".join(INNER_KINDS))
        if not (tol < sup.at < L - tol):
            raise InputError(
                f"{key}.at",
                f"{sup.at:.6g} m",
                f"a position strictly inside the member, between 0 m and {L:.6g} m "
                "(use supports.left and supports.right for the ends)",
            )
        # the earlier supports, sorted (they are more than tol apart, so only the two
        # neighbours of the new one can be within tol of it): O(n log n) for 1,000 supports
        place = bisect.bisect_left(seen, sup.at)
        near = [order[k] for k in (place - 1, place) if 0 <= k < len(seen)
                and abs(seen[k] - sup.at) <= tol]  # fmt: skip
        if near:
            raise InputError(
                f"{key}.at",
                f"{sup.at:.6g} m",
                f"a position different from supports.inner[{min(near)}].at; two supports at one "
                "place",
            )
        seen.insert(place, sup.at)
        order.insert(place, i)
    if (
        member.left_overrides
        or member.right_overrides
        or any(s.overrides for s in member.inner_supports)
    ):
        from beamtone.calc.restraints import member_restraints

        member_restraints(member)  # every direction a support sets is a known kind


def _check_position(key: str, at: float, L: float, tol: float) -> None:
    if not math.isfinite(at) or at < -tol or at > L + tol:
        raise InputError(key, f"{at:.6g} m", f"a position on the member, from 0 m to {L:.6g} m")


@dataclass(frozen=True)
class Hold:
    """What one restraint holds of the rigid motions w = a + b*x.

    Attributes
    ----------
    at : float or None
        Position [m]; None for the axial force, whose geometric stiffness holds the slope
        along the whole member.
    deflection : bool
        It holds the deflection at ``at`` (a rigid support, or a translational spring).
    slope : bool
        It holds the slope (a rigid support, a rotational spring, or the axial force).
    source : str
        ``"support"``, ``"spring"`` or ``"axial force"``.
    """

    at: float | None
    deflection: bool
    slope: bool
    source: str


def supports(member: Member) -> list[tuple[float, str]]:
    """Every rigid support as (position [m], kind): the two ends, then the inner supports."""
    out = [(0.0, member.left), (member.length, member.right)]
    return out + [(s.at, s.kind) for s in member.inner_supports]


def holds(member: Member, *, springs: bool = True, axial: bool = True) -> list[Hold]:
    """What the supports (and the springs and the axial force) hold: the one place that says so.

    Parameters
    ----------
    member : Member
    springs : bool
        Include the grounded springs (a translational spring holds the deflection at its
        position, a rotational spring holds the slope).
    axial : bool
        Include the axial force (it holds the slope through its geometric stiffness).

    Returns
    -------
    list of Hold
        Supports in the order of :func:`supports`, then springs, then the axial force; entries
        that hold nothing (a free end, a spring of zero stiffness) are left out.
    """
    out: list[Hold] = []
    for x, kind in supports(member):
        holds_w, holds_slope = HOLDS[kind]
        if holds_w or holds_slope:
            out.append(Hold(x, holds_w, holds_slope, "support"))
    if springs:
        for s in member.springs:
            w, slope = s.stiffness > 0.0, s.rotational_stiffness > 0.0
            if w or slope:
                out.append(Hold(s.at, w, slope, "spring"))
    if axial and member.axial_force != 0.0:
        out.append(Hold(None, False, True, "axial force"))
    return out


def rigid_motion_rows(member: Member) -> list[list[float]]:
    """Rows of the conditions the restraints put on (a, b) of the rigid motion w = a + b*x/L.

    A held deflection at x gives [1, x/L]; a held slope gives [0, 1].  The null space of
    these rows is the rigid motion the member has left.
    """
    L = member.length
    rows: list[list[float]] = []
    for h in holds(member):
        if h.deflection:
            rows.append([1.0, (h.at or 0.0) / L])
        if h.slope:
            rows.append([0.0, 1.0])
    return rows


def _deflection_points(member: Member, restraints: list[Hold]) -> list[float]:
    """Distinct positions [m] where the deflection is held (closer than the tolerance: one)."""
    tol = POSITION_TOLERANCE * member.length
    distinct: list[float] = []
    for x in sorted(h.at for h in restraints if h.deflection and h.at is not None):
        if not distinct or x - distinct[-1] > tol:
            distinct.append(x)
    return distinct


def rotation_free(member: Member) -> bool:
    """True where the restraints leave a rigid rotation free (nothing holds a slope, and the
    deflection is held at one place at most)."""
    restraints = holds(member)
    if any(h.slope for h in restraints):
        return False
    return len(_deflection_points(member, restraints)) <= 1


def rigid_body_count(member: Member) -> int:
    """Number of rigid-body modes, decided from the supports and springs themselves.

    The rigid motions of a beam are w = a + b*x.  Every restraint removes what
    it holds of them: zero deflection or a translational spring at x holds
    a + b*x, zero slope or a rotational spring holds b, and an axial force
    (through its geometric stiffness) holds b as well.  What the restraints
    leave free is counted exactly, without a numerical threshold.

    Parameters
    ----------
    member : Member

    Returns
    -------
    int
        0, 1 or 2.
    """
    restraints = holds(member)
    slope_held = any(h.slope for h in restraints)
    distinct = _deflection_points(member, restraints)
    rank = min(2, (1 if slope_held else 0) + min(len(distinct), 2 if not slope_held else 1))
    return 2 - rank
