"""A writer for VTK XML PolyData (.vtp) files in numpy alone (no VTK, no pyvista).

The format is the documented open "VTK XML file format" (Kitware, "VTK File Formats", the
PolyData type): an XML header naming each array with an ``offset`` into one appended raw block;
each array in that block is a UInt64 byte count followed by the little-endian values.
Connectivity of polygons and lines is given as ``connectivity`` + ``offsets`` (end index of
each cell), as in VTK 9's file version 1.0.

Strings (case names) are written as a ``String`` array: in the appended block the UTF-8 bytes
of each string, each ended by a NUL byte. Any Unicode name therefore survives the round trip;
array *names* are ASCII (see textsafe.ascii_key).

The file is written through `atomic.atomic_path` (temporary file, every write's byte count
checked, fsync (inside a staged run folder: the folder's one pass, `atomic.sync_at_end`),
rename): a full disk or a read-only file system raises one OutputError and leaves nothing
behind.
"""

from __future__ import annotations

import os
from xml.sax.saxutils import quoteattr

import numpy as np

from geomload.export.atomic import atomic_path, flush_to_disk

_TYPES = {np.dtype("<f8"): "Float64", np.dtype("<f4"): "Float32", np.dtype("<i8"): "Int64",
          np.dtype("<i4"): "Int32", np.dtype("<u1"): "UInt8", np.dtype("<i1"): "Int8"}


def _norm(a) -> np.ndarray:
    a = np.asarray(a)
    if a.dtype.kind == "b" or a.dtype == np.uint8:
        a = a.astype("<u1", copy=False)
    elif a.dtype.kind in "iu":
        a = a.astype("<i8", copy=False)
    elif a.dtype.kind == "f":
        a = a.astype("<f4" if a.dtype.itemsize <= 4 else "<f8", copy=False)
    else:
        raise TypeError(f"vtp: unsupported array type {a.dtype}")
    return np.ascontiguousarray(a)


class _Block:
    """Collects arrays for the appended block; returns their XML elements."""

    def __init__(self):
        self.parts, self.offset = [], 0

    def add(self, name, a, tuples_attr=False) -> str:
        if isinstance(a, (list, tuple)) and (len(a) == 0 or isinstance(a[0], str)):
            data = b"".join(s.encode("utf-8") + b"\0" for s in a)
            attrs = f'type="String" Name={quoteattr(name)} NumberOfTuples="{len(a)}"'
            self.parts.append((np.frombuffer(data, dtype="u1"), len(data)))
        else:
            a = _norm(a)
            ncomp = a.shape[1] if a.ndim == 2 else 1
            attrs = f'type="{_TYPES[a.dtype]}"'
            if name:
                attrs += f" Name={quoteattr(name)}"
            attrs += f' NumberOfComponents="{ncomp}"'
            if tuples_attr:
                attrs += f' NumberOfTuples="{a.shape[0]}"'
            self.parts.append((a, a.nbytes))
        el = f'<DataArray {attrs} format="appended" offset="{self.offset}"/>'
        self.offset += 8 + self.parts[-1][1]
        return el


def write_vtp(path, points, polys=None, lines=None, point_data=None, cell_data=None,
              field_data=None, inputs=()):
    """Write a .vtp file atomically; returns `path`.

    Parameters
    ----------
    points : (n, 3) float coordinates.
    polys : (m, k) int array of polygons with k corners each (triangles, quads), or None.
    lines : list of 1-D int arrays, one polyline each, or None.
    point_data, cell_data : dict name -> (n,) / (cells,) or (.., c) arrays (float, int, bool).
    field_data : dict name -> array, or a list of str (written as a String array).
    """
    pts = np.asarray(points, float).reshape(-1, 3)
    blk = _Block()
    field = [blk.add(k, v, tuples_attr=True) for k, v in (field_data or {}).items()]
    n_polys = 0 if polys is None else int(np.shape(polys)[0])
    lines = [np.asarray(ln, np.int64) for ln in (lines or [])]
    pdata = [blk.add(k, v) for k, v in (point_data or {}).items()]
    cdata = [blk.add(k, v) for k, v in (cell_data or {}).items()]
    point_el = blk.add("Points", pts)
    topo = []
    if lines:
        conn = np.concatenate(lines)
        offs = np.cumsum([ln.size for ln in lines])
        topo.append("<Lines>" + blk.add("connectivity", conn) + blk.add("offsets", offs) + "</Lines>")
    if n_polys:
        pl = np.asarray(polys, np.int64)
        offs = np.arange(1, n_polys + 1, dtype=np.int64) * pl.shape[1]
        topo.append("<Polys>" + blk.add("connectivity", pl.ravel()) + blk.add("offsets", offs)
                    + "</Polys>")
    head = ['<?xml version="1.0"?>',
            '<VTKFile type="PolyData" version="1.0" byte_order="LittleEndian" header_type="UInt64">',
            "<PolyData>"]
    if field:
        head += ["<FieldData>", *field, "</FieldData>"]
    head.append(f'<Piece NumberOfPoints="{pts.shape[0]}" NumberOfVerts="0" '
                f'NumberOfLines="{len(lines)}" NumberOfStrips="0" NumberOfPolys="{n_polys}">')
    head += ["<PointData>", *pdata, "</PointData>", "<CellData>", *cdata, "</CellData>",
             "<Points>", point_el, "</Points>", *topo, "</Piece>", "</PolyData>",
             '<AppendedData encoding="raw">']
    header = ("\n".join(head) + "\n_").encode("utf-8")
    tail = b"\n</AppendedData>\n</VTKFile>\n"
    expect = len(header) + blk.offset + len(tail)
    with atomic_path(path, inputs) as tmp:
        with open(tmp, "wb") as fh:
            _put(fh, header)
            for a, nbytes in blk.parts:
                _put(fh, np.uint64(nbytes).astype("<u8").tobytes())
                _put(fh, memoryview(a).cast("B") if a.size else b"")
            _put(fh, tail)
            flush_to_disk(fh, path)
            size = os.fstat(fh.fileno()).st_size
        if size != expect:
            raise OSError(5, f"file is {size} bytes, expected {expect}")
    return path


def _put(fh, data) -> None:
    n = fh.write(data)
    want = len(data) if not isinstance(data, memoryview) else data.nbytes
    if n != want:
        raise OSError(28, f"short write ({n} of {want} bytes)")
