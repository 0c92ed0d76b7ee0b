"""Case-file sections for control surfaces, unsymmetric and flaps-down cases and the tail.

Sections (our own key names). A length, area or speed is a number in SI (m, m2, m/s) or a
text with its unit ("1150 mm", "1.7 ft2", "26 kt"); an angle is a number in degrees or a text
("18 deg", "0.3 rad"), as everywhere in the case file (:mod:`geomload.config.quantities`). The
older keys ending in their unit (y_from_m, delta_max_deg, area_m2, x_ac_m, x_m) still take a
number in that unit; an error names the key as the file writes it.

- ``[[control_surface]]``: name, kind ("aileron" or "flap"), y_from, y_to (wing-frame y),
  hinge_fraction (hinge line as a fraction of the local chord from the leading edge), side
  ("both", "starboard", "port"), mode ("symmetric" or "antisymmetric"; default antisymmetric
  for an aileron, symmetric for a flap), delta_min, delta_max (trailing edge down positive).
  Or, instead of y_from, y_to and hinge_fraction, ``geometry_body = N``: the span range
  and hinge of the control-surface body N of the CAD file (the body number the run's warnings
  and `geomload inspect` give), taken from the geometry when the run has read it
  (:func:`resolve_geometry_controls`).
- ``[rolling]``: category ("normal", "utility", "commuter", "acrobatic"; default from
  [envelope]), aileron (a control_surface name), methods (["simplified", "lattice"]),
  roll_states (the lattice method's roll states, ["steady", "initial"] by default: steady roll,
  and the instant of the sudden deflection with no roll rate yet).
- ``[flaps]``: flap (a control_surface name), deflection, v_sf (stall speed flaps down, EAS,
  required), v_f (flap design speed, EAS; default the rule minimum).
- ``[tail]``: area (tailplane), x_ac (x of the tailplane aerodynamic centre, wing frame, aft
  +), cm0_fuselage (optional, nose-up +, on the wing S and MAC).
- ``[cg]``: x = [forward, aft] (wing-frame x).

Checks that need only the file are made here (surfaces overlapping, hinge at 0 or 1 of the
chord, limits, tail arm zero or negative); those that need the wing (span range, c.g. within
the MAC) when the run has cut it (:func:`check_controls_against_wing`).
"""

from __future__ import annotations

import dataclasses
import math
import re
from dataclasses import dataclass
from typing import Optional

from geomload.aero.controls import ControlSurface, check_controls
from geomload.errors import AeroError, CaseError

SECTION_KEYS = ("control_surface", "rolling", "flaps", "tail", "cg")
ROLL_METHODS = ("simplified", "lattice")
ROLL_STATES = ("steady", "initial")
ROLL_CATEGORIES = ("normal", "utility", "commuter", "acrobatic")
GEOMETRY_KEYS = ("y_from", "y_to", "hinge_fraction")  # what geometry_body supplies
# the fields of a ControlSurface whose case-file key has another name (record field -> key)
SURFACE_KEYS = {"y_from_m": "y_from", "y_to_m": "y_to", "delta_min_deg": "delta_min",
                "delta_max_deg": "delta_max", "hinge_fraction": "hinge_fraction"}
HINGE_UNIFORM_TOL = 0.005  # hinge fractions of a CAD surface spread less than 0.5 % of the
# chord are one constant hinge (their mean): below what the geometry measures the hinge to
# (about 1 % c) and a small part of one chordwise panel of the lattice


@dataclass(frozen=True)
class RollingSpec:
    """[rolling]: category of 23.349 (side factor), aileron surface name, methods, and the
    roll states of the lattice method ("steady", "initial")."""

    category: str
    aileron: str
    methods: tuple = ROLL_METHODS
    roll_states: tuple = ROLL_STATES


@dataclass(frozen=True)
class GeometrySurface:
    """A [[control_surface]] whose span range and hinge come from a CAD control-surface body.

    index: its position in the file's control_surface list (0-based); body: the 1-based body
    number of the CAD file; the other fields as `ControlSurface` (kind, side, mode, limits)."""

    index: int
    name: str
    kind: str
    body: int
    side: str = "both"
    mode: str = "symmetric"
    delta_min_deg: float = -20.0
    delta_max_deg: float = 20.0

    @property
    def key(self) -> str:
        return f"control_surface[{self.index + 1}]"


