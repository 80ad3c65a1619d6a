"""Built-in sections from published equations.

Every function returns an :class:`~panelflow.geometry.outline.Outline` whose ``name`` and ``source`` are
the section's spec (see :func:`panelflow.geometry.specs.parse_spec`), so a result can always be traced back to the text
that makes it again.

Spec syntax
-----------
A spec may be given wherever a file path is accepted. Specs are case-insensitive, contain no
spaces, and never contain a path separator, so ``./naca0012`` always means a file.

=============================  ==================================================================
``naca2412``, ``naca0012``     NACA 4-digit section (NACA Report 460), open trailing edge
``naca23012``                  NACA 5-digit section with a non-reflexed mean line (NACA Report 610)
``naca0012-closed``            either of the above with the closed-trailing-edge thickness
                               coefficient (zero trailing-edge gap)
``circle``, ``circle:R``       circle of radius R (default 1) centred at the origin
``ellipse:A,B``                ellipse with semi-axes A along x and B along y, ``A >= B``
``joukowski:XC,YC``            Joukowski section from the circle through 1 centred at XC + i YC
``karman-trefftz:XC,YC,TAU``   Karman-Trefftz section, same circle, trailing-edge angle TAU
                               in degrees (0 <= TAU <= 90)
=============================  ==================================================================

The modified 4-digit (``naca0012-64``), 16-series (``naca16-212``) and a-series mean line
(``naca0010+a-series:0.8,0.3``) specs are in :mod:`panelflow.geometry.series`.

The chord of the NACA sections is 1 (leading edge at the origin); the conformal-map sections keep
the map's own coordinates (chord close to 4).
"""

from __future__ import annotations

import numpy as np

from panelflow.errors import GeometryError, InputError
from panelflow.geometry.outline import Outline

__all__ = [
    "naca4",
    "naca5",
    "mean_line_4",
    "mean_line_5",
    "circle",
    "ellipse",
    "joukowski",
    "karman_trefftz",
]


CLOSED_SUFFIX = "-closed"
MIN_SECTION_POINTS = 11  # fewer cannot show a leading edge and a trailing edge at once
# Points a built-in section is drawn with: enough that the curve through them is not what limits
# a solve. Measured (input share of the error estimate against the panels' share, 100 to 800
# panels): with 201 points a 1 %-thick NACA section's input share was up to 100 times the panels'
# and an ellipse 20:1 up to 30 times; with 801 points at most about 1 (thin sections, 100-200
# panels) and well below for ordinary ones.
DEFAULT_POINTS = 801
# Thickest built-in section, as a fraction of the chord: the families were tested up to about
# 25 % (NACA Reports 460 and 824, from memory); 40 % still gives a sensible strut fairing.
MAX_THICKNESS = 0.40

# NACA Report 460 thickness coefficients (y_t = 5 t (a0 sqrt(x) + a1 x + ... + a4 x^4)).
_THICKNESS_COEFFS = (0.2969, -0.1260, -0.3516, 0.2843, -0.1015)
# Closed trailing edge: last coefficient changed so that y_t(1) = 0 (common practice).
_CLOSED_A4 = -0.1036

# NACA Report 610 standard non-reflexed 5-digit mean lines for design lift coefficient 0.3
# (first digit L = 2), keyed by the second digit P (max camber at x = P / 20):
# P: (r, k1). Values as tabulated in NACA Report 610 and reproduced in Abbott & von Doenhoff,
# "Theory of Wing Sections" -- from memory; tests/test_sections.py re-derives r from the
# max-camber condition and the design lift coefficient from thin-aerofoil theory (the rounded
# 210 and 220 entries give 0.308 and 0.302 instead of 0.3; the others 0.300).
_MEAN_LINES_5 = {
    1: (0.0580, 361.400),  # 210, from memory
    2: (0.1260, 51.640),  # 220, from memory
    3: (0.2025, 15.957),  # 230, from memory
    4: (0.2900, 6.643),  # 240, from memory
    5: (0.3910, 3.230),  # 250, from memory
}


