"""The content of the calculation record a reviewer can file, as plain data.

:func:`build` turns an :class:`~beamtone.calc.analysis.Analysis` into a :class:`Report`:
purpose, inputs as entered and in SI, derived section properties and member mass,
assumptions, the methods with their formulas, the results, the cross-checks, the dimensional
groups, the excitation margins where given, the mode shapes to draw, warnings, the caution and
the references behind every tabulated value used.  The report is sections of blocks
(paragraphs, lists, tables, formulas, the figure, alerts) and the sampled mode shapes: no
markup.  ``beamtone.render`` turns it into Markdown, one HTML file and the SVG figure.
"""

from __future__ import annotations

import datetime as _dt
import math
import re
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from beamtone.calc import directions_report
from beamtone.calc.caution import CAUTION

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis
    from beamtone.calc.excitation import Excitation, MarginTable
    from beamtone.calc.record import Verification
    from beamtone.calc.sizing import MarginCheck
    from beamtone.calc.worksheet import Worksheet

__all__ = [
    "FIGURE_MODES",
    "Alert",
    "Block",
    "Bullets",
    "Figure",
    "Formula",
    "ModeShapes",
    "Paragraph",
    "Report",
    "Section",
    "Table",
    "build",
    "element_matrix_lines",
    "inputs_rows",
    "mode_shapes",
    "number",
    "report_data",
]

FIGURE_MODES = 3
"""How many mode shapes the figure draws at most."""

_FE_REFERENCE = (
    "J. S. Przemieniecki, Theory of Matrix Structural Analysis, 1968, chapters 5 and 11: "
    "beam element stiffness, consistent mass and geometric stiffness matrices (common practice)"
)
_ENERGY_REFERENCE = (
    "S. Timoshenko, D. H. Young and W. Weaver, Vibration Problems in Engineering, chapter 5: "
    "Rayleigh's principle, the Rayleigh-Ritz method and Dunkerley's method"
)
_DEPTH_PRACTICE = (
    "Bending theory alone is taken as adequate while a half-wavelength exceeds about ten "
    "section depths (common practice)"
)
_MARGIN_PRACTICE = (
    "Separation margins around excitation frequencies: common practice; the applicable code "
    "or client specification sets the margin"
)


def number(value: float | None, digits: int = 6) -> str:
    """A value as the report prints it: ``digits`` significant figures, "-" for None.

    Examples
    --------
    >>> number(16.365064454180892), number(0.0), number(None), number(1.2e-9)
    ('16.3651', '0', '-', '1.2e-09')
    """
    if value is None:
        return "-"
    return f"{value:.{digits}g}"


def _error(value: float) -> str:
    return "-" if not math.isfinite(value) else f"{value:.1e}"


def _percent(value: float) -> str:
    return f"{100.0 * value:.1f} %"


# --- document blocks -----------------------------------------------------------------------------


@dataclass(frozen=True)
class Paragraph:
    """A paragraph of plain text."""

    text: str


@dataclass(frozen=True)
class Bullets:
    """A list of plain-text items."""

    items: tuple[str, ...]


@dataclass(frozen=True)
class Table:
    """A table of text cells; ``literal`` lists the columns of text as typed (shown as code)."""

    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    literal: tuple[int, ...] = ()


@dataclass(frozen=True)
class Formula:
    """Lines of formulas, shown as preformatted text."""

    lines: tuple[str, ...]


@dataclass(frozen=True)
class Figure:
    """Where a figure goes, with its caption: ``"modes"`` (the mode shapes) or
    ``"interference"`` (the excitation chart)."""

    caption: str
    name: str = "modes"


@dataclass(frozen=True)
class Alert:
    """A statement the reader must not miss (a failed check, a changed input)."""

    text: str


Block = Paragraph | Bullets | Table | Formula | Figure | Alert


@dataclass(frozen=True)
class Section:
    """One numbered section of the report.

    Attributes
    ----------
    title : str
    blocks : tuple
        Paragraphs, lists, tables, formulas, the figure and alerts, in order.
    """

    title: str
    blocks: tuple[Block, ...]


@dataclass(frozen=True)
class ModeShapes:
    """The first mode shapes sampled along the member, and what the member carries.

    Attributes
    ----------
    length : float [m]
    x : tuple of float [m]
        Positions from the left end.
    modes : tuple of (int, float, tuple of float)
        (mode number, frequency [Hz], deflection at each x scaled to a largest deflection
        of +1 [-]).
    supports : tuple of (float, str)
        (position [m], kind) of the end and inner supports.
    masses, springs : tuple of float [m]
        Positions of the point masses and of the grounded springs.
    """

    length: float
    x: tuple[float, ...]
    modes: tuple[tuple[int, float, tuple[float, ...]], ...]
    supports: tuple[tuple[float, str], ...]
    masses: tuple[float, ...]
    springs: tuple[float, ...]


@dataclass(frozen=True)
class Report:
    """The content of a calculation record, ready to render.

    Attributes
    ----------
    title : str
    sections : tuple of Section
    shapes : ModeShapes
        The data of the mode-shape figure.
    verification : Verification or None
        The outcome of verifying the worksheet's stored record, where it has one.
    margins : MarginTable or None
        The worksheet's excitation margins (the data of the interference chart).
    excitations : tuple of Excitation
        The worksheet's excitations.
    """

    title: str
    sections: tuple[Section, ...]
    shapes: ModeShapes
    verification: Verification | None = None
    margins: MarginTable | None = None
    excitations: tuple[Excitation, ...] = ()


