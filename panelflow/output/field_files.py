"""Flow-field files: velocity and Cp on a grid or at scattered points, and point lists to read.

:func:`write_field` picks the format from the file extension through :data:`FIELD_WRITERS`:

``.vtu``
    VTK XML unstructured grid, written by meshio (binary data, base64 inside the XML).
``.xdmf``
    XDMF 3 with every array inline as XML text: one self-contained file, no HDF5 companion.
    panelflow writes this file itself with the standard library: meshio 5.3's XDMF writer (and
    reader) imports h5py even for its ``data_format="XML"`` mode, and h5py is not a dependency.
    meshio reads the files back wherever h5py can be imported.
``.csv``
    One row per field point, columns ``x,y,u,v,cp,inside`` under one header row; the notes
    (version, angle, layout, units, caution) go beside it into ``NAME.about.json``.

Mesh layout (``.vtu`` and ``.xdmf``)
------------------------------------
points
    The field points, then the vertices of each body outline; z = 0 throughout.
cells
    A grid field (``shape`` (ny, nx), points row by row with x fastest, as from
    :func:`panelflow.flow.field.grid_points`) gives ``(ny - 1)(nx - 1)`` "quad" cells, counter-clockwise
    for a grid with x and y increasing; all of them are written, also those with corners inside a
    body, whose values are NaN there. Scattered points give one "vertex" cell each. Each outline
    then adds one "line" cell per side of its closed polygon (:attr:`Outline.polygon`).
point data
    ``velocity`` (n, 3) with z = 0 and ``speed``, both per unit freestream speed, ``cp``, and
    ``inside`` (int32, 1 inside or on a body). Inside bodies velocity, speed and Cp are NaN (not
    filled: plotting tools leave NaN blank). Outline vertices carry NaN velocity, speed and Cp
    (the field is not evaluated on them; surface values belong to the surface results) and
    ``inside`` = 1, since on a body counts as inside as in :func:`panelflow.flow.field.inside_bodies`.
cell data
    ``body``: -1 for the field cells, ``k`` for the line cells of ``outlines[k]``.

One angle per file
------------------
A :class:`~panelflow.flow.field.FlowField` may hold several angles of attack; a file holds the one at
``alpha_index`` (default the first). Write one file per angle for more. The angle, the panelflow
version, the units and the usual caution are in the file's comment lines (XML comments in
``.vtu`` and ``.xdmf``, which mesh readers skip).

Every file is written atomically (see :func:`panelflow.output.writers.atomic_write_text`): an existing
file is replaced only with ``overwrite=True``, and a failed write leaves no file behind.
"""

from __future__ import annotations

import csv
import io
import math
import operator
import os
import re
import shutil
import tempfile
import xml.etree.ElementTree as ET
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from panelflow.version import __version__
from panelflow.errors import InputError, OutputError
from panelflow.geometry.readers import _read_text
from panelflow.files import atomic_write
from panelflow.output.writers import CAUTION, atomic_write_text, check_outputs

__all__ = [
    "FIELD_COLUMNS",
    "FIELD_WRITERS",
    "check_field_outputs",
    "read_points_csv",
    "register_field_writer",
    "write_field",
]

FIELD_WRITERS: dict[str, Callable] = {}
FIELD_COLUMNS = ("x", "y", "u", "v", "cp", "inside")

# Cell data "body" of the field cells; the line cells of outlines[k] carry k.
NO_BODY = -1
# Rows (points) formatted at a time by the streaming writers: the text of one chunk is a few MiB,
# so writing a field needs little memory beyond the field itself.
WRITE_CHUNK = 65_536


def register_field_writer(ext: str):
    """Decorator registering a field writer for an extension.

    The writer is called as ``func(field, outlines, alpha_index, path, overwrite)`` after
    :func:`write_field` has checked the path and the index, and returns the path written.

    Parameters
    ----------
    ext : str
        Extension with the dot, matched case-insensitively.
    """
    def deco(func):
        FIELD_WRITERS[ext.lower()] = func
        return func
    return deco


def check_field_outputs(paths, overwrite: bool = False) -> None:
    """Raise :class:`OutputError` unless every path can be written as a field file.

    The checks of :func:`panelflow.output.writers.check_outputs` against the field formats; call it
    before computing a field so a run that cannot finish writes nothing.
    """
    from panelflow.output.columns import with_sidecar

    check_outputs(paths, overwrite, registry=FIELD_WRITERS, what="flow-field",
                  expand=with_sidecar)


