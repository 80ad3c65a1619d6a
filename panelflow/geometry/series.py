"""More NACA section families from their published equations.

* **Modified 4-digit thickness** (NACA Report 492; Abbott & von Doenhoff, *Theory of Wing
  Sections*, section 6.4): the 4-digit thickness form with two more parameters, the
  leading-edge radius index ``I`` and the position of maximum thickness ``M`` (tenths of the
  chord). Ahead of the maximum ``y = t/0.2 (a0 sqrt(x) + a1 x + a2 x^2 + a3 x^3)``, behind it
  ``y = t/0.2 (d0 + d1 (1-x) + d2 (1-x)^2 + d3 (1-x)^3)``. ``a0`` sets the leading-edge radius
  ``1.1019 (t I/6)^2`` (three times the 4-digit radius for ``I = 9``); ``d0 = 0.002`` is the
  trailing-edge half thickness and ``d1`` the trailing-edge slope, tabulated against ``M``; the
  other coefficients follow from the maximum ``t/2`` with zero slope at ``x = M/10`` and equal
  curvature of the two parts there. The coefficients are solved here from those conditions.
* **NACA 16-series** (Abbott & von Doenhoff, section 6.4): the modified 4-digit thickness with
  ``I = 4, M = 5`` and the ``a = 1`` mean line; ``naca16-212`` is 12 % thick with ideal lift
  coefficient 0.2.
* **a-series mean lines** (NACA Report 824; Abbott & von Doenhoff, section 4.5 and appendix
  II): the camber line that carries a uniform chordwise load from the leading edge to
  ``x = a`` and a load falling linearly to zero at the trailing edge, at the ideal angle of
  attack ``alpha_i = -cl_i h / (2 pi (a + 1))``, for ideal lift coefficient ``cl_i``. It
  combines with any symmetric thickness form here.

As in NACA Report 824, thickness is laid off normal to the mean line. The a-series slope grows
without bound (logarithmically) at the leading edge, and for ``a = 1`` at the trailing edge too.
Report 824 puts the centre of the leading-edge radius on the line through the leading edge with
the mean line's slope at ``x = 0.005`` (from memory); here the thickness over the first half
percent of the chord is laid off in that direction, which makes the nose a circle of the
thickness form's radius, tilted by that slope. At the trailing edge of the ``a = 1`` line the
offset direction would turn chord-wise within ``exp(-4 pi / cl_i)`` of the edge, squashing an
open trailing edge onto the chord line; the last half percent uses the direction at
``x = 0.995`` (our choice, by symmetry with the nose). The mean line itself is not changed.

6-series thickness forms are not built in: they were derived by conformal mapping from
prescribed velocity distributions whose defining functions are not published in closed form,
and panelflow carries no copy of their ordinate tables (read a coordinate table of the section
instead).

Spec syntax (panelflow's own, read by :func:`panelflow.geometry.specs.parse_spec`)
-------------------------------------------------------------------------------------
==========================================  ==================================================
``naca0012-64``, ``naca2412-34``            modified 4-digit thickness ``-IM`` under a 4- or
``naca23012-64``                            5-digit mean line
``naca16-212``, ``naca16-009``              16-series: ideal lift coefficient in tenths, then
                                            the thickness in percent
``naca0010-64+a-series:0.8,0.3``            a symmetric thickness form (``naca00TT``,
``naca16-012+a-series:0.5,0.2``             ``naca00TT-IM`` or ``naca16-0TT``) with the
                                            a-series mean line ``a-series:A,CL`` (A from 0 to
                                            1, CL the ideal lift coefficient)
``...-closed``                              after the thickness part: closed trailing edge
==========================================  ==================================================
"""

from __future__ import annotations

import re

import numpy as np

from panelflow.errors import InputError
from panelflow.geometry.outline import Outline
from panelflow.geometry import sections as _sections_module
from panelflow.geometry.sections import DEFAULT_POINTS

__all__ = [
    "TRAILING_EDGE_SLOPES",
    "modified_thickness_coefficients",
    "modified_thickness",
    "leading_edge_radius",
    "a_series_mean_line",
    "a_series_ideal_angle_deg",
    "naca_modified",
    "naca16",
    "a_series_section",
    "parse_series_spec",
    "SERIES_SPEC_HELP",
]

SERIES_SPEC_HELP = "naca0012-64, naca16-212, naca0010-64+a-series:0.8,0.3"

