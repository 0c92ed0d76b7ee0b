"""STL reader: binary fast path (structured `numpy.fromfile`, block by block) and a line-checked
ASCII parser.

Binary STL: an 80-byte header, a little-endian uint32 triangle count, then 50-byte records
(normal, three vertices as float32, a 16-bit attribute). No vertex welding: plane cutting works
on the soup directly. STL carries no length unit.
"""

from __future__ import annotations

import numpy as np

from ...errors import GeometryError, InputError

STL_RECORD = np.dtype([("n", "<f4", (3,)), ("v", "<f4", (3, 3)), ("attr", "<u2")])
_KEYWORDS = {"solid", "facet", "outer", "vertex", "endloop", "endfacet", "endsolid"}


def read(path, ext, size):
    """([triangles (m, 3, 3)], None): one body, no unit in the file."""
    return [read_stl(path, size)], None


class BinaryStl:
    """The vertices (m, 3, 3) float32 of a binary STL, read from the file block by block when
    sliced: the float64 copy (`readers._to_metres`) is then made without the whole file's
    50-byte records in memory beside it (a 4-million-triangle file: 200 MB of records next to
    the 288 MB copy). Only contiguous slices; `np.asarray(obj)` / `astype` read everything.
    """

    def __init__(self, path, count):
        self.path, self.shape = path, (count, 3, 3)

    def __len__(self):
        return self.shape[0]

    def __getitem__(self, sl):
        if not isinstance(sl, slice):
            raise IndexError("binary STL: only contiguous slices")
        start, stop, step = sl.indices(self.shape[0])
        if step != 1:
            raise IndexError("binary STL: only contiguous slices")
        n = max(0, stop - start)
        try:
            rec = np.fromfile(self.path, dtype=STL_RECORD, count=n,
                              offset=84 + STL_RECORD.itemsize * start)
        except OSError as exc:
            raise InputError(f"{self.path}: cannot be read ({exc.strerror or exc})") from None
        if rec.shape[0] != n:
            raise GeometryError(f"{self.path}: truncated binary STL (the file changed while it "
                                f"was read: {rec.shape[0]} of {n} triangles at {start})")
        return rec["v"]

    def blocks(self, chunk, start=0, stop=None):
        """Yield (start, vertices (k, 3, 3) float32) of successive blocks of `chunk` triangles
        (from triangle `start` to `stop`), read from one open file into one reused buffer (no
        allocation or page faults per block; each view is valid until the next block is read)."""
        m = self.shape[0] if stop is None else min(int(stop), self.shape[0])
        buf = np.empty(max(0, min(chunk, m - start)), STL_RECORD)
        try:
            with open(self.path, "rb") as f:
                f.seek(84 + STL_RECORD.itemsize * start)
                for a in range(start, m, chunk):
                    n = min(chunk, m - a)
                    rec = buf[:n]
                    got = f.readinto(rec.view(np.uint8))
                    if got != n * STL_RECORD.itemsize:
                        raise GeometryError(
                            f"{self.path}: truncated binary STL (the file changed while it was "
                            f"read: {got // STL_RECORD.itemsize} of {n} triangles at {a})")
                    yield a, rec["v"]
        except OSError as exc:
            raise InputError(f"{self.path}: cannot be read ({exc.strerror or exc})") from None

    def astype(self, dtype, copy=True):
        return self[:].astype(dtype)

    def __array__(self, dtype=None, copy=None):
        v = self[:]
        return v if dtype is None else v.astype(dtype)


def read_stl(path, size):
    with open(path, "rb") as f:
        head = f.read(84)
    if len(head) >= 84:
        count = int(np.frombuffer(head[80:84], "<u4")[0])
        if size == 84 + 50 * count:
            return BinaryStl(path, count)
    if head.lstrip()[:5].lower() == b"solid":
        return _read_ascii_stl(path)
    if len(head) < 84:
        raise GeometryError(f"{path}: truncated binary STL ({size} bytes, shorter than the 84-byte header)")
    raise GeometryError(f"{path}: truncated binary STL: triangle count {count} does not match "
                        f"file size {size} bytes (expected {84 + 50 * count})")


def _read_ascii_stl(path):
    with open(path, "rb") as f:
        text = f.read().decode("ascii", errors="replace")
    verts = []
    for no, line in enumerate(text.splitlines(), 1):
        words = line.split()
        if not words:
            continue
        key = words[0].lower()
        if key not in _KEYWORDS:
            raise GeometryError(f"{path}: not a valid ASCII STL (line {no}: unexpected {words[0][:20]!r})")
        if key == "vertex":
            try:
                if len(words) != 4:
                    raise ValueError
                verts.append((float(words[1]), float(words[2]), float(words[3])))
            except ValueError:
                raise GeometryError(f"{path}: not a valid ASCII STL (line {no}: bad vertex "
                                    f"{line.strip()[:40]!r})") from None
    if len(verts) % 3:
        raise GeometryError(f"{path}: not a valid ASCII STL ({len(verts)} vertices, not a multiple of 3)")
    return np.asarray(verts, float).reshape(-1, 3, 3)
