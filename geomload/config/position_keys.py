"""Case-file entries that hold positions: point masses, fuel tanks, the spar line, the moment
reference, each in the wing frame or in the CAD frame.

``frame = "wing"`` (the default): wing-frame coordinates, origin at the leading edge of the root
section on the root / symmetry plane, x aft along the root chord, y along the span (starboard
positive), z up; a number is metres, a text carries its unit ("350 mm").
``frame = "cad"``: coordinates as measured in the CAD model, along the CAD axes; a number is in
the CAD unit (``geometry.units``, or the file's own unit), a text carries its unit. These are
kept as :class:`~geomload.config.schema.CadPosition` records, and their records hold
placeholders, until :func:`geomload.config.positions.resolve_positions` converts them with the
wing's frame transform.
"""

from __future__ import annotations

import numpy as np

from geomload.config.schema import PointMass

from .schema import FRAMES, CadPosition, FuelTank, SparSpec

XYZ = ("x", "y", "z")
PLACEHOLDER_SPAN = (0.0, 1.0)  # y range (m) of a CAD-frame tank until it is converted


def _frame(t) -> str:
    return t.choice("frame", FRAMES, "wing")


def _cad_point(t, keys=XYZ) -> tuple:
    """((x, y, z) values, (x, y, z) with_unit) of three required coordinate keys."""
    got = [t.measured(k, "length", required=True) for k in keys]
    return tuple(v for v, _ in got), tuple(u for _, u in got)


def _cad_row(t, k) -> tuple:
    """(values, with_unit) of a required [x, y, z] point key."""
    v = t.get(k, list, required=True)
    if len(v) != 3:
        t.fail(k, "must be one [x, y, z] point in CAD coordinates")
    vals, unit = t.rows(k, 1, "length", "coordinates", min_rows=3)
    return tuple(float(v) for v in vals[:, 0]), tuple(bool(u) for u in unit[:, 0])


WING_ONLY = 'is a wing-frame key (metres); with frame = "cad" give the CAD coordinates'


def point_mass(t, i: int, cad: list) -> PointMass:
    """A [[point_mass]] entry; a CAD-frame one is appended to `cad` and placed at the origin."""
    name = t.get("name", str, f"point_mass_{i + 1}")
    m = t.positive("mass", required=True)
    if _frame(t) == "cad":
        for new, old in t.written.items():
            if new in XYZ:
                t.fail(new, f"{WING_ONLY} as x, y, z")
        values, unit = _cad_point(t)
        cad.append(CadPosition(t.where, ("point_mass", i), (values,), (unit,)))
        return PointMass(name, m, np.zeros(3))
    y = t.get("y", float, required=True)
    if y <= 0:
        t.fail("y", f"must be > 0 (starboard side; the item is mirrored to port), got {y:g}")
    return PointMass(name, m, np.array([t.get("x", float, required=True), y,
                                        t.get("z", float, 0.0)]))


def fuel_tank(t, i: int, cad: list) -> FuelTank:
    """A [[fuel_tank]] entry: y_from, y_to (wing frame) or inboard_end, outboard_end (CAD
    points on the tank's ends, frame = "cad"); a CAD-frame one is appended to `cad`."""
    name = t.get("name", str, f"fuel_tank_{i + 1}")
    mass = t.positive("mass", required=True)
    dist = t.choice("distribution", ("uniform", "chord"), "uniform")
    cg = t.fraction("cg_chord_fraction")
    if _frame(t) == "cad":
        for k in ("y_from", "y_to"):
            if k in t.data:
                t.fail(k, f"{WING_ONLY} of the tank's ends as inboard_end = [x, y, z] and "
                          "outboard_end = [x, y, z]")
        ends = [_cad_row(t, k) for k in ("inboard_end", "outboard_end")]
        cad.append(CadPosition(t.where, ("fuel_tank", i), tuple(e[0] for e in ends),
                               tuple(e[1] for e in ends)))
        y_from, y_to = PLACEHOLDER_SPAN
    else:
        for k in ("inboard_end", "outboard_end"):
            if k in t.data:
                t.fail(k, 'is a CAD point: give frame = "cad" (or y_from and y_to in the wing '
                          'frame)')
        y_from = t.positive("y_from", required=True, allow_zero=True)
        y_to = t.positive("y_to", required=True)
        if y_to <= y_from:
            t.fail("y_to", f"must be greater than {t.written.get('y_from', 'y_from')} "
                           f"({y_from:g} m)")
    return FuelTank(name=name, mass_kg=mass, y_from_m=y_from, y_to_m=y_to, distribution=dist,
                    cg_chord_fraction=cg)


