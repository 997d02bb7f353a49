"""Rayleigh's quotient from an assumed shape, Rayleigh-Ritz, and Dunkerley's lower bound.

For an assumed deflected shape w(x) satisfying the geometric conditions of the supports,

    omega^2 <= R[w] = (int EI w''^2 + P int w'^2 + sum k w(a)^2 + sum k_r w'(a)^2)
                      / (int m w^2 + sum M w(a)^2 + sum J w'(a)^2),

an upper bound on the fundamental (Rayleigh's principle; e.g. S. Timoshenko, D. H. Young and
W. Weaver, Vibration Problems in Engineering, chapter 5).  With several shapes the Ritz
method gives upper bounds on as many modes.  Dunkerley's sum
1/omega_1^2 <= sum_i 1/omega_i^2 = trace(flexibility x mass) bounds the fundamental from
below (common practice; the same text).  Together they bracket the fundamental.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
import scipy.linalg
import scipy.sparse

from beamtone.calc import fe
from beamtone.calc.errors import InputError
from beamtone.calc.model import (
    HOLDS,
    POSITION_TOLERANCE,
    Member,
    rigid_body_count,
    rigid_motion_rows,
    supports,
)

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.expressions import Formula
    from beamtone.calc.symbolic import ShapeFacts

__all__ = [
    "NAMED_SHAPES",
    "RayleighEstimate",
    "RitzResult",
    "DunkerleyBound",
    "Bracket",
    "EquivalentSystem",
    "named_shape",
    "polynomial_family",
    "rayleigh_static",
    "rayleigh_shape",
    "ritz",
    "dunkerley",
    "bracket",
    "equivalent_system",
    "admissibility",
    "DUNKERLEY_UNCERTAINTY_LIMIT",
]

G0 = 9.80665
"""Standard acceleration of gravity [m/s^2] (ISO 80000-3); it cancels in the quotient."""

DUNKERLEY_UNCERTAINTY_LIMIT = 1e-3
"""Relative round-off of Dunkerley's sum above which it is given as no bound at all."""

_GAUSS_POINTS = 12
_SUBDIVISIONS = 24


# --- results -------------------------------------------------------------------------------------


@dataclass(frozen=True)
class RayleighEstimate:
    """Rayleigh's upper bound on the fundamental from one assumed shape.

    Attributes
    ----------
    shape : str
        ``"static"``, a named shape, or the expression as written.
    expression : str or None
        The expression in x and L actually used (None for the static shape).
    omega : float
        Estimated circular frequency [rad/s].
    frequency_hz : float
        Estimated natural frequency [Hz].
    formula : str or None
        Closed form where the quotient was evaluated symbolically, else None.
    coefficient : float or None
        C in omega = C sqrt(EI/(m L^4)) for a bare uniform member, else None.
    coefficient_exact : str or None
        C^2 as an exact expression, where symbolic.
    numeric_check : float or None
        Relative difference between the symbolic and the quadrature route, where both ran.
    notes : tuple of str
        Unmet natural boundary conditions and similar remarks.
    """

    shape: str
    expression: str | None
    omega: float
    frequency_hz: float
    formula: str | None = None
    coefficient: float | None = None
    coefficient_exact: str | None = None
    numeric_check: float | None = None
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class RitzResult:
    """Rayleigh-Ritz upper bounds on the lowest modes.

    Attributes
    ----------
    shapes : tuple of str
        The trial functions (expressions in x and L, or the family's description).
    frequencies_hz : tuple of float
        Upper bounds on the first flexible modes with all functions [Hz].
    convergence : tuple of tuple of float
        Row n: the bounds [Hz] with the first n+1 functions.
    """

    shapes: tuple[str, ...]
    frequencies_hz: tuple[float, ...]
    convergence: tuple[tuple[float, ...], ...]


@dataclass(frozen=True)
class DunkerleyBound:
    """Dunkerley's lower bound on the fundamental.

    Attributes
    ----------
    frequency_hz : float or None
        The bound [Hz]; None where it does not exist.
    trace : float or None
        sum over modes of 1/omega_i^2 = trace(F M) [s^2].
    reason : str or None
        Why there is no bound (rigid-body freedom).
    exact : bool
        True where the flexibility and the quadrature are exact (no axial force).
    uncertainty : float
        Estimated relative round-off in the bound: eps times an estimate of the stiffness
        matrix's condition number; large where the member is nearly free to move as a
        rigid body (a very soft spring), which makes the flexibility ill-conditioned.  Above
        ``DUNKERLEY_UNCERTAINTY_LIMIT`` no bound is given.
    note : str or None
        How the bound was obtained where the member carries an axial force (one line).
    """

    frequency_hz: float | None
    trace: float | None
    reason: str | None = None
    exact: bool = True
    uncertainty: float = 0.0
    note: str | None = None


@dataclass(frozen=True)
class Bracket:
    """The fundamental bracketed: lower <= FE <= upper.

    Attributes
    ----------
    lower_hz, fe_hz, upper_hz : float or None
        Dunkerley bound, finite-element value, Rayleigh bound [Hz].
    width : float or None
        (upper - lower) / fe [-].
    inside : bool
        Whether the FE value lies within the bounds that exist (within its estimated error
        and the lower bound's uncertainty); with no lower bound, below the upper one.
    message : str
    status : str
        ``"bracketed"`` (both bounds exist and hold), ``"upper bound only"`` (no lower bound
        exists: ``lower_reason`` says why) or ``"check failed"``.
    lower_reason : str or None
        Why there is no lower bound.
    """

    lower_hz: float | None
    fe_hz: float
    upper_hz: float
    width: float | None
    inside: bool
    message: str
    status: str = "bracketed"
    lower_reason: str | None = None


