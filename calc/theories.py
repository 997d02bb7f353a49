"""Both beam theories side by side: the chosen one's modes, the other's, and the difference.

A member is solved by the theory its worksheet chooses (``[member] theory``, Timoshenko by
default) and by the other one, so that the output can show both where they differ by more
than :data:`SHOWN_ABOVE` on a mode, cross-checks that are Euler-Bernoulli results (the
handbook table, Rayleigh's quotient, Dunkerley's bound) are compared with the
Euler-Bernoulli solution, and excitation margins use the more accurate Timoshenko modes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from beamtone.calc import fe
from beamtone.calc.errors import InputError
from beamtone.calc.model import Member
from beamtone.calc.shear import (
    EULER_BERNOULLI,
    TIMOSHENKO,
    pinned_timoshenko_spectrum,
    segment_shear,
)

__all__ = ["SHEAR_RULE", "SHOWN_ABOVE", "TheoryPair", "solve_pair", "shear_reasons"]

SHOWN_ABOVE = 0.01
"""Relative difference between the theories above which a mode shows both [-]."""

SHEAR_RULE = "is under ten section depths"
"""Words of the Euler-Bernoulli solve's rule-of-thumb warning (:mod:`calc.fe.checks`), which
gives way to the computed effect where both theories were solved."""


def shear_reasons(member: Member) -> tuple[str, ...]:
    """Why segments are solved without shear flexibility under Timoshenko ("" none)."""
    out = []
    for i, seg in enumerate(member.segments):
        found = segment_shear(seg.material, seg.section, seg.section.plane)
        if found.reason:
            key = f"member.segment[{i}]" if len(member.segments) > 1 else "member"
            out.append(f"{key}: {found.reason}")
    return tuple(out)


@dataclass(frozen=True)
class TheoryPair:
    """One bending plane solved by both theories.

    Attributes
    ----------
    theory : str
        The chosen theory, ``"timoshenko"`` or ``"euler-bernoulli"``.
    euler_bernoulli : fe.FEResult
        Bending alone (no shear deformation, no rotary inertia of the section).
    timoshenko : fe.FEResult or None
        With shear deformation and the section's rotary inertia; None where Euler-Bernoulli
        was chosen and the Timoshenko model could not be solved (``refused`` says why: a
        compression above its lower buckling load).
    without_shear : tuple of str
        Segments solved under Timoshenko without shear flexibility (rotary inertia only),
        each with the reason (no shear modulus, no shear area).
    refused : str
        Why the Timoshenko model was not solved ("" where it was).
    closed_form_hz : tuple of float or None
        Timoshenko's closed-form frequencies where the plane is a uniform pinned-pinned member
        with nothing attached (:func:`calc.shear.pinned_timoshenko_spectrum`), else None.
    """

    theory: str
    euler_bernoulli: fe.FEResult
    timoshenko: fe.FEResult | None
    without_shear: tuple[str, ...] = ()
    refused: str = ""
    closed_form_hz: tuple[float, ...] | None = None

    @property
    def chosen(self) -> fe.FEResult:
        """The chosen theory's result."""
        if self.theory == TIMOSHENKO:
            assert self.timoshenko is not None
            return self.timoshenko
        return self.euler_bernoulli

    @property
    def accurate(self) -> fe.FEResult:
        """The more accurate result: Timoshenko's where it was solved."""
        return self.timoshenko if self.timoshenko is not None else self.euler_bernoulli

    @property
    def differences(self) -> tuple[float, ...]:
        """(f_Timoshenko - f_Euler-Bernoulli) / f_Euler-Bernoulli of each mode [-]."""
        if self.timoshenko is None:
            return ()
        return tuple(
            (t.frequency_hz - e.frequency_hz) / e.frequency_hz
            for t, e in zip(self.timoshenko.modes, self.euler_bernoulli.modes, strict=False)
        )

    @property
    def shown(self) -> tuple[int, ...]:
        """Numbers of the modes whose two theories differ by more than SHOWN_ABOVE."""
        return tuple(i + 1 for i, d in enumerate(self.differences) if abs(d) > SHOWN_ABOVE)

    def note(self) -> str:
        """One line on what the chosen theory leaves out, or includes, for the model list."""
        diffs = self.differences
        if self.refused:
            return f"Euler-Bernoulli theory chosen; under the Timoshenko theory {self.refused}"
        if not diffs:
            return ""
        low, high = min(diffs), max(diffs)
        span = _span(low, high)
        if self.theory == EULER_BERNOULLI:
            shown = self.shown
            which = ""
            if shown:
                run = list(shown) == list(range(shown[0], shown[-1] + 1))
                listed = f"{shown[0]}-{shown[-1]}" if run else ", ".join(map(str, shown))
                which = f"; modes {listed}" if len(shown) > 1 else f"; mode {shown[0]}"
                which += " differ by more than 1 %"
            return (
                "Euler-Bernoulli theory chosen: shear deformation and the section's rotary "
                f"inertia ignored (with them the modes would be {span}{which})"
            )
        text = (
            "Timoshenko theory: shear deformation (Cowper's shear coefficients) and the "
            f"section's rotary inertia included (they change the modes by {span} against "
            "Euler-Bernoulli); added mass carries no rotary inertia"
        )
        if self.without_shear:
            text += "; no shear flexibility for " + "; ".join(self.without_shear)
        return text


