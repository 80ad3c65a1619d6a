"""Compressibility: subsonic corrections of the incompressible result and the critical Mach number.

The panel solution is incompressible. For a subsonic freestream Mach number ``M`` the usual
similarity rules map the incompressible pressure coefficient ``Cp0`` at a surface point to the
compressible one at the same point (``beta = sqrt(1 - M^2)``):

* Prandtl-Glauert (linearised small-disturbance theory): ``Cp = Cp0 / beta``;
* Karman-Tsien (hodograph method with a tangent-gas approximation)::

      Cp = Cp0 / (beta + M^2 Cp0 / (2 (1 + beta)))

* Laitone (Prandtl-Glauert with the local Mach number)::

      Cp = Cp0 / (beta + M^2 (1 + (g - 1) M^2 / 2) Cp0 / (2 beta))

(J. D. Anderson, *Modern Compressible Flow*, ch. 9, where the three rules are derived and
compared; ``g`` is the ratio of specific heats.)

The *critical pressure coefficient* is the Cp at which the local flow reaches Mach 1, from the
isentropic relations (NACA Report 1135, equations for isentropic flow of a perfect gas)::

    Cp* = 2 / (g M^2) * { [(2 + (g - 1) M^2) / (g + 1)]^(g / (g - 1)) - 1 }

and the *critical Mach number* is the freestream Mach number at which the corrected minimum Cp of
the section equals Cp*. From there on the flow has a supersonic pocket, usually closed by a shock
wave, and none of these rules applies: results at or above the critical Mach number carry a
warning, and a freestream at or above Mach 1 is refused.

The rules assume thin sections at small angles of attack; near the critical Mach number the
Karman-Tsien and Laitone rules are usually closer to measurements than Prandtl-Glauert, which
underestimates the suction peaks (Anderson, as above).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from panelflow.errors import InputError

AIR_HEAT_RATIO = 1.4  # ratio of specific heats of air near room temperature (common practice)
PRANDTL_GLAUERT = "prandtl-glauert"
KARMAN_TSIEN = "karman-tsien"
LAITONE = "laitone"
RULES = (PRANDTL_GLAUERT, KARMAN_TSIEN, LAITONE)

# Bracket of the critical-Mach root search: below _MACH_LOW every section is subcritical
# (Cp* there is about -0.674 / M^2 < -6700), and the rules' singular points are approached to
# within _MACH_GAP.
_MACH_LOW = 1e-2
_MACH_GAP = 1e-12


def check_mach(mach) -> np.ndarray:
    m = np.asarray(mach, float)
    if not np.all(np.isfinite(m)):
        raise InputError("Mach number must be a finite number")
    if np.any(m < 0.0):
        raise InputError(f"Mach number {np.min(m):g}: must be zero or positive")
    if np.any(m >= 1.0):
        raise InputError(
            f"Mach number {np.max(m):g}: the compressibility corrections hold only for a subsonic "
            "freestream (0 <= M < 1); at and above Mach 1 the flow is transonic or supersonic "
            "and this model does not apply")
    return m


def _check_heat_ratio(heat_ratio) -> float:
    g = float(heat_ratio)
    if not np.isfinite(g) or g <= 1.0:
        raise InputError(f"ratio of specific heats {heat_ratio}: must be greater than 1")
    return g


def _check_rule(rule: str) -> str:
    key = str(rule).strip().lower().replace("_", "-").replace(" ", "-")
    if key not in RULES:
        raise InputError(f"compressibility rule {rule!r}: use one of {', '.join(RULES)}")
    return key


def prandtl_glauert(cp0, mach):
    """Prandtl-Glauert rule ``Cp0 / sqrt(1 - M^2)``.

    Parameters
    ----------
    cp0 : array_like
        Incompressible pressure coefficient.
    mach : array_like
        Freestream Mach number, ``0 <= M < 1``; broadcast against ``cp0``.

    Returns
    -------
    ndarray
    """
    m = check_mach(mach)
    return np.asarray(cp0, float) / np.sqrt(1.0 - m * m)


def _denominator(cp0, m, rule, g):
    beta = np.sqrt(1.0 - m * m)
    if rule == PRANDTL_GLAUERT:
        return beta + 0.0 * cp0
    if rule == KARMAN_TSIEN:
        return beta + m * m * cp0 / (2.0 * (1.0 + beta))
    return beta + m * m * (1.0 + 0.5 * (g - 1.0) * m * m) * cp0 / (2.0 * beta)


def _apply(cp0, m, rule, g):
    """Corrected Cp; NaN where the rule's denominator is not positive (far past critical)."""
    den = _denominator(cp0, m, rule, g)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(den > 0.0, cp0 / np.where(den > 0.0, den, 1.0), np.nan)


