"""How a case file writes a physical quantity, and the keys renamed so that one name means one
thing (old spellings still read).

One way across the whole file: a key is named for its quantity (``mass``, ``y``, ``speed``) and
takes either a plain number in SI (kg, m, m/s: the unit the template and docs/case_file.md give
for it) or a text ``"<number> <unit>"`` ("1320 lb", "350 mm", "52 kt", "1500 ft"). The older
spellings keep working: a key ending in its unit (``mass_kg``, ``y_m``, ``area_m2``,
``delta_max_deg``) takes a number in that unit, and the separate ``*_unit`` keys (with a
warning). Every factor comes from :mod:`geomload.units` (areas are the squares of its lengths);
the result is SI, except angles, which the records keep in degrees (the unit a plain number of
an angle key is in: the degree is accepted for use with the SI, SI Brochure 9th ed., Table 8).
"""

from __future__ import annotations

import math
import re

from geomload.units import (ALTITUDE_UNITS, FOOT, GUST_UNITS, INCH, LENGTH_UNITS, MASS_UNITS, POUND,
                            POUND_FORCE, SPEED_UNITS_TEXT)

# areas: the square of every length unit, written "m2", "m^2" or "m²" (same factor, squared)
AREA_UNITS = {f"{u}{sq}": f * f for u, f in LENGTH_UNITS.items() for sq in ("2", "^2", "\u00b2")}
# angles, in degrees (the unit of the records' angles): 1 rad = 180/pi deg (exact by definition)
ANGLE_UNITS = {"deg": 1.0, "rad": math.degrees(1.0)}
# stresses (structural allowables), Pa: psi = lbf/in^2, ksi = 1000 psi (derived, exact)
STRESS_UNITS = {"Pa": 1.0, "kPa": 1e3, "MPa": 1e6, "GPa": 1e9, "psi": POUND_FORCE / INCH**2,
                "ksi": 1e3 * POUND_FORCE / INCH**2}
# mass per span (a wing-mass table), kg/m
MASS_PER_LENGTH_UNITS = {"kg/m": 1.0, "lb/ft": POUND / FOOT, "lb/in": POUND / INCH}
UNITS_BY_KIND = {"speed": SPEED_UNITS_TEXT, "altitude": ALTITUDE_UNITS,
                 "gust": {**GUST_UNITS, **SPEED_UNITS_TEXT}, "mass": MASS_UNITS,
                 "length": LENGTH_UNITS, "area": AREA_UNITS, "angle": ANGLE_UNITS,
                 "stress": STRESS_UNITS, "mass per length": MASS_PER_LENGTH_UNITS}
SI_UNIT = {"speed": "m/s", "altitude": "m", "gust": "m/s", "mass": "kg", "length": "m",
           "area": "m2", "angle": "deg", "stress": "Pa", "mass per length": "kg/m"}
# kinds whose key takes no plain number: it would be in Pa, which no one writes an allowable
# in (480 meant as MPa would read as 480 Pa): the value carries its unit, or the older key
# ending in its unit takes the number
UNIT_REQUIRED = ("stress",)
UNIT_WORD = r"[A-Za-z/]+(?:\^?2|\u00b2)?"  # a unit as a case-file text writes it
_TEXT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(" + UNIT_WORD + r")\s*$")

