"""Everything beamtone computes for one worksheet, in one call.

The command line, the app and the report all show the same thing: the
finite-element modes, the handbook cross-check, the Rayleigh estimate (and
Rayleigh-Ritz where asked), Dunkerley's lower bound, the bracket, and the
equivalent single-degree-of-freedom model.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from beamtone.calc import excitation, fe, handbook, rayleigh, response, similitude
from beamtone.calc.band import BandResult, tightening
from beamtone.calc.directions import Directions, _direction_modes, solve_directions
from beamtone.calc.theories import SHEAR_RULE, TheoryPair, solve_pair
from beamtone.calc.worksheet import Worksheet

__all__ = ["Analysis", "analyse"]


@dataclass(frozen=True)
class Analysis:
    """The results of one worksheet.

    Attributes
    ----------
    sheet : Worksheet
    modes : fe.FEResult
    handbook : handbook.HandbookCheck or None
    estimate : rayleigh.RayleighEstimate
    ritz : rayleigh.RitzResult or None
    lower_bound : rayleigh.DunkerleyBound
    bracket : rayleigh.Bracket
    equivalent : rayleigh.EquivalentSystem
    groups : similitude.MemberGroups
        The member's dimensionless groups, with the frequency groups of the FE modes.
    margins : excitation.MarginTable or None
        Every excitation line against every computed mode, with the verdict (None without
        ``[[excitation]]`` tables).
    response : response.ForcedResponse or None
        The forced response, where ``response.damping_ratio`` and excitations are given.
    directions : directions.Directions or None
        Every direction (both bending planes, torsion, axial) with ``modes`` modes each; the
        depth plane's is ``modes`` itself.
    bands : band.BandResult or None
        Each mode's band over the worksheet's tolerances, with ranked sensitivities (None
        without tolerances); the margins' verdict holds over the bands.
    theories : theories.TheoryPair or None
        The depth plane solved by both beam theories: ``modes`` is the chosen theory's; the
        handbook, Rayleigh, Dunkerley and the bracket are Euler-Bernoulli results and are
        compared with ``theories.euler_bernoulli``; excitation margins use the Timoshenko
        modes (the more accurate ones).
    """

    sheet: Worksheet
    modes: fe.FEResult
    handbook: handbook.HandbookCheck | None
    estimate: rayleigh.RayleighEstimate
    ritz: rayleigh.RitzResult | None
    lower_bound: rayleigh.DunkerleyBound
    bracket: rayleigh.Bracket
    equivalent: rayleigh.EquivalentSystem
    groups: similitude.MemberGroups
    margins: excitation.MarginTable | None = None
    response: response.ForcedResponse | None = None
    directions: Directions | None = None
    bands: BandResult | None = None
    theories: TheoryPair | None = None

    @property
    def theory(self) -> str:
        """The chosen beam theory (``"timoshenko"`` or ``"euler-bernoulli"``)."""
        return self.sheet.member.theory

    @property
    def warnings(self) -> tuple[str, ...]:
        """Warnings of every method, the bracket's failure first if it failed."""
        out = list(self.modes.warnings)
        if self.lower_bound.uncertainty > 1e-4:
            out.append(
                "the flexibility is ill-conditioned (springs very stiff or very soft against "
                "the member): Dunkerley's bound is uncertain by about "
                f"{self.lower_bound.uncertainty:.0e}"
            )
        if not self.bracket.inside:
            out.insert(0, self.bracket.message)
        if self.directions is not None:
            out += self.directions.warnings
        pair = self.theories
        if pair is not None and pair.timoshenko is not None:
            # the rule of thumb on half-wavelengths gives way to the computed effect
            out = [w for w in out if SHEAR_RULE not in w]
            if pair.theory == "euler-bernoulli" and pair.shown:
                out.append(pair.note())
        if pair is not None and pair.refused:  # it would buckle once shear is counted
            out.insert(0, pair.note())
        return tuple(out)