# --- the mode shapes -----------------------------------------------------------------------------


def mode_shapes(analysis: Analysis, count: int = FIGURE_MODES, points: int = 401) -> ModeShapes:
    """The first mode shapes sampled along the member, each scaled to unit largest deflection.

    Parameters
    ----------
    analysis : Analysis
    count : int
        Modes to sample (at most this many).
    points : int
        Sampling positions, evenly spaced from end to end.

    Returns
    -------
    ModeShapes
    """
    from beamtone.calc.fe import interpolate

    member = analysis.sheet.member
    L = member.length
    xs = tuple(L * i / (points - 1) for i in range(points))
    modes = []
    for mode in analysis.modes.modes[:count]:
        peak = float(mode.w_modal[int(abs(mode.w_modal).argmax())])
        w, theta = mode.w_modal / peak, mode.theta_modal / peak
        shape = tuple(interpolate(mode.x, w, theta, x) for x in xs)
        modes.append((mode.number, float(mode.frequency_hz), shape))
    supports = [(0.0, member.left), (L, member.right)]
    supports += [(s.at, s.kind) for s in member.inner_supports]
    return ModeShapes(
        length=L,
        x=xs,
        modes=tuple(modes),
        supports=tuple(supports),
        masses=tuple(p.at for p in member.masses),
        springs=tuple(s.at for s in member.springs),
    )


# --- the element matrices, as the finite-element code builds them --------------------------------

# (name, factor as shown, the factor for unit EI, m and P as a function of h, which of
# fe.element_matrices' (K, K_G, M) it is)
_ELEMENT_FACTORS = (
    ("K_e", "EI/h^3", lambda h: 1.0 / h**3, 0),
    ("M_e", "m h/420", lambda h: h / 420.0, 2),
    ("G_e", "P/(30h)", lambda h: 1.0 / (30.0 * h), 1),
)


def _term(coefficient: float, power: int) -> str:
    whole = round(coefficient)
    c = str(whole) if abs(coefficient - whole) < 1e-9 * max(1.0, abs(whole)) else f"{coefficient:g}"
    if power == 0:
        return c
    c = {"1": "", "-1": "-"}.get(c, c)
    return f"{c}h" + (f"^{power}" if power > 1 else "")


def element_matrix_lines() -> tuple[str, ...]:
    """The element matrices of the finite-element code, written out as the report shows them.

    The matrices are those of :func:`beamtone.calc.fe.element_matrices`, evaluated for
    elements of two lengths; the coefficient of every entry is
    its value for a unit length divided by the factor shown, and the power of h in it is read
    from the ratio of the two.

    Returns
    -------
    tuple of str
        ``K_e = EI/h^3 [[12, 6h, ...], ...]``, then ``M_e`` and ``G_e``, two lines each.
    """
    from beamtone.calc.fe import element_matrices

    # unit bending stiffness, mass per length and tension: (K, K_G, M)
    one, two = element_matrices(1.0, 1.0, 1.0, 1.0), element_matrices(2.0, 1.0, 1.0, 1.0)
    lines = []
    for name, shown, factor, which in _ELEMENT_FACTORS:
        a, b = one[which] / factor(1.0), two[which] / factor(2.0)
        rows = []
        for i in range(4):
            cells = []
            for j in range(4):
                power = 0 if a[i, j] == 0 else round(math.log2(abs(b[i, j] / a[i, j])))
                cells.append(_term(float(a[i, j]), power))
            rows.append("[" + ", ".join(cells) + "]")
        head = f"{name} = {shown} "
        lines.append(f"{head}[{rows[0]}, {rows[1]},")
        lines.append(" " * (len(head) + 1) + f"{rows[2]}, {rows[3]}]")
    return tuple(lines)


# --- the content ---------------------------------------------------------------------------------