# keys whose value may be written as "<number> <unit>" text, by table -> key -> kind
QUANTITY_KEYS = {
    "aircraft": {"gross_mass": "mass"},
    "wing_mass": {"mass": "mass"},
    "point_mass": {"mass": "mass", "x": "length", "y": "length", "z": "length"},
    "fuel_tank": {"mass": "mass", "y_from": "length", "y_to": "length"},
    "moment_reference": {"x": "length", "y": "length", "z": "length"},
    "spar": {"rib_y": "length"},
    "load_case": {"speed": "speed", "altitude": "altitude", "mass": "mass"},
    "envelope": {"v_cruise": "speed", "v_dive": "speed", "v_maneuver": "speed",
                 "gust_cruise": "gust", "gust_dive": "gust", "altitudes": "altitude",
                 "min_mass": "mass"},
    "flaps": {"v_sf": "speed", "v_f": "speed", "deflection": "angle"},
    "control_surface": {"y_from": "length", "y_to": "length", "delta_min": "angle",
                        "delta_max": "angle"},
    "tail": {"area": "area", "x_ac": "length"},
    "cg": {"x": "length"},
    "structure": {"sigma_allow": "stress", "tau_allow": "stress"},
}
# (table, old key) -> new key: the old spelling still works, with a warning naming the new one
RENAMED = {
    ("aircraft", "cl_max"): "section_cl_max",
    ("aircraft", "cd0"): "section_cd0",
    ("load_case", "cl_max"): "section_cl_max",
    ("load_case", "cd0"): "section_cd0",
    ("envelope", "cl_max_pos"): "wing_cn_max_pos",
    ("envelope", "cl_max_neg"): "wing_cn_max_neg",
}
# (table, key ending in its unit) -> (quantity key, that unit): the older spelling, read as a
# number in the unit its name gives (no warning: it is unambiguous, and SI)
SUFFIXED = {
    ("aircraft", "gross_mass_kg"): ("gross_mass", "kg"),
    ("wing_mass", "total_kg"): ("mass", "kg"),
    ("point_mass", "mass_kg"): ("mass", "kg"),
    ("point_mass", "x_m"): ("x", "m"),
    ("point_mass", "y_m"): ("y", "m"),
    ("point_mass", "z_m"): ("z", "m"),
    ("fuel_tank", "mass_kg"): ("mass", "kg"),
    ("fuel_tank", "y_from_m"): ("y_from", "m"),
    ("fuel_tank", "y_to_m"): ("y_to", "m"),
    ("moment_reference", "x_m"): ("x", "m"),
    ("moment_reference", "y_m"): ("y", "m"),
    ("moment_reference", "z_m"): ("z", "m"),
    ("spar", "rib_y_m"): ("rib_y", "m"),
    ("load_case", "mass_kg"): ("mass", "kg"),
    ("envelope", "min_mass_kg"): ("min_mass", "kg"),
    ("control_surface", "y_from_m"): ("y_from", "m"),
    ("control_surface", "y_to_m"): ("y_to", "m"),
    ("control_surface", "delta_min_deg"): ("delta_min", "deg"),
    ("control_surface", "delta_max_deg"): ("delta_max", "deg"),
    ("flaps", "deflection_deg"): ("deflection", "deg"),
    ("tail", "area_m2"): ("area", "m2"),
    ("tail", "x_ac_m"): ("x_ac", "m"),
    ("cg", "x_m"): ("x", "m"),
    ("structure", "sigma_allow_MPa"): ("sigma_allow", "MPa"),
    ("structure", "tau_allow_MPa"): ("tau_allow", "MPa"),
}
# separate unit keys: still read; writing the unit in the value is the one way now
UNIT_KEYS = {"speed_unit": ("speed", "v_cruise", "v_dive", "v_maneuver"),
             "altitude_unit": ("altitude", "altitudes"), "gust_unit": ("gust_cruise", "gust_dive")}


def table_kind(where: str) -> str:
    """'load_case[3]' -> 'load_case'."""
    return where.split("[", 1)[0]


def parse_quantity(text: str, kind: str) -> float:
    """SI value of '<number> <unit>' text of a quantity kind; ValueError with the reason (one
    line naming the allowed units)."""
    units = UNITS_BY_KIND[kind]
    m = _TEXT.match(text)
    if not m:
        raise ValueError(f"write a number and a unit, e.g. \"{example(kind)}\" (units: "
                         f"{shown_units(kind)}); got {text!r}")
    num, unit = float(m.group(1)), m.group(2)
    key = next((u for u in units if u.lower() == unit.lower()), None)
    if key is None:
        article = "an" if kind[0] in "aeiou" else "a"
        raise ValueError(f"unit {unit!r} is not one of {shown_units(kind)} ({article} {kind})")
    v = scaled(num, units[key])
    if not math.isfinite(v):
        raise ValueError(f"{text!r} is not a finite value")
    return v


