"""Flap deflection: split a section at a chordwise hinge and rotate the aft part.

Two arrangements, both returning new :class:`~panelflow.geometry.outline.Outline` objects:

* :func:`plain_flap` -- one body. The aft part turns about the hinge point; on the side that
  opens (the upper surface for a trailing-edge-down deflection) the surfaces are joined by a
  circular arc about the hinge (the rounded nose of a plain flap), on the side that closes they
  are trimmed where they cross (the body is the union of the fixed part, the turned part and
  the hinge sector). Every resulting corner is rounded with a circular arc of the
  stated radius, so that the spline re-panelling sees a smooth (if tightly curved) outline.
* :func:`slotted_flap` -- two bodies. The flap is the aft part with a rounded nose about the
  hinge point; the main element ends ahead of it with its own sharp trailing edge on its mean
  line (both surfaces faired onto it), leaving the stated gap between the main element's
  trailing edge and the flap's nose. A simple slot model: the shaped shroud and cove of a built
  slotted flap are not drawn.

Conventions: the hinge station is a fraction of the chord from the leading edge along the chord
line; the hinge point lies on that station at ``hinge_height`` of the local thickness above the
lower surface (0.5: mid-thickness); a positive deflection turns the trailing edge down (nose-up
pitching moment decreases, lift increases: the trade's sign, common practice). Lengths given as
fractions are of the undeflected chord. Coefficients of flap studies are normally referred to
the undeflected (retracted) chord; :class:`FlappedSection` keeps it.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.geometry import check
from panelflow.errors import GeometryError, InputError
from panelflow.geometry.outline import SHARP, SMOOTH, Outline
from panelflow.geometry.panelling import respline

PLAIN = "plain"
SLOTTED = "slotted"
DEFAULT_RADIUS = 0.01  # corner rounding radius, fraction of chord
DEFAULT_GAP = 0.01  # slot gap, fraction of chord
MAX_ANGLE_DEG = 60.0
# Dense resampling of the input outline on its spline before cutting (well above any panel
# count used for solving, so that arcs and rounded corners are resolved by points).
_DENSE_PANELS = 1200
_ARC_STEP = np.radians(0.5)
# A vertex near the hinge turning by more than this is a corner to round: the densely resampled
# surfaces turn far less per point, and arcs are drawn in _ARC_STEP steps.
_CORNER = np.radians(1.5)


@dataclass(frozen=True)
class FlappedSection:
    """A section with a deflected flap, ready for :func:`panelflow.analyse`.

    Attributes
    ----------
    outlines : tuple of Outline
        One body (plain flap) or two (main element, flap).
    kind : str
        ``"plain"`` or ``"slotted"``.
    hinge : float
        Hinge station, fraction of the chord from the leading edge.
    hinge_point : ndarray, shape (2,)
        Point the flap turned about, in the input frame.
    angle_deg : float
        Deflection, positive trailing edge down.
    radius : float
        Rounding radius of the corners, in input length units.
    gap : float
        Chordwise gap between the main element's trailing edge and the flap nose before
        deflection (input length units; 0 for a plain flap).
    clearance : float
        Smallest distance between the main element and the deflected flap (NaN for a plain
        flap).
    reference_chord : float
        Chord of the undeflected section (the usual reference length of flap coefficients).
    reference_point : ndarray, shape (2,)
        Quarter chord of the undeflected section.
    chord_line : tuple of ndarray
        Leading and trailing edge of the undeflected section.
    """

    outlines: tuple
    kind: str
    hinge: float
    hinge_point: np.ndarray
    angle_deg: float
    radius: float
    gap: float
    clearance: float
    reference_chord: float
    reference_point: np.ndarray = field(repr=False)
    chord_line: tuple = field(repr=False)


def thin_airfoil_effectiveness(hinge) -> np.ndarray:
    """Flap effectiveness ``-d alpha_L0 / d delta`` of thin-airfoil theory.

    ``tau = 1 - (theta_h - sin theta_h) / pi`` with ``cos theta_h = 1 - 2 x_h`` (Glauert's flap
    theory; Abbott & von Doenhoff, *Theory of Wing Sections*, ch. 5; Anderson, *Fundamentals of
    Aerodynamics*, ch. 4). So ``Cl = 2 pi (alpha + tau delta)`` for a thin flat section.

    Parameters
    ----------
    hinge : array_like
        Hinge station, fraction of the chord (0 < x_h < 1).
    """
    x = np.asarray(hinge, float)
    if np.any(~np.isfinite(x)) or np.any((x <= 0.0) | (x >= 1.0)):
        raise InputError("flap hinge must lie inside the chord (0 < x/c < 1)")
    th = np.arccos(1.0 - 2.0 * x)
    return 1.0 - (th - np.sin(th)) / np.pi


# --------------------------------------------------------------------------- checks and frame
def _check_args(outline, hinge, angle_deg, hinge_height):
    if not isinstance(outline, Outline):
        raise InputError("flap: give one Outline (the section to cut)")
    if outline.kind == SMOOTH:
        raise GeometryError(f"{outline.label}: a flap needs a section with a trailing edge")
    try:
        x_h, ang, f = float(hinge), float(angle_deg), float(hinge_height)
    except (TypeError, ValueError):
        raise InputError("flap: hinge, angle and hinge height must be numbers") from None
    if not np.isfinite(x_h) or not 0.0 < x_h < 1.0:
        raise InputError(f"flap hinge at x/c = {hinge}: outside the chord (give 0 < x/c < 1)")
    if not np.isfinite(ang) or abs(ang) > MAX_ANGLE_DEG:
        raise InputError(f"flap angle {angle_deg} deg: give a deflection between "
                         f"-{MAX_ANGLE_DEG:g} and {MAX_ANGLE_DEG:g} deg")
    if not np.isfinite(f) or not 0.0 <= f <= 1.0:
        raise InputError(f"flap hinge height {hinge_height}: give a fraction of the local "
                         "thickness from 0 (lower surface) to 1 (upper surface)")
    return x_h, ang, f


def _positive_fraction(value, what: str, upper: float) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"flap {what} must be a number") from None
    if not np.isfinite(v) or not 0.0 < v <= upper:
        raise InputError(f"flap {what} {value}: give a chord fraction in (0, {upper:g}]")
    return v


class _Frame:
    """Chord frame of an outline: leading edge at 0, trailing edge at +c on the real axis."""

    def __init__(self, outline: Outline):
        self.le = complex(*outline.leading_edge)
        te = complex(*outline.trailing_edge.point)
        self.chord = abs(te - self.le)
        self.e = (te - self.le) / self.chord

    def local(self, z):
        return (np.asarray(z) - self.le) * np.conj(self.e)

    def back(self, w):
        return self.le + np.asarray(w) * self.e


def _surfaces(outline: Outline, frame: _Frame):
    """Densely resampled upper (trailing edge -> leading edge) and lower (LE -> TE) surfaces."""
    nodes = respline(outline, _DENSE_PANELS).nodes
    w = frame.local(nodes[:, 0] + 1j * nodes[:, 1])
    i_le = int(np.argmax(np.abs(w - w[0] if outline.kind == SHARP
                                else w - 0.5 * (w[0] + w[-1]))))
    return w[:i_le + 1], w[i_le:]


def _cut(curve: np.ndarray, x: float, label: str):
    """Split a polyline at its single crossing of the station ``Re w = x``.

    Returns (before, point, after): points before the crossing, the crossing point, points after.
    """
    d = curve.real - x
    change = np.flatnonzero(np.sign(d[:-1]) * np.sign(d[1:]) <= 0)
    change = change[~((d[change] == 0) & (d[change + 1] == 0))]
    if len(change) != 1:
        raise GeometryError(f"{label}: the {'upper' if curve.real[0] > curve.real[-1] else 'lower'}"
                            f" surface crosses the hinge station x/c = {x:.4g} {len(change)} "
                            "times (it must cross it once)")
    i = int(change[0])
    t = d[i] / (d[i] - d[i + 1]) if d[i] != d[i + 1] else 0.0
    point = curve[i] + t * (curve[i + 1] - curve[i])
    before = curve[:i + 1] if t > 1e-12 else curve[:i]
    after = curve[i + 1:] if t < 1 - 1e-12 else curve[i + 2:]
    return before, point, after


def _arc(center: complex, start: complex, sweep: float, r_end: float | None = None):
    """Points from ``start`` turning ``sweep`` radians about ``center``, radius blended to r_end."""
    r0 = abs(start - center)
    r1 = r0 if r_end is None else r_end
    n = max(2, int(np.ceil(abs(sweep) / _ARC_STEP)))
    s = np.linspace(0.0, 1.0, n + 1)
    phi = np.angle(start - center) + s * sweep
    return center + (r0 + (r1 - r0) * s) * np.exp(1j * phi)


def _turning(loop: np.ndarray) -> np.ndarray:
    """Turning angle at each interior vertex of an open polyline (0 at the two ends)."""
    out = np.zeros(len(loop))
    out[1:-1] = np.angle((loop[2:] - loop[1:-1]) / (loop[1:-1] - loop[:-2]))
    return out


def _round_corners(loop: np.ndarray, centre: complex, reach: float, radius: float,
                   label: str) -> np.ndarray:
    """Round every corner of ``loop`` within ``reach`` of ``centre`` with arcs of ``radius``.

    Corners (turns above ``_CORNER``) closer together than twice the radius are one corner
    (e.g. a lip where the turned surface slides under the fixed one): the arc is fitted to the
    sides just outside the group, tangent to both, and replaces the whole group.
    """
    turn = _turning(loop)
    near = np.abs(loop - centre) < reach
    corners = np.flatnonzero(near & (np.abs(turn) > _CORNER))
    if not len(corners):
        return loop
    s = np.r_[0.0, np.cumsum(np.abs(np.diff(loop)))]
    groups, current = [], [corners[0]]
    for i in corners[1:]:
        if s[i] - s[current[-1]] < 2.0 * radius:
            current.append(i)
        else:
            groups.append(current)
            current = [i]
    groups.append(current)
    for grp in reversed(groups):  # from the end, so earlier indices stay valid
        loop = _fillet(loop, grp[0], grp[-1], radius, label)
    return loop


def _fillet(loop: np.ndarray, i0: int, i1: int, radius: float, label: str) -> np.ndarray:
    """Replace the corner group ``loop[i0..i1]`` by an arc tangent to the sides around it."""
    d1 = loop[i0] - loop[i0 - 1]
    d2 = loop[i1 + 1] - loop[i1]
    d1, d2 = d1 / abs(d1), d2 / abs(d2)
    kappa = float(np.angle(d2 / d1))
    if abs(kappa) < _CORNER:  # a step with no net turn: join the sides straight
        return np.concatenate([loop[:i0], loop[i1 + 1:]])
    # corner of the two side lines: loop[i0] + a d1 = loop[i1] + b d2
    m = np.array([[d1.real, -d2.real], [d1.imag, -d2.imag]])
    r = loop[i1] - loop[i0]
    a_len, _ = np.linalg.solve(m, [r.real, r.imag])
    v = loop[i0] + a_len * d1
    t_len = radius * np.tan(0.5 * abs(kappa))
    p1, p2 = v - t_len * d1, v + t_len * d2
    before = np.flatnonzero(((loop[:i0 + 1] - v) * np.conj(d1)).real < -t_len)
    after = i1 + np.flatnonzero(((loop[i1:] - v) * np.conj(d2)).real > t_len)
    if not len(before) or not len(after):
        raise GeometryError(f"{label}: the rounding radius {radius:.4g} does not fit the "
                            "corner at the hinge (try a smaller radius)")
    centre = p1 + np.sign(kappa) * 1j * radius * d1
    arc = _arc(centre, p1, kappa)
    arc[-1] = p2
    return np.concatenate([loop[:before[-1] + 1], arc, loop[after[0]:]])


def _finish(w: np.ndarray, frame: _Frame, kind: str, name: str, source: str) -> Outline:
    z = frame.back(w)
    keep = np.r_[True, np.abs(np.diff(z)) > 1e-12 * frame.chord]
    z = z[keep]
    return Outline(name, np.stack([z.real, z.imag], axis=1), kind, source)


def _hinge(upper, lower, x_h, f, label):
    """Cut both surfaces at the station and place the hinge point."""
    u_aft, u_pt, u_fore = _cut(upper, x_h, label)  # upper runs TE -> LE
    l_fore, l_pt, l_aft = _cut(lower, x_h, label)  # lower runs LE -> TE
    if u_pt.imag <= l_pt.imag:
        raise GeometryError(f"{label}: the section has no thickness at the hinge station")
    hinge = complex(x_h, l_pt.imag + f * (u_pt.imag - l_pt.imag))
    return (u_aft, u_pt, u_fore), (l_fore, l_pt, l_aft), hinge


def _reference(outline: Outline):
    le, te = outline.leading_edge, outline.trailing_edge.point.copy()
    return outline.chord, outline.chord_point(0.25), (le, te)


# --------------------------------------------------------------------------- plain flap
def plain_flap(outline: Outline, hinge: float, angle_deg: float, radius: float = DEFAULT_RADIUS,
               hinge_height: float = 0.5, name: str | None = None) -> FlappedSection:
    """Deflect the aft part of a section as a plain flap: one body, corners rounded.

    Parameters
    ----------
    outline : Outline
        Section with a trailing edge (sharp or blunt).
    hinge : float
        Hinge station, fraction of the chord from the leading edge (0 < x/c < 1).
    angle_deg : float
        Deflection in degrees, positive trailing edge down (|angle| <= 60).
    radius : float
        Rounding radius of the corners at the hinge, fraction of the chord (default 0.01).
    hinge_height : float
        Hinge point height as a fraction of the local thickness above the lower surface.
    name : str, optional
        Body name (default the outline's name with the deflection appended).

    Returns
    -------
    FlappedSection

    Raises
    ------
    InputError
        Hinge outside the chord, deflection or radius out of range.
    GeometryError
        Section without a trailing edge, surfaces that do not cross the hinge station once,
        a radius too large for the corners, or a result that crosses itself.
    """
    x_h, ang, f = _check_args(outline, hinge, angle_deg, hinge_height)
    r_frac = _positive_fraction(radius, "rounding radius", 0.1)
    frame = _Frame(outline)
    c = frame.chord
    label = outline.label
    chord, quarter, line = _reference(outline)
    body_name = name or f"{outline.name} (flap {ang:+g} deg at {x_h:g}c)"
    upper, lower = _surfaces(outline, frame)
    (u_aft, u_pt, u_fore), (l_fore, l_pt, l_aft), h = _hinge(upper, lower, x_h * c, f, label)
    hinge_xy = frame.back(h)
    if ang == 0.0:
        return FlappedSection((outline.renamed(body_name),), PLAIN, x_h,
                              np.array([hinge_xy.real, hinge_xy.imag]), 0.0, r_frac * c, 0.0,
                              float("nan"), chord, quarter, line)
    turn = np.exp(-1j * np.radians(ang))  # clockwise: trailing edge down for ang > 0
    # The flapped body is the union of the fixed fore part, the turned aft part (each closed by
    # its cut face through the hinge) and the sector about the hinge that fills the wedge opening
    # on one side; the other side's overlap (and any lip where the turned surface passes under
    # the fixed one) the union trims.
    fore = np.r_[u_pt, u_fore, l_fore[1:], l_pt]
    aft = h + (np.r_[l_pt, l_aft, u_aft, u_pt] - h) * turn
    opening, closing = (u_pt, l_pt) if ang > 0 else (l_pt, u_pt)
    # apex inside the overlap of the two parts (on the bisector of the closing side's wedge),
    # not at the hinge: edges along the cut faces would leave slivers in the union
    apex = h + 0.5 * (closing - h) * np.exp(-0.5j * np.radians(ang))
    sector = np.r_[apex, _arc(h, h + (opening - h) * turn if ang > 0 else opening,
                              abs(np.radians(ang)))]
    loop = _union_loop([fore, aft, sector], h + (upper[0] - h) * turn, label)
    reach = max(abs(u_pt - h), abs(l_pt - h)) + 6.0 * r_frac * c
    loop = _round_corners(loop, h, reach, r_frac * c, label)
    if outline.kind == SHARP:
        loop = np.r_[loop, loop[:1]]
    body = _finish(loop, frame, outline.kind, body_name, outline.source)
    check.validate([body])
    return FlappedSection((body,), PLAIN, x_h, np.array([hinge_xy.real, hinge_xy.imag]), ang,
                          r_frac * c, 0.0, float("nan"), chord, quarter, line)


def _union_loop(parts, start: complex, label: str) -> np.ndarray:
    """Outer boundary of the union of closed polylines, counter-clockwise from ``start``."""
    import shapely  # already loaded by check

    polys = [shapely.Polygon(np.stack([p.real, p.imag], axis=1)).buffer(0) for p in parts]
    size = max(float(np.ptp(np.concatenate(parts).real)), 1e-300)
    # on a fine grid, edges that meet along the cut faces coincide exactly: no slivers
    union = shapely.union_all(polys, grid_size=1e-10 * size)
    if union.geom_type != "Polygon":
        raise GeometryError(f"{label}: the flap parts do not join into one body")
    xy = np.asarray(union.exterior.coords)[:-1]
    z = xy[:, 0] + 1j * xy[:, 1]
    if np.sum(z.real * np.roll(z.imag, -1) - np.roll(z.real, -1) * z.imag) < 0:
        z = z[::-1]
    return np.roll(z, -int(np.argmin(np.abs(z - start))))


# --------------------------------------------------------------------------- slotted flap
def _smoothstep(s):
    """0 to 1 with zero slope and curvature at both ends (so the fairing adds no curvature jump,
    which would show as a kink in the surface Cp)."""
    s = np.clip(s, 0.0, 1.0)
    return s * s * s * (s * (6.0 * s - 15.0) + 10.0)


def slotted_flap(outline: Outline, hinge: float, angle_deg: float, gap: float = DEFAULT_GAP,
                 radius: float = DEFAULT_RADIUS, hinge_height: float = 0.5) -> FlappedSection:
    """Cut a section into a main element and a separate flap with a gap, and deflect the flap.

    The flap is the part aft of the hinge station with a rounded nose about the hinge point (its
    radius blends from the hinge's distance to the upper surface to that to the lower one); the
    main element ends ``gap`` ahead of the flap nose with a sharp trailing edge on its mean
    line, both surfaces faired onto it over the last quarter chord (or half the main element if
    shorter) with a blend of continuous slope and curvature, so that its camber line is the
    section's own.

    Parameters
    ----------
    outline : Outline
        Section with a trailing edge.
    hinge : float
        Hinge station, fraction of the chord (0 < x/c < 1); aft of the thickest point.
    angle_deg : float
        Flap deflection in degrees, positive trailing edge down.
    gap : float
        Chordwise gap between the main element's trailing edge and the flap nose, fraction of
        the chord (default 0.01).
    radius : float
        Rounding radius where the flap nose meets its surfaces, fraction of the chord.
    hinge_height : float
        Hinge height as a fraction of the local thickness above the lower surface.

    Returns
    -------
    FlappedSection
        ``outlines`` = (main element, flap).
    """
    x_h, ang, f = _check_args(outline, hinge, angle_deg, hinge_height)
    if not 0.0 < f < 1.0:
        raise InputError(f"flap hinge height {hinge_height}: a slotted flap's nose needs the "
                         "hinge inside the section (0 < height < 1)")
    g_frac = _positive_fraction(gap, "gap", 0.2)
    r_frac = _positive_fraction(radius, "rounding radius", 0.1)
    frame = _Frame(outline)
    c = frame.chord
    label = outline.label
    chord, quarter, line = _reference(outline)
    upper, lower = _surfaces(outline, frame)
    (u_aft, u_pt, _), (_, l_pt, l_aft), h = _hinge(upper, lower, x_h * c, f, label)
    hinge_xy = frame.back(h)
    d_u, d_l = abs(u_pt - h), abs(l_pt - h)

    # flap: aft upper (TE -> station), nose about the hinge (upper -> front -> lower), aft lower
    up_a = np.r_[u_aft, u_pt]
    nose = _arc(h, u_pt, float(np.angle((l_pt - h) / (u_pt - h)) % (2 * np.pi)), d_l)
    lo_a = np.r_[l_pt, l_aft]
    flap = np.concatenate([up_a[:-1], nose[:-1], lo_a])
    flap = _round_corners(flap, h, max(d_u, d_l) + 6.0 * r_frac * c, r_frac * c, label)
    flap = h + (flap - h) * np.exp(-1j * np.radians(ang))
    flap_body = _finish(flap, frame, outline.kind, f"{outline.name} flap", outline.source)

    # main element: ends gap ahead of the flap nose, both surfaces faired onto the mean line
    x_s = x_h * c - max(d_u, d_l) - g_frac * c
    if x_s <= 0.2 * c:
        raise GeometryError(f"{label}: no room for a main element ahead of a flap hinged at "
                            f"x/c = {x_h:g} (the main element would end at x/c = {x_s / c:.3g})")
    _, s_up, fore_up = _cut(upper, x_s, label)
    low_fore, s_lo, _ = _cut(lower, x_s, label)
    half = 0.5 * (s_up.imag - s_lo.imag)  # each surface moves half the end thickness
    ramp = min(0.25 * c, 0.5 * x_s)
    up = np.r_[s_up, fore_up]
    low = np.r_[low_fore, s_lo]
    up = up - 1j * half * _smoothstep((up.real - (x_s - ramp)) / ramp)
    low = low + 1j * half * _smoothstep((low.real - (x_s - ramp)) / ramp)
    low[-1] = up[0]
    main = np.concatenate([up, low[1:]])
    # the faired surfaces must not cross (thickness falling towards x_s)
    y_up = np.interp(low.real, up.real[::-1], up.imag[::-1])
    if np.any(low.imag[1:-1] >= y_up[1:-1]):
        raise GeometryError(f"{label}: a slotted flap hinged at x/c = {x_h:g} leaves a main "
                            "element that thickens towards its trailing edge; put the hinge "
                            "aft of the thickest point")
    main_body = _finish(main, frame, SHARP, f"{outline.name} main element", outline.source)
    bodies = (main_body, flap_body)
    check.validate(bodies)
    import shapely  # the clearance only; shapely is already loaded by check

    clearance = float(shapely.Polygon(main_body.polygon).distance(
        shapely.Polygon(flap_body.polygon)))
    return FlappedSection(bodies, SLOTTED, x_h, np.array([hinge_xy.real, hinge_xy.imag]), ang,
                          r_frac * c, g_frac * c, clearance, chord, quarter, line)