@dataclass(frozen=True)
class FlapsSpec:
    """[flaps]: flap surface name, deflection (deg), v_sf and v_f (m/s EAS, v_f None = the
    23.345(b) minimum)."""

    flap: str
    deflection_deg: float
    v_sf: float
    v_f: Optional[float] = None


@dataclass(frozen=True)
class TailSpec:
    """[tail]: tailplane area (m^2), x of its aerodynamic centre (m), fuselage Cm0."""

    area_m2: float
    x_ac_m: float
    cm0_fuselage: float = 0.0


@dataclass(frozen=True)
class ControlsSpec:
    """The control surfaces and what the run does with them.

    surfaces: tuple of ControlSurface; rolling, flaps, tail: the sections or None;
    cg_x_m: (forward, aft) c.g. x (m) or () when no [cg]; from_geometry: GeometrySurface
    entries not yet resolved against the CAD (`resolve_geometry_controls` moves them into
    `surfaces`, in file order)."""

    surfaces: tuple = ()
    rolling: Optional[RollingSpec] = None
    flaps: Optional[FlapsSpec] = None
    tail: Optional[TailSpec] = None
    cg_x_m: tuple = ()
    from_geometry: tuple = ()
    # (key as the checks name it, key as the file writes it), e.g.
    # ("control_surface.aileron.y_to_m", "control_surface.aileron.y_to"): see `as_written`
    key_names: tuple = ()

    def as_written(self, text: str) -> str:
        """`text` (an error or warning) with each key named as the case file writes it."""
        for old, new in self.key_names:
            text = re.sub(re.escape(old) + r"(?![A-Za-z0-9_])", lambda _m, n=new: n, text)
        return text

    def surface(self, name: str) -> ControlSurface:
        for c in self.surfaces:
            if c.name == name:
                return c
        for g in self.from_geometry:
            if g.name == name:
                raise CaseError(f"{g.key}.geometry_body: surface {name!r} (body {g.body}) has "
                                "not been taken from the geometry yet")
        raise CaseError(f"control_surface: no surface named {name!r}")


def _surface(t, i: int):
    """A ControlSurface, or a GeometrySurface when the entry has geometry_body."""
    name = t.get("name", str, f"surface_{i + 1}")
    kind = t.choice("kind", ("aileron", "flap"), required=True)
    mode = t.choice("mode", ("symmetric", "antisymmetric"),
                    "antisymmetric" if kind == "aileron" else "symmetric")
    if "geometry_body" in t.data:
        body = t.get("geometry_body", int, required=True)
        if body < 1:
            t.fail("geometry_body", f"must be a body number >= 1, got {body}")
        for k in GEOMETRY_KEYS:
            if k in t.data:
                t.fail(k, "not allowed with geometry_body (the span range and the hinge come "
                          "from the CAD body)")
        return GeometrySurface(
            index=i, name=name, kind=kind, body=body,
            side=t.choice("side", ("both", "starboard", "port"), "both"), mode=mode,
            delta_min_deg=t.get("delta_min", float, -20.0),
            delta_max_deg=t.get("delta_max", float, 20.0))
    return ControlSurface(
        name=name, kind=kind, y_from_m=t.positive("y_from", required=True, allow_zero=True),
        y_to_m=t.positive("y_to", required=True),
        hinge_fraction=t.get("hinge_fraction", float, required=True),
        side=t.choice("side", ("both", "starboard", "port"), "both"), mode=mode,
        delta_min_deg=t.get("delta_min", float, -20.0),
        delta_max_deg=t.get("delta_max", float, 20.0))


def _surface_names(t, c) -> list:
    """(key as check_controls names it, key as written) pairs of surface `c` read from table
    `t`: the key the file used (an older spelling or the new one); a key it left out by its
    current name, or geometry_body for what a CAD body supplies. The surface stays named by
    its name (``control_surface.aileron.y_to``), as check_controls names it."""
    out = []
    for field, key in SURFACE_KEYS.items():
        if key in t.written:
            new = t.written[key]
        elif isinstance(c, GeometrySurface) and key in GEOMETRY_KEYS:
            new = "geometry_body"
        else:
            new = key
        if new != field:
            out.append((f"control_surface.{c.name}.{field}", f"control_surface.{c.name}.{new}"))
    return out


