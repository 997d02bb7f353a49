"""Worksheet format 1: TOML in, a validated :class:`~calc.model.Member` out.

Every quantity is a string ``"number unit"`` parsed once here by the project's
unit registry.  Every mistake raises :class:`~calc.errors.InputError` naming
the key path (``member.section.wall``, ``mass[0].at``), the value given and
what was expected; unknown keys get a did-you-mean hint.  The file is only
read, never written.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from beamtone.calc import materials, schema
from beamtone.calc.compliance import Compliance
from beamtone.calc.errors import InputError
from beamtone.calc.excitation import (
    CRITERIA,
    Excitation,
    criterion,
    read_fraction,
    read_frequencies,
    read_orders,
)
from beamtone.calc.files import WORKSHEET_BYTES
from beamtone.calc.materials import Material
from beamtone.calc.model import (
    InnerSupport,
    Member,
    PointMass,
    Segment,
    Spring,
)
from beamtone.calc.restraints import OVERRIDES
from beamtone.calc.sections import Section, build_section
from beamtone.calc.tolerances import Tolerance

__all__ = [
    "FORMAT", "MAX_BYTES", "MAX_MODES", "MAX_RITZ", "EstimateSettings", "Worksheet", "load",
    "loads",
    "from_data",
]  # fmt: skip

FORMAT = 1
"""The worksheet format this version reads and writes."""

MAX_BYTES = WORKSHEET_BYTES
"""Largest worksheet file accepted [bytes]."""

MAX_MODES = 50
"""Most modes a worksheet may ask for."""

MAX_RITZ = 12
"""Most trial functions in a Rayleigh-Ritz estimate."""


@dataclass(frozen=True)
class EstimateSettings:
    """What the Rayleigh estimate uses.

    Attributes
    ----------
    shape : str
        ``"static"``, ``"polynomial"``, ``"trigonometric"`` or an expression in x and L.
    shapes : tuple of str, or int, or None
        Rayleigh-Ritz trial functions, or a count of the built-in polynomial family.
    reference : float or None
        Reference point of the equivalent single-DOF model [m]; None for the point of
        largest deflection.
    """

    shape: str = "static"
    shapes: tuple[str, ...] | int | None = None
    reference: float | None = None


@dataclass(frozen=True)
class Worksheet:
    """A loaded worksheet.

    Attributes
    ----------
    title : str
    notes : str
    member : Member
        The member in SI.
    modes : int
        How many modes to report.
    estimate : EstimateSettings
        Settings of the Rayleigh estimate.
    source : str
        Where it came from (a path, or ``"<text>"``).
    data : dict
        The worksheet as plain Python data, as written.
    excitations : tuple of Excitation
        The ``[[excitation]]`` tables, in SI (see :mod:`calc.excitation`).
    damping_ratio : float or None
        ``response.damping_ratio`` where given [-].
    compliances : tuple of Compliance
        Support stiffnesses where a support is not rigid (``supports.left_stiffness`` ...);
        ``member`` already carries them as springs (see :mod:`calc.compliance`).
    tolerances : tuple of Tolerance
        The toleranced inputs (``[tolerances]``, and support stiffness ranges to rigid).
    rigid_member : Member or None
        The member with every support rigid as written, where ``compliances`` changed it.
    """

    title: str
    notes: str
    member: Member
    modes: int
    estimate: EstimateSettings = field(default_factory=EstimateSettings)
    source: str = "<text>"
    data: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)
    excitations: tuple[Excitation, ...] = ()
    damping_ratio: float | None = None
    compliances: tuple[Compliance, ...] = ()
    tolerances: tuple[Tolerance, ...] = ()
    rigid_member: Member | None = None


def load(path: str | Path) -> Worksheet:
    """Read and validate a worksheet file.

    Parameters
    ----------
    path : str or Path

    Returns
    -------
    Worksheet

    Raises
    ------
    InputError
        For a missing, unreadable, binary, empty, oversized or malformed file,
        and for any invalid entry in it.
    """
    from beamtone.calc.files import read_limited

    p = Path(path)
    raw = read_limited(p, MAX_BYTES)  # regular files only, never more than MAX_BYTES
    return _from_bytes(raw, str(p), default_title=p.stem)


def loads(text: str, source: str = "<text>") -> Worksheet:
    """Validate a worksheet given as TOML text (see :func:`load`)."""
    if len(text.encode("utf-8", "surrogatepass")) > MAX_BYTES:
        raise InputError("file", source, f"a worksheet of at most {MAX_BYTES // 1000} kB")
    return _parse(text, source, default_title="")


def from_data(data: dict[str, Any], source: str = "<data>") -> Worksheet:
    """Validate a worksheet given as plain Python data (what TOML parses to).

    Parameters
    ----------
    data : dict
        Tables as dicts, arrays as lists, quantities as ``"number unit"`` strings.
    source : str
        Where it came from, for messages.

    Returns
    -------
    Worksheet
    """
    if not isinstance(data, dict):
        raise InputError("file", type(data).__name__, "a worksheet table")
    return _worksheet(data, source, default_title="")


def _from_bytes(raw: bytes, source: str, default_title: str) -> Worksheet:
    if b"\x00" in raw:
        raise InputError("file", source, "a TOML text file", "it contains binary data")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(
            "file", source, "a TOML text file in UTF-8", f"undecodable byte at offset {exc.start}"
        ) from None
    return _parse(text.removeprefix("\ufeff"), source, default_title)


def _parse(text: str, source: str, default_title: str) -> Worksheet:
    import tomlkit
    import tomlkit.exceptions

    if not text.strip():
        raise InputError("file", source, "a worksheet; the file is empty (start with format = 1)")
    data = _plain_toml(text)
    if data is not None:
        return _worksheet(data, source, default_title)
    try:  # tomlkit's message names the line and column
        data = tomlkit.parse(text).unwrap()
    except tomlkit.exceptions.ParseError as exc:
        raise InputError(
            "file", source, "valid TOML", f"line {exc.line}, column {exc.col}: {_reason(exc)}"
        ) from None
    except (tomlkit.exceptions.TOMLKitError, ValueError, RecursionError) as exc:
        raise InputError("file", source, "valid TOML", str(exc).splitlines()[0][:120]) from None
    return _worksheet(data, source, default_title)


def _plain_toml(text: str) -> dict[str, Any] | None:
    """The TOML text as plain data by the standard library's reader, else None.

    Eight times faster than tomlkit on a worksheet of thousands of tables (5,000: 0.2 s
    against 1.7 s); a text it refuses goes to tomlkit, whose message says where.
    """
    import tomllib

    try:
        return tomllib.loads(text)
    except (tomllib.TOMLDecodeError, ValueError, RecursionError):
        return None


def _reason(exc: Exception) -> str:
    text = str(exc)
    return text.split(" at line ")[0] if " at line " in text else text


# --- validation ----------------------------------------------------------------------------------


_hint = schema.hint


def _keys(table: dict[str, Any], key: str, allowed: tuple[str, ...] | None = None) -> None:
    """Refuse a key the schema does not list for this table (``allowed``: the schema's keys
    of the table at ``key``), with a did-you-mean hint."""
    if allowed is None:
        allowed = schema.children(key)
    for name in table:
        if name not in allowed:
            path = f"{key}.{name}" if key else name
            hint = _hint(name, allowed)
            expected = "one of the keys " + ", ".join(allowed)
            raise InputError(path, name, expected, hint or "unknown key")


def _choice(table: dict[str, Any], name: str, key: str, hints: dict[str, str] | None = None) -> str:
    """The required choice ``name`` of ``table`` (at ``key``), one of its schema entry's
    choices; a wrong word gets a did-you-mean (or the hint ``hints`` gives for it)."""
    path = f"{key}.{name}"
    choices = schema.entry(path).choices
    expected = "one of " + ", ".join(choices)
    value = _required(table, name, key, expected)
    if not isinstance(value, str) or value not in choices:
        hint = _hint(value, choices) if isinstance(value, str) else None
        if isinstance(value, str) and hints and value in hints:
            hint = hints[value]
        raise InputError(path, value, expected, hint)
    return value


def _quantity(
    table: dict[str, Any],
    name: str,
    key: str,
    *,
    required: bool = True,
    length: float | None = None,
) -> float:
    """The quantity ``name`` of ``table`` (at ``key``) in SI, parsed with its schema entry's
    dimension and limits; a missing required one is named with the entry's ``missing``; a
    position from the right end is read with the member's ``length`` [m]."""
    path = f"{key}.{name}"
    found = schema.entry(path)
    if required:
        return found.parse(_required(table, name, key, found.missing), path, length)
    return found.parse(table[name], path, length)


