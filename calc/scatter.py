"""Studies over the tolerances: where the natural frequencies land when the inputs scatter.

Every toleranced input is drawn uniformly over its range (a support stiffness ranging to
rigid uniformly in its compliance 1/k), by Latin-hypercube sampling (M. D. McKay, R. J.
Beckman and W. J. Conover, Technometrics 21(2), 1979) or plain Monte Carlo.  The
percentiles describe that assumed spread, not measured parts: the tolerances and their
distribution are the user's.

Every direction the analysis reports is studied: both bending planes, torsion and axial
motion (:mod:`calc.directions`, uncoupled as there), each with its percentiles and
histogram per mode; the chance of landing in an excitation band counts every mode of every
direction.

The samples are solved in stacks: one mesh layout per direction is designed once for the
study (the full adaptive solver's mesh at the study accuracy, ``STUDY_ACCURACY``; nodes
then move with the stations of each sample), every sample's banded matrices are assembled
at once, and the lowest eigenvalues of a whole stack come from subspace iteration started
from the nominal modes (:mod:`calc.stacked`, converged to 1e-7 per sample).  A sample
whose layout differs (a support that changes kind, stations that pass each other, an
attachment that leaves a node it shared) or that does not converge is solved on its own by
the full solver.  The samples at the extremes of every direction's lowest and highest mode
(and a few more) are solved again by the full adaptive solver at its own accuracy, and the
largest relative difference is reported beside the result: the mesh's error where it
matters most.

Batches run in this process, in local worker processes (``engine="processes"``), or on a
dask cluster (``engine="dask"``: a local cluster by default, a scheduler address for an
existing one; the optional extra ``beamtone[cluster]``).  The samples, their order and
their solution are the same on every engine, so the percentiles are identical.
"""

from __future__ import annotations

import math
import os
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace

import numpy as np
import scipy.linalg

from beamtone.calc import fe, stacked
from beamtone.calc.band import latin_hypercube
from beamtone.calc.directions import (
    COUPLING_NOTE,
    DIRECTIONS,
    LABELS,
    axial_problem,
    same_bending,
    solve_directions,
    torsion_problem,
    width_member,
)
from beamtone.calc.engines import ENGINES, map_chunks, split
from beamtone.calc.errors import InputError
from beamtone.calc.excitation import Line
from beamtone.calc.fe.elements import scaled_element_matrices
from beamtone.calc.fe.rod import (
    REFERENCE_ELEMENT,
    RodProblem,
    coarse_mesh,
    mesh_layout,
    solve_rod,
)
from beamtone.calc.fe.rod import station_positions as rod_stations
from beamtone.calc.model import HOLDS, Member
from beamtone.calc.sensitivity import Layout, coefficients, layout
from beamtone.calc.tolerances import COMPLIANCE, Design, Tolerance, vary_within

__all__ = [
    "ENGINES",
    "METHODS",
    "PERCENTILES",
    "STUDY_ACCURACY",
    "MAX_SAMPLES",
    "LineChance",
    "ScatterResult",
    "scatter",
    "sample_points",
    "histogram",
    "chance_words",
]

METHODS = ("latin-hypercube", "monte-carlo")
PERCENTILES = (1.0, 5.0, 50.0, 95.0, 99.0)
STUDY_ACCURACY = 1e-4
"""Relative accuracy the study's mesh is designed for (tolerances are far coarser)."""
MAX_SAMPLES = 10_000_000
_BATCH = 512  # samples assembled and solved together (a stack stays in the cache)
_IN_PROCESS = 5000  # "auto" runs up to this many samples here (worker start-up costs more)
_SEED = 20261202
_CHECKS = 4  # full solves that check the batched ones
_SAME_NODE = 1e-9  # of the length: an attachment this close to its node is on it
_STACKED_THEORIES = ("euler-bernoulli", "timoshenko")  # the element matrices stacked here
_REFINEMENTS = 4  # meshes tried for a layout
_EXTRA = 3  # basis vectors beyond the wanted modes


