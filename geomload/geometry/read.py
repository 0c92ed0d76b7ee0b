"""Read a CAD file into a triangle soup in metres (`WingMesh`).

Binary STL has a fast path: one structured `numpy.fromfile` read (50-byte records: normal,
three vertices, attribute), no vertex welding, since plane cutting works on the soup directly.
ASCII STL is parsed here too, so a malformed line can be named. Every other mesh format (OBJ,
PLY, OFF, GLB/glTF, 3MF) goes through trimesh; STEP/IGES through cascadio (OpenCASCADE), run in
a child process (a corrupted file can crash the kernel, and it prints its own messages), whose
GLB output is in metres whatever unit the STEP file declares. trimesh is imported lazily.
"""

from __future__ import annotations

import io
import os

import numpy as np

from ..errors import GeometryError, InputError
from ..records import WingMesh, no_progress

UNITS = {"m": 1.0, "cm": 0.01, "mm": 0.001, "in": 0.0254, "ft": 0.3048}
MESH_FORMATS = {".obj": "obj", ".ply": "ply", ".off": "off", ".glb": "glb", ".gltf": "gltf", ".3mf": "3mf"}
BREP_FORMATS = {".step": "step", ".stp": "step", ".iges": "iges", ".igs": "iges"}
STL_RECORD = np.dtype([("n", "<f4", (3,)), ("v", "<f4", (3, 3)), ("attr", "<u2")])
SPAN_TOO_BIG_M, SPAN_TOO_SMALL_M = 200.0, 0.05
_TRIMESH_UNITS = {"meters": 1.0, "m": 1.0, "millimeters": 1e-3, "mm": 1e-3, "centimeters": 1e-2,
                  "cm": 1e-2, "inches": 0.0254, "in": 0.0254, "feet": 0.3048, "ft": 0.3048}


