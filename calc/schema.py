"""The one description of worksheet format 1: every key, its kind, dimension and limits.

Every key a worksheet may hold is one :class:`Entry` here, found by its key pattern
(indices dropped: ``member.segment[].section.depth``, ``mass[].at``).  The loader
(:mod:`calc.worksheet`) reads the allowed keys, dimensions and limits from it and takes its
did-you-mean hints from it; sizing (:mod:`calc.sizing`) takes the key paths it may vary and
their dimensions; the app's form takes its field labels and options; the report's inputs
table takes its rows (:func:`input_rows`).  Section shapes name their dimensions here
(:data:`SECTION_SHAPES`) and :mod:`calc.sections` builds them.

Adding a key is one entry in :func:`_entries` (or :data:`SECTION_SHAPES` for a section
dimension) plus its physics.

Examples
--------
>>> from beamtone.calc import schema
>>> e = schema.entry("member.segment[2].section.wall")
>>> e.kind, e.dimension.si_unit, e.label
('quantity', 'm', 'wall')
>>> schema.entry("mass[0].at").position, "at" in schema.children("mass[]")
(True, True)
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from functools import cache
from typing import Any

from beamtone.calc.errors import InputError
from beamtone.calc.units import (
    AREA,
    DENSITY,
    FORCE,
    FREQUENCY,
    LENGTH,
    MASS,
    MASS_PER_LENGTH,
    PRESSURE,
    ROTARY_INERTIA,
    ROTATIONAL_STIFFNESS,
    SECOND_MOMENT,
    STIFFNESS,
    WARPING_CONSTANT,
    Dimension,
    parse_quantity,
)

__all__ = [
    "QUANTITY", "CHOICE", "INTEGER", "NUMBER", "TEXT", "TABLE", "TABLES", "Entry",
    "SECTION_SHAPES", "InputRow", "pattern", "entry", "find", "entries", "children",
    "section_keys", "section_dimension", "hint", "quantity_keys", "input_rows",
]  # fmt: skip

QUANTITY = "quantity"
"""A ``"number unit"`` string of a stated dimension, parsed to SI."""
CHOICE = "choice"
"""One word from a fixed list."""
INTEGER = "integer"
"""A whole number within limits."""
NUMBER = "number"
"""A plain number without unit (e.g. Poisson's ratio)."""
TEXT = "text"
"""Free text (a title, notes, a shape expression)."""
TABLE = "table"
"""A TOML table of further keys."""
TABLES = "tables"
"""An array of tables (``[[mass]]``); its items' keys follow ``pattern[]``."""


@dataclass(frozen=True)
class Entry:
    """One key of the worksheet.

    Attributes
    ----------
    pattern : str
        Key pattern with indices dropped, e.g. ``"mass[].at"``.
    kind : str
        One of QUANTITY, CHOICE, INTEGER, NUMBER, TEXT, TABLE, TABLES.
    label : str
        Short label for the app's field and the report's row.
    help : str
        One line on what it means.
    dimension : Dimension or None
        For a quantity: the dimension (units and magnitude limits, see :mod:`calc.units`).
    allow_zero, allow_negative : bool
        For a quantity: whether zero and negative values are accepted.
    minimum : bool
        For a quantity: whether a non-zero magnitude below the dimension's lower limit is
        refused (False for positions and signed loads, where tiny values are simply zero).
    position : bool
        A position along the member, from its left end [m].
    required : bool
        Whether the worksheet must give it (in its context: a segment may inherit).
    default : object
        The value used where it is not given (None: nothing, or given elsewhere).
    choices : tuple of str
        For a choice: the accepted words.
    bounds : tuple of float or None
        For an integer or number: the accepted range (integers inclusive, numbers open).
    also : tuple of str
        Further kinds accepted in its place (a material is a library name or a table).
    missing : str
        What the loader says is expected when a required entry is missing.
    variable : bool
        Whether sizing and sweeps may vary it (quantities of the member and its attachments).
    """

    pattern: str
    kind: str
    label: str
    help: str
    dimension: Dimension | None = None
    allow_zero: bool = False
    allow_negative: bool = False
    minimum: bool = True
    position: bool = False
    required: bool = False
    default: object = None
    choices: tuple[str, ...] = ()
    bounds: tuple[float, float] | None = None
    also: tuple[str, ...] = ()
    missing: str = ""
    variable: bool = False

    @property
    def name(self) -> str:
        """The last part of the pattern (``"at"`` for ``"mass[].at"``)."""
        return self.pattern.rsplit(".", 1)[-1].removesuffix("[]")

    def parse(self, text: object, key: str, length: float | None = None) -> float:
        """A quantity as written to SI [``dimension.si_unit``], with this entry's limits (a
        frequency in cycles per second, ``"1480 rpm"`` -> 24.67 Hz: units.parse_frequency).
        A position may be written from the right end (``"right end"``, ``"150 mm from the
        right end"``: :mod:`calc.positions`), read with the member's ``length`` [m].

        Raises
        ------
        InputError
            Keyed ``key``, for text this entry does not accept.
        """
        assert self.dimension is not None, self.pattern
        from beamtone.calc.units import FREQUENCY, parse_frequency

        if self.position:
            from beamtone.calc.positions import from_right, resolve

            if from_right(text) is not None:
                return resolve(text, key, length)

        if self.dimension == FREQUENCY:  # cycles per second: rpm and rad/s divided by 2 pi
            return parse_frequency(text, key)
        return parse_quantity(
            text,
            self.dimension,
            key,
            allow_zero=self.allow_zero,
            allow_negative=self.allow_negative,
            minimum=self.minimum,
        )

    def check(self, value: float, key: str, written: str) -> float:
        """An SI value [``dimension.si_unit``] checked against the limits :meth:`parse` applies
        to text (sizing sets values on the model without text).

        Raises
        ------
        InputError
            Keyed ``key``, showing ``written``, worded as :meth:`parse` words it.
        """
        dim = self.dimension
        assert dim is not None, self.pattern
        if not math.isfinite(value):
            raise InputError(key, written, f"a finite number with a unit, e.g. {dim.example}")
        if value == 0.0 and not self.allow_zero:
            raise InputError(key, written, f"a non-zero {dim.name.removeprefix('a ')}")
        if value < 0.0 and not self.allow_negative:
            sign = "zero or positive" if self.allow_zero else "positive"
            what = dim.name.removeprefix("a ").removeprefix("an ")
            raise InputError(key, written, f"a {sign} {what}")
        low, high = dim.limits
        size = abs(value)
        if size > high or (self.minimum and 0.0 < size < low):
            what = dim.name.split(" (")[0]
            zero = "zero or " if self.allow_zero else ""
            span = f"{low:g} {dim.si_unit} to {high:g} {dim.si_unit}" if self.minimum else (
                f"up to {high:g}"
            )  # fmt: skip
            raise InputError(key, written, f"{zero}{what} of {span}",
                             f"this is {size:.3g} {dim.si_unit}")  # fmt: skip
        return value


# --- sections ------------------------------------------------------------------------------------

SECTION_SHAPES: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {
    "rectangle": (("width", "depth"), ()),
    "round": (("diameter",), ()),
    "round-tube": (("outside_diameter", "wall"), ()),
    "box": (("width", "depth", "wall"), ()),
    "i-beam": (("width", "depth", "flange", "web"), ()),
    "properties": (
        ("area", "second_moment"),
        (
            "depth",
            "width",
            "second_moment_width",
            "torsion_constant",
            "warping_constant",
            "polar_moment",
            "shear_area",
            "shear_area_width",
        ),
    ),  # fmt: skip
}
"""Each section shape's (required, optional) dimension keys; :mod:`calc.sections` builds them."""

# name -> (dimension, label, help)
_SECTION_FIELDS: dict[str, tuple[Dimension, str, str]] = {
    "width": (LENGTH, "width", "overall width, in the width plane (across the depth)"),
    "depth": (LENGTH, "depth", "overall depth, in the depth plane (the first bending plane)"),
    "diameter": (LENGTH, "diameter", "diameter of the solid round bar"),
    "outside_diameter": (LENGTH, "outside dia.", "outside diameter of the tube"),
    "wall": (LENGTH, "wall", "wall thickness"),
    "flange": (LENGTH, "flange", "flange thickness"),
    "web": (LENGTH, "web", "web thickness"),
    "area": (AREA, "area", "cross-sectional area A"),
    "second_moment": (
        SECOND_MOMENT,
        "second moment",
        "second moment of area I about the bending axis",
    ),  # fmt: skip
    "second_moment_width": (SECOND_MOMENT, "2nd moment, width",
                            "second moment of area for bending in the width plane"),
    "torsion_constant": (SECOND_MOMENT, "torsion constant",
                         "Saint-Venant torsion constant J (not the polar moment)"),
    "warping_constant": (WARPING_CONSTANT, "warping constant",
                         "warping constant Cw of an open section (0 for solid and closed ones)"),
    "polar_moment": (SECOND_MOMENT, "polar moment",
                     "polar second moment Ip about the centroid (rho Ip: torsional inertia)"),
    "shear_area": (AREA, "shear area",
                   "shear area kappa A for bending in the depth plane (Timoshenko theory)"),
    "shear_area_width": (AREA, "shear area, width",
                         "shear area kappa A for bending in the width plane"),
}  # fmt: skip


def section_keys(shape: str) -> tuple[str, ...]:
    """The keys a section table of this shape may hold, in the order messages list them."""
    required, optional = SECTION_SHAPES[shape]
    return ("shape", *required, *optional)


def section_dimension(name: str) -> Dimension:
    """The dimension of a section dimension key (``"wall"`` -> LENGTH)."""
    return _SECTION_FIELDS[name][0]


# --- the entries ---------------------------------------------------------------------------------


def _material(prefix: str) -> list[Entry]:
    return [
        Entry(f"{prefix}.youngs_modulus", QUANTITY, "Young's mod.", "Young's modulus E",
              PRESSURE, required=True, missing="Young's modulus", variable=True),
        Entry(f"{prefix}.density", QUANTITY, "density", "mass density rho", DENSITY,
              required=True, missing="a density", variable=True),
        Entry(f"{prefix}.poisson_ratio", NUMBER, "Poisson's ratio", "Poisson's ratio nu",
              bounds=(-1.0, 0.5)),
        Entry(f"{prefix}.shear_modulus", QUANTITY, "shear modulus",
              "shear modulus G for torsion (else E/(2(1 + nu)))", PRESSURE, variable=True),
        Entry(f"{prefix}.name", TEXT, "name", "a name for the material", default="inline"),
    ]  # fmt: skip


def _section(prefix: str) -> list[Entry]:
    out = [Entry(f"{prefix}.shape", CHOICE, "section", "cross-section shape",
                 choices=tuple(SECTION_SHAPES), required=True)]  # fmt: skip
    optional = {n for _, opt in SECTION_SHAPES.values() for n in opt}
    for name, (dim, label, text) in _SECTION_FIELDS.items():
        out.append(Entry(f"{prefix}.{name}", QUANTITY, label, text, dim,
                         allow_zero=name == "warping_constant",
                         required=name not in optional, variable=True))  # fmt: skip
    return out


def _segment_like(prefix: str, member: bool, library: tuple[str, ...]) -> list[Entry]:
    """Keys shared by ``[member]`` and ``[[member.segment]]``."""
    length = (
        Entry(f"{prefix}.length", QUANTITY, "length", "length of the member", LENGTH,
              required=True, missing="the member length, or [[member.segment]]", variable=True)
        if member
        else Entry(f"{prefix}.length", QUANTITY, "length", "length of this segment", LENGTH,
                   required=True, missing="a length", variable=True)
    )  # fmt: skip
    where = "" if member else " (here or in [member])"
    return [
        length,
        Entry(f"{prefix}.material", CHOICE, "material", "a library material, or a table",
              choices=library, required=True, also=(TABLE,),
              missing=f"a material{where}" if not member else "a material name or table"),
        *_material(f"{prefix}.material"),
        Entry(f"{prefix}.section", TABLE, "section", "the cross-section", required=True,
              missing=f"a section{where}" if not member else "a section table"),
        *_section(f"{prefix}.section"),
        Entry(f"{prefix}.added_mass", QUANTITY, "added mass",
              "non-structural mass per length carried along it", MASS_PER_LENGTH,
              allow_zero=True, default="0 kg/m", variable=True),
    ]  # fmt: skip


def _compliance_entries() -> list[Entry]:
    """Support stiffnesses and the tolerances table (see :mod:`calc.compliance`,
    :mod:`calc.tolerances`)."""
    rows: list[Entry] = []
    for where, prefix in (
        ("left end", "supports.left_"),
        ("right end", "supports.right_"),
        ("inner support", "supports.inner[]."),
    ):
        rows += [
            Entry(f"{prefix}stiffness", QUANTITY, "stiffness",
                  f"the {where}'s translational stiffness where it is not rigid; "
                  '[value, "rigid"] for a range', STIFFNESS, also=(TEXT,), variable=True),
            Entry(f"{prefix}rotational_stiffness", QUANTITY, "rot. stiffness",
                  f"the {where}'s rotational stiffness where it is not rigid; "
                  '[value, "rigid"] for a range', ROTATIONAL_STIFFNESS, also=(TEXT,),
                  variable=True),
        ]  # fmt: skip
    rows.append(
        Entry("tolerances", TABLE, "tolerances",
              'toleranced inputs: "key.path" = "5 %", "0.3 mm" or [low, high]')
    )  # fmt: skip
    return rows


def _excitation_entries() -> list[Entry]:
    """``[[excitation]]`` tables and the ``[response]`` table (see :mod:`calc.excitation`)."""
    from beamtone.calc.excitation import CRITERIA

    return [
        Entry("excitation", TABLES, "excitations",
              "what excites the member: a frequency or running speed, its orders, a margin"),
        Entry("excitation[].name", TEXT, "name", "a name for the table and the record"),
        Entry("excitation[].speed", QUANTITY, "running speed",
              'running speed, or a range ["900 rpm", "1800 rpm"]', FREQUENCY, also=(TEXT,),
              missing='a speed such as "1480 rpm" or a frequency such as "120 Hz"'),
        Entry("excitation[].frequency", QUANTITY, "frequency",
              'exciting frequency, or a range ["1.8 Hz", "2.2 Hz"]', FREQUENCY, also=(TEXT,)),
        Entry("excitation[].orders", NUMBER, "orders",
              "multiples that excite: harmonics [1, 2], or a blade count [5]", default=1,
              bounds=(0.0, 1000.0)),
        Entry("excitation[].margin", TEXT, "margin",
              'required separation from every line on both sides, e.g. "20 %"'),
        Entry("excitation[].criterion", CHOICE, "criterion",
              "a named separation criterion instead of a margin", choices=tuple(CRITERIA)),
        Entry("excitation[].force", QUANTITY, "force",
              "amplitude of a harmonic force at every line (forced response)", FORCE),
        Entry("excitation[].force_at", QUANTITY, "force at",
              "where the force acts, from the left end", LENGTH, allow_zero=True,
              allow_negative=True, minimum=False, position=True),
        Entry("response", TABLE, "response", "settings of the forced response"),
        Entry("response.damping_ratio", TEXT, "damping ratio",
              'assumed modal damping ratio of every mode, e.g. "2 %" (uncertain)'),
    ]  # fmt: skip


def _direction_entries() -> list[Entry]:
    """Per-direction support overrides, springs and inertias (see :mod:`calc.restraints`)."""
    from beamtone.calc.restraints import DIRECTION_KINDS

    bending, inner = (
        DIRECTION_KINDS["width"],
        tuple(k for k in DIRECTION_KINDS["width"] if k != "free"),
    )
    torsion, axial = DIRECTION_KINDS["torsion"], DIRECTION_KINDS["axial"]
    rows: list[Entry] = []
    for where, prefix, width_kinds in (
        ("left end", "supports.left_", bending),
        ("right end", "supports.right_", bending),
        ("inner support", "supports.inner[].", inner),
    ):
        rows += [
            Entry(f"{prefix}width", CHOICE, "width plane",
                  f"what the {where} holds in the width plane (default: its kind)",
                  choices=width_kinds),
            Entry(f"{prefix}torsion", CHOICE, "torsion",
                  f"what the {where} holds in torsion: clamped (twist and warping), fork "
                  "(twist), free", choices=torsion),
            Entry(f"{prefix}axial", CHOICE, "axial",
                  f"whether the {where} holds the member axially", choices=axial),
        ]  # fmt: skip
    rows += [
        Entry("mass[].rotary_inertia_width", QUANTITY, "rot. inertia, width",
              "rotary inertia for bending in the width plane (default: rotary_inertia)",
              ROTARY_INERTIA, allow_zero=True, variable=True),
        Entry("mass[].polar_inertia", QUANTITY, "polar inertia",
              "moment of inertia about the member's axis (torsion)", ROTARY_INERTIA,
              allow_zero=True, default="0 kg*m^2", variable=True),
        Entry("spring[].stiffness_width", QUANTITY, "stiffness, width",
              "translational stiffness in the width plane (default: stiffness)", STIFFNESS,
              allow_zero=True, variable=True),
        Entry("spring[].rotational_stiffness_width", QUANTITY, "rot. stiffness, width",
              "rotational stiffness in the width plane (default: rotational_stiffness)",
              ROTATIONAL_STIFFNESS, allow_zero=True, variable=True),
        Entry("spring[].torsional_stiffness", QUANTITY, "torsional stiffness",
              "stiffness against twist about the member's axis", ROTATIONAL_STIFFNESS,
              allow_zero=True, default="0 N*m/rad", variable=True),
        Entry("spring[].axial_stiffness", QUANTITY, "axial stiffness",
              "stiffness along the member's axis", STIFFNESS, allow_zero=True,
              default="0 N/m", variable=True),
    ]  # fmt: skip
    return rows


@cache
def _entries() -> dict[str, Entry]:
    from beamtone.calc import materials
    from beamtone.calc.model import END_KINDS, INNER_KINDS
    from beamtone.calc.shear import THEORIES, TIMOSHENKO
    from beamtone.calc.worksheet import FORMAT, MAX_MODES, MAX_RITZ

    library = tuple(materials.LIBRARY)
    rows: list[Entry] = [
        Entry("format", INTEGER, "format", "worksheet format", required=True,
              bounds=(1, FORMAT)),
        Entry("title", TEXT, "title", "a title (the file name where not given)", default=""),
        Entry("notes", TEXT, "notes", "free notes", default=""),
        Entry("member", TABLE, "member", "the member", required=True,
              missing="a [member] table"),
        *_segment_like("member", True, library),
        Entry("member.axial_force", QUANTITY, "axial force",
              "constant axial force, tension positive", FORCE, allow_zero=True,
              allow_negative=True, minimum=False, default="0 N", variable=True),
        Entry("member.theory", CHOICE, "beam theory",
              "timoshenko (shear deformation and rotary inertia) or euler-bernoulli",
              choices=THEORIES, default=TIMOSHENKO),
        Entry("member.segment", TABLES, "segments", "uniform lengths, left to right"),
        *_segment_like("member.segment[]", False, library),
        Entry("supports", TABLE, "supports", "end and inner supports", required=True,
              missing="a [supports] table with left and right"),
        Entry("supports.left", CHOICE, "left end", "left end condition", choices=END_KINDS,
              required=True),
        Entry("supports.right", CHOICE, "right end", "right end condition", choices=END_KINDS,
              required=True),
        Entry("supports.inner", TABLES, "inner supports", "rigid supports inside the span"),
        Entry("supports.inner[].at", QUANTITY, "at", "position from the left end", LENGTH,
              allow_zero=True, allow_negative=True, minimum=False, position=True,
              required=True, missing="a position", variable=True),
        Entry("supports.inner[].kind", CHOICE, "kind", "what the support holds",
              choices=INNER_KINDS, required=True),
        Entry("mass", TABLES, "masses", "point masses"),
        Entry("mass[].at", QUANTITY, "at", "position from the left end", LENGTH,
              allow_zero=True, allow_negative=True, minimum=False, position=True,
              required=True, missing="a position from the left end", variable=True),
        Entry("mass[].mass", QUANTITY, "mass", "the point mass", MASS, allow_zero=True,
              required=True, missing="a mass", variable=True),
        Entry("mass[].rotary_inertia", QUANTITY, "rot. inertia",
              "rotary inertia about the bending axis", ROTARY_INERTIA, allow_zero=True,
              default="0 kg*m^2", variable=True),
        Entry("spring", TABLES, "springs", "grounded springs"),
        Entry("spring[].at", QUANTITY, "at", "position from the left end", LENGTH,
              allow_zero=True, allow_negative=True, minimum=False, position=True,
              required=True, missing="a position from the left end", variable=True),
        Entry("spring[].stiffness", QUANTITY, "stiffness", "translational stiffness",
              STIFFNESS, allow_zero=True, default="0 N/m", variable=True),
        Entry("spring[].rotational_stiffness", QUANTITY, "rot. stiffness",
              "rotational stiffness", ROTATIONAL_STIFFNESS, allow_zero=True,
              default="0 N*m/rad", variable=True),
        Entry("check", TABLE, "check", "what to report"),
        Entry("check.modes", INTEGER, "modes", "how many modes to report", default=5,
              bounds=(1, MAX_MODES)),
        Entry("estimate", TABLE, "estimate", "settings of the Rayleigh estimate"),
        Entry("estimate.shape", TEXT, "shape",
              "static, polynomial, trigonometric, or an expression in x and L",
              default="static"),
        Entry("estimate.shapes", INTEGER, "Ritz functions",
              "Rayleigh-Ritz trial functions: a count, or a list of expressions",
              bounds=(1, MAX_RITZ), also=(TEXT,)),
        Entry("estimate.reference", QUANTITY, "reference",
              "reference point of the equivalent single-DOF model", LENGTH, allow_zero=True,
              minimum=False, position=True),
        *_excitation_entries(),
        *_compliance_entries(),
        Entry("record", TABLE, "record", "the record beamtone solve --record writes"),
        *_direction_entries(),
    ]  # fmt: skip
    return {e.pattern: e for e in rows}


_INDEX = re.compile(r"\[\d+\]")
_LAST_INDEX = re.compile(r"\[\d+\]$")


def pattern(key: str) -> str:
    """The pattern of a key path: ``"mass[0].at"`` -> ``"mass[].at"``."""
    return _INDEX.sub("[]", key)


def find(key: str) -> Entry | None:
    """The entry of a key path or pattern, or None where the worksheet has no such key.

    ``tolerances.KEY`` (an entry of the ``[tolerances]`` table) is found where ``KEY`` is a
    quantity: a text entry, read by :func:`calc.tolerances.read_tolerances`.
    """
    if key.startswith("tolerances.") and key != "tolerances.":
        target = _entries().get(pattern(key[len("tolerances.") :]))
        if target is None or target.kind != QUANTITY:
            return None
        what = f'the range of {target.label}: "5 %", plus or minus, or [low, high]'
        return Entry(pattern(key), TEXT, f"tolerance of {target.label}", what)
    return _entries().get(pattern(key))


def entry(key: str) -> Entry:
    """The entry of a key path or pattern (KeyError where there is none)."""
    found = find(key)
    if found is None:
        raise KeyError(key)
    return found


def entries() -> tuple[Entry, ...]:
    """Every entry, in the order of a worksheet."""
    return tuple(_entries().values())


def children(table: str) -> tuple[str, ...]:
    """The keys a table may hold (``""`` for the top level), in the order of a worksheet.

    For an array of tables give its items' pattern (``"mass[]"``).  A section table holds the
    keys of its shape (:func:`section_keys`); here, every shape's keys.
    """
    base = pattern(table)
    prefix = f"{base}." if base else ""
    out = []
    for p in _entries():
        if p.startswith(prefix):
            rest = p[len(prefix) :]
            if "." not in rest and "[]" not in rest:
                out.append(rest)
    return tuple(out)


def hint(name: str, allowed: tuple[str, ...] | list[str]) -> str | None:
    """A did-you-mean for a name that is not among ``allowed``, or None."""
    close = difflib.get_close_matches(name, list(allowed), n=1, cutoff=0.6)
    return f"did you mean {close[0]!r}?" if close else None


def quantity_keys(data: dict[str, Any], variable_only: bool = True) -> list[str]:
    """Key paths of the quantities written in worksheet data, in file order.

    Parameters
    ----------
    data : dict
        The worksheet as plain data.
    variable_only : bool
        Only those sizing may vary (the member and its attachments).
    """
    out: list[str] = []

    def walk(node: Any, prefix: str) -> None:
        if isinstance(node, dict):
            for name, value in node.items():
                key = f"{prefix}.{name}" if prefix else name
                found = find(key) if isinstance(name, str) else None
                if found is None or found.pattern == "record":
                    continue
                if found.kind == QUANTITY:
                    if isinstance(value, str) and (found.variable or not variable_only):
                        out.append(key)
                else:
                    walk(value, key)
        elif isinstance(node, list):
            for i, item in enumerate(node):
                walk(item, f"{prefix}[{i}]")

    walk(data, "")
    return out


@dataclass(frozen=True)
class InputRow:
    """One row of a report's inputs table.

    Attributes
    ----------
    key : str
        Key path as in the worksheet.
    label : str
    written : str
        The value as written.
    si : float or None
        Its SI value (quantities only).
    unit : str
        The SI unit (quantities only, else ``""``).
    """

    key: str
    label: str
    written: str
    si: float | None
    unit: str


def input_rows(data: dict[str, Any]) -> list[InputRow]:
    """The inputs table of a worksheet: every entry written, with its SI value where a quantity.

    Tables are walked in file order; choices, numbers and text appear as written (``true`` /
    ``false`` for booleans; a list's items each on a row of their own, ``estimate.shapes[0]``).
    The ``[record]`` table is left out (it holds results, not inputs).  A quantity that does not
    parse (a worksheet that was not loaded first) has no SI value.
    """
    rows: list[InputRow] = []

    def add(key: str, value: Any) -> None:
        found = find(key) or find(_LAST_INDEX.sub("", key))  # a list's item: its list's entry
        label = found.label if found is not None else key.rsplit(".", 1)[-1]
        written = ("true" if value else "false") if isinstance(value, bool) else str(value)
        if found is not None and found.kind == QUANTITY and isinstance(value, str):
            assert found.dimension is not None
            try:
                si: float | None = found.parse(value, key)
            except InputError:
                si = None
            rows.append(InputRow(key, label, written, si, found.dimension.si_unit))
        else:
            rows.append(InputRow(key, label, written, None, ""))

    def walk(node: dict[str, Any], prefix: str) -> None:
        for name, value in node.items():
            key = f"{prefix}.{name}" if prefix else name
            if key == "record":
                continue
            if isinstance(value, dict):  # a table, or an inline material
                walk(value, key)
            elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
                for i, item in enumerate(value):
                    walk(item, f"{key}[{i}]")
            elif isinstance(value, list):
                for i, item in enumerate(value):
                    add(f"{key}[{i}]", item)
            else:
                add(key, value)

    walk(data, "")
    return rows
