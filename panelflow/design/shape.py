"""Shape parametrisation: a section as a base shape plus a class-function-weighted B-spline.

Coordinates
-----------
A section is described in its chord frame (leading edge at (0, 0), trailing edge at (1, 0); see
:mod:`panelflow.geometry.measure`) by one coordinate running round it from the upper trailing
edge over the nose to the lower trailing edge::

    u = +sqrt(x)  on the upper surface,   u = -sqrt(x)  on the lower,   u in [-1, 1]

A smooth curve through a round nose (``x`` quadratic in ``y`` there) is a smooth function
``y(u)`` across ``u = 0``, so both surfaces and the nose are one function.

The form
--------
::

    y(u) = base(u) + C(u) * sum_k c_k B_k(phi(u)),     C(u) = u (1 - u^2)

``C`` is the class function of Kulfan's class-shape transformation with exponents 1/2 and 1
(B. M. Kulfan, "Universal parametric geometry representation method", J. Aircraft 45(1), 2008):
``sqrt(x) (1 - x)`` on each surface, so a term changes the nose radius, keeps the leading edge
at the origin and the trailing edge where it is, and changes the trailing-edge slope. Where the
transformation uses Bernstein polynomials in ``x`` for the shape function, here it is a cubic
B-spline in ``phi = (2/pi) arcsin(u)`` (the angle coordinate ``x = (1 - cos(pi phi))/2``, signed
by surface), for two reasons:

* a B-spline is local: a design over part of the surface uses only the basis functions whose
  support lies inside that part, and the rest of the outline does not move at all;
* the surface of a finite-angle trailing edge drawn by a conformal map departs from straight
  lines like ``(1 - x)^(1 + 1/n)``, which is smooth in ``phi`` but not in ``x`` or ``u``
  (measured: a Karman-Trefftz section with an 8 degree trailing edge is represented to 3e-7
  chords by 24 functions in ``phi`` with knots clustered towards the nose, against 4e-5 in
  ``u`` and worse in ``x``).

``base`` is either the start section itself (a design over part of the surface: what is
outside that part is the start's own curve, unchanged) or, for a design of the whole section,
just the trailing-edge corners ``a u^3 + b u^4`` (a blunt edge's two corners; zero for a sharp
edge), with the start fitted in least squares as the first guess.

Every measure used as a constraint is either linear in the coefficients (thickness at a
station, area, trailing-edge slopes) or a simple function of linear ones (nose radius,
trailing-edge angle), so constraints have exact gradients.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.errors import GeometryError, InputError
from panelflow.geometry.measure import ChordFrame, decompose
from panelflow.geometry.outline import BLUNT, SHARP, SMOOTH, Outline

__all__ = ["ShapeBasis", "SectionForm", "full_basis", "segment_basis", "form_of",
           "station_u", "DEFAULT_FUNCTIONS", "KNOT_CLUSTERING"]

# Cubic B-splines in phi for a design of the whole section (24: see the module docstring).
DEFAULT_FUNCTIONS = 24
# Knots at phi = g (a + (1 - a)|g|), g uniform: a < 1 clusters them towards the nose, where the
# curvature is (a = 0.4 halved the error of a Karman-Trefftz fit against uniform knots).
KNOT_CLUSTERING = 0.4
_DEGREE = 3
# Stations of the decomposed start section (cosine spaced); its own spline error is far below
# any design tolerance at this count.
_BASE_STATIONS = 1201


def _phi(u):
    return (2.0 / np.pi) * np.arcsin(np.clip(u, -1.0, 1.0))


def station_u(n_points: int) -> np.ndarray:
    """``n_points`` values of u from the upper trailing edge to the lower one, evenly spaced in
    phi (cosine spacing in x on each surface: dense at both edges)."""
    phi = np.linspace(1.0, -1.0, int(n_points))
    return np.sin(0.5 * np.pi * phi)


def class_function(u) -> np.ndarray:
    """``C(u) = u (1 - u^2)``: ``sqrt(x)(1 - x)``, signed by surface."""
    u = np.asarray(u, float)
    return u * (1.0 - u * u)


@dataclass(frozen=True)
class ShapeBasis:
    """Cubic B-splines in phi, in one or more parts, and which of them are free.

    Attributes
    ----------
    knots : tuple of ndarray
        Each part's full knot vector (phi).
    active : tuple of ndarray of int
        Each part's basis functions in use (all of a clamped whole-section basis; those whose
        support lies inside the segment for a part of the section).
    spans : tuple of (float, float)
        Each part's phi interval; outside every span the functions are exactly zero.
    """

    knots: tuple
    active: tuple
    spans: tuple

    def __post_init__(self):
        for name in ("knots", "active"):
            parts = tuple(np.array(v) for v in getattr(self, name))
            for v in parts:
                v.setflags(write=False)
            object.__setattr__(self, name, parts)
        object.__setattr__(self, "spans", tuple((float(a), float(b)) for a, b in self.spans))

    @property
    def size(self) -> int:
        return sum(len(a) for a in self.active)

    @property
    def whole(self) -> bool:
        """True for a basis over the whole section."""
        return self.spans == ((-1.0, 1.0),)

    def joined(self, other: "ShapeBasis") -> "ShapeBasis":
        """Both bases' functions (for targets on two separate segments)."""
        return ShapeBasis(self.knots + other.knots, self.active + other.active,
                          self.spans + other.spans)

    def functions(self, u) -> np.ndarray:
        """``C(u) B_k(phi(u))`` for the active functions, shape (len(u), size)."""
        from scipy.interpolate import BSpline

        u = np.atleast_1d(np.asarray(u, float))
        phi = _phi(u)
        cols = []
        for knots, active in zip(self.knots, self.active):
            lo, hi = knots[_DEGREE], knots[-_DEGREE - 1]
            inside = (phi >= lo) & (phi <= hi)
            out = np.zeros((len(u), len(active)))
            if np.any(inside):
                b = BSpline.design_matrix(phi[inside], knots, _DEGREE).toarray()
                out[inside] = b[:, active]
            cols.append(out)
        return class_function(u)[:, None] * np.hstack(cols)

    def _all(self, phi: float, nu: int = 0) -> np.ndarray:
        """The active B-splines (or their nu-th phi derivatives) at one phi, zero outside."""
        from scipy.interpolate import BSpline

        out = []
        for knots, active in zip(self.knots, self.active):
            n = len(knots) - _DEGREE - 1
            lo, hi = knots[_DEGREE], knots[-_DEGREE - 1]
            if nu > _DEGREE or not lo <= phi <= hi:
                out.append(np.zeros(len(active)))
                continue
            out.append(BSpline(knots, np.eye(n), _DEGREE)(phi, nu=nu)[active])
        return np.concatenate(out)

    def derivative_at(self, u: float, order: int = 1) -> np.ndarray:
        """d^order/du^order of :meth:`functions` at one u inside (-1, 1), order 1 or 2 (the
        product and chain rules on the B-splines' own derivatives)."""
        u = float(u)
        if order not in (1, 2) or not -1.0 < u < 1.0:
            raise InputError("derivatives of order 1 or 2 inside the section")
        phi = float(_phi(u))
        vals = [self._all(phi, d) for d in range(order + 1)]
        s = np.sqrt(1.0 - u * u)
        p1 = 2.0 / (np.pi * s)  # dphi/du
        p2 = 2.0 * u / (np.pi * s**3)  # d2phi/du2
        cf = (u * (1.0 - u * u), 1.0 - 3.0 * u * u, -6.0 * u)  # C, C', C''
        b1 = p1 * vals[1]
        if order == 1:
            return cf[1] * vals[0] + cf[0] * b1
        b2 = p1 * p1 * vals[2] + p2 * vals[1]
        return cf[2] * vals[0] + 2.0 * cf[1] * b1 + cf[0] * b2

    def edge_derivative(self, upper: bool) -> np.ndarray:
        """d/du of :meth:`functions` at a trailing edge (u = 1 or -1): there C vanishes and
        C' = -2, so it is -2 B_k(phi = +-1)."""
        return -2.0 * self._all(1.0 if upper else -1.0)


