"""The loads stage's records: masses, the load grid, the applied loads, the trim state, the
root equilibrium and the span loads of one case. The two envelopes' records (V-n diagram,
envelope of loads) are in :mod:`geomload.loads.envelope_records` and re-exported here.

Frozen dataclasses of numpy arrays in SI, wing frame (x aft, y starboard, z up), one semi-span
root to tip. Each checks its arrays' shapes when built and is never changed after (a later
stage that adds information builds a new record with ``dataclasses.replace``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Mapping, Optional

import numpy as np

from geomload.errors import InputError
from geomload.record_checks import check_type, fields, set_field, vector

from geomload.config.schema import PointMass  # noqa: F401  (re-exported; the case file's record)

from .envelope_records import (QUANTITIES, DesignSpeeds, Envelope,  # noqa: F401  (re-exported)
                               FlightPoint, GustPoint, LoadsEnvelope, VnDiagram)

LOAD_FACTOR_AXES = ("body", "flight-path")
"""The axes a load factor is defined on (TrimState.load_factor_axis)."""


# ---------------------------------------------------------------------------------- masses
@dataclass(frozen=True)
class PointLoad:
    """A concentrated force on the semi-span. position (3,) m, force (3,) N, wing frame."""

    name: str
    position: np.ndarray
    force: np.ndarray

    def __post_init__(self):
        set_field(self, "position", vector(f"point load {self.name!r} position", self.position, 3))
        set_field(self, "force", vector(f"point load {self.name!r} force", self.force, 3))


@dataclass(frozen=True)
class MassDistribution:
    """Mass on one semi-span. kg_per_m: (n,) total distributed mass per span at y (kg/m);
    x_m, z_m: (n,) its c.g. line (mass-weighted); parts: name -> (n,) kg/m of each item;
    lumped: PointMass items (tanks too narrow for the grid). Mirrored point masses are not
    included (see :func:`geomload.loads.masses.inertia_loads`)."""

    y: np.ndarray
    kg_per_m: np.ndarray
    x_m: np.ndarray
    z_m: np.ndarray
    parts: Mapping[str, np.ndarray] = field(default_factory=dict)
    lumped: tuple = ()

    def __post_init__(self):
        n = np.asarray(self.y).size
        for k in ("y", "kg_per_m", "x_m", "z_m"):
            set_field(self, k, vector(f"mass distribution {k}", getattr(self, k), n))
        set_field(self, "parts", MappingProxyType({k: vector(f"mass part {k!r}", v, n)
                                              for k, v in dict(self.parts).items()}))
        set_field(self, "lumped", tuple(self.lumped))
        if not all(isinstance(p, PointMass) for p in self.lumped):
            raise InputError("mass distribution: lumped items must be PointMass records")

    @property
    def semispan_mass_kg(self) -> float:
        """Distributed plus lumped mass on this semi-span (kg)."""
        y, m = self.y, self.kg_per_m
        return float(np.sum(0.5 * (m[1:] + m[:-1]) * np.diff(y))) + sum(p.mass for p in self.lumped)


# ------------------------------------------------------------------------------- the grid
@dataclass(frozen=True)
class LoadGrid:
    """The spanwise points loads are integrated on, one semi-span root to tip (m).

    y (n,) strictly increasing; le, te (n, 3) leading/trailing-edge points; chord (n,);
    spar_x, spar_z (n,) the load (spar) axis; load_x, load_z (n,) the line lift and drag act on
    (the quarter chord). output_rows (n,) bool: the rows every loads table reports (all, or the
    structure's own rib stations; both sides of a point-load step at a rib).
    """

    y: np.ndarray
    le: np.ndarray
    te: np.ndarray
    chord: np.ndarray
    spar_x: np.ndarray
    spar_z: np.ndarray
    load_x: np.ndarray
    load_z: np.ndarray
    output_rows: Optional[np.ndarray] = None

    def __post_init__(self):
        y = vector("load grid y", self.y, np.asarray(self.y).size)
        if y.size < 2 or np.any(np.diff(y) <= 0):
            raise InputError("load grid: y must hold >= 2 stations increasing root to tip")
        n = y.size
        set_field(self, "y", y)
        for k in ("le", "te"):
            set_field(self, k, vector(f"load grid {k}", getattr(self, k), n, width=3))
        for k in ("chord", "spar_x", "spar_z", "load_x", "load_z"):
            set_field(self, k, vector(f"load grid {k}", getattr(self, k), n))
        rows = np.ones(n, bool) if self.output_rows is None else np.asarray(self.output_rows, bool)
        if rows.shape != (n,) or not rows.any():
            raise InputError("load grid: output_rows must be (n,) booleans, at least one True")
        set_field(self, "output_rows", rows)

    @property
    def n(self) -> int:
        return int(self.y.size)


@dataclass(frozen=True)
class AppliedLoads:
    """One case's loads on a LoadGrid (limit, one semi-span, wing frame).

    lift_N_per_m normal to the free stream, drag_N_per_m along it (at alpha_deg); side_N_per_m
    along +y; pitch_Nm_per_m about the load line (nose-up); load_x_m, load_z_m (n,) the line lift
    and drag act on; inertia_N_per_m n g m'(y) along
    (sin b, 0, -cos b), b = inertia_alpha_deg, acting on the line (inertia_x_m, inertia_z_m);
    point_loads: PointLoad forces (N).
    """

    lift_N_per_m: np.ndarray
    drag_N_per_m: np.ndarray
    side_N_per_m: np.ndarray
    pitch_Nm_per_m: np.ndarray
    load_x_m: np.ndarray
    load_z_m: np.ndarray
    inertia_N_per_m: np.ndarray
    inertia_x_m: np.ndarray
    inertia_z_m: np.ndarray
    point_loads: tuple = ()
    alpha_deg: float = 0.0
    inertia_alpha_deg: float = 0.0

    def __post_init__(self):
        n = np.asarray(self.lift_N_per_m).size
        fields(self, "applied loads", ("lift_N_per_m", "drag_N_per_m", "side_N_per_m",
                                       "pitch_Nm_per_m", "load_x_m", "load_z_m",
                                       "inertia_N_per_m", "inertia_x_m", "inertia_z_m"), n)
        set_field(self, "point_loads", tuple(self.point_loads))
        if not all(isinstance(p, PointLoad) for p in self.point_loads):
            raise InputError("applied loads: point_loads must be PointLoad records")


@dataclass(frozen=True)
class TrimState:
    """How a case was trimmed: CL_required (wing lift coefficient), q_pa (Pa), load_factor_axis
    ("body" or "flight-path"), force_required_N (the wing's share of n W), lift_total_N (both
    sides), mach_lattice (the Mach the lattice was solved at)."""

    CL_required: float
    q_pa: float
    load_factor_axis: str
    force_required_N: float
    lift_total_N: float
    mach_lattice: float

    def __post_init__(self):
        if self.load_factor_axis not in LOAD_FACTOR_AXES:
            raise InputError(f"trim state: load_factor_axis must be one of {LOAD_FACTOR_AXES}, "
                             f"got {self.load_factor_axis!r}")


@dataclass(frozen=True)
class Equilibrium:
    """Root equilibrium check of a beam integration: the summed vertical force (N) and first
    moment about x (N m), and the relative residuals of the force and moment vectors."""

    total_vertical_N: float
    first_moment_Nm: float
    shear_residual_rel: float
    bending_residual_rel: float

    @property
    def residual(self) -> float:
        return max(self.shear_residual_rel, self.bending_residual_rel)

    def __getitem__(self, key):  # the earlier dict form: equilibrium["shear_residual_rel"]
        return getattr(self, key)


# ------------------------------------------------------------------------------ span loads
@dataclass(frozen=True)
class SpanLoads:
    """Loads along one semi-span for one flight case, limit values, root to tip (wing frame).

    y: (n,) stations (m); lift_N_per_m, drag_N_per_m, pitch_Nm_per_m (about the spar axis,
    nose-up positive); inertia_N_per_m (downward weight relief n*g*m'(y), positive down);
    shear_N, bending_Nm, torsion_Nm (out-of-plane, local spar frame; signs: shear positive up,
    bending positive tip-up, torsion nose-up); inplane_shear_N, inplane_bending_Nm (chordwise);
    schrenk_lift_N_per_m: Schrenk distribution of the same total lift (cross-check, may be NaN).
    ultimate_factor: multiply limit values by it for ultimate loads.
    Beam detail (None when not computed): force_N, moment_Nm (n, 3) outboard resultant about the
    spar point; axis_s, axis_b, axis_n (n, 3) local spar frame; spar_points_m (n, 3).
    applied: the AppliedLoads integrated; trim: TrimState; equilibrium: Equilibrium;
    chord_m (n,); output_rows (n,) bool: the rows tables report (None = all).
    """

    case: str
    y: np.ndarray
    lift_N_per_m: np.ndarray
    drag_N_per_m: np.ndarray
    pitch_Nm_per_m: np.ndarray
    inertia_N_per_m: np.ndarray
    shear_N: np.ndarray
    bending_Nm: np.ndarray
    torsion_Nm: np.ndarray
    inplane_shear_N: np.ndarray
    inplane_bending_Nm: np.ndarray
    schrenk_lift_N_per_m: np.ndarray
    ultimate_factor: float = 1.5
    force_N: Optional[np.ndarray] = None
    moment_Nm: Optional[np.ndarray] = None
    axis_s: Optional[np.ndarray] = None
    axis_b: Optional[np.ndarray] = None
    axis_n: Optional[np.ndarray] = None
    spar_points_m: Optional[np.ndarray] = None
    applied: Optional[AppliedLoads] = None
    trim: Optional[TrimState] = None
    equilibrium: Optional[Equilibrium] = None
    chord_m: Optional[np.ndarray] = None
    output_rows: Optional[np.ndarray] = None

    def __post_init__(self):
        n = np.asarray(self.y).size
        who = f"span loads {self.case!r}"
        fields(self, who, ("y", "lift_N_per_m", "drag_N_per_m", "pitch_Nm_per_m",
                           "inertia_N_per_m") + QUANTITIES
               + (() if self.chord_m is None else ("chord_m",)), n)
        fields(self, who, ("schrenk_lift_N_per_m",), n, finite=False)
        fields(self, who, tuple(k for k in ("force_N", "moment_Nm", "axis_s", "axis_b",
                                            "axis_n", "spar_points_m")
                                if getattr(self, k) is not None), n, width=3)
        if self.output_rows is not None:
            rows = np.asarray(self.output_rows, bool)
            if rows.shape != (n,):
                raise InputError(f"span loads {self.case!r}: output_rows must be ({n},) booleans")
            set_field(self, "output_rows", rows)
        if not (math.isfinite(self.ultimate_factor) and self.ultimate_factor >= 1.0):
            raise InputError(f"span loads {self.case!r}: ultimate_factor must be >= 1")
        check_type(f"span loads {self.case!r} applied", self.applied, AppliedLoads, optional=True)
        check_type(f"span loads {self.case!r} trim", self.trim, TrimState, optional=True)
        check_type(f"span loads {self.case!r} equilibrium", self.equilibrium, Equilibrium,
                   optional=True)

    @property
    def rows(self) -> np.ndarray:
        """Boolean mask of the rows a table reports (every row unless ribs were given)."""
        return np.ones(self.y.size, bool) if self.output_rows is None else self.output_rows