# ---------------------------------------------------------------------------------- the mesh
@dataclass(frozen=True)
class _MeshParts:
    """Points, cell blocks and point data of one angle, shared by the mesh writers.

    ``blocks`` holds (meshio cell type, connectivity, body id per cell), empty blocks left out.
    """

    points: np.ndarray
    blocks: tuple
    point_data: dict


def _mesh_parts(field, outlines, k: int) -> _MeshParts:
    n = len(field.points)
    polys = [np.asarray(o.polygon, float) for o in (outlines or ())]
    body_xy = np.vstack(polys) if polys else np.empty((0, 2))
    m = len(body_xy)
    points = np.zeros((n + m, 3))
    points[:n, 0], points[:n, 1] = field.x, field.y
    points[n:, :2] = body_xy
    cells = _field_cells(field)
    blocks = [("quad" if cells.shape[1] == 4 else "vertex", cells,
               np.full(len(cells), NO_BODY, np.int32))]
    if polys:
        # each outline is a closed loop: side i joins vertex i to vertex i + 1 (mod its length)
        sizes = np.array([len(q) for q in polys])
        first = n + np.r_[0, np.cumsum(sizes)[:-1]]
        body = np.repeat(np.arange(len(polys), dtype=np.int32), sizes)
        idx = np.arange(n, n + m)
        nxt = idx + 1
        last = first + sizes - 1
        nxt[last - n] = first
        blocks.append(("line", np.column_stack([idx, nxt]), body))
    pad = np.full(m, np.nan)
    u = np.concatenate([field.u[k], pad])
    v = np.concatenate([field.v[k], pad])
    point_data = {
        "velocity": np.column_stack([u, v, np.zeros(n + m)]),
        "speed": np.hypot(u, v),
        "cp": np.concatenate([field.cp[k], pad]),
        "inside": np.concatenate([field.inside.astype(np.int32), np.ones(m, np.int32)]),
    }
    return _MeshParts(points, tuple(blocks), point_data)


def _field_cells(field) -> np.ndarray:
    """Quad connectivity of a grid field, else one vertex cell per point."""
    n = len(field.points)
    shape = tuple(field.shape)
    if len(shape) == 2 and shape[0] >= 2 and shape[1] >= 2:
        ny, nx = (int(s) for s in shape)
        if ny * nx != n:
            raise InputError(f"field shape {shape} does not match its {n} points")
        k = (np.arange(ny - 1)[:, None] * nx + np.arange(nx - 1)[None, :]).ravel()
        return np.column_stack([k, k + 1, k + 1 + nx, k + nx])
    return np.arange(n)[:, None]


def _header_lines(field, k: int) -> list[str]:
    n_alpha = len(field.alpha_deg)
    shape = tuple(field.shape)
    which = f" (angle {k + 1} of {n_alpha} computed)" if n_alpha > 1 else ""
    if len(shape) == 2:
        layout = f"grid of {shape[0]} rows x {shape[1]} columns, row by row with x fastest"
    else:
        layout = "scattered points"
    return [
        (f"panelflow {__version__}; flow field at angle of attack {field.alpha_deg[k]:.9g} deg"
         f"{which}; {len(field.points)} points, {layout}"),
        ("x, y in the outline's length unit; u, v velocity per unit freestream speed; "
         "cp = 1 - (u^2 + v^2); inside = 1 inside a body, where u, v and cp are nan"),
        CAUTION,
    ]


def _xml_comment(lines) -> str:
    # "--" may not appear inside an XML comment
    body = "\n".join("  " + ln.replace("--", "- -") for ln in lines)
    return f"<!--\n{body}\n-->\n"


def _alpha_index(field, alpha_index) -> int:
    try:
        k = operator.index(alpha_index)
    except TypeError:
        raise InputError(f"alpha_index must be an integer, got {alpha_index!r}") from None
    n_alpha = len(field.alpha_deg)
    if not 0 <= k < n_alpha:
        raise InputError(f"alpha_index {k} out of range: the field holds {n_alpha} "
                         f"angle{'s' if n_alpha != 1 else ''} (0 to {n_alpha - 1})")
    return k


