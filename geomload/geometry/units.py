"""Length units of geometry files and the one plausibility check of a wing's size.

A unit-less mesh format (STL, OBJ, PLY, OFF) does not say whether it is in metres, millimetres
or inches; `guess_unit` names the unit that makes the wing a plausible size and, when the
aircraft mass is known, a plausible wing loading. Every other part of geomload (case checks,
`new-case`, `inspect`) asks this module, so there is one set of bounds.
"""

from __future__ import annotations

# Exact conversion factors to the metre (the inch is 0.0254 m exactly and the foot 0.3048 m
# exactly by the international yard and pound agreement of 1959; NIST SP 811, appendix B).
UNITS = {"m": 1.0, "cm": 0.01, "mm": 0.001, "in": 0.0254, "ft": 0.3048}
UNITLESS_FORMATS = (".stl", ".obj", ".ply", ".off")

# Plausible wing span (m) of anything geomload is meant for (common practice, no source): from a
# hand-launched model (about 0.2 m) to the largest aircraft built (under 120 m, from memory).
# Outside these bounds the unit is almost certainly wrong.
SPAN_TOO_SMALL_M = 0.05
SPAN_TOO_BIG_M = 200.0
PLAUSIBLE_SPAN_M = (0.2, 100.0)
# Plausible wing loading (N/m^2) for a given mass (common practice, no source): from about
# 20 N/m^2 (light gliders and models) to about 8000 N/m^2 (heavy transports, from memory).
PLAUSIBLE_WING_LOADING = (20.0, 8000.0)
G0 = 9.80665  # standard gravity, m/s^2 (CGPM 1901; ISO 80000-3)


def unit_scale(unit):
    """Metres per `unit` ("m", "cm", "mm", "in", "ft"); ValueError for any other name."""
    try:
        return UNITS[unit]
    except KeyError:
        raise ValueError(f"unit {unit!r} not one of {', '.join(UNITS)}") from None


def guess_unit(extent_m, mass_kg=None, area_m2=None, read_in="m"):
    """The likely length unit of a unit-less file, and why.

    Parameters
    ----------
    extent_m : float
        Largest extent of the geometry (m) as read in `read_in` (normally the span).
    mass_kg : float, optional
        Aircraft mass; with `area_m2` the wing loading of each candidate unit is graded.
    area_m2 : float, optional
        Wing area (m^2) as read in `read_in`.
    read_in : str
        The unit the extent and area were read in (default metres).

    Returns
    -------
    (unit, reason) : (str, str)
        unit is one of `UNITS`; reason is a short phrase ("1.4 m across in m", ...). The unit
        read in is kept when it is plausible.
    """
    base = UNITS[read_in]
    cands = []
    for unit, scale in UNITS.items():
        f = scale / base
        span = extent_m * f
        if not PLAUSIBLE_SPAN_M[0] <= span <= PLAUSIBLE_SPAN_M[1]:
            continue
        why = f"{span:.3g} m across if read in {unit}"
        ok_load = True
        if mass_kg and area_m2:
            load = mass_kg * G0 / (area_m2 * f * f)
            ok_load = PLAUSIBLE_WING_LOADING[0] <= load <= PLAUSIBLE_WING_LOADING[1]
            why += f", wing loading {load:.3g} N/m^2 at {mass_kg:g} kg"
        cands.append((not ok_load, unit != read_in, _preference(unit), unit, why))
    if not cands:
        return read_in, f"{extent_m:.4g} {read_in} across, implausible in every unit"
    cands.sort()
    return cands[0][3], cands[0][4]


def _preference(unit):
    # Among several plausible units, the one CAD exports use most: mm, then m, in, cm, ft
    # (common practice, no source).
    return ("mm", "m", "in", "cm", "ft").index(unit)


def unit_message(path, unit, reason, key_hint=None):
    """The one-line refusal for a unit-less file read without a unit."""
    hint = key_hint or "set `geometry.units` in the case file or give --units"
    return (f"{path}: this format carries no length unit and none was given; it is most likely "
            f"in {unit} ({reason}); {hint}")
