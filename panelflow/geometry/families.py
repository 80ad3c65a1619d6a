"""Section families and file sets: one text that stands for many sections.

Range syntax (panelflow's own)
------------------------------
Inside any section spec or OUTLINE argument, a pair of braces holding numbers stands for a list
of values; the text is repeated once per value::

    naca00{06..18:3}          ->  naca0006 naca0009 naca0012 naca0015 naca0018
    naca{0..4:2}412           ->  naca0412 naca2412 naca4412
    naca{2,4}4{09..15:3}      ->  naca2409 naca2412 naca2415 naca4409 naca4412 naca4415
    ellipse:{2..3:0.5},1      ->  ellipse:2.0,1 ellipse:2.5,1 ellipse:3.0,1
    naca0012@pitch={0..4:2}   ->  naca0012@pitch=0 naca0012@pitch=2 naca0012@pitch=4

``{START..STOP}`` steps by 1, ``{START..STOP:STEP}`` by STEP; STOP is included when the steps reach
it (as with ``--alpha START:STOP:STEP``); a negative STEP counts down. ``{A,B,C}`` lists the
values: two or more numbers or plain words (letters, digits, ``_``, ``+``, ``-``, single dots), so
``{front,rear}_foil.dat`` names two files. Whole numbers keep the width of the wider of START and
STOP as written, padded with zeros (``{06..18:3}`` gives ``06 09 12 15 18``), so the four NACA
digits stay four digits; decimal values are written with as many decimals as the most precise of
START, STOP and STEP, exactly (decimal arithmetic, no binary round-off such as
``0.30000000000000004``). Several braces give every combination, the last brace varying fastest.
The syntax has no letters of its own, so it is the same whatever the case of the text around it
(specs themselves are case-insensitive: ``NACA00{06..18:3}`` is the same family).

Text that names an existing file is never expanded, so a file whose name holds braces still
reads as itself.

File sets
---------
A file pattern with the shell wildcards ``*``, ``?`` and ``[...]`` (and ``**`` for any depth of
folders) stands for every existing file it matches, sorted by path (character by character, the
same order on every machine); a pattern that matches no file is an error. Transforms after
``@`` (see the CLI) follow the pattern and apply to every file: ``geometries/tender_*.dat@scale=2``.
"""

from __future__ import annotations

import glob
import itertools
import os
import threading
import re
from decimal import Decimal
from pathlib import Path

from panelflow.errors import InputError

__all__ = ["MAX_MEMBERS", "is_family", "expand_family", "is_pattern", "expand_files",
           "expand_arguments"]

# A family larger than this is almost certainly a typing slip (a wrong step); it would also make
# a study of hours. Lists longer than this are refused with the count in the message.
MAX_MEMBERS = 10_000
GLOB_SECONDS = 20.0

_BRACES = re.compile(r"\{([^{}]*)\}")
_NUMBER = r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)"
_RANGE = re.compile(rf"\s*({_NUMBER})\s*\.\.\s*({_NUMBER})\s*(?::\s*({_NUMBER})\s*)?")
_ITEM = re.compile(r"\s*[A-Za-z0-9_+-]+(?:\.[A-Za-z0-9_+-]+)*\s*")
_WILDCARDS = re.compile(r"[*?\[]")


def is_family(text: str) -> bool:
    """True when ``text`` holds a brace range or list (and is not an existing file)."""
    t = str(text)
    return "{" in t and not os.path.exists(t)


def _decimals(text: str) -> int:
    return len(text.split(".", 1)[1]) if "." in text else 0


def _width(text: str) -> int:
    """Zero-padded width of a whole number as written (digits only, sign aside)."""
    digits = text.lstrip("+-")
    return len(digits) if digits.startswith("0") and len(digits) > 1 else 0


def _format(value: Decimal, decimals: int, width: int) -> str:
    if decimals == 0:
        n = int(value)
        body = f"{abs(n):0{width}d}"
        return ("-" if n < 0 else "") + body
    return f"{value:.{decimals}f}"


def _values(content: str, text: str) -> list:
    """The strings one brace group stands for."""
    m = _RANGE.fullmatch(content)
    if m:
        start_t, stop_t, step_t = m.group(1), m.group(2), m.group(3)
        start, stop = Decimal(start_t), Decimal(stop_t)
        step = Decimal(step_t) if step_t is not None else Decimal(1 if stop >= start else -1)
        if step == 0:
            raise InputError(f"{text}: {{{content}}}: STEP must not be zero")
        if (stop - start) * step < 0:
            raise InputError(f"{text}: {{{content}}}: STEP {step_t} goes away from STOP; use "
                             f"{-step} to count from {start_t} to {stop_t}")
        count = int((stop - start) / step) + 1
        if count > MAX_MEMBERS:
            raise InputError(f"{text}: {{{content}}} gives {count} values; at most "
                             f"{MAX_MEMBERS} are allowed")
        decimals = max(_decimals(t) for t in (start_t, stop_t, step_t or "1"))
        width = max(_width(start_t), _width(stop_t))
        return [_format(start + k * step, decimals, width) for k in range(count)]
    items = content.split(",")
    if len(items) > 1 and all(_ITEM.fullmatch(item) for item in items):
        return [item.strip() for item in items]
    raise InputError(f"{text}: {{{content}}} is not a range: use {{START..STOP}}, "
                     "{START..STOP:STEP} or a list {A,B,C}, e.g. naca00{06..18:3}")