def _table(value: object, key: str, what: str) -> dict[str, Any]:
    if not isinstance(value, dict):
        raise InputError(key, value, f"a table ({what})")
    return value


def _tables(value: object, key: str, what: str) -> list[dict[str, Any]]:
    if isinstance(value, dict):
        value = [value]
    if not isinstance(value, list):
        raise InputError(key, value, f"an array of tables ({what})")
    for i, item in enumerate(value):
        _table(item, f"{key}[{i}]", what)
    return value


def _required(table: dict[str, Any], name: str, key: str, what: str) -> object:
    if name not in table:
        raise InputError(f"{key}.{name}" if key else name, None, what, "it is missing")
    return table[name]


def _string(value: object, key: str, what: str) -> str:
    if not isinstance(value, str):
        raise InputError(key, value, what)
    return value


def _worksheet(data: dict[str, Any], source: str, default_title: str) -> Worksheet:
    _format(data)
    _keys(data, "")
    title = _string(data.get("title", default_title), "title", "a text title")
    notes = _string(data.get("notes", ""), "notes", "text notes")
    member_table = _table(
        _required(data, "member", "", "a [member] table"), "member", "the member description"
    )
    supports = _table(
        _required(data, "supports", "", "a [supports] table with left and right"),
        "supports",
        "left and right end conditions",
    )
    segments, axial = _member(member_table)
    length = sum(s.length for s in segments)  # positions may be written from the right end
    left, right, inner = _supports(supports, length)
    masses = tuple(_mass(t, f"mass[{i}]", length) for i, t in enumerate(_tables(
        data.get("mass", []), "mass", "[[mass]] entries with at and mass")))  # fmt: skip
    springs = tuple(_spring(t, f"spring[{i}]", length) for i, t in enumerate(_tables(
        data.get("spring", []), "spring", "[[spring]] entries with at and stiffness")))  # fmt: skip
    modes = _check(data.get("check", {}))
    estimate = _estimate(data.get("estimate", {}))
    # The stored results of beamtone solve --record; calc.record reads and checks them.
    _table(data.get("record", {}), "record", "the record beamtone solve --record writes")
    # the right number by default: Timoshenko (README, "Beam theory")
    theory = str(schema.entry("member.theory").default)
    if "theory" in member_table:
        theory = _choice(member_table, "theory", "member")
    member = Member(segments, left, right, masses, springs, inner, axial,
                    _overrides(supports, "supports", "left_"),
                    _overrides(supports, "supports", "right_"), theory)  # fmt: skip
    excitations = _excitations(data.get("excitation", []), member.length)
    damping = _response(data.get("response", {}))
    sheet = Worksheet(title, notes, member, modes, estimate, source, data, excitations, damping)
    return _uncertain(sheet, supports)


