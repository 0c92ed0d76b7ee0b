"""Orchestration of the cases that need control surfaces or a tail: the pitch trim with the
balancing tail load (forward and aft c.g.), the rolling cases (14 CFR 23.349 simplified
method, conditions A and, acrobatic, F; lattice method with the 23.455 deflections in steady
roll and at the initial instant with no roll rate) and the flaps-down cases (23.345); control
surfaces a case file takes from the CAD's bodies (``geometry_body``) are resolved here when
the run has not resolved them (:func:`case_with_geometry_controls`).

Each stage keeps its physics: the lattice with control surfaces and roll rate
(:mod:`geomload.aero.roll`, its models per Mach :mod:`geomload.aero.control_models`), the
pitch trim (:mod:`geomload.aero.pitch_trim`), the rule cases
(:mod:`geomload.loads.rules_unsymmetric`), the loads of each side (:mod:`geomload.loads.
flight_case`, the same applied-load and beam integration as a symmetric case, inertia relief
on both sides) and what both sides give together (:mod:`geomload.loads.side_loads`: the
normal force, the airload's rolling moment, the aileron torsion). An unsymmetric case
integrates the starboard and the port side on its own.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from geomload.aero.atmosphere import airspeeds, dynamic_pressure
from geomload.aero.atmosphere import mach as mach_number
from geomload.aero.control_models import ControlModels, axis_coefficients
from geomload.aero.models import lattice_mach
from geomload.aero.trim import TrimmedCase
from geomload.config.schema import LoadCase
from geomload.errors import AeroError, CaseError
from geomload.loads.flight_case import applied_loads, case_loads
from geomload.loads.side_loads import (SideSolution, TrimView, aileron_torsion,
                                       airload_rolling_moment, normal_force)
from geomload.loads.case_records import CaseResult, ControlState
from geomload.units import G0

SIDES = ("starboard", "port")
BODY_AXIS_ITER = 6  # fixed-point steps on the lift so that L cos a + D sin a is the normal force
BODY_AXIS_TOL = 1e-9  # relative change of the lift at which those steps stop
CG_LABELS = ("cg fwd", "cg aft")


# ------------------------------------------------------------------------------- pitch trim
def _pitch(ctx, coefficients, n, weight, q, x_cg):
    from geomload.aero.pitch_trim import Tailplane, trim_pitch

    lat, spec = ctx.models.lattice, ctx.case.controls
    return trim_pitch(coefficients, lat.s_ref, lat.c_ref, float(lat.x_ref[0]), n, weight, q,
                      x_cg, Tailplane(spec.tail.area_m2, spec.tail.x_ac_m),
                      spec.tail.cm0_fuselage, x_le_mac_m=ctx.x_le_mac)


def flight_condition(lc, ctx) -> tuple:
    """(v_eas, v_tas, mach, q_pa) of a LoadCase in the run's one atmosphere (ctx.atmosphere);
    AeroError naming the case when its Mach is 1 or more (linear subsonic theory)."""
    v_eas, v_tas = airspeeds(lc.speed_m_s, lc.speed_type, lc.altitude_m, ctx.atmosphere)
    mach = mach_number(v_tas, lc.altitude_m, ctx.atmosphere)
    if not math.isfinite(mach) or mach >= 1.0:
        raise AeroError(f"{ctx.case.path}: load_case '{lc.name}': Mach {mach:.3f} >= 1")
    return v_eas, v_tas, mach, dynamic_pressure(v_tas, lc.altitude_m, ctx.atmosphere)


def symmetric_with_tail(lc, ctx, solve_case) -> list:
    """A LoadCase trimmed in pitch at the forward and aft c.g.: two CaseResults (tail load and
    wing normal force recorded). The wing force replaces lift_share x n W."""
    case, models = ctx.case, ctx.models
    v_eas, v_tas, mach, q = flight_condition(lc, ctx)
    mass = case.aircraft.gross_mass_kg if lc.mass_kg is None else lc.mass_kg
    cd0 = (lc.cd0 if lc.cd0 is not None else case.aircraft.cd0) or 0.0
    coefficients = axis_coefficients(
        models.get(mach).coefficients,
        models.induced_drag_form(mach) if case.body_axis else None, cd0)

    out = []
    for label, x_cg in zip(CG_LABELS, case.controls.cg_x_m):
        pt = _pitch(ctx, coefficients, lc.load_factor, mass * G0, q, x_cg)
        # the case at this c.g., named for it, with its tail load, its share and the wing's
        # normal force (built once)
        out.append(solve_case(lc, ctx, wing_force_N=pt.wing_lift_N, name=f"{lc.name} {label}",
                              tail=(pt.tail_load_N, x_cg,
                                    carried_share(pt.wing_lift_N, lc.load_factor, mass))))
    return out


def carried_share(wing_force_N: float, load_factor: float, mass_kg: float) -> float:
    """The wing's share of n W in a case trimmed with a tail (wing force / (n W)); nan at
    n = 0, where a share has no meaning."""
    nw = load_factor * mass_kg * G0
    return wing_force_N / nw if abs(nw) > 1e-9 * mass_kg * G0 else math.nan


def unused_lift_shares(case, load_cases) -> list:
    """Warnings for the lift_share values a pitch trim with a tail replaces (the wing force is
    then wing + tail = n W with the moments balanced; the share carried is reported per case)."""
    if case.controls is None or case.controls.tail is None:
        return []
    out = []
    given = [lc for lc in case.load_cases if lc.lift_share != 1.0]
    if given:
        who = ", ".join(f"'{lc.name}' ({lc.lift_share:g})" for lc in given)
        out.append(f"{case.path}: load_case.lift_share of {who} is not used: with [tail] and "
                   "[cg] the wing force comes from the pitch trim (wing + tail = n W); each "
                   "case reports the share it carries")
    if case.envelope is not None and case.envelope.lift_share != 1.0:
        out.append(f"{case.path}: envelope.lift_share {case.envelope.lift_share:g} is not used: "
                   "with [tail] and [cg] the wing force comes from the pitch trim")
    return out


# -------------------------------------------------------------------------- unsymmetric cases
def case_with_geometry_controls(case, wing) -> tuple:
    """(Case, warnings): the case with its ``geometry_body`` control surfaces taken from the
    CAD's control-surface bodies (`config.controls_parse.resolve_geometry_controls`), and a
    warning for each CAD control-surface body no [[control_surface]] describes (analysed
    undeflected). The case is returned unchanged when there is nothing to resolve."""
    from geomload.config.controls_parse import resolve_geometry_controls

    spec, warnings = resolve_geometry_controls(case.controls, wing, case.path)
    if spec is not case.controls:
        case = dataclasses.replace(case, controls=spec)
    return case, warnings


def _resolved(ctx, progress) -> tuple:
    """(ctx, warnings): ctx with the case's geometry_body surfaces resolved, reading the wing
    through the run's geometry stage (from compute()'s cache when it holds it) when the run
    has not resolved them already; then the surfaces checked against the wing."""
    from geomload.config.controls_parse import check_controls_against_wing
    from geomload.run_geometry import case_wing

    if not ctx.case.controls.from_geometry:
        return ctx, []
    names = [g.name for g in ctx.case.controls.from_geometry]
    _, wing = case_wing(ctx.case, progress, ctx.cache)
    case, warnings = case_with_geometry_controls(ctx.case, wing)
    pf = wing.planform
    more = check_controls_against_wing(case.controls, ctx.stations.semispan, pf.mac,
                                       pf.x_mac_le, case.path)
    # the run has given the other surfaces' warnings already
    warnings += [w for w in more if any(w.startswith(f"control_surface.{n}.") for n in names)]
    return dataclasses.replace(ctx, case=case), warnings


def unsymmetric_cases(ctx, vn, solve_case, progress) -> tuple:
    """(CaseResults, warnings) of the [rolling] and [flaps] cases, at the gross mass and the
    altitude of the first V-n diagram, each at every c.g. of [cg] when a tail is given."""
    from geomload.loads import rules_unsymmetric as ru

    spec = ctx.case.controls
    if spec is None or (spec.rolling is None and spec.flaps is None):
        return [], []
    ctx, warnings = _resolved(ctx, progress)
    spec, case = ctx.case.controls, ctx.case
    d = vn[0]
    sp, h, mass = d.speeds, d.altitude_m, d.mass_kg
    jobs = []
    cms = ControlModels(case, ctx.stations, progress, ctx.cache, ctx.lattice_key)
    if spec.rolling is not None:
        r = spec.rolling
        if "simplified" in r.methods:
            acro = r.category == "acrobatic"  # 23.349(a)(1): conditions A and F
            for rc in ru.simplified_rolling_cases(r.category, sp.v_maneuver, d.n_pos,
                                                  sp.v_cruise if acro else None,
                                                  d.n_neg if acro else None):
                jobs.append(("rolling", rc))
        if "lattice" in r.methods:
            ail = spec.surface(r.aileron)
            for rc in ru.lattice_rolling_cases(r.aileron, ail.delta_max_deg, sp.v_maneuver,
                                               sp.v_cruise, sp.v_dive, d.n_pos,
                                               states=r.roll_states):
                jobs.append(("rolling", rc))
    if spec.flaps is not None:
        f = spec.flaps
        rho0 = ctx.atmosphere(0.0)[0]
        s_ref = ctx.models.lattice.s_ref
        try:
            fcs, w = ru.flap_cases(f.flap, f.deflection_deg, d.v_stall_pos, f.v_sf,
                                   mass * G0 / s_ref, rho0, s_ref / ctx.models.lattice.b_ref,
                                   ctx.models.lift_slope(0.0), f.v_f)
        except CaseError as exc:  # the rule's check of a case-file speed: name the file
            raise CaseError(f"{ctx.case.path}: {exc}") from None
        warnings += [f"{ctx.case.path}: {t}" for t in w]
        jobs += [("flaps", fc) for fc in fcs]
    cgs = list(zip(CG_LABELS, spec.cg_x_m)) if spec.tail is not None else [("", None)]
    results = []
    total = len(jobs) * len(cgs)
    for kind, rc in jobs:
        for label, x_cg in cgs:
            results.append(_one(kind, rc, label, x_cg, h, mass, ctx, cms, solve_case))
            progress("unsymmetric cases", len(results), total)
    # the lattice's own check of the surfaces (key "controls.<name>") repeats the case file's
    # (config.controls_parse.check_controls_against_wing, under the keys as written): keep the
    # rest (e.g. a deflection met in a case)
    warnings += [w for w in cms.warnings if not w.startswith("controls.")]
    return results, warnings


def case_kind(kind: str, rc) -> str:
    """The CaseResult kind: "symmetric", "rolling" (23.349 simplified, or the lattice method in
    steady roll), "rolling_initial" (the lattice method at the instant of the sudden aileron
    deflection, no roll rate yet) or "flaps"."""
    if kind == "rolling" and getattr(rc, "roll_state", "steady") == "initial":
        return "rolling_initial"
    return kind


def _lc(name, v_eas, h, n, mass, lift_share):
    return LoadCase(name=name, speed_m_s=v_eas, speed_type="EAS", altitude_m=h, load_factor=n,
                    lift_share=lift_share, mass_kg=mass)


def _one(kind, rc, label, x_cg, h, mass, ctx, cms, solve_case) -> CaseResult:
    from geomload.loads import rules_unsymmetric as ru

    case = ctx.case
    name = rc.name + (f" {label}" if label else "")
    share = case.envelope.lift_share if case.envelope is not None else 1.0
    lc = _lc(name, rc.v_eas_m_s, h, rc.load_factor, mass, share)
    if kind == "rolling" and rc.method == "simplified":
        # condition A trimmed symmetric, then the airload of each side scaled by its factor
        if x_cg is not None:
            base = symmetric_with_tail(dataclasses.replace(lc, name=rc.name), ctx, solve_case)
            base = base[CG_LABELS.index(label)]
        else:
            base = solve_case(lc, ctx)
        return _simplified(base, rc, name, ctx)
    v_eas, v_tas, mach, q = flight_condition(lc, ctx)
    cm = cms.get(mach)
    defl = ({rc.flap: rc.flap_deg} if kind == "flaps" else {rc.aileron: rc.aileron_deg})
    weight = mass * G0
    tail = None
    if x_cg is not None:
        tail = _pitch(ctx, lambda a: cm.coefficients(a, defl), rc.load_factor, weight, q, x_cg)
        force = tail.wing_lift_N
        share = carried_share(force, rc.load_factor, mass)
    else:
        force = share * rc.load_factor * weight
    cd0 = case.aircraft.cd0 or 0.0
    lift = force
    for _ in range(BODY_AXIS_ITER):  # the force on the load-factor axis, from the lift
        st = ru.lattice_state(cm, rc, q, lift)
        sol = st.solution
        if not case.body_axis:
            break
        a = math.radians(st.alpha_deg)
        drag = q * sum(float(np.sum((s.drag_per_q + cd0 * s.chord_m) * s.width_m))
                       for s in (sol.starboard, sol.port))
        new = (force - drag * math.sin(a)) / math.cos(a)
        if abs(new - lift) <= BODY_AXIS_TOL * max(abs(force), 1.0):
            break
        lift = new
    sides = {}
    for side in SIDES:
        s = getattr(sol, side)
        trimmed = TrimmedCase(
            name=f"{name}__{side}", v_eas=v_eas, v_tas=v_tas, altitude_m=h, mach=mach,
            mach_lattice=lattice_mach(mach), q_pa=q, load_factor=rc.load_factor, mass_kg=mass,
            lift_share=share, force_required_N=force, cf_required=force / (q * cm.lattice.s_ref),
            CL_required=st.CL, alpha_deg=st.alpha_deg, cd0=cd0, body_axis=case.body_axis,
            solution=SideSolution(s.y_m, s.chord_m, s.lift_per_q, s.drag_per_q,
                                  s.moment_per_q))
        applied = applied_loads(ctx.grid, trimmed, s.width_m, ctx.masses_for(1.0),
                                case.point_masses)
        sides[side] = case_loads(ctx.grid, trimmed, applied, ctx.stations.semispan,
                                 case.ultimate_factor)
    stb, port = sides["starboard"], sides["port"]
    ctl = ControlState(rule=rc.rule, deflections_deg=st.deflections_deg, pb_2V=st.pb_2V,
                       CL=st.CL, Cl_airload=airload_rolling_moment(stb, port, cm.lattice))
    if kind == "rolling":
        cld, clp = cm.roll_derivatives(rc.aileron, st.alpha_deg, rc.aileron_deg, st.pb_2V)
        ctl = dataclasses.replace(ctl, Cl_delta_per_rad=cld, Cl_p=clp,
                                  Cl_aileron=cld * math.radians(rc.aileron_deg),
                                  Cl_damping=clp * st.pb_2V + 0.0,  # no -0.0 at p = 0
                                  **_aileron_torsion(sol, ctx.case.controls.surface(rc.aileron),
                                                     rc.aileron_deg, q))
    # the state's own totals (deflections, roll rate) and the starboard side's strips and panels
    aero = cm.half_solution(sol, ctx.models.get(mach).solve(st.alpha_deg))
    res = max(stb.equilibrium.residual, port.equilibrium.residual)
    return CaseResult(name=name, v_eas=v_eas, v_tas=v_tas, altitude_m=h, mach=mach, q_pa=q,
                      load_factor=rc.load_factor, mass_kg=mass, lift_share=share, aero=aero,
                      loads=stb, residual=res, kind=case_kind(kind, rc), port_loads=port,
                      tail_load_N=None if tail is None else tail.tail_load_N,
                      wing_normal_force_N=normal_force(stb, port, case.body_axis),
                      x_cg_m=x_cg, control=ctl)


def _aileron_torsion(sol, ail, delta_deg, q) -> dict:
    """ControlState's aileron torsion fields: the down-aileron side is port for a positive
    deflection (:func:`geomload.loads.side_loads.aileron_torsion`)."""
    down, up = (sol.port, sol.starboard) if delta_deg > 0 else (sol.starboard, sol.port)
    return aileron_torsion(down, up, ail.y_from_m, ail.y_to_m, delta_deg, q)


def _simplified(base: CaseResult, rc, name, ctx) -> CaseResult:
    """23.349(a)(1): the airload (lift, drag, side force, pitching moment) of each side of the
    trimmed condition-A case times the side's factor; the inertia relief stays whole."""
    sides = {}
    for side, fac in zip(SIDES, (rc.factor_starboard, rc.factor_port)):
        a = base.loads.applied
        applied = dataclasses.replace(a, lift_N_per_m=fac * a.lift_N_per_m,
                                      drag_N_per_m=fac * a.drag_N_per_m,
                                      side_N_per_m=fac * a.side_N_per_m,
                                      pitch_Nm_per_m=fac * a.pitch_Nm_per_m)
        tr = TrimView(f"{name}__{side}", base.loads.trim)
        sides[side] = case_loads(ctx.grid, tr, applied, ctx.stations.semispan,
                                 ctx.case.ultimate_factor)
    stb, port = sides["starboard"], sides["port"]
    ctl = ControlState(rule=rc.rule, CL=base.aero.CL,
                       side_factors=(rc.factor_starboard, rc.factor_port),
                       Cl_airload=airload_rolling_moment(stb, port, ctx.models.lattice))
    return dataclasses.replace(
        base, name=name, kind="rolling", loads=stb, port_loads=port,
        residual=max(stb.equilibrium.residual, port.equilibrium.residual),
        wing_normal_force_N=normal_force(stb, port, ctx.case.body_axis), control=ctl)


_TrimView = TrimView  # the earlier name

__all__ = ["carried_share", "unused_lift_shares", "symmetric_with_tail", "unsymmetric_cases",
           "normal_force", "ControlModels", "airload_rolling_moment", "case_with_geometry_controls", "case_kind", "CaseError"]
