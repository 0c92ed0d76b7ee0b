"""The case file: typed records (schema), TOML reading (parse), the commented template.

Public: :func:`read_case_file` (path -> :class:`Case`), :func:`case_template`, the records of
:mod:`geomload.config.schema`.
"""

from .parse import read_case_file
from .schema import (AircraftSpec, Case, FlightEnvelopeSpec, FuelTank, GeometrySpec,
                     LatticeSpec, LoadCase, SparSpec, WingMassSpec)
from .template import case_template, toml_value

__all__ = ["read_case_file", "case_template", "toml_value", "Case", "GeometrySpec",
           "AircraftSpec", "WingMassSpec", "FuelTank", "SparSpec", "LoadCase",
           "FlightEnvelopeSpec", "LatticeSpec"]