def _slope(cp0, m, rule, g):
    """d Cp / d Cp0 of a rule: beta / den^2 for Karman-Tsien and Laitone, 1/beta for P-G."""
    den = _denominator(cp0, m, rule, g)
    beta = np.sqrt(1.0 - m * m)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(den > 0.0, beta / np.where(den > 0.0, den, 1.0) ** 2, np.nan)


def karman_tsien(cp0, mach):
    """Karman-Tsien rule ``Cp0 / (beta + M^2 Cp0 / (2 (1 + beta)))``, ``beta = sqrt(1 - M^2)``.

    Returns NaN where the denominator is not positive (a suction far beyond the critical one,
    where the rule has no meaning).

    Parameters
    ----------
    cp0, mach : array_like
        Incompressible Cp and freestream Mach number (``0 <= M < 1``), broadcast together.

    Returns
    -------
    ndarray
    """
    m = check_mach(mach)
    return _apply(np.asarray(cp0, float), m, KARMAN_TSIEN, AIR_HEAT_RATIO)


def laitone(cp0, mach, heat_ratio: float = AIR_HEAT_RATIO):
    """Laitone rule ``Cp0 / (beta + M^2 (1 + (g-1) M^2 / 2) Cp0 / (2 beta))``.

    Returns NaN where the denominator is not positive.

    Parameters
    ----------
    cp0, mach : array_like
        Incompressible Cp and freestream Mach number (``0 <= M < 1``), broadcast together.
    heat_ratio : float
        Ratio of specific heats (1.4 for air).

    Returns
    -------
    ndarray
    """
    m = check_mach(mach)
    return _apply(np.asarray(cp0, float), m, LAITONE, _check_heat_ratio(heat_ratio))


def corrected_cp(cp0, mach, rule: str = KARMAN_TSIEN, heat_ratio: float = AIR_HEAT_RATIO):
    """Compressible Cp by a named rule (prandtl-glauert, karman-tsien or laitone)."""
    return _apply(np.asarray(cp0, float), check_mach(mach), _check_rule(rule),
                  _check_heat_ratio(heat_ratio))


def critical_cp(mach, heat_ratio: float = AIR_HEAT_RATIO):
    """Critical pressure coefficient Cp* (local Mach number 1) from the isentropic relations.

    ``Cp* = 2/(g M^2) {[(2 + (g-1) M^2)/(g+1)]^(g/(g-1)) - 1}`` (NACA Report 1135). It tends to
    minus infinity as ``M -> 0`` and to 0 at ``M = 1``.

    Parameters
    ----------
    mach : array_like
        Freestream Mach number, ``0 < M <= 1`` (Mach 1 itself is allowed here: Cp* = 0).
    heat_ratio : float
        Ratio of specific heats.

    Returns
    -------
    ndarray
    """
    m = np.asarray(mach, float)
    g = _check_heat_ratio(heat_ratio)
    if not np.all(np.isfinite(m)) or np.any(m <= 0.0) or np.any(m > 1.0):
        raise InputError("Mach number for the critical Cp must lie in 0 < M <= 1")
    base = (2.0 + (g - 1.0) * m * m) / (g + 1.0)
    return 2.0 / (g * m * m) * (base ** (g / (g - 1.0)) - 1.0)