def write_field(field, path, outlines=None, alpha_index: int = 0,
                overwrite: bool = False) -> Path:
    """Write one angle of a flow field, in the format given by the extension of ``path``.

    Parameters
    ----------
    field : FlowField
        From :func:`panelflow.flow.field.flow_field`.
    path : str or os.PathLike
        Output file; ``.vtu``, ``.xdmf`` or ``.csv`` (see :data:`FIELD_WRITERS`).
    outlines : sequence of Outline, optional
        Bodies drawn as closed line cells in ``.vtu`` and ``.xdmf`` files (ignored for CSV).
    alpha_index : int
        Which of ``field.alpha_deg`` to write.
    overwrite : bool
        Replace an existing file.

    Returns
    -------
    pathlib.Path
        The path written.

    Raises
    ------
    OutputError
        Unknown extension, missing folder, existing file without ``overwrite``, or the write
        failed (nothing is left behind then).
    InputError
        ``alpha_index`` out of range, or a grid shape that does not match the points.
    """
    p = Path(path)
    check_field_outputs([p], overwrite)
    k = _alpha_index(field, alpha_index)
    return FIELD_WRITERS[p.suffix.lower()](field, outlines, k, p, overwrite)


# ---------------------------------------------------------------------------------- writers
@register_field_writer(".vtu")
def _write_vtu(field, outlines, k: int, path: Path, overwrite: bool) -> Path:
    """meshio writes a scratch file beside the target; its text then goes in atomically."""
    import meshio

    parts = _mesh_parts(field, outlines, k)
    blocks = parts.blocks
    mesh = meshio.Mesh(parts.points, [(t, c) for t, c, _ in blocks],
                       point_data=parts.point_data,
                       cell_data={"body": [b for _, _, b in blocks]})
    del parts, blocks
    folder = path.parent if str(path.parent) else Path(".")
    scratch = None
    try:
        fd, scratch = tempfile.mkstemp(dir=folder, prefix=f".{path.name}.", suffix=".vtu")
        os.close(fd)
        meshio.write(scratch, mesh, file_format="vtu")
        del mesh

        def copy_with_comment(fh):
            # a comment may stand before the root element (after any XML declaration); the rest
            # of the scratch file is copied in pieces, never held whole in memory
            with open(scratch, encoding="utf-8") as src:
                first = src.read(4096)
                head = first.find("?>") + 2 if first.startswith("<?xml") else 0
                fh.write(first[:head] + ("\n" if head else "")
                         + _xml_comment(_header_lines(field, k)) + first[head:].lstrip("\n"))
                shutil.copyfileobj(src, fh, 1 << 20)

        return atomic_write(path, copy_with_comment, overwrite)
    except (OSError, meshio.WriteError) as exc:
        detail = getattr(exc, "strerror", None) or exc
        raise OutputError(f"{path}: cannot write ({detail})") from None
    finally:
        if scratch is not None and os.path.exists(scratch):
            os.unlink(scratch)


_XDMF_TYPES = {"vertex": ("Polyvertex", 1), "quad": ("Quadrilateral", 5), "line": ("Polyline", 2)}


def _xml_array(parent, data: np.ndarray) -> None:
    """Inline DataItem with every value as text (17 significant digits: exact round trip)."""
    is_int = data.dtype.kind in "iu"
    item = ET.SubElement(parent, "DataItem", DataType="Int" if is_int else "Float",
                         Precision=str(data.dtype.itemsize), Format="XML",
                         Dimensions=" ".join(str(s) for s in data.shape))
    buf = io.StringIO()
    np.savetxt(buf, data.reshape(len(data), -1), fmt="%d" if is_int else "%.17g")
    item.text = "\n" + buf.getvalue()


def _xdmf_topology(grid, blocks) -> None:
    if len(blocks) == 1:
        kind, cells, _ = blocks[0]
        topo = ET.SubElement(grid, "Topology", TopologyType=_XDMF_TYPES[kind][0],
                             NumberOfElements=str(len(cells)),
                             NodesPerElement=str(cells.shape[1]))
        _xml_array(topo, cells.astype(np.int64))
        return
    # Mixed topology (XDMF 3): each cell is its type id then its nodes; polyvertex and polyline
    # cells also give their node count after the id.
    rows = []
    for kind, cells, _ in blocks:
        type_id = _XDMF_TYPES[kind][1]
        lead = [type_id, cells.shape[1]] if kind in ("vertex", "line") else [type_id]
        rows.append(np.hstack([np.tile(lead, (len(cells), 1)), cells]).ravel())
    topo = ET.SubElement(grid, "Topology", TopologyType="Mixed",
                         NumberOfElements=str(sum(len(c) for _, c, _ in blocks)))
    _xml_array(topo, np.concatenate(rows).astype(np.int64))


def _xdmf_attribute(grid, name: str, data: np.ndarray, center: str) -> None:
    kind = "Vector" if data.ndim == 2 and data.shape[1] == 3 else "Scalar"
    att = ET.SubElement(grid, "Attribute", Name=name, AttributeType=kind, Center=center)
    _xml_array(att, data)


