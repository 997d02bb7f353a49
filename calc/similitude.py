"""The dimensionless groups of a member, similitude between members, and master curves.

With the member's length L and the bending stiffness EI and mass per length m of its first
segment as repeating variables, every other variable v of dimension M^a L^b T^c forms the
group v * L^p * EI^q * m^r with q = c/2, r = -a - q, p = -b - 3q + r (solving the three
dimension equations by hand; the general engine in ``calc.groups`` gives the same and the
tests check it).  The frequency group is Omega = omega L^2 sqrt(m/EI), so every frequency
result is f = Omega / (2 pi L^2) * sqrt(EI/m).  Two members with equal groups are similar:
their frequencies differ by the factor of the repeating variables alone.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from fractions import Fraction
from typing import TYPE_CHECKING

from beamtone.calc.errors import InputError
from beamtone.calc.groups import formula
from beamtone.calc.materials import Material
from beamtone.calc.model import InnerSupport, Member, PointMass, Segment, Spring
from beamtone.calc.sections import Section

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.worksheet import Worksheet

__all__ = [
    "MemberGroup",
    "MemberGroups",
    "Similitude",
    "MasterCurve",
    "WorksheetGroups",
    "member_groups",
    "nondimensional",
    "compare",
    "master_curve",
    "variables_with_units",
    "worksheet_groups",
    "worksheet_master_curve",
]

# Dimensions (mass, length, time) of the variables a member can have.
_DIMS = {
    "length": (0, 1, 0),
    "mass": (1, 0, 0),
    "rotary_inertia": (1, 2, 0),
    "stiffness": (1, 0, -2),
    "rotational_stiffness": (1, 2, -2),
    "force": (1, 1, -2),
    "bending_stiffness": (1, 3, -2),
    "mass_per_length": (1, -1, 0),
    "circular_frequency": (0, 0, -1),
}
_UNITS = {
    "length": "m",
    "mass": "kg",
    "rotary_inertia": "kg*m^2",
    "stiffness": "N/m",
    "rotational_stiffness": "N*m/rad",
    "force": "N",
    "bending_stiffness": "N*m^2",
    "mass_per_length": "kg/m",
    "circular_frequency": "rad/s",
}


@dataclass(frozen=True)
class MemberGroup:
    """One dimensionless group of a member.

    Attributes
    ----------
    symbol : str
        ``"Π1"``, ``"Π2"``, ...
    variable : str
        The variable that defines it (``"M0"``, ``"k1"``, ``"omega1"``).
    meaning : str
        What the variable is, in worksheet terms (``"mass[0].mass"``).
    expression : str
        The group as a formula, e.g. ``"M0/(L·m)"``.
    exponents : dict of str to Fraction
        Exact exponents of the variable and of L, EI, m.
    value : float
        Its value for this member [-].
    """

    symbol: str
    variable: str
    meaning: str
    expression: str
    exponents: dict[str, Fraction]
    value: float


@dataclass(frozen=True)
class MemberGroups:
    """The groups of a member, with its repeating variables.

    Attributes
    ----------
    length, bending_stiffness, mass_per_length : float
        The repeating variables L [m], EI [N m^2] and m [kg/m] (first segment).
    groups : tuple of MemberGroup
        Property, attachment and load groups, then the frequency groups Omega_i.
    """

    length: float
    bending_stiffness: float
    mass_per_length: float
    groups: tuple[MemberGroup, ...]

    @property
    def frequency_scale(self) -> float:
        """sqrt(EI/m) / L^2 [rad/s]: omega = Omega * frequency_scale."""
        return math.sqrt(self.bending_stiffness / self.mass_per_length) / self.length**2

    def by_variable(self) -> dict[str, MemberGroup]:
        """The groups by defining variable."""
        return {g.variable: g for g in self.groups}


def _variables(member: Member) -> list[tuple[str, str, str, float]]:
    """(name, kind, meaning, SI value) of every governing variable but L, EI_0 and m_0."""
    out: list[tuple[str, str, str, float]] = []
    n = len(member.segments)
    for i, seg in enumerate(member.segments):
        if i > 0:
            key = f"member.segment[{i}]"
            out.append((f"EI_s{i}", "bending_stiffness", f"{key} EI", seg.bending_stiffness))
            out.append(
                (f"m_s{i}", "mass_per_length", f"{key} mass per length", seg.mass_per_length)
            )
        if n > 1 and i < n - 1:
            out.append((f"l_s{i}", "length", f"member.segment[{i}].length", seg.length))
    for i, pm in enumerate(member.masses):
        out.append((f"M{i}", "mass", f"mass[{i}].mass", pm.mass))
        if pm.rotary_inertia:
            out.append((f"J{i}", "rotary_inertia", f"mass[{i}].rotary_inertia", pm.rotary_inertia))
        out.append((f"a_M{i}", "length", f"mass[{i}].at", pm.at))
    for i, sp in enumerate(member.springs):
        if sp.stiffness:
            out.append((f"k{i}", "stiffness", f"spring[{i}].stiffness", sp.stiffness))
        if sp.rotational_stiffness:
            out.append(
                (f"kr{i}", "rotational_stiffness", f"spring[{i}].rotational_stiffness",
                 sp.rotational_stiffness)
            )  # fmt: skip
        out.append((f"a_k{i}", "length", f"spring[{i}].at", sp.at))
    for i, sup in enumerate(member.inner_supports):
        out.append((f"a_s{i}", "length", f"supports.inner[{i}].at", sup.at))
    if member.axial_force:
        out.append(("P", "force", "member.axial_force", member.axial_force))
    return out


def _exponents(kind: str) -> tuple[Fraction, Fraction, Fraction]:
    """(p, q, r) with v * L^p * EI^q * m^r dimensionless for a variable of this kind."""
    a, b, c = (Fraction(d) for d in _DIMS[kind])
    q = c / 2
    r = -a - q
    p = -b - 3 * q + r
    return p, q, r


def _group(symbol: str, name: str, kind: str, meaning: str, value: float,
           L: float, EI: float, m: float) -> MemberGroup:  # fmt: skip
    p, q, r = _exponents(kind)
    exponents = {name: Fraction(1), "L": p, "EI": q, "m": r}
    exponents = {k: v for k, v in exponents.items() if v != 0}
    expression = formula(list(exponents.items()))
    group_value = value * L ** float(p) * EI ** float(q) * m ** float(r)
    return MemberGroup(symbol, name, meaning, expression, exponents, group_value)


def member_groups(member: Member, omegas: list[float] | tuple[float, ...] = ()) -> MemberGroups:
    """The governing dimensionless groups of a member and their values.

    Parameters
    ----------
    member : Member
    omegas : sequence of float, optional
        Circular natural frequencies [rad/s] to state as frequency groups Omega_i.

    Returns
    -------
    MemberGroups
    """
    seg = member.segments[0]
    L, EI, m = member.length, seg.bending_stiffness, seg.mass_per_length
    groups = []
    for name, kind, meaning, value in _variables(member):
        groups.append(_group(f"Π{len(groups) + 1}", name, kind, meaning, value, L, EI, m))
    for i, omega in enumerate(omegas, start=1):
        groups.append(
            _group(f"Π{len(groups) + 1}", f"omega{i}", "circular_frequency",
                   f"mode {i} circular frequency", omega, L, EI, m)
        )  # fmt: skip
    return MemberGroups(L, EI, m, tuple(groups))


def variables_with_units(member: Member) -> list[tuple[str, str, float]]:
    """(name, SI unit, value) of every governing variable, repeating ones first."""
    seg = member.segments[0]
    out = [
        ("L", "m", member.length),
        ("EI", "N*m^2", seg.bending_stiffness),
        ("m", "kg/m", seg.mass_per_length),
    ]
    return out + [(n, _UNITS[k], v) for n, k, _, v in _variables(member)]


def nondimensional(member: Member) -> Member:
    """The similar member with L = EI = m = 1, whose frequencies are the groups Omega_i.

    Every other property becomes its group value; section depth becomes depth/L.
    """
    seg0 = member.segments[0]
    L, EI, m = member.length, seg0.bending_stiffness, seg0.mass_per_length
    segments = tuple(_unit_segment(s, L, EI, m) for s in member.segments)
    return Member(
        segments,
        member.left,
        member.right,
        tuple(
            PointMass(p.at / L, p.mass / (m * L), p.rotary_inertia / (m * L**3))
            for p in member.masses
        ),  # fmt: skip
        tuple(
            Spring(s.at / L, s.stiffness * L**3 / EI, s.rotational_stiffness * L / EI)
            for s in member.springs
        ),  # fmt: skip
        tuple(InnerSupport(s.at / L, s.kind) for s in member.inner_supports),
        member.axial_force * L**2 / EI,
    )


def _unit_segment(seg: Segment, L: float, EI: float, m: float) -> Segment:
    depth = seg.section.effective_depth / L
    section = Section("properties", 1.0, 1.0, depth, {"area": 1.0, "second_moment": 1.0})
    material = Material("nondimensional", seg.bending_stiffness / EI, seg.mass_per_length / m)
    return Segment(seg.length / L, material, section, 0.0)


# --- similitude ----------------------------------------------------------------------------------


@dataclass(frozen=True)
class Similitude:
    """How one member's results carry over to another.

    Attributes
    ----------
    similar : bool
        Whether every group matches within the tolerance.
    scale : float or None
        Frequency factor f_other / f_this where similar [-].
    predicted_hz : tuple of float
        The other member's frequencies predicted from this one's [Hz] (empty if not similar).
    differences : tuple of (str, float, float, float)
        Groups that differ: (expression, this value, other value, relative difference).
    """

    similar: bool
    scale: float | None
    predicted_hz: tuple[float, ...]
    differences: tuple[tuple[str, float, float, float], ...]


def compare(
    this: Member, other: Member, frequencies_hz: tuple[float, ...] = (), tolerance: float = 1e-6
) -> Similitude:
    """Compare the groups of two members; predict the other's frequencies if similar.

    Parameters
    ----------
    this, other : Member
    frequencies_hz : tuple of float
        This member's natural frequencies [Hz], to carry over.
    tolerance : float
        Largest relative difference for a group to match (an absolute one for groups that are
        zero in one member).

    Returns
    -------
    Similitude
    """
    a = member_groups(this)
    b = member_groups(other)
    ga, gb = a.by_variable(), b.by_variable()
    differences = []
    structure = (this.left, this.right, tuple(s.kind for s in this.inner_supports)) == (
        other.left,
        other.right,
        tuple(s.kind for s in other.inner_supports),
    )
    if not structure:
        differences.append(("supports", math.nan, math.nan, math.inf))
    for name in sorted(set(ga) | set(gb)):
        va = ga[name].value if name in ga else 0.0
        vb = gb[name].value if name in gb else 0.0
        expr = (ga.get(name) or gb[name]).expression
        scale = max(abs(va), abs(vb))
        diff = abs(va - vb) / scale if scale > 0 else 0.0
        if diff > tolerance:
            differences.append((expr, va, vb, diff))
    if differences:
        return Similitude(False, None, (), tuple(differences))
    factor = b.frequency_scale / a.frequency_scale
    return Similitude(True, factor, tuple(f * factor for f in frequencies_hz), ())


# --- master curve --------------------------------------------------------------------------------


@dataclass(frozen=True)
class MasterCurve:
    """Frequency groups against one group, all others held.

    Attributes
    ----------
    group : str
        The swept group's expression.
    values : tuple of float
        The swept group's values [-].
    omegas : tuple of tuple of float
        Omega_1..n at each value [-].
    """

    group: str
    values: tuple[float, ...]
    omegas: tuple[tuple[float, ...], ...]


def master_curve(
    member: Member, group: str, start: float, stop: float, points: int = 21, modes: int = 3
) -> MasterCurve:
    """Tabulate Omega_1..modes against one group, holding the member's other groups.

    Parameters
    ----------
    member : Member
    group : str
        The group's symbol (``"Π2"``, or ``"Pi2"``), its defining variable (``"M0"``) or its
        expression.
    start, stop : float
        Range of the group's value [-].
    points : int
        Number of values, evenly spaced (at least 2).
    modes : int
        Number of frequency groups.

    Returns
    -------
    MasterCurve
    """
    from beamtone.calc import fe

    groups = member_groups(member)
    chosen = _find_group(groups, group)
    if points < 2:
        raise InputError("--points", points, "at least 2 points")
    for flag, value in (("--from", start), ("--to", stop)):
        if not math.isfinite(value):
            raise InputError(flag, value, f"a finite value of {chosen.expression}")
    base = nondimensional(member)
    # the ends exactly as written (no rounding in between), evenly spaced values inside
    inner = [start + (stop - start) * i / (points - 1) for i in range(1, points - 1)]
    values = [start, *inner, stop]
    rows: list[tuple[float, ...]] = [()] * points
    for i in (0, points - 1, *range(1, points - 1)):  # the ends first: they name the option
        v = values[i]
        flag = "--from" if i == 0 else "--to" if i == points - 1 else "--from/--to"
        try:
            varied = _set_variable(base, chosen.variable, v)
            result = fe.solve(varied, modes)
        except InputError as exc:
            raise InputError(
                flag, v, f"a value of {chosen.expression} for which the member can be solved",
                exc.message,
            ) from None  # fmt: skip
        rows[i] = tuple(m.omega for m in result.modes)
    return MasterCurve(chosen.expression, tuple(values), tuple(rows))


def _find_group(groups: MemberGroups, text: str) -> MemberGroup:
    wanted = text.strip().replace("Pi", "Π")
    for g in groups.groups:
        if wanted in (g.symbol, g.variable, g.expression):
            return g
    choices = ", ".join(f"{g.symbol} ({g.variable}: {g.expression})" for g in groups.groups)
    raise InputError("--sweep", text, f"one of this member's groups: {choices or 'none'}")


def _set_variable(member: Member, name: str, value: float) -> Member:
    """The nondimensional member with one variable (= its group value) changed."""
    kind, index = _parse_name(name)
    if kind == "M":
        masses = list(member.masses)
        masses[index] = replace(masses[index], mass=value)
        return replace(member, masses=tuple(masses))
    if kind == "J":
        masses = list(member.masses)
        masses[index] = replace(masses[index], rotary_inertia=value)
        return replace(member, masses=tuple(masses))
    if kind == "a_M":
        masses = list(member.masses)
        masses[index] = replace(masses[index], at=value)
        return replace(member, masses=tuple(masses))
    if kind in ("k", "kr", "a_k"):
        springs = list(member.springs)
        field = {"k": "stiffness", "kr": "rotational_stiffness", "a_k": "at"}[kind]
        springs[index] = replace(springs[index], **{field: value})
        return replace(member, springs=tuple(springs))
    if kind == "a_s":
        inner = list(member.inner_supports)
        inner[index] = replace(inner[index], at=value)
        return replace(member, inner_supports=tuple(inner))
    if kind == "P":
        return replace(member, axial_force=value)
    segments = list(member.segments)
    seg = segments[index]
    if kind == "EI_s":
        mat = replace(seg.material, youngs_modulus=value)
        segments[index] = replace(seg, material=mat)
    elif kind == "m_s":
        segments[index] = replace(seg, material=replace(seg.material, density=value))
    else:  # l_s: keep the total length 1 by taking the change from the last segment
        change = value - seg.length
        segments[index] = replace(seg, length=value)
        last = segments[-1]
        if last.length - change <= 0:
            raise InputError("--to", value, "segment lengths that leave the last segment a length")
        segments[-1] = replace(last, length=last.length - change)
    return replace(member, segments=tuple(segments))


def _parse_name(name: str) -> tuple[str, int]:
    for prefix in ("EI_s", "m_s", "l_s", "a_M", "a_k", "a_s", "kr", "M", "J", "k"):
        rest = name[len(prefix) :]
        if name.startswith(prefix) and rest.isdigit():
            return prefix, int(rest)
    if name == "P":
        return "P", 0
    raise InputError("--sweep", name, "a group of a member property, attachment or load")


# --- a worksheet's groups ------------------------------------------------------------------------

MASTER_CURVE_MODES = 3
"""At most this many frequency groups in a worksheet's master curve."""


