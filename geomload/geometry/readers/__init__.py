"""Read a CAD file into a triangle soup in metres (`WingMesh`), through a registry of readers.

Each reader family is one module with `read(path, ext, size) -> (bodies, scale)`: bodies a list
of (m, 3, 3) arrays in the file's coordinates, scale the file's own metres per unit (None for a
unit-less format). `REGISTRY` maps a lower-case extension to its module name; the module is
imported only when a file of that kind is read (trimesh and the CAD kernel are heavy).
"""

from __future__ import annotations

import importlib
import os

import numpy as np

from ...errors import GeometryError, InputError
from ..records import WingMesh
from ..units import SPAN_TOO_BIG_M, SPAN_TOO_SMALL_M, UNITLESS_FORMATS, UNITS, guess_unit, unit_message
from .stl import STL_RECORD  # noqa: F401  (re-exported for the tests and old imports)

REGISTRY = {".stl": "stl", ".obj": "meshfiles", ".ply": "meshfiles", ".off": "meshfiles",
            ".glb": "meshfiles", ".gltf": "meshfiles", ".3mf": "meshfiles",
            ".step": "brep", ".stp": "brep", ".iges": "brep", ".igs": "brep"}
MESH_FORMATS = {e: e[1:] for e, m in REGISTRY.items() if m == "meshfiles"}
BREP_FORMATS = {".step": "step", ".stp": "step", ".iges": "iges", ".igs": "iges"}
# The CAD kernel's output unit (metres per unit of its GLB): it converts STEP to metres, IGES to
# its session unit, millimetres (measured on files written in mm, in and m).
KERNEL_SCALE = {"step": 1.0, "iges": 1e-3}


def _no_progress(stage, done, total):
    pass