def _singular_mach(cp0: float, rule: str, g: float) -> float:
    """Mach number where the rule's denominator reaches zero for this Cp0 (1.0 for P-G)."""
    if rule == PRANDTL_GLAUERT or cp0 >= 0.0:
        return 1.0
    if rule == KARMAN_TSIEN:
        # beta + M^2 Cp0 / (2 (1 + beta)) = beta + (1 - beta) Cp0 / 2 = 0 (M^2 = (1-b)(1+b))
        beta = -cp0 / (2.0 - cp0)
        return float(np.sqrt(1.0 - beta * beta))
    # Laitone: 2 (1 - M^2) + Cp0 M^2 (1 + (g-1)/2 M^2) = 0, a quadratic in s = M^2
    a, b, c = 0.5 * (g - 1.0) * cp0, cp0 - 2.0, 2.0
    s = (-b - np.sqrt(b * b - 4.0 * a * c)) / (2.0 * a)  # a < 0: the positive root
    return float(np.sqrt(min(s, 1.0)))


def critical_mach(cp0_min, rule: str = KARMAN_TSIEN, heat_ratio: float = AIR_HEAT_RATIO):
    """Freestream Mach number at which the corrected minimum Cp reaches Cp*.

    Solves ``rule(Cp0_min, M) = Cp*(M)`` on ``0 < M < 1`` with Brent's method
    (``scipy.optimize.brentq``). Both sides are monotone in M, the corrected Cp starting from
    ``Cp0_min`` and falling towards minus infinity, Cp* rising from minus infinity towards 0,
    so the root is unique.

    Parameters
    ----------
    cp0_min : array_like
        Incompressible minimum pressure coefficient(s) of the section.
    rule : str
        ``"prandtl-glauert"``, ``"karman-tsien"`` (default) or ``"laitone"``.
    heat_ratio : float
        Ratio of specific heats.

    Returns
    -------
    ndarray
        Critical Mach number of each ``cp0_min``; NaN where ``cp0_min >= 0`` (no suction, the
        flow never reaches sonic speed by these rules) or is not finite.
    """
    from scipy.optimize import brentq  # kept off the import path of the CLI's start-up

    rule = _check_rule(rule)
    g = _check_heat_ratio(heat_ratio)
    cp = np.asarray(cp0_min, float)
    out = np.full(cp.shape, np.nan)
    flat = out.reshape(-1)
    for i, c in enumerate(cp.reshape(-1)):  # a scalar root per value: few values (angles x bodies)
        if not np.isfinite(c) or c >= 0.0:
            continue
        top = _singular_mach(float(c), rule, g) - _MACH_GAP

        def gap(m, c=float(c)):
            return float(_apply(c, m, rule, g)) - float(critical_cp(m, g))

        if not gap(top) < 0.0:  # never reaches Cp* (not expected for a finite suction)
            continue
        flat[i] = brentq(gap, _MACH_LOW, top, xtol=1e-12, rtol=1e-12)
    return out


def _integrate(panels, cp_node, cp_mid, cp_base, chord_line, reference_point):
    """Pressure force and moment of Cp fields, per body, as ``surface`` integrates them.

    Cp is given at the nodes and panel midpoints for each angle (the incompressible Cp is
    quadratic along a panel, and Simpson's rule on the same three points keeps the corrected
    integrals consistent with it); a blunt base carries ``cp_base``.

    Returns
    -------
    force : (n_alpha, n_bodies) complex ``Fx + i Fy`` of ``-Cp n ds`` (input frame)
    moment : (n_alpha, n_bodies) counter-clockwise about ``reference_point``
    """
    p = panels
    zr = complex(reference_point[0], reference_point[1])
    n_out = -1j * p.tangent
    L = p.length
    cpa, cpb = cp_node[:, p.start], cp_node[:, p.end]
    f_pan = -n_out * L * (cpa + 4.0 * cp_mid + cpb) / 6.0
    w = L / 6.0 * (cpa * np.conj(p.z1 - zr) + 4.0 * cp_mid * np.conj(p.mid - zr)
                   + cpb * np.conj(p.z2 - zr))
    m_pan = -(n_out * w).imag
    na, nb = cp_node.shape[0], p.n_bodies
    force = np.zeros((na, nb), complex)
    moment = np.zeros((na, nb))
    for k in range(nb):
        on = p.body == k
        force[:, k] = f_pan[:, on].sum(axis=1)
        moment[:, k] = m_pan[:, on].sum(axis=1)
    for j, k in enumerate(p.base_body):
        first, last = int(p.node_start[k]), int(p.node_stop[k]) - 1
        z_lo, z_up = complex(*p.nodes[last]), complex(*p.nodes[first])
        f_base = 1j * cp_base[:, j] * (z_up - z_lo)
        force[:, k] += f_base
        moment[:, k] += (np.conj(0.5 * (z_up + z_lo) - zr) * f_base).imag
    return force, moment


