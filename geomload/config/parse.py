"""TOML case file -> typed case records (:mod:`geomload.config.schema`), key-named errors.

Everything returned is SI (m, kg, m/s, N): knots and feet are converted here, and nothing past
this module sees a file unit. Every problem raises :class:`geomload.errors.CaseError` with one
line naming the file and key. The entry point is :func:`read_case_file`.
"""

from __future__ import annotations

import difflib
import math
import tomllib
from pathlib import Path

import numpy as np

from geomload.errors import CaseError
from geomload.loads.records import PointMass
from geomload.units import ALTITUDE_UNITS, GUST_UNITS, SPEED_UNITS

from . import quantities as qty
from .controls_parse import SECTION_KEYS as CONTROL_SECTION_KEYS, parse_controls
from .schema import (CATEGORIES, MAX_ALTITUDE_M, AircraftSpec, Case, FlightEnvelopeSpec,
                     FuelTank, GeometrySpec, LatticeSpec, LoadCase, SparSpec, WingMassSpec)

LENGTH_UNITS = ALTITUDE_UNITS  # the units a case-file altitude may be given in
MAX_COUNT = 100_000  # no count in a case file (stations, panels, bodies) is sensibly larger
MAX_STATIONS = 2000  # cuts on one semi-span: far beyond what a preliminary load needs
MAX_PANELS_SPAN, MAX_PANELS_CHORD = 1000, 200  # a dense lattice is 120 x 25; memory grows as N^2
TOP_LEVEL_KEYS = ("title", "geometry", "aircraft", "wing_mass", "point_mass", "fuel_tank", "spar",
                  "moment_reference", "load_case", "envelope", "lattice", "analysis", "structure",
                  *CONTROL_SECTION_KEYS)


# --------------------------------------------------------------------------- table reader
class _Table:
    """Reads keys of one TOML table, remembering which were used, so leftovers are reported."""

    def __init__(self, data, where: str, path: str, warnings: list | None = None):
        self.path, self.where = path, where
        self.warnings = [] if warnings is None else warnings
        if not isinstance(data, dict):
            self.fail("", f"must be a table, got {type(data).__name__}")
        self.data, self.used = dict(data), set()
        before = set(self.data)
        both = qty.rename_keys(self.data, where, self.warnings)
        # an error names the key as the user wrote it
        self.written = {qty.RENAMED[(qty.table_kind(where), o)]: o for o in before - set(self.data)}
        if both:
            self.fail(both, f"give either {both} or "
                            f"{qty.RENAMED[(qty.table_kind(where), both)]}, not both")
        self.text_units = {}  # key -> its value was written with its unit ("52 kt")

    def key(self, k: str) -> str:
        k = getattr(self, "written", {}).get(k, k)
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
        if kind is str and k in qty.UNIT_KEYS and isinstance(v, str):
            own = [q for q in qty.UNIT_KEYS[k] if isinstance(self.data.get(q), str)]
            if own:
                self.fail(k, f"{own[0]} already carries its unit; drop {k}")
            kinds = qty.QUANTITY_KEYS.get(qty.table_kind(self.where), {})
            ex = next((q for q in qty.UNIT_KEYS[k] if q in kinds), qty.UNIT_KEYS[k][0])
            self.warnings.append(f"{self.key(k)}: write the unit in the value instead, e.g. "
                                 f"{ex} = \"{qty.example(kinds.get(ex, 'speed'))}\" "
                                 f"({k} still works)")
        kinds = qty.QUANTITY_KEYS.get(qty.table_kind(self.where), {})
        if kind is float and isinstance(v, str) and k in kinds:
            try:
                v = qty.parse_quantity(v, kinds[k])
            except ValueError as exc:
                self.fail(k, str(exc))
            self.text_units[k] = True
            return v
        if kind is float:
            if isinstance(v, bool) or not isinstance(v, (int, float)):
                self.fail(k, f"must be a number, got {v!r}")
            try:
                v = float(v)
            except OverflowError:
                self.fail(k, "must be a number, got an integer too large to be one")
            if not math.isfinite(v):
                self.fail(k, f"must be a number, got {v!r} (only finite values are allowed)")
            return v
        if kind is int:
            if isinstance(v, bool) or not isinstance(v, int):
                self.fail(k, f"must be an integer, got {v!r}")
            if abs(v) > MAX_COUNT:
                self.fail(k, f"{v} is too large (at most {MAX_COUNT})")
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
    h = t.get(key, float, 0.0)
    h = h if key in t.text_units else h * LENGTH_UNITS[unit]
    if not 0.0 <= h <= MAX_ALTITUDE_M:
        t.fail(key, f"{h:.0f} m is outside 0..{MAX_ALTITUDE_M:.0f} m (the ISA range modelled)")
    return h


