"""Target pressure distributions for inverse design: read from a table or built in.

A target gives Cp along one or both surfaces as a function of x/c (chord frame). It may cover a
whole surface or part of one: the design changes the outline only where the target is given
(:func:`design_spans`). A surface speed ``q`` (over the freestream speed) is turned into
``Cp = 1 - q^2`` (Bernoulli's equation), so either can be given.

Table files (CSV, comma or whitespace separated, ``#`` comments) have a header line naming the
columns: ``x`` (x/c), ``cp`` or ``speed``, and ``surface`` (``upper`` or ``lower`` in each row).

Between its stations a target is interpolated by a monotone piecewise cubic (Fritsch and
Carlson, SIAM J. Numer. Anal. 17, 1980, as ``scipy.interpolate.PchipInterpolator``) in the angle
coordinate ``phi = (2/pi) arcsin(sqrt(x))``, in which the steep rise of Cp at a round nose is
smooth and a plateau's corners do not overshoot.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from panelflow.errors import InputError
from panelflow.files import read_input

__all__ = ["CpTarget", "read_target", "plateau_target", "design_spans", "MAX_TARGET_BYTES"]

MAX_TARGET_BYTES = 8 * 2**20
SURFACES = ("upper", "lower")
# Stations of a built-in target's table (its corners are exact; between them the monotone cubic
# is within 1e-6 of the definition).
_BUILT_IN_STATIONS = 801


def _phi_of_x(x):
    return (2.0 / np.pi) * np.arcsin(np.sqrt(np.clip(np.asarray(x, float), 0.0, 1.0)))


@dataclass(frozen=True)
class CpTarget:
    """A target Cp on the upper and/or lower surface.

    Attributes
    ----------
    name : str
    upper_x, upper_cp, lower_x, lower_cp : ndarray
        Stations (x/c, increasing) and Cp; empty where a surface has no target.
    source : str
        Where it came from (a file, or the built-in target's settings).
    """

    name: str
    upper_x: np.ndarray
    upper_cp: np.ndarray
    lower_x: np.ndarray
    lower_cp: np.ndarray
    source: str = ""
    _splines: dict = field(default_factory=dict, repr=False, compare=False)

    def __post_init__(self):
        for side in SURFACES:
            x = np.array(getattr(self, f"{side}_x"), float).reshape(-1)
            cp = np.array(getattr(self, f"{side}_cp"), float).reshape(-1)
            if x.shape != cp.shape:
                raise InputError(f"target {self.name}: {len(x)} stations and {len(cp)} Cp values "
                                 f"on the {side} surface")
            if len(x):
                if len(x) < 2:
                    raise InputError(f"target {self.name}: the {side} surface needs at least two "
                                     "stations")
                if not (np.all(np.isfinite(x)) and np.all(np.isfinite(cp))):
                    raise InputError(f"target {self.name}: {side} surface values must be finite")
                if x.min() < 0.0 or x.max() > 1.0:
                    raise InputError(f"target {self.name}: {side} surface x/c must lie in [0, 1], "
                                     f"got {x.min():g} to {x.max():g}")
                if np.any(np.diff(x) <= 0.0):
                    raise InputError(f"target {self.name}: {side} surface stations must increase "
                                     "with x/c, each once")
                if np.any(cp > 1.0 + 1e-12):
                    raise InputError(f"target {self.name}: Cp above 1 on the {side} surface "
                                     "(more than stagnation pressure)")
            x.setflags(write=False)
            cp.setflags(write=False)
            object.__setattr__(self, f"{side}_x", x)
            object.__setattr__(self, f"{side}_cp", cp)
        if not len(self.upper_x) and not len(self.lower_x):
            raise InputError(f"target {self.name}: no stations on either surface")

    def span(self, side: str):
        """(x_from, x_to) of the target on a surface, or None."""
        x = getattr(self, f"{side}_x")
        return (float(x[0]), float(x[-1])) if len(x) else None

    def _spline(self, side: str):
        if side not in self._splines:
            from scipy.interpolate import PchipInterpolator

            phi = _phi_of_x(getattr(self, f"{side}_x"))
            keep = np.r_[True, np.diff(phi) > 0.0]  # stations closer than rounding: one
            self._splines[side] = PchipInterpolator(phi[keep], getattr(self, f"{side}_cp")[keep])
        return self._splines[side]

    def at(self, x, side: str):
        """Target Cp at stations ``x`` of a surface, and where it is defined (inside its span).

        Returns
        -------
        cp : ndarray (NaN outside the span)
        defined : ndarray of bool
        """
        x = np.atleast_1d(np.asarray(x, float))
        span = self.span(side)
        if span is None:
            return np.full(len(x), np.nan), np.zeros(len(x), bool)
        defined = (x >= span[0] - 1e-12) & (x <= span[1] + 1e-12)
        out = np.full(len(x), np.nan)
        out[defined] = self._spline(side)(_phi_of_x(x[defined]))
        return out, defined

    def record(self) -> dict:
        return {"name": self.name, "source": self.source,
                **{f"{s}_span": list(self.span(s)) if self.span(s) else None for s in SURFACES}}


def _columns(header: list, path) -> dict:
    names = [h.strip().lower() for h in header]
    need = {"x", "surface"}
    if not need <= set(names) or not ({"cp", "speed"} & set(names)):
        raise InputError(f"{path}: the header must name the columns x, surface and cp (or "
                         f"speed); found {', '.join(h.strip() for h in header) or 'nothing'}")
    if "cp" in names and "speed" in names:
        raise InputError(f"{path}: give either a cp or a speed column, not both")
    return {n: i for i, n in enumerate(names)}


def read_target(path) -> CpTarget:
    """Read a target table (see the module docstring).

    Raises
    ------
    InputError
        With the file and line of the first bad row.
    """
    p = Path(path)
    text = read_input(p, "target file", MAX_TARGET_BYTES).decode("utf-8-sig", errors="replace")
    rows = []
    for lineno, line in enumerate(text.splitlines(), start=1):
        body = line.split("#", 1)[0].strip()
        if not body:
            continue
        cells = next(csv.reader(io.StringIO(body))) if "," in body else body.split()
        rows.append((lineno, [c.strip() for c in cells]))
    if not rows:
        raise InputError(f"{p}: no header and no rows")
    cols = _columns(rows[0][1], p)
    value_col = "cp" if "cp" in cols else "speed"
    data = {s: ([], []) for s in SURFACES}
    for lineno, cells in rows[1:]:
        if len(cells) < len(cols):
            raise InputError(f"{p}, line {lineno}: {len(cells)} values for {len(cols)} columns")
        side = cells[cols["surface"]].lower()
        if side not in SURFACES:
            raise InputError(f"{p}, line {lineno}: surface {cells[cols['surface']]!r}: use "
                             "upper or lower")
        try:
            x = float(cells[cols["x"]])
            v = float(cells[cols[value_col]])
        except ValueError:
            raise InputError(f"{p}, line {lineno}: x and {value_col} must be numbers") from None
        if value_col == "speed":
            if not (np.isfinite(v) and v >= 0.0):
                raise InputError(f"{p}, line {lineno}: speed must be zero or positive")
            v = 1.0 - v * v
        data[side][0].append(x)
        data[side][1].append(v)
    try:
        return CpTarget(p.stem, *data["upper"], *data["lower"], source=str(p.name))
    except InputError as exc:
        raise InputError(f"{p}: {str(exc).split(': ', 1)[-1]}") from None


def _smootherstep(t):
    t = np.clip(t, 0.0, 1.0)
    return t * t * t * (t * (6.0 * t - 15.0) + 10.0)


def plateau_target(reference, side: str, level: float, x_from: float, x_to: float,
                   recovery_to: float, other=None, name: str = "plateau") -> CpTarget:
    """A flat Cp plateau on one surface followed by a smooth recovery, the rest as it was.

    On ``side`` the target runs from the nose: the reference Cp up to ``x_from / 2``, blending
    into ``level`` by ``x_from``; ``level`` to ``x_to``; then back into the reference by
    ``recovery_to``. Both blends are ``6t^5 - 15t^4 + 10t^3`` (zero slope and curvature at both
    ends). With ``other`` the other surface keeps its reference Cp from the nose to
    ``recovery_to``, so the design may change the nose and that surface too, but is asked to
    keep their pressures. The reference is usually the start's own Cp at the design point;
    beyond ``recovery_to`` nothing is asked to change.

    Parameters
    ----------
    reference : callable
        ``reference(x)``: Cp of ``side`` at stations x.
    side : {"upper", "lower"}
    level : float
        Plateau Cp (negative: suction).
    x_from, x_to, recovery_to : float
        ``0 < x_from < x_to < recovery_to <= 1``.
    other : callable, optional
        ``other(x)``: Cp of the other surface.
    """
    if side not in SURFACES:
        raise InputError(f"plateau surface {side!r}: use upper or lower")
    a, b, c = float(x_from), float(x_to), float(recovery_to)
    if not 0.0 < a < b < c <= 1.0:
        raise InputError(f"plateau from {a:g} to {b:g}, recovery to {c:g}: need "
                         "0 < from < to < recovery end <= 1")
    if not np.isfinite(level) or level > 1.0:
        raise InputError(f"plateau level {level!r}: give a Cp of at most 1")
    # stations dense at the nose and the corners: cosine spacing on each piece
    k = _BUILT_IN_STATIONS // 3
    s = 0.5 * (1.0 - np.cos(np.linspace(0.0, np.pi, k)))
    x = np.unique(np.r_[a * s, a + (b - a) * s, b + (c - b) * s])
    ref = np.asarray(reference(x), float)
    into = _smootherstep((x - 0.5 * a) / (0.5 * a))
    out_of = _smootherstep((x - b) / (c - b))
    plateau = level + (ref - level) * out_of
    cp = ref + (plateau - ref) * into
    empty = np.zeros(0)
    mine = (x, cp)
    theirs = (x, np.asarray(other(x), float)) if other is not None else (empty, empty)
    up, lo = (mine, theirs) if side == "upper" else (theirs, mine)
    return CpTarget(name, *up, *lo, source=f"plateau on the {side} surface at Cp {level:g} from "
                    f"x/c {a:g} to {b:g}, recovery to {c:g}"
                    + (", the other surface kept" if other is not None else ""))


# A target starting this close to the nose on both surfaces runs round it: one segment.
_NOSE = 0.005
# ... and covering both surfaces from the nose to here is a design of the whole section.
_TAIL = 0.95


def design_spans(target: CpTarget):
    """Where the outline may change for a target: ``None`` for the whole section, else a list
    of phi intervals (upper surface positive; see :mod:`panelflow.design.shape`).

    The outline changes only between the first and last target stations of each surface; a
    target that starts at the nose on both surfaces makes one interval round the nose; one that
    runs from the nose to the tail on both surfaces redesigns the whole section.
    """
    up, lo = target.span("upper"), target.span("lower")
    if up and lo and up[0] <= _NOSE and lo[0] <= _NOSE and up[1] >= _TAIL and lo[1] >= _TAIL:
        return None
    if up and lo and up[0] <= _NOSE and lo[0] <= _NOSE:
        return [(-float(_phi_of_x(lo[1])), float(_phi_of_x(up[1])))]
    spans = []
    if lo:
        spans.append((-float(_phi_of_x(lo[1])), -float(_phi_of_x(lo[0]))))
    if up:
        spans.append((float(_phi_of_x(up[0])), float(_phi_of_x(up[1]))))
    return spans
