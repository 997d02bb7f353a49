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

from beamtone.calc.compliance import (
    Compliance,
    compliance_key,
    compliant_member,
    support_position,
)
from beamtone.calc.errors import InputError
from beamtone.calc.model import Member

if TYPE_CHECKING:  # the loader reads tolerances, so it is imported only where used
    from beamtone.calc.worksheet import Worksheet

__all__ = [
    "support_key",
    "read_compliances",
    "read_tolerances",
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

_SUPPORT = re.compile(
    r"^supports\.(?:(left|right)_|(inner\[\d+\])\.)(stiffness|rotational_stiffness)$"
)


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
    def of(cls, sheet: Worksheet) -> Design:
        """The design of a loaded worksheet: its member as written, its support stiffnesses."""
        return cls(sheet, sheet.rigid_member or sheet.member, sheet.compliances)

    def solved_member(self) -> Member:
        """The member the finite-element solve sees (compliant supports as springs); made
        once per design (a study asks for it at every sample)."""
        made = self.__dict__.get("_solved")
        if made is None:
            made = compliant_member(self.member, self.compliances)
            object.__setattr__(self, "_solved", made)  # a cache, not a field
        return made


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


def support_key(key: str) -> tuple[str, bool] | None:
    """(support, rotational) of a support stiffness key path, e.g. ``("left", True)`` for
    ``supports.left_rotational_stiffness``, ``("inner[0]", False)``; None for other keys."""
    m = _SUPPORT.match(key)
    if not m:
        return None
    return m.group(1) or m.group(2), m.group(3) == "rotational_stiffness"


def nominal_value(design: Design, key: str) -> float:
    """The current value [SI] of the quantity at ``key`` (``math.inf`` for a rigid support).

    Raises
    ------
    InputError
        For a key this design has no quantity at.
    """
    found = support_key(key)
    if found:
        support, rotational = found
        support_position(design.member, support)  # names a support that exists
        for c in design.compliances:
            if c.support == support:
                return c.rotational_stiffness if rotational else c.stiffness
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


def vary(
    design: Design, values: Mapping[str, float], written: Mapping[str, object] | None = None
) -> Design:
    """The design with the quantities at the given key paths set to the given SI values.

    Worksheet quantities are set by :func:`calc.sizing.set_value` (the one way to set a
    worksheet quantity on the model: schema limits, rebuilt sections, end attachments
    following a length); support stiffnesses here, ``math.inf`` meaning rigid (sizing and
    sweeps vary them through this function too).

    Parameters
    ----------
    design : Design
    values : mapping of str to float
        Key path -> value [SI].
    written : mapping of str to object, optional
        Key path -> the value as messages show it (default: the SI number and unit).

    Raises
    ------
    InputError
        For an unknown key, or a value the model refuses (keyed by the key path).
    """
    from beamtone.calc.sizing import set_value

    written = written or {}
    for key, value in values.items():
        found = support_key(key)
        if found:
            design = _with_stiffness(design, *found, value, key, written.get(key))
        else:
            try:
                member = set_value(design.sheet, design.member, key, value, written.get(key))
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


def _with_stiffness(
    design: Design, support: str, rotational: bool, value: float, key: str, shown: object = None
) -> Design:
    support_position(design.member, support)  # names a support that exists
    if not value > 0.0:
        raise InputError(key, value if shown is None else shown, "a positive stiffness, or rigid")
    current = next((c for c in design.compliances if c.support == support), Compliance(support))
    new = replace(current, **{"rotational_stiffness" if rotational else "stiffness": value})
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


# --- reading the worksheet -------------------------------------------------------------------

_PERCENT = re.compile(r"^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*%\s*$")
_RIGID = "rigid"
_STIFFNESS_NAMES = ("stiffness", "rotational_stiffness")


def read_compliances(
    supports: Mapping[str, object], member: Member
) -> tuple[tuple[Compliance, ...], tuple[Tolerance, ...]]:
    """The support stiffnesses of a worksheet's ``[supports]`` table.

    ``left_rotational_stiffness = "2 MN*m/rad"`` makes the left end that stiff;
    ``left_rotational_stiffness = ["2 MN*m/rad", "rigid"]`` keeps it rigid in the analysis
    and adds a tolerance from that stiffness to rigid (varied as its compliance).  The same
    for ``left_stiffness``, ``right_...`` and ``stiffness``/``rotational_stiffness`` of an
    inner support.

    Raises
    ------
    InputError
        Keyed by the entry, for a value that is not a stiffness, a range that does not end
        at rigid, or a stiffness for what the support does not hold.
    """
    from beamtone.calc import schema

    places: list[tuple[str, Mapping[str, object], str]] = [
        ("left", supports, "left_"),
        ("right", supports, "right_"),
    ]
    inner = supports.get("inner", [])
    for i, item in enumerate(inner if isinstance(inner, list) else []):
        if isinstance(item, Mapping):
            places.append((f"inner[{i}]", item, ""))
    compliances: list[Compliance] = []
    ranges: list[Tolerance] = []
    for support, table, prefix in places:
        given: dict[str, float] = {}
        for name in _STIFFNESS_NAMES:
            if prefix + name not in table:
                continue
            key = compliance_key(support, name == "rotational_stiffness")
            entry = schema.entry(key)
            value = table[prefix + name]
            if isinstance(value, list):
                if len(value) != 2 or value[1] != _RIGID or not isinstance(value[0], str):
                    raise InputError(
                        key,
                        value,
                        'a stiffness, or a range to rigid: ["2 MN*m/rad", "rigid"]',
                        "a finite range goes in [tolerances]: the stiffness here, its range there",
                    )
                k = entry.parse(value[0], key)
                given[name] = math.inf
                written = f'["{value[0]}", "rigid"]'
                ranges.append(Tolerance(key, 0.0, 0.0, 1.0 / k, COMPLIANCE, written))
            else:
                given[name] = entry.parse(value, key)
        if given:
            compliances.append(Compliance(support, **given))
    out = tuple(compliances)
    compliant_member(member, out)  # refuses a stiffness for what a support does not hold
    for t in ranges:  # a range to rigid: check the soft end too
        support, rotational = support_key(t.key) or ("", False)
        trial = tuple(
            replace(c, **{"rotational_stiffness" if rotational else "stiffness": 1.0 / t.high})
            if c.support == support
            else c
            for c in out
        )
        compliant_member(member, trial)
    return out, tuple(ranges)


def read_tolerances(table: object, design: Design) -> tuple[Tolerance, ...]:
    """The ``[tolerances]`` table: key path -> ``"5 %"``, ``"0.3 mm"`` or ``[low, high]``.

    ``"5 %"`` is plus or minus 5 % of the value, ``"0.3 mm"`` plus or minus that amount,
    and a pair gives the low and high values (each a quantity, or a signed percentage of
    the value such as ``"-5 %"``).  A key path is any quantity ``--vary`` takes, Young's
    modulus and density of a library material, or a support stiffness.

    Raises
    ------
    InputError
        Keyed ``tolerances.KEY``, for an unknown key, a value of the wrong kind, or a range
        that reaches a value the key does not accept.
    """
    from beamtone.calc import schema

    if table is None:
        return ()
    if not isinstance(table, Mapping):
        raise InputError("tolerances", table, 'a table of "key.path" = "5 %" entries')
    out: list[Tolerance] = []
    for key, value in table.items():
        where = f"tolerances.{key}"
        entry = schema.find(key) if isinstance(key, str) else None
        if entry is None or entry.kind != schema.QUANTITY or entry.dimension is None:
            raise InputError(
                where,
                key,
                'the key path of a quantity, e.g. "member.material.youngs_modulus"',
                schema.hint(str(key).rsplit(".", 1)[-1], [e.name for e in schema.entries()]),
            )
        try:
            nominal = nominal_value(design, key)
        except InputError as exc:
            raise InputError(where, key, "a quantity this worksheet has", exc.expected) from None
        low, high = _range(value, nominal, entry, where)
        tol = Tolerance(key, nominal, low, high, VALUE, _written(value))
        for end in (low, high):  # the model must accept the whole range
            try:
                vary(design, {key: end}).solved_member()
            except InputError as exc:
                raise InputError(
                    where, _written(value), f"a range the model accepts ({exc.key}: {exc.expected})"
                ) from None
        out.append(tol)
    return tuple(out)


def _written(value: object) -> str:
    if isinstance(value, list):
        return "[" + ", ".join(f'"{v}"' for v in value) + "]"
    return str(value)


def _range(value: object, nominal: float, entry, where: str) -> tuple[float, float]:  # noqa: ANN001
    expected = 'a tolerance such as "5 %", "0.3 mm" (plus or minus) or ["low", "high"]'
    if not math.isfinite(nominal):
        raise InputError(
            where, value, 'a range to rigid written at the support: ["2 MN*m/rad", "rigid"]'
        )
    if isinstance(value, str):
        m = _PERCENT.match(value)
        if m:
            rel = float(m.group(1)) / 100.0
            if not 0.0 < rel < 1.0 or nominal == 0.0:
                raise InputError(
                    where, value,
                    "a percentage above 0 % and below 100 %" if nominal != 0.0
                    else "a tolerance in units: the value is zero",
                )  # fmt: skip
            return nominal - rel * abs(nominal), nominal + rel * abs(nominal)
        delta = entry.dimension and _parse(value, entry, where)
        if not delta > 0.0:
            raise InputError(where, value, expected)
        return nominal - delta, nominal + delta
    if isinstance(value, list) and len(value) == 2 and all(isinstance(v, str) for v in value):
        ends = []
        for v in value:
            m = _PERCENT.match(v)
            ends.append(
                nominal * (1.0 + float(m.group(1)) / 100.0) if m else _parse(v, entry, where)
            )
        low, high = ends
        if not low <= nominal <= high or low == high:
            raise InputError(
                where, _written(value), f"a low and a high value around the value ({nominal:.6g} "
                f"{entry.dimension.si_unit})",
            )  # fmt: skip
        return low, high
    raise InputError(where, value, expected)


def _parse(text: str, entry, where: str) -> float:  # noqa: ANN001
    from beamtone.calc.units import parse_quantity

    return parse_quantity(
        text, entry.dimension, where, allow_zero=True, allow_negative=True, minimum=False
    )