def _uncertain(sheet: Worksheet, supports: dict[str, Any]) -> Worksheet:
    """The worksheet with its support stiffnesses and tolerances (calc.tolerances reads them)."""
    from dataclasses import replace

    from beamtone.calc.compliance import compliant_member
    from beamtone.calc.tolerances import Design, read_compliances, read_tolerances

    compliances, ranges = read_compliances(supports, sheet.member)
    design = Design(sheet, sheet.member, compliances)
    tolerances = (*read_tolerances(sheet.data.get("tolerances"), design), *ranges)
    if not compliances and not tolerances:
        return sheet
    member = compliant_member(sheet.member, compliances)
    rigid = sheet.member if member is not sheet.member else None
    return replace(
        sheet, member=member, compliances=compliances, tolerances=tolerances, rigid_member=rigid
    )


def _format(data: dict[str, Any]) -> None:
    if "format" not in data:
        raise InputError("format", None, f"format = {FORMAT} at the top of the worksheet")
    value = data["format"]
    if isinstance(value, bool) or not isinstance(value, int):
        raise InputError("format", value, f"the whole number {FORMAT}")
    if value > FORMAT:
        raise InputError(
            "format",
            value,
            f"format {FORMAT}, the newest this version of beamtone reads",
            "the worksheet was written by a newer version; update beamtone to read it",
        )
    if value < 1:
        raise InputError("format", value, f"format {FORMAT}")