@dataclass(frozen=True)
class LineChance:
    """How often the modes land in the band around one excitation line.

    Attributes
    ----------
    excitation : str
    order : float or None
    band_low_hz, band_high_hz : float
        The band [Hz].
    probability : float
        Fraction of samples with some mode inside the band [-].
    standard_error : float
        Its sampling standard error, sqrt(p (1 - p) / N) [-].
    """

    excitation: str
    order: float | None
    band_low_hz: float
    band_high_hz: float
    probability: float
    standard_error: float


@dataclass(frozen=True)
class ScatterResult:
    """A study of the modes of every direction over the tolerances.

    Attributes
    ----------
    method : str
        ``"latin-hypercube"`` or ``"monte-carlo"``.
    engine : str
        Where the batches ran.
    keys : tuple of str
        The varied inputs.
    points : ndarray, shape (samples, inputs)
        The sampled inputs [SI; compliance for a support ranging to rigid].
    directions : tuple of str
        The computed directions, in the order of ``calc.directions.DIRECTIONS``.
    sampled_hz : dict of str to ndarray, shape (samples, modes)
        Natural frequencies of each sample in each computed direction [Hz] (NaN where a
        sample has fewer modes).
    nominal_by_direction : dict of str to ndarray, shape (modes,)
        The nominal design's frequencies in each computed direction [Hz] (full solve).
    not_computed : tuple of (str, str)
        Directions not computed for this member, and why.
    same_as : dict of str to str
        A direction whose every sample equals another's (the width plane of a section and
        supports alike in both planes) -> that direction.
    any_in_band : float or None
        Fraction of samples with some mode of some direction inside some excitation band;
        None without excitations.
    lines : tuple of LineChance
    checked_difference : float
        Largest relative difference between a stacked and a full solve of the same sample.
    individually_solved : int
        Samples with some direction solved one by one (its layout differed).
    notes : tuple of str
    """

    method: str
    engine: str
    keys: tuple[str, ...]
    points: np.ndarray
    directions: tuple[str, ...]
    sampled_hz: dict[str, np.ndarray]
    nominal_by_direction: dict[str, np.ndarray]
    not_computed: tuple[tuple[str, str], ...]
    same_as: dict[str, str]
    any_in_band: float | None
    lines: tuple[LineChance, ...]
    checked_difference: float
    individually_solved: int
    notes: tuple[str, ...]

    @property
    def samples(self) -> int:
        """Number of samples."""
        return len(self.points)

    def percentiles_of(self, direction: str) -> np.ndarray:
        """The ``PERCENTILES`` of each mode of one direction [Hz], shape (len(PERCENTILES),
        modes)."""
        return np.nanpercentile(self.sampled_hz[direction], PERCENTILES, axis=0)

    @property
    def frequencies_hz(self) -> np.ndarray:
        """The depth plane's samples [Hz], shape (samples, modes)."""
        return self.sampled_hz["depth"]

    @property
    def nominal_hz(self) -> np.ndarray:
        """The depth plane's nominal frequencies [Hz]."""
        return self.nominal_by_direction["depth"]

    @property
    def percentiles(self) -> np.ndarray:
        """The depth plane's ``PERCENTILES`` [Hz], shape (len(PERCENTILES), modes)."""
        return self.percentiles_of("depth")


def sample_points(
    tolerances: Sequence[Tolerance],
    samples: int,
    method: str = "latin-hypercube",
    seed: int = _SEED,
) -> np.ndarray:
    """The study's points, shape (samples, inputs), uniform over each tolerance's range."""
    if method == "latin-hypercube":
        return latin_hypercube(tolerances, samples, seed)
    if method == "monte-carlo":
        rng = np.random.default_rng(seed)
        low = np.array([t.low for t in tolerances])
        high = np.array([t.high for t in tolerances])
        return low + rng.random((samples, len(tolerances))) * (high - low)
    raise InputError("--method", method, "one of " + ", ".join(METHODS))


def histogram(values: np.ndarray, bins: int = 20) -> tuple[np.ndarray, np.ndarray]:
    """Counts and bin edges [Hz] of one mode's samples (the report's and terminal's chart)."""
    values = np.asarray(values, dtype=float)
    low, high = float(values.min()), float(values.max())
    if high <= low:
        high = low + max(abs(low) * 1e-9, 1e-12)
    return np.histogram(values, bins=bins, range=(low, high))


