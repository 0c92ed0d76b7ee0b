"""Case-file sections without positions: [geometry], [aircraft], [wing_mass], [[load_case]],
[envelope] (table readers of :mod:`geomload.config.table`, results in SI)."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from geomload.units import ALTITUDE_UNITS, GUST_UNITS, SPEED_UNITS

from . import quantities as qty
from .schema import (CATEGORIES, MAX_ALTITUDE_M, AircraftSpec, FlightEnvelopeSpec, GeometrySpec,
                     LoadCase, WingMassSpec)
from .table import Table

LENGTH_UNITS = ALTITUDE_UNITS  # the units a case-file altitude may be given in (older unit keys)
MAX_STATIONS = 2000  # cuts on one semi-span: far beyond what a preliminary load needs


def _aircraft(t: Table) -> AircraftSpec:
    return AircraftSpec(t.positive("gross_mass", required=True), t.positive("section_cl_max"),
                        t.positive("section_cd0", 0.0, allow_zero=True))


def _altitude(t: Table, key: str, unit_key: str, default_unit="m"):
    unit = t.choice(unit_key, tuple(LENGTH_UNITS), default_unit)
    h = t.get(key, float, 0.0)
    h = h if key in t.text_units else h * LENGTH_UNITS[unit]
    if not 0.0 <= h <= MAX_ALTITUDE_M:
        t.fail(key, f"{h:.0f} m is outside 0..{MAX_ALTITUDE_M:.0f} m (the ISA range modelled)")
    return h


def _geometry(t: Table, base: Path) -> GeometrySpec:
    f = t.get("file", str, required=True)
    p = (base / f).resolve()
    if not p.is_file():
        t.fail("file", f"geometry file not found: {p}")
    n_stations = t.get("stations", int, 20)
    if not 3 <= n_stations <= MAX_STATIONS:
        t.fail("stations", f"need 3 to {MAX_STATIONS}, got {n_stations}")
    body = t.get("body", int)
    if body is not None and body < 1:
        t.fail("body", f"bodies are numbered from 1, got {body}")
    from .geometry_keys import axis_key

    return GeometrySpec(
        file=str(p),
        units=t.choice("units", ("m", "cm", "mm", "in", "ft"), fold=str),
        span_axis=axis_key(t, "span_axis"),
        up_axis=axis_key(t, "up_axis"),
        n_stations=n_stations,
        spacing=t.choice("spacing", ("cosine", "uniform"), "cosine"),
        body=body,
        side=t.choice("side", ("port", "starboard")),
    )


def _wing_mass(t: Table) -> WingMassSpec:
    dist = t.choice("distribution", ("chord", "table"), "chord")
    cg = t.fraction("cg_chord_fraction")
    if dist == "chord":
        t.used.add("table")
        if "table" in t.data:
            t.fail("table", 'given but distribution is not "table"')
        return WingMassSpec(t.positive("mass", required=True), "chord", cg_chord_fraction=cg)
    if "mass" in t.data:
        t.fail("mass", 'omit it with distribution = "table" (the table sets the mass)')
    t.used.add("mass")
    arr = _mass_table(t)
    if np.any(np.diff(arr[:, 0]) <= 0) or arr[0, 0] < 0:
        t.fail("table", "y must start at >= 0 and increase strictly")
    if np.any(arr[:, 1] < 0) or not np.any(arr[:, 1] > 0):
        t.fail("table", "the mass per span must be >= 0 and not all zero")
    half = float(np.sum(0.5 * (arr[1:, 1] + arr[:-1, 1]) * np.diff(arr[:, 0])))
    return WingMassSpec(2.0 * half, "table", tuple(arr[:, 0]), tuple(arr[:, 1]), cg)


def _mass_table(t: Table) -> np.ndarray:
    """(n, 2) array of the [wing_mass] table rows [y, mass per span] in m and kg/m: each a
    number (m, kg/m) or a text with its unit ("300 mm", "0.4 lb/ft")."""
    rows = t.get("table", list, required=True)
    if len(rows) < 2 or not all(isinstance(r, list) and len(r) == 2 for r in rows):
        t.fail("table", "must be a list of at least two [y, kg_per_m] pairs (wing-frame y in m "
                        "or with its unit, mass per span in kg/m or with its unit)")
    out = []
    for i, (y, m) in enumerate(rows):
        try:
            out.append((qty.number_or_quantity(y, "length")[0],
                        qty.number_or_quantity(m, "mass per length")[0]))
        except ValueError as exc:
            t.fail("table", f"row {i + 1}: {exc}")
    return np.array(out, float)


def _load_case(t: Table, i: int, gross: float, gross_key="aircraft.gross_mass") -> LoadCase:
    name = t.get("name", str, required=True)
    unit = t.choice("speed_unit", tuple(SPEED_UNITS), "m/s")
    v = t.positive("speed", required=True)
    v = v if "speed" in t.text_units else v * SPEED_UNITS[unit]
    kind = t.choice("speed_type", ("EAS", "TAS"), "EAS", fold=str.upper)
    h = _altitude(t, "altitude", "altitude_unit")
    lc = LoadCase(
        name=name, speed_m_s=v, speed_type=kind, altitude_m=h,
        load_factor=t.get("load_factor", float, required=True),
        lift_share=t.positive("lift_share", 1.0, allow_zero=True),
        mass_kg=t.positive("mass"),
        cl_max=t.positive("section_cl_max"),
        cd0=t.positive("section_cd0", allow_zero=True),
        fuel_fraction=t.fraction("fuel_fraction", 1.0),
    )
    if lc.mass_kg is not None and lc.mass_kg > gross:
        t.fail("mass", f"{lc.mass_kg:g} kg is above {gross_key} ({gross:g} kg)")
    return lc


def _envelope(t: Table, gross: float, gross_key="aircraft.gross_mass") -> FlightEnvelopeSpec:
    cat = t.choice("category", CATEGORIES, required=True)
    su = t.choice("speed_unit", tuple(SPEED_UNITS), "m/s")
    speeds = {k: t.positive(k) for k in ("v_cruise", "v_dive", "v_maneuver")}
    speeds = {k: None if v is None else v if k in t.text_units else v * SPEED_UNITS[su]
              for k, v in speeds.items()}
    gu = t.choice("gust_unit", tuple(GUST_UNITS), "m/s")
    gusts = {k: t.positive(k) for k in ("gust_cruise", "gust_dive")}
    au = t.choice("altitude_unit", tuple(LENGTH_UNITS), "m")
    alts = t.get("altitudes", list, [0.0])
    if alts and all(isinstance(a, str) for a in alts):
        try:
            alts = tuple(qty.parse_quantity(a, "altitude") for a in alts)
        except ValueError as exc:
            t.fail("altitudes", str(exc))
        if "altitude_unit" in t.data:
            t.fail("altitude_unit", "the altitudes already carry their unit; drop altitude_unit")
    elif not alts or not all(isinstance(a, (int, float)) and not isinstance(a, bool) for a in alts):
        t.fail("altitudes", 'must be a non-empty list of numbers, or of texts such as "1500 ft"')
    else:
        alts = tuple(float(a) * LENGTH_UNITS[au] for a in alts)
    for a in alts:
        if not 0.0 <= a <= MAX_ALTITUDE_M:
            t.fail("altitudes", f"{a:.0f} m is outside 0..{MAX_ALTITUDE_M:.0f} m")
    n_pos, n_neg = t.get("n_pos", float), t.get("n_neg", float)
    n_neg_dive = t.get("n_neg_dive", float)
    if n_neg_dive is not None and cat != "custom":
        t.fail("n_neg_dive", f"only for category 'custom' (the {cat} rule sets it, 23.333(b)(3))")
    if n_neg_dive is not None and (n_neg_dive > 0.0 or (n_neg is not None and n_neg_dive < n_neg)):
        t.fail("n_neg_dive", f"must lie between n_neg and 0, got {n_neg_dive:g}")
    if cat == "custom":
        if n_pos is None or n_pos <= 1.0:
            t.fail("n_pos", "required for category 'custom' and must be > 1")
        if n_neg is None or n_neg >= 0.0:
            t.fail("n_neg", "required for category 'custom' and must be < 0")
        for k in ("v_cruise", "v_dive"):
            if speeds[k] is None:
                t.fail(k, "required for category 'custom' (no rule minimum applies)")
    else:
        for k in ("n_pos", "n_neg"):
            if k in t.data:
                t.fail(k, f"only for category 'custom' (the {cat} rule sets it)")
    spec = FlightEnvelopeSpec(
        category=cat,
        cl_max_pos=t.positive("wing_cn_max_pos", required=True),
        cl_max_neg=t.positive("wing_cn_max_neg", required=True),
        n_pos=n_pos, n_neg=n_neg, n_neg_dive=n_neg_dive, altitudes_m=alts,
        min_mass_kg=t.positive("min_mass"),
        gust_cruise_m_s=None if gusts["gust_cruise"] is None else gusts["gust_cruise"] * (
            1.0 if "gust_cruise" in t.text_units else GUST_UNITS[gu]),
        gust_dive_m_s=None if gusts["gust_dive"] is None else gusts["gust_dive"] * (
            1.0 if "gust_dive" in t.text_units else GUST_UNITS[gu]),
        lift_share=t.positive("lift_share", 1.0, allow_zero=True),
        **speeds,
    )
    if spec.min_mass_kg is not None and spec.min_mass_kg > gross:
        t.fail("min_mass", f"{spec.min_mass_kg:g} kg is above {gross_key} "
                           f"({gross:g} kg)")
    va, vc, vd = spec.v_maneuver, spec.v_cruise, spec.v_dive
    if va is not None and vd is not None and va > vd:
        t.fail("v_maneuver", "speeds out of order: v_maneuver is above v_dive")
    if vc is not None and vd is not None and vc >= vd:
        t.fail("v_cruise", "speeds out of order: v_cruise must be below v_dive")
    return spec