@dataclass(frozen=True)
class CompressibleResult:
    """Incompressible panel result corrected to a subsonic freestream Mach number.

    Array fields have the angle as their first axis (``n_alpha``), body fields then the body.

    Attributes
    ----------
    mach : float
        Freestream Mach number.
    rule : str
        ``"prandtl-glauert"``, ``"karman-tsien"`` or ``"laitone"``.
    heat_ratio : float
        Ratio of specific heats used in the rule and in Cp*.
    alpha_deg : (n_alpha,) angles of attack, degrees.
    cp : (n_alpha, n_nodes) corrected Cp at the nodes (NaN where the rule breaks down).
    cp_mid : (n_alpha, n_panels) corrected Cp at the panel midpoints (of the mean of the two end
        speeds, as the incompressible integrals take it).
    cp_base : (n_alpha, n_base) corrected base pressure of each blunt trailing edge.
    cl : (n_alpha,) corrected lift coefficient: the circulation lift divided by beta (the
        Prandtl-Glauert scaling, exact in linearised theory), plus, for the other rules, the
        difference between that rule's and Prandtl-Glauert's integrated pressure lift.
    cl_pressure, cd_pressure, cm : (n_alpha,) integrals of the corrected Cp (cm about the
        analysis' reference point, nose-up positive).
    body_cl, body_cd, body_cm : (n_alpha, n_bodies) per body, pressure integration.
    cl_error_estimate, cm_error_estimate : (n_alpha,) the incompressible discretisation error
        estimates times the largest slope d Cp / d Cp0 of the rule on the surface (1/beta for
        Prandtl-Glauert), a conservative propagation.
    cp_min : (n_alpha, n_bodies) corrected minimum Cp of each body.
    cp_min_incompressible : (n_alpha, n_bodies) the same before correction.
    cp_star : float
        Critical pressure coefficient at this Mach number (NaN at M = 0).
    critical_mach : (n_alpha,) critical Mach number of the whole geometry at each angle (the
        body with the lowest incompressible Cp sets it); NaN when no point has suction.
    supercritical : (n_alpha,) True where ``mach >= critical_mach``.
    warnings : tuple of str
        Plain sentences, one per problem (supercritical angles, rule break-down).
    """

    mach: float
    rule: str
    heat_ratio: float
    alpha_deg: np.ndarray
    cp: np.ndarray = field(repr=False)
    cl: np.ndarray
    cl_pressure: np.ndarray = field(repr=False)
    cd_pressure: np.ndarray = field(repr=False)
    cm: np.ndarray
    body_cl: np.ndarray = field(repr=False)
    body_cm: np.ndarray = field(repr=False)
    cl_error_estimate: np.ndarray = field(repr=False)
    cm_error_estimate: np.ndarray = field(repr=False)
    cp_min: np.ndarray = field(repr=False)
    cp_min_incompressible: np.ndarray = field(repr=False)
    cp_star: float
    critical_mach: np.ndarray
    supercritical: np.ndarray = field(repr=False)
    warnings: tuple = ()
    cp_mid: np.ndarray = field(default=None, repr=False)
    cp_base: np.ndarray = field(default=None, repr=False)
    body_cd: np.ndarray = field(default=None, repr=False)

    def __post_init__(self):
        for value in vars(self).values():
            if isinstance(value, np.ndarray):
                value.setflags(write=False)


CAUTION = ("Compressibility corrections (similarity rules) of an inviscid, attached-flow "
           "estimate; valid for thin sections at small angles and below the critical Mach number "
           "only.")