# Trailing-edge slope d1 of the modified 4-digit thickness (in units of t/0.2) against the
# position of maximum thickness, as tabulated in Abbott & von Doenhoff section 6.4 from NACA
# Report 492 -- from memory. tests/test_series.py checks that the 16-series coefficients solved
# from them match the published 16-series equation.
TRAILING_EDGE_SLOPES = {2: 0.200, 3: 0.234, 4: 0.315, 5: 0.465, 6: 0.700}
OPEN_TRAILING_EDGE = 0.002  # d0: half thickness t/0.2 * 0.002 at x = 1 (Report 492)
_A0_4DIGIT = 0.2969  # the 4-digit leading-edge coefficient (NACA Report 460), index I = 6
_NOSE_SLOPE_STATION = 0.005  # see the module docstring (NACA Report 824 practice)
_A1_TRAILING_EDGE_CAP = 0.995  # see the module docstring


# ---------------------------------------------------------------------------------- thickness
def modified_thickness_coefficients(le_index: int, max_position: int,
                                    closed_te: bool = False) -> tuple:
    """Coefficients ``(a0, a1, a2, a3, d0, d1, d2, d3)`` of the modified 4-digit thickness.

    In units of ``t / 0.2`` (multiply by ``5 t`` for ordinates), see the module docstring.

    Parameters
    ----------
    le_index : int
        Leading-edge radius index ``I``, 0 (sharp) to 9; 6 is the 4-digit radius.
    max_position : int
        Position of maximum thickness in tenths of the chord, 2 to 6.
    closed_te : bool, optional
        Zero trailing-edge thickness (``d0 = 0``) instead of Report 492's 0.002 (common
        practice).

    Returns
    -------
    tuple of float

    Raises
    ------
    InputError
        An index or position outside the published ranges.
    """
    i, m_digit = int(le_index), int(max_position)
    if not 0 <= i <= 9:
        raise InputError(f"leading-edge radius index must be 0 to 9, got {le_index}")
    if m_digit not in TRAILING_EDGE_SLOPES:
        raise InputError(f"position of maximum thickness must be 2 to 6 tenths of the chord "
                         f"(published trailing-edge slopes exist for those), got {max_position}")
    m = m_digit / 10.0
    # I <= 8: radius 1.1019 (t I / 6)^2, i.e. a0 proportional to I; I = 9: three times the
    # 4-digit radius (Abbott & von Doenhoff 6.4, from memory).
    a0 = _A0_4DIGIT * (np.sqrt(3.0) if i == 9 else i / 6.0)
    d0 = 0.0 if closed_te else OPEN_TRAILING_EDGE
    d1 = TRAILING_EDGE_SLOPES[m_digit]
    s = 1.0 - m
    # aft part: y(m) = 0.1 (half of t / 0.2 = 0.2), dy/dx(m) = 0
    d2, d3 = np.linalg.solve([[s * s, s**3], [2 * s, 3 * s * s]], [0.1 - d0 - d1 * s, -d1])
    curvature = 2.0 * d2 + 6.0 * d3 * s  # d2y/dx2 at x = m (the sign flips twice)
    # fore part: y(m) = 0.1, dy/dx(m) = 0, same curvature at m as the aft part
    rm = np.sqrt(m)
    a1, a2, a3 = np.linalg.solve(
        [[m, m * m, m**3], [1.0, 2 * m, 3 * m * m], [0.0, 2.0, 6 * m]],
        [0.1 - a0 * rm, -a0 / (2.0 * rm), curvature + a0 / (4.0 * m * rm)])
    return (float(a0), float(a1), float(a2), float(a3), float(d0), float(d1), float(d2),
            float(d3))


def modified_thickness(x, t: float, le_index: int, max_position: int,
                       closed_te: bool = False) -> np.ndarray:
    """Half thickness of the modified 4-digit form at chord stations ``x`` (chord 1).

    Parameters
    ----------
    x : array_like
        Chord stations in [0, 1].
    t : float
        Maximum thickness as a fraction of the chord.
    le_index, max_position, closed_te
        See :func:`modified_thickness_coefficients`.

    Returns
    -------
    ndarray
    """
    x = np.asarray(x, dtype=float)
    a0, a1, a2, a3, d0, d1, d2, d3 = modified_thickness_coefficients(le_index, max_position,
                                                                     closed_te)
    m = int(max_position) / 10.0
    s = 1.0 - x
    fore = a0 * np.sqrt(np.clip(x, 0.0, None)) + x * (a1 + x * (a2 + x * a3))
    aft = d0 + s * (d1 + s * (d2 + s * d3))
    return 5.0 * t * np.where(x <= m, fore, aft)