def _member(table: dict[str, Any]) -> tuple[tuple[Segment, ...], float]:
    _keys(table, "member")
    axial = 0.0
    if "axial_force" in table:
        axial = _quantity(table, "axial_force", "member", required=False)
    material = _material(table["material"], "member.material") if "material" in table else None
    section = _section(table["section"], "member.section") if "section" in table else None
    added = _added(table, "member")
    if "segment" not in table:
        length = _quantity(table, "length", "member")
        if material is None:
            _required(table, "material", "member", "a material name or table")
        if section is None:
            _required(table, "section", "member", "a section table")
        assert material is not None and section is not None
        return (Segment(length, material, section, added),), axial
    segments = []
    for i, seg in enumerate(_tables(table["segment"], "member.segment", "segments")):
        key = f"member.segment[{i}]"
        _keys(seg, key)
        length = _quantity(seg, "length", key)
        mat = _material(seg["material"], f"{key}.material") if "material" in seg else material
        sec = _section(seg["section"], f"{key}.section") if "section" in seg else section
        if mat is None:
            _required(seg, "material", key, "a material (here or in [member])")
        if sec is None:
            _required(seg, "section", key, "a section (here or in [member])")
        assert mat is not None and sec is not None
        seg_added = _added(seg, key) if "added_mass" in seg else added
        segments.append(Segment(length, mat, sec, seg_added))
    if not segments:
        raise InputError("member.segment", [], "at least one segment")
    if "length" in table:
        total = _quantity(table, "length", "member", required=False)
        given = sum(s.length for s in segments)
        if not math.isclose(total, given, rel_tol=1e-9):
            raise InputError(
                "member.length",
                table["length"],
                f"the sum of the segment lengths ({given:.6g} m), or no member.length at all",
            )
    return tuple(segments), axial


def _added(table: dict[str, Any], key: str) -> float:
    if "added_mass" not in table:
        return 0.0
    return _quantity(table, "added_mass", key, required=False)


def _material(value: object, key: str) -> Material:
    if isinstance(value, str):
        found = materials.lookup(value)
        if found is None:
            names = materials.names()
            hint = _hint(value.strip().lower(), names) or "or give youngs_modulus and density"
            expected = "a library material: " + ", ".join(materials.LIBRARY)
            raise InputError(key, value, expected, hint)
        return found
    table = _table(value, key, "a material name, or youngs_modulus and density")
    _keys(table, key)
    E = _quantity(table, "youngs_modulus", key)
    rho = _quantity(table, "density", key)
    nu = table.get("poisson_ratio")
    low, high = schema.entry(f"{key}.poisson_ratio").bounds or (-math.inf, math.inf)
    if nu is not None and (
        isinstance(nu, bool)
        or not isinstance(nu, int | float)
        or not math.isfinite(nu)
        or not low < nu < high
    ):
        raise InputError(f"{key}.poisson_ratio", nu, f"a number between {low:g} and {high:g}")
    name = _string(table.get("name", "inline"), f"{key}.name", "a text name")
    G = None
    if "shear_modulus" in table:
        G = _quantity(table, "shear_modulus", key, required=False)
    return Material(name, E, rho, None if nu is None else float(nu), shear_modulus=G)


def _section(value: object, key: str) -> Section:
    table = _table(value, key, 'a section, e.g. { shape = "round", diameter = "30 mm" }')
    if "shape" not in table and {"area", "second_moment"} & set(table):
        shape = "properties"
    else:
        shape = _choice(table, "shape", key)
    required, optional = schema.SECTION_SHAPES[shape]
    _keys(table, key, schema.section_keys(shape))
    dims: dict[str, float] = {}
    for name in required:
        value = _required(table, name, key, f"the {name} of a {shape} section")
        dims[name] = schema.entry(f"{key}.{name}").parse(value, f"{key}.{name}")
    for name in optional:
        if name in table:
            dims[name] = _quantity(table, name, key, required=False)
    return build_section(shape, dims, key)


