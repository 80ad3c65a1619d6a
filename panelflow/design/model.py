"""The panel model a design iterates on: nodes fixed along the section, moved by the form.

A design changes a section many times; re-panelling every time would change the discretisation
with the shape and make the solution a jagged function of the coefficients. So a
:class:`DesignModel` panels the form once (the analysis's own node placement,
:func:`panelflow.geometry.panelling.respline`), keeps each node's coordinate ``u`` along the
section (:mod:`panelflow.design.shape`) and from then on moves the nodes only in y, exactly on
the form: ``y_i = y(u_i; c)``. The solution is then a smooth function of the coefficients and
its derivatives are exact (:mod:`panelflow.design.sensitivity`). A design re-panels between
stages, so the final nodes suit the final shape.

Everything is in the chord frame (chord 1, leading edge at the origin), angles of attack from
the chord line, moments about the quarter chord, nose-up positive, as in the analysis.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow import threads
from panelflow.analysis.inviscid import angle_for_lift
from panelflow.design.sensitivity import unit_derivatives
from panelflow.design.shape import SectionForm
from panelflow.errors import GeometryError
from panelflow.flow.solver import factorise
from panelflow.geometry.measure import ChordFrame
from panelflow.geometry.outline import BLUNT, Outline
from panelflow.geometry.panelling import respline
from panelflow.geometry.panels import Panels

__all__ = ["DesignModel", "State"]

QUARTER_CHORD = 0.25 + 0j
_DRAWN_POINTS = 801


@dataclass(frozen=True)
class State:
    """The solved panel model at one set of coefficients.

    Attributes
    ----------
    coefficients : ndarray, shape (P,)
    nodes : ndarray, shape (m, 2)
        Chord-frame nodes.
    system : System
        Factorised, with the unit solutions.
    motion : ndarray, shape (m, P)
        dy of each node per unit coefficient (x does not move).
    dunit : ndarray, shape (m + 1, 2, P)
        Derivatives of the two unit solutions (computed on first use).
    """

    coefficients: np.ndarray
    nodes: np.ndarray = field(repr=False)
    system: object = field(repr=False)
    motion: np.ndarray = field(repr=False)
    _cache: dict = field(default_factory=dict, repr=False, compare=False)

    @property
    def m(self) -> int:
        return len(self.nodes)

    @property
    def unit(self) -> np.ndarray:
        return self.system.unit

    @property
    def dunit(self) -> np.ndarray:
        if "dunit" not in self._cache:
            mot = np.zeros((self.m, 2, self.motion.shape[1]))
            mot[:, 1, :] = self.motion
            self._cache["dunit"] = unit_derivatives(self.system, mot)
        return self._cache["dunit"]

    # ------------------------------------------------------------------ values
    def gamma(self, alpha_deg: float) -> np.ndarray:
        a = np.radians(alpha_deg)
        return np.cos(a) * self.unit[:self.m, 0] + np.sin(a) * self.unit[:self.m, 1]

    def cp(self, alpha_deg: float) -> np.ndarray:
        g = self.gamma(alpha_deg)
        return 1.0 - g * g

    def _gamma_derivatives(self, alpha_deg: float):
        """(dgamma/dc (m, P), dgamma/dalpha per degree (m,))."""
        a = np.radians(alpha_deg)
        d = self.dunit[:self.m]
        dg = np.cos(a) * d[:, 0, :] + np.sin(a) * d[:, 1, :]
        da = (-np.sin(a) * self.unit[:self.m, 0] + np.cos(a) * self.unit[:self.m, 1])
        return dg, da * np.pi / 180.0

    def cp_derivatives(self, alpha_deg: float):
        """(dCp/dc (m, P), dCp/dalpha per degree (m,)) at the nodes."""
        g = self.gamma(alpha_deg)
        dg, da = self._gamma_derivatives(alpha_deg)
        return -2.0 * g[:, None] * dg, -2.0 * g * da

    def _lengths(self):
        z = self.nodes[:, 0] + 1j * self.nodes[:, 1]
        d = z[1:] - z[:-1]
        return d, np.abs(d)

    def cl(self, alpha_deg: float) -> float:
        """Circulation lift, ``-2 sum L (g_s + g_e)/2`` per unit chord (as the analysis)."""
        g = self.gamma(alpha_deg)
        _, L = self._lengths()
        return float(-2.0 * np.sum(L * 0.5 * (g[:-1] + g[1:])))

    def cl_derivatives(self, alpha_deg: float):
        """(dcl/dc (P,), dcl/dalpha per degree)."""
        g = self.gamma(alpha_deg)
        dg, da = self._gamma_derivatives(alpha_deg)
        d, L = self._lengths()
        ty = (d / L).imag
        dL = ty[:, None] * (self.motion[1:] - self.motion[:-1])  # (panels, P)
        h = 0.5 * (g[:-1] + g[1:])
        dh = 0.5 * (dg[:-1] + dg[1:])
        dcl = -2.0 * (dL.T @ h + dh.T @ L)
        dcl_da = -2.0 * float(np.sum(L * 0.5 * (da[:-1] + da[1:])))
        return dcl, dcl_da

    def alpha_for_cl(self, target: float) -> float:
        """Angle (degrees from the chord) where the circulation lift is ``target``; closed
        form as in the analysis (the root nearer zero)."""
        return angle_for_lift(self.cl(0.0), self.cl(90.0), target)

    def alpha_for_cl_derivative(self, alpha_deg: float) -> np.ndarray:
        """d alpha / dc (degrees) keeping the lift at its value at ``alpha_deg``."""
        dcl, dcl_da = self.cl_derivatives(alpha_deg)
        return -dcl / dcl_da

    def cm(self, alpha_deg: float) -> float:
        """Pressure-integrated pitching moment about the quarter chord, nose-up positive
        (Simpson's rule per panel as :mod:`panelflow.flow.surface`; a blunt base adds its
        pressure force)."""
        g = self.gamma(alpha_deg)
        total = self._moment(g, None, None)[0]
        return float(total)

    def cm_derivatives(self, alpha_deg: float):
        """(dcm/dc (P,), dcm/dalpha per degree)."""
        g = self.gamma(alpha_deg)
        dg, da = self._gamma_derivatives(alpha_deg)
        _, dcm, dcm_da = self._moment(g, dg, da)
        return dcm, dcm_da

    def _moment(self, g, dg, da):
        """cm and, with the gamma derivatives, its derivatives (forward mode, vectorised)."""
        z = self.nodes[:, 0] + 1j * self.nodes[:, 1]
        zr = QUARTER_CHORD
        z1, z2 = z[:-1], z[1:]
        mid = 0.5 * (z1 + z2)
        h = 0.5 * (g[:-1] + g[1:])
        cpa, cpb, cpm = 1.0 - g[:-1] ** 2, 1.0 - g[1:] ** 2, 1.0 - h * h
        q = cpa * np.conj(z1 - zr) + 4.0 * cpm * np.conj(mid - zr) + cpb * np.conj(z2 - zr)
        moment = float(np.sum(((z2 - z1) * q).real) / 6.0)
        blunt = self.system.panels.kinds[0] == BLUNT
        if blunt:
            # base: Cp of the flow leaving the corners, the trailing-edge speed (g_l - g_f)/2
            v = 0.5 * (g[-1] - g[0])
            cpbase = 1.0 - v * v
            zu, zl = z[0], z[-1]
            force = 1j * cpbase * (zu - zl)
            moment += float((np.conj(0.5 * (zu + zl) - zr) * force).imag)
        cm = -moment
        if dg is None:
            return cm, None, None
        out = []
        # directions: each coefficient, then the angle (which moves no node)
        dz = 1j * np.concatenate([self.motion, np.zeros((self.m, 1))], axis=1)  # (m, P+1)
        dgg = np.concatenate([dg, da[:, None]], axis=1)
        dz1, dz2 = dz[:-1], dz[1:]
        dmid = 0.5 * (dz1 + dz2)
        dh = 0.5 * (dgg[:-1] + dgg[1:])
        dcpa = -2.0 * g[:-1, None] * dgg[:-1]
        dcpb = -2.0 * g[1:, None] * dgg[1:]
        dcpm = -2.0 * h[:, None] * dh
        dq = (dcpa * np.conj(z1 - zr)[:, None] + cpa[:, None] * np.conj(dz1)
              + 4.0 * (dcpm * np.conj(mid - zr)[:, None] + cpm[:, None] * np.conj(dmid))
              + dcpb * np.conj(z2 - zr)[:, None] + cpb[:, None] * np.conj(dz2))
        dmom = (((dz2 - dz1) * q[:, None] + (z2 - z1)[:, None] * dq).real).sum(axis=0) / 6.0
        if blunt:
            dv = 0.5 * (dgg[-1] - dgg[0])
            dcpbase = -2.0 * v * dv
            dzu, dzl = dz[0], dz[-1]
            dforce = 1j * (dcpbase * (zu - zl) + cpbase * (dzu - dzl))
            dmom += (np.conj(0.5 * (dzu + dzl)) * force + np.conj(0.5 * (zu + zl) - zr)
                     * dforce).imag
        out = -dmom
        return cm, out[:-1], float(out[-1])


class DesignModel:
    """Nodes of a form at fixed ``u`` stations; solves the panel model for any coefficients.

    Parameters
    ----------
    form : SectionForm
        The section and its shape functions; its current coefficients set the node stations.
    n_panels : int
        Panels on the section (the analysis's node placement on the form's current shape).
    """

    def __init__(self, form: SectionForm, n_panels: int):
        self.form = form
        self.n_panels = int(n_panels)
        self.u = self._stations(form, self.n_panels)
        self.x = form.x(self.u)
        self.motion = form.basis.functions(self.u)
        self.motion[[0, -1]] = 0.0  # the trailing-edge corners never move
        self.y0 = form.base(self.u)
        self.leading_node = int(np.argmin(self.x))
        # thickness at the upper nodes' stations (the form's own, exact): must stay positive
        inner = self.x[1:self.leading_node]
        inner = inner[(inner > 0.0) & (inner < 0.5 * (form.ends[0] + form.ends[1]))]
        self._t0, self._tm = form.thickness_linear(inner)
        m = len(self.u)
        start = np.arange(m - 1)
        self._topology = (start, start + 1, np.zeros(m - 1, int), np.array([0]), np.array([m]),
                          (form.kind,), (form.name,))
        self._last: State | None = None
        self.solutions = 0  # panel solutions (factorisations) made so far

    @staticmethod
    def _stations(form: SectionForm, n_panels: int) -> np.ndarray:
        pts = form.points()
        if form.kind != BLUNT:
            pts[-1] = pts[0]
        outline = Outline.from_points(pts, name=form.name)
        nodes = respline(outline, n_panels).nodes
        i_min = int(np.argmin(nodes[:, 0]))
        idx = np.arange(len(nodes))
        side = np.where(idx < i_min, 1.0, np.where(idx > i_min, -1.0,
                                                   np.where(nodes[:, 1] >= 0.0, 1.0, -1.0)))
        end = np.where(side > 0, form.ends[0], form.ends[1])
        u = side * np.sqrt(np.clip(nodes[:, 0] / end, 0.0, 1.0))
        u[0], u[-1] = 1.0, -1.0
        if np.any(np.diff(u) >= 0.0):
            raise GeometryError(f"{form.name}: the panel nodes do not run round the section "
                                "once (surfaces folded?)")
        return u

    @property
    def size(self) -> int:
        return self.motion.shape[1]

    def nodes(self, coefficients) -> np.ndarray:
        c = np.asarray(coefficients, float)
        return np.column_stack([self.x, self.y0 + self.motion @ c])

    @threads.blas_single
    def state(self, coefficients) -> State:
        """The solved model at ``coefficients`` (the last one is kept and reused).

        Raises
        ------
        GeometryError
            Surfaces crossing (a design step too far).
        SolveError
            A singular system.
        """
        c = np.array(coefficients, float).reshape(-1)
        last = self._last
        if last is not None and np.array_equal(last.coefficients, c):
            return last
        nodes = self.nodes(c)
        if np.any(self._t0 + self._tm @ c <= 0.0):
            raise GeometryError(f"{self.form.name}: the surfaces cross at this design step")
        start, end, body, n0, n1, kinds, names = self._topology
        panels = Panels(nodes, start, end, body, n0, n1, kinds, names)
        system = factorise(panels)
        self.solutions += 1
        c.setflags(write=False)
        st = State(c, nodes, system, self.motion)
        self._last = st
        return st

    def chord_frame(self) -> ChordFrame:
        return ChordFrame((0.0, 0.0), (1.0, 0.0))