def chance_words(p: float, standard_error: float | None, samples: int) -> str:
    """A sampled chance in words.  Where no sample (or every one) landed in the band, the
    standard error says nothing: the 95 % bound of the rule of three is given instead (3/N,
    common practice; J. A. Hanley and A. Lippman-Hand, JAMA 249(13), 1983)."""
    bound = 100.0 * 3.0 / samples
    if p == 0.0:
        return f"none of {samples} samples (under {bound:.2g} % at 95 % confidence)"
    if p == 1.0:
        return f"all {samples} samples (over {100.0 - bound:.4g} % at 95 % confidence)"
    spread = "" if standard_error is None else f" (+/- {100 * standard_error:.2f} %)"
    return f"{100 * p:.2f} %{spread}"


# --- the stacked solver ----------------------------------------------------------------------


@dataclass(frozen=True)
class _Bending:
    """One bending problem's fixed mesh layout (depth plane, width plane, warping torsion)."""

    layout: Layout
    signature: tuple[object, ...]
    held: np.ndarray  # held degrees of freedom
    scale: float
    shift: float
    rigid: int
    start: np.ndarray  # (dofs, q): the nominal modes on the layout
    coarse: _Bending | None = None  # every other node: Richardson's partner (Timoshenko)


@dataclass(frozen=True)
class _Rod:
    """One rod problem's fixed mesh layout (Saint-Venant torsion, axial motion)."""

    x: np.ndarray
    stations: np.ndarray
    station_nodes: np.ndarray
    element_segment: np.ndarray
    held: np.ndarray  # held nodes
    shift: float
    rigid: int
    start: np.ndarray


@dataclass(frozen=True)
class _Template:
    """The study's fixed layouts, picklable (sent once to every worker)."""

    design: Design
    tolerances: tuple[Tolerance, ...]
    modes: int
    plans: tuple[tuple[str, _Bending | _Rod | None], ...]  # computed directions, in order
    reasons: tuple[tuple[str, str], ...]  # directions not computed, and why


def _problem(name: str, member: Member) -> Member | RodProblem | str:
    """What one direction of ``member`` solves (the reason where it cannot be described)."""
    if name == "depth":
        return member
    if name == "width":
        return width_member(member)
    if name == "torsion":
        return torsion_problem(member)
    return axial_problem(member)


def _signature(member: Member) -> tuple[object, ...]:
    return (
        getattr(member, "theory", "euler-bernoulli"),
        member.left,
        member.right,
        tuple(s.kind for s in member.inner_supports),
        len(member.springs),
        len(member.masses),
        len(member.segments),
        member.axial_force != 0.0,
    )


def _basis(K: np.ndarray, M: np.ndarray, held: np.ndarray, want: int) -> np.ndarray:
    """The nominal modes on a layout: the starting basis of the stacked solves."""
    K, M = stacked.to_dense(K[0]), stacked.to_dense(M[0])
    free = np.setdiff1d(np.arange(len(K)), held)
    q = min(len(free), want + _EXTRA)
    _, vecs = scipy.linalg.eigh(K[np.ix_(free, free)], M[np.ix_(free, free)],
                                subset_by_index=[0, q - 1])  # fmt: skip
    out = np.zeros((len(K), q))
    out[free] = vecs
    return out


def _bending_template(member: Member, modes: int) -> _Bending:
    """The layout of the adaptive solver's mesh at the study accuracy, refined until the
    stacked solve of ``member`` itself is within a quarter of it of a full solve.

    Timoshenko elements converge as h^2 (their shear strain is constant in each element):
    as the adaptive solver does, their eigenvalues are extrapolated from the layout and the
    one of every other node, (4 lam_h/2 - lam_h) / 3 (``_Bending.coarse``)."""
    reference = fe.solve(member, modes).frequencies_hz
    result = fe.solve(member, modes, accuracy=STUDY_ACCURACY)
    x = result.modes[0].x
    shift, rigid = -0.05 * result.modes[0].omega ** 2, result.rigid_body_modes
    for _ in range(_REFINEMENTS):
        plan = _bending_plan(member, x, shift, rigid, modes)
        coarse = _halved(member, x) if member.theory == "timoshenko" else None
        if coarse is not None:
            plan = replace(plan, coarse=_bending_plan(member, coarse, shift, rigid, modes))
        if _layout_error(plan, member, reference, modes) <= STUDY_ACCURACY / 4:
            break
        x = np.sort(np.concatenate([x, 0.5 * (x[:-1] + x[1:])]))
    return plan