@dataclass(frozen=True)
class EquivalentSystem:
    """Single-degree-of-freedom model of the fundamental at a reference point.

    Attributes
    ----------
    at_m : float
        Reference point [m] from the left end.
    mass_kg : float
        Effective mass at that point [kg].
    stiffness_n_per_m : float
        Effective stiffness [N/m]; sqrt(k/m) is the FE fundamental [rad/s].
    """

    at_m: float
    mass_kg: float
    stiffness_n_per_m: float


# --- trial functions -----------------------------------------------------------------------------

# A trial function gives (w, w', w'') at positions x [m].
Trial = Callable[[np.ndarray], tuple[np.ndarray, np.ndarray, np.ndarray]]

# Built-in shapes for each pair of ends, in X = x/L with the first-named end at X = 0:
# (polynomial, trigonometric).  Each satisfies the geometric conditions of its ends; the
# polynomials are static deflections under uniform load where the ends carry it.  Where the
# member has rigid freedom the shape is made mass-orthogonal to the rigid motions first.
NAMED_SHAPES: dict[tuple[str, str], tuple[str, str]] = {
    ("clamped", "clamped"): ("X**2*(1 - X)**2", "1 - cos(2*pi*X)"),
    ("clamped", "pinned"): ("X**2*(1 - X)*(3 - 2*X)", "sin(pi*X)*sin(pi*X/2)"),
    ("clamped", "guided"): ("X**2*(3 - 2*X)", "1 - cos(pi*X)"),
    ("clamped", "free"): ("X**2*(6 - 4*X + X**2)", "1 - cos(pi*X/2)"),
    ("pinned", "pinned"): ("X*(1 - 2*X**2 + X**3)", "sin(pi*X)"),
    ("pinned", "guided"): ("X*(8 - 4*X**2 + X**3)", "sin(pi*X/2)"),
    ("pinned", "free"): ("X*(1 - 2*X**2 + X**3)", "X - sin(pi*X)/pi"),
    ("guided", "guided"): ("X**2*(3 - 2*X)", "cos(pi*X)"),
    ("guided", "free"): ("1 - X**2*(6 - 4*X + X**2)/3", "cos(pi*X/2)"),
    ("free", "free"): ("(2*X - 1)**4 - 6*(2*X - 1)**2", "sin(pi*X)"),
}
SHAPE_NAMES = ("polynomial", "trigonometric")


def named_shape(member: Member, name: str) -> str:
    """The built-in shape ``name`` for the member's ends, as an expression in x and L.

    Parameters
    ----------
    member : Member
    name : str
        ``"polynomial"`` or ``"trigonometric"``.

    Returns
    -------
    str
        The expression with ``x`` from the left end.
    """
    index = SHAPE_NAMES.index(name)
    pair = (member.left, member.right)
    if pair in NAMED_SHAPES:
        template = NAMED_SHAPES[pair][index]
        return template.replace("X", "(x/L)")
    template = NAMED_SHAPES[(member.right, member.left)][index]
    return template.replace("X", "(1 - x/L)")


def _shape(text: str, key: str) -> tuple[Formula, ShapeFacts]:
    """Parse a shape formula and look up what sympy found about it (see calc.symbolic)."""
    from beamtone.calc.expressions import parse_formula
    from beamtone.calc.symbolic import shape_facts

    formula = parse_formula(text, key)
    return formula, shape_facts(text, key)