def _span(low: float, high: float) -> str:
    if math.isclose(low, high, rel_tol=0.05, abs_tol=5e-5):
        return f"{100 * low:+.2g} %"
    return f"{100 * high:+.2g} % to {100 * low:+.2g} %"


def solve_pair(
    member: Member,
    modes: int,
    chosen: fe.FEResult | None = None,
    elements: int | None = None,
    euler_bernoulli: fe.FEResult | None = None,
) -> TheoryPair:
    """Solve a bending member by both theories (reusing ``chosen``, the member's own solve).

    Parameters
    ----------
    member : Member
        Its ``theory`` is the chosen one.
    modes : int
    chosen : fe.FEResult, optional
        The solve of ``member`` as it is, where already done.
    elements : int, optional
        Force the meshes (see :func:`calc.fe.solve`).
    euler_bernoulli : fe.FEResult, optional
        The Euler-Bernoulli solve of ``member`` where already known (the width plane's,
        scaled from the depth plane's: :func:`calc.fe.scaled_result`).

    Returns
    -------
    TheoryPair
    """
    if chosen is None and member.theory == EULER_BERNOULLI:
        chosen = euler_bernoulli
    if chosen is None:
        chosen = fe.solve(member, modes, elements=elements)
    other_theory = EULER_BERNOULLI if member.theory == TIMOSHENKO else TIMOSHENKO
    try:
        if other_theory == EULER_BERNOULLI and euler_bernoulli is not None:
            other = euler_bernoulli
        else:
            other = fe.solve(replace(member, theory=other_theory), modes, elements=elements)
    except InputError as exc:
        if other_theory != TIMOSHENKO:
            raise
        refused = f"the member would not be stable: that theory needs {exc.expected}"
        return TheoryPair(member.theory, chosen, None, shear_reasons(member), refused)
    eb, timo = (chosen, other) if member.theory == EULER_BERNOULLI else (other, chosen)
    return TheoryPair(
        member.theory, eb, timo, shear_reasons(member), closed_form_hz=_closed_form(member, modes)
    )


def _closed_form(member: Member, modes: int) -> tuple[float, ...] | None:
    """Timoshenko's pinned-pinned frequencies, where the member is that case."""
    if (
        len(member.segments) != 1
        or (member.left, member.right) != ("pinned", "pinned")
        or member.masses
        or member.springs
        or member.inner_supports
    ):
        return None
    seg = member.segments[0]
    found = segment_shear(seg.material, seg.section, seg.section.plane)
    if found.reason or seg.added_mass:
        return None
    return pinned_timoshenko_spectrum(
        member.length,
        seg.bending_stiffness,
        seg.mass_per_length,
        found.rotary_inertia,
        found.shear_stiffness,
        modes,
        member.axial_force,
    )