def parse_controls(top, raw: dict, path: str, table_cls, envelope, warnings=None,
                   spelled=None) -> Optional[ControlsSpec]:
    """The ControlsSpec of a case file (None when it has none of SECTION_KEYS).

    top: the top-level table reader; raw: the parsed TOML; table_cls: the reader class;
    envelope: the FlightEnvelopeSpec or None (rolling and flaps cases need one); warnings,
    spelled: the reader's warning list and its (current key -> key as written) dictionary,
    both added to."""
    if not any(k in raw for k in SECTION_KEYS):
        return None
    surfaces, refs, names = [], [], []

    def table(item, where):
        return table_cls(item, where, path, warnings, spelled)

    for i, item in enumerate(top.get("control_surface", list, [])):
        t = table(item, f"control_surface[{i + 1}]")
        c = _surface(t, i)
        (refs if isinstance(c, GeometrySurface) else surfaces).append(c)
        names += _surface_names(t, c)
        t.done()
    spec = ControlsSpec(key_names=tuple(names))
    try:
        check_controls(surfaces, math.inf, key="control_surface")
        _check_refs(refs, surfaces)
    except AeroError as exc:
        raise CaseError(f"{path}: {spec.as_written(str(exc))}") from None
    by_name = {c.name: c for c in surfaces + refs}

    def sub(k):
        return table(top.get(k, dict, None) or {}, k)

    def named(t, k, kind):
        n = t.get(k, str, required=True)
        if n not in by_name or by_name[n].kind != kind:
            t.fail(k, f"{n!r} is not a control_surface of kind {kind!r} "
                      f"(known: {', '.join(sorted(by_name)) or 'none'})")
        return n

    rolling = flaps = tail = None
    if "rolling" in raw:
        t = sub("rolling")
        default_cat = None
        if envelope is not None and envelope.category in ROLL_CATEGORIES:
            default_cat = envelope.category
        cat = t.choice("category", ROLL_CATEGORIES, default_cat, required=default_cat is None)
        ail = named(t, "aileron", "aileron")
        if by_name[ail].side != "both" or by_name[ail].mode != "antisymmetric":
            t.fail("aileron", f"{ail!r} must be on both sides with mode 'antisymmetric'")
        methods = t.get("methods", list, list(ROLL_METHODS))
        if not methods or any(m not in ROLL_METHODS for m in methods):
            t.fail("methods", f"a non-empty list of {', '.join(map(repr, ROLL_METHODS))}")
        states = t.get("roll_states", list, list(ROLL_STATES))
        if not states or any(m not in ROLL_STATES for m in states):
            t.fail("roll_states", f"a non-empty list of {', '.join(map(repr, ROLL_STATES))}")
        if envelope is None:
            t.fail("", "rolling cases need an [envelope] (V_A, V_C, V_D and n_pos)")
        t.done()
        rolling = RollingSpec(cat, ail, tuple(dict.fromkeys(methods)),
                              tuple(dict.fromkeys(states)))
    if "flaps" in raw:
        t = sub("flaps")
        flap = named(t, "flap", "flap")
        c = by_name[flap]
        if c.side != "both" or c.mode != "symmetric":
            t.fail("flap", f"{flap!r} must be on both sides with mode 'symmetric'")
        d = t.get("deflection", float, required=True)
        if not c.delta_min_deg <= d <= c.delta_max_deg:
            t.fail("deflection", f"{d:g} deg is outside the surface limits "
                                 f"{c.delta_min_deg:g}..{c.delta_max_deg:g} deg")
        v_sf, v_f = t.positive("v_sf", required=True), t.positive("v_f")
        if envelope is None:
            t.fail("", "flaps-down cases need an [envelope] (stall speed and lift slope)")
        t.done()
        flaps = FlapsSpec(flap, d, v_sf, v_f)
    cg = ()
    if "cg" in raw:
        t = sub("cg")
        got = t.rows("x", 1, "length", "wing-frame x positions") if "x" in t.data else None
        if got is None:
            t.get("x", list, required=True)  # the missing-key error (or a near spelling)
        xs = got[0][:, 0]
        if len(xs) != 2 or xs[0] > xs[1]:
            t.fail("x", "must be [forward, aft] (two wing-frame x positions, forward <= aft)")
        cg = (float(xs[0]), float(xs[1]))
        if "x" in t.written:
            names.append(("cg.x_m", f"cg.{t.written['x']}"))
        else:
            names.append(("cg.x_m", "cg.x"))
        t.done()
    if "tail" in raw:
        t = sub("tail")
        tail = TailSpec(t.positive("area", required=True), t.get("x_ac", float, required=True),
                        t.get("cm0_fuselage", float, 0.0))
        for key, rec in (("x_ac", "x_ac_m"), ("area", "area_m2")):
            names.append((f"tail.{rec}", f"tail.{t.written.get(key, key)}"))
        if not cg:
            t.fail("", "a tail needs the c.g. range [cg] x = [forward, aft]")
        if tail.x_ac_m - cg[1] <= 0.0:
            t.fail("x_ac", f"tail arm {tail.x_ac_m - cg[1]:g} m from the aft c.g. "
                           f"({cg[1]:g} m): the tail must lie aft of the c.g.")
        t.done()
    elif cg:
        raise CaseError(f"{path}: cg: a c.g. range without a [tail] is not used; give [tail]")
    return ControlsSpec(tuple(surfaces), rolling, flaps, tail, cg, tuple(refs), tuple(names))


