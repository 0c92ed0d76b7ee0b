"""Old import path: the slicing engine (`slicing`), one section's measures (`section`) and the
station cutting (`stations`) now live in their own modules."""

from __future__ import annotations

from .section import N_CAMBER, _FINE, camber_x, section_properties  # noqa: F401
from .slicing import _chain, _chain_oriented, frame_coords, slice_indexed, slice_loops  # noqa: F401
from .stations import INSET, MAX_THICKNESS_RATIO, MAX_TWIST_DEG, cut_stations, station_levels  # noqa: F401