def _supports(table: dict[str, Any], length: float) -> tuple[str, str, tuple[InnerSupport, ...]]:
    _keys(table, "supports")
    ends = []
    for side in ("left", "right"):
        key = f"supports.{side}"
        elastic = "write an elastic end as free plus a [[spring]] at that end"
        ends.append(_choice(table, side, "supports", {"spring": elastic, "elastic": elastic}))
    inner = []
    for i, item in enumerate(_tables(table.get("inner", []), "supports.inner", "{ at, kind }")):
        key = f"supports.inner[{i}]"
        _keys(item, key)
        at = _quantity(item, "at", key, length=length)
        kind = _choice(item, "kind", key)
        inner.append(InnerSupport(at, kind, _overrides(item, key, "")))
    return ends[0], ends[1], tuple(inner)


def _overrides(table: dict[str, Any], key: str, prefix: str) -> tuple[tuple[str, str], ...]:
    """The directions a support sets for itself (``left_torsion = "free"``, or ``torsion`` in
    an inner support), each one of its schema entry's choices."""
    out = []
    for direction in OVERRIDES:
        name = f"{prefix}{direction}"
        if name in table:
            out.append((direction, _choice(table, name, key)))
    return tuple(out)


def _mass(table: dict[str, Any], key: str, length: float) -> PointMass:
    _keys(table, key)
    at = _quantity(table, "at", key, length=length)
    mass = _quantity(table, "mass", key)
    inertia = 0.0
    if "rotary_inertia" in table:
        inertia = _quantity(table, "rotary_inertia", key, required=False)
    more = {n: _quantity(table, n, key, required=False) for n in _MASS_MORE if n in table}
    return point_mass(at, mass, inertia, key, table["mass"], **more)


_MASS_MORE = ("rotary_inertia_width", "polar_inertia")
_SPRING_MORE = (
    "stiffness_width",
    "rotational_stiffness_width",
    "torsional_stiffness",
    "axial_stiffness",
)


def point_mass(
    at: float, mass: float, inertia: float, key: str, written: object, **more: float
) -> PointMass:
    """A point mass [m, kg, kg*m^2] that carries something: InputError keyed ``key.mass``
    (showing ``written``) where the mass and every inertia are zero.  ``more`` are the
    width-plane and polar inertias [kg*m^2] (``rotary_inertia_width``, ``polar_inertia``)."""
    if mass == 0.0 and inertia == 0.0 and not any(more.values()):
        raise InputError(f"{key}.mass", written, "a positive mass or rotary inertia")
    return PointMass(at, mass, inertia, **more)


def _spring(table: dict[str, Any], key: str, length: float) -> Spring:
    _keys(table, key)
    at = _quantity(table, "at", key, length=length)
    k = kr = 0.0
    if "stiffness" in table:
        k = _quantity(table, "stiffness", key, required=False)
    if "rotational_stiffness" in table:
        kr = _quantity(table, "rotational_stiffness", key, required=False)
    more = {n: _quantity(table, n, key, required=False) for n in _SPRING_MORE if n in table}
    return spring(at, k, kr, key, table.get("stiffness"), **more)


def spring(at: float, k: float, kr: float, key: str, written: object, **more: float) -> Spring:
    """A spring [m, N/m, N*m/rad] that holds something: InputError keyed ``key.stiffness``
    (showing ``written``) where every stiffness is zero.  ``more`` are the width-plane,
    torsional and axial stiffnesses (``stiffness_width``, ``rotational_stiffness_width``,
    ``torsional_stiffness`` [N*m/rad], ``axial_stiffness`` [N/m])."""
    if k == 0.0 and kr == 0.0 and not any(more.values()):
        raise InputError(
            f"{key}.stiffness",
            written,
            "a positive stiffness, rotational, torsional or axial stiffness",
        )
    return Spring(at, k, kr, **more)


