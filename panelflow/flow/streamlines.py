"""Streamlines of the computed flow: speed, Cp, curvature and the cross-stream pressure gradient.

A streamline is integrated in arc length ``s``: ``dx/ds = u/|V|``, ``dy/ds = v/|V|``, with the
velocity of :func:`panelflow.flow.field.unit_fields` (so the line follows exactly the field that
:func:`panelflow.flow.field.flow_field` reports, near-surface layer included). Integration stops when
the line leaves the window, comes within a small distance of a body, reaches a point of
(nearly) zero speed, or reaches its maximum length.

Curvature and the pressure gradient across the line
---------------------------------------------------
The curvature is taken from the velocity field itself, not from the traced points:
``kappa = (u a_y - v a_x) / |V|^3`` with the convective acceleration ``a = (V . grad) V`` found by
a central difference of the velocity a short step ``h`` either way along the flow direction.
This is second order in ``h`` with ``h`` a small fraction of a panel length, so its error is
negligible, and it does not depend on how finely the line is sampled (differentiating the
sampled line twice would).

Across a streamline, Euler's equation for steady inviscid flow balances the centripetal
acceleration with the pressure gradient: with ``n`` the unit normal to the left of the flow
direction and ``kappa > 0`` when the line turns left (centre of curvature on the left),
``rho V^2 kappa = -dp/dn`` — the pressure rises away from the centre of curvature. Dividing by
the dynamic pressure ``rho U^2 / 2`` (``U = 1``) gives, per unit length,

    dCp/dn = -2 V^2 kappa                                              (:func:`euler_dp_dn`)

For irrotational flow the same follows from Bernoulli's equation, ``Cp = 1 - V^2``, and
``dV/dn = V kappa`` (zero vorticity in streamline coordinates). :func:`field_dp_dn` gets the
same quantity directly from the Cp field by a central difference across the line, so the two
can be compared: they agree wherever the computed field is irrotational, i.e. outside the
near-surface layer (see :mod:`panelflow.flow.field`), whose interpolated velocity is not.

Source: Euler's equation in streamline coordinates, e.g. Anderson, *Fundamentals of
Aerodynamics* (ch. 3, flow kinematics and Bernoulli's equation) — from memory.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np
import shapely
from scipy.integrate import solve_ivp

from panelflow.errors import InputError, SolveError
from panelflow.flow.field import inside_bodies, system_for, unit_fields
from panelflow.geometry.outline import SMOOTH
from panelflow.flow.solver import System
from panelflow.flow.surface import stagnation_point

__all__ = [
    "END_BODY",
    "END_LENGTH",
    "END_STAGNATION",
    "END_WINDOW",
    "Streamline",
    "default_window",
    "dividing_streamline",
    "euler_dp_dn",
    "field_dp_dn",
    "streamlines",
    "trace",
]

END_WINDOW = "window"
END_BODY = "body"
END_STAGNATION = "stagnation"
END_PLANE = "plane"
END_LENGTH = "length"

# Integration tolerances (ATOL per unit window diagonal): the traced line stays on its
# streamline to ~1e-7 of the window size, well below the field's own error (~1e-4 in Cp).
# RK45 rather than a higher-order method because the near-surface layer's velocity has kinks
# (slope jumps at its outer edge and across panel corners), where high order buys nothing.
RTOL = 1e-8
ATOL = 1e-10
# Field evaluations allowed per line before giving up (about 30 s at 0.3 ms a call).
MAX_EVALUATIONS = 100_000
# Speed (per unit freestream) below which a line is taken to have reached a stagnation point.
STOP_SPEED = 1e-3
# Fractions of the median panel length: stop distance from a body, finite-difference step of
# the curvature and of field_dp_dn, and the start offset of the dividing streamline.
STOP_DISTANCE = 1e-3
DIFF_STEP = 1e-2
DIVIDING_OFFSET = 1e-2


@dataclass(frozen=True)
class Streamline:
    """One traced streamline, sampled along its arc length.

    All arrays have one value per sample point, in the order the line was traced (from the seed).
    Velocities are per unit freestream speed and lengths are in the input's units.

    Attributes
    ----------
    x, y : ndarray
        Sample points.
    s : ndarray
        Arc length from the first point, increasing.
    u, v : ndarray
        Velocity components.
    speed : ndarray
        ``|V| = sqrt(u^2 + v^2)``.
    cp : ndarray
        Pressure coefficient ``1 - |V|^2`` (Bernoulli's equation).
    curvature : ndarray
        Signed curvature ``1/R`` of the streamline, positive when the line turns left
        (counter-clockwise) as followed in the flow direction.
    dp_dn : ndarray
        Cross-stream pressure gradient ``dCp/dn = -2 |V|^2 curvature`` from Euler's equation
        (:func:`euler_dp_dn`), ``n`` the unit normal to the left of the flow direction, per unit
        length.
    end_reason : str
        Why tracing stopped at the last point: ``"window"`` (left the window), ``"body"``
        (reached a body surface), ``"plane"`` (reached a wall or free surface), ``"stagnation"``
        (speed fell to ``stop_speed``) or ``"length"`` (reached ``max_length``).
    alpha_deg : float
        Angle of attack in degrees.

    Notes
    -----
    A line traced upstream (``direction=-1``) runs against the flow: its ``s`` still grows from
    the seed, but ``u``, ``v``, ``curvature`` and ``dp_dn`` always refer to the flow direction.
    :meth:`reversed` turns it round.
    """

    x: np.ndarray
    y: np.ndarray
    s: np.ndarray
    u: np.ndarray
    v: np.ndarray
    speed: np.ndarray
    cp: np.ndarray
    curvature: np.ndarray
    dp_dn: np.ndarray
    end_reason: str
    alpha_deg: float

    _ARRAYS = ("x", "y", "s", "u", "v", "speed", "cp", "curvature", "dp_dn")

    def __post_init__(self):
        for name in self._ARRAYS:
            value = np.asarray(getattr(self, name), float)
            value.setflags(write=False)
            object.__setattr__(self, name, value)

    @property
    def points(self) -> np.ndarray:
        """Sample points as complex ``x + i y``."""
        return self.x + 1j * self.y

    @property
    def length(self) -> float:
        """Arc length of the line."""
        return float(self.s[-1]) if len(self.s) else 0.0

    def reversed(self, end_reason: str | None = None) -> Streamline:
        """The same line sampled from its last point back to its first.

        Parameters
        ----------
        end_reason : str, optional
            End reason of the reversed line (which now ends at the seed); default unchanged.

        Returns
        -------
        Streamline
            Arrays reversed, ``s`` measured from the new first point; velocities, curvature
            and ``dp_dn`` unchanged (they refer to the flow direction).
        """
        flip = {name: getattr(self, name)[::-1] for name in self._ARRAYS}
        flip["s"] = self.length - flip["s"]
        return dataclasses.replace(self, **flip,
                                   end_reason=self.end_reason if end_reason is None else end_reason)

    def __len__(self) -> int:
        return len(self.x)

    def __repr__(self) -> str:
        return (f"Streamline({len(self)} points, length {self.length:.4g}, alpha "
                f"{self.alpha_deg:g} deg, ends: {self.end_reason})")


# ------------------------------------------------------------------------------------ helpers
def euler_dp_dn(speed, curvature) -> np.ndarray:
    """Cross-stream pressure gradient from Euler's equation, ``dCp/dn = -2 V^2 kappa``.

    Parameters
    ----------
    speed : array_like
        Speed per unit freestream speed.
    curvature : array_like
        Signed streamline curvature, positive turning left.

    Returns
    -------
    ndarray
        ``dCp/dn`` per unit length, ``n`` to the left of the flow direction.
    """
    speed = np.asarray(speed, float)
    return -2.0 * speed * speed * np.asarray(curvature, float)


def _length_scale(system: System) -> float:
    return float(np.median(system.panels.length))


def _velocity(system: System, alpha_deg: float, points) -> np.ndarray:
    """Complex velocity ``u + i v`` at ``points`` (NaN inside bodies)."""
    w, _ = unit_fields(system, points)
    a = np.radians(alpha_deg)
    return np.conj(np.cos(a) * w[:, 0] + np.sin(a) * w[:, 1])


def _curvature(system: System, alpha_deg: float, z: np.ndarray, vel: np.ndarray,
               h: float) -> np.ndarray:
    """Streamline curvature ``(u a_y - v a_x)/|V|^3`` with ``a`` by central differences."""
    with np.errstate(invalid="ignore", divide="ignore"):
        t = vel / np.abs(vel)
        ok = np.isfinite(t)
        kappa = np.full(len(z), np.nan)
        if np.any(ok):
            zk, tk = z[ok], t[ok]
            both = _velocity(system, alpha_deg, np.concatenate([zk + h * tk, zk - h * tk]))
            dv = both[:len(zk)] - both[len(zk):]
            vk = vel[ok]
            # a = |V| dV/ds, so (conj(V) a).imag / |V|^3 = (conj(V) dV/ds).imag / |V|^2
            kappa[ok] = (np.conj(vk) * dv).imag / (2.0 * h * np.abs(vk) ** 2)
    return kappa


def field_dp_dn(system, streamline: Streamline, h: float | None = None) -> np.ndarray:
    """Cross-stream pressure gradient ``dCp/dn`` at the line's points, from the Cp field.

    A central difference of ``Cp = 1 - |V|^2`` a distance ``h`` either side of each point along
    the unit normal ``n`` to the left of the flow direction. Independent of the streamline's
    curvature, so it checks :attr:`Streamline.dp_dn` (Euler's equation) against the field.

    Parameters
    ----------
    system : System or Result
        The system the line was traced in (or the result holding it).
    streamline : Streamline
    h : float, optional
        Half the difference span; default 1 % of the median panel length.

    Returns
    -------
    ndarray
        ``dCp/dn`` per unit length (NaN where the speed is zero or a point is inside a body).
    """
    system = system_for(system, streamline.alpha_deg)
    h = DIFF_STEP * _length_scale(system) if h is None else float(h)
    if not (np.isfinite(h) and h > 0.0):
        raise InputError(f"difference step h must be a positive number, got {h!r}")
    z = streamline.points
    vel = streamline.u + 1j * streamline.v
    with np.errstate(invalid="ignore", divide="ignore"):
        n = 1j * vel / np.abs(vel)
    out = np.full(len(z), np.nan)
    ok = np.isfinite(n)
    if np.any(ok):
        both = _velocity(system, streamline.alpha_deg,
                         np.concatenate([z[ok] + h * n[ok], z[ok] - h * n[ok]]))
        cp = 1.0 - np.abs(both) ** 2
        k = int(ok.sum())
        out[ok] = (cp[:k] - cp[k:]) / (2.0 * h)
    return out


def _check_window(window) -> tuple[float, float, float, float]:
    try:
        x0, x1, y0, y1 = (float(v) for v in window)
    except (TypeError, ValueError):
        raise InputError(f"window must be (x0, x1, y0, y1), got {window!r}") from None
    if not all(np.isfinite([x0, x1, y0, y1])) or not (x1 > x0 and y1 > y0):
        raise InputError(f"window {window}: need finite X0 < X1 and Y0 < Y1")
    return x0, x1, y0, y1


def _positive(name: str, value) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a positive number, got {value!r}") from None
    if not (np.isfinite(v) and v > 0.0):
        raise InputError(f"{name} must be a positive number, got {value!r}")
    return v


def _check_alpha(alpha_deg) -> float:
    try:
        a = float(alpha_deg)
    except (TypeError, ValueError):
        raise InputError(f"angle of attack must be a number, got {alpha_deg!r}") from None
    if not np.isfinite(a):
        raise InputError("angle of attack must be finite")
    return a


def _as_complex_point(seed) -> complex:
    arr = np.asarray(seed)
    try:
        if np.iscomplexobj(arr) and arr.size == 1:
            z = complex(arr.ravel()[0])
        else:
            arr = np.asarray(arr, float).ravel()
            if arr.size != 2:
                raise ValueError
            z = complex(arr[0], arr[1])
    except (TypeError, ValueError):
        raise InputError(f"seed must be a complex number or (x, y), got {seed!r}") from None
    if not (np.isfinite(z.real) and np.isfinite(z.imag)):
        raise InputError("seed must be finite")
    return z


def default_window(system: System) -> tuple[float, float, float, float]:
    """The bodies' bounding box widened on every side by its larger dimension."""
    nodes = system.panels.nodes
    (xa, ya), (xb, yb) = nodes.min(axis=0), nodes.max(axis=0)
    pad = max(xb - xa, yb - ya)
    return (float(xa - pad), float(xb + pad), float(ya - pad), float(yb + pad))


def _surfaces(system: System):
    """All bodies' panel polygons' boundaries, as one prepared geometry."""
    p = system.panels
    rings = []
    for k in range(p.n_bodies):
        pts = p.nodes[p.body_nodes(k)]
        rings.append(np.vstack([pts, pts[:1]]))
    geom = shapely.MultiLineString(rings)
    shapely.prepare(geom)
    return geom


# ------------------------------------------------------------------------------------ tracing
def trace(system: System, alpha_deg: float, seed, window, max_length: float | None = None,
          direction: int = +1, step: float | None = None, stop_speed: float = STOP_SPEED,
          stop_distance: float | None = None, rtol: float = RTOL) -> Streamline:
    """Trace the streamline through ``seed``.

    Parameters
    ----------
    system : System
        Factorised panel system (``Analysis.fine.system``).
    alpha_deg : float
        Angle of attack in degrees from the input x-axis.
    seed : complex or (x, y)
        Starting point, inside the window and outside every body.
    window : (x0, x1, y0, y1)
        Tracing stops where the line leaves this rectangle.
    max_length : float, optional
        Longest arc length traced; default five times the window's diagonal.
    direction : {+1, -1}
        +1 traces downstream (with the flow), -1 upstream.
    step : float, optional
        Arc-length spacing of the output samples (the last sample is always the end point);
        default 1/400 of the window's diagonal.
    stop_speed : float
        Speed (per unit freestream) at which the line is taken to reach a stagnation point.
    stop_distance : float, optional
        Distance from a body surface at which tracing stops; default 1/1000 of the median
        panel length.
    rtol : float
        Relative tolerance of the integrator (scipy ``solve_ivp``, RK45).

    Returns
    -------
    Streamline

    Raises
    ------
    InputError
        For a seed outside the window or inside a body, or an unusable option.
    SolveError
        When the integrator fails away from any stopping condition.
    """
    x0, x1, y0, y1 = _check_window(window)
    alpha = _check_alpha(alpha_deg)
    system = system_for(system, alpha)
    z0 = _as_complex_point(seed)
    if direction not in (1, -1):
        raise InputError(f"direction must be +1 (downstream) or -1 (upstream), got {direction!r}")
    if not (x0 <= z0.real <= x1 and y0 <= z0.imag <= y1):
        raise InputError(f"seed ({z0.real:g}, {z0.imag:g}) is outside the window {window}")
    if inside_bodies(system, np.array([z0]))[0]:
        raise InputError(f"seed ({z0.real:g}, {z0.imag:g}) is inside a body")
    diag = float(np.hypot(x1 - x0, y1 - y0))
    scale = _length_scale(system)
    max_length = _positive("max_length", 5.0 * diag if max_length is None else max_length)
    step = _positive("step", diag / 400.0 if step is None else step)
    stop_speed = _positive("stop_speed", stop_speed)
    stop_distance = _positive("stop_distance", STOP_DISTANCE * scale if stop_distance is None
                              else stop_distance)
    rtol = _positive("rtol", rtol)

    surfaces = _surfaces(system)
    sign = float(direction)

    calls = [0]
    last = {}  # speed at the last evaluated point: the step-end event reuses it

    def speed_at(y):
        key = (float(y[0]), float(y[1]))
        if key not in last:
            calls[0] += 1
            if calls[0] > MAX_EVALUATIONS:
                raise SolveError(f"streamline from ({z0.real:g}, {z0.imag:g}) needs more than "
                                 f"{MAX_EVALUATIONS} velocity evaluations (stuck near "
                                 f"({y[0]:g}, {y[1]:g}))")
            last.clear()
            last[key] = _velocity(system, alpha, np.array([y[0] + 1j * y[1]]))[0]
        return last[key]

    def rhs(_s, y):
        vel = speed_at(y)
        mag = abs(vel)
        if not np.isfinite(mag):
            return np.array([np.nan, np.nan])  # inside a body: the step is rejected and shrunk
        d = sign * vel / max(mag, 1e-300)
        return np.array([d.real, d.imag])

    def leave_window(_s, y):
        return min(y[0] - x0, x1 - y[0], y[1] - y0, y1 - y[1])

    def reach_body(_s, y):
        return shapely.distance(surfaces, shapely.Point(y[0], y[1])) - stop_distance

    def stagnate(_s, y):
        speed = abs(speed_at(y))
        # a trial point inside a body is no stagnation point (the body event handles it)
        return speed - stop_speed if np.isfinite(speed) else stop_speed

    events = [leave_window, reach_body, stagnate]
    reasons = [END_WINDOW, END_BODY, END_STAGNATION]
    image = system.image
    if image is not None:  # a wall or free surface: the line ends where it reaches the plane

        def reach_plane(_s, y):
            return float(image.height(complex(y[0], y[1]))) - stop_distance

        events.append(reach_plane)
        reasons.append(END_PLANE)
    for ev in events:
        ev.terminal = True
        ev.direction = -1.0

    sol = solve_ivp(rhs, (0.0, max_length), [z0.real, z0.imag], method="RK45",
                    rtol=rtol, atol=ATOL * diag, max_step=diag / 20.0, dense_output=True,
                    events=events)
    s_end = float(sol.t[-1])
    if sol.status == 1:
        hit = [(te[0], r) for te, r in zip(sol.t_events, reasons) if len(te)]
        reason = min(hit)[1]
    elif sol.status == 0:
        reason = END_LENGTH
    else:
        # The integrator gave up (step size underflow); only acceptable at a stagnation point.
        zl = sol.y[0, -1] + 1j * sol.y[1, -1]
        speed = abs(_velocity(system, alpha, np.array([zl]))[0])
        if not speed < 10.0 * stop_speed:
            raise SolveError(f"streamline from ({z0.real:g}, {z0.imag:g}) could not be traced "
                             f"past ({zl.real:g}, {zl.imag:g}): {sol.message}")
        reason = END_STAGNATION
    s = np.append(np.arange(0.0, s_end, step), s_end)
    if len(s) > 1 and s[-1] - s[-2] < 1e-9 * step:
        s = s[:-1]
        s[-1] = s_end
    xy = sol.sol(s) if s_end > 0.0 else np.array([[z0.real], [z0.imag]])
    return _sampled(system, alpha, xy[0], xy[1], s, reason, DIFF_STEP * scale)


def _sampled(system: System, alpha: float, x, y, s, reason: str, h: float) -> Streamline:
    z = x + 1j * y
    vel = _velocity(system, alpha, z)
    speed = np.abs(vel)
    kappa = _curvature(system, alpha, z, vel, h)
    return Streamline(x, y, s, vel.real, vel.imag, speed, 1.0 - speed * speed, kappa,
                      euler_dp_dn(speed, kappa), reason, alpha)


def _upstream_seeds(window, alpha_deg: float, n: int) -> np.ndarray:
    """``n`` points on the window's upstream boundary, evenly spaced across the freestream.

    Evenly spaced in the cross-stream coordinate, so that far upstream, where the flow is nearly
    uniform, neighbouring lines carry nearly equal flow between them.
    """
    x0, x1, y0, y1 = window
    e = np.exp(1j * np.radians(alpha_deg))
    corners = np.array([x0 + 1j * y0, x1 + 1j * y0, x1 + 1j * y1, x0 + 1j * y1])
    eta = (corners * np.conj(e)).imag  # cross-stream coordinate of the corners
    lo, hi = eta.min(), eta.max()
    eta_k = lo + (np.arange(n) + 0.5) / n * (hi - lo)
    # entry of the line eta_k + xi e (xi along the stream) into the box: slab method
    base = 1j * e * eta_k
    with np.errstate(divide="ignore", invalid="ignore"):
        tx = np.sort(np.stack([(x0 - base.real) / e.real, (x1 - base.real) / e.real]), axis=0)
        ty = np.sort(np.stack([(y0 - base.imag) / e.imag, (y1 - base.imag) / e.imag]), axis=0)
    xi = np.nanmax(np.stack([tx[0] if e.real != 0 else np.full(n, -np.inf),
                             ty[0] if e.imag != 0 else np.full(n, -np.inf)]), axis=0)
    inset = 1e-9 * np.hypot(x1 - x0, y1 - y0)
    pts = base + (xi + inset) * e
    # clip round-off back into the box
    return np.clip(pts.real, x0, x1) + 1j * np.clip(pts.imag, y0, y1)


def streamlines(system: System, alpha_deg: float, window, n: int = 15, seeds=None,
                **options) -> list[Streamline]:
    """Streamlines traced downstream across the window.

    Parameters
    ----------
    system : System
    alpha_deg : float
        Angle of attack in degrees.
    window : (x0, x1, y0, y1)
    n : int
        Number of lines when ``seeds`` is not given: seeds on the window's upstream boundary,
        evenly spaced perpendicular to the freestream (seeds falling inside a body are skipped).
    seeds : array_like of complex or (m, 2), optional
        Explicit starting points (each must be in the window and outside the bodies).
    **options
        Passed to :func:`trace` (``max_length``, ``step``, ``stop_speed``, ``stop_distance``).

    Returns
    -------
    list of Streamline
    """
    win = _check_window(window)
    alpha = _check_alpha(alpha_deg)
    system = system_for(system, alpha)
    if seeds is None:
        if int(n) != n or n < 1:
            raise InputError(f"number of streamlines must be a positive integer, got {n!r}")
        pts = _upstream_seeds(win, alpha, int(n))
        pts = pts[~inside_bodies(system, pts)]
    else:
        arr = np.asarray(seeds)
        if np.iscomplexobj(arr):
            pts = arr.astype(complex).ravel()
        else:
            arr = np.asarray(arr, float)
            if arr.ndim != 2 or arr.shape[1] != 2:
                raise InputError(f"seeds must be complex or of shape (m, 2), got {arr.shape}")
            pts = arr[:, 0] + 1j * arr[:, 1]
    return [trace(system, alpha, z, win, **options) for z in pts]


def _outward_normal(system: System, body: int, z: complex) -> complex:
    """Unit outward normal at surface point ``z``, turning smoothly through the nodes.

    Linear along the nearest panel between its nodes' normals (each the bisector of the two
    adjacent panels' normals), so a stagnation point on a node gets the bisector.
    """
    p = system.panels
    node_t = np.zeros(p.n_nodes, complex)
    np.add.at(node_t, p.start, p.tangent)
    np.add.at(node_t, p.end, p.tangent)
    on_body = np.flatnonzero(p.body == body)
    rel = (z - p.z1[on_body]) * np.conj(p.tangent[on_body])
    t = np.clip(rel.real / p.length[on_body], 0.0, 1.0)
    k = int(np.argmin(np.abs(rel - t * p.length[on_body])))
    j, t = on_body[k], t[k]
    tan = (1.0 - t) * node_t[p.start[j]] / abs(node_t[p.start[j]]) \
        + t * node_t[p.end[j]] / abs(node_t[p.end[j]])
    return complex(-1j * tan / abs(tan))  # loops run counter-clockwise: outward is clockwise


def dividing_streamline(system: System, alpha_deg: float, body: int = 0, window=None,
                        stagnation=None, **options) -> Streamline:
    """The streamline that ends on a body's front stagnation point, running downstream.

    It is traced upstream from a point a small distance (1 % of the median panel length) out
    along the surface normal at the stagnation point; backward tracing converges on the
    dividing line, since near the stagnation point neighbouring lines diverge from it in the
    flow direction. The result is reversed, so it starts at the window and ends (``end_reason``
    ``"stagnation"``) next to the stagnation point.

    Parameters
    ----------
    system : System
    alpha_deg : float
        Angle of attack in degrees.
    body : int
        Body index.
    window : (x0, x1, y0, y1), optional
        Default: the bodies' bounding box widened on every side by its larger dimension.
    stagnation : complex, optional
        Stagnation point on that body; default from the surface solution at this angle
        (the zero of the surface speed, as ``SurfaceSolution.stagnation``).
    **options
        Passed to :func:`trace`.

    Returns
    -------
    Streamline
    """
    alpha = _check_alpha(alpha_deg)
    system = system_for(system, alpha)
    p = system.panels
    if int(body) != body or not 0 <= body < p.n_bodies:
        raise InputError(f"body index {body!r} out of range (0 .. {p.n_bodies - 1})")
    if stagnation is None:
        nodes = p.body_nodes(int(body))
        zn = p.nodes[nodes, 0] + 1j * p.nodes[nodes, 1]
        zs = complex(stagnation_point(system.gamma(alpha)[:, nodes], zn,
                                 p.kinds[int(body)] == SMOOTH)[0])
    else:
        zs = _as_complex_point(stagnation)
    if not np.isfinite(zs):
        raise InputError(f"body {body} has no front stagnation point at {alpha:g} deg")
    start = zs + _outward_normal(system, int(body), zs) * DIVIDING_OFFSET * _length_scale(system)
    if window is None:
        window = default_window(system)
    line = trace(system, alpha, start, window, direction=-1, **options)
    return line.reversed(end_reason=END_STAGNATION)
