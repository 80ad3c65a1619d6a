"""Viscous analysis of one section: ``solve`` one angle, ``polar`` many with warm starts.

Entry points for the rest of the program (the operating point, commands, case files, loads and
figures): everything they need is in :class:`~panelflow.viscous.results.ViscousResult` and
:class:`ViscousPolar`, with fixed fields. Works on one body with a trailing edge in free flow;
several bodies, plane boundaries and rounded tails are refused with a message (see
``check_supported``).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.errors import InputError
from panelflow.flow.solver import System, factorise
from panelflow.flow.surface import ChordLine
from panelflow.geometry.outline import BLUNT, SMOOTH
from panelflow.geometry.panels import Panels
from panelflow.viscous import closures, displacement
from panelflow.viscous import simultaneous as sim
from panelflow.viscous.results import (LIMITS, SurfaceLayer, ViscousResult, crossings,
                                       squire_young)
from panelflow.viscous.transition import Transition
from panelflow.viscous.wake import WAKE_LENGTH, trailing_edge, wake_nodes

REYNOLDS_RANGE = (1e4, 1e9)
# steps of the angle walk when a point does not converge directly: from a warm start's angle,
# and from zero angle for a cold start, degrees
WARM_STEP = 0.5
COLD_STEP = 1.5
# Newton iterations a warm start gets before the cold start is tried
WARM_BUDGET = 30
# Newton iterations of each try at a polar's angles after one failed
AFTER_FAILURE = 40
# smallest spacing of boundary-layer stations near the trailing edge, and the wake's first
# step, in mean panel lengths (see simultaneous.station_nodes)
STATION_SPACING = 0.5
# ... tried in turn for a cold start that failed with STATION_SPACING: near the trailing edge at
# low Reynolds numbers the layer has an attached and a separated branch, and which one Newton's
# method settles on depends on the stations there (measured on NACA 0012 at Re 1e5, 2 degrees,
# 120-240 panels: failed with 0.5, converged with 1.5)
RESPACED = (1.5, 2.0)
# Newton iterations of each re-spaced try
RESPACED_BUDGET = 100


def check_supported(system: System) -> None:
    """Refuse geometries the viscous analysis does not handle, with the reason.

    Raises
    ------
    InputError
        Several bodies, a plane boundary (wall or free surface), or a body without a trailing
        edge.
    """
    p = system.panels
    if p.n_bodies != 1:
        raise InputError(
            f"the viscous analysis handles one body; got {p.n_bodies} ({', '.join(p.names)}). "
            "The boundary layers of several bodies in each other's flow (a flap's slot, a "
            "wake passing over another body) are not modelled: analyse the bodies inviscidly, "
            "or one body at a time")
    if getattr(system, "image", None) is not None:
        raise InputError("the viscous analysis is for free flow; a wall or free surface (plane "
                         "boundary) is not modelled with it")
    if p.kinds[0] == SMOOTH:
        raise InputError(
            f"body {p.names[0]!r} has no trailing edge: the viscous analysis needs one to start "
            "the wake (a rounded tail's separation point is outside this model)")


def _system(panels_or_system) -> System:
    if isinstance(panels_or_system, System):
        return panels_or_system
    if isinstance(panels_or_system, Panels):
        return factorise(panels_or_system)
    raise InputError("the viscous analysis takes Panels or a factorised System")


def default_chord(panels: Panels) -> ChordLine:
    """Chord line of the (single) body: trailing-edge midpoint to the farthest node."""
    zn = panels.nodes[:, 0] + 1j * panels.nodes[:, 1]
    te = 0.5 * (zn[0] + zn[-1])
    le = zn[int(np.argmax(np.abs(zn - te)))]
    return ChordLine(np.array([le.real, le.imag]), np.array([te.real, te.imag]))


def _check_reynolds(reynolds) -> float:
    re = float(reynolds)
    lo, hi = REYNOLDS_RANGE
    if not np.isfinite(re) or not lo <= re <= hi:
        raise InputError(f"Reynolds number {re:g} is outside {lo:.0e}-{hi:.0e}, the range of "
                         "the boundary-layer closures")
    return re


def _base_displacement(system: System) -> float:
    """Base height of a blunt trailing edge times the cosine to the mean edge direction."""
    p = system.panels
    if p.kinds[0] != BLUNT:
        return 0.0
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    _, d, _ = trailing_edge(system)
    base = zn[0] - zn[-1]
    n_out = -1j * base / abs(base)
    return float(abs(base) * abs(d.real * n_out.real + d.imag * n_out.imag))


@dataclass
class _Geometry:
    system: System
    chord_line: ChordLine
    reference: np.ndarray
    arc: np.ndarray
    xc: np.ndarray
    base: float
    n_wake: int


def _geometry(panels_or_system, chord_line, reference_point) -> _Geometry:
    system = _system(panels_or_system)
    check_supported(system)
    p = system.panels
    chord = default_chord(p) if chord_line is None else chord_line
    if reference_point is None:
        le = np.asarray(chord.leading_edge, float)
        te = np.asarray(chord.trailing_edge, float)
        reference_point = le + 0.25 * (te - le)
    zn = p.nodes[:, 0] + 1j * p.nodes[:, 1]
    arc = np.concatenate([[0.0], np.cumsum(p.length)])
    return _Geometry(system, chord, np.asarray(reference_point, float), arc,
                     chord.fraction(zn), _base_displacement(system),
                     max(24, p.n_panels // 6 + 10))


def solve(panels_or_system, alpha_deg: float, reynolds: float,
          transition: Transition | None = None, warm_start: ViscousResult | None = None, *,
          chord_line: ChordLine | None = None, reference_point=None,
          max_iterations: int = 100) -> ViscousResult:
    """Viscous analysis of one section at one angle of attack.

    Parameters
    ----------
    panels_or_system : Panels or System
        One body with a trailing edge. A System is reused as it is (its LU factors too).
    alpha_deg : float
        Angle of attack, degrees from the input's x-axis.
    reynolds : float
        Reynolds number on the freestream speed and the reference chord.
    transition : Transition, optional
        Critical amplification factor and trips (default: N = 9, no trips).
    warm_start : ViscousResult, optional
        A converged result of the same geometry at a nearby angle (and the same Reynolds
        number): the iteration starts from it.
    chord_line : ChordLine, optional
        Reference chord (default: trailing-edge midpoint to the farthest point).
    reference_point : array_like, optional
        Moment reference (default: the quarter chord).
    max_iterations : int
        Newton iterations before the angle is reported unconverged.

    Returns
    -------
    ViscousResult
    """
    geo = _geometry(panels_or_system, chord_line, reference_point)
    return _solve(geo, float(alpha_deg), _check_reynolds(reynolds),
                  transition or Transition(), warm_start, max_iterations)


def _coupled(geo: _Geometry, alpha: float, re_unit: float, transition: Transition,
             station_spacing: float = STATION_SPACING):
    system = geo.system
    gamma = system.gamma(alpha)[0]
    spacing = station_spacing * geo.arc[-1] / (len(geo.arc) - 1)
    wake = wake_nodes(system, gamma, alpha, geo.chord_line.length, geo.n_wake, WAKE_LENGTH,
                      first_step=spacing)
    influence = displacement.build(system, gamma, alpha, wake)
    return sim.Coupled(influence, gamma, geo.arc, geo.xc, re_unit, transition, geo.base,
                       min_spacing=spacing), gamma


def _solve(geo, alpha, reynolds, transition, warm_start, max_iterations,
           walk: bool = True) -> ViscousResult:
    re_unit = reynolds / geo.chord_line.length
    coupled, gamma = _coupled(geo, alpha, re_unit, transition)
    start = None
    if warm_start is not None and warm_start.state is not None and warm_start.converged:
        lay = warm_start.state.layout
        if (lay.n == coupled.m_nodes + coupled.nw and warm_start.reynolds == reynolds):
            start = warm_start.state
    with np.errstate(all="ignore"):
        if start is not None:
            # a warm start helps when it is close; when it is not (transition moving many
            # stations) a cold start from a direct march at this angle does better (measured)
            sol = coupled.run(start.y, start.layout, min(max_iterations, WARM_BUDGET))
            if not sol.converged:
                sol = _better(sol, _attempt(coupled, None, max_iterations))
        else:
            sol = _attempt(coupled, None, max_iterations)
        if not sol.converged and start is None and walk:
            for spacing in RESPACED:
                other, _ = _coupled(geo, alpha, re_unit, transition, spacing)
                tried = other.run(max_iterations=min(max_iterations, RESPACED_BUDGET))
                if tried.converged:
                    coupled, sol = other, tried
                    break
        if not sol.converged and walk:
            # walk there in small steps from the warm start's angle, or from zero angle
            origin = (warm_start.alpha_deg, start) if start is not None else (0.0, None)
            step = WARM_STEP if start is not None else COLD_STEP
            walked = _continuation(geo, origin, alpha, re_unit, transition, max_iterations,
                                   step)
            if walked is not None:
                coupled, sol = walked
    return _result(geo, alpha, reynolds, gamma, coupled, sol)


def _attempt(coupled, start, max_iterations):
    """One run from the start (or cold); if it fails, one more with bolder steps."""
    if start is not None:
        sol = coupled.run(start.y, start.layout, max_iterations)
        if not sol.converged:
            sol = _better(sol, coupled.run(start.y, start.layout, max_iterations, bold=True))
        return sol
    sol = coupled.run(max_iterations=max_iterations)
    if not sol.converged:
        sol = _better(sol, coupled.run(max_iterations=max_iterations, bold=True))
    return sol


def _better(a, b):
    """The converged one of two runs, else the one with the smaller residual."""
    if b.converged or not a.converged and b.residual < a.residual:
        return b
    return a


def _continuation(geo, origin, alpha, re_unit, transition, max_iterations, step):
    """Angles from ``origin`` (angle, state or None) to ``alpha`` in steps of at most
    ``step`` degrees, each started from the last; None if one of them fails."""
    a0, state = origin
    n = max(1, int(np.ceil(abs(alpha - a0) / step)))
    angles = np.linspace(a0, alpha, n + 1)[1:] if state is not None else np.linspace(
        a0, alpha, n + 1)
    coupled = None
    for a in angles:
        coupled, _ = _coupled(geo, float(a), re_unit, transition)
        if state is None:
            sol = _attempt(coupled, None, max_iterations)
        else:  # small steps: a plain warm run or give up (a walk must stay cheap)
            sol = coupled.run(state.y, state.layout, min(max_iterations, 2 * WARM_BUDGET))
        if not sol.converged:
            return None
        state = sol
    return coupled, state


def _layer(name, geo, coupled, sol, idx, xc_nodes):
    lay, y = sol.layout, sol.y
    re = coupled.re
    theta = np.exp(y[idx, 0])
    h = y[idx, 1]
    ue = y[idx, 3]
    regime = lay.regime[idx]
    turbulent = regime != sim.LAMINAR
    wake = regime == sim.WAKE
    cf = np.zeros(len(idx))
    lam = ~turbulent
    if lam.any():
        cf[lam] = 2.0 * closures.laminar_array(h[lam])[1] / (re * ue[lam] * theta[lam])
    wall = turbulent & ~wake
    if wall.any():
        cf[wall] = closures.turbulent_array(h[wall], re * ue[wall] * theta[wall],
                                            np.zeros(int(wall.sum()), bool))[0]
    nodes = lay.node[idx]
    if name != "wake":
        nodes = coupled.kept[nodes]
    if name == "wake":
        z = coupled.wake_nodes[nodes - coupled.m_nodes]
        theta, ds = 2.0 * theta, 2.0 * theta * h  # the whole wake
        xc = geo.chord_line.fraction(z)
    else:
        zn = geo.system.panels.nodes
        z = zn[nodes, 0] + 1j * zn[nodes, 1]
        ds = theta * h
        xc = xc_nodes[nodes]
    third = y[idx, 2]
    return SurfaceLayer(name, z.real.copy(), z.imag.copy(), np.asarray(xc, float),
                        lay.s[idx].copy(), ue.copy(), 1.0 - ue * ue, ds, theta, h.copy(),
                        cf * ue * ue, np.where(turbulent, np.nan, third),
                        np.where(turbulent, third, np.nan), turbulent)


def _friction_drag(layer: SurfaceLayer, alpha: float) -> float:
    """Streamwise component of the wall shear integrated along one surface (trapezoidal)."""
    z = layer.x + 1j * layer.y
    t = np.gradient(z)  # march direction: the flow's, downstream along the surface
    t = t / np.maximum(np.abs(t), 1e-300)
    wind = np.exp(1j * np.radians(alpha))
    along = layer.skin_friction * (t * np.conj(wind)).real
    return float(np.sum(0.5 * (along[1:] + along[:-1]) * np.diff(layer.arc_length)))


def _moment(geo: _Geometry, gamma: np.ndarray) -> float:
    """Pitching moment of a surface-speed distribution (Cp = 1 - gamma^2), nose-up, over c^2."""
    p = geo.system.panels
    zr = complex(*geo.reference)
    cpa, cpb = 1.0 - gamma[p.start] ** 2, 1.0 - gamma[p.end] ** 2
    cpm = 1.0 - (0.5 * (gamma[p.start] + gamma[p.end])) ** 2
    n_out = -1j * p.tangent
    w = p.length / 6.0 * (cpa * np.conj(p.z1 - zr) + 4.0 * cpm * np.conj(p.mid - zr)
                          + cpb * np.conj(p.z2 - zr))
    moment = float(np.sum(-(n_out * w).imag))
    if p.kinds[0] == BLUNT:
        v = 0.5 * (gamma[-1] - gamma[0])
        z_lo, z_up = complex(*p.nodes[-1]), complex(*p.nodes[0])
        base_force = 1j * (1.0 - v * v) * (z_up - z_lo)
        moment += (np.conj(0.5 * (z_up + z_lo) - zr) * base_force).imag
    return -moment / geo.chord_line.length ** 2


def _lift(geo: _Geometry, gamma: np.ndarray) -> float:
    p = geo.system.panels
    circ = np.sum(p.length * 0.5 * (gamma[p.start] + gamma[p.end]))
    return float(-2.0 * circ / geo.chord_line.length)


def _result(geo, alpha, reynolds, gamma_inv, coupled, sol) -> ViscousResult:
    lay = sol.layout
    c = geo.chord_line.length
    layers = [_layer(name, geo, coupled, sol, lay.side_stations(side), geo.xc)
              for side, name in ((0, "upper"), (1, "lower"), (2, "wake"))]
    upper, lower, wake = layers
    cd = squire_young(wake.momentum_thickness[-1], wake.edge_speed[-1],
                      wake.shape_factor[-1]) / c
    cd_sy = sum(squire_young(s.momentum_thickness[-1], s.edge_speed[-1], s.shape_factor[-1])
                for s in (upper, lower)) / c
    cd_f = (_friction_drag(upper, alpha) + _friction_drag(lower, alpha)) / c
    cl = _lift(geo, sol.gamma)
    cm = _moment(geo, sol.gamma)
    trans = []
    for side, layer in ((0, upper), (1, lower)):
        arc_t = sol.transition_arc[side]
        trans.append(float(np.interp(arc_t, layer.arc_length, layer.x_over_chord))
                     if np.isfinite(arc_t) else np.nan)
    sep_u = crossings(upper.x_over_chord, upper.skin_friction)
    sep_l = crossings(lower.x_over_chord, lower.skin_friction)
    values = dict(cl=cl, cm=cm, cd=cd, cd_friction=cd_f, cd_pressure=cd - cd_f,
                  cd_squire_young=cd_sy, lift_to_drag=cl / cd if cd > 0 else np.nan,
                  transition_upper=trans[0], transition_lower=trans[1],
                  separation_upper=sep_u[0], reattachment_upper=sep_u[1],
                  separation_lower=sep_l[0], reattachment_lower=sep_l[1])
    shown = values if sol.converged else {k: np.nan for k in values}
    return ViscousResult(
        alpha, reynolds, transition_upper_forced=bool(sol.transition_forced[0]),
        transition_lower_forced=bool(sol.transition_forced[1]), converged=bool(sol.converged),
        residual=float(sol.residual), iterations=int(sol.iterations),
        inviscid_cl=_lift(geo, gamma_inv), inviscid_cm=_moment(geo, gamma_inv),
        upper=upper, lower=lower, wake=wake,
        last_iterate={} if sol.converged else values, state=sol, **shown)


@dataclass(frozen=True)
class ViscousPolar:
    """Viscous results over a range of angles, in increasing angle.

    Array fields hold NaN at angles that did not converge; ``converged`` says which did, and
    ``after_failure`` marks angles reached only after an unconverged one in the same sweep
    direction (their start was an older angle's solution: check them). ``last_converged`` is
    the largest angle up to which every angle converged, starting from the sweep's start.
    """

    alpha_deg: np.ndarray
    reynolds: float
    results: tuple = field(repr=False)
    converged: np.ndarray = field(repr=False)
    after_failure: np.ndarray = field(repr=False)
    limits: str = field(default=LIMITS, repr=False)

    def column(self, name: str) -> np.ndarray:
        """One coefficient over the angles (NaN where unconverged)."""
        return np.array([getattr(r, name) for r in self.results], float)

    @property
    def cl(self):
        return self.column("cl")

    @property
    def cd(self):
        return self.column("cd")

    @property
    def cm(self):
        return self.column("cm")

    @property
    def lift_to_drag(self):
        return self.column("lift_to_drag")

    @property
    def last_converged(self) -> float:
        a = self.alpha_deg
        ok = self.converged
        start = int(np.argmin(np.abs(a)))
        i = start
        while i + 1 < len(a) and ok[i + 1] and ok[i]:
            i += 1
        return float(a[i]) if ok[start] else float("nan")


def polar(panels_or_system, alpha_deg, reynolds: float, transition: Transition | None = None,
          *, chord_line: ChordLine | None = None, reference_point=None,
          max_iterations: int = 100) -> ViscousPolar:
    """Viscous analysis over several angles, each started from its converged neighbour.

    The sweep starts at the angle nearest zero and runs up, then down from it. An angle that
    does not converge from its neighbour is retried cold and then walked to in small steps
    (see ``solve``); if it still fails it is flagged and the sweep goes on from the last
    converged solution, so a polar through stall finishes with every angle flagged or
    converged.
    """
    alphas = np.unique(np.asarray(alpha_deg, float))
    if alphas.size == 0 or not np.all(np.isfinite(alphas)):
        raise InputError("the polar needs finite angles of attack")
    geo = _geometry(panels_or_system, chord_line, reference_point)
    re = _check_reynolds(reynolds)
    transition = transition or Transition()
    start = int(np.argmin(np.abs(alphas)))
    results = [None] * len(alphas)
    after = np.zeros(len(alphas), bool)
    for order in (range(start, len(alphas)), range(start - 1, -1, -1)):
        prev = results[start] if order.start != start else None
        failed = False
        for i in order:
            # past a failure (stall, usually) no angle walks: they would start from an old
            # angle each time and cost minutes without a better chance
            res = _solve(geo, float(alphas[i]), re, transition, prev,
                         max_iterations if not failed else min(max_iterations, AFTER_FAILURE),
                         walk=not failed)
            results[i] = res
            after[i] = failed
            if res.converged:
                prev = res
            else:
                failed = True
    return ViscousPolar(alphas, re, tuple(results),
                        np.array([r.converged for r in results]), after)


def unconverged_message(result: ViscousResult) -> str:
    """One line for an angle that did not converge (what outputs print instead of numbers)."""
    return (f"alpha {result.alpha_deg:g} deg: viscous iteration did not converge (residual "
            f"{result.residual:.1e} after {result.iterations} iterations); no coefficients")