# ------------------------------------------------------------------------------- sections
def _geometry(t: _Table, base: Path) -> GeometrySpec:
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
    name = t.get("name", str, f"fuel_tank_{i + 1}")
    mass = t.positive("mass_kg", required=True)
    y_from = t.positive("y_from_m", required=True, allow_zero=True)
    y_to = t.positive("y_to_m", required=True)
    if y_to <= y_from:
        t.fail("y_to_m", f"must be greater than y_from_m ({y_from:g} m)")
    return FuelTank(name=name, mass_kg=mass, y_from_m=y_from, y_to_m=y_to,
                    distribution=t.choice("distribution", ("uniform", "chord"), "uniform"),
                    cg_chord_fraction=t.fraction("cg_chord_fraction"))


def _spar(t: _Table) -> SparSpec:
    ribs = _ribs(t)
    line = t.get("line", list)
    if line is None:
        return SparSpec(t.fraction("chord_fraction", 0.25), rib_y_m=ribs)
    t.used.add("chord_fraction")
    if "chord_fraction" in t.data:
        t.fail("chord_fraction", "give either chord_fraction or line, not both")
    try:
        arr = np.array(line, dtype=float)
    except (TypeError, ValueError):
        t.fail("line", "must be a list of [y_m, x_m, z_m] points")
    if (arr.ndim != 2 or arr.shape[1] != 3 or arr.shape[0] < 2 or not np.all(np.isfinite(arr))
            or np.any(np.diff(arr[:, 0]) <= 0)):
        t.fail("line", "must be at least two [y_m, x_m, z_m] points with y increasing")
    return SparSpec(None, tuple(map(tuple, arr)), rib_y_m=ribs)


def _ribs(t: _Table) -> tuple:
    ribs = t.get("rib_y_m", list)
    if ribs is None:
        return ()
    if not ribs or not all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in ribs):
        t.fail("rib_y_m", "must be a non-empty list of spanwise positions in metres")
    try:
        arr = np.array(ribs, dtype=float)
    except OverflowError:
        t.fail("rib_y_m", "holds a number too large")
    if not np.all(np.isfinite(arr)) or np.any(np.diff(arr) <= 0) or arr[0] < 0:
        t.fail("rib_y_m", "must be finite, >= 0 and increase strictly")
    return tuple(float(v) for v in arr)


def _load_case(t: _Table, i: int, gross: float) -> LoadCase:
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
        mass_kg=t.positive("mass_kg"),
        cl_max=t.positive("section_cl_max"),
        cd0=t.positive("section_cd0", allow_zero=True),
        fuel_fraction=t.fraction("fuel_fraction", 1.0),
    )
    if lc.mass_kg is not None and lc.mass_kg > gross:
        t.fail("mass_kg", f"{lc.mass_kg:g} kg is above aircraft.gross_mass_kg ({gross:g} kg)")
    return lc


def _envelope(t: _Table, gross: float) -> FlightEnvelopeSpec:
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
        min_mass_kg=t.positive("min_mass_kg"),
        gust_cruise_m_s=None if gusts["gust_cruise"] is None else gusts["gust_cruise"] * (
            1.0 if "gust_cruise" in t.text_units else GUST_UNITS[gu]),
        gust_dive_m_s=None if gusts["gust_dive"] is None else gusts["gust_dive"] * (
            1.0 if "gust_dive" in t.text_units else GUST_UNITS[gu]),
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
        text = p.read_text(encoding="utf-8-sig")  # a byte-order mark from a Windows editor
    except (OSError, UnicodeDecodeError) as exc:
        raise CaseError(f"{path}: cannot read case file ({exc.__class__.__name__}: {exc})") from None
    if not text.strip():
        raise CaseError(f"{path}: case file is empty (start from `geomload new-case GEOMETRY`)")
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CaseError(f"{path}: invalid TOML: {exc}") from None
    except RecursionError:
        raise CaseError(f"{path}: {_deepest_key(text)}: invalid TOML: tables or arrays nested "
                        "too deeply") from None


def _deepest_key(text: str) -> str:
    """The key (or line) whose value opens the most brackets: where a too-deep nesting is."""
    best, where = -1, "line 1"
    for i, line in enumerate(text.splitlines()):
        depth = line.count("[") + line.count("{")
        if depth > best:
            best = depth
            key = line.split("=", 1)[0].strip() if "=" in line else ""
            where = key if key and len(key) < 80 else f"line {i + 1}"
    return where