def read_mesh(path, units=None, body=None, progress=None, require_units=False, all_bodies=False,
              units_hint=None, bounds_out=None) -> WingMesh:
    """Read a CAD/mesh file into a `WingMesh` (triangles (m, 3, 3) float64, metres, CAD frame).

    Parameters
    ----------
    path : str or Path
    units : {"m", "cm", "mm", "in", "ft"} or None
        Length unit of the file's coordinates. For a unit-less format (STL, OBJ, PLY, OFF) it is
        the only source of the unit (default: metres, with a warning). For STEP/IGES/GLB/3MF,
        which carry their unit, a given `units` overrides the file's unit (with a warning saying
        so).
    body : int or None
        1-based body to keep when the file holds several; default the one of largest area
        (`all_bodies=False`) or all of them (`all_bodies=True`, their sizes in `body_sizes`).
    progress : callable(stage, done, total) or None
    require_units : bool
        Refuse a unit-less format read with no `units` (GeometryError naming the file, the
        likely unit from `units.guess_unit` and the key to set).
    units_hint : str or None
        Wording of "the key to set" in that refusal (default names both the case-file key
        `geometry.units` and the CLI option `--units`).
    bounds_out : list or None
        Receives (min (3,), max (3,)) per axis of the returned triangles (m), from the read's
        own pass (exact, as `bounds`).

    Raises
    ------
    InputError, GeometryError
        One-line message naming the file: missing, directory, unreadable, empty, truncated or
        malformed STL, unknown extension, NaN/inf coordinates, no triangles, zero area.
    """
    progress = progress or _no_progress
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
    if ext not in REGISTRY:
        known = ", ".join(sorted(REGISTRY))
        raise InputError(f"{path}: unknown geometry extension {ext or '(none)'!r} (known: {known})")
    notes = []
    progress("read", 0, 1)
    reader = importlib.import_module(f"{__name__}.{REGISTRY[ext]}")
    try:
        bodies, file_scale = reader.read(path, ext, size)
    except OSError as exc:
        raise InputError(f"{path}: cannot read as {ext[1:].upper()} ({exc.strerror or exc})") from None
    progress("read", 1, 1)
    name = os.path.basename(path)
    units_assumed = False
    if ext in BREP_FORMATS:
        kind = BREP_FORMATS[ext]
        from .brep import file_unit

        declared = file_unit(path, ext)
        scale = KERNEL_SCALE[kind]
        if kind == "iges" and declared is None:
            notes.append(f"warning: {name}: no unit flag in the IGES global section; inches taken "
                         "(the IGES default); give units to override")
            scale = KERNEL_SCALE[kind]  # the kernel applies the inch default itself
        unit_label = "file"
        cad_scale = UNITS[units] if units is not None else (
            declared if declared is not None else (0.0254 if kind == "iges" else 1.0))
        if units is not None:
            if declared is None:
                declared = 0.0254 if kind == "iges" else 1.0
            scale = scale / declared * UNITS[units]
            unit_label = units
            notes.append(f"warning: units: {units} given: overrides the unit declared in {name} "
                         f"({_label(declared)})")
    elif file_scale is not None:
        scale, unit_label = file_scale, "file"
        if units is not None:
            scale, unit_label = UNITS[units], units
            notes.append(f"warning: units: {units} given: overrides the unit of {name} "
                         f"({_label(file_scale)})")
        cad_scale = scale
    else:
        unit_label = units or "m"
        scale = cad_scale = UNITS[unit_label]
        units_assumed = units is None and ext in UNITLESS_FORMATS

    bodies = [b for b in bodies if b.shape[0] > 0]
    if not bodies:
        raise GeometryError(f"{path}: contains no triangles")
    # NaN (even a signalling NaN of a binary STL) or inf is reported below as one error line;
    # numpy's floating-point warnings about them would only print stray lines on stderr
    with np.errstate(all="ignore"):
        if all_bodies and body is None:
            sizes = tuple(int(b.shape[0]) for b in bodies)
            tris = bodies[0] if len(bodies) == 1 else np.concatenate([b.astype(float, copy=False) for b in bodies])
        else:
            tris = choose_body(path, bodies, body, notes)
            sizes = (int(tris.shape[0]),)
        tris, bmin, bmax = _to_metres(tris, scale)
        if not (np.isfinite(bmin).all() and np.isfinite(bmax).all()):  # min/max propagate NaN
            raise GeometryError(f"{path}: contains NaN or infinite coordinates")
        extent = float((bmax - bmin).max())
        sub = tris[:: max(1, tris.shape[0] // 20_000)]  # enough for the zero-area check
        if not triangle_areas(sub).sum() > 1e-12 * max(extent, 1e-300) ** 2:
            if not triangle_areas(tris).sum() > 1e-12 * max(extent, 1e-300) ** 2:
                raise GeometryError(f"{path}: zero-area mesh (all triangles are degenerate)")
    if units_assumed:
        likely, why = guess_unit(extent, read_in="m")
        if require_units:
            raise GeometryError(unit_message(path, likely, why, units_hint))
        odd = "; wrong unit?" if not SPAN_TOO_SMALL_M <= extent <= SPAN_TOO_BIG_M else ""
        notes.append(f"warning: units: {name} carries no length unit and none was given: read "
                     f"in m ({extent:.4g} m across{odd}); likely unit {likely} ({why}); give "
                     f"units (`geometry.units` in a case file, --units on the command line)")
    elif extent > SPAN_TOO_BIG_M or extent < SPAN_TOO_SMALL_M:
        notes.append(f"warning: largest extent is {extent:.4g} m after reading in {unit_label}: "
                     f"wrong unit? (give --units m|cm|mm|in|ft)")
    if bounds_out is not None:
        bounds_out.append((bmin, bmax))
    return WingMesh(triangles=tris, source=path, units=unit_label, notes=tuple(notes),
                    unit_scale_m=float(cad_scale),
                    units_assumed=units_assumed, body_sizes=sizes)


def _label(scale):
    from .brep import UNIT_LABELS

    for k, v in UNIT_LABELS.items():
        if abs(scale - k) <= 1e-12 * k:
            return v
    return f"{scale:g} m per unit"


def _to_metres(src, scale, chunk=1 << 15):
    """float64 copy of src (m, 3, 3) times scale, and its per-axis (min, max), in one pass.

    Blocks of `chunk` triangles are converted and their bounds taken while in cache; the
    product is formed in float64 (a float32 STL value times the unit factor, rounded once).
    A source with a `blocks(chunk, start, stop)` method (a binary STL on disk) is read through
    it, a large one in two halves by two threads when a CPU is free (`PARALLEL_READ_MIN`): the
    same elementwise product per value, and min / max are exact in any order.
    """
    m = src.shape[0]
    out = np.empty(src.shape, np.float64)
    if hasattr(src, "blocks"):
        halves = [(0, m)]
        if m >= PARALLEL_READ_MIN:
            from geomload.forked import parallel_pays

            if parallel_pays(1):
                half = (m // 2 // chunk) * chunk
                halves = [(0, half), (half, m)]
        parts = [None] * len(halves)

        def convert(k):
            parts[k] = _convert(src.blocks(chunk, *halves[k]), out, scale)

        if len(halves) == 2:
            import threading

            err = []

            def second():
                try:
                    convert(1)
                except BaseException as exc:  # noqa: BLE001 - raised below, in this thread
                    err.append(exc)

            t = threading.Thread(target=second, name="geomload-read")
            t.start()
            try:
                convert(0)
            finally:
                t.join()
            if err:
                raise err[0]
        else:
            convert(0)
        bmin = np.minimum.reduce([p[0] for p in parts])
        bmax = np.maximum.reduce([p[1] for p in parts])
        return out, bmin, bmax
    bmin, bmax = _convert(((a, src[a:a + chunk]) for a in range(0, m, chunk)), out, scale)
    return out, bmin, bmax


PARALLEL_READ_MIN = 1 << 20  # triangles (50 MB of binary STL) from which two threads read


def _convert(blocks, out, scale):
    """out[a:a + k] = block * scale (float64) for each (a, block); returns the blocks' (min, max)
    per axis."""
    bmin, bmax = np.full(3, np.inf), np.full(3, -np.inf)
    for a, s in blocks:
        blk = out[a:a + s.shape[0]]
        np.multiply(s, scale, out=blk, dtype=np.float64)
        np.minimum(bmin, _axis_bound(blk, np.minimum), out=bmin)
        np.maximum(bmax, _axis_bound(blk, np.maximum), out=bmax)
    return bmin, bmax


def bounds(tris, chunk=1 << 15):
    """Per-axis (min (3,), max (3,)) of all vertices of an (m, 3, 3) array, block by block
    (exact; NaN propagates; (inf, -inf) when empty)."""
    bmin, bmax = np.full(3, np.inf), np.full(3, -np.inf)
    for a in range(0, tris.shape[0], chunk):
        blk = np.ascontiguousarray(tris[a:a + chunk])
        np.minimum(bmin, _axis_bound(blk, np.minimum), out=bmin)
        np.maximum(bmax, _axis_bound(blk, np.maximum), out=bmax)
    return bmin, bmax


_FOLD = 64  # rows of one folding step of `_axis_bound`


def _axis_bound(blk, op):
    """Per-axis op-reduction (np.minimum / np.maximum) of a C-contiguous (k, 3, 3) block.

    The flat block is folded as (64, L / 64) rows and reduced over the rows (contiguous,
    vectorised) while its length allows (a multiple of 3 * 64 keeps every column on one axis);
    the short rest is reduced as (n, 3). Min and max are exact and propagate NaN, so the
    result does not depend on the folding.
    """
    v = blk.reshape(-1)
    while v.size > 3 * _FOLD and v.size % (3 * _FOLD) == 0:
        v = op.reduce(v.reshape(_FOLD, -1), axis=0)
    return op.reduce(v.reshape(-1, 3), axis=0)


def triangle_areas(tris: np.ndarray) -> np.ndarray:
    """Areas of an (m, 3, 3) triangle array (units of the coordinates squared)."""
    a, b = tris[:, 1] - tris[:, 0], tris[:, 2] - tris[:, 0]
    cx = a[:, 1] * b[:, 2] - a[:, 2] * b[:, 1]  # the cross product, component by component
    cy = a[:, 2] * b[:, 0] - a[:, 0] * b[:, 2]
    cz = a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]
    return 0.5 * np.sqrt(cx * cx + cy * cy + cz * cz)


def choose_body(path, bodies, body, notes):
    """The body to analyse: `body` (1-based) or the one of largest area (with a warning)."""
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
    text = (f"{len(bodies)} bodies in {os.path.basename(path)}: kept body {k + 1} ({how}); "
            f"left out: {'; '.join(left)}")
    notes.append(text if body is not None else "warning: " + text)
    return bodies[k]
