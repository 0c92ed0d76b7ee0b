"""The typed case records: what a case file says, validated, in SI units.

These frozen records are the whole contract between the case file and the stages: the geometry,
aero and loads stages take them (or values drawn from them) and never see the file format.
:mod:`geomload.config.parse` builds them from TOML with key-named errors; a program may build
them directly. Each checks its own values at construction (raising CaseError), so a record that
exists is consistent.

Masses follow one rule (docs/methods_loads.md): ``WingMassSpec.total_kg`` and
``FuelTank.mass_kg`` are for the whole wing (both sides), each semi-span carries half; a
``PointMass`` is one item on the starboard side, mirrored to port, so each semi-span carries the
full value.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Optional

import numpy as np

from geomload.errors import CaseError, InputError
from geomload.record_checks import set_field, vector

if TYPE_CHECKING:
    from .controls_parse import ControlsSpec

MAX_ALTITUDE_M = 20000.0  # top of the ISA layers geomload models
CATEGORIES = ("normal", "utility", "acrobatic", "custom")
SPACINGS = ("cosine", "uniform")
LOAD_FACTOR_AXES = ("body", "flight-path")


def _finite(where: str, **values) -> None:
    for k, v in values.items():
        if v is not None and (isinstance(v, bool) or not math.isfinite(float(v))):
            raise CaseError(f"{where}.{k}: must be a finite number, got {v!r}")


@dataclass(frozen=True)
class PointMass:
    """A concentrated mass (kg) at a wing-frame position (m), on the starboard side (y >= 0)."""

    name: str
    mass: float
    position: np.ndarray

    def __post_init__(self):
        set_field(self, "position", vector(f"point mass {self.name!r} position", self.position, 3))
        if not (math.isfinite(self.mass) and self.mass >= 0):
            raise InputError(f"point mass {self.name!r}: mass must be finite and >= 0")



@dataclass(frozen=True)
class GeometrySpec:
    """Where the CAD wing is and how to read it (file: absolute path; n_stations: spanwise cuts
    on one semi-span; body: 1-based body number in a multi-body file, None = the largest;
    up_axis: CAD axis pointing up, optionally signed ("z", "+z", "-y"): a signed one decides up
    versus down; side: "port" or "starboard", the side a half wing lies on in the file, None =
    detected)."""

    file: str
    units: Optional[str] = None
    span_axis: Optional[str] = None
    up_axis: Optional[str] = None
    n_stations: int = 20
    spacing: str = "cosine"
    body: Optional[int] = None
    side: Optional[str] = None

    def __post_init__(self):
        if self.side not in (None, "port", "starboard"):
            raise CaseError(f"geometry.side: {self.side!r} is not one of 'port', 'starboard'")
        if self.n_stations < 3:
            raise CaseError(f"geometry.stations: need at least 3, got {self.n_stations}")
        if self.spacing not in SPACINGS:
            raise CaseError(f"geometry.spacing: {self.spacing!r} is not one of {SPACINGS}")


@dataclass(frozen=True)
class AircraftSpec:
    """gross_mass_kg: design maximum take-off mass; cl_max: section cl_max for the stall warning
    (None = no warning); cd0: section profile-drag coefficient added to the induced drag."""

    gross_mass_kg: float
    cl_max: Optional[float] = None
    cd0: float = 0.0

    def __post_init__(self):
        _finite("aircraft", gross_mass_kg=self.gross_mass_kg, cl_max=self.cl_max, cd0=self.cd0)
        if not self.gross_mass_kg > 0:
            raise CaseError(f"aircraft.gross_mass_kg: must be > 0, got {self.gross_mass_kg:g}")


@dataclass(frozen=True)
class WingMassSpec:
    """Wing structural mass, both sides (kg). distribution "chord": m'(y) proportional to chord;
    "table": per-side kg/m at table_y_m (linear between points, root to tip).
    cg_chord_fraction: chordwise c.g. of the structure as a fraction of chord (None = on the
    spar axis)."""

    total_kg: float
    distribution: str = "chord"
    table_y_m: tuple = ()
    table_kg_per_m: tuple = ()
    cg_chord_fraction: Optional[float] = None

    def __post_init__(self):
        _finite("wing_mass", total_kg=self.total_kg)
        if len(self.table_y_m) != len(self.table_kg_per_m):
            raise CaseError("wing_mass.table: y and kg_per_m columns differ in length")


@dataclass(frozen=True)
class FuelTank:
    """Fuel of a tank pair (both sides, kg) spread over y_from_m..y_to_m on each side,
    "uniform" per span or "chord"-weighted."""

    name: str
    mass_kg: float
    y_from_m: float
    y_to_m: float
    distribution: str = "uniform"
    cg_chord_fraction: Optional[float] = None

    def __post_init__(self):
        _finite(f"fuel_tank {self.name!r}", mass_kg=self.mass_kg, y_from_m=self.y_from_m,
                y_to_m=self.y_to_m)
        if not self.y_to_m > self.y_from_m:
            raise CaseError(f"fuel_tank {self.name!r}.y_to_m: must be greater than y_from_m "
                            f"({self.y_from_m:g} m)")


@dataclass(frozen=True)
class SparSpec:
    """Load axis: a chord fraction of every station, or a polyline ((y, x, z), ...) in metres.
    rib_y_m: the structure's own stations (m, root to tip); when given, every loads table reports
    exactly these rows (both sides of a point-load step that falls on one)."""

    chord_fraction: Optional[float] = 0.25
    line: tuple = ()
    rib_y_m: tuple = ()

    def __post_init__(self):
        if self.rib_y_m and (any(not math.isfinite(v) for v in self.rib_y_m)
                             or any(b <= a for a, b in zip(self.rib_y_m, self.rib_y_m[1:]))):
            raise CaseError("spar.rib_y_m: must be finite and increase strictly")


@dataclass(frozen=True)
class LoadCase:
    """One flight condition. speed_m_s is of kind speed_type ("EAS" or "TAS"); mass_kg None =
    gross; cl_max / cd0 None = the [aircraft] values; fuel_fraction scales every fuel tank."""

    name: str
    speed_m_s: float
    speed_type: str
    altitude_m: float
    load_factor: float
    lift_share: float = 1.0
    mass_kg: Optional[float] = None
    cl_max: Optional[float] = None
    cd0: Optional[float] = None
    fuel_fraction: float = 1.0

    def __post_init__(self):
        _finite(f"load_case {self.name!r}", speed=self.speed_m_s, altitude=self.altitude_m,
                load_factor=self.load_factor, lift_share=self.lift_share, mass_kg=self.mass_kg)
        if self.speed_type not in ("EAS", "TAS"):
            raise CaseError(f"load_case {self.name!r}.speed_type: must be 'EAS' or 'TAS'")


@dataclass(frozen=True)
class FlightEnvelopeSpec:
    """The [envelope] table (the flight envelope, V-n) in SI. Speeds are EAS (m/s); None =
    derived from the rule minimums. n_neg is negative. cl_max_neg is the magnitude of the negative
    CLmax. Gusts None = rule. n_neg_dive: custom only, negative limit at V_D (default 0)."""

    category: str
    cl_max_pos: float
    cl_max_neg: float
    n_pos: Optional[float] = None
    n_neg: Optional[float] = None
    v_cruise: Optional[float] = None
    v_dive: Optional[float] = None
    v_maneuver: Optional[float] = None
    altitudes_m: tuple = (0.0,)
    min_mass_kg: Optional[float] = None
    gust_cruise_m_s: Optional[float] = None
    gust_dive_m_s: Optional[float] = None
    lift_share: float = 1.0
    n_neg_dive: Optional[float] = None


EnvelopeSpec = FlightEnvelopeSpec  # the earlier name


@dataclass(frozen=True)
class LatticeSpec:
    """Vortex-lattice density: strips on one semi-span, chordwise panels, strip spacing."""

    n_span: int = 40
    n_chord: int = 10
    spacing: str = "cosine"

    def __post_init__(self):
        if self.n_span < 2 or self.n_chord < 1:
            raise CaseError("lattice.n_span: need n_span >= 2 and n_chord >= 1")


FRAMES = ("wing", "cad")  # the frames a case-file position may be given in


@dataclass(frozen=True)
class CadPosition:
    """A position the case file gives in the CAD frame, waiting for the wing's frame transform
    (:func:`geomload.config.positions.resolve_positions` converts it once the wing is read).

    key: the entry as the file names it ("point_mass[2]", "spar.points"); target: where the
    converted value goes: ("point_mass", index), ("fuel_tank", index), ("spar",) or
    ("moment_reference",); values: ((x, y, z), ...) CAD coordinates, one row per point (a
    point mass and the moment reference: one; a fuel tank: its inboard and outboard ends; the
    spar: its points); with_unit: the same shape, True where the value was written with its
    unit (already metres), False where it is a number in the CAD unit.
    """

    key: str
    target: tuple
    values: tuple
    with_unit: tuple

    def __post_init__(self):
        v = np.asarray(self.values, float)
        if v.ndim != 2 or v.shape[1] != 3 or np.asarray(self.with_unit).shape != v.shape:
            raise CaseError(f"{self.key}: a CAD position needs (x, y, z) rows")
        if not np.all(np.isfinite(v)):
            raise CaseError(f"{self.key}: CAD coordinates must be finite")


@dataclass(frozen=True)
class Case:
    """A whole case file, validated, SI. path: absolute path of the case file.

    load_factor_axis: "body" (n = N / W, N normal to the longitudinal axis, 14 CFR 23.321(a)) or
    "flight-path" (n = L / W, inertia opposite the lift).
    """

    path: str
    title: str
    geometry: GeometrySpec
    aircraft: AircraftSpec
    wing_mass: Optional[WingMassSpec]
    point_masses: tuple
    fuel_tanks: tuple
    spar: SparSpec
    moment_reference: Optional[np.ndarray]
    load_cases: tuple
    envelope: Optional[FlightEnvelopeSpec]
    lattice: LatticeSpec
    ultimate_factor: float = 1.5
    load_factor_axis: str = "body"
    structure: Optional[object] = None  # config.structure.StructureSpec: the hand-off outputs
    warnings: tuple = ()  # what the case file should say differently (old key names)
    controls: Optional["ControlsSpec"] = None  # config.controls_parse: surfaces, rolling, tail
    # positions given in the CAD frame: their records above hold placeholders until
    # config.positions.resolve_positions(case, wing) converts them (the checks refuse a Case
    # that still has some)
    cad_positions: tuple = ()
    # (current key, key as written) pairs, e.g. ("point_mass[1].y", "point_mass[1].y_m")
    key_names: tuple = ()

    def __post_init__(self):
        if self.load_factor_axis not in LOAD_FACTOR_AXES:
            raise CaseError(f"analysis.load_factor_axis: {self.load_factor_axis!r} is not one of "
                            f"{LOAD_FACTOR_AXES}")
        if not all(isinstance(p, PointMass) for p in self.point_masses):
            raise CaseError("point_mass: entries must be PointMass records")
        if not all(isinstance(t, FuelTank) for t in self.fuel_tanks):
            raise CaseError("fuel_tank: entries must be FuelTank records")
        if not all(isinstance(c, LoadCase) for c in self.load_cases):
            raise CaseError("load_case: entries must be LoadCase records")
        if not all(isinstance(p, CadPosition) for p in self.cad_positions):
            raise CaseError("cad_positions: entries must be CadPosition records")

    def key(self, name: str) -> str:
        """A dotted case-file key as the file writes it ("point_mass[1].y" -> "point_mass[1].y_m"
        when the file used the older spelling)."""
        return dict(self.key_names).get(name, name)

    @property
    def fuel_mass_kg(self) -> float:
        """Total fuel of all tanks, both sides (kg)."""
        return float(sum(t.mass_kg for t in self.fuel_tanks))

    @property
    def body_axis(self) -> bool:
        """True when the load factor is defined normal to the longitudinal axis."""
        return self.load_factor_axis == "body"


__all__ = ["CadPosition", "FRAMES", "GeometrySpec", "AircraftSpec", "WingMassSpec", "FuelTank", "SparSpec", "LoadCase",
           "FlightEnvelopeSpec", "EnvelopeSpec", "LatticeSpec", "Case", "PointMass",
           "CATEGORIES", "MAX_ALTITUDE_M"]
