"""The loads stage's records of the two envelopes: the flight envelope (the V-n diagram's design
speeds, gust values, diagram and the points run as load cases) and the envelope of loads (the
station-wise extremes over the cases).

Frozen dataclasses, SI units (speeds EAS m/s, masses kg, altitudes m); each checks its arrays
when built and is never changed after.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType
from typing import Mapping, Optional

import numpy as np

from geomload.errors import InputError
from geomload.record_checks import check_items, check_type, set_field, vector

QUANTITIES = ("shear_N", "bending_Nm", "torsion_Nm", "inplane_shear_N", "inplane_bending_Nm")
"""The section results an envelope is taken over (SpanLoads field names)."""


# ---------------------------------------------------------------------- flight envelope
@dataclass(frozen=True)
class FlightPoint:
    """A point of the V-n diagram run as a load case: v_eas (m/s), altitude (m), n, mass (kg).
    label: the point's kind ("pos-limit-dive", ...); name adds mass and altitude."""

    name: str
    v_eas: float
    altitude: float
    n: float
    mass: float
    label: str = ""
    fuel_fraction: float = 1.0

    def __post_init__(self):
        for k in ("v_eas", "altitude", "n", "mass", "fuel_fraction"):
            set_field(self, k, float(getattr(self, k)))
            if not math.isfinite(getattr(self, k)):
                raise InputError(f"flight point {self.name!r}: {k} must be finite")
        if self.v_eas <= 0 or self.mass <= 0 or not 0.0 <= self.fuel_fraction <= 1.0:
            raise InputError(f"flight point {self.name!r}: needs v_eas > 0, mass > 0 and "
                             "0 <= fuel_fraction <= 1")


@dataclass(frozen=True)
class DesignSpeeds:
    """Design speeds, EAS m/s: cruise, dive, maneuver; the rule minimums (None for custom)."""

    v_cruise: float
    v_dive: float
    v_maneuver: float
    v_cruise_min: Optional[float]
    v_dive_min: Optional[float]
    notes: tuple = ()

    def __post_init__(self):
        set_field(self, "notes", tuple(self.notes))


@dataclass(frozen=True)
class GustPoint:
    """Gust values at one speed (23.341): alleviation factor Kg, mass ratio mu, the wing lift
    slope used (per rad), and the load factors of an up and a down gust."""

    kg: float
    mu: float
    lift_slope_per_rad: float
    n_up: float
    n_down: float

    def __iter__(self):  # the earlier tuple form (Kg, mu, a, n up, n down)
        return iter((self.kg, self.mu, self.lift_slope_per_rad, self.n_up, self.n_down))

    def __getitem__(self, i):
        return tuple(self)[i]


@dataclass(frozen=True)
class VnDiagram:
    """V-n diagram at one mass and altitude. Speeds EAS m/s. curves: name -> (v, n) arrays for
    plotting ("stall-pos", "stall-neg", "maneuver" closed outline, "gust-up", "gust-down").
    corners: FlightPoint per critical point; gust_cruise, gust_dive: GustPoint."""

    category: str
    mass_kg: float
    altitude_m: float
    n_pos: float
    n_neg: float
    n_neg_dive: float
    v_stall_pos: float
    v_stall_neg: float
    speeds: DesignSpeeds
    gust_cruise: GustPoint
    gust_dive: GustPoint
    curves: Mapping[str, tuple]
    corners: tuple
    notes: tuple = ()

    def __post_init__(self):
        check_type("V-n diagram speeds", self.speeds, DesignSpeeds)
        check_type("V-n diagram gust_cruise", self.gust_cruise, GustPoint)
        check_type("V-n diagram gust_dive", self.gust_dive, GustPoint)
        set_field(self, "corners", check_items("V-n diagram corners", self.corners, FlightPoint))
        set_field(self, "curves", MappingProxyType({k: tuple(v) for k, v in
                                                    dict(self.curves).items()}))
        set_field(self, "notes", tuple(self.notes))

    @property
    def title(self) -> str:
        """'22 kg at 0 m': the flying mass and altitude of the diagram."""
        return f"{self.mass_kg:g} kg at {self.altitude_m:g} m"


# ----------------------------------------------------------------------- loads envelope
@dataclass(frozen=True)
class LoadsEnvelope:
    """Station-wise extremes over the cases (the envelope of loads, not the flight envelope).

    For each quantity of QUANTITIES: maximum/minimum (limit), max_case/min_case (governing case
    names), ultimate_max/ultimate_min (each case's ultimate_factor x limit) with
    ultimate_max_case/ultimate_min_case. output_rows: (n,) bool, the rows tables report.
    """

    y: np.ndarray
    cases: tuple
    maximum: Mapping[str, np.ndarray]
    minimum: Mapping[str, np.ndarray]
    max_case: Mapping[str, tuple]
    min_case: Mapping[str, tuple]
    ultimate_max: Mapping[str, np.ndarray]
    ultimate_min: Mapping[str, np.ndarray]
    ultimate_max_case: Mapping[str, tuple]
    ultimate_min_case: Mapping[str, tuple]
    output_rows: Optional[np.ndarray] = None

    def __post_init__(self):
        n = np.asarray(self.y).size
        for k in ("maximum", "minimum", "ultimate_max", "ultimate_min"):
            d = dict(getattr(self, k))
            if set(d) != set(QUANTITIES):
                raise InputError(f"loads envelope {k}: needs every quantity {QUANTITIES}")
            set_field(self, k, MappingProxyType({q: vector(f"loads envelope {k} {q}", v, n)
                                            for q, v in d.items()}))
        for k in ("max_case", "min_case", "ultimate_max_case", "ultimate_min_case"):
            d = {q: tuple(v) for q, v in dict(getattr(self, k)).items()}
            if set(d) != set(QUANTITIES) or any(len(v) != n for v in d.values()):
                raise InputError(f"loads envelope {k}: needs {n} case names per quantity")
            set_field(self, k, MappingProxyType(d))
        set_field(self, "cases", tuple(self.cases))
        if self.output_rows is not None:
            rows = np.asarray(self.output_rows, bool)
            if rows.shape != (n,) or not rows.any():
                raise InputError(f"loads envelope: output_rows must be ({n},) booleans, "
                                 "at least one True")
            set_field(self, "output_rows", rows)

    @property
    def rows(self) -> np.ndarray:
        return np.ones(self.y.size, bool) if self.output_rows is None else self.output_rows

    def columns(self) -> dict:
        """Ordered columns for a table: y_m, then <q>_max_<unit>, <q>_max_case, <q>_min_...,
        and the ultimate pairs (e.g. bending_max_Nm, bending_max_ult_Nm), as in envelope.csv."""
        out = {"y_m": self.y}
        for q in QUANTITIES:
            base, unit = q.rsplit("_", 1)
            out[f"{base}_max_{unit}"] = self.maximum[q]
            out[f"{base}_max_case"] = list(self.max_case[q])
            out[f"{base}_min_{unit}"] = self.minimum[q]
            out[f"{base}_min_case"] = list(self.min_case[q])
            out[f"{base}_max_ult_{unit}"] = self.ultimate_max[q]
            out[f"{base}_min_ult_{unit}"] = self.ultimate_min[q]
        return out


Envelope = LoadsEnvelope  # the earlier name
