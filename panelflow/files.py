"""Safe file input and output.

* Input: :func:`read_input` reads regular files only (no device, pipe or socket, which could
  block or never end), up to a stated size.
* Output: every result file goes through :func:`atomic_write` (a temporary file beside the target,
  then a rename or link), so an interrupted run never leaves a half-written file at a target path
  and an existing file is never replaced unless asked. A temporary file carries the writing
  process's id; one left behind by a process that no longer runs (killed mid-write) is removed by
  the next write into the same folder. :func:`check_outputs` refuses, before any work, an output
  path that is also one of the run's inputs, whatever ``overwrite`` says.
"""

from __future__ import annotations

import os
import re
import secrets
import stat
from pathlib import Path

from panelflow.errors import InputError, OutputError

# Largest input file read: coordinate tables and case files are kilobytes, meshes megabytes.
MAX_INPUT_BYTES = 64 * 2**20
_STALE = re.compile(r"^\..+\.(\d+)-[0-9a-f]{12}(\.[A-Za-z0-9]+)?$")


def _size(n: int) -> str:
    return f"{n / 2**20:.1f} MiB" if n >= 2**20 else f"{n} bytes"


def check_input(path, what: str = "input file", limit: int = MAX_INPUT_BYTES) -> None:
    """Refuse a path that is not a regular file of at most ``limit`` bytes, without opening it.

    Raises
    ------
    InputError
        Missing, a folder, not a regular file (device, named pipe, socket) or larger than
        ``limit``; the message names the path and says what is wrong.
    """
    p = Path(path)
    try:
        st = os.stat(p)
    except FileNotFoundError:
        raise InputError(f"{p}: no such file") from None
    except OSError as exc:
        raise InputError(f"{p}: cannot read ({exc.strerror or exc})") from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError(f"{p}: is a folder, not a file")
    if not stat.S_ISREG(st.st_mode):
        raise InputError(f"{p}: not a regular file (a device, pipe or socket): give a {what}")
    if st.st_size > limit:
        raise InputError(f"{p}: {_size(st.st_size)}, more than the {_size(limit)} a {what} may "
                         "have")


def read_input(path, what: str = "input file", limit: int = MAX_INPUT_BYTES) -> bytes:
    """The bytes of a regular file of at most ``limit`` bytes (see :func:`check_input`).

    Raises
    ------
    InputError
        As :func:`check_input`, or unreadable.
    """
    p = Path(path)
    check_input(p, what, limit)
    try:
        with open(p, "rb") as fh:
            data = fh.read(limit + 1)
    except OSError as exc:
        raise InputError(f"{p}: cannot read ({exc.strerror or exc})") from None
    if len(data) > limit:
        raise InputError(f"{p}: grew beyond {_size(limit)} while being read")
    return data


def _alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OverflowError, OSError):
        return True  # another user's process, or no way to tell: leave its file alone
    return True


def remove_stale_temporaries(folder) -> list:
    """Remove temporary files of :func:`atomic_write` whose writing process no longer runs.

    Returns
    -------
    list of Path
        The files removed.
    """
    removed = []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    for entry in entries:
        m = _STALE.match(entry.name)
        if m and entry.is_file(follow_symlinks=False) and not _alive(int(m.group(1))):
            try:
                os.unlink(entry.path)
                removed.append(Path(entry.path))
            except OSError:
                pass
    return removed


def _temporary(folder: Path, name: str, suffix: str):
    """Create a new hidden file beside the target, with the permissions the umask gives."""
    flags = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
    while True:
        tmp = folder / f".{name}.{os.getpid()}-{secrets.token_hex(6)}{suffix}"
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
    remove_stale_temporaries(folder)
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


def same_file(a, b) -> bool:
    """True when two paths name the same file (links and symbolic links resolved)."""
    try:
        return os.path.samefile(a, b)
    except OSError:
        return os.path.realpath(a) == os.path.realpath(b)


def refuse_inputs(outputs, inputs) -> None:
    """Refuse any output path that resolves to one of the inputs (``--force`` or not).

    Raises
    ------
    OutputError
    """
    for out in outputs:
        for src in inputs:
            if same_file(out, src):
                raise OutputError(f"{out}: is an input of this run ({src}); results never "
                                  "replace an input: choose another name")


def check_outputs(paths, registry, overwrite=False, what="output", expand=None,
                  inputs=()) -> None:
    """Raise :class:`OutputError` unless every path can be written: format known to
    ``registry`` (a dict keyed by extension), folder present, each file named once, and none
    existing (unless ``overwrite``). ``expand(path)`` lists every file one output name writes
    (a mesh with its companion table), when that is more than the path itself.

    Called before any work so that a run that cannot finish writes nothing. An output that
    is one of ``inputs`` is refused even with ``overwrite``.
    """
    refuse_inputs([t for p in paths for t in (expand(Path(p)) if expand else [Path(p)])],
                  inputs)
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
