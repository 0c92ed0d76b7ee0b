"""The TOML case file: schema, unit conversion at the edge, validation with key-named errors.

Everything returned is SI (m, kg, m/s, N): knots and feet are converted here, and nothing past
this module sees a file unit. Masses follow one rule (see docs/methods_loads.md):

* ``[wing_mass] total_kg`` and ``[[fuel_tank]] mass_kg`` are for the whole wing (both sides);
  each semi-span carries half.
* ``[[point_mass]] mass_kg`` is one item on the starboard side (y > 0); an identical item is
  mirrored to port, so each semi-span carries the full value.

Every problem raises :class:`geomload.errors.CaseError` with one line naming the file and key.
"""

from __future__ import annotations

import difflib
import math
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Callable, Optional

import numpy as np

from .errors import CaseError
from .records import PointMass

KNOT = 1852.0 / 3600.0  # m/s, exact by definition of the international knot
FOOT = 0.3048  # m, exact
MAX_ALTITUDE_M = 20000.0  # top of the ISA layers geomload models
CATEGORIES = ("normal", "utility", "acrobatic", "custom")
SPEED_UNITS = {"m/s": 1.0, "kt": KNOT}
LENGTH_UNITS = {"m": 1.0, "ft": FOOT}
GUST_UNITS = {"m/s": 1.0, "ft/s": FOOT}
TOP_LEVEL_KEYS = ("title", "geometry", "aircraft", "wing_mass", "point_mass", "fuel_tank", "spar",
                  "moment_reference", "load_case", "envelope", "lattice", "analysis")


# ------------------------------------------------------------------------------------ records
@dataclass(frozen=True)
class GeometrySpec:
    """Where the CAD wing is and how to read it (file is an absolute path)."""

    file: str
    units: Optional[str] = None
    span_axis: Optional[str] = None
    up_axis: Optional[str] = None
    n_stations: int = 20
    spacing: str = "cosine"
    body: Optional[int] = None  # 1-based body number in a multi-body file


@dataclass(frozen=True)
class AircraftSpec:
    """gross_mass_kg: design maximum take-off mass; cl_max: clean wing CLmax for the stall
    warning (None = no warning); cd0: section profile-drag coefficient added to induced drag."""

    gross_mass_kg: float
    cl_max: Optional[float] = None
    cd0: float = 0.0


@dataclass(frozen=True)
class WingMassSpec:
    """Wing structural mass, both sides (kg). distribution "chord": m'(y) proportional to chord;
    "table": per-side kg/m at table_y_m (linear between points). cg_chord_fraction: chordwise
    c.g. of the structure as a fraction of chord (None = on the spar axis)."""

    total_kg: float
    distribution: str = "chord"
    table_y_m: tuple = ()
    table_kg_per_m: tuple = ()
    cg_chord_fraction: Optional[float] = None


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


@dataclass(frozen=True)
class SparSpec:
    """Load axis: a chord fraction of every station, or a polyline ((y, x, z), ...) in metres."""

    chord_fraction: Optional[float] = 0.25
    line: tuple = ()


@dataclass(frozen=True)
class LoadCase:
    """One flight case. speed_m_s is of kind speed_type ("EAS" or "TAS"); mass_kg None = gross;
    cl_max / cd0 None = the [aircraft] values; fuel_fraction scales every fuel tank."""

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


@dataclass(frozen=True)
class EnvelopeSpec:
    """The [envelope] table in SI. Speeds are EAS (m/s); None = derived from the rule minimums.
    n_neg is negative. cl_max_neg is the magnitude of the negative CLmax. Gusts None = rule."""

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
    n_neg_dive: Optional[float] = None  # custom only: negative limit at V_D (default 0)


@dataclass(frozen=True)
class LatticeSpec:
    n_span: int = 40
    n_chord: int = 10
    spacing: str = "cosine"


@dataclass(frozen=True)
class Case:
    """A whole case file, validated, SI. path: absolute path of the case file."""

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
    envelope: Optional[EnvelopeSpec]
    lattice: LatticeSpec
    ultimate_factor: float = 1.5
    load_factor_axis: str = "body"  # "body": n = N / W, N normal to the longitudinal axis
    # (14 CFR 23.321(a)); "flight-path": n = L / W, inertia opposite the lift

    @property
    def fuel_mass_kg(self) -> float:
        """Total fuel of all tanks, both sides (kg)."""
        return float(sum(t.mass_kg for t in self.fuel_tanks))


