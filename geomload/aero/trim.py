"""Trim one flight condition on a factorised lattice, and check it against stall.

Trim: the wing's share of n x W equals its aerodynamic force normal to the longitudinal
(wing-frame x) axis, N = L cos(alpha) + D sin(alpha) (14 CFR 23.321(a)); with
``load_factor_axis = "flight-path"`` the lift itself. Lift and induced drag at any angle are
superpositions of the model's two basis solutions, so the iteration costs no solve; the loads
come from one solve at the trimmed angle.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Optional

from geomload.errors import AeroError, CaseError
from geomload.aero.records import AeroSolution
from geomload.units import G0

from .atmosphere import airspeeds, density_and_sound, dynamic_pressure
from .atmosphere import mach as mach_number
from .models import MachModels, lattice_mach

STALL_MARGIN = 1.005  # stall-corner points sit on the stall line by construction: keep them quiet
TRIM_TOL = 1e-12  # relative change of CL at which the fixed point is converged (round-off)


@dataclass(frozen=True)
class TrimmedCase:
    """One flight condition trimmed on the lattice.

    name; v_eas, v_tas (m/s); altitude_m; mach (of the case); mach_lattice (solved at); q_pa;
    load_factor; mass_kg; lift_share; force_required_N (the wing's share of n W); cf_required
    (the force coefficient the load factor is defined on: CN for the body axis, CL for the flight
    path); CL_required; alpha_deg; cd0; body_axis; solution: AeroSolution at alpha_deg;
    stall_warning: '' or one line.
    """

    name: str
    v_eas: float
    v_tas: float
    altitude_m: float
    mach: float
    mach_lattice: float
    q_pa: float
    load_factor: float
    mass_kg: float
    lift_share: float
    force_required_N: float
    cf_required: float
    CL_required: float
    alpha_deg: float
    cd0: float
    body_axis: bool
    solution: AeroSolution
    stall_warning: str = ""


def trim(model, cf_req: float, cd0: float, body_axis: bool, drag_form=None) -> tuple:
    """(alpha_deg, AeroSolution, CL) at which the wing's force coefficient equals cf_req.

    body_axis: the force normal to the wing-frame x axis, CN = CL cos(a) + CD sin(a) with
    CD = CDi + cd0 (the load factor of 14 CFR 23.321(a)); otherwise the lift CL itself. A few
    fixed-point steps on CL converge to round-off (CD sin(a) is a small correction).
    drag_form: (Q_xx, Q_xz, Q_zz) of CDi(alpha) (MachModels.induced_drag_form); without it each
    step solves the lattice.
    """
    alpha, CL = trim_alpha(model, cf_req, cd0, body_axis, drag_form)
    return alpha, model.solve(alpha), CL


def trim_alpha(model, cf_req: float, cd0: float, body_axis: bool, drag_form=None) -> tuple:
    """(alpha_deg, CL) of :func:`trim` (the same iterates) without the solve at the end."""
    CL = cf_req
    alpha = model.alpha_for_cl(CL)
    if not body_axis:
        return alpha, CL

    def cdi(alpha_deg):
        if drag_form is None:
            return model.solve(alpha_deg).CDi
        ca, sa = math.cos(math.radians(alpha_deg)), math.sin(math.radians(alpha_deg))
        qxx, qxz, qzz = drag_form
        return qxx * ca * ca + 2.0 * qxz * ca * sa + qzz * sa * sa

    for _ in range(8):
        a = math.radians(alpha)
        cl_new = (cf_req - (cdi(alpha) + cd0) * math.sin(a)) / math.cos(a)
        if abs(cl_new - CL) <= TRIM_TOL * max(1.0, abs(cf_req)):
            break
        CL = cl_new
        alpha = model.alpha_for_cl(CL)
    return alpha, CL


def stall_warning(cf_req: float, CL_req: float, mach: float, models: MachModels, body_axis: bool,
                  cl_section: Optional[float], cl_max_pos: Optional[float] = None,
                  cl_max_neg: Optional[float] = None) -> str:
    """'' or a one-line warning when the case lies beyond the stall estimate.

    With a flight envelope (cl_max_pos / cl_max_neg given), its wing maxima bound the force
    coefficient the load factor is defined on (cf_req: CN for the body axis, CL for the flight
    path), the same coefficient its stall lines n = q S C / W use. Without one, the wing CL at
    which the first strip reaches the section cl_max bounds CL_req. STALL_MARGIN keeps the
    stall-corner points, which sit on the line by construction, quiet.
    """
    name = "CN" if body_axis else "CL"
    if cl_max_pos is not None:
        if cf_req > cl_max_pos * STALL_MARGIN:
            return (f"required {name} {cf_req:.3f} is beyond the wing maximum of [envelope], "
                    f"{cl_max_pos:.3f}: the case is not attainable; it lies beyond the stall line")
        if -cf_req > cl_max_neg * STALL_MARGIN:
            return (f"required {name} {cf_req:.3f} is beyond the negative wing maximum of "
                    f"[envelope], -{cl_max_neg:.3f}: the case is not attainable; it lies "
                    "beyond the stall line")
        return ""
    if CL_req > 0 and cl_section is not None:
        st = models.stall_cl(mach, cl_section)
        if math.isfinite(st["CL_at_onset"]) and CL_req > st["CL_at_onset"] * STALL_MARGIN:
            return (f"required CL {CL_req:.3f} is beyond the stall-onset estimate (section cl_max "
                    f"{cl_section:g} first reached at y = {st['first_station_y']:.2f} m), CL "
                    f"{st['CL_at_onset']:.3f}: the case is not attainable; it lies beyond the "
                    "stall line")
    return ""


def flight_state(lc, case, models: MachModels, atmosphere=density_and_sound,
                 wing_force_N=None, name=None) -> tuple:
    """What :func:`trim_case` needs before it trims: (v_eas, v_tas, mach, q_pa, mass_kg,
    force_required_N, model, cd0, body_axis, cf_required, drag_form); the case's errors (Mach
    1 or more, speed not positive) raised naming it."""
    name = lc.name if name is None else name
    v_eas, v_tas = airspeeds(lc.speed_m_s, lc.speed_type, lc.altitude_m, atmosphere)
    mach = mach_number(v_tas, lc.altitude_m, atmosphere)
    if not math.isfinite(mach) or mach >= 1.0:
        raise AeroError(f"{case.path}: load_case '{name}': Mach {mach:.3f} >= 1 "
                        "(speed too high for linear subsonic theory)")
    if v_tas <= 0:
        raise CaseError(f"{case.path}: load_case '{name}': speed must be > 0")
    q = dynamic_pressure(v_tas, lc.altitude_m, atmosphere)
    mass = case.aircraft.gross_mass_kg if lc.mass_kg is None else lc.mass_kg
    force_req = (lc.lift_share * lc.load_factor * mass * G0 if wing_force_N is None
                 else float(wing_force_N))
    model = models.get(mach)
    cd0 = (lc.cd0 if lc.cd0 is not None else case.aircraft.cd0) or 0.0
    body_axis = case.load_factor_axis == "body"
    cf_req = force_req / (q * models.lattice.s_ref)
    drag_form = models.induced_drag_form(mach) if body_axis else None
    return v_eas, v_tas, mach, q, mass, force_req, model, cd0, body_axis, cf_req, drag_form


def trim_case(lc, case, models: MachModels, atmosphere=density_and_sound,
              wing_force_N=None, name=None) -> TrimmedCase:
    """Trim one LoadCase of a Case on the models' lattice; atmosphere: h -> (rho, a), the one
    atmosphere of the run (used for the airspeeds, the Mach number and q). wing_force_N: the
    wing's force (both sides, on the case's load-factor axis) when a pitch trim with a tail
    gives it; None = lift_share x n W. name: the case's name when not lc.name (one c.g. of a
    case trimmed in pitch)."""
    name = lc.name if name is None else name
    fc = flight_state(lc, case, models, atmosphere, wing_force_N, name)
    v_eas, v_tas, mach, q, mass, force_req, model, cd0, body_axis, cf_req, drag_form = fc
    alpha, sol, CL_req = trim(model, cf_req, cd0, body_axis, drag_form)
    env = case.envelope
    warn = stall_warning(cf_req, CL_req, mach, models, body_axis,
                         lc.cl_max if lc.cl_max is not None else case.aircraft.cl_max,
                         None if env is None else env.cl_max_pos,
                         None if env is None else env.cl_max_neg)
    return TrimmedCase(name=name, v_eas=v_eas, v_tas=v_tas, altitude_m=lc.altitude_m,
                       mach=mach, mach_lattice=lattice_mach(mach), q_pa=q,
                       load_factor=lc.load_factor, mass_kg=mass, lift_share=lc.lift_share,
                       force_required_N=force_req, cf_required=cf_req, CL_required=CL_req,
                       alpha_deg=alpha, cd0=cd0, body_axis=body_axis, solution=sol,
                       stall_warning=warn)


def stall_messages(case, models: MachModels, mach: float) -> list:
    """Messages on the wing's stall onset at ``mach`` for the run: a note where the section
    cl_max is first reached, a warning when the flight envelope's CLmax lies above it."""
    from geomload.messages import Message

    cl_sec = case.aircraft.cl_max
    if cl_sec is None:
        return []
    st, out = models.stall_cl(mach, cl_sec), []
    if not math.isfinite(st["CL_at_onset"]):
        return out
    if case.envelope is not None and case.envelope.cl_max_pos > st["CL_at_onset"] * STALL_MARGIN:
        out.append(Message("warning", f"envelope.cl_max_pos {case.envelope.cl_max_pos:g} is above "
                                      f"the wing CL {st['CL_at_onset']:.3f} at which the section "
                                      f"cl_max {cl_sec:g} is first reached: the stall line may be "
                                      "optimistic"))
    out.append(Message("note", f"stall onset: section cl_max {cl_sec:g} is first reached at y = "
                               f"{st['first_station_y']:.2f} m at wing CL {st['CL_at_onset']:.3f} "
                               f"(alpha {st['alpha_at_onset']:.1f} deg)"))
    return out