def leading_edge_radius(t: float, le_index: int) -> float:
    """Leading-edge radius (chord 1) of the modified 4-digit thickness: ``12.5 a0^2 t^2``.

    This is ``1.1019 (t I / 6)^2`` for ``I <= 8`` and three times the 4-digit radius for
    ``I = 9`` (Abbott & von Doenhoff 6.4), from ``y = 5 t a0 sqrt(x)`` near the nose.
    """
    a0 = modified_thickness_coefficients(le_index, 4)[0]
    return 12.5 * a0 * a0 * t * t


# ---------------------------------------------------------------------------------- a-series
def _xlogx(u):
    """``u ln u`` with its limit 0 at ``u = 0``."""
    u = np.asarray(u, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(u > 0.0, u * np.log(np.where(u > 0.0, u, 1.0)), 0.0)


def _a_series_constants(a: float) -> tuple[float, float]:
    """``g`` and ``h`` of NACA Report 824's a-series mean line (``a < 1``)."""
    g = -(a * _xlogx(a) / 2.0 - a * a / 4.0 + 0.25) / (1.0 - a)  # a^2 ln a = a (a ln a)
    b = 1.0 - a
    h = (b * _xlogx(b) / 2.0 - b * b / 4.0) / b + g
    return float(g), float(h)


def _check_a(a: float, cl_ideal: float, label: str = "a-series mean line") -> tuple:
    try:
        a, cl = float(a), float(cl_ideal)
    except (TypeError, ValueError):
        raise InputError(f"{label}: a and the ideal lift coefficient must be numbers, "
                         f"got {a!r}, {cl_ideal!r}") from None
    if not (0.0 <= a <= 1.0):
        raise InputError(f"{label}: a must be between 0 and 1, got {a:g}")
    if not np.isfinite(cl):
        raise InputError(f"{label}: the ideal lift coefficient must be finite")
    return a, cl


def a_series_mean_line(x, a: float, cl_ideal: float) -> tuple[np.ndarray, np.ndarray]:
    """Ordinate and slope of the NACA a-series mean line (NACA Report 824).

    Parameters
    ----------
    x : array_like
        Chord stations in [0, 1].
    a : float
        Chord fraction up to which the load is uniform, 0 to 1.
    cl_ideal : float
        Ideal (design) lift coefficient.

    Returns
    -------
    yc, dyc_dx : ndarray
        The slope is infinite at ``x = 0`` (and at ``x = 1`` for ``a = 1``): logarithmic
        singularities of the uniform load.
    """
    a, cl = _check_a(a, cl_ideal)
    x = np.asarray(x, dtype=float)
    if cl == 0.0:  # no camber (and no 0 * infinity at the ends)
        return np.zeros_like(x), np.zeros_like(x)
    with np.errstate(divide="ignore", invalid="ignore"):
        logx = np.log(x)
        if a == 1.0:
            k = cl / (4.0 * np.pi)
            yc = -k * (_xlogx(1.0 - x) + _xlogx(x))
            dyc = k * (np.log(1.0 - x) - logx)
            return yc, dyc
        g, h = _a_series_constants(a)
        k = cl / (2.0 * np.pi * (a + 1.0))
        d, e = a - x, 1.0 - x
        # (a - x)^2 ln|a - x| = |a - x| (|a - x| ln|a - x|), likewise for 1 - x
        bracket = (0.5 * np.abs(d) * _xlogx(np.abs(d)) - 0.5 * e * _xlogx(e) + 0.25 * e * e
                   - 0.25 * d * d) / (1.0 - a)
        yc = k * (bracket - _xlogx(x) + g - h * x)
        dyc = k * ((_xlogx(e) - np.sign(d) * _xlogx(np.abs(d))) / (1.0 - a) - logx - 1.0 - h)
    return yc, dyc


def a_series_ideal_angle_deg(a: float, cl_ideal: float) -> float:
    """Ideal angle of attack of the a-series mean line, ``-cl_i h / (2 pi (a + 1))``, degrees.

    The angle (from the chord line) at which the load is the design one, with no leading-edge
    suction peak (NACA Report 824).
    """
    a, cl = _check_a(a, cl_ideal)
    if a == 1.0:
        return 0.0
    _, h = _a_series_constants(a)
    return float(np.degrees(-cl * h / (2.0 * np.pi * (a + 1.0))))


# ---------------------------------------------------------------------------------- sections
def _sections():
    return _sections_module


def _thickness_digits(t_digits: str, spec: str) -> float:
    t = int(t_digits) / 100.0
    _sections_module._check_thickness(t, spec)
    return t


def naca_modified(digits: str, le_index: int, max_position: int, n_points: int = DEFAULT_POINTS,
                  closed_te: bool = False) -> Outline:
    """NACA 4- or 5-digit section with the modified 4-digit thickness ``-IM``, chord 1.

    Parameters
    ----------
    digits : str
        ``MPTT`` (4-digit mean line, Report 460) or ``LPQTT`` (5-digit, Report 610); ``TT`` is
        the thickness in percent.
    le_index, max_position : int
        Leading-edge radius index 0-9 and position of maximum thickness 2-6 (tenths).
    n_points : int, optional
        Rows of the returned ``Outline.points`` (an even number is raised by one).
    closed_te : bool, optional
        Zero trailing-edge thickness.

    Returns
    -------
    Outline
        Named by its spec, e.g. ``naca0012-64``.
    """
    sec = _sections()
    d = str(digits).strip()
    if len(d) not in (4, 5) or not d.isdigit():
        raise InputError(f"naca{d}-{le_index}{max_position}: 4 or 5 digits before the "
                         "thickness suffix")
    spec = (f"naca{d}-{int(le_index)}{int(max_position)}"
            f"{sec.CLOSED_SUFFIX if closed_te else ''}")
    n = sec._check_points(n_points, spec)
    try:  # range checks first, naming the spec
        modified_thickness_coefficients(le_index, max_position, closed_te)
    except InputError as exc:
        raise InputError(f"{spec}: {exc}") from None
    t = _thickness_digits(d[-2:], spec)
    x = sec._cosine_stations(n)
    yc, dyc = _mean_line_of_digits(d, x, spec)
    yt = modified_thickness(x, t, le_index, max_position, closed_te)
    return sec._assemble(x, yt, yc, dyc, spec)


def _mean_line_of_digits(d: str, x, spec: str):
    sec = _sections()
    if len(d) == 4:
        m, p = int(d[0]) / 100.0, int(d[1]) / 10.0
        if m > 0.0 and p == 0.0:
            raise InputError(f"{spec}: a cambered section needs a max-camber position "
                             "(second digit 1-9)")
        return sec.mean_line_4(x, m, p)
    lift, pos, reflex = int(d[0]), int(d[1]), int(d[2])
    if reflex != 0:
        raise InputError(f"{spec}: only non-reflexed 5-digit mean lines (third digit 0)")
    if lift == 0:
        raise InputError(f"{spec}: the first digit (design lift) must be 1-9")
    if pos not in sec._MEAN_LINES_5:
        raise InputError(f"{spec}: no standard mean line for second digit {pos}; use 1-5")
    return sec.mean_line_5(x, lift, pos)


def naca16(digits: str, n_points: int = DEFAULT_POINTS, closed_te: bool = False) -> Outline:
    """NACA 16-series section ``16-LTT``: modified thickness ``I = 4, M = 5``, ``a = 1`` mean line.

    Parameters
    ----------
    digits : str
        Three digits: ideal lift coefficient ``L`` in tenths, thickness ``TT`` in percent
        (``"212"`` is the NACA 16-212).
    n_points : int, optional
        Rows of the returned ``Outline.points``.
    closed_te : bool, optional
        Zero trailing-edge thickness.

    Returns
    -------
    Outline
    """
    sec = _sections()
    d = str(digits).strip()
    if len(d) != 3 or not d.isdigit():
        raise InputError(f"naca16-{d}: a 16-series spec has three digits after 'naca16-' "
                         "(ideal lift in tenths, thickness in percent), e.g. naca16-212")
    spec = f"naca16-{d}{sec.CLOSED_SUFFIX if closed_te else ''}"
    n = sec._check_points(n_points, spec)
    t = _thickness_digits(d[1:], spec)
    x = sec._cosine_stations(n)
    yt = modified_thickness(x, t, 4, 5, closed_te)
    yc, dyc = _a_series_offsets(x, 1.0, int(d[0]) / 10.0)
    return sec._assemble(x, yt, yc, dyc, spec)


def _a_series_offsets(x, a: float, cl: float):
    """Mean line ordinate, and the slope that sets the thickness offset direction."""
    yc, _ = a_series_mean_line(x, a, cl)
    end = _A1_TRAILING_EDGE_CAP if a == 1.0 else 1.0
    _, direction = a_series_mean_line(np.clip(x, _NOSE_SLOPE_STATION, end), a, cl)
    return yc, direction


def a_series_section(thickness_spec: str, a: float, cl_ideal: float,
                     n_points: int = DEFAULT_POINTS) -> Outline:
    """A symmetric NACA thickness form under the a-series mean line ``(a, cl_ideal)``.

    Parameters
    ----------
    thickness_spec : str
        ``naca00TT``, ``naca00TT-IM`` or ``naca16-0TT``, optionally with ``-closed``.
    a, cl_ideal : float
        See :func:`a_series_mean_line`.
    n_points : int, optional
        Rows of the returned ``Outline.points``.

    Returns
    -------
    Outline
        Named ``THICKNESS+a-series:A,CL``.
    """
    sec = _sections()
    thick = str(thickness_spec).strip().lower()
    a, cl = _check_a(a, cl_ideal, f"{thick}+a-series:{a},{cl_ideal}")
    spec = f"{thick}+a-series:{sec._fmt(a)},{sec._fmt(cl)}"
    n = sec._check_points(n_points, spec)
    x = sec._cosine_stations(n)
    yt = _symmetric_thickness(thick, x, spec)
    yc, dyc = _a_series_offsets(x, a, cl)
    return sec._assemble(x, yt, yc, dyc, spec)


def _symmetric_thickness(thick: str, x, spec: str) -> np.ndarray:
    sec = _sections()
    closed = thick.endswith(sec.CLOSED_SUFFIX)
    body = thick[: -len(sec.CLOSED_SUFFIX)] if closed else thick
    m = re.fullmatch(r"naca00(\d\d)(?:-(\d)(\d))?", body)
    if m:
        t = _thickness_digits(m.group(1), spec)
        if m.group(2) is None:
            return sec._thickness(x, t, closed)
        try:
            return modified_thickness(x, t, int(m.group(2)), int(m.group(3)), closed)
        except InputError as exc:
            raise InputError(f"{spec}: {exc}") from None
    m = re.fullmatch(r"naca16-0(\d\d)", body)
    if m:
        return modified_thickness(x, _thickness_digits(m.group(1), spec), 4, 5, closed)
    raise InputError(f"{spec}: the a-series mean line goes with a symmetric thickness form "
                     "(naca00TT, naca00TT-IM or naca16-0TT, optionally -closed); "
                     f"{thick!r} is not one")


# ---------------------------------------------------------------------------------- specs
_MODIFIED_RE = re.compile(r"naca(\d{4}|\d{5})-(\d)(\d)(-closed)?")
_SIXTEEN_RE = re.compile(r"naca16-(\d+)(-closed)?")
_SIX_SERIES_RE = re.compile(r"naca6\d(?:[a(,\[-]|\d?-).*")
_A_SERIES_RE = re.compile(r"a-series(?::(.*))?")


def _a_series_numbers(text: str, params) -> tuple[float, float]:
    values = [] if not params else params.split(",")
    if len(values) != 2:
        raise InputError(f"{text}: the mean line is a-series:A,CL (A from 0 to 1, CL the "
                         "ideal lift coefficient), e.g. +a-series:0.8,0.3")
    out = []
    for v in values:
        try:
            f = float(v)
        except ValueError:
            raise InputError(f"{text}: {v!r} is not a number (a-series:A,CL)") from None
        if not np.isfinite(f):
            raise InputError(f"{text}: {v!r} is not a finite number")
        out.append(f)
    return out[0], out[1]


def parse_series_spec(text: str, n_points: int | None = None) -> Outline | None:
    """Build a section of this module's families from its spec, or None for other text.

    Parameters
    ----------
    text : str
        A spec (see the module docstring); anything else returns None, so that the caller can
        try its other forms or a file.
    n_points : int, optional
        Number of points; the section function's default when None.

    Returns
    -------
    Outline or None

    Raises
    ------
    InputError
        A malformed spec of these families, or a 6-series designation (not built in).
    """
    t = str(text).strip().lower()
    kw = {} if n_points is None else {"n_points": n_points}
    if "+" in t:
        thick, _, mean = t.partition("+")
        m = _A_SERIES_RE.fullmatch(mean)
        if m is None or not thick.startswith("naca"):
            return None  # e.g. a file named "naca0012+flap.dat"
        a, cl = _a_series_numbers(t, m.group(1))
        return a_series_section(thick, a, cl, **kw)
    m = _SIXTEEN_RE.fullmatch(t)
    if m:
        return naca16(m.group(1), closed_te=m.group(2) is not None, **kw)
    m = _MODIFIED_RE.fullmatch(t)
    if m:
        return naca_modified(m.group(1), int(m.group(2)), int(m.group(3)),
                             closed_te=m.group(4) is not None, **kw)
    if _SIX_SERIES_RE.fullmatch(t) and "." not in t:
        raise InputError(
            f"{text}: NACA 6-series sections are not built in: their thickness forms come from "
            "conformal mapping of prescribed velocity distributions, published as ordinate "
            "tables that panelflow does not carry. Read a coordinate table of the section, or "
            "use a built-in family such as naca16-212 or naca0012-64+a-series:0.8,0.2")
    return None