def analyse(
    sheet: Worksheet,
    modes: int | None = None,
    elements: int | None = None,
    *,
    every_direction: bool = True,
) -> Analysis:
    """Solve a worksheet by every method.

    Parameters
    ----------
    sheet : Worksheet
    modes : int, optional
        Overrides the worksheet's ``check.modes``.
    elements : int, optional
        Forces the finite-element mesh (see :func:`calc.fe.solve`).
    every_direction : bool
        Solve the width plane, torsion and axial motion too (``directions``); False gives
        the depth plane alone (excitation margins then name what they do not cover).

    Returns
    -------
    Analysis

    Raises
    ------
    InputError
        For anything in the worksheet that cannot be solved.
    """
    member = sheet.member
    count = modes or sheet.modes
    pair = solve_pair(member, count, elements=elements)
    result = pair.chosen
    euler_bernoulli = pair.euler_bernoulli  # what the Euler-Bernoulli cross-checks compare with
    bending = replace(member, theory="euler-bernoulli")  # Rayleigh, Ritz and Dunkerley's model
    check = handbook.check(member, count)
    settings = sheet.estimate
    if settings.shape == "static":
        estimate = rayleigh.rayleigh_static(bending)
    else:
        estimate = rayleigh.rayleigh_shape(bending, settings.shape)
    ritz = None
    if settings.shapes is not None:
        shapes = settings.shapes if isinstance(settings.shapes, int) else list(settings.shapes)
        ritz = rayleigh.ritz(bending, shapes)
    lower = rayleigh.dunkerley(bending)
    directions = (
        solve_directions(
            member,
            count,
            depth=result,
            depth_handbook=check,
            elements=elements,
            depth_theories=pair,
            depth_bounds=(estimate, lower),
        )
        if every_direction
        else None
    )
    bands = _bands(sheet, result, directions)
    accurate, accurate_directions = _accurate(pair, directions)
    margins = excitation.check_member(sheet.excitations, accurate, accurate_directions, bands)
    if bands is not None and margins is not None:
        bands = replace(bands, tighten=tightening(bands, margins))
    return Analysis(
        sheet=sheet,
        modes=result,
        handbook=check,
        estimate=estimate,
        ritz=ritz,
        lower_bound=lower,
        bracket=rayleigh.bracket(lower, euler_bernoulli, estimate),
        equivalent=rayleigh.equivalent_system(member, result, settings.reference),
        groups=similitude.member_groups(member, [m.omega for m in result.modes]),
        margins=margins,
        directions=directions,
        bands=bands,
        theories=pair,
        response=None
        if sheet.damping_ratio is None or not sheet.excitations
        else response.forced_response(member, result, sheet.excitations, sheet.damping_ratio),
    )


def _accurate(
    pair: TheoryPair, directions: Directions | None
) -> tuple[fe.FEResult, Directions | None]:
    """The depth plane's and every direction's modes by the more accurate theory (Timoshenko
    where it was solved), for the excitation margins."""
    accurate = pair.accurate
    if directions is None or accurate is pair.chosen:
        return accurate, directions
    swapped = []
    for d in directions.directions:
        if d.theories is not None and d.theories.accurate is not d.solution:
            better = d.theories.accurate
            d = replace(d, modes=_direction_modes(d.name, better), solution=better)
        swapped.append(d)
    return accurate, replace(directions, directions=tuple(swapped))


def _bands(
    sheet: Worksheet, result: fe.FEResult, directions: Directions | None
) -> BandResult | None:
    """Bands over the worksheet's tolerances (calc.band), every computed direction."""
    if not sheet.tolerances:
        return None
    from beamtone.calc.band import band, same_as_bands
    from beamtone.calc.tolerances import Design

    found = band(Design.of(sheet), result, sheet.tolerances, directions=directions)
    return same_as_bands(found, directions)
