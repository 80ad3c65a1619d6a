"""Body arguments: outline sources with transforms, angle lists, unique body names.

Shared by the command line and case files, so both read the same things the same way.

An OUTLINE argument is a file path or a built-in section spec (``naca2412``), optionally followed
by transforms applied left to right, each introduced by ``@``::

    naca0012@name=flap@scale=0.3@pitch=15@move=1.02,-0.06

``name=TEXT`` names the body, ``scale=S`` scales about the origin, ``pitch=DEG`` pitches nose-up
about the body's own leading edge, ``move=DX,DY`` translates. Angles are values or
``START:STOP:STEP`` ranges with STOP included, separated by spaces or commas.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from panelflow.errors import GeometryError, InputError

MAX_ANGLES = 100_000
TRANSFORMS = ("name", "scale", "pitch", "move")
MAX_PITCH_DEG = 180.0


def parse_angles(items) -> np.ndarray:
    """Angles in degrees from numbers, ``"START:STOP:STEP"`` ranges and comma lists.

    Parameters
    ----------
    items : number, str or sequence of them

    Raises
    ------
    InputError
        Naming the item at fault.
    """
    items = items if isinstance(items, (list, tuple)) else [items]
    out = []
    for item in items:
        if isinstance(item, bool):
            raise InputError(f"{item!r} is not an angle")
        if isinstance(item, (int, float)):
            out.append(float(item))
            continue
        if not isinstance(item, str):
            raise InputError(f"{type(item).__name__} {item!r} is not an angle")
        for part in (p.strip() for p in item.split(",")):
            if part:
                out.extend(_angle_part(part, MAX_ANGLES - len(out)))
    if len(out) > MAX_ANGLES:
        raise InputError(f"{len(out)} angles: at most {MAX_ANGLES} in all")
    if not out:
        raise InputError("no angle given")
    if not all(math.isfinite(a) for a in out):
        raise InputError("angles must be finite")
    return np.array(out, float)


def _angle_part(part: str, room: int = MAX_ANGLES) -> list:
    try:
        nums = [float(x) for x in part.split(":")]
    except ValueError:
        raise InputError(f"{part}: not a number or START:STOP:STEP") from None
    if len(nums) == 1:
        return nums
    if len(nums) != 3:
        raise InputError(f"{part}: use a value or START:STOP:STEP")
    start, stop, step = nums
    if step == 0 or (stop - start) * step < 0:
        raise InputError(f"{part}: STEP must be non-zero and go from START to STOP")
    count = int(math.floor((stop - start) / step + 1e-9)) + 1
    if count > room:
        raise InputError(f"{part}: {count} angles is too many (at most {MAX_ANGLES} in all)")
    return [start + step * k for k in range(count)]


def parse_point(text: str, what: str, sep: str = " ") -> tuple[float, float]:
    """``"X,Y"`` as two floats; ``what`` names the option or key in the message."""
    try:
        x, y = (float(v) for v in text.split(","))
    except ValueError:
        raise InputError(f"{what}{sep}{text}: give two numbers as X,Y") from None
    return x, y


def transformed(outline, key: str, value, label: str):
    """``outline`` with one transform applied; ``value`` typed (str, float or (dx, dy)).

    Raises
    ------
    InputError
        An unknown transform or an unusable value, naming ``label``.
    """
    try:
        if key == "name":
            if not str(value).strip():
                raise InputError(f"{label}: name= needs a name")
            return outline.renamed(str(value))
        if key == "scale":
            return outline.scaled(float(value))
        if key == "pitch":
            deg = float(value)
            if not abs(deg) <= MAX_PITCH_DEG:  # also refuses nan
                raise InputError(f"{label}: pitch={value}: give an angle within +/-"
                                 f"{MAX_PITCH_DEG:g} degrees (a larger turn is a smaller one "
                                 "in disguise)")
            return outline.rotated(deg, about=outline.leading_edge)
        if key == "move":
            dx, dy = value
            return outline.translated(float(dx), float(dy))
    except GeometryError as exc:
        raise InputError(f"{label}: {key}={value}: {str(exc).split(': ', 1)[-1]}") from None
    raise InputError(f"{label}: unknown transform {key!r}; use name=, scale=, pitch= or move=")


def _typed(key: str, text: str, arg: str):
    if key == "move":
        return parse_point(text, f"{arg}: move=", sep="")
    if key in ("scale", "pitch"):
        try:
            return float(text)
        except ValueError:
            raise InputError(f"{arg}: {key}={text} is not a number") from None
    return text


def split_transforms(arg: str):
    """Source and transform steps of an OUTLINE argument (a path may itself contain '@')."""
    parts = arg.split("@")
    for k in range(len(parts), 0, -1):
        if Path("@".join(parts[:k])).exists():
            return "@".join(parts[:k]), parts[k:]
    return parts[0], parts[1:]


def unique_names(outlines) -> list:
    """The outlines with repeated names made unique (``-2``, ``-3``, ...)."""
    seen, unique = {}, []
    for o in outlines:
        n = seen.get(o.name, 0)
        seen[o.name] = n + 1
        unique.append(o if n == 0 else o.renamed(f"{o.name}-{n + 1}"))
    return unique


def load_bodies(args) -> list:
    """Outlines of OUTLINE arguments, transforms applied, names made unique."""
    from panelflow.geometry.readers import load_outlines

    bodies = []
    for arg in args:
        source, steps = split_transforms(arg)
        outlines = load_outlines(source)
        for step in steps:
            key, sep, value = step.partition("=")
            if not sep:
                raise InputError(f"{arg}: transform {step!r} needs the form key=value")
            key = key.strip().lower()
            typed = _typed(key, value.strip(), arg)
            outlines = [transformed(o, key, typed, arg) for o in outlines]
        bodies.extend(outlines)
    return unique_names(bodies)