# --------------------------------------------------------------------------- table reader
class _Table:
    """Reads keys of one TOML table, remembering which were used, so leftovers are reported."""

    def __init__(self, data, where: str, path: str):
        self.path, self.where = path, where
        if not isinstance(data, dict):
            self.fail("", f"must be a table, got {type(data).__name__}")
        self.data, self.used = data, set()

    def key(self, k: str) -> str:
        return f"{self.where}.{k}" if self.where and k else (self.where or k)

    def fail(self, k: str, msg: str):
        raise CaseError(f"{self.path}: {self.key(k)}: {msg}")

    def get(self, k, kind, default=None, required=False):
        self.used.add(k)
        if k not in self.data:
            if required:  # a misspelling of the missing key is the likelier mistake
                close = difflib.get_close_matches(k, [d for d in self.data if d not in self.used], n=1)
                if close:
                    self.fail(close[0], f"unknown key (did you mean {k!r}?)")
                self.fail(k, "missing (required)")
            return default
        v = self.data[k]
        if kind is float:
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                self.fail(k, f"must be a number, got {v!r}")
            return float(v)
        if kind is int:
            if isinstance(v, bool) or not isinstance(v, int):
                self.fail(k, f"must be an integer, got {v!r}")
            return v
        if not isinstance(v, kind):
            self.fail(k, f"must be of type {kind.__name__}, got {v!r}")
        return v

    def positive(self, k, default=None, required=False, allow_zero=False):
        v = self.get(k, float, default, required)
        if v is not None and (v < 0 or (v == 0 and not allow_zero)):
            self.fail(k, f"must be {'>= 0' if allow_zero else '> 0'}, got {v:g}")
        return v

    def choice(self, k, options, default=None, required=False, fold=str.lower):
        v = self.get(k, str, default, required)
        if v is not None and fold(v) not in options:
            self.fail(k, f"{v!r} is not one of {', '.join(repr(o) for o in options)}")
        return None if v is None else fold(v)

    def fraction(self, k, default=None):
        v = self.get(k, float, default)
        if v is not None and not 0.0 <= v <= 1.0:
            self.fail(k, f"must be between 0 and 1, got {v:g}")
        return v

    def done(self):
        extra = [k for k in self.data if k not in self.used]
        if extra:
            k = extra[0]
            close = difflib.get_close_matches(k, sorted(self.used), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            self.fail(k, f"unknown key{hint}")


def _altitude(t: _Table, key: str, unit_key: str, default_unit="m"):
    unit = t.choice(unit_key, tuple(LENGTH_UNITS), default_unit)
    h = t.get(key, float, 0.0) * LENGTH_UNITS[unit]
    if not 0.0 <= h <= MAX_ALTITUDE_M:
        t.fail(key, f"{h:.0f} m is outside 0..{MAX_ALTITUDE_M:.0f} m (the ISA range modelled)")
    return h


# ------------------------------------------------------------------------------- sections
def _geometry(t: _Table, base: Path) -> GeometrySpec:
    f = t.get("file", str, required=True)
    p = (base / f).resolve()
    if not p.is_file():
        t.fail("file", f"geometry file not found: {p}")
    g = GeometrySpec(
        file=str(p),
        units=t.get("units", str),
        span_axis=t.get("span_axis", str),
        up_axis=t.get("up_axis", str),
        n_stations=t.get("stations", int, 20),
        spacing=t.choice("spacing", ("cosine", "uniform"), "cosine"),
        body=t.get("body", int),
    )
    if g.n_stations < 3:
        t.fail("stations", f"need at least 3, got {g.n_stations}")
    if g.body is not None and g.body < 1:
        t.fail("body", f"bodies are numbered from 1, got {g.body}")
    return g


def _wing_mass(t: _Table) -> WingMassSpec:
    dist = t.choice("distribution", ("chord", "table"), "chord")
    cg = t.fraction("cg_chord_fraction")
    if dist == "chord":
        t.used.add("table")
        if "table" in t.data:
            t.fail("table", 'given but distribution is not "table"')
        return WingMassSpec(t.positive("total_kg", required=True), "chord", cg_chord_fraction=cg)
    if "total_kg" in t.data:
        t.fail("total_kg", 'omit it with distribution = "table" (the table sets the mass)')
    t.used.add("total_kg")
    rows = t.get("table", list, required=True)
    try:
        arr = np.array(rows, dtype=float)
    except (TypeError, ValueError):
        t.fail("table", "must be a list of [y_m, kg_per_m] pairs")
    if arr.ndim != 2 or arr.shape[1] != 2 or arr.shape[0] < 2:
        t.fail("table", "must be a list of at least two [y_m, kg_per_m] pairs")
    if np.any(np.diff(arr[:, 0]) <= 0) or arr[0, 0] < 0:
        t.fail("table", "y_m must start at >= 0 and increase strictly")
    if np.any(arr[:, 1] < 0) or not np.any(arr[:, 1] > 0):
        t.fail("table", "kg_per_m must be >= 0 and not all zero")
    half = float(np.sum(0.5 * (arr[1:, 1] + arr[:-1, 1]) * np.diff(arr[:, 0])))
    return WingMassSpec(2.0 * half, "table", tuple(arr[:, 0]), tuple(arr[:, 1]), cg)


def _point_mass(t: _Table, i: int) -> PointMass:
    name = t.get("name", str, f"point_mass_{i + 1}")
    m = t.positive("mass_kg", required=True)
    y = t.get("y_m", float, required=True)
    if y <= 0:
        t.fail("y_m", f"must be > 0 (starboard side; the item is mirrored to port), got {y:g}")
    pos = np.array([t.get("x_m", float, required=True), y, t.get("z_m", float, 0.0)])
    return PointMass(name, m, pos)


def _fuel_tank(t: _Table, i: int) -> FuelTank:
    tank = FuelTank(
        name=t.get("name", str, f"fuel_tank_{i + 1}"),
        mass_kg=t.positive("mass_kg", required=True),
        y_from_m=t.positive("y_from_m", required=True, allow_zero=True),
        y_to_m=t.positive("y_to_m", required=True),
        distribution=t.choice("distribution", ("uniform", "chord"), "uniform"),
        cg_chord_fraction=t.fraction("cg_chord_fraction"),
    )
    if tank.y_to_m <= tank.y_from_m:
        t.fail("y_to_m", f"must be greater than y_from_m ({tank.y_from_m:g} m)")
    return tank


def _spar(t: _Table) -> SparSpec:
    line = t.get("line", list)
    if line is None:
        return SparSpec(t.fraction("chord_fraction", 0.25))
    t.used.add("chord_fraction")
    if "chord_fraction" in t.data:
        t.fail("chord_fraction", "give either chord_fraction or line, not both")
    try:
        arr = np.array(line, dtype=float)
    except (TypeError, ValueError):
        t.fail("line", "must be a list of [y_m, x_m, z_m] points")
    if arr.ndim != 2 or arr.shape[1] != 3 or arr.shape[0] < 2 or np.any(np.diff(arr[:, 0]) <= 0):
        t.fail("line", "must be at least two [y_m, x_m, z_m] points with y increasing")
    return SparSpec(None, tuple(map(tuple, arr)))


def _load_case(t: _Table, i: int, gross: float) -> LoadCase:
    name = t.get("name", str, required=True)
    unit = t.choice("speed_unit", tuple(SPEED_UNITS), "m/s")
    v = t.positive("speed", required=True) * SPEED_UNITS[unit]
    kind = t.choice("speed_type", ("EAS", "TAS"), "EAS", fold=str.upper)
    h = _altitude(t, "altitude", "altitude_unit")
    lc = LoadCase(
        name=name, speed_m_s=v, speed_type=kind, altitude_m=h,
        load_factor=t.get("load_factor", float, required=True),
        lift_share=t.positive("lift_share", 1.0, allow_zero=True),
        mass_kg=t.positive("mass_kg"),
        cl_max=t.positive("cl_max"),
        cd0=t.positive("cd0", allow_zero=True),
        fuel_fraction=t.fraction("fuel_fraction", 1.0),
    )
    if lc.mass_kg is not None and lc.mass_kg > gross:
        t.fail("mass_kg", f"{lc.mass_kg:g} kg is above aircraft.gross_mass_kg ({gross:g} kg)")
    return lc


def _envelope(t: _Table, gross: float) -> EnvelopeSpec:
    cat = t.choice("category", CATEGORIES, required=True)
    su = t.choice("speed_unit", tuple(SPEED_UNITS), "m/s")
    speeds = {k: t.positive(k) for k in ("v_cruise", "v_dive", "v_maneuver")}
    speeds = {k: None if v is None else v * SPEED_UNITS[su] for k, v in speeds.items()}
    gu = t.choice("gust_unit", tuple(GUST_UNITS), "m/s")
    gusts = {k: t.positive(k) for k in ("gust_cruise", "gust_dive")}
    au = t.choice("altitude_unit", tuple(LENGTH_UNITS), "m")
    alts = t.get("altitudes", list, [0.0])
    if not alts or not all(isinstance(a, (int, float)) and not isinstance(a, bool) for a in alts):
        t.fail("altitudes", "must be a non-empty list of numbers")
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
    spec = EnvelopeSpec(
        category=cat,
        cl_max_pos=t.positive("cl_max_pos", required=True),
        cl_max_neg=t.positive("cl_max_neg", required=True),
        n_pos=n_pos, n_neg=n_neg, n_neg_dive=n_neg_dive, altitudes_m=alts,
        min_mass_kg=t.positive("min_mass_kg"),
        gust_cruise_m_s=None if gusts["gust_cruise"] is None else gusts["gust_cruise"] * GUST_UNITS[gu],
        gust_dive_m_s=None if gusts["gust_dive"] is None else gusts["gust_dive"] * GUST_UNITS[gu],
        lift_share=t.positive("lift_share", 1.0, allow_zero=True),
        **speeds,
    )
    if spec.min_mass_kg is not None and spec.min_mass_kg > gross:
        t.fail("min_mass_kg", f"{spec.min_mass_kg:g} kg is above aircraft.gross_mass_kg ({gross:g} kg)")
    va, vc, vd = spec.v_maneuver, spec.v_cruise, spec.v_dive
    if va is not None and vd is not None and va > vd:
        t.fail("v_maneuver", "speeds out of order: v_maneuver is above v_dive")
    if vc is not None and vd is not None and vc >= vd:
        t.fail("v_cruise", "speeds out of order: v_cruise must be below v_dive")
    return spec


# ----------------------------------------------------------------------------------- entry
def _parse(path: str) -> dict:
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise CaseError(f"{path}: cannot read case file ({exc.__class__.__name__}: {exc})") from None
    if not text.strip():
        raise CaseError(f"{path}: case file is empty (start from `geomload new-case GEOMETRY`)")
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CaseError(f"{path}: invalid TOML: {exc}") from None


def load_case(path) -> Case:
    """Read and validate a case file; return a :class:`Case` in SI units.

    Paths inside are relative to the case file. Raises CaseError (one line, file and key).
    """
    path = str(path)
    raw = _parse(path)
    top = _Table(raw, "", path)
    top.used.update(TOP_LEVEL_KEYS)
    top.done()  # an unknown (misspelt) table is reported before anything it might hide

    def sub(k: str, required: bool = False) -> _Table:
        return _Table(top.get(k, dict, None, required) or {}, k, path)

    title = top.get("title", str, Path(path).stem)
    base = Path(path).resolve().parent

    t = sub("geometry", True); geometry = _geometry(t, base); t.done()  # noqa: E702
    t = sub("aircraft", True)
    aircraft = AircraftSpec(t.positive("gross_mass_kg", required=True), t.positive("cl_max"),
                            t.positive("cd0", 0.0, allow_zero=True))
    t.done()
    wing_mass = None
    if "wing_mass" in raw:
        t = sub("wing_mass"); wing_mass = _wing_mass(t); t.done()  # noqa: E702
    points, tanks, cases = [], [], []
    for key, reader, out in (("point_mass", _point_mass, points), ("fuel_tank", _fuel_tank, tanks)):
        for i, item in enumerate(top.get(key, list, [])):
            t = _Table(item, f"{key}[{i + 1}]", path)
            out.append(reader(t, i))
            t.done()
    t = sub("spar"); spar = _spar(t); t.done()  # noqa: E702
    ref = None
    if "moment_reference" in raw:
        t = sub("moment_reference")
        ref = np.array([t.get("x_m", float, required=True), t.get("y_m", float, 0.0),
                        t.get("z_m", float, 0.0)])
        t.done()
    for i, item in enumerate(top.get("load_case", list, [])):
        t = _Table(item, f"load_case[{i + 1}]", path)
        cases.append(_load_case(t, i, aircraft.gross_mass_kg))
        t.done()
    names = [c.name for c in cases]
    dup = next((n for n in names if names.count(n) > 1), None)
    if dup is not None:
        raise CaseError(f"{path}: load_case.name: {dup!r} is used twice")
    envelope = None
    if "envelope" in raw:
        t = sub("envelope"); envelope = _envelope(t, aircraft.gross_mass_kg); t.done()  # noqa: E702
    if not cases and envelope is None:
        raise CaseError(f"{path}: load_case: missing (give at least one [[load_case]] or an [envelope])")
    t = sub("lattice")
    lattice = LatticeSpec(t.get("n_span", int, 40), t.get("n_chord", int, 10),
                          t.choice("spacing", ("cosine", "uniform"), "cosine"))
    if lattice.n_span < 2 or lattice.n_chord < 1:
        t.fail("n_span", "need n_span >= 2 and n_chord >= 1")
    t.done()
    t = sub("analysis")
    uf = t.positive("ultimate_factor", 1.5)
    if uf < 1.0:
        t.fail("ultimate_factor", f"must be >= 1, got {uf:g}")
    nax = t.choice("load_factor_axis", ("body", "flight-path"), "body")
    t.done()
    top.done()
    carried = (wing_mass.total_kg if wing_mass else 0.0) + 2 * sum(p.mass for p in points) + sum(
        k.mass_kg for k in tanks)
    if carried > aircraft.gross_mass_kg:
        raise CaseError(f"{path}: aircraft.gross_mass_kg: {aircraft.gross_mass_kg:g} kg is less than "
                        f"the wing, point (x2, mirrored) and fuel masses ({carried:g} kg)")
    return Case(path=str(Path(path).resolve()), title=title, geometry=geometry, aircraft=aircraft,
                wing_mass=wing_mass, point_masses=tuple(points), fuel_tanks=tuple(tanks), spar=spar,
                moment_reference=ref, load_cases=tuple(cases), envelope=envelope, lattice=lattice,
                ultimate_factor=uf, load_factor_axis=nax)


def check_against_span(case: Case, semispan: float) -> None:
    """Raise CaseError when a spanwise position of the case lies beyond the semi-span (m)."""
    tol = 1e-9 * max(semispan, 1.0)
    for i, p in enumerate(case.point_masses):
        if p.position[1] > semispan + tol:
            raise CaseError(f"{case.path}: point_mass[{i + 1}].y_m: {p.position[1]:g} m is outside "
                            f"the span (semi-span {semispan:.4g} m)")
    for i, k in enumerate(case.fuel_tanks):
        if k.y_to_m > semispan + tol:
            raise CaseError(f"{case.path}: fuel_tank[{i + 1}].y_to_m: {k.y_to_m:g} m is outside "
                            f"the span (semi-span {semispan:.4g} m)")
    table_y = case.wing_mass.table_y_m if case.wing_mass is not None else ()
    if table_y and table_y[-1] > semispan + tol:
        raise CaseError(f"{case.path}: wing_mass.table: y {table_y[-1]:g} m is "
                        f"outside the span (semi-span {semispan:.4g} m)")


def default_atmosphere(h_m: float):
    """(density kg/m^3, speed of sound m/s) at h_m from geomload's ISA (imported lazily)."""
    from .aero.atmosphere import isa  # lazy: the loads stage sits above aero

    atm = isa(h_m)
    return float(atm.rho), float(atm.a)


def airspeeds(lc: LoadCase, atmosphere: Optional[Callable] = None) -> tuple:
    """(v_eas, v_tas) in m/s for a load case: v_tas = v_eas sqrt(rho0 / rho(h)).

    atmosphere: callable h_m -> (rho, a); default :func:`default_atmosphere` (ISA).
    """
    rho, _ = (atmosphere or default_atmosphere)(lc.altitude_m)
    from .aero.atmosphere import RHO0  # ISA sea level, p0 / (R T0)

    ratio = math.sqrt(RHO0 / rho)
    if lc.speed_type == "EAS":
        return lc.speed_m_s, lc.speed_m_s * ratio
    return lc.speed_m_s / ratio, lc.speed_m_s


# -------------------------------------------------------------------------------- template
def _toml_str(s: str) -> str:
    return '"' + s.replace("\\", "\\\\").replace('"', '\\"') + '"'


_TEMPLATE = """\
# geomload case file - fill in the values marked CHANGE, then run:  geomload run THIS.toml --out DIR
# Units are SI unless a *_unit key says otherwise. Masses: [wing_mass] and [[fuel_tank]] are for
# both sides together; a [[point_mass]] is one item on the starboard side, mirrored to port.
# Positions are in the wing frame: x aft along the root chord, y along the span (starboard
# positive, 0 at the root/symmetry plane), z up; metres.
title = "new wing"

[geometry]
file = {geometry}          # absolute, or relative to this case file
# units = "mm"             # file length unit when the file does not carry one: m, mm, cm, in, ft
# span_axis = "+y"         # CAD axis along the span (default: detected)
# up_axis = "+z"           # CAD axis pointing up (default: detected)
stations = 20              # spanwise cuts on one semi-span
spacing = "cosine"         # "cosine" (finer at root and tip) or "uniform"

[aircraft]
gross_mass_kg = 25.0       # CHANGE: design maximum take-off mass, whole aircraft
cl_max = 1.3               # section cl_max: the stall-onset estimate (first strip to reach it)
cd0 = 0.010                # section profile-drag coefficient added to the induced drag

[wing_mass]
total_kg = 3.0             # CHANGE: wing structure, both sides
distribution = "chord"     # "chord" (mass per span proportional to chord) or "table"
# table = [[0.0, 0.9], [1.5, 0.3]]   # with distribution = "table": [y_m, kg_per_m] per side
# cg_chord_fraction = 0.40           # chordwise c.g. of the structure (default: on the spar)

# [[point_mass]]           # one block per item (servo, boom, pod); mirrored to port
# name = "servo"
# mass_kg = 0.15
# y_m = 0.8
# x_m = 0.12
# z_m = 0.0

# [[fuel_tank]]            # fuel (or battery) spread over a span range, both sides together
# name = "inner tank"
# mass_kg = 2.0
# y_from_m = 0.1
# y_to_m = 0.6
# distribution = "uniform" # or "chord"

[spar]
chord_fraction = 0.25      # load axis as a chord fraction; or line = [[y, x, z], [y, x, z]] (m)

# [moment_reference]       # default: quarter chord of the mean aerodynamic chord
# x_m = 0.08
# y_m = 0.0
# z_m = 0.0

[[load_case]]
name = "pull-up"
speed = 25.0
speed_unit = "m/s"         # "m/s" or "kt"
speed_type = "EAS"         # "EAS" or "TAS"
altitude = 0.0
altitude_unit = "m"        # "m" or "ft"
load_factor = 3.8
lift_share = 1.0           # share of n*W the wing carries (tail load taken out)
# mass_kg = 22.0           # default: aircraft.gross_mass_kg
# fuel_fraction = 1.0      # share of every tank's fuel on board

# [envelope]               # V-n diagram; its corner and gust points become load cases
# category = "custom"      # "normal", "utility", "acrobatic" (14 CFR 23, pre-2017) or "custom"
# n_pos = 4.0              # custom only: positive limit load factor
# n_neg = -2.0             # custom only: negative limit load factor
# n_neg_dive = 0.0         # custom only: negative limit at V_D (default 0, as the normal category)
# cl_max_pos = 1.3
# cl_max_neg = 0.8         # magnitude of the negative CLmax
# speed_unit = "m/s"       # speeds are EAS
# v_cruise = 25.0          # default (rule categories): 23.335 minimum
# v_dive = 35.0
# v_maneuver = 20.0        # default: stall speed x sqrt(n_pos), not above v_cruise
# altitudes = [0.0, 1000.0]
# altitude_unit = "m"
# min_mass_kg = 20.0       # lightest flying mass (fuel is taken out first)
# gust_unit = "m/s"
# gust_cruise = 15.24      # default: 50 ft/s, reduced above 20,000 ft
# gust_dive = 7.62         # default: 25 ft/s, reduced above 20,000 ft

[lattice]
n_span = 40                # vortex-lattice strips on one semi-span
n_chord = 10               # chordwise panels

[analysis]
ultimate_factor = 1.5      # ultimate = factor x limit (14 CFR 23.303)
load_factor_axis = "body"  # n = force normal to the wing root chord / W (14 CFR 23.321(a));
                           # "flight-path": n = lift / W, inertia opposite the lift
"""


def template(geometry_path) -> str:
    """A commented case-file template for ``geometry_path`` (valid TOML that load_case accepts
    once the geometry file exists next to the case file as written)."""
    return _TEMPLATE.format(geometry=_toml_str(str(geometry_path)))
