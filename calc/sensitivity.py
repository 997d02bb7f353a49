"""First-order eigenvalue sensitivities from the solution already computed (no extra eigen solve).

For a mode phi normalized to unit modal mass, the derivative of its eigenvalue
lambda = omega^2 with respect to an input p is

    d lambda / d p = phi^T (dK/dp - lambda dM/dp) phi

(R. L. Fox and M. P. Kapoor, "Rates of change of eigenvalues and eigenvectors",
AIAA Journal 6(12), 1968).  The quadratic forms are summed element by element from the
mode's nodal deflections and slopes, in the same stable form the solver uses for its
eigenvalues (curvatures and chord rotations from nodal differences), never through an
assembled matrix.

The derivative of the assembly is taken in one pass for every kind of input:
coefficients that K and M are linear in (E, rho, added mass, masses, springs, axial
force) enter exactly; section dimensions through the derivative of the section's
properties (a central difference of the property formulas, exact for the linear ones);
lengths and positions move the mesh nodes (each node moves with the stations around it),
and the element matrices' dependence on the node positions is differentiated by a
complex step (W. Squire and G. Trapp, SIAM Review 40(1), 1998), which has no
subtractive cancellation.  An attachment that moves off a node placed by something else
(a mass at the end, at a support) sees the deflection w + e theta and the slope
theta + e kappa there, kappa the mean of the curvatures on either side (0 beyond an end):
the rate at which a rotary inertia or a rotational spring sliding along the member
meets the moment's jump at it.  The eigen solution is not repeated.

A support stiffness that ranges to rigid is varied as its compliance c = 1/k from 0; at
c = 0 the derivative is -r^2, where r is the support's reaction to the mass-normalized
mode (the first-order term of lambda(k) = lambda_rigid - r^2/k + ...).

Derivatives of repeated eigenvalues are not defined; beamtone's one-plane modes are
simple.

Both bending theories are covered: Euler-Bernoulli (Hermite cubic elements) and Timoshenko
(the interdependent-interpolation element of :mod:`calc.fe.timoshenko`, whose stiffness form
is summed from its own difference quotients and whose mass form from its consistent mass
matrix; the shear stiffness kappa G A and the rotary inertia rho I enter like EI and m).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from beamtone.calc import fe
from beamtone.calc.compliance import support_position
from beamtone.calc.errors import InputError
from beamtone.calc.fe import FEResult
from beamtone.calc.model import POSITION_TOLERANCE, Member
from beamtone.calc.tolerances import COMPLIANCE, Design, Tolerance, support_key, vary

__all__ = [
    "Sensitivities",
    "Layout",
    "Coefficients",
    "sensitivities",
    "element_forms",
    "layout",
    "coefficients",
]

EULER_BERNOULLI = "euler-bernoulli"
_STEP = 1e-6  # relative central-difference step on the inputs (property formulas only)
_COMPLEX_STEP = 1e-20  # relative complex step on the mesh and the coefficients


@dataclass(frozen=True)
class Sensitivities:
    """First-order sensitivities of every reported mode to every toleranced input.

    Attributes
    ----------
    keys : tuple of str
        Key path of each input.
    nominal : ndarray, shape (inputs,)
        Nominal value of each input [SI, or compliance for a support ranging to rigid].
    frequencies_hz : ndarray, shape (modes,)
        Nominal natural frequencies [Hz].
    eigenvalue_derivatives : ndarray, shape (modes, inputs)
        d(omega^2)/dp [rad^2/s^2 per SI unit of the input].
    """

    keys: tuple[str, ...]
    nominal: np.ndarray
    frequencies_hz: np.ndarray
    eigenvalue_derivatives: np.ndarray

    @property
    def frequency_derivatives(self) -> np.ndarray:
        """df/dp [Hz per SI unit of the input], shape (modes, inputs)."""
        omega = 2.0 * math.pi * self.frequencies_hz
        return self.eigenvalue_derivatives / (2.0 * omega[:, None] * 2.0 * math.pi)

    @property
    def elasticities(self) -> np.ndarray:
        """(p/f) df/dp: percent change of each mode per percent of each input [-].

        NaN for an input whose nominal value is zero (a support at rigid, no added mass).
        """
        with np.errstate(divide="ignore", invalid="ignore"):
            out = self.frequency_derivatives * self.nominal[None, :] / self.frequencies_hz[:, None]
        out[:, self.nominal == 0.0] = np.nan
        return out


# --- the quadratic forms ---------------------------------------------------------------------


@dataclass(frozen=True)
class Coefficients:
    """What the quadratic forms need of a member on a fixed mesh layout, in SI.

    Attributes
    ----------
    EI, m : ndarray, shape (elements,)
        Bending stiffness [N*m^2] and mass per length [kg/m] of each element.
    P : float
        Axial force [N], tension positive.
    spring_k, spring_kr, spring_at : ndarray
        Springs: stiffness [N/m], rotational stiffness [N*m/rad], position [m].
    mass_m, mass_j, mass_at : ndarray
        Point masses: mass [kg], rotary inertia [kg*m^2], position [m].
    points : dict
        Position [m] of every placed thing by label: ``("b", k)`` segment boundaries,
        ``("s", i)`` inner supports, ``("m", i)`` masses, ``("k", i)`` springs.
    shear_stiffness, rho_i : ndarray or None
        Shear stiffness kappa G A [N] (inf: none known) and rotary inertia rho I [kg*m] of
        each element where the member is solved by the Timoshenko theory, else None.
    """

    EI: np.ndarray  # per element
    m: np.ndarray  # per element
    P: float
    spring_k: np.ndarray
    spring_kr: np.ndarray
    spring_at: np.ndarray
    mass_m: np.ndarray
    mass_j: np.ndarray
    mass_at: np.ndarray
    points: dict[tuple[str, int], float]  # boundaries, inner supports, masses, springs
    shear_stiffness: np.ndarray | None = (
        None  # kappa G A per element, Timoshenko theory (inf: no shear flexibility)
    )
    rho_i: np.ndarray | None = None  # per element, Timoshenko theory


def coefficients(member: Member, element_segment: np.ndarray) -> Coefficients:
    """The coefficients of ``member`` on elements whose segments are ``element_segment``."""
    segs = member.segments
    points = {("b", k): x for k, x in enumerate(member.boundaries)}
    points.update({("s", i): s.at for i, s in enumerate(member.inner_supports)})
    points.update({("m", i): p.at for i, p in enumerate(member.masses)})
    points.update({("k", i): s.at for i, s in enumerate(member.springs)})
    shear = _shear(member)
    return Coefficients(
        EI=np.array([s.bending_stiffness for s in segs])[element_segment],
        m=np.array([s.mass_per_length for s in segs])[element_segment],
        P=member.axial_force,
        spring_k=np.array([s.stiffness for s in member.springs], dtype=float),
        spring_kr=np.array([s.rotational_stiffness for s in member.springs], dtype=float),
        spring_at=np.array([s.at for s in member.springs], dtype=float),
        mass_m=np.array([p.mass for p in member.masses], dtype=float),
        mass_j=np.array([p.rotary_inertia for p in member.masses], dtype=float),
        mass_at=np.array([p.at for p in member.masses], dtype=float),
        points=points,
        shear_stiffness=None if shear is None else shear[0][element_segment],
        rho_i=None if shear is None else shear[1][element_segment],
    )


def _shear(member: Member) -> tuple[np.ndarray, np.ndarray] | None:
    """Each segment's kappa G A [N] and rho I [kg*m] under the Timoshenko theory, else None."""
    if getattr(member, "theory", EULER_BERNOULLI) == EULER_BERNOULLI:
        return None
    from beamtone.calc.fe.timoshenko import segment_properties

    return segment_properties(member)


