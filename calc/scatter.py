"""Studies over the tolerances: where the natural frequencies land when the inputs scatter.

Every toleranced input is drawn uniformly over its range (a support stiffness ranging to
rigid uniformly in its compliance 1/k), by Latin-hypercube sampling (M. D. McKay, R. J.
Beckman and W. J. Conover, Technometrics 21(2), 1979) or plain Monte Carlo.  The
percentiles describe that assumed spread, not measured parts: the tolerances and their
distribution are the user's.

The samples are solved in batches: one mesh layout is designed once for the study (the
finite-element solve of the design at the study accuracy; nodes then move with the
stations of each sample), every sample's matrices are assembled at once in dense arrays,
and the eigenvalues of a whole batch come from one stacked LAPACK call in the inverted
form (M x = mu (K - sigma M) x, whose largest mu are the lowest modes).  A sample whose
layout differs (a support that changes kind, stations that pass each other, an attachment
that leaves a node it shared) is solved on its own by the full solver.  A few samples (the
extremes of the lowest and highest mode and the nominal) are solved again by the full
adaptive solver, and the largest relative difference is reported beside the result.

Batches run in this process, in local worker processes (``engine="processes"``), or on a
dask cluster (``engine="dask"``: a local cluster by default, a scheduler address for an
existing one; the optional extra ``beamtone[cluster]``).  The samples, their order and
their solution are the same on every engine, so the percentiles are identical.
"""

from __future__ import annotations

import math
import os
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from beamtone.calc import fe
from beamtone.calc.band import latin_hypercube
from beamtone.calc.engines import ENGINES, map_chunks, split
from beamtone.calc.errors import InputError
from beamtone.calc.excitation import Line
from beamtone.calc.fe.elements import scaled_element_matrices
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
]

METHODS = ("latin-hypercube", "monte-carlo")
PERCENTILES = (1.0, 5.0, 50.0, 95.0, 99.0)
STUDY_ACCURACY = 1e-4
"""Relative accuracy the study's mesh is designed for (tolerances are far coarser)."""
MAX_SAMPLES = 10_000_000
_BATCH = 256  # samples assembled and solved together
_IN_PROCESS = 5000  # "auto" runs up to this many samples here (worker start-up costs more)
_SEED = 20261202
_CHECKS = 4  # full solves that check the batched ones
_SAME_NODE = 1e-9  # of the length: an attachment this close to its node is on it


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
    """A study of the modes over the tolerances.

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
    frequencies_hz : ndarray, shape (samples, modes)
        Natural frequencies of each sample [Hz].
    nominal_hz : ndarray, shape (modes,)
    percentiles : ndarray, shape (len(PERCENTILES), modes)
        The ``PERCENTILES`` of each mode [Hz].
    any_in_band : float or None
        Fraction of samples with some mode inside some excitation band; None without
        excitations.
    lines : tuple of LineChance
    checked_difference : float
        Largest relative difference between a batched and a full solve of the same sample.
    individually_solved : int
        Samples whose layout differed, solved one by one.
    notes : tuple of str
    """

    method: str
    engine: str
    keys: tuple[str, ...]
    points: np.ndarray
    frequencies_hz: np.ndarray
    nominal_hz: np.ndarray
    percentiles: np.ndarray
    any_in_band: float | None
    lines: tuple[LineChance, ...]
    checked_difference: float
    individually_solved: int
    notes: tuple[str, ...]

    @property
    def samples(self) -> int:
        """Number of samples."""
        return len(self.points)


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


# --- the batched solver ----------------------------------------------------------------------


@dataclass(frozen=True)
class _Template:
    """The study's fixed mesh layout, picklable (sent once to every worker)."""

    design: Design
    tolerances: tuple[Tolerance, ...]
    modes: int
    layout: Layout
    signature: tuple[object, ...]
    free: np.ndarray
    scale: float
    shift: float
    rigid: int


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


def _template(design: Design, tolerances: tuple[Tolerance, ...], modes: int) -> _Template:
    # Supports ranging to rigid are laid out released (every sample has a finite stiffness).
    start = np.array([t.high if t.measure == COMPLIANCE else t.nominal for t in tolerances])
    member = vary_within(design, tolerances, start)
    result = fe.solve(member, modes, accuracy=STUDY_ACCURACY)
    lay = layout(member, result.modes[0].x)
    nodes = len(lay.x)
    held = np.zeros(2 * nodes, dtype=bool)
    ends = [(0, member.left), (nodes - 1, member.right)]
    ends += [(lay.point_node[("s", i)], s.kind) for i, s in enumerate(member.inner_supports)]
    for node, kind in ends:
        holds_w, holds_slope = HOLDS[kind]
        held[2 * node] |= holds_w
        held[2 * node + 1] |= holds_slope
    lowest = result.modes[0].omega ** 2
    return _Template(
        design=design,
        tolerances=tolerances,
        modes=modes,
        layout=lay,
        signature=_signature(member),
        free=np.flatnonzero(~held),
        scale=float(np.median(np.diff(lay.x))),
        shift=-0.05 * lowest,
        rigid=result.rigid_body_modes,
    )


