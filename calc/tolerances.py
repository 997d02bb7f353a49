"""Toleranced inputs: which worksheet quantity varies, over what range, and the member at any value.

A :class:`Design` is a worksheet's member as written (rigid supports) with its support
compliances (:mod:`calc.compliance`).  :func:`vary` returns the design with any of its
quantities changed, addressed by the worksheet's key paths (the ones ``--vary`` takes),
through :func:`calc.sizing.set_value` on the immutable model, never through text, so a
value is exact to the last bit.  Everything here is plain picklable data, so a study can
send a design and its tolerances to other processes or machines.

A :class:`Tolerance` is one input's range, low to high in SI, around its nominal value.
A support stiffness that ranges from a value to rigid is varied as its compliance
(1/stiffness, from 0 at rigid), so the range is finite.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

from beamtone.calc.compliance import Compliance, compliant_member, support_position
from beamtone.calc.errors import InputError
from beamtone.calc.model import Member

if TYPE_CHECKING:  # the loader reads tolerances, so it is imported only where used
    from beamtone.calc.worksheet import Worksheet

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

_SUPPORT = re.compile(r"^supports\.(left|right|inner\[\d+\])\.(stiffness|rotational_stiffness)$")


@dataclass(frozen=True)
class Design:
    """A worksheet's member as written plus its support compliances.

    Attributes
    ----------
    sheet : Worksheet
        The worksheet (which segments inherit ``[member]`` keys, what was written).
    member : Member
        The member with its supports rigid, as written (``sheet.member`` unless varied).
    compliances : tuple of Compliance
        Support stiffnesses (rigid where not given).
    """

    sheet: Worksheet
    member: Member
    compliances: tuple[Compliance, ...] = ()

    @classmethod
    def of(cls, sheet: Worksheet, compliances: tuple[Compliance, ...] = ()) -> Design:
        """The design of a worksheet as written."""
        return cls(sheet, sheet.member, compliances)

    def solved_member(self) -> Member:
        """The member the finite-element solve sees (compliant supports as springs)."""
        return compliant_member(self.member, self.compliances)


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
    m = _SUPPORT.match(key)
    if m:
        support, name = m.group(1), m.group(2)
        support_position(design.member, support)  # names a support that exists
        for c in design.compliances:
            if c.support == support:
                return c.rotational_stiffness if name == "rotational_stiffness" else c.stiffness
        return math.inf
    _check_key(design, key)
    return _read(design.member, key)


def _check_key(design: Design, key: str) -> None:
    """The key names a quantity the worksheet has (a library material's too)."""
    from beamtone.calc.worksheet import find_value

    option = f"tolerances.{key}"
    owner, _, name = key.rpartition(".")
    library = owner.endswith("material") and name in ("youngs_modulus", "density")
    if library and isinstance(find_value(design.sheet.data, owner, option), str):
        return  # a library material: its value is the library's
    find_value(design.sheet.data, key, option)


def vary(design: Design, values: Mapping[str, float]) -> Design:
    """The design with the quantities at the given key paths set to the given SI values.

    Worksheet quantities are set by :func:`calc.sizing.set_value` (the one way to set a
    worksheet quantity on the model: schema limits, rebuilt sections, end attachments
    following a length); support stiffnesses here, ``math.inf`` meaning rigid.

    Raises
    ------
    InputError
        For an unknown key, or a value the model refuses (keyed by the key path).
    """
    from beamtone.calc.sizing import set_value

    for key, value in values.items():
        m = _SUPPORT.match(key)
        if m:
            design = _with_stiffness(design, m.group(1), m.group(2), value, key)
        else:
            try:
                member = set_value(design.sheet, design.member, key, value)
            except (IndexError, KeyError):  # an entry the worksheet does not have
                raise InputError(key, key, "a key path of a quantity of this worksheet") from None
            design = replace(design, member=member)
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


def _with_stiffness(design: Design, support: str, name: str, value: float, key: str) -> Design:
    support_position(design.member, support)  # names a support that exists
    if not value > 0.0:
        raise InputError(key, value, "a positive stiffness, or rigid")
    current = next((c for c in design.compliances if c.support == support), Compliance(support))
    new = replace(current, **{name: value})
    others = tuple(c for c in design.compliances if c.support != support)
    updated = replace(design, compliances=(*others, new))
    updated.solved_member()  # refuses a stiffness for what the support does not hold
    return updated


def _read(member: Member, key: str) -> float:
    """The model's value [SI] at a worksheet key path (read only; sizing.set_value sets it)."""
    from beamtone.calc.worksheet import key_path

    parts = key_path(key)
    head = parts[0]
    try:
        if head in ("mass", "spring"):
            rows = member.masses if head == "mass" else member.springs
            return float(getattr(rows[int(parts[1])], str(parts[-1])))
        if head == "supports" and parts[1] == "inner" and parts[-1] == "at":
            return member.inner_supports[int(parts[2])].at
        if parts == ["member", "axial_force"]:
            return member.axial_force
        if parts == ["member", "length"]:
            return member.length
        if head == "member":
            seg = member.segments[int(parts[2])] if parts[1] == "segment" else member.segments[0]
            rest = parts[3:] if parts[1] == "segment" else parts[1:]
            if rest == ["length"]:
                return seg.length
            if rest == ["added_mass"]:
                return seg.added_mass
            if len(rest) == 2 and rest[0] == "material":
                return float(getattr(seg.material, str(rest[1])))
            if len(rest) == 2 and rest[0] == "section":
                return seg.section.dimensions[str(rest[1])]
    except (IndexError, KeyError, AttributeError, TypeError, ValueError):
        pass
    raise InputError(key, key, "a key path of a quantity of this worksheet")
