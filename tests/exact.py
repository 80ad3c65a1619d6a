"""Analytic reference solutions for checking panelflow, written independently of the solver.

Nothing here imports panelflow: every value comes from closed-form potential-flow theory
(numpy / scipy only), so a solver bug cannot leak into its own reference.

Conventions (the same in every function)
----------------------------------------
* Freestream speed ``U = 1`` along ``(cos alpha, sin alpha)``; density drops out (coefficients).
* Angles are in radians unless the argument name ends with ``_deg``.
* Complex velocity is ``w = u - i v``.
* Circulation ``gamma`` is counted **clockwise**, so positive circulation gives positive lift,
  ``L = rho U Gamma`` (Kutta-Joukowski), perpendicular to the freestream.
* Lift coefficient ``Cl = L / (1/2 rho U^2 c)``; pitching moment ``Cm = M / (1/2 rho U^2 c^2)``
  about a stated point, positive **nose-up** (clockwise in the x-y plane with the leading edge
  on the left).
* Chord ``c`` = distance from the leading edge to the trailing edge; for the mapped sections the
  leading edge is the surface point farthest from the trailing edge.
* Surface loops run counter-clockwise from the trailing edge over the upper surface and back
  along the lower surface (first point == last point == trailing edge), as an ``(n, 2)`` array.

Sources
-------
* Milne-Thomson, *Theoretical Hydrodynamics*: circle theorem, elliptic cylinder, Joukowski
  aerofoils, theorem of Blasius (chapters VI-VII in the edition recalled, from memory).
* Anderson, *Fundamentals of Aerodynamics*: ch. 3 (flow over a circular cylinder, with and
  without circulation; Kutta-Joukowski theorem) and ch. 4 (Kutta condition, thin-airfoil theory).
* Katz & Plotkin, *Low-Speed Aerodynamics*, ch. 6 (exact solutions with complex variables:
  Joukowski and Karman-Trefftz transformations).
* Abbott & von Doenhoff, *Theory of Wing Sections*, ch. 4 (thin-wing-section theory) and ch. 6
  (NACA 4-digit mean line, as published in NACA Report 460).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import integrate, optimize

__all__ = [
    "circle_cp",
    "circle_field",
    "ellipse_surface_speed",
    "ellipse_cp",
    "ellipse_cm",
    "KarmanTrefftz",
    "joukowski",
    "thin_airfoil_alpha_l0",
    "thin_airfoil_cm_quarter",
    "thin_airfoil_cl",
    "naca4_camber",
    "naca4_camber_slope",
]


def _as_complex(points) -> np.ndarray:
    """Accept complex numbers or an ``(n, 2)`` / ``(2,)`` array of (x, y) and return complex."""
    arr = np.asarray(points)
    if np.iscomplexobj(arr):
        return arr.astype(complex)
    arr = arr.astype(float)
    if arr.shape == (2,):
        return complex(arr[0], arr[1])
    if arr.ndim >= 1 and arr.shape[-1] == 2:
        return arr[..., 0] + 1j * arr[..., 1]
    return arr.astype(complex)  # real numbers: points on the x-axis


# --------------------------------------------------------------------------- circle
def circle_cp(theta, alpha: float = 0.0, gamma: float = 0.0, radius: float = 1.0) -> np.ndarray:
    """Exact surface pressure coefficient on a circular cylinder.

    With the defaults this is the classical ``Cp = 1 - 4 sin^2(theta)``.

    Source: Anderson, *Fundamentals of Aerodynamics*, ch. 3 (nonlifting and lifting flow over a
    circular cylinder); Milne-Thomson, *Theoretical Hydrodynamics*, circle theorem.

    Parameters
    ----------
    theta : array_like
        Polar angle of the surface point about the centre (radians, from the +x axis).
    alpha : float
        Angle of attack in radians.
    gamma : float
        Clockwise circulation (U = 1 units).
    radius : float
        Cylinder radius.

    Returns
    -------
    ndarray
        ``Cp = 1 - (2 sin(theta - alpha) + gamma / (2 pi radius))^2``.
    """
    theta = np.asarray(theta, float)
    q = 2.0 * np.sin(theta - alpha) + gamma / (2.0 * np.pi * radius)
    return 1.0 - q * q


def circle_field(z, alpha: float, radius: float = 1.0, gamma: float = 0.0,
                 center: complex = 0j) -> np.ndarray:
    """Exact complex velocity ``u - i v`` around a circular cylinder.

    ``W = U[(z-z0) e^{-i alpha} + R^2 e^{i alpha} / (z-z0)] + i Gamma/(2 pi) log(z-z0)``
    (clockwise Gamma), differentiated.

    Source: Milne-Thomson, *Theoretical Hydrodynamics*, circle theorem; Anderson,
    *Fundamentals of Aerodynamics*, ch. 3 (doublet + uniform flow + vortex).

    Parameters
    ----------
    z : array_like of complex, or (..., 2) array of (x, y)
        Field points (outside the cylinder for a physical answer).
    alpha : float
        Angle of attack in radians.
    radius : float
        Cylinder radius.
    gamma : float
        Clockwise circulation.
    center : complex
        Cylinder centre.

    Returns
    -------
    ndarray of complex
        ``u - i v`` at each point.
    """
    zr = _as_complex(z) - center
    return (np.exp(-1j * alpha) - radius**2 * np.exp(1j * alpha) / zr**2
            + 1j * gamma / (2.0 * np.pi * zr))


# --------------------------------------------------------------------------- ellipse
def _ellipse_angle(a: float, b: float, points) -> np.ndarray:
    """Eccentric angle t of surface points (x, y) = (a cos t, b sin t)."""
    zc = _as_complex(points)
    return np.arctan2(np.imag(zc) / b, np.real(zc) / a)


def ellipse_surface_speed(a: float, b: float, alpha: float, points) -> np.ndarray:
    """Exact surface speed on the ellipse ``x^2/a^2 + y^2/b^2 = 1`` with zero circulation.

    The circle ``zeta = R e^{it}``, ``R = (a + b)/2``, maps onto the ellipse by the
    Joukowski-type map ``z = zeta + lam^2 / zeta`` with ``lam^2 = (a^2 - b^2)/4``; the eccentric
    angle ``t`` of a surface point is its circle angle. Speed ``|dW/dzeta| / |dz/dzeta|``, which
    equals ``(a + b)|sin(t - alpha)| / sqrt(a^2 sin^2 t + b^2 cos^2 t)``.

    Source: Milne-Thomson, *Theoretical Hydrodynamics*, the elliptic cylinder (conformal map of
    the circle); Katz & Plotkin, *Low-Speed Aerodynamics*, ch. 6.

    Parameters
    ----------
    a, b : float
        Semi-axes along x and y (both > 0; ``a < b`` is allowed).
    alpha : float
        Angle of attack in radians.
    points : array_like
        Surface points, complex or ``(n, 2)``. Points off the surface are taken at their
        eccentric angle ``atan2(y/b, x/a)``.

    Returns
    -------
    ndarray
        Surface speed over U.
    """
    if a <= 0 or b <= 0:
        raise ValueError("ellipse semi-axes must be positive")
    t = _ellipse_angle(a, b, points)
    big_r = 0.5 * (a + b)
    lam2 = 0.25 * (a * a - b * b)
    zeta = big_r * np.exp(1j * t)
    dw = np.exp(-1j * alpha) - big_r**2 * np.exp(1j * alpha) / zeta**2
    dz = 1.0 - lam2 / zeta**2
    return np.abs(dw) / np.abs(dz)


def ellipse_cp(a: float, b: float, alpha: float, points) -> np.ndarray:
    """Exact surface Cp on the ellipse with zero circulation, ``1 - q^2``.

    Source: as :func:`ellipse_surface_speed` (Milne-Thomson, elliptic cylinder).

    Parameters
    ----------
    a, b : float
        Semi-axes along x and y.
    alpha : float
        Angle of attack in radians.
    points : array_like
        Surface points, complex or ``(n, 2)``.

    Returns
    -------
    ndarray
    """
    q = ellipse_surface_speed(a, b, alpha, points)
    return 1.0 - q * q


def ellipse_cm(a: float, b: float, alpha: float) -> float:
    """Exact pitching moment coefficient of the ellipse about its centre (zero circulation).

    The couple on an elliptic cylinder in uniform flow is ``M = pi rho U^2 (a^2 - b^2) sin a cos a``,
    turning the long axis across the stream (nose-up for ``a > b``, ``alpha > 0``). It is
    normalised here with the x-extent ``c = 2a``: ``Cm = pi (a^2 - b^2) sin(2 alpha) / (4 a^2)``.

    Source: Milne-Thomson, *Theoretical Hydrodynamics*, elliptic cylinder, couple from the
    theorem of Blasius (re-derived here from the Laurent coefficient of ``w(z)``).

    Parameters
    ----------
    a, b : float
        Semi-axes along x and y.
    alpha : float
        Angle of attack in radians.

    Returns
    -------
    float
        Nose-up moment coefficient about the centre, reference length ``2a``.
    """
    return float(np.pi * (a * a - b * b) * np.sin(2.0 * alpha) / (4.0 * a * a))


# --------------------------------------------------------------------------- Karman-Trefftz
@dataclass(frozen=True)
class KarmanTrefftz:
    """Karman-Trefftz section: the exact image of a circle, with the Kutta condition.

    Map ``(z - n)/(z + n) = ((zeta - 1)/(zeta + 1))^n`` with ``n = 2 - tau/pi`` (``tau`` the
    trailing-edge angle); ``tau = 0`` (``n = 2``) is the Joukowski map ``z = zeta + 1/zeta``.
    The circle has centre ``mu = center`` and passes through ``zeta = 1``, which maps to the
    trailing edge ``z = n``; ``zeta = -1`` must lie inside the circle (``Re(center) < 0``).
    Far away ``z = zeta + k/zeta + O(zeta^-3)`` with ``k = (n^2 - 1)/3``, so the freestream and
    the circulation are the same in both planes.

    Circle angles ``theta`` are polar angles about ``mu``: ``zeta = mu + a e^{i theta}``,
    ``a = |1 - mu|``. The trailing edge is at ``theta = -beta``, with
    ``beta = atan2(Im mu, 1 - Re mu)``: the angle, seen from ``zeta = 1``, between the negative
    real axis and the line to the centre (positive when the centre is above the axis).

    Kutta condition (derived from ``dW/dzeta = i e^{-i theta}[2U sin(theta - alpha) +
    Gamma/(2 pi a)]`` on the circle, zero at ``theta = -beta``):
    ``Gamma = 4 pi U a sin(alpha + beta)`` (clockwise).

    Source: Katz & Plotkin, *Low-Speed Aerodynamics*, ch. 6 (Joukowski and Karman-Trefftz
    transformations); Milne-Thomson, *Theoretical Hydrodynamics*, Joukowski aerofoils and the
    theorem of Blasius; Anderson, *Fundamentals of Aerodynamics*, ch. 3-4 (Kutta-Joukowski,
    Kutta condition).

    Parameters
    ----------
    center : complex
        Centre of the circle in the zeta-plane (``Re(center) < 0``).
    te_angle_deg : float
        Trailing-edge included angle ``tau`` in degrees, ``0 <= tau < 180``.
    """

    center: complex
    te_angle_deg: float = 0.0

    def __post_init__(self):
        object.__setattr__(self, "center", complex(self.center))
        if not 0.0 <= self.te_angle_deg < 180.0:
            raise ValueError("trailing-edge angle must be in [0, 180) degrees")
        if not self.center.real < 0.0:
            # zeta = -1 must be inside the circle, else the body is not a single foil.
            raise ValueError("circle centre must have a negative real part")

    # ----------------------------------------------------------------- parameters
    @property
    def n(self) -> float:
        """Map exponent ``2 - tau/pi``."""
        return 2.0 - np.radians(self.te_angle_deg) / np.pi

    @property
    def radius(self) -> float:
        """Circle radius ``a = |1 - mu|``."""
        return float(abs(1.0 - self.center))

    @property
    def beta(self) -> float:
        """Angle of the circle centre seen from ``zeta = 1`` (radians, see class docstring)."""
        return float(np.arctan2(self.center.imag, 1.0 - self.center.real))

    @property
    def far_field_k(self) -> float:
        """Coefficient ``k`` in ``z = zeta + k/zeta + ...`` at infinity, ``(n^2 - 1)/3``."""
        return (self.n**2 - 1.0) / 3.0

    def gamma(self, alpha: float) -> float:
        """Clockwise circulation from the Kutta condition, ``4 pi a sin(alpha + beta)`` (U = 1)."""
        return float(4.0 * np.pi * self.radius * np.sin(alpha + self.beta))

    # ----------------------------------------------------------------- the map
    def _zeta(self, theta) -> np.ndarray:
        return self.center + self.radius * np.exp(1j * np.asarray(theta, float))

    def map_to_z(self, zeta) -> np.ndarray:
        """Image ``z`` of points ``zeta`` on or outside the circle.

        ``z = n (1 + r)/(1 - r)``, ``r = s^n``, ``s = (zeta - 1)/(zeta + 1)``. The exterior of the
        circle maps to a disc in the s-plane that has ``s = 0`` on its rim and contains
        ``s = 1``; that disc lies in an open half-plane through 0 that never meets the negative
        real axis, so the principal branch of ``log s`` is continuous there (around the whole
        circle) and gives ``z -> zeta`` at infinity.
        """
        zeta = np.asarray(zeta, complex)
        n = self.n
        with np.errstate(divide="ignore", invalid="ignore"):
            s = (zeta - 1.0) / (zeta + 1.0)
            r = np.where(s == 0, 0j, np.exp(n * np.log(np.where(s == 0, 1.0, s))))
        return n * (1.0 + r) / (1.0 - r)

    def dz_dzeta(self, zeta) -> np.ndarray:
        """Map derivative ``dz/dzeta = 4 n^2 s^(n-1) / ((1 - s^n)^2 (zeta + 1)^2)``.

        Written this way (rather than ``(z^2 - n^2)/(zeta^2 - 1)``) it has no 0/0 at the
        trailing edge: it is 0 there (``n > 1``).
        """
        zeta = np.asarray(zeta, complex)
        n = self.n
        s = (zeta - 1.0) / (zeta + 1.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            logs = np.log(np.where(s == 0, 1.0, s))
            s_nm1 = np.where(s == 0, 0j, np.exp((n - 1.0) * logs))
            r = np.where(s == 0, 0j, np.exp(n * logs))
        return 4.0 * n * n * s_nm1 / ((1.0 - r) ** 2 * (zeta + 1.0) ** 2)

    def map_to_zeta(self, z) -> np.ndarray:
        """Inverse map: the root ``zeta`` outside (or nearest to the outside of) the circle.

        ``s = r^(1/n)`` has several branches ``exp((Log r + 2 pi i k)/n)``; ``k = -1, 0, 1`` cover
        every argument the s-disc can take (``n <= 2``). Only roots with argument in
        ``(-pi, pi]`` are kept (for them the principal-branch forward map gives back ``r``), and
        exactly one of those maps outside the circle when ``z`` is outside the body. The valid
        root farthest outside is returned; NaN if there is none.
        """
        zc = np.asarray(_as_complex(z), complex)
        n = self.n
        with np.errstate(divide="ignore", invalid="ignore"):
            r = (zc - n) / (zc + n)
            logr = np.log(np.where(r == 0, 1.0, r))
            best = np.full(zc.shape, np.nan + 0j)
            best_d = np.full(zc.shape, -np.inf)
            for k in (-1, 0, 1):
                arg = (logr.imag + 2.0 * np.pi * k) / n
                s = np.where(r == 0, 0j, np.exp(logr.real / n + 1j * arg))
                zeta = (1.0 + s) / (1.0 - s)
                d = np.abs(zeta - self.center) - self.radius
                # A root is only valid if the principal-branch forward map returns to r.
                valid = np.isfinite(d) & (arg > -np.pi) & (arg <= np.pi)
                d = np.where(valid, d, -np.inf)
                take = d > best_d
                best = np.where(take, zeta, best)
                best_d = np.where(take, d, best_d)
        return best

    # ----------------------------------------------------------------- surface
    def circle_angles(self, n_panels: int) -> np.ndarray:
        """``n_panels + 1`` equally spaced circle angles from the trailing edge round (CCW).

        Starts at ``theta = -beta`` (trailing edge), goes over the upper surface, and ends at
        ``-beta + 2 pi`` (trailing edge again). Equal steps in theta cluster the points near
        the leading and trailing edges.
        """
        if int(n_panels) < 3:
            raise ValueError("need at least 3 panels")
        return -self.beta + np.linspace(0.0, 2.0 * np.pi, int(n_panels) + 1)

    def surface(self, theta_or_n) -> np.ndarray:
        """Exact surface points ``(x, y)`` in the z-plane.

        Parameters
        ----------
        theta_or_n : int or array_like
            An int ``n`` gives ``n + 1`` points at :meth:`circle_angles` ``(n)`` (a closed CCW
            loop from the trailing edge over the upper surface, first == last); an array gives
            the points at those circle angles (radians).

        Returns
        -------
        ndarray, shape (m, 2)
        """
        theta = self._theta_arg(theta_or_n)
        z = self.map_to_z(self._zeta(theta))
        return np.stack([z.real, z.imag], axis=-1)

    def _theta_arg(self, theta_or_n) -> np.ndarray:
        if isinstance(theta_or_n, (int, np.integer)):
            return self.circle_angles(int(theta_or_n))
        return np.asarray(theta_or_n, float)

    def circle_angles_of(self, points) -> np.ndarray:
        """Circle angles of z-plane points on (or very near) the surface, via the inverse map.

        Useful for comparing Cp at a solver's own points (e.g. panel midpoints, which lie a
        little inside the exact surface); the answer is the angle of the nearest exterior
        branch, so it is an approximation for points off the surface.
        """
        zeta = self.map_to_zeta(points)
        return np.angle(zeta - self.center)

    # ----------------------------------------------------------------- velocities and Cp
    def surface_speed_at_circle_angles(self, theta, alpha: float) -> np.ndarray:
        """Exact surface speed (over U) with the Kutta condition.

        ``q = |dW/dzeta| / |dz/dzeta|`` with ``|dW/dzeta| = 4|sin h||cos g|``,
        ``h = (theta + beta)/2``, ``g = (theta - 2 alpha - beta)/2`` (sum-to-product of
        ``2[sin(theta - alpha) + sin(alpha + beta)]``). The common factor ``|sin h|`` of
        ``|dW/dzeta|`` and ``|zeta - 1| = 2a|sin h|`` is cancelled by hand:

        ``q = |cos g| |1 - r|^2 |zeta + 1|^(n+1) |sin h|^(2-n) / (n^2 (2a)^(n-1))``,

        which is finite everywhere. At the trailing edge it gives the exact limit:
        ``|cos(alpha + beta)| / a`` for the Joukowski cusp (``n = 2``, ``0**0 = 1``) and ``0``
        for a finite angle (``n < 2``).
        """
        theta = np.asarray(theta, float)
        n, a, beta = self.n, self.radius, self.beta
        zeta = self._zeta(theta)
        h = 0.5 * (theta + beta)
        g = 0.5 * (theta - 2.0 * alpha - beta)
        with np.errstate(divide="ignore", invalid="ignore"):
            s = (zeta - 1.0) / (zeta + 1.0)
            r = np.where(s == 0, 0j, np.exp(n * np.log(np.where(s == 0, 1.0, s))))
        sin_h = np.abs(np.sin(h))
        return (np.abs(np.cos(g)) * np.abs(1.0 - r) ** 2 * np.abs(zeta + 1.0) ** (n + 1.0)
                * sin_h ** (2.0 - n) / (n * n * (2.0 * a) ** (n - 1.0)))

    def cp_at_circle_angles(self, theta, alpha: float) -> np.ndarray:
        """Exact surface Cp ``1 - q^2`` at circle angles ``theta`` (radians), Kutta condition.

        Finite at the trailing edge (see :meth:`surface_speed_at_circle_angles`): ``Cp = 1`` for
        ``tau > 0`` (stagnation in the corner), ``1 - cos^2(alpha + beta)/a^2`` for the cusp.
        Pair with :meth:`surface` called with the same ``theta``.
        """
        q = self.surface_speed_at_circle_angles(theta, alpha)
        return 1.0 - q * q

    def kt_field(self, z, alpha: float) -> np.ndarray:
        """Exact complex velocity ``u - i v`` at z-plane points outside the section.

        ``w = (dW/dzeta) / (dz/dzeta)`` at the exterior root ``zeta`` of the inverse map, with
        the Kutta circulation. Points inside the body give NaN.
        """
        zc = np.asarray(_as_complex(z), complex)
        zeta = self.map_to_zeta(zc)
        inside = ~(np.abs(zeta - self.center) >= self.radius * (1.0 - 1e-12))
        zr = zeta - self.center
        g = self.gamma(alpha)
        with np.errstate(divide="ignore", invalid="ignore"):
            dw = (np.exp(-1j * alpha) - self.radius**2 * np.exp(1j * alpha) / zr**2
                  + 1j * g / (2.0 * np.pi * zr))
            w = dw / self.dz_dzeta(zeta)
        return np.where(inside, np.nan + 0j, w)

    def far_field_coefficients(self, alpha: float) -> tuple[complex, complex, complex]:
        """Laurent coefficients ``w(z) = a0 + a1/z + a2/z^2 + O(z^-3)`` at infinity.

        From ``zeta = z - k/z + O(z^-3)`` and
        ``W = (zeta - mu) e^{-i alpha} + a^2 e^{i alpha}/(zeta - mu) + i Gamma/(2 pi) log(zeta - mu)``:
        ``a0 = e^{-i alpha}``, ``a1 = i Gamma/(2 pi)``,
        ``a2 = k e^{-i alpha} - a^2 e^{i alpha} + i Gamma mu/(2 pi)``.
        """
        g = self.gamma(alpha)
        a0 = np.exp(-1j * alpha)
        a1 = 1j * g / (2.0 * np.pi)
        a2 = (self.far_field_k * np.exp(-1j * alpha) - self.radius**2 * np.exp(1j * alpha)
              + 1j * g * self.center / (2.0 * np.pi))
        return complex(a0), complex(a1), complex(a2)

    # ----------------------------------------------------------------- geometry facts
    @property
    def trailing_edge(self) -> np.ndarray:
        """Trailing-edge point ``(n, 0)``, the image of ``zeta = 1``."""
        return np.array([self.n, 0.0])

    @property
    def leading_edge_angle(self) -> float:
        """Circle angle of the leading edge (surface point farthest from the trailing edge)."""
        te = complex(self.n, 0.0)

        def dist2(t):
            return np.abs(self.map_to_z(self._zeta(t)) - te) ** 2

        def d_dist2(t):
            zeta = self._zeta(t)
            dz_dt = self.dz_dzeta(zeta) * 1j * self.radius * np.exp(1j * t)
            return 2.0 * np.real(np.conj(self.map_to_z(zeta) - te) * dz_dt)

        t = -self.beta + np.linspace(0.0, 2.0 * np.pi, 4097)[1:-1]
        k = int(np.argmax(dist2(t)))
        lo, hi = t[max(k - 1, 0)], t[min(k + 1, len(t) - 1)]
        # The distance is stationary at its maximum: root of its derivative, to full precision.
        return float(optimize.brentq(d_dist2, lo, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps))

    @property
    def leading_edge(self) -> np.ndarray:
        """Leading-edge point ``(x, y)``."""
        return self.surface(np.array([self.leading_edge_angle]))[0]

    @property
    def chord(self) -> float:
        """Chord ``c`` = distance from leading edge to trailing edge."""
        return float(np.hypot(*(self.trailing_edge - self.leading_edge)))

    @property
    def chord_angle(self) -> float:
        """Incidence of the chord line to the x-axis in radians, positive nose-up.

        ``atan2(-(y_te - y_le), x_te - x_le)``; the angle of attack measured from the chord
        line is ``alpha + chord_angle``.
        """
        d = self.trailing_edge - self.leading_edge
        return float(np.arctan2(-d[1], d[0]))

    def chord_point(self, fraction: float) -> np.ndarray:
        """Point on the chord line at ``fraction`` of the chord from the leading edge."""
        le = self.leading_edge
        return le + fraction * (self.trailing_edge - le)

    @property
    def quarter_chord(self) -> np.ndarray:
        """Quarter-chord point ``(x, y)``."""
        return self.chord_point(0.25)

    # ----------------------------------------------------------------- loads
    def cl(self, alpha: float) -> float:
        """Exact lift coefficient ``2 Gamma / (U c) = 8 pi a sin(alpha + beta) / c``.

        Kutta-Joukowski (Anderson ch. 3); ``alpha`` in radians from the x-axis.
        """
        return float(2.0 * self.gamma(alpha) / self.chord)

    def force(self, alpha: float) -> np.ndarray:
        """Force ``(X, Y)`` per unit ``rho`` (U = 1): ``(-Gamma sin alpha, Gamma cos alpha)``.

        Blasius ``X - iY = (i rho/2) oint w^2 dz = -2 pi rho a0 a1``.
        """
        g = self.gamma(alpha)
        return np.array([-g * np.sin(alpha), g * np.cos(alpha)])

    def moment_ccw_origin(self, alpha: float) -> float:
        """Counter-clockwise moment about ``z = 0`` per unit ``rho`` (U = 1), by Blasius.

        ``M = Re[-(rho/2) oint z w^2 dz]`` (counter-clockwise, from ``dM = p (x dx + y dy)``
        and ``w dz`` real on the body); the contour is moved to infinity, so
        ``oint z w^2 dz = 2 pi i (2 a0 a2 + a1^2)``. ``a1^2`` is real and drops out:
        ``M = 2 pi rho Im(a0 a2) = -2 pi rho k sin(2 alpha) + rho Gamma Re(mu e^{-i alpha})``.
        """
        a0, a1, a2 = self.far_field_coefficients(alpha)
        return float(np.real(-0.5 * 2j * np.pi * (2.0 * a0 * a2 + a1 * a1)))

    def cm(self, alpha: float, about=None) -> float:
        """Exact pitching moment coefficient, nose-up positive, ``M / (1/2 rho U^2 c^2)``.

        Parameters
        ----------
        alpha : float
            Angle of attack in radians (from the x-axis).
        about : complex or (x, y), optional
            Moment reference point; default the quarter-chord point.

        Returns
        -------
        float
        """
        ref = self.quarter_chord if about is None else about
        ref = complex(_as_complex(ref))
        fx, fy = self.force(alpha)
        m_ccw = self.moment_ccw_origin(alpha) - (ref.real * fy - ref.imag * fx)
        return float(-m_ccw / (0.5 * self.chord**2))


def joukowski(center: complex) -> KarmanTrefftz:
    """Joukowski section ``z = zeta + 1/zeta`` (cusped trailing edge at ``z = 2``).

    The ``tau = 0`` (``n = 2``) case of :class:`KarmanTrefftz`. Source: Katz & Plotkin,
    *Low-Speed Aerodynamics*, ch. 6; Milne-Thomson, *Theoretical Hydrodynamics*, Joukowski
    aerofoils.
    """
    return KarmanTrefftz(center, 0.0)


# --------------------------------------------------------------------------- thin-airfoil theory
def _theta_of_x(x):
    """Glauert variable: ``x = (1 - cos theta)/2`` on a unit chord."""
    return np.arccos(np.clip(1.0 - 2.0 * np.asarray(x, float), -1.0, 1.0))


def _glauert_quad(camber_slope_fn, weight, kinks_x):
    kinks = kinks_x if kinks_x is not None else getattr(camber_slope_fn, "kinks_x", ())
    pts = [float(_theta_of_x(x)) for x in kinks if 0.0 < x < 1.0]

    def f(t):
        return float(camber_slope_fn(0.5 * (1.0 - np.cos(t)))) * weight(t)

    val, _ = integrate.quad(f, 0.0, np.pi, points=pts or None, epsabs=1e-13, epsrel=1e-12,
                            limit=200)
    return val


def thin_airfoil_alpha_l0(camber_slope_fn, kinks_x=None) -> float:
    """Zero-lift angle of attack from thin-airfoil theory, in radians (from the chord line).

    ``alpha_L0 = -(1/pi) int_0^pi (dz/dx)(cos theta - 1) d theta``, ``x = (1 - cos theta)/2``.

    Source: Anderson, *Fundamentals of Aerodynamics*, ch. 4 (cambered airfoil);
    Abbott & von Doenhoff, *Theory of Wing Sections*, ch. 4.

    Parameters
    ----------
    camber_slope_fn : callable
        ``dz/dx`` of the mean line as a function of ``x/c`` in [0, 1].
    kinks_x : sequence of float, optional
        Chord stations where the slope has a kink (passed to ``quad`` as break points);
        default the function's ``kinks_x`` attribute, if any.

    Returns
    -------
    float
    """
    return -_glauert_quad(camber_slope_fn, lambda t: np.cos(t) - 1.0, kinks_x) / np.pi


def thin_airfoil_cm_quarter(camber_slope_fn, kinks_x=None) -> float:
    """Quarter-chord pitching moment coefficient from thin-airfoil theory (nose-up positive).

    ``Cm_c/4 = (pi/4)(A2 - A1)``, ``A_n = (2/pi) int_0^pi (dz/dx) cos(n theta) d theta``, i.e.
    ``Cm_c/4 = (1/2) int_0^pi (dz/dx)(cos 2 theta - cos theta) d theta``.

    Source: Anderson, *Fundamentals of Aerodynamics*, ch. 4; Abbott & von Doenhoff,
    *Theory of Wing Sections*, ch. 4.

    Parameters
    ----------
    camber_slope_fn : callable
        ``dz/dx`` of the mean line as a function of ``x/c``.
    kinks_x : sequence of float, optional
        Slope kinks (see :func:`thin_airfoil_alpha_l0`).

    Returns
    -------
    float
    """
    return 0.5 * _glauert_quad(camber_slope_fn, lambda t: np.cos(2.0 * t) - np.cos(t), kinks_x)


def thin_airfoil_cl(alpha: float, camber_slope_fn, kinks_x=None) -> float:
    """Thin-airfoil lift coefficient ``2 pi (alpha - alpha_L0)`` (alpha in radians, from chord).

    Source: Anderson, *Fundamentals of Aerodynamics*, ch. 4.
    """
    return float(2.0 * np.pi * (alpha - thin_airfoil_alpha_l0(camber_slope_fn, kinks_x)))


def naca4_camber(m: float, p: float):
    """NACA 4-digit mean line ``y_c(x)`` on a unit chord (NACA Report 460).

    ``y_c = m/p^2 (2 p x - x^2)`` for ``x <= p``, ``m/(1-p)^2 ((1 - 2p) + 2 p x - x^2)`` aft.

    Source: NACA Report 460; Abbott & von Doenhoff, *Theory of Wing Sections*, ch. 6.

    Parameters
    ----------
    m : float
        Maximum camber over chord (0.02 for a 2xxx section).
    p : float
        Chordwise position of maximum camber (0.4 for an x4xx section), ``0 < p < 1``.

    Returns
    -------
    callable
        ``y_c(x)``, vectorised.
    """
    _check_mp(m, p)

    def camber(x):
        x = np.asarray(x, float)
        return np.where(x <= p, m / p**2 * (2 * p * x - x * x),
                        m / (1 - p) ** 2 * ((1 - 2 * p) + 2 * p * x - x * x))

    camber.kinks_x = (p,)
    return camber


def naca4_camber_slope(m: float, p: float):
    """Slope ``dy_c/dx`` of the NACA 4-digit mean line (NACA Report 460).

    ``2m/p^2 (p - x)`` for ``x <= p``, ``2m/(1-p)^2 (p - x)`` aft; the second derivative jumps
    at ``x = p``, recorded in the returned function's ``kinks_x`` attribute for quadrature.

    Source: NACA Report 460; Abbott & von Doenhoff, *Theory of Wing Sections*, ch. 6.

    Parameters
    ----------
    m, p : float
        As :func:`naca4_camber`.

    Returns
    -------
    callable
        ``dy_c/dx(x)``, vectorised, with attribute ``kinks_x = (p,)``.
    """
    _check_mp(m, p)

    def slope(x):
        x = np.asarray(x, float)
        return np.where(x <= p, 2 * m / p**2 * (p - x), 2 * m / (1 - p) ** 2 * (p - x))

    slope.kinks_x = (p,)
    return slope


def _check_mp(m, p):
    if not 0.0 < p < 1.0:
        raise ValueError("position of maximum camber p must be in (0, 1)")
    if not np.isfinite(m):
        raise ValueError("camber m must be finite")