def correct(analysis, mach: float, rule: str = KARMAN_TSIEN,
            heat_ratio: float = AIR_HEAT_RATIO) -> CompressibleResult:
    """Correct an incompressible analysis to a subsonic freestream Mach number.

    Parameters
    ----------
    analysis : Analysis or SurfaceSolution
        Incompressible result (``pf.analyse``); its surface Cp, coefficients and error estimates
        are corrected.
    mach : float
        Freestream Mach number, ``0 <= M < 1``.
    rule : str
        ``"karman-tsien"`` (default), ``"prandtl-glauert"`` or ``"laitone"``.
    heat_ratio : float
        Ratio of specific heats (1.4 for air).

    Returns
    -------
    CompressibleResult

    Raises
    ------
    InputError
        Mach number negative, not finite, or at or above 1; unknown rule.
    """
    m = float(check_mach(mach))
    rule = _check_rule(rule)
    g = _check_heat_ratio(heat_ratio)
    fine = getattr(analysis, "fine", analysis)
    p = fine.panels
    c = fine.chord_line.length
    beta = np.sqrt(1.0 - m * m)
    alpha = np.asarray(fine.alpha_deg, float)
    gam = np.asarray(fine.gamma)
    cp0 = np.asarray(fine.cp)
    h = 0.5 * (gam[:, p.start] + gam[:, p.end])
    cp0_mid = 1.0 - h * h  # as surface integrates it: Cp of the mean speed at the midpoint
    first = p.node_start[p.base_body]
    last = p.node_stop[p.base_body] - 1
    v_te = 0.5 * (gam[:, last] - gam[:, first])
    cp0_base = 1.0 - v_te * v_te

    cp = _apply(cp0, m, rule, g)
    cp_mid, cp_base = _apply(cp0_mid, m, rule, g), _apply(cp0_base, m, rule, g)
    force, moment = _integrate(p, cp, cp_mid, cp_base, fine.chord_line, fine.reference_point)
    rot = np.exp(-1j * np.radians(alpha))[:, None]
    body_cl = (rot * force).imag / c
    body_cd = (rot * force).real / c
    body_cm = -moment / c**2
    cl_p = body_cl.sum(axis=1)
    # Prandtl-Glauert is linear: its lift is the circulation lift over beta exactly; the
    # nonlinear rules add what their pressure integral gains over the linear one.
    cl = np.asarray(fine.cl_circulation) / beta + (cl_p - np.asarray(fine.cl_pressure) / beta)

    slope = _slope(cp0, m, rule, g)
    factor = np.max(np.where(np.isfinite(slope), slope, -np.inf), axis=1)
    factor = np.where(np.isfinite(factor), factor, np.nan)
    cl_err = np.asarray(getattr(analysis, "cl_error_estimate", np.full(len(alpha), np.nan)))
    cm_err = np.asarray(getattr(analysis, "cm_error_estimate", np.full(len(alpha), np.nan)))

    cp0_min = np.asarray(fine.cp_min)
    cp_min = _apply(cp0_min, m, rule, g)
    m_crit = critical_mach(np.min(cp0_min, axis=1), rule, g)
    cp_star = float(critical_cp(m, g)) if m > 0.0 else float("nan")
    super_ = np.isfinite(m_crit) & (m >= m_crit)
    notes = []
    if np.any(super_):
        angles = ", ".join(f"{a:g}" for a in alpha[super_])
        notes.append(
            f"Mach {m:g} is at or above the critical Mach number at alpha = {angles} deg "
            f"(lowest critical Mach {np.nanmin(m_crit[super_]):.3f}): the flow reaches sonic "
            "speed on the surface and shock waves may form; the corrected values there are "
            "outside the model and must not be used")
    bad = ~np.isfinite(cp).all(axis=1)
    if np.any(bad):
        angles = ", ".join(f"{a:g}" for a in alpha[bad])
        notes.append(f"the {rule} rule breaks down (suction too strong for Mach {m:g}) at alpha "
                     f"= {angles} deg: corrected Cp there is NaN")
    return CompressibleResult(
        mach=m, rule=rule, heat_ratio=g, alpha_deg=alpha, cp=cp, cl=cl, cl_pressure=cl_p,
        cd_pressure=body_cd.sum(axis=1), cm=body_cm.sum(axis=1), body_cl=body_cl,
        body_cm=body_cm, cl_error_estimate=cl_err * factor, cm_error_estimate=cm_err * factor,
        cp_min=cp_min, cp_min_incompressible=cp0_min.copy(), cp_star=cp_star,
        critical_mach=m_crit, supercritical=super_, warnings=tuple(notes), cp_mid=cp_mid,
        cp_base=cp_base, body_cd=body_cd)
