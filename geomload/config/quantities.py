"""Case-file values written with their unit as text ("52 kt", "1500 ft", "48.5 lb", "550 mm"),
and the keys renamed so that one name means one thing (old spellings read with a warning).

Every factor comes from :mod:`geomload.units`; the result is SI.
"""

from __future__ import annotations

import math
import re

from geomload.units import ALTITUDE_UNITS, GUST_UNITS, LENGTH_UNITS, MASS_UNITS, SPEED_UNITS_TEXT

UNITS_BY_KIND = {"speed": SPEED_UNITS_TEXT, "altitude": ALTITUDE_UNITS,
                 "gust": {**GUST_UNITS, **SPEED_UNITS_TEXT}, "mass": MASS_UNITS,
                 "length": LENGTH_UNITS}
SI_UNIT = {"speed": "m/s", "altitude": "m", "gust": "m/s", "mass": "kg", "length": "m"}
_TEXT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([A-Za-z/]+)\s*$")

# keys whose value may be written as "<number> <unit>" text, by table -> key -> kind
QUANTITY_KEYS = {
    "load_case": {"speed": "speed", "altitude": "altitude"},
    "envelope": {"v_cruise": "speed", "v_dive": "speed", "v_maneuver": "speed",
                 "gust_cruise": "gust", "gust_dive": "gust", "altitudes": "altitude"},
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
# separate unit keys: still read; writing the unit in the value is the one way now
UNIT_KEYS = {"speed_unit": ("speed", "v_cruise", "v_dive", "v_maneuver"),
             "altitude_unit": ("altitude", "altitudes"), "gust_unit": ("gust_cruise", "gust_dive")}


def table_kind(where: str) -> str:
    """'load_case[3]' -> 'load_case'."""
    return where.split("[", 1)[0]


def parse_quantity(text: str, kind: str) -> float:
    """SI value of '<number> <unit>' text of a quantity kind; ValueError with the reason."""
    units = UNITS_BY_KIND[kind]
    m = _TEXT.match(text)
    if not m:
        raise ValueError(f"write a number and a unit, e.g. \"{example(kind)}\"; got {text!r}")
    num, unit = float(m.group(1)), m.group(2)
    key = next((u for u in units if u.lower() == unit.lower()), None)
    if key is None:
        raise ValueError(f"unit {unit!r} is not one of {', '.join(units)}")
    v = num * units[key]
    if not math.isfinite(v):
        raise ValueError(f"{text!r} is not a finite {kind}")
    return v


def example(kind: str) -> str:
    return {"speed": "52 kt", "altitude": "1500 ft", "gust": "15 m/s", "mass": "22 kg",
            "length": "550 mm"}[kind]


def rename_keys(data: dict, where: str, warnings: list) -> str | None:
    """Move old spellings to their new keys in `data` (in place), adding a warning each; returns
    the first old key given together with its new key (an error for the caller), else None."""
    kind = table_kind(where)
    for (tab, old), new in RENAMED.items():
        if tab != kind or old not in data:
            continue
        if new in data:
            return old
        data[new] = data.pop(old)
        warnings.append(f"{where}.{old} is now written {where}.{new} (the old name still works)")
    return None