def _excitations(value: object, length: float) -> tuple[Excitation, ...]:
    """The ``[[excitation]]`` tables: each through its schema entries (units and limits)."""
    tables = _tables(value, "excitation", "[[excitation]] entries with a speed or frequency")
    out: list[Excitation] = []
    for i, table in enumerate(tables):
        key = f"excitation[{i}]"
        _keys(table, key)
        name = _string(table.get("name", key), f"{key}.name", "a text name")
        if any(e.name == name for e in out):
            raise InputError(f"{key}.name", name, "a name no other excitation has")
        given = [k for k in ("speed", "frequency") if k in table]
        if len(given) != 1:
            what = schema.entry("excitation[].speed").missing
            raise InputError(key, ", ".join(given) or None, f"either {what}, not both")
        low, high = read_frequencies(table[given[0]], f"{key}.{given[0]}")
        orders = read_orders(table.get("orders", 1), f"{key}.orders")
        if "margin" in table and "criterion" in table:
            raise InputError(
                f"{key}.criterion", table["criterion"], "a margin or a criterion, not both"
            )
        below = above = 0.0
        minimum = named = None
        if "criterion" in table:
            c = criterion(
                _string(table["criterion"], f"{key}.criterion", "a criterion name"),
                f"{key}.criterion",
            )
            below, above, minimum, named = c.below, c.above, c.minimum_hz, c.name
        elif "margin" in table:
            below = above = read_fraction(table["margin"], f"{key}.margin", "a margin")
            if below > 1.0:
                raise InputError(f"{key}.margin", table["margin"], "a margin from 0 % to 100 %")
        else:
            raise InputError(
                f"{key}.margin", None,
                'a margin such as "20 %", or a criterion (one of ' + ", ".join(CRITERIA) + ")",
                "the margin is yours to set; the applicable code governs",
            )  # fmt: skip
        force = force_at = None
        if "force" in table or "force_at" in table:
            force = _quantity(table, "force", key)
            force_at = _quantity(table, "force_at", key, length=length)
            if not -1e-9 * length <= force_at <= length * (1 + 1e-9):
                raise InputError(
                    f"{key}.force_at", table["force_at"],
                    f"a position on the member, from 0 m to {length:.6g} m",
                )  # fmt: skip
        out.append(
            Excitation(name, low, high, orders, below, above, minimum, named,
                       given[0] == "speed", force, force_at)
        )  # fmt: skip
    return tuple(out)


def _response(value: object) -> float | None:
    table = _table(value, "response", 'response settings such as damping_ratio = "2 %"')
    _keys(table, "response")
    if "damping_ratio" not in table:
        return None
    zeta = read_fraction(table["damping_ratio"], "response.damping_ratio", "a damping ratio")
    if not 0.0 < zeta < 1.0:
        raise InputError(
            "response.damping_ratio", table["damping_ratio"],
            'a damping ratio above 0 and below 100 %, e.g. "2 %"',
        )  # fmt: skip
    return zeta


def _check(value: object) -> int:
    table = _table(value, "check", "check settings such as modes = 5")
    _keys(table, "check")
    entry = schema.entry("check.modes")
    low, high = entry.bounds or (1, MAX_MODES)
    modes = table.get("modes", entry.default)
    if isinstance(modes, bool) or not isinstance(modes, int) or not low <= modes <= high:
        raise InputError("check.modes", modes, f"a whole number of modes from {low:g} to {high:g}")
    return modes


