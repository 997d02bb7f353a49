"""Toleranced inputs: which worksheet quantity varies, over what range, and the member at any value.

A :class:`Design` is the member as written (rigid supports) with its support compliances
(:mod:`calc.compliance`).  :func:`vary` returns the member with any of its quantities
changed, addressed by the worksheet's key paths (the ones ``--vary`` takes); it works on
the immutable model (``dataclasses.replace``), never through text, so a value is exact to
the last bit.  Everything here is plain picklable data, so a study can send a design and
its tolerances to other processes or machines.

A :class:`Tolerance` is one input's range, low to high in SI, around its nominal value.
A support stiffness that ranges from a value to rigid is varied as its compliance
(1/stiffness, from 0 at rigid), so the range is finite.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field, replace

from beamtone.calc.compliance import Compliance, compliance_key, compliant_member
from beamtone.calc.errors import InputError
from beamtone.calc.model import InnerSupport, Member, PointMass, Segment, Spring
from beamtone.calc.sections import build_section

__all__ = [
    "Design",
    "Tolerance",
    "vary",
    "vary_within",
    "nominal_value",
    "COMPLIANCE",
    "VALUE",
]

VALUE = "value"
"""A tolerance on the quantity itself."""
COMPLIANCE = "compliance"
"""A tolerance on 1/stiffness of a support (low = 0 is rigid)."""

_END_FOLLOWS = 1e-9  # relative: an attachment this close to the right end moves with it
_SEGMENT = re.compile(r"^member\.segment\[(\d+)\]\.(.+)$")
_ITEM = re.compile(r"^(mass|spring|supports\.inner)\[(\d+)\]\.(\w+)$")
_SUPPORT = re.compile(r"^supports\.(left|right|inner\[\d+\])\.(stiffness|rotational_stiffness)$")
_MATERIAL_FIELDS = ("youngs_modulus", "density")


@dataclass(frozen=True)
class Design:
    """A member as written plus its support compliances.

    Attributes
    ----------
    member : Member
        The member with its supports rigid, as written.
    compliances : tuple of Compliance
        Support stiffnesses (rigid where not given).
    member_level : dict of str to tuple of int
        For ``"material"``, ``"section"`` and ``"added_mass"``: the segments that take
        that entry from ``[member]`` (and so follow a ``member.material...`` key).
        Missing means every segment.
    """

    member: Member
    compliances: tuple[Compliance, ...] = ()
    member_level: Mapping[str, tuple[int, ...]] = field(default_factory=dict, compare=False)

    def solved_member(self) -> Member:
        """The member the finite-element solve sees (compliant supports as springs)."""
        return compliant_member(self.member, self.compliances)

    def segments_of(self, entry: str) -> tuple[int, ...]:
        """Segments that take ``entry`` (material, section, added_mass) from ``[member]``."""
        if entry in self.member_level:
            return self.member_level[entry]
        return tuple(range(len(self.member.segments)))


@dataclass(frozen=True)
class Tolerance:
    """One toleranced input.

    Attributes
    ----------
    key : str
        Key path, as ``--vary`` takes it.
    nominal : float
        The value the analysis uses [SI] (compliance [m/N or rad/(N*m)] for a
        ``COMPLIANCE`` tolerance: 0 is rigid).
    low, high : float
        The range [SI], ``low <= nominal <= high``.
    measure : str
        ``VALUE`` or ``COMPLIANCE``.
    written : str
        The tolerance as the user wrote it (for messages and reports).
    """

    key: str
    nominal: float
    low: float
    high: float
    measure: str = VALUE
    written: str = ""

    def __post_init__(self) -> None:
        if not (math.isfinite(self.low) and math.isfinite(self.high)):
            raise InputError(f"tolerances.{self.key}", self.written, "a finite range")
        if not self.low <= self.nominal <= self.high:
            raise InputError(
                f"tolerances.{self.key}",
                self.written or f"{self.low:g} to {self.high:g}",
                f"a range that contains the nominal value {self.nominal:.6g}",
            )

    @property
    def half_width(self) -> float:
        """Half the range [SI]."""
        return 0.5 * (self.high - self.low)

    def key_value(self, value: float) -> float:
        """The quantity [SI] at ``value`` of the tolerance's measure (stiffness from compliance)."""
        if self.measure == COMPLIANCE:
            return math.inf if value <= 0.0 else 1.0 / value
        return value