def _halved(member: Member, x: np.ndarray) -> np.ndarray | None:
    """Every other node of ``x`` where that is a mesh of ``member`` (its stations kept)."""
    if (len(x) - 1) % 2:
        return None
    coarse = x[::2]
    mesh = fe.mesh_through(member, coarse)
    return coarse if len(mesh.x) == len(coarse) and np.array_equal(mesh.x, coarse) else None


def _bending_plan(member: Member, x: np.ndarray, shift: float, rigid: int, modes: int) -> _Bending:
    lay = layout(member, x)
    nodes = len(lay.x)
    held = np.zeros(2 * nodes, dtype=bool)
    ends = [(0, member.left), (nodes - 1, member.right)]
    ends += [(lay.point_node[("s", i)], s.kind) for i, s in enumerate(member.inner_supports)]
    for node, kind in ends:
        holds_w, holds_slope = HOLDS[kind]
        held[2 * node] |= holds_w
        held[2 * node + 1] |= holds_slope
    draft = _Bending(
        layout=lay,
        signature=_signature(member),
        held=np.flatnonzero(held),
        scale=float(np.median(np.diff(lay.x))),
        shift=shift,
        rigid=rigid,
        start=np.zeros((0, 0)),
    )
    K, M, _ = _bending_matrices(draft, [member])
    return replace(draft, start=_basis(K, M, draft.held, modes + draft.rigid))


def _layout_error(
    plan: _Bending | _Rod, problem: Member | RodProblem, reference: np.ndarray, modes: int
) -> float:
    """Largest relative difference of the stacked solve of ``problem`` from ``reference``."""
    found, failed = _stacked(plan, [problem], modes)
    if failed[0]:
        return math.inf
    n = min(len(reference), modes)
    return float(np.max(np.abs(found[0, :n] - reference[:n]) / reference[:n]))


def _rod_template(problem: RodProblem, modes: int) -> _Rod:
    """A mesh sized for the study accuracy by the rod elements' error model, refined until the
    stacked solve of ``problem`` itself is within a quarter of it of a full solve."""
    full = solve_rod(problem, modes)
    reference = np.array([m.frequency_hz for m in full.modes])
    lowest = full.modes[0].omega ** 2
    rigid = problem.rigid_body_modes
    accuracy = STUDY_ACCURACY
    for _ in range(_REFINEMENTS):
        x = coarse_mesh(problem, modes, accuracy)
        stations, station_nodes, segment = mesh_layout(problem, x)
        held = np.array(sorted({int(station_nodes[np.argmin(np.abs(stations - p))])
                                for p in problem.held}), dtype=int)  # fmt: skip
        draft = _Rod(x, stations, station_nodes, segment, held, -0.05 * lowest, rigid,
                     np.zeros((0, 0)))  # fmt: skip
        K, M, _ = _rod_matrices(draft, [problem])
        plan = replace(draft, start=_basis(K, M, held, modes + rigid))
        if _layout_error(plan, problem, reference, modes) <= STUDY_ACCURACY / 4:
            break
        accuracy /= 16.0
    return plan