def _check_refs(refs, surfaces) -> None:
    """Names unique among all surfaces, each CAD body named once, limits as check_controls."""
    names = {c.name for c in surfaces}
    bodies = {}
    for g in refs:
        if g.name in names:
            raise AeroError(f"{g.key}.name: duplicate control-surface name {g.name!r}")
        names.add(g.name)
        if g.body in bodies:
            raise AeroError(f"{g.key}.geometry_body: body {g.body} is already "
                            f"{bodies[g.body]!r}")
        bodies[g.body] = g.name
        probe = ControlSurface(g.name, g.kind, 0.0, 1.0, 0.5, g.side, g.mode, g.delta_min_deg,
                               g.delta_max_deg)
        check_controls([probe], 1.0, key="control_surface")


def _from_record(g: GeometrySurface, rec, stations_y) -> ControlSurface:
    """The ControlSurface of GeometrySurface g from the geometry's ControlSurfaceGeometry rec:
    its span range, and its hinge (one constant fraction when the stations' values spread less
    than HINGE_UNIFORM_TOL, else a (y, fraction) table at the stations that carry it)."""
    import numpy as np

    h = np.asarray(rec.hinge_x_over_c, float)
    ys = np.asarray(stations_y, float)[list(rec.stations)]
    table = ()
    if h.size > 1 and float(h.max() - h.min()) > HINGE_UNIFORM_TOL:
        table = tuple((float(y), float(f)) for y, f in zip(ys, h))
    return ControlSurface(name=g.name, kind=g.kind, y_from_m=float(rec.y_from_m),
                          y_to_m=float(rec.y_to_m), hinge_fraction=float(np.mean(h)),
                          side=g.side, mode=g.mode, delta_min_deg=g.delta_min_deg,
                          delta_max_deg=g.delta_max_deg, hinge_table=table)


