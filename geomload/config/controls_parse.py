"""Case-file sections for control surfaces, unsymmetric and flaps-down cases and the tail.

Sections (our own key names; all SI, angles in degrees):

- ``[[control_surface]]``: name, kind ("aileron" or "flap"), y_from_m, y_to_m, hinge_fraction
  (hinge line as a fraction of the local chord from the leading edge), side ("both",
  "starboard", "port"), mode ("symmetric" or "antisymmetric"; default antisymmetric for an
  aileron, symmetric for a flap), delta_min_deg, delta_max_deg (trailing edge down positive).
- ``[rolling]``: category ("normal", "utility", "commuter", "acrobatic"; default from
  [envelope]), aileron (a control_surface name), methods (["simplified", "lattice"]).
- ``[flaps]``: flap (a control_surface name), deflection_deg, v_sf (stall speed flaps down,
  m/s EAS, required), v_f (flap design speed, m/s EAS; default the rule minimum).
- ``[tail]``: area_m2, x_ac_m (x of the tailplane aerodynamic centre, wing frame, aft +),
  cm0_fuselage (optional, nose-up +, on the wing S and MAC).
- ``[cg]``: x_m = [forward, aft] (wing frame, m).

Checks that need only the file are made here (surfaces overlapping, hinge at 0 or 1 of the
chord, limits, tail arm zero or negative); those that need the wing (span range, c.g. within
the MAC) when the run has cut it (:func:`check_controls_against_wing`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

from geomload.aero.controls import ControlSurface, check_controls
from geomload.errors import AeroError, CaseError

SECTION_KEYS = ("control_surface", "rolling", "flaps", "tail", "cg")
ROLL_METHODS = ("simplified", "lattice")
ROLL_CATEGORIES = ("normal", "utility", "commuter", "acrobatic")


@dataclass(frozen=True)
class RollingSpec:
    """[rolling]: category of 23.349 (side factor), aileron surface name, methods."""

    category: str
    aileron: str
    methods: tuple = ROLL_METHODS


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
    cg_x_m: (forward, aft) c.g. x (m) or () when no [cg]."""

    surfaces: tuple = ()
    rolling: Optional[RollingSpec] = None
    flaps: Optional[FlapsSpec] = None
    tail: Optional[TailSpec] = None
    cg_x_m: tuple = ()

    def surface(self, name: str) -> ControlSurface:
        return next(c for c in self.surfaces if c.name == name)


def _surface(t, i: int) -> ControlSurface:
    name = t.get("name", str, f"surface_{i + 1}")
    kind = t.choice("kind", ("aileron", "flap"), required=True)
    mode = t.choice("mode", ("symmetric", "antisymmetric"),
                    "antisymmetric" if kind == "aileron" else "symmetric")
    return ControlSurface(
        name=name, kind=kind, y_from_m=t.positive("y_from_m", required=True, allow_zero=True),
        y_to_m=t.positive("y_to_m", required=True),
        hinge_fraction=t.get("hinge_fraction", float, required=True),
        side=t.choice("side", ("both", "starboard", "port"), "both"), mode=mode,
        delta_min_deg=t.get("delta_min_deg", float, -20.0),
        delta_max_deg=t.get("delta_max_deg", float, 20.0))


def parse_controls(top, raw: dict, path: str, table_cls, envelope) -> Optional[ControlsSpec]:
    """The ControlsSpec of a case file (None when it has none of SECTION_KEYS).

    top: the top-level table reader; raw: the parsed TOML; table_cls: the reader class;
    envelope: the FlightEnvelopeSpec or None (rolling and flaps cases need one)."""
    if not any(k in raw for k in SECTION_KEYS):
        return None
    surfaces = []
    for i, item in enumerate(top.get("control_surface", list, [])):
        t = table_cls(item, f"control_surface[{i + 1}]", path)
        surfaces.append(_surface(t, i))
        t.done()
    try:
        check_controls(surfaces, math.inf, key="control_surface")
    except AeroError as exc:
        raise CaseError(f"{path}: {exc}") from None
    by_name = {c.name: c for c in surfaces}

    def sub(k):
        return table_cls(top.get(k, dict, None) or {}, k, path)

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
        if envelope is None:
            t.fail("", "rolling cases need an [envelope] (V_A, V_C, V_D and n_pos)")
        t.done()
        rolling = RollingSpec(cat, ail, tuple(dict.fromkeys(methods)))
    if "flaps" in raw:
        t = sub("flaps")
        flap = named(t, "flap", "flap")
        c = by_name[flap]
        if c.side != "both" or c.mode != "symmetric":
            t.fail("flap", f"{flap!r} must be on both sides with mode 'symmetric'")
        d = t.get("deflection_deg", float, required=True)
        if not c.delta_min_deg <= d <= c.delta_max_deg:
            t.fail("deflection_deg", f"{d:g} deg is outside the surface limits "
                                     f"{c.delta_min_deg:g}..{c.delta_max_deg:g} deg")
        v_sf, v_f = t.positive("v_sf", required=True), t.positive("v_f")
        if envelope is None:
            t.fail("", "flaps-down cases need an [envelope] (stall speed and lift slope)")
        t.done()
        flaps = FlapsSpec(flap, d, v_sf, v_f)
    cg = ()
    if "cg" in raw:
        t = sub("cg")
        xs = t.get("x_m", list, required=True)
        if len(xs) != 2 or any(isinstance(v, bool) or not isinstance(v, (int, float))
                               or not math.isfinite(v) for v in xs) or xs[0] > xs[1]:
            t.fail("x_m", "must be [forward, aft] (two finite numbers, forward <= aft, m)")
        cg = (float(xs[0]), float(xs[1]))
        t.done()
    if "tail" in raw:
        t = sub("tail")
        tail = TailSpec(t.positive("area_m2", required=True), t.get("x_ac_m", float,
                                                                       required=True),
                        t.get("cm0_fuselage", float, 0.0))
        if not cg:
            t.fail("", "a tail needs the c.g. range [cg] x_m = [forward, aft]")
        if tail.x_ac_m - cg[1] <= 0.0:
            t.fail("x_ac_m", f"tail arm {tail.x_ac_m - cg[1]:g} m from the aft c.g. "
                             f"({cg[1]:g} m): the tail must lie aft of the c.g.")
        t.done()
    elif cg:
        raise CaseError(f"{path}: cg: a c.g. range without a [tail] is not used; give [tail]")
    return ControlsSpec(tuple(surfaces), rolling, flaps, tail, cg)


def check_controls_against_wing(spec: Optional[ControlsSpec], semispan: float, mac: float,
                                x_le_mac: float, path: str = "") -> list:
    """Span range of every surface and the c.g. within 50 % MAC of the MAC (CaseError naming
    the key); returns the warnings (a deflection limit beyond linear theory)."""
    if spec is None:
        return []
    from geomload.aero.pitch_trim import check_cg

    pre = f"{path}: " if path else ""
    try:
        warns = check_controls(spec.surfaces, semispan, key="control_surface")
    except AeroError as exc:
        raise CaseError(f"{pre}{exc}") from None
    for k, x in zip(("forward", "aft"), spec.cg_x_m):
        try:
            check_cg(x, x_le_mac, mac, key=f"cg.x_m ({k})")
        except CaseError as exc:
            raise CaseError(f"{pre}{exc}") from None
    return warns
