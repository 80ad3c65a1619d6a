"""Progress bars of the long commands (``field``, ``compare``), on standard error.

A bar appears only on a terminal, and only when the work lasts longer than a moment, or
always with ``--progress``; it never mixes with the tables on standard output.
"""

from __future__ import annotations

import contextlib
import sys

DELAY = 1.0  # seconds before a bar appears: a quick command stays silent


@contextlib.contextmanager
def bar(total: int, unit: str, forced: bool = False):
    """A context giving ``update(n)``: a tqdm bar when shown, else a function doing nothing."""
    shown = forced or bool(getattr(sys.stderr, "isatty", None) and sys.stderr.isatty())
    if not shown or total <= 0:
        yield lambda n=1: None
        return
    from tqdm import tqdm

    with tqdm(total=total, file=sys.stderr, unit=unit, unit_scale=True, desc="panelflow",
              delay=0.0 if forced else DELAY, leave=False, dynamic_ncols=True) as b:
        yield b.update