def resolve_geometry_controls(spec: Optional[ControlsSpec], wing, path: str = "") -> tuple:
    """(ControlsSpec, warnings): the `geometry_body` entries of the case file made into
    ControlSurface records from the CAD's control-surface bodies (`wing.control_surfaces`,
    `geometry.records.ControlSurfaceGeometry`), in file order among the others.

    CaseError (one line naming ``control_surface[i].geometry_body``) when the body is not a
    control surface the geometry found. A warning for every control-surface body of the CAD
    that no [[control_surface]] names or overlaps: it is in the sections (their chord runs to
    its trailing edge) but no case deflects it. `spec` None (no control sections): only those
    warnings."""
    pre = f"{path}: " if path else ""
    recs = tuple(getattr(wing, "control_surfaces", ()) or ())
    y_st = wing.stations.y
    out = spec
    if spec is not None and spec.from_geometry:
        by_body = {int(r.body): r for r in recs}
        made = {}
        for g in spec.from_geometry:
            rec = by_body.get(int(g.body))
            if rec is None:
                found = ", ".join(str(b) for b in sorted(by_body)) or "none"
                raise CaseError(f"{pre}{g.key}.geometry_body: body {g.body} is not a control "
                                f"surface the geometry found in the CAD file (control-surface "
                                f"bodies found: {found})")
            made[g.index] = _from_record(g, rec, y_st)
        order = sorted([(g.index, made[g.index]) for g in spec.from_geometry]
                       + [(None, c) for c in spec.surfaces], key=lambda p: _file_order(p, spec))
        out = dataclasses.replace(spec, surfaces=tuple(c for _, c in order), from_geometry=())
    warnings = []
    used = out.surfaces if out is not None else ()
    named = {int(g.body) for g in (spec.from_geometry if spec is not None else ())}
    for r in recs:
        if int(r.body) in named:
            continue
        if any(c.y_from_m < r.y_to_m and r.y_from_m < c.y_to_m for c in used):
            continue
        warnings.append(
            f"control_surface: body {r.body} of the CAD file is a control surface (y = "
            f"{r.y_from_m:.4g} to {r.y_to_m:.4g} m) that no [[control_surface]] describes: it "
            f"is analysed undeflected; add a [[control_surface]] with geometry_body = {r.body} "
            "to deflect it")
    return out, warnings


def _file_order(pair, spec):
    """Sort key: a resolved entry's own index; a hand-described surface keeps its place among
    the hand-described ones, placed by the indices the GeometrySurface entries leave free."""
    idx, c = pair
    if idx is not None:
        return idx
    taken = {g.index for g in spec.from_geometry}
    free = [i for i in range(len(spec.surfaces) + len(spec.from_geometry)) if i not in taken]
    return free[spec.surfaces.index(c)]


def check_controls_against_wing(spec: Optional[ControlsSpec], semispan: float, mac: float,
                                x_le_mac: float, path: str = "") -> list:
    """Span range of every surface, the c.g. within 50 % MAC of the MAC and the tail arm from
    the aft c.g. at least the trim's minimum (CaseError naming the key as the file writes it);
    returns the warnings (a deflection limit beyond linear theory)."""
    if spec is None:
        return []
    from geomload.aero.pitch_trim import check_cg

    pre = f"{path}: " if path else ""
    try:
        warns = check_controls(spec.surfaces, semispan, key="control_surface")
    except AeroError as exc:
        raise CaseError(f"{pre}{spec.as_written(str(exc))}") from None
    cg_warns = []
    for k, x in zip(("forward", "aft"), spec.cg_x_m):
        try:
            check_cg(x, x_le_mac, mac, key=f"cg.x_m ({k})")
        except CaseError as exc:
            raise CaseError(f"{pre}{spec.as_written(str(exc))}") from None
        f = (float(x) - x_le_mac) / mac
        if not 0.0 <= f <= 1.0:  # accepted, but far from any usual c.g. range: say so
            cg_warns.append(spec.as_written(
                f"cg.x_m ({k}): c.g. at {float(x):g} m is {100 * f:.0f} % MAC, outside the MAC "
                f"(LE {x_le_mac:.4g} m, MAC {mac:.4g} m); check the position and its frame"))
    if spec.tail is not None and spec.cg_x_m:
        from geomload.aero.pitch_trim import MIN_TAIL_ARM_MAC

        arm = spec.tail.x_ac_m - max(spec.cg_x_m)  # the shortest arm: from the aft c.g.
        if not arm >= MIN_TAIL_ARM_MAC * mac:  # the trim's own limit, said before any case runs
            raise CaseError(f"{pre}{spec.as_written('tail.x_ac_m')}: tail arm {arm:g} m from "
                            f"the aft c.g. must be at least {MIN_TAIL_ARM_MAC:g} MAC "
                            f"({MIN_TAIL_ARM_MAC * mac:.4g} m) aft (a tail behind the c.g.)")
    return [spec.as_written(w) for w in warns] + cg_warns
