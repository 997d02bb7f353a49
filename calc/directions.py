"""Every direction a member vibrates in: both bending planes, torsion and axial motion.

The four directions are solved as uncoupled, which is exact for a doubly symmetric section
(every built-in shape) whose attached masses sit on its axis:

- **depth plane**: the member as the worksheet describes it (the finite-element solve of
  :mod:`calc.fe`);
- **width plane**: the same member bending about its other principal axis (second moment
  ``Section.second_moment_width``), with each support's width-plane kind, the springs' and
  masses' width-plane values; solved by the same bending machinery;
- **torsion**: Saint-Venant torsion G J phi'' with the polar mass moment rho Ip per length
  (added mass spread like the section, its share rho_added Ip / A), point masses' polar
  inertias, torsional springs; where every segment has warping stiffness (an i-beam) and one
  G J, the warping equation E Cw phi'''' - G J phi'' + rho Ip phi_tt = 0, which has the form
  of a beam under tension and is solved by the bending machinery (fork = pinned, clamped =
  twist and warping held);
- **axial**: E A u'' with rho A (+ added mass) per length, point masses, axial springs
  (second-order finite elements, :mod:`calc.fe.rod`).

What each support holds in each direction is stated in :mod:`calc.restraints`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from beamtone.calc import fe, handbook, rayleigh
from beamtone.calc.closedforms import ClosedForm, fork_warping_closed_form, rod_closed_form
from beamtone.calc.errors import InputError
from beamtone.calc.fe.rod import RodProblem, RodResult, solve_rod
from beamtone.calc.fe.timoshenko import segment_properties
from beamtone.calc.materials import Material
from beamtone.calc.model import InnerSupport, Member, PointMass, Segment, Spring
from beamtone.calc.restraints import DIRECTIONS, Restraint, member_restraints
from beamtone.calc.sections import Section
from beamtone.calc.theories import TheoryPair, solve_pair

__all__ = [
    "DIRECTIONS",
    "COUPLING_NOTE",
    "LABELS",
    "DirectionMode",
    "Direction",
    "Directions",
    "width_member",
    "torsion_problem",
    "axial_problem",
    "solve_directions",
    "SIZING_DIRECTIONS",
    "DEFAULT_SIZING_DIRECTION",
    "frequency_columns",
    "lowest",
    "column_mode",
    "frequencies",
    "same_bending",
]

COUPLING_NOTE = (
    "bending in the two planes, torsion and axial motion are solved as uncoupled: exact for a "
    "doubly symmetric section with every attached mass on its axis; bending-torsion coupling "
    "(masses off the shear centre, channels and angles) and lateral-torsional effects are not "
    "modelled"
)
"""The model assumption every direction result states."""


@dataclass(frozen=True)
class DirectionMode:
    """One flexible mode of one direction.

    Attributes
    ----------
    direction : str
        ``"depth"``, ``"width"``, ``"torsion"`` or ``"axial"``.
    number : int
        1 for the direction's first flexible mode.
    frequency_hz : float
        Natural frequency [Hz].
    omega : float
        Circular natural frequency [rad/s].
    estimated_error : float
        Estimated relative error of the frequency [-].
    effective : float
        Effective modal mass [kg] (bending, axial) or polar inertia [kg*m^2] (torsion).
    effective_fraction : float
        ``effective`` over the direction's total [-].
    """

    direction: str
    number: int
    frequency_hz: float
    omega: float
    estimated_error: float
    effective: float
    effective_fraction: float


@dataclass(frozen=True)
class Direction:
    """The result of one direction.

    Attributes
    ----------
    name : str
        One of ``DIRECTIONS``.
    modes : tuple of DirectionMode
        Flexible modes, lowest first (empty where not computed).
    rigid_body_modes : int
        Rigid-body modes of this direction (counted, not listed).
    reason : str
        Why the direction was not computed ("" where it was).
    solution : fe.FEResult or RodResult or None
        The solver's own result (mode shapes, mesh, soundness checks).
    handbook : handbook.HandbookCheck or None
        Handbook frequencies of a bending plane that is a tabulated case.
    closed_form : ClosedForm or None
        Closed-form frequencies of torsion or axial motion where the member is such a case.
    supports : tuple of str
        What each support holds in this direction: left end, right end, inner supports.
    notes : tuple of str
        What this direction's model assumes or leaves out.
    warnings : tuple of str
        The solver's warnings.
    same_as : str
        The direction whose modes this one repeats (a round or square section's two bending
        planes coincide), else "".
    estimate, lower_bound, bracket : rayleigh results or None
        For the width plane: Rayleigh's upper bound from the static deflection shape,
        Dunkerley's lower bound and the bracket of the FE fundamental (the depth plane's are
        the analysis's own); Euler-Bernoulli results, bracketing the Euler-Bernoulli solve.
    theories : theories.TheoryPair or None
        A bending plane solved by both beam theories (``modes`` are the chosen theory's).
    """

    name: str
    modes: tuple[DirectionMode, ...]
    rigid_body_modes: int = 0
    reason: str = ""
    solution: fe.FEResult | RodResult | None = None
    handbook: handbook.HandbookCheck | None = None
    closed_form: ClosedForm | None = None
    supports: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()
    same_as: str = ""
    estimate: rayleigh.RayleighEstimate | None = None
    lower_bound: rayleigh.DunkerleyBound | None = None
    bracket: rayleigh.Bracket | None = None
    theories: TheoryPair | None = None

    @property
    def computed(self) -> bool:
        """True where the direction was solved."""
        return not self.reason

    @property
    def reference_hz(self) -> tuple[float, ...] | None:
        """Handbook or closed-form frequencies [Hz], where the member is such a case."""
        if self.handbook is not None:
            return self.handbook.frequencies_hz
        if self.closed_form is not None:
            return self.closed_form.frequencies_hz
        return None


@dataclass(frozen=True)
class Directions:
    """Every direction of one member.

    Attributes
    ----------
    directions : tuple of Direction
        In the order of ``DIRECTIONS``.
    notes : tuple of str
        Assumptions of the whole model (coupling), and where the section or attachments make
        what is left out likely to matter.
    """

    directions: tuple[Direction, ...]
    notes: tuple[str, ...]

    def __getitem__(self, name: str) -> Direction:
        for d in self.directions:
            if d.name == name:
                return d
        raise KeyError(name)

    @property
    def all_modes(self) -> tuple[DirectionMode, ...]:
        """Every computed mode of every direction, lowest frequency first."""
        modes = [m for d in self.directions for m in d.modes]
        order = {name: i for i, name in enumerate(DIRECTIONS)}
        return tuple(sorted(modes, key=lambda m: (m.frequency_hz, order[m.direction], m.number)))

    @property
    def warnings(self) -> tuple[str, ...]:
        """Warnings of the width plane, torsion and axial solves, each naming its direction
        (the depth plane's are the analysis's own)."""
        out: list[str] = []
        for d in self.directions[1:]:
            if d.same_as:
                continue
            if d.bracket is not None and not d.bracket.inside:
                out.append(f"{_LABELS[d.name]}: {d.bracket.message}")
            out += [f"{_LABELS[d.name]}: {w}" for w in d.warnings]
        return tuple(out)

    @property
    def governing(self) -> DirectionMode | None:
        """The lowest mode of all directions (None where nothing was computed)."""
        modes = self.all_modes
        return modes[0] if modes else None


_LABELS = {"depth": "depth plane", "width": "width plane", "torsion": "torsion", "axial": "axial"}
LABELS = _LABELS
"""How output names each direction."""


# --- the width plane -----------------------------------------------------------------------------


def width_member(member: Member) -> Member | str:
    """The member bending in its width plane, or the reason it cannot be described.

    Each segment's section turned a quarter turn (second moments and depth and width swapped),
    each support's width-plane kind, springs' and masses' width-plane values (the depth
    plane's where not given).  The axial force acts in both planes.
    """
    left, right, inner = member_restraints(member)
    segments = []
    for i, seg in enumerate(member.segments):
        sec = seg.section
        if sec.second_moment_width is None:
            key = f"member.segment[{i}]" if len(member.segments) > 1 else "member"
            return (
                f"{key}.section gives no second moment for the width plane "
                "(direct properties: add second_moment_width)"
            )
        turned = replace(
            sec,
            second_moment=sec.second_moment_width,
            second_moment_width=sec.second_moment,
            depth=sec.width,
            width=sec.depth,
            shear_area=sec.shear_area_width,
            shear_area_width=sec.shear_area,
            plane="width",
        )
        segments.append(replace(seg, section=turned))
    springs = tuple(
        Spring(
            s.at,
            s.stiffness if s.stiffness_width is None else s.stiffness_width,
            s.rotational_stiffness
            if s.rotational_stiffness_width is None
            else s.rotational_stiffness_width,
        )
        for s in member.springs
    )
    masses = tuple(
        PointMass(
            m.at,
            m.mass,
            m.rotary_inertia if m.rotary_inertia_width is None else m.rotary_inertia_width,
        )
        for m in member.masses
    )
    inner_supports = tuple(
        InnerSupport(s.at, r.width) for s, r in zip(member.inner_supports, inner, strict=True)
    )
    return Member(
        tuple(segments),
        left.width,
        right.width,
        masses,
        springs,
        inner_supports,
        member.axial_force,
        theory=member.theory,
    )


def _plain(member: Member) -> Member:
    """The depth-plane member without its direction overrides (for comparison)."""
    return Member(
        member.segments,
        member.left,
        member.right,
        tuple(PointMass(m.at, m.mass, m.rotary_inertia) for m in member.masses),
        tuple(Spring(s.at, s.stiffness, s.rotational_stiffness) for s in member.springs),
        tuple(InnerSupport(s.at, s.kind) for s in member.inner_supports),
        member.axial_force,
        theory=member.theory,
    )


def same_bending(a: Member, b: Member) -> bool:
    """True where two bending members have the same stiffness, mass, supports and attachments."""
    if (a.left, a.right, a.masses, a.springs, a.inner_supports, a.axial_force, a.theory) != (
        b.left,
        b.right,
        b.masses,
        b.springs,
        b.inner_supports,
        b.axial_force,
        b.theory,
    ):
        return False
    if a.theory == "timoshenko":
        pa, pb = segment_properties(a), segment_properties(b)
        assert pa is not None and pb is not None
        if not (np.array_equal(pa[0], pb[0]) and np.array_equal(pa[1], pb[1])):
            return False
    return all(
        sa.length == sb.length
        and sa.bending_stiffness == sb.bending_stiffness
        and sa.mass_per_length == sb.mass_per_length
        for sa, sb in zip(a.segments, b.segments, strict=True)
    )


def _proportion(turned: Member, plain: Member) -> float | None:
    """c where the turned member's Euler-Bernoulli stiffness is c times the plain one's with
    the same mass (same supports and attachments, no springs, no axial force, every
    segment's E I the same multiple): its Euler-Bernoulli modes are then the plain member's,
    each frequency times sqrt(c).  None otherwise."""
    if (turned.left, turned.right, turned.masses, turned.inner_supports, turned.springs) != (
        plain.left,
        plain.right,
        plain.masses,
        plain.inner_supports,
        plain.springs,
    ):
        return None
    if turned.axial_force != 0.0 or plain.axial_force != 0.0:
        return None
    if any(s.stiffness != 0.0 or s.rotational_stiffness != 0.0 for s in plain.springs):
        return None
    factor = turned.segments[0].bending_stiffness / plain.segments[0].bending_stiffness
    for a, b in zip(turned.segments, plain.segments, strict=True):
        if not (
            a.length == b.length
            and a.mass_per_length == b.mass_per_length
            and math.isclose(a.bending_stiffness, factor * b.bending_stiffness, rel_tol=1e-14)
        ):
            return None
    return factor


# --- torsion and axial ---------------------------------------------------------------------------


def _rod_positions(member: Member, direction: str, restraints: list[tuple[float, Restraint]]):
    return tuple(x for x, r in restraints if r.kind(direction) not in ("free",))


def _restraints(member: Member) -> list[tuple[float, Restraint]]:
    left, right, inner = member_restraints(member)
    out = [(0.0, left), (member.length, right)]
    return out + [(s.at, r) for s, r in zip(member.inner_supports, inner, strict=True)]


def _shear_modulus(member: Member) -> list[float] | str:
    out = []
    for i, seg in enumerate(member.segments):
        G = seg.material.shear_modulus_or_none
        if G is None:
            key = f"member.segment[{i}]" if len(member.segments) > 1 else "member"
            return (
                f"{key}.material gives no shear modulus: give poisson_ratio or shear_modulus "
                "(torsion needs G)"
            )
        out.append(G)
    return out


def torsion_problem(member: Member) -> RodProblem | Member | str:
    """Torsion of the member: a rod problem (Saint-Venant), an equivalent member under tension
    (with warping), or the reason it cannot be described.

    The equivalent member of the warping equation has E I -> E Cw, mass per length ->
    rho Ip (+ the added mass's share), axial force -> G J; its supports are pinned where the
    twist is held as a fork, clamped where twist and warping are held; point masses carry
    the polar inertias, springs the torsional stiffnesses.
    """
    G = _shear_modulus(member)
    if isinstance(G, str):
        return G
    k, mu, ecw = [], [], []
    for i, seg in enumerate(member.segments):
        sec = seg.section
        key = f"member.segment[{i}]" if len(member.segments) > 1 else "member"
        if sec.torsion_constant is None or sec.polar_moment is None:
            missing = "torsion_constant" if sec.torsion_constant is None else "polar_moment"
            words = missing.replace("_", " ")
            return f"{key}.section gives no {words} (direct properties: add {missing})"
        k.append(G[i] * sec.torsion_constant)
        mu.append((seg.material.density + seg.added_mass / sec.area) * sec.polar_moment)
        ecw.append(seg.material.youngs_modulus * (sec.warping_constant or 0.0))
    restraints = _restraints(member)
    inertias = tuple((m.at, m.polar_inertia) for m in member.masses if m.polar_inertia > 0.0)
    springs = tuple(
        (s.at, s.torsional_stiffness) for s in member.springs if s.torsional_stiffness > 0.0
    )
    warping = all(e > 0.0 for e in ecw) and all(math.isclose(x, k[0], rel_tol=1e-12) for x in k)
    if not warping:
        return RodProblem(
            member.boundaries,
            tuple(k),
            tuple(mu),
            inertias,
            springs,
            _rod_positions(member, "torsion", restraints),
        )
    kinds = {"clamped": "clamped", "fork": "pinned", "free": "free"}
    segments = tuple(
        Segment(
            seg.length,
            Material("torsion", ecw[i], mu[i]),
            Section("properties", 1.0, 1.0, 0.0),
        )
        for i, seg in enumerate(member.segments)
    )
    left, right = restraints[0][1], restraints[1][1]
    inner = tuple(
        InnerSupport(x, kinds[r.torsion]) for x, r in restraints[2:] if r.torsion != "free"
    )
    return Member(
        segments,
        kinds[left.torsion],
        kinds[right.torsion],
        tuple(PointMass(x, j) for x, j in inertias),
        tuple(Spring(x, s) for x, s in springs),
        inner,
        k[0],
    )


def axial_problem(member: Member) -> RodProblem:
    """Axial motion of the member: E A, rho A + added mass, point masses, axial springs."""
    restraints = _restraints(member)
    return RodProblem(
        member.boundaries,
        tuple(s.material.youngs_modulus * s.section.area for s in member.segments),
        tuple(s.mass_per_length for s in member.segments),
        tuple((m.at, m.mass) for m in member.masses if m.mass > 0.0),
        tuple((s.at, s.axial_stiffness) for s in member.springs if s.axial_stiffness > 0.0),
        _rod_positions(member, "axial", restraints),
    )


# --- the solve -----------------------------------------------------------------------------------


def _direction_modes(name: str, result: fe.FEResult | RodResult) -> tuple[DirectionMode, ...]:
    """The solver's modes as one direction's modes (effective mass or inertia beside each)."""
    out = []
    for m in result.modes:
        if isinstance(m, fe.Mode):
            effective, fraction = m.effective_mass, m.effective_mass_fraction
        else:
            effective, fraction = m.effective_inertia, m.effective_fraction
        out.append(
            DirectionMode(
                name, m.number, m.frequency_hz, m.omega, m.estimated_error, effective, fraction
            )
        )
    return tuple(out)


def _support_words(member: Member, direction: str) -> tuple[str, ...]:
    restraints = _restraints(member)
    words = [
        f"left {restraints[0][1].kind(direction)}",
        f"right {restraints[1][1].kind(direction)}",
    ]
    words += [f"inner at {x:.6g} m {r.kind(direction)}" for x, r in restraints[2:]]
    return tuple(words)


def _width(
    member: Member,
    count: int,
    depth: fe.FEResult,
    depth_handbook: handbook.HandbookCheck | None,
    elements: int | None,
    depth_theories: TheoryPair | None = None,
    checks: bool = True,
    depth_bounds: tuple[rayleigh.RayleighEstimate | None, rayleigh.DunkerleyBound] | None = None,
) -> Direction:
    supports = _support_words(member, "width")
    turned = width_member(member)
    if isinstance(turned, str):
        return Direction("width", (), reason=turned, supports=supports)
    plain = _plain(member)
    factor = _proportion(turned, plain)
    if not checks:  # the modes alone, by the member's theory (sizing, bands)
        scaled = None
        if factor is not None and member.theory == "euler-bernoulli":
            scaled = fe.scaled_result(depth, plain, turned, factor)
        if same_bending(turned, plain):
            result = depth
        elif scaled is not None:
            result = scaled
        else:
            result = fe.solve(turned, count, elements=elements)
        modes = _direction_modes("width", result)
        return Direction("width", modes, result.rigid_body_modes, solution=result,
                         supports=supports, warnings=result.warnings)  # fmt: skip
    if same_bending(turned, plain):
        return Direction(
            "width",
            _direction_modes("width", depth),
            depth.rigid_body_modes,
            solution=depth,
            handbook=depth_handbook,
            supports=supports,
            notes=(
                "the section, supports and attachments are the same in both planes: the "
                "width-plane modes coincide with the depth plane's (two physical modes "
                "at each frequency)",
            ),  # fmt: skip
            warnings=depth.warnings,
            same_as="depth",
            theories=depth_theories,
            **_bounds(turned, depth if depth_theories is None else depth_theories.euler_bernoulli),
        )
    scaled = None
    if factor is not None and depth_theories is not None:  # the Euler-Bernoulli modes scale
        eb_plain = replace(plain, theory="euler-bernoulli")
        eb_turned = replace(turned, theory="euler-bernoulli")
        scaled = fe.scaled_result(depth_theories.euler_bernoulli, eb_plain, eb_turned, factor)
    pair = solve_pair(turned, count, elements=elements, euler_bernoulli=scaled)
    result = pair.chosen
    if scaled is not None and factor is not None:  # the same table, the frequencies scaled
        found = _scaled_handbook(depth_handbook, factor)
    else:
        found = handbook.check(turned, count)
    bounds = (
        _bounds(turned, pair.euler_bernoulli)
        if scaled is None or factor is None
        else _scaled_bounds(turned, pair.euler_bernoulli, factor, depth_bounds)
    )
    return Direction(
        "width",
        _direction_modes("width", result),
        result.rigid_body_modes,
        solution=result,
        handbook=found,
        supports=supports,
        warnings=result.warnings,
        theories=pair,
        **bounds,
    )


def _bounds(turned: Member, result: fe.FEResult) -> dict[str, object]:
    """Rayleigh (static deflection shape), Dunkerley and the bracket of a bending plane."""
    turned = replace(turned, theory="euler-bernoulli")  # Euler-Bernoulli results all three
    estimate = rayleigh.rayleigh_static(turned)
    lower = rayleigh.dunkerley(turned)
    return {
        "estimate": estimate,
        "lower_bound": lower,
        "bracket": rayleigh.bracket(lower, result, estimate),
    }


def _scaled_handbook(
    depth: handbook.HandbookCheck | None, factor: float
) -> handbook.HandbookCheck | None:
    """The depth plane's handbook case with each frequency times sqrt(``factor``) (the
    frequencies go as sqrt(E I / m); the case and its parameters are the same)."""
    if depth is None:
        return None
    root = math.sqrt(factor)
    return replace(depth, frequencies_hz=tuple(f * root for f in depth.frequencies_hz))


def _scaled_bounds(
    turned: Member,
    result: fe.FEResult,
    factor: float,
    depth_bounds: tuple[rayleigh.RayleighEstimate | None, rayleigh.DunkerleyBound] | None,
) -> dict[str, object]:
    """The width plane's bounds from the depth plane's where its stiffness is ``factor``
    times the depth plane's (:func:`_proportion`): the static deflection is the depth
    plane's over ``factor`` and every eigenvalue of the flexibility scales by 1/``factor``,
    so Rayleigh's quotient and Dunkerley's sum scale exactly; what the depth plane did not
    compute (a Rayleigh estimate of another shape) is computed."""
    estimate, lower = depth_bounds if depth_bounds is not None else (None, None)
    if estimate is None or estimate.shape != "static":
        estimate = rayleigh.rayleigh_static(replace(turned, theory="euler-bernoulli"))
    else:
        omega = estimate.omega * math.sqrt(factor)
        estimate = replace(estimate, omega=omega, frequency_hz=omega / (2.0 * math.pi))
    if lower is None:
        lower = rayleigh.dunkerley(replace(turned, theory="euler-bernoulli"))
    elif lower.frequency_hz is not None and lower.trace is not None:
        lower = replace(
            lower, frequency_hz=lower.frequency_hz * math.sqrt(factor), trace=lower.trace / factor
        )
    return {
        "estimate": estimate,
        "lower_bound": lower,
        "bracket": rayleigh.bracket(lower, result, estimate),
    }


_THICK_WALL = 0.1  # wall over the smaller side above which Bredt's thin-wall J is said rough


def _torsion_constant_notes(member: Member) -> list[str]:
    """Where a section's torsion constant is rougher than its formula suggests."""
    out = []
    for i, seg in enumerate(member.segments):
        sec, where = seg.section, f" (segment {i})" if len(member.segments) > 1 else ""
        d = sec.dimensions
        if sec.shape == "box" and d["wall"] > _THICK_WALL * min(d["width"], d["depth"]):
            out.append(
                f"box wall{where} {100 * d['wall'] / min(d['width'], d['depth']):.0f} % of the "
                "smaller side: Bredt's thin-walled J leaves out the walls' own torsional "
                "stiffness and is low, so the torsional frequencies shown tend to be low"
            )
        if sec.shape == "i-beam":
            out.append(
                f"i-beam J{where} without root fillets: a rolled section's fillets raise J, "
                "so for a rolled section J and the torsional frequencies are higher than shown"
            )
    return out


def _torsion(member: Member, count: int) -> Direction:
    supports = _support_words(member, "torsion")
    problem = torsion_problem(member)
    if isinstance(problem, str):
        return Direction("torsion", (), reason=problem, supports=supports)
    notes = []
    if any(s.added_mass > 0.0 for s in member.segments):
        notes.append("added mass taken as spread like the section (its polar inertia rho Ip/A)")
    bare = [i for i, m in enumerate(member.masses) if m.mass > 0.0 and m.polar_inertia == 0.0]
    if bare:
        which = ", ".join(f"mass[{i}]" for i in bare)
        notes.append(
            f"no polar_inertia given for {which}: taken as none in torsion (where there is "
            "one, the true torsional frequencies are lower)"
        )
    if member.axial_force != 0.0:
        notes.append("the axial force's effect on torsion (Wagner term) is not modelled")
    notes += _torsion_constant_notes(member)
    if isinstance(problem, RodProblem):
        if any((s.section.warping_constant or 0.0) > 0.0 for s in member.segments):
            notes.append(
                "warping stiffness neglected: the segments differ in G J or not all have it"
            )
        result = solve_rod(problem, count)
        return Direction(
            "torsion",
            _direction_modes("torsion", result),
            result.rigid_body_modes,
            solution=result,
            closed_form=rod_closed_form(problem, count, "torsion"),
            supports=supports,
            notes=tuple(notes),
            warnings=result.warnings,
        )
    notes.append("warping torsion E Cw phi'''' - G J phi'' (fork: warping free; clamped: held)")
    fer = fe.solve(problem, count)
    closed = None
    if (
        problem.is_uniform
        and problem.left == problem.right == "pinned"
        and not problem.masses
        and not problem.springs
        and not problem.inner_supports
    ):
        seg = problem.segments[0]
        closed = fork_warping_closed_form(
            problem.length,
            problem.axial_force,
            seg.bending_stiffness,
            seg.mass_per_length,
            count,
        )
    return Direction(
        "torsion",
        _direction_modes("torsion", fer),
        fer.rigid_body_modes,
        solution=fer,
        closed_form=closed,
        supports=supports,
        notes=tuple(notes),
        warnings=fer.warnings,
    )


def _axial(member: Member, count: int) -> Direction:
    problem = axial_problem(member)
    result = solve_rod(problem, count)
    return Direction(
        "axial",
        _direction_modes("axial", result),
        result.rigid_body_modes,
        solution=result,
        closed_form=rod_closed_form(problem, count, "axial"),
        supports=_support_words(member, "axial"),
        warnings=result.warnings,
    )


def _model_notes(member: Member) -> tuple[str, ...]:
    notes = [COUPLING_NOTE]
    shapes = {s.section.shape for s in member.segments}
    if "properties" in shapes:
        notes.append(
            "a section given by its properties may not be doubly symmetric: where its shear "
            "centre is off its centroid, bending and torsion couple and the true frequencies "
            "are lower than these uncoupled ones"
        )
    if member.masses and any(
        m.polar_inertia > 0.0 or m.rotary_inertia > 0.0 for m in member.masses
    ):
        notes.append(
            "attached bodies are taken as centred on the member's axis; one mounted on a "
            "flange or a bracket couples bending and torsion"
        )
    if "i-beam" in shapes and member.masses:
        notes.append(
            "point masses on an open section usually sit on a flange, off the shear centre: "
            "width-plane bending and torsion then couple, which moves their frequencies "
            "apart, so the lowest coupled one can be lower than both shown here"
        )
    if "i-beam" in shapes and member.axial_force < 0.0:
        notes.append("compression in an open section: flexural-torsional effects are not modelled")
    return tuple(notes)


SIZING_DIRECTIONS = ("governing", *DIRECTIONS)
"""What sizing and sweeps may follow: one direction's modes, or ``"governing"``: the lowest
modes of every direction together, lowest first."""

DEFAULT_SIZING_DIRECTION = "governing"
"""What sizing and sweeps follow unless told otherwise: the lowest modes of every direction
(until every direction was solved it was the depth plane; a sizing that follows one plane
can miss the mode that governs)."""


def frequency_columns(
    member: Member, modes: int, direction: str, key: str = "--direction"
) -> np.ndarray:
    """What sizing and sweeps follow, one column per mode of one direction [Hz].

    For one direction its ``modes`` lowest modes; for ``"governing"`` those of every
    direction side by side (``modes`` columns each, in the order of ``DIRECTIONS``; NaN
    where a direction is not computed or has fewer modes).  Each column is smooth in the
    member's quantities where the lowest of them is not (modes of different directions
    cross), so sweeps interpolate the columns and take the lowest afterwards
    (:func:`lowest`).

    Parameters
    ----------
    member : Member
    modes : int
        Modes in each direction.
    direction : str
        One of ``SIZING_DIRECTIONS``.
    key : str
        What the direction is called in errors.

    Returns
    -------
    ndarray, shape (modes,) or (4 * modes,) for ``"governing"``

    Raises
    ------
    InputError
        For an unknown direction, or one that is not computed for this member (the reason
        says why), or fewer modes than asked.
    """
    if direction not in SIZING_DIRECTIONS:
        raise InputError(key, direction, "one of " + ", ".join(SIZING_DIRECTIONS))
    if direction == "depth":
        return fe.solve(member, modes).frequencies_hz
    dirs = solve_directions(member, modes, checks=False)
    if direction == "governing":
        out = np.full(len(DIRECTIONS) * modes, np.nan)
        for i, d in enumerate(dirs.directions):
            hz = [m.frequency_hz for m in d.modes[:modes]]
            out[i * modes : i * modes + len(hz)] = hz
        return out
    chosen = dirs[direction]
    if not chosen.computed:
        raise InputError(key, direction, "a direction computed for this member", chosen.reason)
    return np.array([m.frequency_hz for m in chosen.modes])


def lowest(columns: np.ndarray, modes: int) -> np.ndarray:
    """The ``modes`` lowest frequencies of each row of governing columns, lowest first."""
    return np.sort(columns, axis=-1)[..., :modes]


def column_mode(columns: np.ndarray, modes: int, mode: int) -> str:
    """Which direction's mode is mode ``mode`` of all directions in governing columns
    (``"width plane mode 1"``)."""
    order = np.argsort(columns, kind="stable")
    index = int(order[mode - 1])
    return f"{_LABELS[DIRECTIONS[index // modes]]} mode {index % modes + 1}"


def frequencies(member: Member, modes: int, direction: str, key: str = "--direction") -> np.ndarray:
    """The natural frequencies [Hz] sizing and sweeps follow, lowest first.

    Parameters
    ----------
    member : Member
    modes : int
        Modes in each direction (``"governing"``: the ``modes`` lowest of all directions).
    direction : str
        One of ``SIZING_DIRECTIONS``.
    key : str
        What the direction is called in errors.

    Returns
    -------
    ndarray, shape (modes,)

    Raises
    ------
    InputError
        For an unknown direction, or one that is not computed for this member (the reason
        says why), or fewer modes than asked.
    """
    columns = frequency_columns(member, modes, direction, key)
    return lowest(columns, modes) if direction == "governing" else columns


def solve_directions(
    member: Member,
    modes: int = 5,
    *,
    depth: fe.FEResult | None = None,
    depth_handbook: handbook.HandbookCheck | None | str = "",
    elements: int | None = None,
    depth_theories: TheoryPair | None = None,
    checks: bool = True,
    depth_bounds: tuple[rayleigh.RayleighEstimate | None, rayleigh.DunkerleyBound] | None = None,
) -> Directions:
    """Solve every direction of a member.

    Parameters
    ----------
    member : Member
    modes : int
        Flexible modes wanted in each direction.
    depth : fe.FEResult, optional
        The depth-plane solution where already computed (it is reused, not repeated).
    depth_handbook : handbook.HandbookCheck or None, optional
        The depth plane's handbook check where already made (None: not a tabulated case).
    elements : int, optional
        Force the bending meshes (see :func:`calc.fe.solve`).
    depth_theories : theories.TheoryPair, optional
        The depth plane solved by both beam theories, where already done.
    checks : bool
        False gives the modes alone (no handbook values, bounds or second theory for the
        width plane): what sizing and sweeps need at every trial value.
    depth_bounds : (rayleigh.RayleighEstimate or None, rayleigh.DunkerleyBound), optional
        The depth plane's Rayleigh estimate and Dunkerley bound (Euler-Bernoulli), where
        already computed: a width plane that is the depth plane stiffened throughout by
        one factor takes its bounds (and its Euler-Bernoulli modes) from them by that
        factor instead of solving again.

    Returns
    -------
    Directions

    Raises
    ------
    InputError
        For bad input in any direction (an override naming an unknown kind, no freedom).
    """
    if modes < 1:
        raise InputError("check.modes", modes, "a whole number of modes, 1 or more")
    if depth is None:
        depth = fe.solve(member, modes, elements=elements)
    if isinstance(depth_handbook, str):
        depth_handbook = handbook.check(_plain(member), modes) if checks else None
    results = (
        Direction(
            "depth",
            _direction_modes("depth", depth),
            depth.rigid_body_modes,
            solution=depth,
            handbook=depth_handbook,
            supports=_support_words(member, "depth"),
            warnings=depth.warnings,
            theories=depth_theories,
        ),
        _width(
            member, modes, depth, depth_handbook, elements, depth_theories, checks, depth_bounds
        ),
        _torsion(member, modes),
        _axial(member, modes),
    )
    return Directions(results, _model_notes(member))