def _expression_trial(
    formula: Formula, facts: ShapeFacts, L: float, key: str = "estimate.shape"
) -> Trial:
    from beamtone.calc.expressions import derivatives

    if facts.kink:
        raise InputError(
            key,
            facts.expression,
            "a shape with a continuous slope: a kink (from abs) has unbounded curvature",
        )

    def trial(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        with np.errstate(all="ignore"):
            return derivatives(formula, x, L)

    return trial


def _legendre_trial(coefficients: np.ndarray, L: float) -> Trial:
    series = np.polynomial.Legendre(coefficients, domain=[0.0, L])
    d1 = series.deriv(1)
    d2 = series.deriv(2)
    return lambda x: (series(x), d1(x), d2(x))


def _rigid_trials(member: Member) -> list[Trial]:
    """Basis of the rigid motions w = a + b x the restraints leave free."""
    rigid = rigid_body_count(member)
    if rigid == 0:
        return []
    rows = rigid_motion_rows(member)
    if rows:
        _, _, vt = np.linalg.svd(np.array(rows))
        null = vt[-rigid:]
    else:
        null = np.eye(2)
    L = member.length
    out: list[Trial] = []
    for a, b in null:

        def trial(x: np.ndarray, a: float = a, b: float = b) -> tuple[np.ndarray, ...]:
            return a + b * x / L, np.full_like(x, b / L), np.zeros_like(x)

        out.append(trial)  # type: ignore[arg-type]
    return out


# --- energies ------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Quadrature:
    x: np.ndarray  # points [m]
    weight: np.ndarray  # weights [m]
    EI: np.ndarray  # [N m^2]
    m: np.ndarray  # [kg/m]


def _quadrature(member: Member, subdivisions: int = _SUBDIVISIONS) -> _Quadrature:
    stations = fe.stations(member)
    nodes, weights = np.polynomial.legendre.leggauss(_GAUSS_POINTS)
    xs, ws, segs = [], [], []
    for a, b in zip(stations[:-1], stations[1:], strict=True):
        seg = member.segment_index(0.5 * (a + b))
        edges = np.linspace(a, b, subdivisions + 1)
        half = 0.5 * np.diff(edges)[:, None]
        mid = 0.5 * (edges[:-1] + edges[1:])[:, None]
        xs.append((mid + half * nodes[None, :]).ravel())
        ws.append((half * weights[None, :]).ravel())
        segs.append(np.full(xs[-1].size, seg))
    seg_idx = np.concatenate(segs)
    EI = np.array([s.bending_stiffness for s in member.segments])[seg_idx]
    m = np.array([s.mass_per_length for s in member.segments])[seg_idx]
    return _Quadrature(np.concatenate(xs), np.concatenate(ws), EI, m)


def _energy_matrices(
    member: Member, trials: list[Trial], quad: _Quadrature
) -> tuple[np.ndarray, np.ndarray]:
    """Stiffness and mass Gram matrices of the trial functions [N/m and kg, per unit^2]."""
    vals = [t(quad.x) for t in trials]
    W = np.array([v[0] for v in vals])
    D1 = np.array([v[1] for v in vals])
    D2 = np.array([v[2] for v in vals])
    if not (np.all(np.isfinite(W)) and np.all(np.isfinite(D1)) and np.all(np.isfinite(D2))):
        raise InputError(
            "estimate.shape",
            None,
            "a shape that is finite, with finite first and second derivatives, along the whole "
            "member",
        )
    K = (D2 * (quad.EI * quad.weight)) @ D2.T
    if member.axial_force != 0.0:
        K += member.axial_force * (D1 * quad.weight) @ D1.T
    M = (W * (quad.m * quad.weight)) @ W.T
    for sp in member.springs:
        w, d1, _ = _point(trials, sp.at)
        K += sp.stiffness * np.outer(w, w) + sp.rotational_stiffness * np.outer(d1, d1)
    for pm in member.masses:
        w, d1, _ = _point(trials, pm.at)
        M += pm.mass * np.outer(w, w) + pm.rotary_inertia * np.outer(d1, d1)
    return K, M


def _point(trials: list[Trial], at: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    vals = [t(np.array([at])) for t in trials]
    return tuple(np.array([v[i][0] for v in vals]) for i in range(3))  # type: ignore[return-value]


def _without_rigid(
    member: Member, trials: list[Trial], quad: _Quadrature
) -> tuple[np.ndarray, np.ndarray, int]:
    """Gram matrices of the trials made mass-orthogonal to the rigid motions."""
    rigid = _rigid_trials(member)
    K, M = _energy_matrices(member, rigid + trials, quad)
    r = len(rigid)
    if r == 0:
        return K, M, 0
    # Projection P = [-Mrr^-1 Mrt; I] maps trial coefficients to rigid-free combinations.
    Mrr, Mrt = M[:r, :r], M[:r, r:]
    n = len(trials)
    P = np.vstack([-np.linalg.solve(Mrr, Mrt), np.eye(n)])
    return P.T @ K @ P, P.T @ M @ P, r


# --- admissibility -------------------------------------------------------------------------------


def admissibility(
    member: Member,
    formula: Formula,
    facts: ShapeFacts,
    key: str = "estimate.shape",
    text: str | None = None,
) -> tuple[str, ...]:
    """Check an expression shape against the geometric conditions of every support.

    Conditions at the ends are decided exactly where sympy could (see
    :func:`calc.symbolic.shape_facts`), numerically otherwise; at inner supports numerically.

    Parameters
    ----------
    member : Member
    formula : Formula
        Shape in x [m] and L [m], from :func:`calc.expressions.parse_formula`.
    facts : ShapeFacts
        Its symbolic facts.
    key : str
        Key named in the error.
    text : str, optional
        The shape as the user wrote it, quoted in errors.

    Returns
    -------
    tuple of str
        Notes on unmet natural (force) conditions, which only cost accuracy.

    Raises
    ------
    InputError
        Where a geometric condition is violated: the quotient could then fall
        below the true frequency.
    """
    from beamtone.calc.expressions import derivatives

    L = member.length
    shown = text if text is not None else facts.expression
    samples = np.linspace(0.0, L, 201)
    with np.errstate(all="ignore"):
        w, d1, _ = derivatives(formula, samples, L)
        scale_w = float(np.nanmax(np.abs(w)))
        scale_d = float(np.nanmax(np.abs(d1))) * L
    if not math.isfinite(scale_w) or scale_w == 0.0:
        raise InputError(key, shown, "a shape that is finite and not zero along the member")
    scale = max(scale_w, scale_d)

    def vanishes(order: int, end: str | None, at: float) -> bool:
        if end is not None:
            state = facts.ends.get(f"{order}@{end}", "unknown")
            if state != "unknown":
                return state == "zero"
        with np.errstate(all="ignore"):
            v = float(derivatives(formula, np.array([at]), L)[order][0]) * (L if order else 1.0)
        return math.isfinite(v) and abs(v) <= 1e-10 * scale

    notes: list[str] = []
    for where, kind in supports(member):
        holds_w, holds_slope = HOLDS[kind]
        end: str | None = None
        if where == 0.0:
            end, name = "0", "x = 0"
        elif where == L:
            end, name = "L", "x = L"
        else:
            name = f"x = {where:.6g} m"
        if holds_w and not vanishes(0, end, where):
            raise InputError(
                key,
                shown,
                f"a shape with w = 0 at the {kind} support at {name}",
                "a shape that moves a support can give an estimate below the true frequency",
            )
        if holds_slope and not vanishes(1, end, where):
            raise InputError(
                key,
                shown,
                f"a shape with w' = 0 at the {kind} support at {name}",
                "a shape that turns a clamped or guided support can underestimate the frequency",
            )
        if end is not None:
            natural = {"pinned": [(2, "w''")], "guided": [(3, "w'''")]}
            natural["free"] = [(2, "w''"), (3, "w'''")]
            for order, label in natural.get(kind, []):
                if member.axial_force == 0.0 and facts.ends.get(f"{order}@{end}") != "zero":
                    notes.append(
                        f"the shape does not meet the natural condition {label} = 0 at the {kind} "
                        f"end ({name}); the estimate stays an upper bound, only less close"
                    )
    return tuple(notes)


# --- Rayleigh ------------------------------------------------------------------------------------


def rayleigh_shape(member: Member, text: str, key: str = "estimate.shape") -> RayleighEstimate:
    """Rayleigh's quotient for an expression shape (or a built-in shape's name).

    Parameters
    ----------
    member : Member
    text : str
        ``"polynomial"``, ``"trigonometric"``, or an expression in x and L [m].
    key : str
        Key named in errors.

    Returns
    -------
    RayleighEstimate

    Raises
    ------
    InputError
        For an unparsable or hostile expression, or one that violates a geometric condition.
    """
    name = text.strip()
    expression = named_shape(member, name) if name in SHAPE_NAMES else name
    parsed, facts = _shape(expression, key)
    notes = admissibility(member, parsed, facts, key, text)
    if facts.note is not None:  # sympy's budget ran out: say how the quotient was found
        notes = (*notes, facts.note)
    quad = _quadrature(member)
    trial = _expression_trial(parsed, facts, member.length, key)
    K, M, rigid = _without_rigid(member, [trial], quad)
    if not M[0, 0] > 0.0:
        raise InputError(key, expression, "a shape that is not a rigid-body motion of the member")
    omega2 = float(K[0, 0] / M[0, 0])
    omega = math.sqrt(max(omega2, 0.0))
    formula = coefficient = exact = check = None
    if rigid == 0:
        symbolic = _symbolic(member, parsed, facts)
        if symbolic is not None:
            omega_sym, formula, coefficient, exact = symbolic
            check = abs(omega_sym - omega) / omega_sym
            omega = omega_sym
    if rigid:
        notes = (*notes, "the shape was made mass-orthogonal to the rigid-body motions")
    return RayleighEstimate(
        shape=name,
        expression=facts.expression,
        omega=omega,
        frequency_hz=omega / (2.0 * math.pi),
        formula=formula,
        coefficient=coefficient,
        coefficient_exact=exact,
        numeric_check=check,
        notes=notes,
    )


def _symbolic(
    member: Member, formula: Formula, facts: ShapeFacts
) -> tuple[float, str, float | None, str | None] | None:
    """Closed-form quotient for a uniform member, from the integrals sympy found."""
    from beamtone.calc.expressions import derivatives
    from beamtone.calc.symbolic import integral_values

    if not member.is_uniform:
        return None
    integrals = integral_values(facts, member.length)
    if integrals is None or facts.integral_texts is None:
        return None
    I2, I1, I0 = integrals
    seg = member.segments[0]
    EI, m, L, P = seg.bending_stiffness, seg.mass_per_length, member.length, member.axial_force
    num = EI * I2 + P * I1
    den = m * I0
    with np.errstate(all="ignore"):
        for sp in member.springs:
            w, s, _ = (float(v[0]) for v in derivatives(formula, np.array([sp.at]), L))
            num += sp.stiffness * w * w + sp.rotational_stiffness * s * s
        for pm in member.masses:
            w, s, _ = (float(v[0]) for v in derivatives(formula, np.array([pm.at]), L))
            den += pm.mass * w * w + pm.rotary_inertia * s * s
    if not (num >= 0.0 and den > 0.0 and math.isfinite(num / den)):
        return None
    omega = math.sqrt(num / den)
    bare = not (member.springs or member.masses or P)
    if bare and facts.c_squared_value is not None and facts.c_squared_value >= 0.0:
        coefficient = math.sqrt(facts.c_squared_value)
        formula_text = f"omega = {coefficient:.4g}*sqrt(EI/(m*L^4)), with C^2 = {facts.c_squared}"
        return omega, formula_text, coefficient, facts.c_squared
    text2, text1, text0 = facts.integral_texts
    parts = [f"EI*({text2})"]
    if P:
        parts.append(f"P*({text1})")
    if any(sp.stiffness for sp in member.springs):
        parts.append("sum k*w(a)^2")
    if any(sp.rotational_stiffness for sp in member.springs):
        parts.append("sum k_r*w'(a)^2")
    dens = [f"m*({text0})"]
    if any(pm.mass for pm in member.masses):
        dens.append("sum M*w(a)^2")
    if any(pm.rotary_inertia for pm in member.masses):
        dens.append("sum J*w'(a)^2")
    formula_text = f"omega^2 = ({' + '.join(parts)}) / ({' + '.join(dens)})"
    return omega, formula_text, None, None


def static_shape(member: Member, elements: int = 96) -> tuple[fe.Mesh, fe.System, np.ndarray, str]:
    """Deflection under the member's own weight and its attached weights, acting across it.

    Where the member has rigid-body freedom the load is made mass-orthogonal to the rigid
    motions, and so is the deflection (a bordered solve).  Where that leaves little of the
    weight (nothing restrains the member across), loads whose inertia varies linearly and
    parabolically along the member are tried as well and the lowest quotient kept; every
    candidate is admissible, so each is an upper bound.

    Returns
    -------
    mesh, system, u, load
        The mesh, its assembled system, the deflection on the free DOFs, and a description
        of the load that produced it.
    """
    import scipy.sparse

    mesh = fe.build_mesh(member, elements)
    system = fe.assemble(member, mesh)
    weight = system.influence_load * G0
    rigid = rigid_body_count(member)
    label = "deflection under the member's own weight and the weights it carries"
    if rigid == 0:
        return mesh, system, _solve_static(system.K, weight), label
    R = fe.rigid_vectors(member, mesh, system)
    MR = system.M @ R
    bordered = scipy.sparse.bmat([[system.K, scipy.sparse.csr_matrix(MR)], [MR.T, None]]).tocsc()
    full = np.zeros(system.n_full)
    xi = (mesh.x - 0.5 * member.length) / member.length
    candidates = [(weight, label)]
    for power, name in ((1, "linearly"), (2, "parabolically")):
        full[0::2] = xi**power
        candidates.append((system.M @ full[system.free], f"a load whose inertia varies {name}"))
    best: tuple[float, np.ndarray, str] | None = None
    for load, name in candidates:
        flex = load - MR @ (R.T @ load)
        if np.linalg.norm(flex) <= 1e-6 * np.linalg.norm(load):
            continue
        u = _solve_static(bordered, np.concatenate([flex, np.zeros(rigid)]))[: len(flex)]
        lam = float(fe.strain_energy_quotient(member, mesh, system, u[:, None])[0])
        if best is None or lam < best[0]:
            best = (lam, u, name)
    assert best is not None
    return mesh, system, best[1], best[2] + ", made mass-orthogonal to the rigid-body motions"


def _solve_static(K: Any, f: np.ndarray) -> np.ndarray:
    import scipy.sparse.linalg

    return np.asarray(scipy.sparse.linalg.spsolve(K.tocsc(), f))


def rayleigh_static(member: Member) -> RayleighEstimate:
    """Rayleigh's quotient of the static deflection shape (the default estimate).

    The shape and the quotient come from the finite-element model of the member, so
    the estimate is an upper bound on the fundamental of that model and hence on the
    true one.

    Returns
    -------
    RayleighEstimate
    """
    mesh, system, u, label = static_shape(member)
    lam = float(fe.strain_energy_quotient(member, mesh, system, u[:, None])[0])
    omega = math.sqrt(lam)
    return RayleighEstimate("static", None, omega, omega / (2.0 * math.pi), notes=(label,))


# --- Ritz ----------------------------------------------------------------------------------------


def polynomial_family(member: Member, count: int) -> list[Trial]:
    """Hierarchical polynomials meeting every geometric condition of the supports.

    Function k is of the lowest degree that adds a new direction to the first k - 1,
    so the families for n and n + 1 functions are nested and the Ritz bounds fall
    monotonically as n grows.  The rigid motions the restraints leave free satisfy
    the conditions too; they come first and are counted on top of ``count``.
    Functions are Legendre series on [0, L] for conditioning.

    Parameters
    ----------
    member : Member
    count : int
        Number of flexible functions.

    Returns
    -------
    list of Trial
        ``count`` plus the number of rigid-body modes functions.
    """
    L = member.length
    rows = []
    for where, kind in supports(member):
        holds_w, holds_slope = HOLDS[kind]
        t = 2.0 * where / L - 1.0
        if holds_w:
            rows.append(("w", t))
        if holds_slope:
            rows.append(("d", t))
    dim = count + rigid_body_count(member)
    basis: list[np.ndarray] = []
    degree = 0
    while len(basis) < dim:
        C = np.zeros((len(rows), degree + 1))
        for j in range(degree + 1):
            poly = np.polynomial.Legendre.basis(j)
            slope = poly.deriv()
            for i, (kind, t) in enumerate(rows):
                C[i, j] = poly(t) if kind == "w" else slope(t)
        space = scipy.linalg.null_space(C) if rows else np.eye(degree + 1)
        if space.shape[1] > len(basis):
            if basis:
                B = np.array([np.pad(b, (0, degree + 1 - b.size)) for b in basis]).T
                Q = scipy.linalg.orth(B)
                space = space - Q @ (Q.T @ space)
            new = scipy.linalg.orth(space, rcond=1e-10)
            basis.extend(v / np.max(np.abs(v)) for v in new.T[: dim - len(basis)])
        degree += 1
    return [_legendre_trial(c, L) for c in basis]


def ritz(member: Member, shapes: list[str] | int, key: str = "estimate.shapes") -> RitzResult:
    """Rayleigh-Ritz upper bounds on the lowest flexible modes.

    Parameters
    ----------
    member : Member
    shapes : list of str, or int
        Expressions in x and L, each admissible; or a count N of the built-in
        polynomial family (lowest-degree polynomials meeting every geometric condition).
    key : str
        Key named in errors.

    Returns
    -------
    RitzResult
        Bounds with all functions, and with the first 1, 2, ... of them.
    """
    quad = _quadrature(member)
    if isinstance(shapes, int):
        r = rigid_body_count(member)
        K, M = _energy_matrices(member, polynomial_family(member, shapes), quad)
        rows = [
            _bounds(K[: n + r, : n + r], M[: n + r, : n + r], r, key) for n in range(1, shapes + 1)
        ]
        labels = tuple(f"polynomial family, function {i + 1}" for i in range(shapes))
        return RitzResult(labels, rows[-1], tuple(rows))
    parsed = []
    for i, text in enumerate(shapes):
        item = f"{key}[{i}]"
        formula, facts = _shape(text, item)
        admissibility(member, formula, facts, item, text)
        parsed.append((formula, facts))
    trials = [
        _expression_trial(formula, facts, member.length, f"{key}[{i}]")
        for i, (formula, facts) in enumerate(parsed)
    ]
    K, M, _ = _without_rigid(member, trials, quad)
    rows = [_bounds(K[:n, :n], M[:n, :n], 0, key) for n in range(1, len(trials) + 1)]
    return RitzResult(tuple(facts.expression for _, facts in parsed), rows[-1], tuple(rows))


def _bounds(K: np.ndarray, M: np.ndarray, rigid: int, key: str) -> tuple[float, ...]:
    scale = np.sqrt(np.abs(np.diag(M)))
    if np.any(scale == 0.0):
        raise InputError(key, None, "shapes that are not rigid-body motions")
    Ks = K / np.outer(scale, scale)
    Ms = M / np.outer(scale, scale)
    if np.linalg.cond(Ms) > 1e12:
        raise InputError(key, None, "linearly independent shapes (some are combinations of others)")
    lam = scipy.linalg.eigh(Ks, Ms, eigvals_only=True)[rigid:]
    return tuple(float(math.sqrt(max(v, 0.0)) / (2.0 * math.pi)) for v in lam)


# --- Dunkerley -----------------------------------------------------------------------------------


def dunkerley(member: Member) -> DunkerleyBound:
    """Dunkerley's lower bound from the static flexibility of the supported member.

    sum_i 1/omega_i^2 = int m(x) a(x, x) dx + sum M a(x_j, x_j) + sum J b(x_j, x_j), with
    a the deflection at x under a unit force at x and b the rotation under a unit moment.
    Hermite beam elements give these nodally exact for a member without axial force, and on
    each interval between stations a(x, x) is a polynomial of degree at most six, so Gauss
    quadrature with the quadrature points as nodes gives the sum exactly (to round-off).

    With an axial force the elements are no longer exact, so the sum is taken for the member
    without it, which is still a bound under tension (tension only raises every frequency);
    under compression no lower bound is given.  Where the sum is too uncertain
    (``DUNKERLEY_UNCERTAINTY_LIMIT``) no bound is given either; ``reason`` says why.

    Returns
    -------
    DunkerleyBound
    """
    P = member.axial_force
    if P == 0.0:
        return _limited(_dunkerley_sum(member))
    from dataclasses import replace

    unloaded = replace(member, axial_force=0.0)
    if rigid_body_count(unloaded):
        return DunkerleyBound(
            None,
            None,
            "without its axial force the member could move as a rigid body, and Dunkerley's "
            "sum is a bound only for the member without it: no lower bound",
            exact=False,
        )
    base = _limited(_dunkerley_sum(unloaded))
    if base.frequency_hz is None or base.trace is None:
        return replace(base, exact=False)
    if P > 0.0:
        note = "the bound of the member without its tension, which only raises the frequencies"
        return replace(base, exact=False, note=note)
    return DunkerleyBound(
        None,
        None,
        "a compression lowers the frequencies below the sum of the member without it, and "
        "the sum with it needs a flexibility the elements do not give exactly: no lower bound",
        exact=False,
    )


def _limited(bound: DunkerleyBound) -> DunkerleyBound:
    """No bound where the sum's own round-off makes it unreliable."""
    if bound.frequency_hz is None or bound.uncertainty <= DUNKERLEY_UNCERTAINTY_LIMIT:
        return bound
    return DunkerleyBound(
        None,
        bound.trace,
        f"the flexibility is too ill-conditioned here (Dunkerley's sum uncertain by about "
        f"{bound.uncertainty:.1g}), so it gives no reliable lower bound",
        bound.exact,
        bound.uncertainty,
    )


def _dunkerley_sum(member: Member) -> DunkerleyBound:
    """Dunkerley's sum of a member without axial force, with its round-off uncertainty."""
    if rigid_body_count(member):
        return DunkerleyBound(
            None,
            None,
            "the member can move as a rigid body, so its flexibility is unbounded and "
            "Dunkerley's sum gives no lower bound",
        )
    exact = True
    points, weights = np.polynomial.legendre.leggauss(4)
    stations = np.asarray(fe.stations(member))
    lo, hi = stations[:-1, None], stations[1:, None]
    xq = (0.5 * (lo + hi) + 0.5 * (hi - lo) * points).ravel()
    wq = (0.5 * (hi - lo) * weights).ravel()
    mesh = fe.mesh_through(member, xq)
    system = fe.assemble(member, mesh)
    # every interval between stations lies in one segment (segment ends are stations)
    per_length = np.array([s.mass_per_length for s in member.segments])
    middle = 0.5 * (lo[:, 0] + hi[:, 0])
    interval_segment = [member.segment_index(x) for x in middle.tolist()]
    m_of = np.repeat(per_length[interval_segment], len(points))
    # Probes: unit loads whose response, read back the same way, gives each flexibility term.
    # A node's probe reads its deflection (or slope) from the free DOFs; a quadrature point
    # inside an element (only inside the short element of a tethered attachment, whose nodes
    # cannot take more points) reads the element's Hermite interpolation.  One sparse row
    # per probe (no dense n x probes array: 2,500 point masses asked for 7.4 GB that way).
    reads = [_reading_at(mesh, xq)]
    factors = [wq * m_of]
    if member.masses:
        nodes = np.array([mesh.carrier(pm.at)[0] for pm in member.masses])
        mass = np.array([pm.mass for pm in member.masses])
        inertia = np.array([pm.rotary_inertia for pm in member.masses])
        # deflection then slope of each mass in turn, those it has
        rows = np.stack([2 * nodes, 2 * nodes + 1], axis=1).ravel()
        amounts = np.stack([mass, inertia], axis=1).ravel()
        rows, amounts = rows[amounts != 0.0], amounts[amounts != 0.0]
        reads.append(_unit_rows(rows, len(mesh.x)))
        factors.append(amounts)
    probes = (scipy.sparse.vstack(reads).tocsr() @ _observer(system)).tocsr()
    probes.eliminate_zeros()
    used = np.diff(probes.indptr) > 0  # a probe at a held point reads nothing
    diag = _flexibilities(system.K, probes[used])
    trace = float(np.sum(np.concatenate(factors)[used] * diag))
    if not trace > 0.0 or not math.isfinite(trace):
        return DunkerleyBound(None, None, "the flexibility could not be computed", exact)
    # cond(K) ~ ||K|| ||K^-1||, both estimated from diagonals (K symmetric positive definite)
    # (the relative unknowns of tethered nodes, stiff by construction, are left out: the short
    # element's stiffness acts on them alone and costs no accuracy elsewhere)
    relative = np.isin(system.free // 2, [t.node for t in system.tethers])
    stiffest = float(np.max(np.abs(system.K.diagonal()[~relative]), initial=0.0))
    condition = 2.0 * stiffest * float(np.max(np.abs(diag)))
    uncertainty = float(10.0 * np.finfo(float).eps * condition)
    return DunkerleyBound(1.0 / (2.0 * math.pi * math.sqrt(trace)), trace, None, exact, uncertainty)


# --- bracket and equivalent model ----------------------------------------------------------------


def bracket(lower: DunkerleyBound, result: fe.FEResult, upper: RayleighEstimate) -> Bracket:
    """Place the FE fundamental between Dunkerley's and Rayleigh's bounds.

    Only bounds that exist are used: where Dunkerley's sum gives no lower bound the status
    says ``"upper bound only"`` and ``lower_reason`` says why.

    Returns
    -------
    Bracket
        ``inside`` is False (and the message says so loudly) if the FE value falls outside
        a bound by more than its estimated error and the bound's uncertainty, which must not
        happen.
    """
    mode = result.modes[0]
    f = mode.frequency_hz
    tol = max(mode.estimated_error, 1e-12) * f
    lo = lower.frequency_hz
    inside = bool(
        f <= upper.frequency_hz + tol and (lo is None or lo * (1.0 - lower.uncertainty) - tol <= f)
    )
    width = None if lo is None else (upper.frequency_hz - lo) / f
    if not inside:
        status = "check failed"
        message = (
            "CHECK FAILED: the finite-element fundamental lies outside the Dunkerley-Rayleigh "
            "bracket; the model or its input is suspect, do not use these results"
        )
    elif lo is None:
        status = "upper bound only"
        message = (
            f"FE fundamental below the Rayleigh bound by {100 * (upper.frequency_hz - f) / f:.3g} %"
            " (no lower bound)"
        )
    else:
        status = "bracketed"
        message = (
            f"lower {lo:.6g} Hz <= FE {f:.6g} Hz <= upper {upper.frequency_hz:.6g} Hz "
            f"(width {100 * width:.3g} % of FE)"
        )
    reason = lower.reason if lo is None else None
    return Bracket(lo, f, upper.frequency_hz, width, inside, message, status, reason)


def equivalent_system(
    member: Member, result: fe.FEResult, at: float | None = None
) -> EquivalentSystem:
    """Equivalent single-degree-of-freedom model of the fundamental at a point.

    Parameters
    ----------
    member : Member
    result : FEResult
        The solved modes.
    at : float, optional
        Reference point [m]; by default the point of largest deflection.

    Returns
    -------
    EquivalentSystem
        Effective mass m_e = 1/phi(at)^2 for the mode phi normalized to unit modal mass
        [kg], and effective stiffness k_e = omega_1^2 m_e [N/m].

    Raises
    ------
    InputError
        Where the reference point does not move in the fundamental.
    """
    mode = result.modes[0]
    if at is None:
        i = int(np.argmax(np.abs(mode.w_modal)))
        at = float(mode.x[i])
    phi = fe.interpolate(mode.x, mode.w_modal, mode.theta_modal, at)
    peak = float(np.max(np.abs(mode.w_modal)))
    if abs(phi) <= 1e-6 * peak or not math.isfinite(phi):
        raise InputError(
            "estimate.reference",
            f"{at:.6g} m",
            "a point that moves in the fundamental mode (this one is at or near a node of it)",
        )
    if not -POSITION_TOLERANCE * member.length <= at <= member.length * (1 + POSITION_TOLERANCE):
        raise InputError("estimate.reference", f"{at:.6g} m", "a point on the member")
    mass = 1.0 / phi**2
    return EquivalentSystem(at, mass, mode.omega**2 * mass)


# --- flexibility terms without dense arrays ------------------------------------------------------


def _reading_at(mesh: fe.Mesh, x: np.ndarray) -> scipy.sparse.csr_matrix:
    """Rows giving the deflection at each of ``x`` [m] from the nodal values.

    Columns are the physical nodal values (2 j: deflection [m], 2 j + 1: slope [rad]); a
    point at a node reads that node's deflection, a point inside an element the element's
    Hermite interpolation.
    """
    last = len(mesh.x) - 2
    i = np.clip(np.searchsorted(mesh.x, x) - 1, 0, last)
    at_left, at_right = mesh.x[i] == x, mesh.x[i + 1] == x
    h = mesh.x[i + 1] - mesh.x[i]
    t = (x - mesh.x[i]) / h
    weights = np.stack(
        [
            1 - 3 * t**2 + 2 * t**3,
            h * (t - 2 * t**2 + t**3),
            3 * t**2 - 2 * t**3,
            h * (t**3 - t**2),
        ],
        axis=1,
    )
    columns = 2 * i[:, None] + np.arange(4)
    weights[at_left | at_right] = 0.0
    weights[at_left, 0] = 1.0
    weights[at_right & ~at_left, 2] = 1.0
    rows = np.repeat(np.arange(len(x)), 4)
    shape = (len(x), 2 * len(mesh.x))
    return scipy.sparse.csr_matrix((weights.ravel(), (rows, columns.ravel())), shape=shape)


def _unit_rows(columns: np.ndarray, nodes: int) -> scipy.sparse.csr_matrix:
    """Rows picking the physical nodal values ``columns`` (2 j deflection, 2 j + 1 slope)."""
    ones = np.ones(len(columns))
    return scipy.sparse.csr_matrix(
        (ones, (np.arange(len(columns)), columns)), shape=(len(columns), 2 * nodes)
    )


def _observer(system: fe.System) -> scipy.sparse.csr_matrix:
    """Physical nodal values (deflection [m], slope [rad]) from the free DOFs, sparse.

    Row 2 j gives node j's deflection and row 2 j + 1 its slope (the slope DOFs are scaled
    by ``system.scale``); a held DOF's row is empty.  The rows of
    :meth:`calc.fe.System.observe`, all at once.
    """
    n = len(system.free)
    if system.T is None:
        ones = np.ones(n)
        tie = scipy.sparse.csr_matrix((ones, (system.free, np.arange(n))), shape=(system.n_full, n))
    else:
        tie = scipy.sparse.csr_matrix(system.T[:, system.free])
    tie.sum_duplicates()
    row = np.repeat(np.arange(system.n_full), np.diff(tie.indptr))
    tie.data = np.where(row % 2 == 1, tie.data / system.scale, tie.data)
    return tie


def _flexibilities(K: Any, probes: scipy.sparse.csr_matrix) -> np.ndarray:
    """v^T K^-1 v for each row v of ``probes`` (sparse) of a symmetric positive definite K.

    Each probe touches a few neighbouring unknowns, so only the band of K^-1 is needed:
    it is found from K's banded Cholesky factor (:func:`_band_of_inverse`) in O(n p^2) time
    and O(n p) memory for bandwidth p.  A probe reaching beyond the band, or a K that is not
    positive definite, takes sparse solves in blocks of probes instead.
    """
    n = K.shape[0]
    count = probes.shape[0]
    if count == 0:
        return np.zeros(0)
    coo = K.tocoo()
    p = int(np.max(np.abs(coo.row - coo.col), initial=0))
    starts = probes.indptr[:-1]
    reach = np.maximum.reduceat(probes.indices, starts)
    span = int(np.max(reach - np.minimum.reduceat(probes.indices, starts)))
    if span <= p <= 16:
        band = np.zeros((p + 1, n))
        lower = coo.row >= coo.col
        band[(coo.row - coo.col)[lower], coo.col[lower]] = coo.data[lower]
        try:
            factor = scipy.linalg.cholesky_banded(band, lower=True)
        except np.linalg.LinAlgError:
            factor = None
        if factor is not None:
            Z = _band_of_inverse(factor)
            # the probes' entries side by side, padded with zero weights on a real index
            width = int(np.max(np.diff(probes.indptr)))
            place = np.arange(probes.nnz) - np.repeat(starts, np.diff(probes.indptr))
            owner = np.repeat(np.arange(count), np.diff(probes.indptr))
            index = np.repeat(probes.indices[starts][:, None], width, axis=1)
            values = np.zeros((count, width))
            index[owner, place] = probes.indices
            values[owner, place] = probes.data
            out = np.zeros(count)
            for a in range(width):
                for b in range(width):
                    ia, ib = index[:, a], index[:, b]
                    out += values[:, a] * values[:, b] * Z[np.abs(ia - ib), np.minimum(ia, ib)]
            return out
    return _flexibilities_by_solves(K, probes)


_INVERSE_BLOCK = 32  # rows of a block of the band of K^-1 (measured: 24-64 all alike)


def _band_of_inverse(factor: np.ndarray) -> np.ndarray:
    """Z[d, i] = (K^-1)[i + d, i] for d <= p, from K's lower banded Cholesky factor.

    The selected inverse (Takahashi, Fagan and Chin, 1973; Z = K^-1 satisfies
    L^T Z = L^-1, whose upper triangle is diagonal) taken in blocks of b >= p rows, where
    L is block bidiagonal with diagonal blocks L_k and sub-diagonal blocks C_k:

        Z_k,k+1 = -G_k Z_k+1,k+1,   Z_k,k = L_k^-T L_k^-1 + G_k Z_k+1,k+1 G_k^T,

    with G_k = L_k^-T C_k^T, from the last block backwards.  The block inverses come all
    at once; the sweep is one pair of small products a block (O(n b^2) time, O(n b) memory).
    """
    p = factor.shape[0] - 1
    n = factor.shape[1]
    b = max(_INVERSE_BLOCK, p)
    blocks = -(-n // b)
    size = blocks * b
    padded = np.zeros((p + 1, size))  # past n: an identity block, decoupled from the rest
    padded[:, :n] = factor
    padded[0, n:] = 1.0
    column = np.arange(size)
    for d in range(1, p + 1):  # the factor's unused corner (below the last row) stays zero
        padded[d, column + d >= n] = 0.0
    r = np.arange(b)[:, None]
    c = np.arange(b)[None, :]
    start = (b * np.arange(blocks))[:, None, None]
    d = r - c
    diagonal = np.where((d >= 0) & (d <= p), padded[np.clip(d, 0, p), start + c], 0.0)
    d = r + b - c  # C_k[r, c] = L[(k + 1) b + r, k b + c]
    below = np.where(d <= p, padded[np.clip(d, 0, p), start[:-1] + c], 0.0)
    identity = np.broadcast_to(np.eye(b), diagonal.shape)
    inverse = scipy.linalg.solve_triangular(diagonal, identity, lower=True)  # batched
    inverse_t = np.swapaxes(inverse, 1, 2)
    base = inverse_t @ inverse
    gain = inverse_t[:-1] @ np.swapaxes(below, 1, 2)
    Zd = np.empty((blocks, b, b))
    Zs = np.empty((max(blocks - 1, 0), b, b))  # Z_k+1,k
    Zd[-1] = base[-1]
    for k in range(blocks - 2, -1, -1):
        product = gain[k] @ Zd[k + 1]
        Zs[k] = -product.T
        Zd[k] = base[k] + product @ gain[k].T
    # read the band back: (K^-1)[i + d, i] lies in block k = i // b, in Z_k,k or Z_k+1,k
    i = np.arange(n)
    k, local = i // b, i % b
    out = np.empty((p + 1, n))
    for d in range(p + 1):
        row = local + d
        inside = row < b
        out[d] = 0.0
        out[d, inside] = Zd[k[inside], row[inside], local[inside]]
        outside = ~inside & (i + d < n)
        out[d, outside] = Zs[k[outside], row[outside] - b, local[outside]]
    return out


def _flexibilities_by_solves(K: Any, probes: scipy.sparse.csr_matrix) -> np.ndarray:
    """v^T K^-1 v by sparse solves, a block of probes at a time (bounded memory)."""
    import scipy.sparse.linalg

    lu = scipy.sparse.linalg.splu(K.tocsc())
    out = np.empty(probes.shape[0])
    block = 256
    for start in range(0, probes.shape[0], block):
        V = probes[start : start + block].T.toarray()
        out[start : start + V.shape[1]] = np.einsum("ij,ij->j", V, lu.solve(V))
    return out