def _estimate(value: object) -> EstimateSettings:
    table = _table(value, "estimate", 'estimate settings such as shape = "static"')
    _keys(table, "estimate")
    shape = table.get("shape", schema.entry("estimate.shape").default)
    if not isinstance(shape, str) or not shape.strip():
        raise InputError(
            "estimate.shape",
            shape,
            "static, polynomial, trigonometric, or an expression in x and L such as "
            '"1 - cos(pi*x/(2*L))"',
        )
    shapes = table.get("shapes")
    if shapes is not None:
        if isinstance(shapes, bool) or not isinstance(shapes, int | list):
            raise InputError(
                "estimate.shapes",
                shapes,
                "a list of expressions in x and L, or a number of built-in polynomial shapes",
            )
        if isinstance(shapes, int) and not 1 <= shapes <= MAX_RITZ:
            raise InputError("estimate.shapes", shapes, f"a number of shapes from 1 to {MAX_RITZ}")
        if isinstance(shapes, list):
            if not 1 <= len(shapes) <= MAX_RITZ:
                raise InputError("estimate.shapes", shapes, f"1 to {MAX_RITZ} expressions")
            for i, item in enumerate(shapes):
                if not isinstance(item, str):
                    raise InputError(f"estimate.shapes[{i}]", item, "an expression in x and L")
            shapes = tuple(shapes)
    reference = None
    if "reference" in table:
        reference = _quantity(table, "reference", "estimate", required=False)
    # Expressions are read now, so every command refuses a bad one (the named shapes and
    # "static" need no parsing); admissibility needs the member and is checked when solved.
    # (sympy's verdict on a formula is kept on disk, so this stays cheap; see calc.symbolic)
    from beamtone.calc.expressions import parse_formula
    from beamtone.calc.symbolic import shape_facts

    if shape.strip() not in ("static", "polynomial", "trigonometric"):
        parse_formula(shape.strip(), "estimate.shape")
        shape_facts(shape.strip(), "estimate.shape")
    if isinstance(shapes, tuple):
        for i, item in enumerate(shapes):
            parse_formula(item, f"estimate.shapes[{i}]")
            shape_facts(item, f"estimate.shapes[{i}]")
    return EstimateSettings(shape.strip(), shapes, reference)


# --- editing -------------------------------------------------------------------------------------

_PART = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*)(?:\[(\d+)\])?$")


def key_path(key: str, option: str = "--vary") -> list[str | int]:
    """Split ``"member.segment[1].section.diameter"`` into ``["member", "segment", 1, ...]``.

    Raises
    ------
    InputError
        Keyed by ``option``, for text that is not a key path.
    """
    parts: list[str | int] = []
    for piece in key.split("."):
        match = _PART.match(piece.strip())
        if match is None:
            raise InputError(option, key, "a worksheet key such as member.length or mass[0].mass")
        parts.append(match.group(1))
        if match.group(2) is not None:
            parts.append(int(match.group(2)))
    return parts


def find_value(data: Any, key: str, option: str = "--vary") -> object:
    """The value at a key path in plain or tomlkit data; an InputError names what is missing.

    Where the worksheet has a ``[[member.segment]]`` that takes its section or material from
    ``[member]``, the message says to vary the member-level key instead.
    """
    node = data
    walked: list[str] = []
    for part in key_path(key, option):
        if isinstance(part, int):
            if not isinstance(node, list) or not 0 <= part < len(node):
                size = len(node) if isinstance(node, list) else 0
                raise InputError(option, key, f"an index below {size} for {'.'.join(walked)}")
            node = node[part]
            walked[-1] += f"[{part}]"
            continue
        if not isinstance(node, dict) or part not in node:
            where = ".".join(walked) or "the worksheet"
            hint = None
            if walked and walked[0] == "member" and len(walked) > 1 and part in (
                "section", "material", "added_mass"
            ):  # fmt: skip
                hint = f"this segment inherits member.{part}: vary that key"
            raise InputError(option, key, f"a key that {where} has", hint)
        node = node[part]
        walked.append(part)
    return node


def replace_value(text: str, key: str, new: str, option: str = "--vary") -> str:
    """Worksheet text with one quantity replaced, comments and layout kept (tomlkit).

    The result is checked to load before it is returned.
    """
    import tomlkit

    document = tomlkit.parse(text)
    parts = key_path(key, option)
    find_value(document, key, option)  # validates the path
    node: Any = document
    for part in parts[:-1]:
        node = node[part]
    node[parts[-1]] = new
    result = tomlkit.dumps(document)
    loads(result)
    return result


def write_atomic(path: str | Path, text: str, *, expected: bytes | None = None) -> None:
    """Replace a worksheet's text, keeping the file (see :func:`calc.files.write_atomic`)."""
    from beamtone.calc.files import write_atomic as write

    write(path, text, expected=expected)