@dataclass(frozen=True)
class WorksheetGroups:
    """A worksheet's member in groups: what ``beamtone groups FILE`` shows.

    Attributes
    ----------
    title : str
        The worksheet's title.
    groups : MemberGroups
        The member's groups, with the frequency groups of its finite-element modes.
    variables : tuple of (str, str, float)
        (name, SI unit, value) of every governing variable, repeating ones first.
    repeating : tuple of str
        The repeating variables: L, EI and m (of the first segment).
    like : Similitude or None
        The comparison with another worksheet's member, where one was given.
    """

    title: str
    groups: MemberGroups
    variables: tuple[tuple[str, str, float], ...]
    repeating: tuple[str, ...]
    like: Similitude | None


def worksheet_groups(sheet: Worksheet, like: Worksheet | None = None) -> WorksheetGroups:
    """The groups of a worksheet's member and of its natural frequencies.

    Parameters
    ----------
    sheet : Worksheet
        Solved for its ``check.modes`` modes (automatic mesh).
    like : Worksheet, optional
        Another worksheet: whether its member is similar, and its frequencies predicted from
        this one's where it is.

    Returns
    -------
    WorksheetGroups
    """
    from beamtone.calc import fe

    member = sheet.member
    result = fe.solve(member, sheet.modes)
    groups = member_groups(member, [m.omega for m in result.modes])
    similitude = None
    if like is not None:
        similitude = compare(member, like.member, tuple(result.frequencies_hz))
    return WorksheetGroups(
        title=sheet.title,
        groups=groups,
        variables=tuple(variables_with_units(member)),
        repeating=("L", "EI", "m"),
        like=similitude,
    )


def worksheet_master_curve(
    sheet: Worksheet, group: str, start: float, stop: float, points: int = 21
) -> MasterCurve:
    """A worksheet member's master curve: the first frequency groups (up to
    :data:`MASTER_CURVE_MODES`, at most the worksheet's ``check.modes``) against one group.

    See :func:`master_curve` for the parameters.
    """
    modes = min(sheet.modes, MASTER_CURVE_MODES)
    return master_curve(sheet.member, group, start, stop, points, modes)