def _template(design: Design, tolerances: tuple[Tolerance, ...], modes: int) -> _Template:
    # Supports ranging to rigid are laid out released (every sample has a finite stiffness).
    start = np.array([t.high if t.measure == COMPLIANCE else t.nominal for t in tolerances])
    member = vary_within(design, tolerances, start)
    plans: list[tuple[str, _Bending | _Rod | None]] = []
    reasons: list[tuple[str, str]] = []
    for name in DIRECTIONS:
        problem = _problem(name, member)
        if isinstance(problem, str):
            reasons.append((name, problem))
        elif isinstance(problem, RodProblem):
            plans.append((name, _rod_template(problem, modes)))
        elif getattr(problem, "theory", "euler-bernoulli") in _STACKED_THEORIES:
            plans.append((name, _bending_template(problem, modes)))
        else:  # another bending theory: solved sample by sample by the full solver
            plans.append((name, None))
    return _Template(design, tolerances, modes, tuple(plans), tuple(reasons))


def _full(problem: Member | RodProblem, modes: int) -> np.ndarray:
    """Frequencies [Hz] of one problem by the full adaptive solver at the study accuracy."""
    if isinstance(problem, RodProblem):
        found = [m.frequency_hz for m in solve_rod(problem, modes, accuracy=STUDY_ACCURACY).modes]
    else:
        found = list(fe.solve(problem, modes, accuracy=STUDY_ACCURACY).frequencies_hz)
    out = np.full(modes, np.nan)
    out[: len(found)] = found[:modes]
    return out


def _solve_chunk(template: _Template, points: np.ndarray) -> tuple[dict[str, np.ndarray], int]:
    """Frequencies [Hz] of each point in every computed direction, and how many points had
    some direction solved one by one (a layout the stacked solve does not cover)."""
    members = [vary_within(template.design, template.tolerances, p) for p in points]
    out: dict[str, np.ndarray] = {}
    alone: set[int] = set()
    for name, plan in template.plans:
        freqs = np.full((len(points), template.modes), np.nan)
        problems = [_problem(name, m) for m in members]
        batch: list[int] = []
        for i, problem in enumerate(problems):
            if isinstance(problem, str):
                continue  # not described at this point (its reason is the nominal's)
            if name == "width" and isinstance(problem, Member) and same_bending(
                members[i], problem
            ):  # fmt: skip
                freqs[i] = out["depth"][i]
            elif _fits(plan, problem):
                batch.append(i)
            else:
                freqs[i] = _full(problem, template.modes)
                alone.add(i)
        for first in range(0, len(batch), _BATCH):
            part = batch[first : first + _BATCH]
            found, failed = _stacked(plan, [problems[i] for i in part], template.modes)
            for i, f, bad in zip(part, found, failed, strict=True):
                if bad:
                    freqs[i] = _full(problems[i], template.modes)
                    alone.add(i)
                else:
                    freqs[i] = f
        out[name] = freqs
    return out, len(alone)


def _fits(plan: _Bending | _Rod | None, problem: Member | RodProblem) -> bool:
    if isinstance(plan, _Bending):
        return isinstance(problem, Member) and _signature(problem) == plan.signature
    if isinstance(plan, _Rod):
        return (
            isinstance(problem, RodProblem)
            and problem.rigid_body_modes == plan.rigid
            and len(rod_stations(problem)) == len(plan.stations)
        )
    return False


def _stacked(
    plan: _Bending | _Rod | None, problems: list, modes: int
) -> tuple[np.ndarray, np.ndarray]:
    """Frequencies [Hz] of problems sharing a layout, and which failed (solved in full)."""
    assert plan is not None
    lam, bad = _eigenvalues(plan, problems, modes)
    if isinstance(plan, _Bending) and plan.coarse is not None:
        lam_coarse, bad_coarse = _eigenvalues(plan.coarse, problems, modes)
        lam, bad = (4.0 * lam - lam_coarse) / 3.0, bad | bad_coarse
    bad = bad | np.any(~(lam > 0.0), axis=1)
    return np.sqrt(np.where(bad[:, None], 0.0, lam)) / (2.0 * math.pi), bad


def _eigenvalues(
    plan: _Bending | _Rod, problems: list, modes: int
) -> tuple[np.ndarray, np.ndarray]:
    """The flexible eigenvalues [rad^2/s^2] on one layout, and which failed."""
    if isinstance(plan, _Bending):
        K, M, failed = _bending_matrices(plan, problems)
    else:
        K, M, failed = _rod_matrices(plan, problems)
    want = modes + plan.rigid
    lam, converged = stacked.lowest(K, M, want, plan.start, plan.shift)
    return lam[:, plan.rigid :], failed | ~converged


