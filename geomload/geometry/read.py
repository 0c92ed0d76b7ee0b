"""Old import path of the readers: see `geometry.readers` (registry) and `geometry.units`."""

from __future__ import annotations

from .readers import (BREP_FORMATS, MESH_FORMATS, REGISTRY, STL_RECORD, _to_metres,  # noqa: F401
                      choose_body as _choose_body, read_mesh, triangle_areas)
from .readers.brep import BREP_TIMEOUT_S  # noqa: F401
from .readers.brep import brep_to_glb as _brep_to_glb  # noqa: F401
from .units import SPAN_TOO_BIG_M, SPAN_TOO_SMALL_M, UNITS  # noqa: F401

__all__ = ["read_mesh", "triangle_areas", "STL_RECORD", "UNITS", "SPAN_TOO_BIG_M", "SPAN_TOO_SMALL_M"]
