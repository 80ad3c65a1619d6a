"""Safe file output: atomic writes (temporary file, then rename or link) and output-path checks.

Every result file panelflow writes goes through :func:`atomic_write`, so an interrupted run never
leaves a half-written file at a target path and an existing file is never replaced unless asked.
"""

from __future__ import annotations

import os
import secrets
from pathlib import Path

from panelflow.errors import OutputError


def _temporary(folder: Path, name: str, suffix: str):
    """Create a new hidden file beside the target, with the permissions the umask gives."""
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
    while True:
        tmp = folder / f".{name}.{secrets.token_hex(6)}{suffix}"
        try:
            return os.open(tmp, flags, 0o666), str(tmp)
        except FileExistsError:
            continue


def atomic_write(path, write, overwrite: bool = False, binary: bool = False,
                 suffix: str = ".tmp") -> Path:
    """Write a file through a temporary file in the same folder, then move it into place.

    ``write(fh)`` fills the open temporary file (text or binary). The file is flushed to disk,
    then renamed onto the target (``overwrite``) or hard-linked to the target name, which fails
    if the target appeared meanwhile: an existing file is never replaced without being asked, and
    an interrupted run leaves no half-written result. ``suffix`` is the temporary file's
    extension (some writers pick the format from it).

    Raises
    ------
    OutputError
        When the file exists and ``overwrite`` is false, or the folder is missing or not writable.
    """
    p = Path(path)
    folder = p.parent if str(p.parent) else Path(".")
    exists = f"{p}: exists; not overwritten (use --force to replace it)"
    if not folder.is_dir():
        raise OutputError(f"{p}: folder {folder} does not exist")
    if p.exists() and not overwrite:
        raise OutputError(exists)
    tmp = None
    try:
        fd, tmp = _temporary(folder, p.name, suffix)
        mode = {"mode": "wb"} if binary else {"mode": "w", "encoding": "utf-8", "newline": "\n"}
        with os.fdopen(fd, **mode) as fh:
            write(fh)
            fh.flush()
            os.fsync(fh.fileno())
        if overwrite:
            os.replace(tmp, p)
        else:
            try:
                os.link(tmp, p)
            except FileExistsError:
                raise OutputError(exists) from None
            except OSError:
                if p.exists():
                    raise OutputError(exists) from None
                os.replace(tmp, p)  # file system without hard links
    except OSError as exc:
        raise OutputError(f"{p}: cannot write ({exc.strerror or exc})") from None
    finally:
        if tmp is not None and os.path.exists(tmp):
            os.unlink(tmp)
    return p


def atomic_write_text(path, text: str, overwrite: bool = False) -> Path:
    """Write ``text`` to ``path`` atomically (see :func:`atomic_write`)."""
    return atomic_write(path, lambda fh: fh.write(text), overwrite)


def check_outputs(paths, registry, overwrite=False, what="output", expand=None) -> None:
    """Raise :class:`OutputError` unless every path can be written: format known to
    ``registry`` (a dict keyed by extension), folder present, each file named once, and none
    existing (unless ``overwrite``). ``expand(path)`` lists every file one output name writes
    (a mesh with its companion table), when that is more than the path itself.

    Called before any work so that a run that cannot finish writes nothing.
    """
    seen = {}  # absolute path -> the output name that writes it
    for path in paths:
        p = Path(path)
        ext = p.suffix.lower()
        if ext not in registry:
            raise OutputError(f"{p}: unknown {what} format {ext or '(no extension)'}; "
                              f"use one of {', '.join(sorted(registry))}")
        for target in (expand(p) if expand else [p]):
            key = os.path.abspath(target)
            if key in seen:
                owner = p if target != p else seen[key]
                raise OutputError(f"{target}: named twice as an output"
                                  + (f" (it is the companion of {owner})" if owner != target
                                     else ""))
            seen[key] = p
            folder = target.parent if str(target.parent) else Path(".")
            if not folder.is_dir():
                raise OutputError(f"{target}: folder {folder} does not exist")
            if target.exists() and not overwrite:
                raise OutputError(f"{target}: exists; not overwritten (use --force to replace it)")