def _bending_matrices(
    plan: _Bending, members: list[Member]
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Banded stiffness and mass of members sharing the plan's layout, and which failed."""
    lay = plan.layout
    B = len(members)
    nodes = len(lay.x)
    owners = sorted(lay.station_owner)
    station_x = lay.x[owners]
    xs = np.empty((B, nodes))
    coef = [coefficients(m, lay.element_segment) for m in members]
    failed = np.zeros(B, dtype=bool)
    for b, c in enumerate(coef):
        moved = np.array([c.points[lay.station_owner[j]] for j in owners])
        xs[b] = np.interp(lay.x, station_x, moved)
        if np.any(np.diff(xs[b]) <= 0.0):
            failed[b] = True
            xs[b] = lay.x
    h = np.diff(xs, axis=1)
    EI = np.array([c.EI for c in coef])
    m = np.array([c.m for c in coef])
    P = np.array([c.P for c in coef])
    s = plan.scale
    geometric = bool(np.any(P != 0.0))
    if plan.signature[0] == "timoshenko":  # the element of calc.fe.timoshenko
        from beamtone.calc.fe import timoshenko

        kga = np.array([c.shear_stiffness for c in coef])
        rotary = np.array([c.rho_i for c in coef]).ravel()
        finite = np.isfinite(kga)
        phi = np.where(finite, 12.0 * EI / (np.where(finite, kga, 1.0) * h * h), 0.0)
        k, g, mm = timoshenko.scaled_element_matrices(
            h.ravel(), EI.ravel(), m.ravel(), s, geometric, phi.ravel(), rotary
        )
    else:
        k, g, mm = scaled_element_matrices(h.ravel(), EI.ravel(), m.ravel(), s, geometric)
    E = nodes - 1
    k = k.reshape(B, E, 4, 4)
    mm = mm.reshape(B, E, 4, 4)
    if g is not None:
        k = k + P[:, None, None, None] * g.reshape(B, E, 4, 4)
    first = 2 * np.arange(E)
    K = stacked.assemble(k, first, 2 * nodes)
    M = stacked.assemble(mm, first, 2 * nodes)
    rows = np.arange(B)
    # An attachment that leaves the node it shared with something else (a mass moved off the
    # end) needs a node of its own: such a sample is solved alone by the full solver.
    apart = _SAME_NODE * xs[:, -1]
    for i, j in enumerate(lay.spring_nodes):
        kk = np.array([c.spring_k[i] for c in coef])
        kr = np.array([c.spring_kr[i] for c in coef])
        e = np.array([c.spring_at[i] for c in coef]) - xs[rows, j]
        failed |= np.abs(e) > apart
        _block(K, j, kk, e / s, kr / s**2)
    for i, j in enumerate(lay.mass_nodes):
        mass = np.array([c.mass_m[i] for c in coef])
        inertia = np.array([c.mass_j[i] for c in coef])
        e = np.array([c.mass_at[i] for c in coef]) - xs[rows, j]
        failed |= np.abs(e) > apart
        _block(M, j, mass, e / s, inertia / s**2)
    stacked.hold(K, plan.held, 1.0)
    stacked.hold(M, plan.held, 0.0)
    return K, M, failed


def _block(A: np.ndarray, j: int, a: np.ndarray, e: np.ndarray, b: np.ndarray) -> None:
    """Add a (w + e theta)^2 + b theta^2 at node j of every banded matrix of the stack."""
    w, t = 2 * j, 2 * j + 1
    A[:, w, 0] += a
    A[:, t, 1] += a * e
    A[:, t, 0] += a * e * e + b


def _rod_matrices(
    plan: _Rod, problems: list[RodProblem]
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Banded stiffness and mass of rod problems sharing the plan's layout, and which failed."""
    B = len(problems)
    n = len(plan.x)
    failed = np.zeros(B, dtype=bool)
    xs = np.empty((B, n))
    for b, p in enumerate(problems):
        xs[b] = np.interp(plan.x, plan.stations, rod_stations(p))
        if np.any(np.diff(xs[b]) <= 0.0):
            failed[b] = True
            xs[b] = plan.x
    h = xs[:, 3::3] - xs[:, 0:-1:3]
    seg = plan.element_segment
    k = np.array([np.asarray(p.stiffness)[seg] for p in problems]) / h
    mu = np.array([np.asarray(p.inertia)[seg] for p in problems]) * h
    ref_k, ref_m = REFERENCE_ELEMENT
    first = 3 * np.arange(len(seg))
    K = stacked.assemble(k[:, :, None, None] * ref_k, first, n)
    M = stacked.assemble(mu[:, :, None, None] * ref_m, first, n)
    for b, p in enumerate(problems):
        stations = xs[b, plan.station_nodes]
        for at, value in p.springs:
            K[b, plan.station_nodes[np.argmin(np.abs(stations - at))], 0] += value
        for at, value in p.point_inertias:
            M[b, plan.station_nodes[np.argmin(np.abs(stations - at))], 0] += value
        held = {int(plan.station_nodes[np.argmin(np.abs(stations - at))]) for at in p.held}
        failed[b] |= held != set(plan.held.tolist())
    stacked.hold(K, plan.held, 1.0)
    stacked.hold(M, plan.held, 0.0)
    return K, M, failed


def _run(
    template: _Template,
    points: np.ndarray,
    engine: str,
    workers: int,
    address: str | None,
    progress: Callable[[int, int], None] | None,
) -> tuple[dict[str, np.ndarray], int, str]:
    count = max(1, len(points) // _BATCH) if engine == "local" else 4 * workers
    results, where = map_chunks(
        _solve_chunk, template, split(points, count), engine, workers, address, progress
    )
    freqs = {name: np.concatenate([r[0][name] for r in results]) for name, _ in template.plans}
    return freqs, sum(r[1] for r in results), where


# --- the study -------------------------------------------------------------------------------


def scatter(
    design: Design,
    tolerances: Sequence[Tolerance],
    modes: int,
    samples: int,
    *,
    method: str = "latin-hypercube",
    seed: int = _SEED,
    lines: Sequence[Line] = (),
    engine: str = "auto",
    workers: int | None = None,
    address: str | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> ScatterResult:
    """Solve the design at ``samples`` points of the tolerance box.

    Parameters
    ----------
    design : Design
    tolerances : sequence of Tolerance
        At least one.
    modes : int
        Modes per sample.
    samples : int
        Number of samples.
    method : str
        ``"latin-hypercube"`` (default) or ``"monte-carlo"``.
    seed : int
        Seed of the sampling (the same seed gives the same samples).
    lines : sequence of excitation.Line
        Excitation lines whose bands the modes should stay out of.
    engine : str
        ``"auto"`` (this process for small studies, else local processes), ``"local"``,
        ``"processes"`` or ``"dask"``.
    workers : int, optional
        Worker processes (default: the machine's cores).
    address : str, optional
        A dask scheduler address (``engine="dask"``); default a local cluster.
    progress : callable, optional
        Called with (samples done, samples in all).

    Returns
    -------
    ScatterResult

    Raises
    ------
    InputError
        For no tolerances, a bad sample count, method or engine, or a sample the model
        refuses (keyed by that input).
    """
    tolerances = tuple(tolerances)
    if not tolerances:
        raise InputError("tolerances", None, "at least one toleranced input to scatter")
    if isinstance(samples, bool) or not isinstance(samples, int) or not 2 <= samples <= MAX_SAMPLES:
        raise InputError("--samples", samples, f"a whole number from 2 to {MAX_SAMPLES:,}")
    if engine not in ENGINES:
        raise InputError("--engine", engine, "one of " + ", ".join(ENGINES))
    points = sample_points(tolerances, samples, method, seed)
    template = _template(design, tolerances, modes)
    workers = workers or os.cpu_count() or 1
    if engine == "auto":
        engine = "local" if samples <= _IN_PROCESS or workers == 1 else "processes"
    freqs, alone, where = _run(template, points, engine, workers, address, progress)
    solved = solve_directions(design.solved_member(), modes, checks=False)
    nominal = {name: _padded([m.frequency_hz for m in solved[name].modes], modes)
               for name in freqs}  # fmt: skip
    checked, count = _check(template, points, freqs)
    labels = ", ".join(LABELS[name] for name in freqs)
    notes = [
        f"directions studied: {labels}; {COUPLING_NOTE}",
        "each input uniform over its range (a support ranging to rigid: uniform in 1/k); "
        "percentiles describe this assumed spread, and the tolerances are the user's",
        f"samples solved on one mesh layout per direction designed for {STUDY_ACCURACY:.0e}; "
        f"{count} direction solves (the extremes of every direction's lowest and highest mode, "
        f"and {_CHECKS} samples spread over the study) solved again in full: largest difference "
        f"{checked:.1e}",
    ]
    notes += [f"{LABELS[name]} not computed: {why}" for name, why in template.reasons]
    if checked > 10 * STUDY_ACCURACY:
        notes.append("the stacked solves differ from full solves by more than expected")
    chances, any_in = _chances(freqs, lines)
    return ScatterResult(
        method=method,
        engine=where,
        keys=tuple(t.key for t in tolerances),
        points=points,
        directions=tuple(freqs),
        sampled_hz=freqs,
        nominal_by_direction=nominal,
        not_computed=template.reasons,
        same_as=_same_as(freqs),
        any_in_band=any_in,
        lines=chances,
        checked_difference=checked,
        individually_solved=alone,
        notes=tuple(notes),
    )


def _same_as(freqs: dict[str, np.ndarray]) -> dict[str, str]:
    names = list(freqs)
    out = {}
    for i, name in enumerate(names):
        for other in names[:i]:
            if other not in out and np.array_equal(freqs[name], freqs[other], equal_nan=True):
                out[name] = other
                break
    return out


def _padded(values: Sequence[float], modes: int) -> np.ndarray:
    out = np.full(modes, np.nan)
    out[: min(len(values), modes)] = list(values)[:modes]
    return out


def _check(
    template: _Template, points: np.ndarray, freqs: dict[str, np.ndarray]
) -> tuple[float, int]:
    """Largest relative difference of the stacked solves from full ones at the extremes of
    every direction's lowest and highest mode and a few points between, and how many
    direction solves that compared."""
    picks = {int(i) for i in np.linspace(0, len(points) - 1, _CHECKS)}
    for f in freqs.values():
        if np.any(np.isfinite(f[:, 0])):
            picks.add(int(np.nanargmin(f[:, 0])))
        last = f[:, -1]
        if np.any(np.isfinite(last)):
            picks.add(int(np.nanargmax(last)))
    worst, count = 0.0, 0
    for i in sorted(picks):
        member = vary_within(template.design, template.tolerances, points[i])
        full = solve_directions(member, template.modes, checks=False)
        for name, f in freqs.items():
            exact = _padded([m.frequency_hz for m in full[name].modes], template.modes)
            ok = np.isfinite(exact) & np.isfinite(f[i])
            if np.any(ok):
                worst = max(worst, float(np.max(np.abs(f[i][ok] - exact[ok]) / exact[ok])))
                count += 1
    return worst, count


def _chances(
    freqs: dict[str, np.ndarray], lines: Sequence[Line]
) -> tuple[tuple[LineChance, ...], float | None]:
    if not lines:
        return (), None
    every = np.concatenate(list(freqs.values()), axis=1)  # every mode of every direction
    n = len(every)
    inside_any = np.zeros(n, dtype=bool)
    out = []
    for line in lines:
        inside = np.any((every >= line.band_low_hz) & (every <= line.band_high_hz), axis=1)
        inside_any |= inside
        p = float(inside.mean())
        out.append(
            LineChance(
                line.excitation, line.order, line.band_low_hz, line.band_high_hz, p,
                math.sqrt(p * (1.0 - p) / n),
            )
        )  # fmt: skip
    return tuple(out), float(inside_any.mean())