def _read_case_file(path) -> Case:
    """Read and validate a case file; return a :class:`Case` in SI units.

    Paths inside are relative to the case file. Raises CaseError (one line, file and key).
    """
    path = str(path)
    raw = _parse(path)
    warns: list = []
    top = _Table(raw, "", path, warns)
    top.used.update(TOP_LEVEL_KEYS)
    top.done()  # an unknown (misspelt) table is reported before anything it might hide

    def sub(k: str, required: bool = False) -> _Table:
        return _Table(top.get(k, dict, None, required) or {}, k, path, warns)

    title = top.get("title", str, Path(path).stem)
    base = Path(path).resolve().parent

    t = sub("geometry", True); geometry = _geometry(t, base); t.done()  # noqa: E702
    t = sub("aircraft", True)
    aircraft = AircraftSpec(t.positive("gross_mass_kg", required=True),
                            t.positive("section_cl_max"),
                            t.positive("section_cd0", 0.0, allow_zero=True))
    t.done()
    wing_mass = None
    if "wing_mass" in raw:
        t = sub("wing_mass"); wing_mass = _wing_mass(t); t.done()  # noqa: E702
    points, tanks, cases = [], [], []
    for key, reader, out in (("point_mass", _point_mass, points), ("fuel_tank", _fuel_tank, tanks)):
        for i, item in enumerate(top.get(key, list, [])):
            t = _Table(item, f"{key}[{i + 1}]", path, warns)
            out.append(reader(t, i))
            t.done()
    t = sub("spar"); spar = _spar(t); t.done()  # noqa: E702
    handoff = None  # the [structure] table (config/structure.py)
    if "structure" in raw:
        from .structure import read_structure

        t = sub("structure"); handoff = read_structure(t, base); t.done()  # noqa: E702
    ref = None
    if "moment_reference" in raw:
        t = sub("moment_reference")
        ref = np.array([t.get("x_m", float, required=True), t.get("y_m", float, 0.0),
                        t.get("z_m", float, 0.0)])
        t.done()
    for i, item in enumerate(top.get("load_case", list, [])):
        t = _Table(item, f"load_case[{i + 1}]", path, warns)
        cases.append(_load_case(t, i, aircraft.gross_mass_kg))
        t.done()
    seen, dup = set(), None
    for c in cases:
        if c.name in seen:
            dup = c.name
            break
        seen.add(c.name)
    if dup is not None:
        raise CaseError(f"{path}: load_case.name: {dup!r} is used twice")
    envelope = None
    if "envelope" in raw:
        t = sub("envelope"); envelope = _envelope(t, aircraft.gross_mass_kg); t.done()  # noqa: E702
    if not cases and envelope is None:
        raise CaseError(f"{path}: load_case: missing (give at least one [[load_case]] or an [envelope])")
    controls = parse_controls(top, raw, path, _Table, envelope)
    t = sub("lattice")
    n_span, n_chord = t.get("n_span", int, 40), t.get("n_chord", int, 10)
    if n_span < 2 or n_chord < 1:
        t.fail("n_span", "need n_span >= 2 and n_chord >= 1")
    if n_span > MAX_PANELS_SPAN:
        t.fail("n_span", f"at most {MAX_PANELS_SPAN}, got {n_span}")
    if n_chord > MAX_PANELS_CHORD:
        t.fail("n_chord", f"at most {MAX_PANELS_CHORD}, got {n_chord}")
    lattice = LatticeSpec(n_span, n_chord, t.choice("spacing", ("cosine", "uniform"), "cosine"))
    t.done()
    t = sub("analysis")
    uf = t.positive("ultimate_factor", 1.5)
    if uf < 1.0:
        t.fail("ultimate_factor", f"must be >= 1, got {uf:g}")
    nax = t.choice("load_factor_axis", ("body", "flight-path"), "body")
    t.done()
    top.done()
    structure = (wing_mass.total_kg if wing_mass else 0.0) + 2 * sum(p.mass for p in points)
    carried = structure + sum(k.mass_kg for k in tanks)
    if carried > aircraft.gross_mass_kg:
        raise CaseError(f"{path}: aircraft.gross_mass_kg: {aircraft.gross_mass_kg:g} kg is less than "
                        f"the wing, point (x2, mirrored) and fuel masses ({carried:g} kg)")
    flying = [(f"load_case[{i + 1}].mass_kg", c.mass_kg) for i, c in enumerate(cases)]
    if envelope is not None:
        flying.append(("envelope.min_mass_kg", envelope.min_mass_kg))
    for key, m in flying:
        if m is not None and m < structure:
            raise CaseError(f"{path}: {key}: {m:g} kg is less than the wing structure and point "
                            f"masses (x2, mirrored) it carries ({structure:g} kg)")
    return Case(path=str(Path(path).resolve()), title=title, geometry=geometry, aircraft=aircraft,
                wing_mass=wing_mass, point_masses=tuple(points), fuel_tanks=tuple(tanks), spar=spar,
                moment_reference=ref, load_cases=tuple(cases), envelope=envelope, lattice=lattice,
                ultimate_factor=uf, load_factor_axis=nax, structure=handoff,
                warnings=tuple(warns), controls=controls)


def read_case_file(path) -> Case:
    """Read and validate a case file; return a :class:`~geomload.config.schema.Case` in SI.

    Paths inside are relative to the case file. Raises CaseError (one line naming the file and
    the key) for every problem, including those the records find when they are built.
    """
    path = str(path)
    try:
        return _read_case_file(path)
    except CaseError as exc:
        if str(exc).startswith(path):
            raise
        raise CaseError(f"{path}: {exc}") from None
    except RecursionError:
        raise CaseError(f"{path}: invalid TOML: nested too deeply") from None
