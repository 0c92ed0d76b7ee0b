"""The length unit a CAD exchange file declares for itself (kept so that outputs in the CAD
frame, such as the FE decks, can be written in the user's own unit).

STEP (ISO 10303-21 file, units from ISO 10303-41): the ``LENGTH_UNIT`` entity is either an
``SI_UNIT(prefix, .METRE.)`` or a ``CONVERSION_BASED_UNIT('INCH' | 'FOOT' ...)``. IGES and
anything else, or a STEP file whose unit cannot be found: None (the caller keeps metres).
"""

from __future__ import annotations

import re

SI_PREFIX = {"": 1.0, "MILLI": 1e-3, "CENTI": 1e-2, "DECI": 1e-1, "KILO": 1e3, "MICRO": 1e-6}
NAMED = {"INCH": 0.0254, "FOOT": 0.3048, "MILLIMETRE": 1e-3, "MILLIMETER": 1e-3,
         "CENTIMETRE": 1e-2, "METRE": 1.0, "METER": 1.0}  # international inch and foot (1959)
_STEP_SI = re.compile(rb"LENGTH_UNIT\s*\(\s*\)[^;]*?SI_UNIT\s*\(\s*(?:\.(\w+)\.|\$)\s*,"
                      rb"\s*\.METRE\.", re.S)
_STEP_SI_B = re.compile(rb"SI_UNIT\s*\(\s*(?:\.(\w+)\.|\$)\s*,\s*\.METRE\.\s*\)[^;]*?LENGTH_UNIT",
                        re.S)
_STEP_CONV = re.compile(rb"CONVERSION_BASED_UNIT\s*\(\s*'([^']+)'[^;]*?LENGTH_UNIT|LENGTH_UNIT"
                        rb"\s*\(\s*\)[^;]*?CONVERSION_BASED_UNIT\s*\(\s*'([^']+)'", re.S)


def declared_scale(path, ext: str):
    """Metres per unit the file declares, or None."""
    try:
        with open(path, "rb") as fh:
            data = fh.read()
    except OSError:
        return None
    if ext in (".step", ".stp"):
        m = _STEP_CONV.search(data)
        if m:
            return NAMED.get((m.group(1) or m.group(2)).decode("ascii", "replace").upper())
        m = _STEP_SI.search(data) or _STEP_SI_B.search(data)
        if m:
            return SI_PREFIX.get((m.group(1) or b"").decode("ascii", "replace").upper())
        return None
    return None