# ---------------------------------------------------------------------------------- helpers
def _check_points(n_points: int, spec: str) -> int:
    try:
        n = int(n_points)
    except (TypeError, ValueError):
        raise InputError(f"{spec}: n_points must be an integer, got {n_points!r}") from None
    if n != n_points or n < MIN_SECTION_POINTS:
        raise InputError(f"{spec}: n_points must be an integer >= {MIN_SECTION_POINTS}, "
                         f"got {n_points!r}")
    return n


def _finite_positive(value, what: str, spec: str) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{spec}: {what} must be a number, got {value!r}") from None
    if not np.isfinite(v) or v <= 0.0:
        raise InputError(f"{spec}: {what} must be a positive number, got {value!r}")
    return v


def _fmt(v: float) -> str:
    return f"{v + 0.0:g}"  # + 0.0 turns -0 into 0 so the spec reads cleanly


def _cosine_stations(n_points: int) -> np.ndarray:
    """Half-cosine stations from 0 to 1, ``n_points // 2 + 1`` of them (dense at both ends)."""
    beta = np.linspace(0.0, np.pi, n_points // 2 + 1)
    return 0.5 * (1.0 - np.cos(beta))


def _thickness(x: np.ndarray, t: float, closed_te: bool) -> np.ndarray:
    """NACA Report 460 half-thickness at chord stations ``x``."""
    a0, a1, a2, a3, a4 = _THICKNESS_COEFFS
    if closed_te:
        a4 = _CLOSED_A4
    return 5.0 * t * (a0 * np.sqrt(x) + x * (a1 + x * (a2 + x * (a3 + x * a4))))


def _assemble(x, yt, yc, dyc, spec: str) -> Outline:
    """Offset the thickness normal to the mean line and join the surfaces into one loop."""
    theta = np.arctan(dyc)
    s, c = np.sin(theta), np.cos(theta)
    upper = np.column_stack([x - yt * s, yc + yt * c])
    lower = np.column_stack([x + yt * s, yc - yt * c])
    # upper TE -> LE, then lower without repeating the shared LE point -> lower TE
    loop = np.vstack([upper[::-1], lower[1:]])
    return Outline.from_points(loop, name=spec, source=spec, exact=True)


def _naca_spec(digits: str, closed_te: bool) -> str:
    return f"naca{digits}{CLOSED_SUFFIX if closed_te else ''}"


def _digits(digits, count: int) -> str:
    d = str(digits).strip()
    if len(d) != count or not d.isdigit():
        raise InputError(f"naca{d}: a NACA {count}-digit spec needs exactly {count} digits")
    return d


# ---------------------------------------------------------------------------------- NACA
def naca4(digits: str, n_points: int = DEFAULT_POINTS, closed_te: bool = False) -> Outline:
    """NACA 4-digit section per NACA Report 460, chord 1, leading edge at the origin.

    Parameters
    ----------
    digits : str
        Four digits ``MPTT``: max camber ``M`` percent of chord at ``P`` tenths of chord,
        thickness ``TT`` percent of chord. ``00TT`` is symmetric.
    n_points : int, optional
        Number of rows of the returned ``Outline.points``; an even number is raised by one.
    closed_te : bool, optional
        Use the closed-trailing-edge coefficient (-0.1036) so the surfaces meet in a sharp
        trailing edge; by default the published open-trailing-edge thickness is used, which
        leaves a small base (blunt trailing edge).

    Returns
    -------
    Outline
        One loop from the upper trailing edge over a single leading-edge point to the lower
        trailing edge, with half-cosine spacing in x.

    Raises
    ------
    InputError
        Malformed digits, zero thickness, or camber without a camber position.
    """
    d = _digits(digits, 4)
    spec = _naca_spec(d, closed_te)
    n = _check_points(n_points, spec)
    m, p, t = int(d[0]) / 100.0, int(d[1]) / 10.0, int(d[2:]) / 100.0
    _check_thickness(t, spec)
    if m > 0.0 and p == 0.0:
        raise InputError(f"{spec}: a cambered section needs a max-camber position "
                         "(second digit 1-9)")
    x = _cosine_stations(n)
    yt = _thickness(x, t, closed_te)
    yc, dyc = mean_line_4(x, m, p)
    return _assemble(x, yt, yc, dyc, spec)


def _check_thickness(t: float, spec: str) -> None:
    """A thickness (chord fraction) the published equations describe a section at."""
    if t <= 0.0:
        raise InputError(f"{spec}: thickness must be at least 01 percent (the last two digits)")
    if t > MAX_THICKNESS:
        raise InputError(f"{spec}: {100 * t:g} % thick; the thickness equations describe "
                         f"sections up to {100 * MAX_THICKNESS:g} % of the chord (beyond, the "
                         "two surfaces no longer make a foil)")


def mean_line_4(x: np.ndarray, m: float, p: float) -> tuple[np.ndarray, np.ndarray]:
    """NACA Report 460 mean line (two parabolic arcs meeting at the max camber point x = p).

    Returns the ordinate and slope at the chord stations ``x``; zero camber gives zeros.
    """
    x = np.asarray(x, dtype=float)
    if m == 0.0:
        return np.zeros_like(x), np.zeros_like(x)
    front = x < p
    scale = np.where(front, m / p**2, m / (1.0 - p) ** 2)
    yc = np.where(front, scale * (2 * p * x - x**2), scale * (1 - 2 * p + 2 * p * x - x**2))
    return yc, 2.0 * scale * (p - x)


def naca5(digits: str, n_points: int = DEFAULT_POINTS, closed_te: bool = False) -> Outline:
    """NACA 5-digit section per NACA Report 610 (non-reflexed mean lines), chord 1.

    Parameters
    ----------
    digits : str
        Five digits ``LPQTT``: design lift coefficient ``0.15 L``, max camber at ``P / 20`` of
        the chord (``P`` 1 to 5, the standard mean lines 210 to 250), ``Q = 0`` (non-reflexed),
        thickness ``TT`` percent of chord with the Report 460 thickness distribution.
    n_points : int, optional
        Number of rows of the returned ``Outline.points``; an even number is raised by one.
    closed_te : bool, optional
        Closed-trailing-edge thickness, as in :func:`naca4`.

    Returns
    -------
    Outline

    Raises
    ------
    InputError
        Malformed digits, a reflexed mean line (``Q = 1``), or no standard mean line for ``P``.

    Notes
    -----
    The published mean lines are for ``L = 2`` (design lift coefficient 0.3); other ``L`` scale
    ``k1`` in proportion to the design lift coefficient, as thin-aerofoil theory gives lift
    linear in camber (common practice).
    """
    d = _digits(digits, 5)
    spec = _naca_spec(d, closed_te)
    n = _check_points(n_points, spec)
    lift_digit, pos_digit, reflex = int(d[0]), int(d[1]), int(d[2])
    t = int(d[3:]) / 100.0
    _check_thickness(t, spec)
    if reflex == 1:
        raise InputError(f"{spec}: only non-reflexed 5-digit mean lines (third digit 0) are "
                         "supported")
    if reflex != 0:
        raise InputError(f"{spec}: the third digit of a 5-digit section must be 0 "
                         "(non-reflexed mean line)")
    if lift_digit == 0:
        raise InputError(f"{spec}: the first digit (design lift) must be 1-9; "
                         "use a 4-digit 00xx spec for a symmetric section")
    if pos_digit not in _MEAN_LINES_5:
        raise InputError(f"{spec}: no standard mean line for second digit {pos_digit}; "
                         "use 1-5 (mean lines 210 to 250)")
    if t <= 0.0:
        raise InputError(f"{spec}: thickness must be at least 01 percent (the last two digits)")
    x = _cosine_stations(n)
    yt = _thickness(x, t, closed_te)
    yc, dyc = mean_line_5(x, lift_digit, pos_digit)
    return _assemble(x, yt, yc, dyc, spec)


def mean_line_5(x: np.ndarray, lift_digit: int, pos_digit: int) -> tuple[np.ndarray, np.ndarray]:
    """NACA Report 610 non-reflexed mean line ``L P 0`` (a cubic joined to a straight line).

    Returns the ordinate and slope at the chord stations ``x``; ``pos_digit`` must be 1 to 5.
    """
    x = np.asarray(x, dtype=float)
    r, k1 = _MEAN_LINES_5[pos_digit]
    k1 = k1 * lift_digit / 2.0
    front = x < r
    yc = np.where(front, k1 / 6.0 * (x**3 - 3 * r * x**2 + r**2 * (3 - r) * x),
                  k1 * r**3 / 6.0 * (1.0 - x))
    dyc = np.where(front, k1 / 6.0 * (3 * x**2 - 6 * r * x + r**2 * (3 - r)),
                   -k1 * r**3 / 6.0)
    return yc, dyc


# ---------------------------------------------------------------------------------- smooth bodies
def circle(radius: float = 1.0, n_points: int = DEFAULT_POINTS) -> Outline:
    """Circle of the given radius centred at the origin (a smooth body, no trailing edge).

    Parameters
    ----------
    radius : float, optional
        Radius, positive.
    n_points : int, optional
        Number of rows of ``Outline.points`` (the first point is repeated at the end).

    Returns
    -------
    Outline
    """
    spec = f"circle:{_fmt(float(radius))}" if _is_number(radius) else f"circle:{radius}"
    r = _finite_positive(radius, "radius", spec)
    n = _check_points(n_points, spec)
    phi = np.linspace(0.0, 2.0 * np.pi, n)
    return Outline.from_points(np.column_stack([r * np.cos(phi), r * np.sin(phi)]),
                               name=spec, source=spec, exact=True)


def ellipse(a: float, b: float, n_points: int = DEFAULT_POINTS) -> Outline:
    """Ellipse ``x^2/a^2 + y^2/b^2 = 1`` centred at the origin, major axis along x.

    Parameters
    ----------
    a, b : float
        Semi-axes along x and y, ``a >= b > 0``.
    n_points : int, optional
        Number of rows of ``Outline.points``; the points are uniform in the parametric angle,
        which puts them closer together at the ends of the major axis.

    Returns
    -------
    Outline
    """
    spec = (f"ellipse:{_fmt(float(a))},{_fmt(float(b))}" if _is_number(a) and _is_number(b)
            else f"ellipse:{a},{b}")
    a_ = _finite_positive(a, "semi-axis A", spec)
    b_ = _finite_positive(b, "semi-axis B", spec)
    if b_ > a_:
        raise InputError(f"{spec}: the major axis lies along x, so A (along x) must be at least "
                         f"B (along y)")
    n = _check_points(n_points, spec)
    phi = np.linspace(0.0, 2.0 * np.pi, n)
    return Outline.from_points(np.column_stack([a_ * np.cos(phi), b_ * np.sin(phi)]),
                               name=spec, source=spec, exact=True)


def _is_number(v) -> bool:
    try:
        float(v)
    except (TypeError, ValueError):
        return False
    return True


# ---------------------------------------------------------------------------------- conformal maps
def _map_circle(center, spec: str, n_points: int):
    """Check the centre and return the circle points (open arc, TE excluded) and their angles."""
    try:
        c = complex(center)
    except (TypeError, ValueError):
        raise InputError(f"{spec}: the centre must be a complex number, got {center!r}") from None
    if not (np.isfinite(c.real) and np.isfinite(c.imag)):
        raise InputError(f"{spec}: the centre must be finite")
    if c.real >= 0.0:
        # zeta = -1 must lie inside the circle through +1, which holds exactly when Re(c) < 0
        raise InputError(f"{spec}: the centre's x must be negative, so that the circle through "
                         "1 encloses -1")
    n = _check_points(n_points, spec)
    radius = abs(1.0 - c)
    phi0 = np.angle(1.0 - c)
    s = np.linspace(0.0, 2.0 * np.pi, n)[1:-1]  # the TE (s = 0 and 2 pi) is added exactly
    zeta = c + radius * np.exp(1j * (phi0 + s))
    return c, s, phi0, zeta


def joukowski(center: complex = complex(-0.1, 0.05), n_points: int = DEFAULT_POINTS) -> Outline:
    """Joukowski section: image of the circle through 1 under ``z = zeta + 1/zeta``.

    Parameters
    ----------
    center : complex
        Circle centre; its real part must be negative (thickness grows with ``-Re``, camber
        with ``Im``). The radius is ``|1 - center|``.
    n_points : int, optional
        Number of rows of ``Outline.points``; uniform in the circle angle, which clusters points
        at the leading and trailing edges.

    Returns
    -------
    Outline
        Starting and ending at the cusped trailing edge ``z = 2``.
    """
    spec = _map_spec("joukowski", center)
    _, _, _, zeta = _map_circle(center, spec, n_points)
    z = zeta + 1.0 / zeta
    return _map_outline(z, 2.0, spec)


def karman_trefftz(center: complex = complex(-0.1, 0.05), te_angle_deg: float = 10.0,
                   n_points: int = DEFAULT_POINTS) -> Outline:
    """Karman-Trefftz section with trailing-edge angle ``te_angle_deg``.

    The map is ``(z - n)/(z + n) = ((zeta - 1)/(zeta + 1))**n`` with ``n = 2 - tau/pi``,
    applied to the circle through ``zeta = 1`` centred at ``center``; ``tau = 0`` gives the
    Joukowski section.

    Parameters
    ----------
    center : complex
        Circle centre, real part negative.
    te_angle_deg : float
        Included trailing-edge angle tau in degrees, ``0 <= tau <= 90``.
    n_points : int, optional
        Number of rows of ``Outline.points``.

    Returns
    -------
    Outline
        Starting and ending at the trailing edge ``z = n``.
    """
    spec = _map_spec("karman-trefftz", center, te_angle_deg)
    try:
        tau = float(te_angle_deg)
    except (TypeError, ValueError):
        raise InputError(f"{spec}: the trailing-edge angle must be a number") from None
    if not (0.0 <= tau <= 90.0):
        raise InputError(f"{spec}: the trailing-edge angle must be between 0 and 90 degrees, "
                         f"got {te_angle_deg!r}")
    c, s, phi0, zeta = _map_circle(center, spec, n_points)
    n = 2.0 - tau / 180.0
    # Continuous branch of log q, q = (zeta-1)/(zeta+1): arg(zeta-1) along the circle through 1
    # is exactly phi0 + s/2 + pi/2 (chord direction); arg(zeta+1) winds once, so unwrap it.
    arg_q = phi0 + 0.5 * s + 0.5 * np.pi - np.unwrap(np.angle(zeta + 1.0))
    # log q is single-valued outside the circle and -> 0 at infinity; the radial ray out of the
    # point opposite zeta = 1 never meets the cut (-1, 1), so there the principal value is right.
    zeta_far = 2.0 * c - 1.0
    principal = np.angle((zeta_far - 1.0) / (zeta_far + 1.0))
    arg_q -= 2.0 * np.pi * np.round((np.interp(np.pi, s, arg_q) - principal) / (2.0 * np.pi))
    w = (np.abs(zeta - 1.0) / np.abs(zeta + 1.0)) ** n * np.exp(1j * n * arg_q)
    z = n * (1.0 + w) / (1.0 - w)
    return _map_outline(z, n, spec)


def _map_spec(kind: str, center, *more) -> str:
    try:
        c = complex(center)
        parts = [_fmt(c.real), _fmt(c.imag)]
    except (TypeError, ValueError):
        parts = [str(center)]
    parts += [_fmt(float(v)) if _is_number(v) else str(v) for v in more]
    return f"{kind}:{','.join(parts)}"


def _map_outline(z: np.ndarray, te: float, spec: str) -> Outline:
    loop = np.concatenate([[te], z, [te]])
    try:
        return Outline.from_points(np.column_stack([loop.real, loop.imag]), name=spec,
                                   source=spec, exact=True)
    except GeometryError as exc:
        raise InputError(f"{spec}: the centre gives no usable section ({exc})") from None


def __getattr__(name):
    # the spec parser moved to panelflow.geometry.specs (above this module and the series, so
    # that neither imports the other's caller); the old names keep working for one release
    if name in ("parse_spec", "SPEC_HELP"):
        import importlib
        import warnings

        warnings.warn(f"panelflow.geometry.sections.{name} has moved to "
                      f"panelflow.geometry.specs.{name}", DeprecationWarning, stacklevel=2)
        return getattr(importlib.import_module("panelflow.geometry.specs"), name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