@register_field_writer(".xdmf")
def _write_xdmf(field, outlines, k: int, path: Path, overwrite: bool) -> Path:
    parts = _mesh_parts(field, outlines, k)
    blocks = parts.blocks
    root = ET.Element("Xdmf", Version="3.0")
    grid = ET.SubElement(ET.SubElement(root, "Domain"), "Grid", Name="flow field",
                         GridType="Uniform")
    geo = ET.SubElement(grid, "Geometry", GeometryType="XYZ")
    _xml_array(geo, parts.points)
    _xdmf_topology(grid, blocks)
    for name, data in parts.point_data.items():
        _xdmf_attribute(grid, name, data, "Node")
    _xdmf_attribute(grid, "body", np.concatenate([b for _, _, b in blocks]), "Cell")
    ET.indent(root, space=" ")
    text = ('<?xml version="1.0" encoding="utf-8"?>\n' + _xml_comment(_header_lines(field, k))
            + ET.tostring(root, encoding="unicode") + "\n")
    return atomic_write_text(path, text, overwrite)


@register_field_writer(".csv")
def _write_csv(field, outlines, k: int, path: Path, overwrite: bool) -> Path:
    """One row per point; NaN is written as ``nan``, which Python and numpy read back.

    Written in chunks of ``WRITE_CHUNK`` rows straight into the temporary file, so the memory
    needed does not grow with the number of points.
    """
    from panelflow.output.columns import write_sidecar

    def write(fh):
        csv.writer(fh, lineterminator="\n").writerow(FIELD_COLUMNS)
        for i in range(0, len(field.points), WRITE_CHUNK):
            sl = slice(i, i + WRITE_CHUNK)
            table = np.column_stack([field.x[sl], field.y[sl], field.u[k, sl], field.v[k, sl],
                                     field.cp[k, sl], field.inside[sl].astype(float)])
            # 15 significant digits: read-back values agree to ~1e-15 relative
            np.savetxt(fh, table, fmt=["%.15g"] * 5 + ["%d"], delimiter=",")

    out = atomic_write(path, write, overwrite)
    lines = _header_lines(field, k)
    write_sidecar(path, FIELD_COLUMNS, lines[-1], lines[:-1], overwrite)
    return out


# ---------------------------------------------------------------------------------- points in
_WHITESPACE = re.compile(r"\s+")


def _tokens(content: str) -> list[str]:
    # commas separate when present (blanks around them allowed), else blanks do
    if "," in content:
        return [t.strip() for t in content.split(",")]
    return _WHITESPACE.split(content)


def _number(token: str) -> float | None:
    try:
        return float(token)
    except ValueError:
        return None


def read_points_csv(path) -> np.ndarray:
    """Read evaluation points from a text table of ``x, y`` rows.

    Values are separated by commas or blanks; ``#`` starts a comment; blank lines are skipped.
    The first line (comments aside) may be a header of two column labels (``x,y``).

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    ndarray of complex, shape (n,)
        The points as ``x + i y``, in file order.

    Raises
    ------
    InputError
        Missing, unreadable or binary file; no points; a line without exactly two values, with
        a value that is not a number, or with NaN or infinity. Messages start with the path and
        name the line at fault.
    """
    p = Path(path)
    text = _read_text(p)
    xs, ys = [], []
    first = True
    for number, raw in enumerate(text.splitlines(), start=1):
        content = raw.split("#", 1)[0].strip()
        if not content:
            continue
        tokens = _tokens(content)
        values = [_number(t) for t in tokens]
        if first and len(tokens) == 2 and all(v is None for v in values) and all(tokens):
            first = False
            continue  # header line
        first = False
        if len(tokens) != 2:
            raise InputError(f"{p}: line {number}: expected 2 values (x, y), found "
                             f"{len(tokens)}")
        bad = next((t for t, v in zip(tokens, values) if v is None), None)
        if bad is not None:
            what = "an empty value" if not bad else f"{bad!r} is not a number"
            raise InputError(f"{p}: line {number}: {what} (expected x, y)")
        if not all(math.isfinite(v) for v in values):
            raise InputError(f"{p}: line {number}: coordinates must be finite numbers, "
                             f"found {content!r}")
        xs.append(values[0])
        ys.append(values[1])
    if not xs:
        raise InputError(f"{p}: no points found (expected lines of x, y)")
    return np.asarray(xs) + 1j * np.asarray(ys)