def _knots(lo: float, hi: float, intervals: int, clamped: bool) -> np.ndarray:
    g = np.linspace(-1.0, 1.0, intervals + 1)
    if clamped:  # the whole section: cluster towards the nose (phi = 0)
        inner = g * (KNOT_CLUSTERING + (1.0 - KNOT_CLUSTERING) * np.abs(g))
        inner = lo + (inner + 1.0) * 0.5 * (hi - lo)
        return np.r_[[lo] * _DEGREE, inner, [hi] * _DEGREE]
    return lo + (g + 1.0) * 0.5 * (hi - lo)


def full_basis(n_functions: int = DEFAULT_FUNCTIONS) -> ShapeBasis:
    """B-splines over the whole section, ``n_functions`` of them (at least 4)."""
    n = int(n_functions)
    if n < 4:
        raise InputError(f"{n} shape functions: at least 4 are needed")
    knots = _knots(-1.0, 1.0, n - _DEGREE, clamped=True)
    return ShapeBasis((knots,), (np.arange(n),), ((-1.0, 1.0),))


def segment_basis(phi_from: float, phi_to: float, n_functions: int) -> ShapeBasis:
    """B-splines whose support lies inside ``[phi_from, phi_to]``: outside the segment the
    section does not change at all, and at its ends the change joins with zero value, slope
    and curvature.

    Parameters
    ----------
    phi_from, phi_to : float
        The segment in phi (upper surface positive), ``-1 <= phi_from < phi_to <= 1``.
    n_functions : int
        Functions inside the segment (at least 1).
    """
    lo, hi = float(phi_from), float(phi_to)
    if not -1.0 <= lo < hi <= 1.0:
        raise InputError(f"design segment {lo:g} to {hi:g} in phi: need -1 <= from < to <= 1")
    n = max(1, int(n_functions))
    knots = _knots(lo, hi, n + _DEGREE, clamped=False)
    # uniform knots spanning exactly the segment: the interior B-splines (n of them) vanish to
    # second order at its ends; pad the knot vector so those are ordinary basis functions
    step = knots[1] - knots[0]
    full = np.r_[knots[0] - step * np.arange(_DEGREE, 0, -1), knots,
                 knots[-1] + step * np.arange(1, _DEGREE + 1)]
    return ShapeBasis((full,), (np.arange(_DEGREE, _DEGREE + n),), ((lo, hi),))