def build(
    analysis: Analysis,
    *,
    caution: str = CAUTION,
    source: str | None = None,
    margins: MarginCheck | None = None,
    verification: Verification | None = None,
    now: _dt.datetime | None = None,
    study: object | None = None,
) -> Report:
    """The content of the calculation record of an analysis.

    Parameters
    ----------
    analysis : Analysis
    caution : str
        The caution to show (default: :data:`beamtone.calc.caution.CAUTION`).
    source : str, optional
        The worksheet's name as the reader should see it (default: where it was loaded from).
    margins : MarginCheck, optional
        An excitation check of the modes (see :func:`beamtone.calc.sizing.margins`).
    verification : Verification, optional
        The outcome of verifying the worksheet's stored record, where it has one.
    now : datetime, optional
        The date to state (default: now, UTC).
    study : scatter.ScatterResult, optional
        A sampled study over the worksheet's tolerances, shown with its histogram.

    Returns
    -------
    Report
        Sections of plain blocks and the mode shapes; ``beamtone.render`` writes it out.
    """
    from beamtone.calc.record import inputs_digest, tool_version

    sheet = analysis.sheet
    title = f"Calculation record: {sheet.title}" if sheet.title else "Calculation record"
    when = (now or _dt.datetime.now(_dt.UTC)).astimezone(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
    about = Table(
        ("item", "value"),
        (
            ("worksheet", source or sheet.source),
            ("inputs digest (SHA-256)", inputs_digest(sheet.data)),
            ("computed with", f"beamtone {tool_version()}"),
            ("date", when),
            ("stored record", _record_state(verification)),
        ),
        literal=(),
    )
    sections = [
        Section("Purpose", (*_purpose(analysis), about, Alert(caution))),
        Section("Inputs as entered and in SI", _inputs(analysis)),
        Section("Member: derived properties", _derived(analysis)),
        Section("Assumptions", _assumptions(analysis)),
        Section("Methods and formulas", _methods(analysis)),
        Section("Results", (*_results(analysis), *directions_report.blocks(analysis))),
        *_tolerance_section(analysis, study),
        Section("Cross-checks", _checks(analysis, verification)),
        Section("Dimensional groups", _groups(analysis)),
        Section("Excitation margins", _excitation_blocks(analysis, margins)),
        Section("Mode shapes", (Figure(_caption(analysis)),)),
        Section("Warnings", _warnings(analysis)),
        Section("Caution", (Paragraph(caution),)),
        Section("References", _references(analysis, margins)),
    ]
    return Report(
        title, tuple(sections), mode_shapes(analysis), verification, analysis.margins,
        analysis.sheet.excitations,
    )  # fmt: skip


def _tolerance_section(analysis: Analysis, study: object | None) -> tuple[Section, ...]:
    """The tolerance bands (calc.band_report), where the worksheet has tolerances."""
    if analysis.bands is None:
        return ()
    from beamtone.calc.band_report import band_blocks

    return (Section("Tolerance bands", band_blocks(analysis.bands, study)),)


def report_data(
    sheet: Worksheet,
    *,
    modes: int | None = None,
    elements: int | None = None,
    excitation: tuple[float, tuple[int, ...], float] | None = None,
    source: str | None = None,
    caution: str = CAUTION,
    now: _dt.datetime | None = None,
    samples: int | None = None,
) -> Report:
    """Solve a worksheet and return the content of its calculation record.

    Where the worksheet has a stored ``[record]``, it is solved with the record's mode count
    and mesh (unless ``modes`` or ``elements`` say otherwise) and the record is verified.

    Parameters
    ----------
    sheet : Worksheet
    modes : int, optional
        Overrides the worksheet's (and its record's) mode count.
    elements : int, optional
        Forces the finite-element mesh.
    excitation : (float [Hz], tuple of int, float [-]), optional
        Excitation frequency, the orders to check and the band half-width as a fraction:
        adds the separation margins of every mode.
    source : str, optional
        The worksheet's name as the reader should see it.
    caution : str
    now : datetime, optional
    samples : int, optional
        Also run a sampled study of this many samples over the worksheet's tolerances
        (:func:`calc.scatter.scatter`) and show its percentiles and histogram.

    Returns
    -------
    Report

    Raises
    ------
    InputError
        For a worksheet that cannot be solved and for a malformed record.
    """
    from beamtone.calc import record
    from beamtone.calc.analysis import analyse

    stored = record.read_record(sheet)
    as_recorded = stored is not None and modes is None and elements is None
    if stored is not None and as_recorded:
        modes, elements = stored.modes, stored.elements
    analysis = analyse(sheet, modes, elements)
    check = None
    if excitation is not None:
        from beamtone.calc.sizing import margins

        check = margins(analysis.modes.frequencies_hz, *excitation)
    verification = None
    if stored is not None:
        verification = record.verify(sheet, analysis if as_recorded else None)
    study = None
    if samples is not None:
        from beamtone.calc.errors import InputError
        from beamtone.calc.excitation import lines
        from beamtone.calc.scatter import scatter
        from beamtone.calc.tolerances import Design

        if not sheet.tolerances:
            raise InputError("--scatter", samples, "a worksheet with tolerances to sample")
        every = tuple(ln for e in sheet.excitations for ln in lines(e))
        study = scatter(Design.of(sheet), sheet.tolerances, analysis.modes.frequencies_hz.size,
                        samples, lines=every)  # fmt: skip
    return build(
        analysis,
        caution=caution,
        source=source,
        margins=check,
        verification=verification,
        now=now,
        study=study,
    )


def _record_state(verification: Verification | None) -> str:
    if verification is None:
        return "none in the worksheet (beamtone solve FILE --record stores one)"
    state = "reproduces" if verification.passed else "DOES NOT REPRODUCE"
    return f"{state}: {verification.message}"


def _purpose(analysis: Analysis) -> tuple[Block, ...]:
    sheet = analysis.sheet
    blocks: list[Block] = [
        Paragraph(
            f"Natural frequencies of the member \u201c{sheet.title or sheet.source}\u201d, with "
            "their mode shapes, to keep them clear of what excites it. The record states what "
            "was computed, from which inputs, by which methods and with which version, so that "
            "it can be checked again."
        )
    ]
    if sheet.notes.strip():
        blocks.append(Paragraph("Notes from the worksheet:"))
        blocks += [Paragraph(p.strip()) for p in re.split(r"\n\s*\n", sheet.notes) if p.strip()]
    else:
        blocks.append(Paragraph("The worksheet has no notes."))
    return tuple(blocks)


# inputs


def inputs_rows(analysis: Analysis) -> tuple[tuple[str, str, str], ...]:
    """The rows of the inputs table: (key path, value as entered, value in SI).

    Every entry of the worksheet except its stored ``[record]``, from the schema
    (:func:`calc.schema.input_rows`); a library material shows the values it stands for.
    """
    from beamtone.calc import materials, schema

    def si(row: schema.InputRow) -> str:
        if row.si is not None:
            return f"{number(row.si)} {row.unit}"
        found = materials.lookup(row.written) if row.key.endswith(".material") else None
        if found is None:
            return "-"
        return (
            f"library: E = {number(found.youngs_modulus)} Pa, "
            f"\u03c1 = {number(found.density)} kg/m^3"
        )

    return tuple((r.key, r.written, si(r)) for r in schema.input_rows(analysis.sheet.data))


def _inputs(analysis: Analysis) -> tuple[Block, ...]:
    return (
        Paragraph(
            "Every entry of the worksheet (its stored record aside), as written and as the "
            "calculation used it in SI units."
        ),
        Table(("key", "as entered", "in SI"), inputs_rows(analysis), literal=(0, 1, 2)),
    )


# derived


def _derived(analysis: Analysis) -> tuple[Block, ...]:
    member = analysis.sheet.member
    edges = member.boundaries
    sections = []
    lines = []
    for i, seg in enumerate(member.segments):
        sec = seg.section
        depth = (
            number(sec.depth)
            if sec.depth is not None
            else (f"{number(sec.effective_depth)} (from I/A)")
        )
        sections.append(
            (
                str(i + 1),
                f"{number(edges[i])} to {number(edges[i + 1])}",
                sec.shape,
                number(sec.area),
                number(sec.second_moment),
                depth,
                number(sec.radius_of_gyration),
            )
        )
        lines.append(
            (
                str(i + 1),
                number(seg.length),
                seg.material.name,
                number(seg.material.youngs_modulus),
                number(seg.material.density),
                number(seg.bending_stiffness),
                number(seg.added_mass),
                number(seg.mass_per_length),
                number(seg.mass_per_length * seg.length),
            )
        )
    attached = sum(p.mass for p in member.masses)
    totals = (
        ("member length", f"{number(member.length)} m"),
        ("member mass (with added mass)", f"{number(member.member_mass)} kg"),
        ("point masses", f"{number(attached)} kg"),
        ("total mass", f"{number(member.total_mass)} kg"),
        ("ends", f"{member.left} at x = 0, {member.right} at x = {number(member.length)} m"),
    )
    extra = []
    if member.inner_supports:
        extra.append(
            (
                "inner supports",
                ", ".join(f"{s.kind} at {number(s.at)} m" for s in member.inner_supports),
            )
        )
    if member.axial_force:
        kind = "tension" if member.axial_force > 0 else "compression"
        extra.append(("axial force", f"{number(abs(member.axial_force))} N {kind}"))
    return (
        Paragraph("Sections (bending about the axis across the depth; SI units):"),
        Table(
            ("segment", "x [m]", "shape", "A [m^2]", "I [m^4]", "depth [m]", "r = sqrt(I/A) [m]"),
            tuple(sections),
        ),
        Paragraph("Stiffness and mass along the member:"),
        Table(
            (
                "segment",
                "length [m]",
                "material",
                "E [Pa]",
                "\u03c1 [kg/m^3]",
                "EI [N m^2]",
                "added [kg/m]",
                "m [kg/m]",
                "mass [kg]",
            ),
            tuple(lines),
        ),
        Table(("quantity", "value"), (*totals, *extra)),
    )


def _theory_assumption(analysis: Analysis) -> str:
    """The beam theory of the bending solve, and what it leaves out (issue 17)."""
    if analysis.theory == "timoshenko":
        text = (
            "Timoshenko bending in each plane: plane sections stay plane but not normal to the "
            "axis; shear deformation (Cowper's shear coefficients) and the rotary inertia of "
            "the section are included."
        )
    else:
        text = (
            "Euler-Bernoulli bending in each plane: plane sections stay plane and normal to the "
            "axis; shear deformation and the rotary inertia of the section are neglected."
        )
    pair = analysis.theories
    return text if pair is None or not pair.note() else f"{text} {pair.note()}."


def _assumptions(analysis: Analysis) -> tuple[Block, ...]:
    member = analysis.sheet.member
    items = [
        _theory_assumption(analysis),
        "Linear: small deflections, linear-elastic, isotropic and homogeneous material with "
        "the properties listed.",
        "Undamped free vibration: the natural frequencies are those of the undamped system.",
        "Idealized ends and supports: clamped, pinned and guided supports are rigid and ideal; "
        "springs are linear and grounded; point masses are rigid and act at a point.",
        "Each segment is uniform; changes of section are abrupt.",
    ]
    if member.axial_force:
        items.append(
            "The axial force is constant along the member and does not change during "
            "vibration (geometric stiffness)."
        )
    items.append(_DEPTH_PRACTICE + "; where a mode breaks this, the warnings say so.")
    items += directions_report.assumptions(analysis)
    fe = analysis.modes
    return (
        Bullets(tuple(items)),
        Paragraph(
            "What the numbers leave out: the finite-element result does not include the "
            f"following, and its estimated errors do not cover them ({fe.estimate_meaning}):"
        ),
        Bullets(tuple(fe.assumptions)),
    )


# methods


def _methods(analysis: Analysis) -> tuple[Block, ...]:
    fe, est, low = analysis.modes, analysis.estimate, analysis.lower_bound
    blocks: list[Block] = [
        Paragraph(
            f"Finite elements. Hermite cubic beam elements (deflection w and slope \u03b8 at "
            f"each node), consistent mass, supports enforced exactly by eliminating the degrees "
            f"of freedom they hold. Reported mesh: {fe.elements} elements, "
            f"{fe.degrees_of_freedom} free degrees of freedom; eigen solver: {fe.solver}."
        ),
        Formula(
            (
                "element of length h, bending stiffness EI, mass per length m, axial force P:",
                *element_matrix_lines(),
                "(K + G) \u03c6 = \u03c9\u00b2 M \u03c6,   f = \u03c9/(2\u03c0)",
                "effective mass of mode i: (\u03c6_i\u1d40 M r)\u00b2,",
                "  with \u03c6_i\u1d40 M \u03c6_i = 1 and r the unit translation",
            )
        ),
        Paragraph(
            "Accuracy. The mesh is chosen so that every reported frequency meets a relative "
            "accuracy of 1e-6. Each mode is solved on two meshes, one twice as fine; the "
            "estimated error is twice the Richardson estimate from the h^4 convergence of the "
            "eigenvalues, or a round-off bound where that is larger. Finite-element frequencies "
            "of this kind converge from above. Eigenvalues are taken from the element strain "
            "energies of the eigenvectors."
        ),
        Paragraph(
            "Rayleigh's quotient. For an assumed shape w(x) that meets the geometric conditions "
            "of every support, the quotient bounds the fundamental from above:"
        ),
        Formula(
            (
                "\u03c9\u2081\u00b2 \u2264 R[w] = (\u222bEI w''\u00b2 dx + P\u222bw'\u00b2 dx + "
                "\u03a3k w(a)\u00b2 + \u03a3k_r w'(a)\u00b2)",
                "                / (\u222bm w\u00b2 dx + \u03a3M w(a)\u00b2 + \u03a3J w'(a)\u00b2)",
            )
        ),
    ]
    shape = (
        "the static deflection under the member's own weight"
        if est.shape == "static"
        else (f"w(x) = {est.expression or est.shape}")
    )
    text = f"Assumed shape: {shape}."
    if est.formula:
        text += f" Integrated symbolically: {est.formula}."
    else:
        text += " Integrated numerically (Gauss quadrature on every segment)."
    blocks.append(Paragraph(text))
    if est.notes:
        blocks.append(Bullets(tuple(est.notes)))
    if analysis.ritz is not None:
        blocks.append(
            Paragraph(
                "Rayleigh-Ritz. With several trial functions the quotient's stationary values "
                "bound as many of the lowest frequencies from above: "
                "det(K_r - \u03c9\u00b2 M_r) = 0 with K_r, M_r the energy matrices of the "
                "functions: " + "; ".join(analysis.ritz.shapes) + "."
            )
        )
    blocks += [
        Paragraph(
            "Dunkerley's bound. The sum of the inverse squares of all natural frequencies "
            "equals the trace of flexibility times mass, which bounds the fundamental from below:"
        ),
        Formula(
            (
                "1/\u03c9\u2081\u00b2 \u2264 \u03a3 1/\u03c9_i\u00b2 = \u222bm(x) a(x,x) dx + "
                "\u03a3M_j a(x_j,x_j) + \u03a3J_j b(x_j,x_j)",
                "a(x,x): deflection at x under a unit force at x; b: rotation under a unit moment",
            )
        ),
        Paragraph(
            "The flexibility is that of the supported member, exact at the element nodes and "
            "integrated exactly"
            + (" (no axial force)." if low.exact else "; with the axial force it is approximate.")
        ),
        Paragraph(
            "Bracket. The finite-element fundamental must lie between Dunkerley's lower and "
            "Rayleigh's upper bound (within its estimated error); if it does not, the model or "
            "its input is suspect."
        ),
        Paragraph(
            "Handbook frequencies (where the member is a tabulated case). The exact roots "
            "\u03bb_i of the characteristic equation of the case, solved to 1e-12, give"
        ),
        Formula(
            ("f_i = \u03bb_i\u00b2/(2\u03c0 l\u00b2) \u221a(EI/m),   l the member or span length",)
        ),
        Paragraph(
            "Equivalent single-degree-of-freedom model at a point a: with the fundamental "
            "normalized to unit modal mass, m_e = 1/\u03c6(a)\u00b2 and k_e = \u03c9\u2081\u00b2 "
            "m_e."
        ),
        Paragraph(
            "Dimensional groups: with L, and EI and m of the first segment, as repeating "
            "variables, every result is f = \u03a9/(2\u03c0L\u00b2)\u221a(EI/m) and the groups "
            "below decide \u03a9."
        ),
    ]
    return tuple(blocks)


# results


def _results(analysis: Analysis) -> tuple[Block, ...]:
    fe = analysis.modes
    floor = 1e-12 * fe.total_mass  # below it an effective mass is round-off of zero
    rows = tuple(
        (
            str(m.number),
            number(m.frequency_hz),
            number(m.omega),
            _error(m.estimated_error),
            number(m.effective_mass) if m.effective_mass > floor else "0",
            _percent(m.effective_mass_fraction),
            _percent(m.cumulative_mass_fraction),
        )
        for m in fe.modes
    )
    rigid = fe.rigid_body_modes
    est, low, eq = analysis.estimate, analysis.lower_bound, analysis.equivalent
    blocks: list[Block] = [
        Table(
            (
                "mode",
                "f [Hz]",
                "\u03c9 [rad/s]",
                "est. rel. error",
                "eff. mass [kg]",
                "eff. mass",
                "cumulative",
            ),
            rows,
        ),
        Paragraph(
            f"Rigid-body modes: {rigid}"
            + (" (counted, not listed; mode 1 is the first flexible mode)." if rigid else ".")
            + " Effective masses are in the plane of vibration, as fractions of the total mass "
            f"{number(fe.total_mass)} kg."
        ),
        Paragraph(
            f"Soundness of the eigen solution: mass orthogonality {fe.mass_orthogonality:.1e}, "
            f"stiffness orthogonality {fe.stiffness_orthogonality:.1e}; stiffness matrix "
            f"{fe.stiffness_definiteness}, mass matrix {fe.mass_definiteness}."
            + ("" if fe.mode_count is None else f" Independent {fe.mode_count.describe()}.")
        ),
        Paragraph(f"The estimated relative error: {fe.estimate_meaning}."),
        Table(
            ("estimate", "value"),
            (
                ("Rayleigh (upper bound on f1)", f"{number(est.frequency_hz)} Hz"),
                (
                    "Dunkerley (lower bound on f1)",
                    f"{number(low.frequency_hz)} Hz" + (f" ({low.note})" if low.note else "")
                    if low.frequency_hz is not None
                    else f"none: {low.reason}",
                ),
                ("equivalent 1-DOF model: point", f"{number(eq.at_m)} m"),
                ("equivalent 1-DOF model: effective mass", f"{number(eq.mass_kg)} kg"),
                ("equivalent 1-DOF model: stiffness", f"{number(eq.stiffness_n_per_m)} N/m"),
            ),
        ),
    ]
    blocks += _theory_blocks(analysis)
    if analysis.ritz is not None:
        ritz = analysis.ritz
        count = len(ritz.frequencies_hz)
        blocks.append(Paragraph("Rayleigh-Ritz upper bounds [Hz] with 1, 2, ... functions:"))
        blocks.append(
            Table(
                ("functions", *(f"f{i + 1}" for i in range(count))),
                tuple(
                    (str(n), *(number(f) for f in row), *("-" for _ in range(count - len(row))))
                    for n, row in enumerate(ritz.convergence, start=1)
                ),
            )
        )
    return tuple(blocks)


def _theory_blocks(analysis: Analysis) -> list[Block]:
    """Both beam theories per mode, with the effect of shear and rotary inertia (issue 17)."""
    pair = analysis.theories
    if pair is None:
        return []
    chosen = "Timoshenko" if pair.theory == "timoshenko" else "Euler-Bernoulli"
    blocks: list[Block] = [
        Paragraph(
            f"Beam theory: {chosen} (the table above). Shear deformation and the section's "
            "rotary inertia, mode by mode (Rayleigh, Dunkerley, the bracket and the handbook "
            "are Euler-Bernoulli results and are checked against the Euler-Bernoulli solve):"
        )
    ]
    if pair.timoshenko is None:
        return [*blocks, Paragraph(pair.note() + ".")]
    rows = tuple(
        (str(e.number), number(e.frequency_hz), number(t.frequency_hz), f"{100 * d:+.2f} %")
        for e, t, d in zip(
            pair.euler_bernoulli.modes, pair.timoshenko.modes, pair.differences, strict=False
        )
    )
    blocks.append(
        Table(("mode", "Euler-Bernoulli [Hz]", "Timoshenko [Hz]", "shear and rotary inertia"), rows)
    )
    return blocks


def _checks(analysis: Analysis, verification: Verification | None) -> tuple[Block, ...]:
    blocks: list[Block] = []
    check = analysis.handbook
    if check is None:
        blocks.append(
            Paragraph(
                "Handbook: the member is not one of the tabulated cases (uniform with classical "
                "ends and nothing attached, a cantilever with a tip mass, equal pinned spans), so "
                "the finite-element result stands on its own, with the bracket below."
            )
        )
    else:
        rows = []
        # the handbook is Euler-Bernoulli: compared with the Euler-Bernoulli solve
        pair = analysis.theories
        compared = analysis.modes if pair is None else pair.euler_bernoulli
        for mode, lam, ref in zip(
            compared.modes, check.parameters, check.frequencies_hz, strict=False
        ):
            diff = (mode.frequency_hz - ref) / ref
            rows.append(
                (
                    str(mode.number),
                    number(mode.frequency_hz),
                    number(ref),
                    number(lam, 10),
                    f"{100 * diff:+.2e} %",
                )
            )
        blocks.append(Paragraph(f"Handbook case: {check.case} (source: {check.source})."))
        fe_label = "FE [Hz]" if compared is analysis.modes else "E-B FE [Hz]"
        blocks.append(
            Table(("mode", fe_label, "handbook [Hz]", "\u03bb_i", "FE vs handbook"), tuple(rows))
        )
    br = analysis.bracket
    blocks.append(
        Table(
            ("Dunkerley [Hz]", "FE f1 [Hz]", "Rayleigh [Hz]", "width", "holds"),
            (
                (
                    number(br.lower_hz),
                    number(br.fe_hz),
                    number(br.upper_hz),
                    "-" if br.width is None else f"{100 * br.width:.3g} %",
                    "yes" if br.inside else "NO",
                ),
            ),
        )
    )
    blocks.append(Alert(br.message) if not br.inside else Paragraph(f"Bracket: {br.message}."))
    status = f"Bracket status: {br.status}"
    if br.lower_reason:
        status += f"; no lower bound is given: {br.lower_reason}"
    blocks.append(Paragraph(status + "."))
    if verification is not None:
        blocks.append(Paragraph(f"Stored record: {verification.message}."))
        if not verification.inputs_unchanged:
            blocks.append(
                Alert(
                    f"The inputs changed since the record was written on "
                    f"{verification.record.written}: the stored results describe other inputs."
                )
            )
        blocks.append(
            Table(
                ("quantity", "stored", "now", "rel. difference", "tolerance", "agrees"),
                tuple(_comparison_row(c) for c in verification.comparisons),
            )
        )
    return tuple(blocks)


def _comparison_row(c: Any) -> tuple[str, ...]:
    def show(v: Any) -> str:
        if v is None:
            return "-"
        if isinstance(v, bool):
            return "yes" if v else "no"
        if isinstance(v, int):
            return str(v)
        return number(v, 10) if isinstance(v, float) else str(v)

    quantity = f"{c.quantity} [{c.unit}]" if c.unit else c.quantity
    rel = "-" if c.relative is None else f"{c.relative:.1e}"
    return (quantity, show(c.stored), show(c.now), rel, c.rule, "yes" if c.ok else "NO")


def _groups(analysis: Analysis) -> tuple[Block, ...]:
    g = analysis.groups
    rows = tuple((x.symbol, x.expression, number(x.value), x.meaning) for x in g.groups)
    return (
        Paragraph(
            f"Repeating variables: L = {number(g.length)} m, EI = {number(g.bending_stiffness)} "
            f"N m^2, m = {number(g.mass_per_length)} kg/m (first segment). "
            "\u03a9_i = \u03c9_i L\u00b2 \u221a(m/EI)."
        ),
        Table(("group", "definition", "value", "meaning"), rows, literal=(1,)),
    )


def _margins(margins: MarginCheck | None) -> tuple[Block, ...]:
    if margins is None:
        return (
            Paragraph(
                'No excitation was given (beamtone report FILE --excitation "1480 rpm" adds '
                "this check)."
            ),
        )
    header = ["mode", "f [Hz]"] + [
        f"{ln.harmonic}x {number(ln.frequency_hz)} Hz (band {number(ln.low_hz)} to "
        f"{number(ln.high_hz)})"
        for ln in margins.lines
    ]
    rows = []
    for i, (f, row) in enumerate(zip(margins.frequencies_hz, margins.inside, strict=True), 1):
        cells = [
            f"{'INSIDE BAND' if hit else 'clear'} ({100 * (f / ln.frequency_hz - 1):+.1f} %)"
            for hit, ln in zip(row, margins.lines, strict=True)
        ]
        rows.append((str(i), number(f), *cells))
    blocks: list[Block] = [
        Paragraph(
            "Each mode against each excitation line: inside the band means closer to the line "
            "than the margin; the percentage is the mode's separation from the line."
        ),
        Table(tuple(header), tuple(rows)),
        Paragraph(_MARGIN_PRACTICE + "."),
    ]
    if not margins.clear:
        blocks.append(Alert("At least one mode lies inside an excitation band."))
    return tuple(blocks)


def _excitation_blocks(analysis: Analysis, margins: MarginCheck | None) -> tuple[Block, ...]:
    """The worksheet's excitations: the margin table, the verdict, the chart, and the forced
    response where a damping ratio is given; then the check of ``--excitation``, where given
    (without either, a note on how to add one)."""
    table = analysis.margins
    if table is None:
        return _margins(margins)
    from beamtone.calc.excitation import CAUTION as MARGIN_CAUTION
    from beamtone.calc.excitation import CRITERIA

    rows = tuple(
        (
            r.excitation, "limit" if r.order is None else f"{r.order:g}",
            number(r.line_low_hz) if r.line_high_hz == r.line_low_hz
            else f"{number(r.line_low_hz)} to {number(r.line_high_hz)}",
            f"{r.direction} {r.mode}", number(r.frequency_hz), f"{100 * r.separation:+.1f} %",
            f"{100 * r.required:.1f} %", "clear" if r.clear else "INSIDE",
        )
        for r in table.rows
    )  # fmt: skip
    bands = tuple(
        f"{ln.excitation} {'lower limit' if ln.order is None else f'order {ln.order:g}'}: "
        f"band to keep clear {number(ln.band_low_hz)} to {number(ln.band_high_hz)} Hz, "
        + (
            f"{n} mode(s) INSIDE"
            if (
                n := sum(
                    1
                    for r in table.rows
                    if not r.clear and r.excitation == ln.excitation and r.order == ln.order
                )
            )
            else "every computed mode clear of it"
        )  # fmt: skip
        for ln in table.lines
    )
    blocks: list[Block] = [
        Paragraph(
            "The worksheet's excitations. Every excitation line against every computed mode "
            "of every computed direction. "
            "Separation is from the nearest end of the line, as a fraction of it (negative "
            "below); a mode is clear only where it lies outside the band with its estimated "
            "error, so a mode on a band edge is not clear."
        ),
        Bullets(bands),
        Table(
            ("excitation", "order", "line [Hz]", "mode", "f [Hz]", "separation", "required", ""),
            rows,
        ),  # fmt: skip
        (Paragraph if table.verdict.clear else Alert)(f"Verdict: {table.verdict.text}"),
    ]
    if table.verdict.unchecked:
        blocks.append(Bullets(tuple(f"not covered: {n}" for n in table.verdict.unchecked)))
    if table.passages:
        blocks.append(
            Paragraph(
                f"{len(table.passages)} excitation line(s) lie above a natural frequency: the "
                "member passes through resonance whenever the source runs up from rest and "
                "down to it (start-up and shut-down)."
            )
        )
    named = [e for e in analysis.sheet.excitations if e.criterion is not None]
    if named:
        blocks.append(
            Bullets(
                tuple(
                    f"{e.name}: criterion {e.criterion} ({CRITERIA[e.criterion].applies_to}); "
                    f"{CRITERIA[e.criterion].source}"
                    for e in named
                )
            )  # fmt: skip
        )
    blocks.append(Paragraph(MARGIN_CAUTION))
    speed = any(e.as_speed for e in analysis.sheet.excitations)
    caption = (
        "Interference chart: natural frequencies against running speed, with the order "
        "lines, their margin bands and the operating speed; red: a mode not clear."
        if speed
        else "Frequency map: the margin bands of every excitation line and the natural "
        "frequencies; red: a mode not clear."
    )
    blocks.append(Figure(caption, "interference"))
    if analysis.response is not None:
        blocks += _response(analysis)
    if margins is not None:
        blocks += _margins(margins)
    return tuple(blocks)


def _response(analysis: Analysis) -> tuple[Block, ...]:
    from beamtone.calc.response import DAMPING_CAUTION

    resp = analysis.response
    assert resp is not None
    rows: list[tuple[str, ...]] = []
    for ln in resp.lines:
        line = f"{ln.excitation} order {ln.order:g}"
        amps = ", ".join(f"{a:.3g}" for a in ln.amplification)
        if not ln.points:
            rows.append((line, amps, "-", "-", "-", "-"))
        for p in ln.points:
            rows.append((
                line, amps, f"{p.name} at {number(p.at, 4)} m", f"{p.displacement:.3e}",
                f"{p.velocity:.3e}", f"{p.acceleration:.3e}",
            ))  # fmt: skip
    blocks: list[Block] = [
        Paragraph(
            f"Forced response: modal superposition of the {resp.modes_used} computed "
            "mass-normalized modes with an assumed damping ratio of "
            f"{100 * resp.damping_ratio:g} % of critical in every mode; amplification "
            "1/sqrt((1 - r^2)^2 + (2 zeta r)^2) per mode; amplitudes of "
            "a harmonic force at each line (for a range, the largest over it)."
        ),
        Table(
            (
                "line",
                "amplification by mode",
                "where",
                "displacement [m]",
                "velocity [m/s]",
                "acceleration [m/s^2]",
            ),
            tuple(rows),
        ),  # fmt: skip
        Alert(DAMPING_CAUTION),
    ]
    if resp.notes:
        blocks.append(Bullets(resp.notes))
    return tuple(blocks)


def _caption(analysis: Analysis) -> str:
    n = min(FIGURE_MODES, len(analysis.modes.modes))
    which = "mode shape" if n == 1 else f"first {n} mode shapes"
    return (
        f"The {which}, each scaled to unit largest deflection, with the supports, point "
        "masses and springs marked."
    )


def _warnings(analysis: Analysis) -> tuple[Block, ...]:
    if not analysis.warnings:
        return (Paragraph("None."),)
    blocks: list[Block] = []
    if not analysis.bracket.inside:
        blocks.append(Alert(analysis.bracket.message))
    blocks.append(Bullets(tuple(analysis.warnings)))
    return tuple(blocks)


def _references(analysis: Analysis, margins: MarginCheck | None) -> tuple[Block, ...]:
    items: list[str] = [_FE_REFERENCE, _ENERGY_REFERENCE]
    if analysis.handbook is not None:
        items.append(
            f"Handbook frequency parameters ({analysis.handbook.case}): {analysis.handbook.source}"
        )
    seen: set[tuple[str, str]] = set()
    for seg in analysis.sheet.member.segments:
        mat = seg.material
        if (mat.name, mat.source) in seen:
            continue
        seen.add((mat.name, mat.source))
        items.append(f"Material {mat.name}: {mat.source}")
    items.append(_DEPTH_PRACTICE)
    if margins is not None:
        items.append(_MARGIN_PRACTICE)
    return (Bullets(tuple(items)),)
