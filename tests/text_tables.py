"""Reading panelflow's aligned text tables back in the tests (by their rule lines)."""

from __future__ import annotations

import re


def _spans(rule: str):
    """Column extents of a table's rule line (runs of dashes), or None for any other line."""
    if not rule.strip() or set(rule.strip()) - {"-", " "}:
        return None
    return [m.span() for m in re.finditer(r"-+", rule)]


def _fits(line: str, spans) -> bool:
    """True when every character of ``line`` lies inside a column (gaps stay blank)."""
    inside = set()
    for a, b in spans:
        inside.update(range(a, b))
    return all(ch == " " or i in inside for i, ch in enumerate(line))


def tables(out: str) -> list[tuple[list[str], list[list[str]]]]:
    """(column headers, rows of cells) of every aligned table in ``out``.

    A table is its header lines (words, then the unit), a rule of dashes per column, then its
    rows; cells are read by the rule's column extents, so names with blanks and blank cells
    stay one cell each. Header words are joined with blanks.
    """
    lines = out.splitlines()
    found = []
    for i, ln in enumerate(lines):
        spans = _spans(ln)
        if spans is None or i == 0:
            continue
        head = []
        for prev in reversed(lines[max(0, i - 4):i]):
            if not prev.strip() or not _fits(prev, spans):
                break
            head.insert(0, prev)
        headers = [" ".join(h[a:b].strip() for h in head if h[a:b].strip()) for a, b in spans]
        rows = []
        for nxt in lines[i + 1:]:
            if not nxt.strip() or not _fits(nxt, spans):
                break
            rows.append([nxt[a:b].strip() for a, b in spans])
        found.append((headers, rows))
    return found