def nominal_value(design: Design, key: str) -> float:
    """The current value [SI] of the quantity at ``key`` (``math.inf`` for a rigid support).

    Raises
    ------
    InputError
        For a key this design has no quantity at.
    """
    return _locate(design, key)[0]


def vary(design: Design, values: Mapping[str, float]) -> Design:
    """The design with the quantities at the given key paths set to the given SI values.

    A change of length moves the right end: masses and springs at the right end stay at the
    end, everything else keeps its position (as sizing does).  A support stiffness may be
    ``math.inf`` (rigid).

    Raises
    ------
    InputError
        For an unknown key, or a value the model refuses (keyed by the key path).
    """
    for key, value in values.items():
        design = _locate(design, key)[1](value)
    return design


def vary_within(design: Design, tolerances: Sequence[Tolerance], point: Sequence[float]) -> Member:
    """The member the solver sees at one point of the tolerance box (each in its measure).

    Raises
    ------
    InputError
        Keyed by the input the model refuses, with the point named in the hint.
    """
    values = {t.key: t.key_value(float(v)) for t, v in zip(tolerances, point, strict=True)}
    try:
        return vary(design, values).solved_member()
    except InputError as exc:
        where = ", ".join(
            f"{t.key} = {float(v):.6g}" for t, v in zip(tolerances, point, strict=True)
        )
        raise InputError(
            exc.key,
            exc.value,
            exc.expected,
            f"reached inside the tolerances at {where}; narrow the tolerances",
        ) from None


def _locate(design: Design, key: str):  # noqa: ANN202 - (value, setter)
    member = design.member
    m = _SUPPORT.match(key)
    if m:
        support = m.group(1)
        rotational = m.group(2) == "rotational_stiffness"
        return _compliance(design, support, rotational, key)
    m = _ITEM.match(key)
    if m:
        return _item(design, m.group(1), int(m.group(2)), m.group(3), key)
    if key == "member.axial_force":
        return member.axial_force, lambda v: _with(design, axial_force=v)
    if key == "member.length":
        if len(member.segments) != 1:
            raise _unknown(key, "a segment length (member.segment[i].length) of a segmented member")
        return member.length, lambda v: _length(design, 0, v, key)
    m = _SEGMENT.match(key)
    if m:
        i = int(m.group(1))
        if i >= len(member.segments):
            raise _unknown(key, f"a segment from 0 to {len(member.segments) - 1}")
        return _segment_field(design, (i,), m.group(2), key)
    if key.startswith("member."):
        rest = key[len("member.") :]
        entry = rest.split(".")[0]
        return _segment_field(design, design.segments_of(entry), rest, key)
    raise _unknown(key, "a key path of a quantity of this worksheet")


def _unknown(key: str, expected: str) -> InputError:
    return InputError(key, key, expected)


def _with(design: Design, **changes: object) -> Design:
    try:
        return replace(design, member=replace(design.member, **changes))
    except InputError:
        raise
    except (TypeError, ValueError) as exc:  # pragma: no cover - model refusal
        raise InputError("member", changes, str(exc)) from None


def _segments(design: Design, index: tuple[int, ...], change) -> Design:  # noqa: ANN001
    segs = list(design.member.segments)
    for i in index:
        segs[i] = change(segs[i])
    return _with(design, segments=tuple(segs))


def _length(design: Design, i: int, value: float, key: str) -> Design:
    if not (math.isfinite(value) and value > 0.0):
        raise InputError(key, value, "a positive length")
    member = design.member
    old = member.length
    segs = list(member.segments)
    segs[i] = replace(segs[i], length=value)
    new = 0.0
    for seg in segs:  # summed as the model sums its boundaries, so the end is exactly L
        new += seg.length

    def follow(at: float) -> float:
        return new if abs(at - old) <= _END_FOLLOWS * old else at

    masses = tuple(replace(p, at=follow(p.at)) for p in member.masses)
    springs = tuple(replace(s, at=follow(s.at)) for s in member.springs)
    return _with(design, segments=tuple(segs), masses=masses, springs=springs)