def _x_of_u(u, ends):
    u = np.asarray(u, float)
    return u * u * np.where(u >= 0.0, ends[0], ends[1])


@dataclass(frozen=True)
class SectionForm:
    """A section as ``base(u) + C(u) B(u) c`` in its chord frame (see the module docstring).

    Attributes
    ----------
    name : str
    frame : ChordFrame
        Where the chord lies in the start outline's coordinates (written files use it).
    kind : str
        ``"sharp"`` or ``"blunt"`` trailing edge (kept by every design).
    basis : ShapeBasis
    coefficients : ndarray, shape (basis.size,)
    ends : (float, float)
        x/c of the upper and lower trailing-edge corners (1, 1 unless a slanted base).
    te_y : (float, float)
        y/c of the upper and lower trailing-edge corners.
    base_upper, base_lower : callable or None
        The start section's surfaces ``y(theta)`` when the base is the start itself (a design
        over part of the section); None: the base is only the trailing-edge corners.
    source : str
    """

    name: str
    frame: ChordFrame
    kind: str
    basis: ShapeBasis
    coefficients: np.ndarray
    ends: tuple = (1.0, 1.0)
    te_y: tuple = (0.0, 0.0)
    base_upper: object = field(default=None, repr=False, compare=False)
    base_lower: object = field(default=None, repr=False, compare=False)
    source: str = ""

    def __post_init__(self):
        c = np.array(self.coefficients, float).reshape(-1)
        if c.shape != (self.basis.size,):
            raise InputError(f"{self.name}: {len(c)} coefficients for {self.basis.size} shape "
                             "functions")
        if not np.all(np.isfinite(c)):
            raise InputError(f"{self.name}: shape coefficients must be finite")
        c.setflags(write=False)
        object.__setattr__(self, "coefficients", c)

    @property
    def size(self) -> int:
        return self.basis.size

    @property
    def partial(self) -> bool:
        """True when the base is the start section (only a segment changes)."""
        return self.base_upper is not None

    def with_coefficients(self, c) -> "SectionForm":
        """The same form with other coefficients."""
        return SectionForm(self.name, self.frame, self.kind, self.basis, c, self.ends, self.te_y,
                           self.base_upper, self.base_lower, self.source)

    def renamed(self, name: str) -> "SectionForm":
        return SectionForm(name, self.frame, self.kind, self.basis, self.coefficients, self.ends,
                           self.te_y, self.base_upper, self.base_lower, self.source)

    # ------------------------------------------------------------------ geometry
    def x(self, u) -> np.ndarray:
        return _x_of_u(u, self.ends)

    def base(self, u) -> np.ndarray:
        u = np.atleast_1d(np.asarray(u, float))
        if self.base_upper is None:
            a = 0.5 * (self.te_y[0] - self.te_y[1])
            b = 0.5 * (self.te_y[0] + self.te_y[1])
            return a * u**3 + b * u**4
        theta = 2.0 * np.arcsin(np.clip(np.abs(u), 0.0, 1.0))
        return np.where(u >= 0.0, self.base_upper(theta), self.base_lower(theta))

    def y(self, u, coefficients=None) -> np.ndarray:
        c = self.coefficients if coefficients is None else np.asarray(coefficients, float)
        return self.base(u) + self.basis.functions(u) @ c

    def points(self, u=None, coefficients=None) -> np.ndarray:
        """Chord-frame points at ``u`` (default 801 stations, upper trailing edge first)."""
        u = station_u(801) if u is None else np.asarray(u, float)
        return np.column_stack([self.x(u), self.y(u, coefficients)])

    def outline(self, n_points: int = 801, coefficients=None, name: str | None = None) -> Outline:
        """The section in the start outline's frame, as an :class:`Outline`.

        Raises
        ------
        GeometryError
            When the surfaces cross (the thickness is not positive somewhere).
        """
        u = station_u(n_points)
        pts = self.points(u, coefficients)
        half = (len(u) - 1) // 2
        t = self.thickness(pts[1:half, 0], coefficients)
        if np.any(t <= 0.0):
            i = int(np.argmin(t))
            raise GeometryError(f"{name or self.name}: the surfaces cross near x/c = "
                                f"{pts[1 + i, 0]:.3g}")
        if self.kind == SHARP:
            pts[-1] = pts[0]
        loop = self.frame.from_chord(pts)
        return Outline.from_points(loop, name=name or self.name, source=self.source or "design",
                                   exact=True)

    # ------------------------------------------------------------------ linear measures
    @staticmethod
    def _u_of_x(x, upper: bool) -> np.ndarray:
        # stations x/c pair the two surfaces at the same fraction of their own length, as the
        # geometry measures do (geometry/measure.py: a slanted base's surfaces are stretched
        # to the chord's end)
        u = np.sqrt(np.clip(np.asarray(x, float), 0.0, 1.0))
        return u if upper else -u

    def thickness_linear(self, x) -> tuple[np.ndarray, np.ndarray]:
        """``(t0, T)`` with the thickness ``y_upper - y_lower`` at chord stations ``x`` equal to
        ``t0 + T @ c`` (each surface at the same fraction of its length, as
        :func:`panelflow.geometry.measure.decompose` pairs them)."""
        uu, ul = self._u_of_x(x, True), self._u_of_x(x, False)
        t0 = self.base(uu) - self.base(ul)
        return t0, self.basis.functions(uu) - self.basis.functions(ul)

    def thickness(self, x, coefficients=None) -> np.ndarray:
        c = self.coefficients if coefficients is None else np.asarray(coefficients, float)
        t0, tm = self.thickness_linear(x)
        return t0 + tm @ c

    def area_linear(self, n: int = 2001) -> tuple[float, np.ndarray]:
        """``(a0, A)`` with the enclosed area (chords squared) ``a0 + A @ c``.

        Area = int (y_upper - y_lower) dx = int over phi in [-1, 1] of y dx/dphi (x grows with
        phi on the upper surface and falls with it on the lower), by Gauss-Legendre quadrature
        on each surface (the integrand is smooth in phi); a slanted blunt base adds its
        trapezoid.
        """
        nodes, weights = np.polynomial.legendre.leggauss(n // 20 + 20)
        a0, am = 0.0, np.zeros(self.size)
        for lo, hi in ((0.0, 1.0), (-1.0, 0.0)):
            phi = 0.5 * (lo + hi) + 0.5 * (hi - lo) * nodes
            w = 0.5 * (hi - lo) * weights
            u = np.sin(0.5 * np.pi * phi)
            end = self.ends[0] if lo >= 0.0 else self.ends[1]
            dxdphi = 2.0 * u * end * 0.5 * np.pi * np.cos(0.5 * np.pi * phi)
            a0 += float(np.sum(w * dxdphi * self.base(u)))
            am += (w * dxdphi) @ self.basis.functions(u)
        a0 -= (self.ends[0] - self.ends[1]) * 0.5 * (self.te_y[0] + self.te_y[1])
        return a0, am

    def area(self, coefficients=None) -> float:
        c = self.coefficients if coefficients is None else np.asarray(coefficients, float)
        a0, am = self.area_linear()
        return float(a0 + am @ c)

    def nose_slope_linear(self) -> tuple[float, np.ndarray]:
        """``(k0, K)``: ``dy/du`` at the nose is ``k0 + K @ c``; the leading-edge radius is
        ``(dy/du)^2 / (2 end)`` (``y = k sqrt(x)`` gives ``k^2/2``)."""
        h = 1e-6
        if self.base_upper is None:
            k0 = 0.0  # a u^3 + b u^4 has no slope at the nose
        else:
            k0 = float((self.base(h)[0] - self.base(-h)[0]) / (2.0 * h))
        return k0, self.basis.derivative_at(0.0, 1)

    def leading_edge_radius(self, coefficients=None) -> float:
        c = self.coefficients if coefficients is None else np.asarray(coefficients, float)
        k0, km = self.nose_slope_linear()
        k = k0 + km @ c
        return float(k * k / (2.0 * 0.5 * (self.ends[0] + self.ends[1])))

    def trailing_edge_slopes_linear(self) -> tuple[np.ndarray, np.ndarray]:
        """``(s0, S)``: dy/dx of the upper and lower surfaces at the trailing edge,
        ``s0 + S @ c`` (shape (2,), (2, size))."""
        s0 = np.zeros(2)
        rows = np.zeros((2, self.size))
        for i, (u, end) in enumerate(((1.0, self.ends[0]), (-1.0, self.ends[1]))):
            dxdu = 2.0 * u * end
            rows[i] = self.basis.edge_derivative(u > 0) / dxdu
            if self.base_upper is None:
                a = 0.5 * (self.te_y[0] - self.te_y[1])
                b = 0.5 * (self.te_y[0] + self.te_y[1])
                s0[i] = (3.0 * a * u * u + 4.0 * b * u**3) / dxdu
            else:
                spline = self.base_upper if u > 0 else self.base_lower
                # near theta = pi: x = end (1 - cos theta)/2, dy/dx = y''(theta) / x''(theta)
                s0[i] = -2.0 * float(spline(np.pi, 2)) / end
        return s0, rows

    def trailing_edge_angle_deg(self, coefficients=None) -> float:
        c = self.coefficients if coefficients is None else np.asarray(coefficients, float)
        s0, sm = self.trailing_edge_slopes_linear()
        s = s0 + sm @ c
        return float(np.degrees(np.arctan(s[1]) - np.arctan(s[0])))


def form_of(outline: Outline, basis: ShapeBasis | None = None, partial: bool = False,
            fit: bool = True) -> SectionForm:
    """The form of a start section.

    Parameters
    ----------
    outline : Outline
        A foil with a trailing edge (sharp or blunt).
    basis : ShapeBasis, optional
        Default: :func:`full_basis`.
    partial : bool
        True: the base is the start section itself and the coefficients start at zero (only the
        basis's segment will change). False: the base is only the trailing-edge corners and the
        coefficients are fitted to the start in least squares (the first guess of a design of
        the whole section).
    fit : bool
        With ``partial`` False, fit the start (else the coefficients start at zero).

    Raises
    ------
    InputError
        A body without a trailing edge.
    """
    if outline.kind == SMOOTH:
        raise InputError(f"{outline.label}: section design needs a trailing edge (the "
                         "body has none)")
    basis = full_basis() if basis is None else basis
    shape = decompose(outline, _BASE_STATIONS)
    upper = shape.function(shape.camber + shape.half_thickness)
    lower = shape.function(shape.camber - shape.half_thickness)
    te_y = (float(upper(np.pi)), float(lower(np.pi)))
    kind = BLUNT if outline.kind == BLUNT else SHARP
    if kind == SHARP:
        te_y = (0.0, 0.0)
    ends = tuple(float(e) for e in shape.ends)
    frame = ChordFrame(shape.frame.leading_edge, shape.frame.trailing_edge)
    if partial:
        return SectionForm(outline.name, frame, kind, basis, np.zeros(basis.size), ends, te_y,
                           upper, lower, outline.source)
    form = SectionForm(outline.name, frame, kind, basis, np.zeros(basis.size), ends, te_y,
                       source=outline.source)
    if not fit:
        return form
    # least squares on stations dense at both edges, against the start's own curve
    u = station_u(1201)[1:-1]
    theta = 2.0 * np.arcsin(np.abs(u))
    target = np.where(u >= 0.0, upper(theta), lower(theta)) - form.base(u)
    m = basis.functions(u)
    c, *_ = np.linalg.lstsq(m, target, rcond=None)
    if not np.all(np.isfinite(c)):  # pragma: no cover - lstsq on a full-rank basis
        raise GeometryError(f"{outline.label}: the start section could not be fitted")
    return form.with_coefficients(c)
