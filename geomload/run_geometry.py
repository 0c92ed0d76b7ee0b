"""The geometry of a run: the case's CAD file read as a `Wing`, its unit checked against the
aircraft, and the geometry stage's decisions turned into run messages.

`pipeline.compute` calls :func:`case_wing` and :func:`wing_messages`; nothing else of the run
reads the CAD file. The unit check is the geometry stage's one check
(:func:`geomload.geometry.units.guess_unit`), given the aircraft mass so that the wing loading
of each candidate unit is graded too.
"""

from __future__ import annotations

import os

UNITS_HINT = "set `geometry.units` in the case file"


def case_wing(case, progress, cache=None):
    """(cache key, `Wing`) of the case's geometry, from the cache when it holds the same file
    (same path, size and modification time) read the same way.

    A unit-less mesh (STL, OBJ, PLY, OFF) with no `geometry.units` is refused (GeometryError:
    one line naming the file, the likely unit and the key), never run on a guess; so is a wing
    whose span is implausible in the unit given.
    """
    from geomload.geometry import read_wing

    g = case.geometry
    st = os.stat(g.file)
    key = ("wing", g, st.st_size, st.st_mtime_ns)
    if cache is not None and key in cache:
        return key, cache[key]
    wing = read_wing(g.file, units=g.units, body=g.body, span_axis=g.span_axis,
                     up_axis=g.up_axis, n_stations=g.n_stations, spacing=g.spacing,
                     progress=progress, side=getattr(g, "side", None),
                     require_units=False, units_hint=UNITS_HINT, display=True)
    check_units(case, wing)
    if cache is not None:
        cache[key] = wing
    return key, wing


def check_units(case, wing) -> None:
    """Refuse a wing read on an assumed unit, or read in a unit that makes its span implausible.

    The likely unit comes from `guess_unit` with the wing's span, area and the aircraft's gross
    mass (wing loading of each candidate unit). Raises GeometryError naming the file, the
    likely unit and `geometry.units`.
    """
    from geomload.errors import GeometryError
    from geomload.geometry.units import (SPAN_TOO_BIG_M, SPAN_TOO_SMALL_M, guess_unit,
                                         unit_message)

    pf, mesh = wing.planform, wing.mesh
    mass = getattr(getattr(case, "aircraft", None), "gross_mass_kg", None)
    if mesh.units_assumed:
        unit, why = likely_unit(case, pf.span, pf.area)
        why = f"read in m it would span {pf.span:.4g} m; {why}"
        raise GeometryError(unit_message(mesh.source, unit, why, UNITS_HINT))
    if not SPAN_TOO_SMALL_M <= pf.span <= SPAN_TOO_BIG_M:
        read_in = mesh.units if mesh.units in ("m", "cm", "mm", "in", "ft") else "m"
        unit, why = guess_unit(pf.span, mass_kg=mass, area_m2=pf.area, read_in="m")
        raise GeometryError(f"{mesh.source}: the wing spans {pf.span:.4g} m when read in "
                            f"{read_in if mesh.units != 'file' else 'the unit the file declares'}"
                            f"; it is most likely in {unit} ({why}); {UNITS_HINT}")


DEFAULT_CL_MAX = 1.4  # wing CL_max for the stall-speed grading when the case gives none
# (a plain wing section, common practice, no source; the grading only needs its size)


def likely_unit(case, span_m, area_m2):
    """(unit, reason): the unit in which the wing, read in metres, has a plausible span, a
    plausible wing loading at the aircraft's gross mass and a 1-g stall speed (sea level,
    DEFAULT_CL_MAX or the case's cl_max) no higher than the fastest load case's speed; among
    several, the geometry stage's preference. Falls back to `guess_unit`'s answer."""
    import math

    from geomload.geometry.units import PLAUSIBLE_SPAN_M, PLAUSIBLE_WING_LOADING, UNITS, guess_unit
    from geomload.units import G0, RHO0_ISA

    aircraft = getattr(case, "aircraft", None)
    mass = getattr(aircraft, "gross_mass_kg", None)
    best = guess_unit(span_m, mass_kg=mass, area_m2=area_m2, read_in="m")
    speeds = [float(lc.speed_m_s) for lc in getattr(case, "load_cases", ())]
    if not mass or not speeds:
        return best
    cl_max = getattr(aircraft, "cl_max", None) or DEFAULT_CL_MAX
    v_top = max(speeds)
    for unit in ("mm", "m", "in", "cm", "ft"):  # the geometry stage's order of preference
        f = UNITS[unit]
        span, area = span_m * f, area_m2 * f * f
        load = mass * G0 / area
        v_stall = math.sqrt(2.0 * load / (RHO0_ISA * cl_max))
        if (PLAUSIBLE_SPAN_M[0] <= span <= PLAUSIBLE_SPAN_M[1]
                and PLAUSIBLE_WING_LOADING[0] <= load <= PLAUSIBLE_WING_LOADING[1]
                and v_stall <= v_top):
            return unit, (f"{span:.3g} m across if read in {unit}, wing loading {load:.3g} N/m^2 "
                          f"at {mass:g} kg, stall speed {v_stall:.3g} m/s against load cases up "
                          f"to {v_top:.3g} m/s")
    return best


def wing_messages(wing) -> list:
    """The geometry stage's decisions as run messages: each `GeometryWarning` a warning, each
    note a note, and which planform the loads use when the wing's root lies off y = 0."""
    from geomload.messages import Message

    out = [Message("warning", w.text) for w in wing.warnings]
    for n in wing.notes:
        text = n[len("note: "):] if n.startswith("note: ") else n
        out.append(Message("note", text))
    y_root = float(getattr(wing.frame, "y_root", 0.0) or 0.0)
    if y_root > 0.0:
        pf = wing.planform
        out.append(Message("warning", (
            f"exposed wing (root at y = {y_root:.4g} m): the lattice and the loads run from the "
            f"plane of symmetry y = 0 on the gross planform (S = {pf.area:.4g} m^2, b = "
            f"{pf.span:.4g} m; exposed S = {pf.exposed_area:.4g} m^2, b = "
            f"{pf.exposed_span:.4g} m), carried through by extending the leading and trailing "
            "edges; point masses and tanks keep the CAD's y")))
    return out


def planform_summary(wing) -> dict:
    """Gross and exposed planform of a `Wing` for JSON outputs (m, m^2): see
    :func:`geomload.geometry.wing_summary.gross_and_exposed`."""
    from geomload.geometry.wing_summary import gross_and_exposed

    return gross_and_exposed(wing)
