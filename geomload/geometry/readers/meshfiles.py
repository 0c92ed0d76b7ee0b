"""Mesh formats read through trimesh (imported lazily): OBJ, PLY, OFF (unit-less), GLB/glTF
(metres by the glTF 2.0 specification, section 3.6 "units for all linear distances are meters"),
3MF (its `unit` attribute, millimetres by default per the 3MF core specification)."""

from __future__ import annotations

import numpy as np

from ...errors import InputError

FORMATS = {".obj": "obj", ".ply": "ply", ".off": "off", ".glb": "glb", ".gltf": "gltf", ".3mf": "3mf"}
_TRIMESH_UNITS = {"meters": 1.0, "meter": 1.0, "m": 1.0, "millimeters": 1e-3, "millimeter": 1e-3,
                  "mm": 1e-3, "centimeters": 1e-2, "centimeter": 1e-2, "cm": 1e-2, "inches": 0.0254,
                  "inch": 0.0254, "in": 0.0254, "feet": 0.3048, "foot": 0.3048, "ft": 0.3048}


def read(path, ext, size):
    """(bodies, scale to metres or None) of a trimesh-readable file."""
    return scene_bodies(path, FORMATS[ext], ext, path)


def scene_bodies(source, file_type, ext, path):
    """Bodies (list of (m, 3, 3) arrays) of a file or a file object, and its scale to metres.

    Every trimesh call sits inside one guard: whatever a reader raises on a malformed file
    becomes a one-line InputError naming the file.
    """
    import trimesh  # lazy: heavy import

    file_scale = None
    try:
        scene = trimesh.load(source, file_type=file_type, force="scene")
        if file_type in ("glb", "gltf"):
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
        raise InputError(f"{path}: cannot read as {ext[1:].upper()} ({one_line(exc)})") from None
    return bodies, file_scale


def one_line(exc):
    text = str(exc).strip()
    return text.splitlines()[0][:120] if text else type(exc).__name__