def scaled(num: float, factor: float) -> float:
    """num x factor; a factor that is the reciprocal of a whole number (mm: 1/1000, cm: 1/100)
    divides by that number instead, so that "1150 mm" gives the float nearest 1.15 m, the same
    as writing 1.15 (1150 x 0.001 is one unit in the last place above it)."""
    inv = 1.0 / factor
    whole = round(inv)
    if factor < 1.0 and whole > 1 and inv == whole:
        return num / whole
    return num * factor


def number_or_quantity(v, kind: str) -> tuple:
    """(value, written with its unit) of a case-file value: a number is returned as it is (the
    caller knows its unit), '<number> <unit>' text in SI. ValueError with the reason."""
    if isinstance(v, str):
        return parse_quantity(v, kind), True
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise ValueError(f"must be a number, or a text such as \"{example(kind)}\"; got {v!r}")
    try:
        f = float(v)
    except OverflowError:
        raise ValueError("must be a number, got an integer too large to be one") from None
    if not math.isfinite(f):
        raise ValueError(f"must be a number, got {v!r} (only finite values are allowed)")
    return f, False


def shown_units(kind: str) -> str:
    """The units of a kind as an error lists them (an area's once, as "m2", not also "m^2")."""
    return ", ".join(u for u in UNITS_BY_KIND[kind] if not u.endswith(("^2", "\u00b2")))


def example(kind: str) -> str:
    return {"speed": "52 kt", "altitude": "1500 ft", "gust": "15 m/s", "mass": "1320 lb",
            "length": "350 mm", "area": "1.7 ft2", "angle": "18 deg", "stress": "480 MPa",
            "mass per length": "0.6 kg/m"}[kind]


def rename_keys(data: dict, where: str, warnings: list) -> str | None:
    """Move old spellings to their new keys in `data` (in place), adding a warning for each
    renamed key (none for a key ending in its unit); returns the first old key given together
    with its new key (an error for the caller), else None. A key ending in its unit whose value
    is text is left in place for the caller to refuse (see :func:`suffix_conflict`)."""
    kind = table_kind(where)
    for (tab, old), new in RENAMED.items():
        if tab != kind or old not in data:
            continue
        if new in data:
            return old
        data[new] = data.pop(old)
        warnings.append(f"{where}.{old} is now written {where}.{new} (the old name still works)")
    for (tab, old), (new, unit) in SUFFIXED.items():
        if tab != kind or old not in data or isinstance(data[old], str):
            continue
        if new in data:
            return old
        value = data.pop(old)
        q = QUANTITY_KEYS.get(tab, {}).get(new)
        if q is not None and unit != SI_UNIT[q] and isinstance(value, (int, float)) \
                and not isinstance(value, bool):
            value = f"{float(value)!r} {unit}"  # a number in a unit other than the key's own
        data[new] = value
    return None


def suffix_conflict(data: dict, where: str) -> tuple | None:
    """(key, message) for a key ending in its unit whose value is text ("mass_kg = '2 lb'"):
    the name fixes the unit, so the text is refused; else None."""
    kind = table_kind(where)
    for (tab, old), (new, unit) in SUFFIXED.items():
        if tab == kind and isinstance(data.get(old), str):
            if not _TEXT.match(data[old]):
                return old, f"must be a number (in {unit}), got {data[old]!r}"
            return old, (f"its name fixes the unit ({unit}): give a number, or write the value "
                         f"with its unit as {new} = \"{data[old]}\"")
    return None


def new_name(where: str, old: str) -> str | None:
    """The current name of an old key of table `where`, or None."""
    kind = table_kind(where)
    if (kind, old) in RENAMED:
        return RENAMED[(kind, old)]
    if (kind, old) in SUFFIXED:
        return SUFFIXED[(kind, old)][0]
    return None