def _segment_field(design: Design, index: tuple[int, ...], rest: str, key: str):  # noqa: ANN202
    segs = design.member.segments
    if not index:
        raise _unknown(key, "a quantity every segment has in its own table")
    first = segs[index[0]]
    if rest == "length":
        return first.length, lambda v: _length(design, index[0], v, key)
    if rest == "added_mass":

        def added(v: float) -> Design:
            _check(key, v, zero=True)
            return _segments(design, index, lambda s: replace(s, added_mass=v))

        return first.added_mass, added
    parts = rest.split(".")
    if len(parts) == 2 and parts[0] == "material" and parts[1] in _MATERIAL_FIELDS:
        name = parts[1]

        def material(v: float) -> Design:
            _check(key, v, zero=False)
            return _segments(
                design, index, lambda s: replace(s, material=replace(s.material, **{name: v}))
            )

        return getattr(first.material, name), material
    if len(parts) == 2 and parts[0] == "section" and parts[1] in first.section.dimensions:
        name = parts[1]

        def section(v: float) -> Design:
            _check(key, v, zero=False)

            def rebuilt(s: Segment) -> Segment:
                dims = dict(s.section.dimensions)
                dims[name] = v
                return replace(
                    s, section=build_section(s.section.shape, dims, key[: -len(name) - 1])
                )

            return _segments(design, index, rebuilt)

        return first.section.dimensions[name], section
    raise _unknown(key, "a quantity of the member: length, material, section or added mass")


def _check(key: str, value: float, zero: bool) -> None:
    if not math.isfinite(value) or value < 0.0 or (value == 0.0 and not zero):
        raise InputError(key, value, "a positive value" if not zero else "a value of zero or more")


def _item(design: Design, table: str, i: int, name: str, key: str):  # noqa: ANN202
    member = design.member
    items: tuple[PointMass, ...] | tuple[Spring, ...] | tuple[InnerSupport, ...]
    field_name = {"mass": "masses", "spring": "springs", "supports.inner": "inner_supports"}[table]
    items = getattr(member, field_name)
    if i >= len(items):
        raise _unknown(key, f"an entry of [[{table}]] from 0 to {len(items) - 1}")
    item = items[i]
    allowed = {
        "mass": ("at", "mass", "rotary_inertia"),
        "spring": ("at", "stiffness", "rotational_stiffness"),
        "supports.inner": ("at",),
    }[table]
    if name not in allowed:
        raise _unknown(key, f"one of {', '.join(allowed)}")

    def setter(v: float) -> Design:
        if name != "at":
            _check(key, v, zero=True)
        elif not math.isfinite(v):
            raise InputError(key, v, "a position on the member")
        new = list(items)
        new[i] = replace(item, **{name: v})
        return _with(design, **{field_name: tuple(new)})

    return float(getattr(item, name)), setter


def _compliance(design: Design, support: str, rotational: bool, key: str):  # noqa: ANN202
    from beamtone.calc.compliance import support_position

    support_position(design.member, support)  # names a support that exists
    current = next((c for c in design.compliances if c.support == support), None)
    value = math.inf
    if current is not None:
        value = current.rotational_stiffness if rotational else current.stiffness

    def setter(v: float) -> Design:
        if not (v > 0.0):
            raise InputError(key, v, "a positive stiffness, or rigid")
        base = current or Compliance(support)
        new = replace(base, **{"rotational_stiffness" if rotational else "stiffness": v})
        others = tuple(c for c in design.compliances if c.support != support)
        updated = replace(design, compliances=(*others, new))
        updated.solved_member()  # refuses a stiffness for what the support does not hold
        return updated

    assert compliance_key(support, rotational) == key
    return value, setter
