"""Section specs: the text that names a built-in section (``naca2412``, ``ellipse:1,0.1``, …).

The syntax is in the docstrings of :mod:`panelflow.geometry.sections` (the classic sections and
the conformal-map ones) and :mod:`panelflow.geometry.series` (modified 4-digit, 16-series,
a-series mean lines). This module sits above both and dispatches to them.
"""

from __future__ import annotations

import re

import numpy as np

from panelflow.errors import InputError
from panelflow.geometry.outline import Outline
from panelflow.geometry.sections import (CLOSED_SUFFIX, circle, ellipse, joukowski,
                                         karman_trefftz, naca4, naca5)
from panelflow.geometry.series import parse_series_spec

__all__ = ["parse_spec", "SPEC_HELP"]

SPEC_HELP = ("naca0012, naca2412, naca23012, naca0012-closed, naca0012-64, naca16-212, "
             "naca0010+a-series:0.8,0.3, circle, circle:R, ellipse:A,B, joukowski:XC,YC, "
             "karman-trefftz:XC,YC,TAU")

_NACA_RE = re.compile(r"naca([^:/\\.]*)", re.IGNORECASE)
_PARAM_RE = re.compile(r"(circle|ellipse|joukowski|karman-trefftz)(?::(.*))?", re.IGNORECASE)
_NACA_BODY_RE = re.compile(r"(\d+)(-closed)?", re.IGNORECASE)
_PARAM_NAMES = {
    "circle": "circle or circle:R",
    "ellipse": "ellipse:A,B",
    "joukowski": "joukowski:XC,YC",
    "karman-trefftz": "karman-trefftz:XC,YC,TAU",
}


def _numbers(text: str, params: str | None, count: tuple[int, ...], kind: str) -> list[float]:
    values = [] if params is None or params.strip() == "" else params.split(",")
    if len(values) not in count:
        raise InputError(f"{text}: expected {_PARAM_NAMES[kind]}")
    out = []
    for v in values:
        try:
            f = float(v)
        except ValueError:
            raise InputError(f"{text}: {v.strip()!r} is not a number "
                             f"(expected {_PARAM_NAMES[kind]})") from None
        if not np.isfinite(f):
            raise InputError(f"{text}: {v.strip()!r} is not a finite number")
        out.append(f)
    return out


def parse_spec(text: str, n_points: int | None = None) -> Outline | None:
    """Build the section a spec names, or return None when ``text`` is not a spec.

    Parameters
    ----------
    text : str
        A spec (see the module docstring) or anything else, such as a file path. Text with a
        path separator, or a NACA-like name with a file extension (``naca0012.dat``), is never
        a spec.
    n_points : int, optional
        Number of points, passed to the section function; its default when None.

    Returns
    -------
    Outline or None

    Raises
    ------
    InputError
        The text is a spec but malformed, e.g. ``naca2`` or ``ellipse:1``.
    """
    t = str(text).strip()
    kw = {} if n_points is None else {"n_points": n_points}
    if "/" in t or "\\" in t:
        return None
    outline = parse_series_spec(t, n_points)
    if outline is not None:
        return outline
    m = _NACA_RE.fullmatch(t)
    if m:
        body = _NACA_BODY_RE.fullmatch(m.group(1))
        if body is None or len(body.group(1)) not in (4, 5):
            raise InputError(f"{t}: a NACA spec needs 4 or 5 digits (e.g. naca0012, naca23012), "
                             f"optionally followed by -IM (modified thickness, e.g. naca0012-64) "
                             f"and {CLOSED_SUFFIX}, or is a 16-series naca16-LTT")
        digits, closed = body.group(1), body.group(2) is not None
        make = naca4 if len(digits) == 4 else naca5
        return make(digits, closed_te=closed, **kw)
    m = _PARAM_RE.fullmatch(t)
    if not m:
        return None
    kind, params = m.group(1).lower(), m.group(2)
    if kind == "circle":
        vals = _numbers(t, params, (0, 1), kind)
        return circle(*vals, **kw)
    if kind == "ellipse":
        a, b = _numbers(t, params, (2,), kind)
        return ellipse(a, b, **kw)
    if kind == "joukowski":
        xc, yc = _numbers(t, params, (2,), kind)
        return joukowski(complex(xc, yc), **kw)
    xc, yc, tau = _numbers(t, params, (3,), kind)
    return karman_trefftz(complex(xc, yc), tau, **kw)
