"""TOML case file -> typed case records (:mod:`geomload.config.schema`), key-named errors.

Everything returned is SI (m, kg, m/s, N): values written with their unit ("1320 lb", "52 kt",
"350 mm") are converted here, and nothing past this module sees a file unit, except positions
given in the CAD frame, which wait for the wing (:mod:`geomload.config.positions`). Every problem
raises :class:`geomload.errors.CaseError` with one line naming the file and key. The entry point
is :func:`read_case_file`; the table reader is :mod:`geomload.config.table`, the sections are
read by :mod:`geomload.config.sections` and :mod:`geomload.config.position_keys`.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

from geomload.errors import CaseError

from . import position_keys as pos
from .controls_parse import SECTION_KEYS as CONTROL_SECTION_KEYS, parse_controls
from .schema import Case, LatticeSpec
from .sections import (LENGTH_UNITS, MAX_STATIONS, _aircraft, _envelope, _geometry,  # noqa: F401
                       _load_case, _wing_mass)
from .table import MAX_COUNT, Table  # noqa: F401

_Table = Table  # the earlier name
MAX_PANELS_SPAN, MAX_PANELS_CHORD = 1000, 200  # a dense lattice is 120 x 25; memory grows as N^2
TOP_LEVEL_KEYS = ("title", "geometry", "aircraft", "wing_mass", "point_mass", "fuel_tank", "spar",
                  "moment_reference", "load_case", "envelope", "lattice", "analysis", "structure",
                  *CONTROL_SECTION_KEYS)


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
    spelled: dict = {}  # current key -> key as written (older spellings)
    cad: list = []  # positions given in the CAD frame (CadPosition)
    top = Table(raw, "", path, warns)
    top.used.update(TOP_LEVEL_KEYS)
    top.done()  # an unknown (misspelt) table is reported before anything it might hide

    def sub(k: str, required: bool = False) -> Table:
        return Table(top.get(k, dict, None, required) or {}, k, path, warns, spelled)

    def named(key: str) -> str:
        return spelled.get(key, key)

    title = top.get("title", str, Path(path).stem)
    base = Path(path).resolve().parent

    t = sub("geometry", True); geometry = _geometry(t, base); t.done()  # noqa: E702
    t = sub("aircraft", True); aircraft = _aircraft(t); t.done()  # noqa: E702
    gross_key = named("aircraft.gross_mass")
    wing_mass = None
    if "wing_mass" in raw:
        t = sub("wing_mass"); wing_mass = _wing_mass(t); t.done()  # noqa: E702
    points, tanks, cases = [], [], []
    for key, reader, out in (("point_mass", pos.point_mass, points),
                             ("fuel_tank", pos.fuel_tank, tanks)):
        for i, item in enumerate(top.get(key, list, [])):
            t = Table(item, f"{key}[{i + 1}]", path, warns, spelled)
            out.append(reader(t, i, cad))
            t.done()
    t = sub("spar"); spar = pos.spar(t, cad); t.done()  # noqa: E702
    handoff = None  # the [structure] table (config/structure.py)
    if "structure" in raw:
        from .structure import read_structure

        t = sub("structure"); handoff = read_structure(t, base); t.done()  # noqa: E702
    ref = None
    if "moment_reference" in raw:
        t = sub("moment_reference"); ref = pos.moment_reference(t, cad); t.done()  # noqa: E702
    for i, item in enumerate(top.get("load_case", list, [])):
        t = Table(item, f"load_case[{i + 1}]", path, warns, spelled)
        cases.append(_load_case(t, i, aircraft.gross_mass_kg, gross_key))
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
        t = sub("envelope"); envelope = _envelope(t, aircraft.gross_mass_kg, gross_key); t.done()  # noqa: E702
    if not cases and envelope is None:
        raise CaseError(f"{path}: load_case: missing (give at least one [[load_case]] or an [envelope])")
    controls = parse_controls(top, raw, path, Table, envelope, warns, spelled)
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
        raise CaseError(f"{path}: {gross_key}: {aircraft.gross_mass_kg:g} kg is less than "
                        f"the wing, point (x2, mirrored) and fuel masses ({carried:g} kg)")
    flying = [(named(f"load_case[{i + 1}].mass"), c.mass_kg) for i, c in enumerate(cases)]
    if envelope is not None:
        flying.append((named("envelope.min_mass"), envelope.min_mass_kg))
    for key, m in flying:
        if m is not None and m < structure:
            raise CaseError(f"{path}: {key}: {m:g} kg is less than the wing structure and point "
                            f"masses (x2, mirrored) it carries ({structure:g} kg)")
    return Case(path=str(Path(path).resolve()), title=title, geometry=geometry, aircraft=aircraft,
                wing_mass=wing_mass, point_masses=tuple(points), fuel_tanks=tuple(tanks), spar=spar,
                moment_reference=ref, load_cases=tuple(cases), envelope=envelope, lattice=lattice,
                ultimate_factor=uf, load_factor_axis=nax, structure=handoff,
                warnings=tuple(warns), controls=controls, cad_positions=tuple(cad),
                key_names=tuple(sorted(spelled.items())))


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