def spar(t, cad: list) -> SparSpec:
    """The [spar] table: chord_fraction, or points = [[x, y, z], ...] (wing or CAD frame), or the
    older line = [[y, x, z], ...] (wing frame, with a warning); rib_y (wing-frame y)."""
    ribs = _ribs(t)
    frame = _frame(t)
    given = [k for k in ("chord_fraction", "points", "line") if k in t.data]
    if len(given) > 1:
        t.fail(given[1], f"give either {given[0]} or {given[1]}, not both (the spar is a chord "
                         "fraction or a line of points)")
    t.used.update(("chord_fraction", "points", "line"))
    if "line" in t.data:
        if frame == "cad":
            t.fail("line", "holds wing-frame [y, x, z] points; with frame = \"cad\" give "
                           "points = [[x, y, z], ...] in CAD coordinates")
        t.warnings.append(f"{t.key('line')}: write the spar line as points = [[x, y, z], ...] "
                          "(x, y, z in this order; line = [[y, x, z], ...] still works)")
        arr, _ = t.rows("line", 3, "length", "[y, x, z] points", min_rows=2)
        arr = arr[:, [1, 0, 2]]
        key = "line"
        if t.spelled is not None:
            t.spelled["spar.points"] = "spar.line"
    elif "points" in t.data:
        arr, unit = t.rows("points", 3, "length", "[x, y, z] points", min_rows=2)
        key = "points"
        if frame == "cad":
            cad.append(CadPosition(t.key("points"), ("spar",), tuple(map(tuple, arr.tolist())),
                                   tuple(map(tuple, unit.tolist()))))
            return SparSpec(None, (), rib_y_m=ribs)
    else:
        if frame == "cad":
            t.fail("frame", 'applies to spar points; give points = [[x, y, z], ...] or drop it')
        return SparSpec(t.fraction("chord_fraction", 0.25), rib_y_m=ribs)
    if np.any(np.diff(arr[:, 1]) <= 0):
        t.fail(key, "must be at least two points with y increasing (root to tip)")
    return SparSpec(None, tuple(map(tuple, arr[:, [1, 0, 2]])), rib_y_m=ribs)


def _ribs(t) -> tuple:
    got = t.rows("rib_y", 1, "length", "spanwise positions (wing-frame y)")
    if got is None:
        return ()
    arr = got[0][:, 0]
    if not np.all(np.isfinite(arr)) or np.any(np.diff(arr) <= 0) or arr[0] < 0:
        t.fail("rib_y", "must be finite, >= 0 and increase strictly")
    return tuple(float(v) for v in arr)


def moment_reference(t, cad: list):
    """The [moment_reference] point (wing frame, (3,) array) or None for a CAD-frame one (then
    appended to `cad`)."""
    if _frame(t) == "cad":
        for new, old in t.written.items():
            if new in XYZ:
                t.fail(new, f"{WING_ONLY} as x, y, z")
        values, unit = _cad_point(t)
        cad.append(CadPosition(t.where, ("moment_reference",), (values,), (unit,)))
        return None
    return np.array([t.get("x", float, required=True), t.get("y", float, 0.0),
                     t.get("z", float, 0.0)])
