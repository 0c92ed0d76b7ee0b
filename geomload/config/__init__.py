"""The case file: typed records (schema), TOML reading (parse), the commented template.

Public: :func:`read_case_file` (path -> :class:`Case`), :func:`resolve_positions` (CAD-frame
positions to the wing frame once the wing is read), :func:`case_template`, the records of
:mod:`geomload.config.schema`. Keys, units and frames: docs/case_file.md.
"""

from .parse import read_case_file
from .positions import resolve_positions
from .schema import (AircraftSpec, CadPosition, Case, FlightEnvelopeSpec, FuelTank, GeometrySpec,
                     LatticeSpec, LoadCase, SparSpec, WingMassSpec)
from .template import case_template, toml_value

__all__ = ["read_case_file", "resolve_positions", "case_template", "toml_value", "Case",
           "CadPosition", "GeometrySpec", "AircraftSpec", "WingMassSpec", "FuelTank", "SparSpec",
           "LoadCase", "FlightEnvelopeSpec", "LatticeSpec"]