def read_mesh(path, units=None, body=None, progress=None) -> WingMesh:
    """Read a CAD/mesh file into a `WingMesh` (triangles (m, 3, 3) float64, metres, CAD frame).

    Parameters
    ----------
    path : str or Path
    units : {"m", "cm", "mm", "in", "ft"} or None
        Length unit of a unit-less format (STL, OBJ, PLY, OFF); default metres. STEP/IGES and
        glTF carry their unit, which is honoured (the option is then ignored, with a note).
    body : int or None
        1-based body to keep when the file holds several; default the one of largest area.
    progress : callable(stage, done, total) or None

    Raises
    ------
    InputError, GeometryError
        One-line message naming the file: missing, directory, unreadable, empty, truncated or
        malformed STL, unknown extension, NaN/inf coordinates, no triangles, zero area.
    """
    progress = progress or no_progress
    path = os.fspath(path)
    if units is not None and units not in UNITS:
        raise InputError(f"units {units!r} not one of {', '.join(UNITS)}")
    if not os.path.exists(path):
        raise InputError(f"{path}: file not found")
    if os.path.isdir(path):
        raise InputError(f"{path}: is a directory, not a geometry file")
    if not os.access(path, os.R_OK):
        raise InputError(f"{path}: cannot be read (permission denied)")
    size = os.path.getsize(path)
    if size == 0:
        raise InputError(f"{path}: file is empty")
    ext = os.path.splitext(path)[1].lower()
    notes = []
    progress("read", 0, 1)
    try:
        if ext == ".stl":
            bodies, unit_label = [_read_stl(path, size)], units or "m"
            scale = UNITS[unit_label]
        elif ext in MESH_FORMATS or ext in BREP_FORMATS:
            bodies, file_scale = _read_trimesh(path, ext)
            if file_scale is not None:
                unit_label, scale = "file", file_scale
                if units is not None:
                    notes.append(f"--units {units} ignored: {os.path.basename(path)} carries its own unit")
            else:
                unit_label = units or "m"
                scale = UNITS[unit_label]
        else:
            known = ", ".join(sorted({".stl", *MESH_FORMATS, *BREP_FORMATS}))
            raise InputError(f"{path}: unknown geometry extension {ext or '(none)'!r} (known: {known})")
    except OSError as exc:
        raise InputError(f"{path}: cannot be read ({exc.strerror or exc})") from None
    progress("read", 1, 1)

    bodies = [b for b in bodies if b.shape[0] > 0]
    if not bodies:
        raise GeometryError(f"{path}: contains no triangles")
    # NaN (even a signalling NaN of a binary STL) or inf is reported below as one error line;
    # numpy's floating-point warnings about them would only print stray lines on stderr
    with np.errstate(all="ignore"):
        tris = _choose_body(path, bodies, body, notes)
        tris, bmin, bmax = _to_metres(tris, scale)
        if not (np.isfinite(bmin).all() and np.isfinite(bmax).all()):  # min/max propagate NaN
            raise GeometryError(f"{path}: contains NaN or infinite coordinates")
        extent = float((bmax - bmin).max())
        sub = tris[:: max(1, tris.shape[0] // 20_000)]  # enough for the zero-area check
        if not triangle_areas(sub).sum() > 1e-12 * max(extent, 1e-300) ** 2:
            if not triangle_areas(tris).sum() > 1e-12 * max(extent, 1e-300) ** 2:
                raise GeometryError(f"{path}: zero-area mesh (all triangles are degenerate)")
    if extent > SPAN_TOO_BIG_M or extent < SPAN_TOO_SMALL_M:
        notes.append(f"warning: largest extent is {extent:.4g} m after reading in {unit_label}: "
                     f"wrong unit? (give --units m|cm|mm|in|ft)")
    return WingMesh(triangles=tris, source=path, units=unit_label, notes=tuple(notes))


def _to_metres(src, scale, chunk=1 << 15):
    """float64 copy of src (m, 3, 3) times scale, and its per-axis (min, max), in one pass.

    Blocks of `chunk` triangles are converted and their bounds taken while in cache; the
    product is formed in float64 (a float32 STL value times the unit factor, rounded once).
    """
    m = src.shape[0]
    out = np.empty(src.shape, np.float64)
    bmin, bmax = np.full(3, np.inf), np.full(3, -np.inf)
    for a in range(0, m, chunk):
        blk = out[a:a + chunk]
        np.multiply(src[a:a + chunk], scale, out=blk, dtype=np.float64)
        for i in range(3):  # per axis: NaN propagates through min/max; inf shows in them
            bmin[i] = np.minimum(bmin[i], blk[:, :, i].min())
            bmax[i] = np.maximum(bmax[i], blk[:, :, i].max())
    return out, bmin, bmax


def triangle_areas(tris: np.ndarray) -> np.ndarray:
    """Areas of an (m, 3, 3) triangle array (units of the coordinates squared)."""
    a, b = tris[:, 1] - tris[:, 0], tris[:, 2] - tris[:, 0]
    cx = a[:, 1] * b[:, 2] - a[:, 2] * b[:, 1]  # the cross product, component by component
    cy = a[:, 2] * b[:, 0] - a[:, 0] * b[:, 2]
    cz = a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]
    return 0.5 * np.sqrt(cx * cx + cy * cy + cz * cz)


def _choose_body(path, bodies, body, notes):
    if len(bodies) == 1 and body in (None, 1):
        return bodies[0]
    areas = [float(triangle_areas(b.astype(float)).sum()) for b in bodies]
    if body is None:
        k = int(np.argmax(areas))
        how = "the largest surface area"
    else:
        if not 1 <= int(body) <= len(bodies):
            raise InputError(f"{path}: --body {body} out of range (the file has {len(bodies)} bodies)")
        k, how = int(body) - 1, f"--body {body}"
    left = [f"body {i + 1} ({bodies[i].shape[0]} triangles, area {areas[i]:.4g})"
            for i in range(len(bodies)) if i != k]
    notes.append(f"{len(bodies)} bodies in {os.path.basename(path)}: kept body {k + 1} ({how}); "
                 f"left out: {'; '.join(left)}")
    return bodies[k]


class _BinaryStl:
    """The vertices (m, 3, 3) float32 of a binary STL, read block by block when sliced, so the
    float64 copy is made without the whole 50-byte-record file in memory at once (a 4-million-
    triangle file: 200 MB of records next to the 288 MB copy). Slices must be contiguous."""

    def __init__(self, path, count):
        self.path, self.shape = path, (count, 3, 3)

    def __len__(self):
        return self.shape[0]

    def __getitem__(self, sl):
        start, stop, step = sl.indices(self.shape[0])
        if step != 1:
            raise IndexError("binary STL: only contiguous slices")
        n = max(0, stop - start)
        try:
            rec = np.fromfile(self.path, dtype=STL_RECORD, count=n, offset=84 + 50 * start)
        except OSError as exc:
            raise InputError(f"{self.path}: cannot be read ({exc.strerror or exc})") from None
        if rec.shape[0] != n:
            raise GeometryError(f"{self.path}: truncated binary STL (the file changed while it "
                                f"was read: {rec.shape[0]} of {n} triangles at {start})")
        return rec["v"]

    def astype(self, dtype):
        return self[:].astype(dtype)

    def __array__(self, dtype=None, copy=None):
        v = self[:]
        return v if dtype is None else v.astype(dtype)


def _read_stl(path, size):
    with open(path, "rb") as f:
        head = f.read(84)
    if len(head) >= 84:
        count = int(np.frombuffer(head[80:84], "<u4")[0])
        if size == 84 + 50 * count:
            return _BinaryStl(path, count)
    if head.lstrip()[:5].lower() == b"solid":
        return _read_ascii_stl(path)
    if len(head) < 84:
        raise GeometryError(f"{path}: truncated binary STL ({size} bytes, shorter than the 84-byte header)")
    raise GeometryError(f"{path}: truncated binary STL: triangle count {count} does not match "
                        f"file size {size} bytes (expected {84 + 50 * count})")


_KEYWORDS = {"solid", "facet", "outer", "vertex", "endloop", "endfacet", "endsolid"}


def _read_ascii_stl(path):
    with open(path, "rb") as f:
        text = f.read().decode("ascii", errors="replace")
    lines = text.splitlines()
    verts = []
    for no, line in enumerate(lines, 1):
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


def _read_trimesh(path, ext):
    """Bodies (list of (m, 3, 3) arrays) and the file's scale to metres (None if unit-less).

    Every trimesh call (load, dump, the face indexing) sits inside one guard: whatever a reader
    raises on a malformed file becomes a one-line InputError naming the file.
    """
    import trimesh  # lazy: heavy import

    file_scale = None
    if ext in BREP_FORMATS:
        glb = _brep_to_glb(path, ext)  # GeometryError on a crash, a timeout or no solid
    try:
        if ext in BREP_FORMATS:
            scene = trimesh.load(io.BytesIO(glb), file_type="glb", force="scene")
            file_scale = 1.0  # glTF is metres by definition; the kernel applied the STEP unit
        else:
            scene = trimesh.load(path, file_type=MESH_FORMATS[ext], force="scene")
            if ext in (".glb", ".gltf"):
                file_scale = 1.0
            elif getattr(scene, "units", None):
                file_scale = _TRIMESH_UNITS.get(str(scene.units).lower())
        bodies = []
        for geom in scene.dump() if hasattr(scene, "dump") else [scene]:
            faces = getattr(geom, "faces", None)
            if faces is None or len(faces) == 0:
                continue
            verts, faces = np.asarray(geom.vertices, float), np.asarray(faces)
            if verts.ndim != 2 or verts.shape[1] != 3 or faces.ndim != 2 or faces.shape[1] != 3:
                raise ValueError(f"vertices of shape {verts.shape} and faces of shape "
                                 f"{faces.shape}, expected (n, 3) and (m, 3)")
            if faces.min() < 0 or faces.max() >= verts.shape[0]:
                raise ValueError(f"a face refers to a vertex outside 1..{verts.shape[0]}")
            bodies.append(verts[faces.astype(np.intp)])
    except OSError:
        raise
    except Exception as exc:  # the readers raise many types; one line for the user
        raise InputError(f"{path}: cannot read as {ext[1:].upper()} ({_one_line(exc)})") from None
    return bodies, file_scale


def _one_line(exc):
    text = str(exc).strip()
    return text.splitlines()[0][:120] if text else type(exc).__name__


# The CAD kernel runs in a child process: OpenCASCADE can crash (SIGSEGV) on a corrupted file
# and prints its own parser messages on the process's stdout/stderr; both stay in the child.
BREP_TIMEOUT_S = 300.0
_BREP_CHILD = """
import sys
src, dst, kind = sys.argv[1:4]
try:
    import cascadio
    with open(src, "rb") as f:
        data = f.read()
    glb = cascadio.load(data, file_type=kind, tol_linear=1e-3, tol_angular=0.2, tol_relative=True)
except Exception as exc:
    with open(dst + ".err", "w") as f:
        f.write((str(exc).strip().splitlines() or [type(exc).__name__])[0][:120])
    sys.exit(4)
if not glb:
    sys.exit(3)
with open(dst, "wb") as f:
    f.write(glb)
"""


def _brep_to_glb(path, ext):
    """GLB bytes (metres) of a STEP/IGES file, translated by cascadio in a child process.

    Raises GeometryError naming the file when the kernel crashes, times out, raises, or gives
    no solid; the kernel's own messages are captured and dropped.
    """
    import subprocess
    import sys
    import tempfile

    kind = BREP_FORMATS[ext]
    what = f"{path}: cannot read as {kind.upper()}"
    with tempfile.TemporaryDirectory(prefix="geomload-brep-") as tmp:
        dst = os.path.join(tmp, "out.glb")
        try:
            p = subprocess.run([sys.executable, "-c", _BREP_CHILD, os.path.abspath(path), dst, kind],
                               stdin=subprocess.DEVNULL, capture_output=True, timeout=BREP_TIMEOUT_S)
        except subprocess.TimeoutExpired:
            raise GeometryError(f"{what} (the CAD kernel did not finish within "
                                f"{BREP_TIMEOUT_S:g} s)") from None
        except OSError as exc:
            raise GeometryError(f"{what} (the CAD kernel could not be started: "
                                f"{exc.strerror or exc})") from None
        if p.returncode == 3:
            raise GeometryError(f"{what} (the CAD kernel could not translate it: no solid or "
                                f"surface found)")
        if p.returncode == 4:
            with open(dst + ".err", encoding="utf-8", errors="replace") as f:
                msg = f.read().strip() or "error"
            raise GeometryError(f"{what} (the CAD kernel could not read it: {msg})")
        if p.returncode != 0:
            how = (f"crashed, signal {-p.returncode}" if p.returncode < 0
                   else f"crashed, exit status {p.returncode}")
            raise GeometryError(f"{what} (the CAD kernel could not read it ({how}))")
        try:
            with open(dst, "rb") as f:
                return f.read()
        except OSError:
            raise GeometryError(f"{what} (the CAD kernel wrote no mesh)") from None