def expand_family(text: str) -> list:
    """Every member of a family text, in order; a text without braces gives itself.

    Parameters
    ----------
    text : str
        A section spec or OUTLINE argument, possibly with brace ranges or lists (see the module
        docstring).

    Returns
    -------
    list of str

    Raises
    ------
    InputError
        Unbalanced or nested braces, a brace that is not a range or list of numbers, a zero or
        wrong-signed step, or more than ``MAX_MEMBERS`` members.
    """
    t = str(text)
    if not is_family(t):
        if "}" in t and not os.path.exists(t):
            raise InputError(f"{t}: '}}' without an opening '{{'")
        return [t]
    groups = list(_BRACES.finditer(t))
    rest = _BRACES.sub("", t)
    if "{" in rest or "}" in rest:
        raise InputError(f"{t}: unbalanced or nested braces; a range is {{START..STOP:STEP}}")
    choices = [_values(g.group(1), t) for g in groups]
    total = 1
    for c in choices:
        total *= len(c)
    if total > MAX_MEMBERS:
        raise InputError(f"{t}: the family has {total} members; at most {MAX_MEMBERS} are "
                         "allowed")
    pieces = _BRACES.split(t)[::2]  # the literal text around the groups
    out = []
    for combo in itertools.product(*choices):
        parts = [pieces[0]]
        for value, tail in zip(combo, pieces[1:], strict=True):
            parts += [value, tail]
        out.append("".join(parts))
    return out


def is_pattern(text: str) -> bool:
    """True when ``text`` holds a wildcard (``*``, ``?``, ``[``) and is not an existing file."""
    t = str(text)
    return bool(_WILDCARDS.search(t)) and not os.path.exists(t)


def _split_pattern(text: str):
    """Pattern and transform suffix: the first '@' after the last folder separator."""
    cut = max(text.rfind("/"), text.rfind("\\"))
    at = text.find("@", cut + 1)
    return (text, "") if at < 0 else (text[:at], text[at:])


def _fixed_prefix(pattern: str) -> str:
    """The folder part of a pattern before its first wildcard."""
    head = re.split(r"[*?\[]", pattern, maxsplit=1)[0]
    return os.path.dirname(head) or "."


def _bounded_glob(pattern: str, shown: str) -> list:
    """``glob`` that refuses a search of the whole disk and gives up after a while.

    A recursive pattern from the file-system root would walk every folder of the machine; any
    search that takes longer than ``GLOB_SECONDS`` (a slow network share) is refused with a
    message instead of hanging.
    """
    if "**" in pattern:
        root = os.path.abspath(_fixed_prefix(pattern))
        if os.path.dirname(root) == root:
            raise InputError(f"{shown}: a '**' pattern from the top of the file system would "
                             "search the whole disk; start it in a folder")
    found, done = [], threading.Event()

    def search():
        try:
            for path in glob.iglob(pattern, recursive=True):
                found.append(path)
                if len(found) > MAX_MEMBERS:
                    break
        finally:
            done.set()

    threading.Thread(target=search, daemon=True).start()
    if not done.wait(GLOB_SECONDS):
        raise InputError(f"{shown}: the pattern was still searching after {GLOB_SECONDS:g} s; "
                         "narrow it to the folder that holds the files")
    if len(found) > MAX_MEMBERS:
        raise InputError(f"{shown}: matches more than {MAX_MEMBERS} paths")
    return found


def expand_files(pattern, base=None) -> list:
    """Existing files matching a wildcard pattern, sorted; a plain path gives itself.

    Parameters
    ----------
    pattern : str or os.PathLike
        A path, possibly with ``*``, ``?``, ``[...]`` or ``**``; a transform suffix (``@...``)
        after the file name part is kept on every match.
    base : str or os.PathLike, optional
        Folder that relative patterns are taken from (a case file's folder); the matches are
        returned joined to it. Default the current folder.

    Returns
    -------
    list of str
        Sorted by path, character by character.

    Raises
    ------
    InputError
        When a pattern matches no file.
    """
    text = os.fspath(pattern)
    full = text if base is None or os.path.isabs(text) else os.path.join(os.fspath(base), text)
    if not is_pattern(full):
        return [full]
    pat, suffix = _split_pattern(full)
    matches = sorted(Path(p).as_posix() for p in _bounded_glob(pat, text) if os.path.isfile(p))
    if not matches:
        raise InputError(f"{text}: no file matches this pattern")
    return [m + suffix for m in matches]


def expand_arguments(args, base=None) -> list:
    """OUTLINE arguments with every family and file pattern expanded, in order.

    A text naming an existing file is kept as it is; otherwise brace ranges are expanded first,
    then each member's wildcards. This is what the CLI's ``compare`` (and a study) sees::

        expand_arguments(["geometries/tender_*.dat", "naca00{09..15:3}"])

    Parameters
    ----------
    args : sequence of str
    base : str or os.PathLike, optional
        Folder for relative file patterns (see :func:`expand_files`).

    Returns
    -------
    list of str

    Raises
    ------
    InputError
        See :func:`expand_family` and :func:`expand_files`; also when the whole list grows
        beyond ``MAX_MEMBERS``.
    """
    out = []
    for arg in args:
        for member in expand_family(arg):
            out.extend(expand_files(member, base) if is_pattern(member) else [member])
        if len(out) > MAX_MEMBERS:
            raise InputError(f"the arguments expand to more than {MAX_MEMBERS} sections")
    return out
