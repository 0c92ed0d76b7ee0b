"""STL reader: binary fast path (one structured `numpy.fromfile`) and a line-checked ASCII parser.

Binary STL: an 80-byte header, a little-endian uint32 triangle count, then 50-byte records
(normal, three vertices as float32, a 16-bit attribute). No vertex welding: plane cutting works
on the soup directly. STL carries no length unit.
"""

from __future__ import annotations

import numpy as np

from ...errors import GeometryError

STL_RECORD = np.dtype([("n", "<f4", (3,)), ("v", "<f4", (3, 3)), ("attr", "<u2")])
_KEYWORDS = {"solid", "facet", "outer", "vertex", "endloop", "endfacet", "endsolid"}


def read(path, ext, size):
    """([triangles (m, 3, 3)], None): one body, no unit in the file."""
    return [read_stl(path, size)], None


def read_stl(path, size):
    with open(path, "rb") as f:
        head = f.read(84)
    if len(head) >= 84:
        count = int(np.frombuffer(head[80:84], "<u4")[0])
        if size == 84 + 50 * count:
            return np.fromfile(path, dtype=STL_RECORD, count=count, offset=84)["v"]
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