def _solve_chunk(template: _Template, points: np.ndarray) -> tuple[np.ndarray, int]:
    """Frequencies [Hz] of each point, and how many were solved one by one."""
    out = np.empty((len(points), template.modes))
    batch: list[tuple[int, Member]] = []
    alone = 0
    # The stacked solver assembles Euler-Bernoulli or Timoshenko elements; another bending
    # theory is solved sample by sample by the full solver.
    stacked = template.signature[0] in ("euler-bernoulli", "timoshenko")
    for i, point in enumerate(points):
        member = vary_within(template.design, template.tolerances, point)
        if stacked and _signature(member) == template.signature:
            batch.append((i, member))
        else:
            out[i] = fe.solve(member, template.modes, accuracy=STUDY_ACCURACY).frequencies_hz
            alone += 1
    for start in range(0, len(batch), _BATCH):
        part = batch[start : start + _BATCH]
        freqs, failed = _batched(template, [m for _, m in part])
        for (i, member), f, bad in zip(part, freqs, failed, strict=True):
            if bad:
                out[i] = fe.solve(member, template.modes, accuracy=STUDY_ACCURACY).frequencies_hz
                alone += 1
            else:
                out[i] = f
    return out, alone


def _batched(template: _Template, members: list[Member]) -> tuple[np.ndarray, np.ndarray]:
    """Frequencies [Hz] of members sharing the template's layout, and which failed."""
    lay = template.layout
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
    s = template.scale
    geometric = bool(np.any(P != 0.0))
    if template.signature[0] == "timoshenko":  # the element of calc.fe.timoshenko
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
    n = 2 * nodes
    K = np.zeros((B, n, n))
    M = np.zeros((B, n, n))
    first = 2 * np.arange(E)
    for a in range(4):
        for c in range(4):
            K[:, first + a, first + c] += k[:, :, a, c]
            M[:, first + a, first + c] += mm[:, :, a, c]
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
    free = template.free
    K = K[:, free[:, None], free[None, :]]
    M = M[:, free[:, None], free[None, :]]
    want = template.modes + template.rigid
    sigma = template.shift
    try:
        L = np.linalg.cholesky(K - sigma * M)
    except np.linalg.LinAlgError:
        return np.zeros((B, template.modes)), np.ones(B, dtype=bool)
    Linv = np.linalg.inv(L)
    A = Linv @ M @ np.swapaxes(Linv, 1, 2)
    mu = np.linalg.eigvalsh(A)[:, ::-1][:, :want]
    lam = 1.0 / mu + sigma
    lam = np.sort(lam, axis=1)[:, template.rigid :]
    bad = failed | ~np.all(np.isfinite(lam), axis=1) | np.any(lam <= 0.0, axis=1)
    return np.sqrt(np.maximum(lam, 0.0)) / (2.0 * math.pi), bad


def _block(A: np.ndarray, j: int, a: np.ndarray, e: np.ndarray, b: np.ndarray) -> None:
    """Add a (w + e theta)^2 + b theta^2 at node j of every matrix of the stack."""
    w, t = 2 * j, 2 * j + 1
    A[:, w, w] += a
    A[:, w, t] += a * e
    A[:, t, w] += a * e
    A[:, t, t] += a * e * e + b


def _run(
    template: _Template,
    points: np.ndarray,
    engine: str,
    workers: int,
    address: str | None,
    progress: Callable[[int, int], None] | None,
) -> tuple[np.ndarray, int, str]:
    count = max(1, len(points) // _BATCH) if engine == "local" else 4 * workers
    results, where = map_chunks(
        _solve_chunk, template, split(points, count), engine, workers, address, progress
    )
    return np.concatenate([r[0] for r in results]), sum(r[1] for r in results), where


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
    nominal = fe.solve(design.solved_member(), modes).frequencies_hz
    checked = _check(template, points, freqs)
    notes = [
        "depth-plane modes only: the study solves bending in the worksheet's plane (the width "
        "plane, torsion and axial bands are in beamtone solve)",
        "each input uniform over its range (a support ranging to rigid: uniform in 1/k); "
        "percentiles describe this assumed spread, and the tolerances are the user's",
        f"samples solved on one mesh layout designed for {STUDY_ACCURACY:.0e}; "
        f"{min(_CHECKS, samples) + 1} solved again in full: largest difference "
        f"{checked:.1e}",
    ]
    if checked > 10 * STUDY_ACCURACY:
        notes.append("the batched solves differ from full solves by more than expected")
    chances, any_in = _chances(freqs, lines)
    return ScatterResult(
        method=method,
        engine=where,
        keys=tuple(t.key for t in tolerances),
        points=points,
        frequencies_hz=freqs,
        nominal_hz=nominal,
        percentiles=np.percentile(freqs, PERCENTILES, axis=0),
        any_in_band=any_in,
        lines=chances,
        checked_difference=checked,
        individually_solved=alone,
        notes=tuple(notes),
    )


def _check(template: _Template, points: np.ndarray, freqs: np.ndarray) -> float:
    picks = {int(np.argmin(freqs[:, 0])), int(np.argmax(freqs[:, -1])), 0}
    picks |= {int(i) for i in np.linspace(0, len(points) - 1, _CHECKS)}
    worst = 0.0
    for i in sorted(picks)[: _CHECKS + 1]:
        member = vary_within(template.design, template.tolerances, points[i])
        full = fe.solve(member, template.modes).frequencies_hz
        worst = max(worst, float(np.max(np.abs(freqs[i] - full) / full)))
    return worst


def _chances(
    freqs: np.ndarray, lines: Sequence[Line]
) -> tuple[tuple[LineChance, ...], float | None]:
    if not lines:
        return (), None
    n = len(freqs)
    inside_any = np.zeros(n, dtype=bool)
    out = []
    for line in lines:
        inside = np.any((freqs >= line.band_low_hz) & (freqs <= line.band_high_hz), axis=1)
        inside_any |= inside
        p = float(inside.mean())
        out.append(
            LineChance(
                line.excitation, line.order, line.band_low_hz, line.band_high_hz, p,
                math.sqrt(p * (1.0 - p) / n),
            )
        )  # fmt: skip
    return tuple(out), float(inside_any.mean())