def element_forms(
    x: np.ndarray,
    EI: np.ndarray,
    m: np.ndarray,
    P: float | complex,
    w: np.ndarray,
    theta: np.ndarray,
    kGA: np.ndarray | None = None,
    rho_i: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """phi^T K phi and phi^T M phi of the beam elements, summed element by element.

    Parameters
    ----------
    x : ndarray, shape (nodes,)
        Node positions [m] (complex for a complex step).
    EI, m : ndarray, shape (elements,)
        Bending stiffness [N*m^2] and mass per length [kg/m] of each element.
    P : float
        Axial force [N], tension positive.
    w, theta : ndarray, shape (nodes, modes)
        Nodal deflections and slopes (section rotations for the Timoshenko theory).
    kGA, rho_i : ndarray, shape (elements,), optional
        Shear stiffness kappa G A [N] (inf: none) and rotary inertia rho I [kg*m]: the
        Timoshenko element of :mod:`calc.fe.timoshenko` (its quotient forms and mass).

    Returns
    -------
    stiffness, mass : ndarray, shape (modes,)
        Elastic plus geometric stiffness form and consistent mass form.
    """
    if kGA is not None:
        return _timoshenko_forms(x, EI, m, P, w, theta, kGA, rho_i)
    h = np.diff(x)[:, None]
    EI = np.asarray(EI)[:, None]
    m = np.asarray(m)[:, None]
    d = (w[1:] - w[:-1]) / h
    a = theta[:-1] - d
    b = theta[1:] - d
    k1 = (-4.0 * a - 2.0 * b) / h
    k2 = (2.0 * a + 4.0 * b) / h
    stiffness = (EI * h * (k1 * k1 + k1 * k2 + k2 * k2) / 3.0).sum(axis=0)
    if P != 0.0:
        stiffness = stiffness + P * (h * (d * d + (2.0 * a * a - a * b + 2.0 * b * b) / 15.0)).sum(
            axis=0
        )
    w1, t1, w2, t2 = w[:-1], theta[:-1] * h, w[1:], theta[1:] * h
    mass = (
        m
        * h
        / 420.0
        * (
            156.0 * (w1 * w1 + w2 * w2)
            + 4.0 * (t1 * t1 + t2 * t2)
            + 2.0 * (22.0 * w1 * t1 + 54.0 * w1 * w2 - 13.0 * w1 * t2)
            + 2.0 * (13.0 * t1 * w2 - 3.0 * t1 * t2 - 22.0 * w2 * t2)
        )
    ).sum(axis=0)
    return stiffness, mass


def _timoshenko_forms(
    x: np.ndarray,
    EI: np.ndarray,
    m: np.ndarray,
    P: float | complex,
    w: np.ndarray,
    theta: np.ndarray,
    kGA: np.ndarray,
    rho_i: np.ndarray | None,
) -> tuple[np.ndarray, np.ndarray]:
    """The forms of the Timoshenko element (interdependent interpolation, calc.fe.timoshenko):
    stiffness from its difference quotients, mass from its consistent mass matrix."""
    from beamtone.calc.fe.timoshenko import (
        element_quotient,
        geometric_quotient,
        scaled_element_matrices,
    )

    h1 = np.diff(x)
    EI1 = np.asarray(EI)
    finite = np.isfinite(np.real(kGA))
    safe = np.where(finite, kGA, 1.0)
    phi = np.where(finite, 12.0 * EI1 / (safe * h1 * h1), 0.0)
    h = h1[:, None]
    d = (w[1:] - w[:-1]) / h
    a = theta[:-1] - d
    b = theta[1:] - d
    stiffness = ((EI1 / h1)[:, None] * element_quotient(a, b, phi[:, None])).sum(axis=0)
    if P != 0.0:
        stiffness = stiffness + P * (h * geometric_quotient(d, a, b, phi[:, None])).sum(axis=0)
    rotary = np.zeros_like(h1) if rho_i is None else np.asarray(rho_i)
    _, _, mm = scaled_element_matrices(h1, EI1, np.asarray(m), 1.0, False, phi, rotary)
    u = np.stack([w[:-1], theta[:-1], w[1:], theta[1:]], axis=1)  # (elements, 4, modes)
    mass = np.einsum("eim,eij,ejm->m", u, mm, u)
    return stiffness, mass


def _forms(
    x: np.ndarray,
    model: Coefficients,
    w: np.ndarray,
    theta: np.ndarray,
    spring_node: tuple[np.ndarray, np.ndarray],
    mass_node: tuple[np.ndarray, np.ndarray],
    kappa: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Whole-member phi^T K phi and phi^T M phi (elements, springs and masses).

    An attachment at an offset e from its node sees w + e theta and, given the nodal
    curvatures ``kappa``, the slope theta + e kappa (to first order in e).
    """
    U, T = element_forms(
        x, model.EI, model.m, model.P, w, theta, model.shear_stiffness, model.rho_i
    )
    for (j, e), (a, b), is_mass in (
        (spring_node, (model.spring_k, model.spring_kr), False),
        (mass_node, (model.mass_m, model.mass_j), True),
    ):
        if not len(j):
            continue
        at = w[j] + e[:, None] * theta[j]
        slope = theta[j] if kappa is None else theta[j] + e[:, None] * kappa[j]
        term = (a[:, None] * at * at + b[:, None] * slope * slope).sum(0)
        if is_mass:
            T = T + term
        else:
            U = U + term
    return U, T


def _node_curvature(x: np.ndarray, w: np.ndarray, theta: np.ndarray) -> np.ndarray:
    """Mean of the curvatures on either side of each node [1/m * mode units].

    Beyond an end the curvature is taken as 0: the limit of a vanishing piece between an
    attachment moved off the end and the end itself.
    """
    h = np.diff(x)[:, None]
    d = (w[1:] - w[:-1]) / h
    a = theta[:-1] - d
    b = theta[1:] - d
    kappa = np.zeros_like(w)
    kappa[1:] += 0.5 * (2.0 * a + 4.0 * b) / h  # element's right-end curvature
    kappa[:-1] += 0.5 * (-4.0 * a - 2.0 * b) / h  # element's left-end curvature
    return kappa


# --- sensitivities ---------------------------------------------------------------------------


@dataclass(frozen=True)
class Layout:
    """A mesh's nodes and what each placed thing rides on.

    Attributes
    ----------
    x : ndarray
        Node positions [m].
    element_segment : ndarray of int
        Segment index of each element.
    spring_nodes, mass_nodes : ndarray of int
        Node carrying each spring and each mass.
    point_node : dict
        Node carrying each labelled point (see :class:`Coefficients`).
    station_owner : dict
        For every node placed by a point, the point that places it.
    """

    x: np.ndarray
    element_segment: np.ndarray
    spring_nodes: np.ndarray
    mass_nodes: np.ndarray
    point_node: dict[tuple[str, int], int]  # every point's carrying node
    station_owner: dict[int, tuple[str, int]]  # node -> the point that places it


def layout(member: Member, x: np.ndarray) -> Layout:
    """The layout of ``member`` on the nodes ``x`` [m] of one of its meshes (a mode's ``x``)."""
    mesh = fe.mesh_through(member, x)
    if len(mesh.x) != len(x) or not np.array_equal(mesh.x, x):
        raise AssertionError("the mode's nodes do not form a mesh of this member")
    mid = 0.5 * (x[:-1] + x[1:])
    element_segment = np.array([member.segment_index(float(p)) for p in mid], dtype=int)
    model = coefficients(member, element_segment)
    tol = POSITION_TOLERANCE * member.length
    point_node: dict[tuple[str, int], int] = {}
    owner: dict[int, tuple[str, int]] = {}
    rank = {"b": 0, "s": 1, "k": 2, "m": 3}
    for label, at in sorted(model.points.items(), key=lambda kv: rank[kv[0][0]]):
        j = mesh.node_at(at) if label[0] in "mk" else int(np.argmin(np.abs(x - at)))
        point_node[label] = j
        if abs(x[j] - at) <= tol and j not in owner:
            owner[j] = label
    spring_nodes = np.array([point_node[("k", i)] for i in range(len(member.springs))], dtype=int)
    mass_nodes = np.array([point_node[("m", i)] for i in range(len(member.masses))], dtype=int)
    return Layout(x, element_segment, spring_nodes, mass_nodes, point_node, owner)


def _node_velocity(topo: Layout, velocity: dict[tuple[str, int], float]) -> np.ndarray:
    """Velocity of every node: stations move with their point, others in proportion."""
    nodes = np.array(sorted(topo.station_owner))
    v_station = np.array([velocity[topo.station_owner[j]] for j in nodes])
    return np.interp(topo.x, topo.x[nodes], v_station)


def sensitivities(
    design: Design, result: FEResult, tolerances: Sequence[Tolerance]
) -> Sensitivities:
    """First-order sensitivities of every mode of ``result`` to every toleranced input.

    Parameters
    ----------
    design : Design
        The design that ``result`` solved (``design.solved_member()``).
    result : FEResult
        Its finite-element solution; its mass-normalized mode vectors are used as they are.
    tolerances : sequence of Tolerance
        The inputs; each one's range sets the scale of the derivative steps.

    Returns
    -------
    Sensitivities

    Raises
    ------
    InputError
        For a key the design has no quantity at.
    """
    member = design.solved_member()
    modes = result.modes
    x = modes[0].x
    w = np.column_stack([md.w_modal for md in modes])
    theta = np.column_stack([md.theta_modal for md in modes])
    topo = layout(member, x)
    model = coefficients(member, topo.element_segment)
    spring_e = np.array([model.spring_at[i] - x[j] for i, j in enumerate(topo.spring_nodes)])
    mass_e = np.array([model.mass_at[i] - x[j] for i, j in enumerate(topo.mass_nodes)])
    U, T = _forms(x, model, w, theta, (topo.spring_nodes, spring_e), (topo.mass_nodes, mass_e))
    nom = _Nominal(topo, model, w, theta, U / T, T)
    derivs = np.zeros((len(modes), len(tolerances)))
    for col, tol in enumerate(tolerances):
        if tol.measure == COMPLIANCE and tol.nominal == 0.0:
            derivs[:, col] = -_reaction_squared(design, tol.key, nom)
        else:
            derivs[:, col] = _derivative(design, tol, nom)
    freqs = np.array([md.frequency_hz for md in modes])
    return Sensitivities(
        keys=tuple(t.key for t in tolerances),
        nominal=np.array([t.nominal for t in tolerances], dtype=float),
        frequencies_hz=freqs,
        eigenvalue_derivatives=derivs,
    )


@dataclass(frozen=True)
class _Nominal:
    """The nominal solution as the derivatives need it."""

    topo: Layout
    model: Coefficients
    w: np.ndarray  # (nodes, modes), mass-normalized
    theta: np.ndarray
    lam: np.ndarray  # U / T of each mode [rad^2/s^2]
    T: np.ndarray  # phi^T M phi (1 up to round-off)


def _perturbed(design: Design, tol: Tolerance, value: float) -> Member | None:
    try:
        member = vary(design, {tol.key: tol.key_value(value)}).solved_member()
    except InputError:
        return None
    return member


def _derivative(design: Design, tol: Tolerance, nom: _Nominal) -> np.ndarray:
    topo, model, w, theta, lam, T = nom.topo, nom.model, nom.w, nom.theta, nom.lam, nom.T
    scale = tol.half_width or abs(tol.nominal) or 1.0
    step = _STEP * max(abs(tol.nominal), scale)
    p0 = tol.nominal
    up, down = _perturbed(design, tol, p0 + step), _perturbed(design, tol, p0 - step)
    base = design.solved_member()
    span = 2.0 * step
    if up is None or down is None:
        if up is None and down is None:
            raise InputError(tol.key, tol.written, "a quantity that can be varied near its value")
        span = step
        up, down = (up, base) if up is not None else (base, down)
    seg = topo.element_segment
    hi, lo = coefficients(up, seg), coefficients(down, seg)
    if set(hi.points) != set(model.points) or set(lo.points) != set(model.points):
        raise InputError(tol.key, tol.written, "a variation that keeps the member's layout")

    def rate(a: np.ndarray | float, b: np.ndarray | float) -> np.ndarray:
        return (np.asarray(a, dtype=float) - np.asarray(b, dtype=float)) / span

    velocity = {k: float(rate(hi.points[k], lo.points[k])) for k in model.points}
    v_nodes = _node_velocity(topo, velocity)
    eps = _COMPLEX_STEP * scale
    cx = lambda a, b, c: a + 1j * eps * rate(b, c)  # noqa: E731 - a + i eps da/dp
    moved = Coefficients(
        EI=cx(model.EI, hi.EI, lo.EI),
        m=cx(model.m, hi.m, lo.m),
        P=complex(cx(model.P, hi.P, lo.P)),
        spring_k=cx(model.spring_k, hi.spring_k, lo.spring_k),
        spring_kr=cx(model.spring_kr, hi.spring_kr, lo.spring_kr),
        spring_at=model.spring_at,
        mass_m=cx(model.mass_m, hi.mass_m, lo.mass_m),
        mass_j=cx(model.mass_j, hi.mass_j, lo.mass_j),
        mass_at=model.mass_at,
        points=model.points,
        shear_stiffness=None
        if model.shear_stiffness is None
        else _finite_step(model.shear_stiffness, hi.shear_stiffness, lo.shear_stiffness, eps, span),
        rho_i=None if model.rho_i is None else cx(model.rho_i, hi.rho_i, lo.rho_i),
    )
    x = topo.x + 1j * eps * v_nodes
    # an attachment riding on a node keeps its offset only as far as both move alike
    spring_e = np.array(
        [model.spring_at[i] - topo.x[j] + 1j * eps * (velocity[("k", i)] - v_nodes[j])
         for i, j in enumerate(topo.spring_nodes)], dtype=complex,
    )  # fmt: skip
    mass_e = np.array(
        [model.mass_at[i] - topo.x[j] + 1j * eps * (velocity[("m", i)] - v_nodes[j])
         for i, j in enumerate(topo.mass_nodes)], dtype=complex,
    )  # fmt: skip
    kappa = _node_curvature(topo.x, w, theta)
    U, Tm = _forms(
        x, moved, w, theta, (topo.spring_nodes, spring_e), (topo.mass_nodes, mass_e), kappa
    )
    return (U.imag - lam * Tm.imag) / eps / T


def _finite_step(
    value: np.ndarray, hi: np.ndarray | None, lo: np.ndarray | None, eps: float, span: float
) -> np.ndarray:
    """value + i eps d(value)/dp where finite; an infinite shear stiffness stays as it is."""
    assert hi is not None and lo is not None
    finite = np.isfinite(value) & np.isfinite(hi) & np.isfinite(lo)
    rate = np.where(finite, (np.where(finite, hi, 0.0) - np.where(finite, lo, 0.0)) / span, 0.0)
    return value + 1j * eps * rate


def _reaction_squared(design: Design, key: str, nom: _Nominal) -> np.ndarray:
    """r^2 / T for the support's held DOF named by ``key`` (d lambda/dc = -r^2 at c = 0)."""
    topo, model, w, theta, lam, T = nom.topo, nom.model, nom.w, nom.theta, nom.lam, nom.T
    found = support_key(key)
    assert found is not None, key
    support, rotational = found
    at, _ = support_position(design.member, support)
    j = int(np.argmin(np.abs(topo.x - at)))
    dof = 1 if rotational else 0
    x = topo.x
    r = np.zeros(w.shape[1])
    for e, local in ((j - 1, 1), (j, 0)):
        if not 0 <= e < len(x) - 1:
            continue
        h = x[e + 1] - x[e]
        if model.shear_stiffness is None:
            K, KG, Me = fe.element_matrices(h, model.EI[e], model.m[e], model.P)
        else:
            from beamtone.calc.fe.timoshenko import element_matrices

            rho_i = 0.0 if model.rho_i is None else float(model.rho_i[e])
            K, KG, Me = element_matrices(
                h, model.EI[e], model.m[e], model.shear_stiffness[e], rho_i, model.P
            )
        Ke = K + KG
        u = np.vstack([w[e], theta[e], w[e + 1], theta[e + 1]])
        r += Ke[2 * local + dof] @ u - lam * (Me[2 * local + dof] @ u)
    for i, node in enumerate(topo.spring_nodes):
        if node == j:
            e = model.spring_at[i] - x[j]
            at_w = w[j] + e * theta[j]
            r += model.spring_k[i] * at_w * (e if dof else 1.0) + (
                model.spring_kr[i] * theta[j] if dof else 0.0
            )
    for i, node in enumerate(topo.mass_nodes):
        if node == j:
            e = model.mass_at[i] - x[j]
            at_w = w[j] + e * theta[j]
            r -= lam * (model.mass_m[i] * at_w * (e if dof else 1.0)
                        + (model.mass_j[i] * theta[j] if dof else 0.0))  # fmt: skip
    return r * r / T
