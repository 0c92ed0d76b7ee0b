"""The whole job of `geomload run`: case file -> geometry -> lattice -> trimmed cases -> loads ->
envelope -> every output, written atomically.

Decisions (docs/methods_loads.md, "Pipeline decisions"):
- Trim: the wing's share of n x W equals its aerodynamic force normal to the longitudinal
  (wing-frame x) axis, N = L cos(alpha) + D sin(alpha) (14 CFR 23.321(a)); `[analysis]
  load_factor_axis = "flight-path"` trims the lift instead. Each Mach needs one factorisation;
  cases are grouped into Mach bins of MACH_BIN width and solved on the lattice at the bin's upper
  Mach (on the sample the lift slope rises 0.5-0.8 % from one bin to the next; the upper edge is
  the conservative side for gusts).
- Directions: lift normal to the free stream, drag along it, resolved into the wing frame at the
  trimmed alpha; inertia n g m'(y) along -z (normal to the longitudinal axis, n_x = 0: thrust
  balances the chordwise force), or opposite the lift with load_factor_axis = "flight-path".
- Load grid: the lattice's strip edges from root to tip, plus the point-mass and tank-end
  positions. Strip loads per span are interpolated to the grid (zero lift at the tip) and
  corrected additively so each integral equals the lattice's total exactly.
"""

from __future__ import annotations

import math
import time
from pathlib import Path

import numpy as np

from geomload.errors import AeroError, CaseError, GeomloadError
from geomload.records import CaseResult, RunResult, no_progress

G0 = 9.80665  # m/s^2 standard gravity (CGPM 1901)
MACH_BIN = 0.05


def _mach_bin(m: float) -> float:
    if m <= 1e-9:
        return 0.0
    return min(math.ceil(m / MACH_BIN - 1e-9) * MACH_BIN, m if m >= 0.95 else 0.95)


class _Models:
    """One factorised AeroModel per Mach bin, built on first use."""

    def __init__(self, lattice, progress=no_progress):
        self.lattice, self.models, self._cla, self._stall = lattice, {}, {}, {}
        self.progress = progress

    def get(self, mach: float):
        from geomload.aero.solve import AeroModel

        key = round(_mach_bin(mach), 6)
        if key not in self.models:
            self.progress(f"lattice M={key:.2f}", 0, 1)
            self.models[key] = AeroModel(self.lattice, mach=key)
            self.progress(f"lattice M={key:.2f}", 1, 1)
        return self.models[key]

    def lift_slope(self, mach: float) -> float:
        key = round(_mach_bin(mach), 6)
        if key not in self._cla:
            self._cla[key] = float(self.get(mach).solve(0.0).CL_alpha_per_rad)
        return self._cla[key]

    def stall_cl(self, mach: float, cl_max: float):
        key = (round(_mach_bin(mach), 6), float(cl_max))
        if key not in self._stall:
            self._stall[key] = self.get(mach).stall(cl_max)
        return self._stall[key]

    @property
    def warnings(self):
        out = []
        for m in self.models.values():
            out.extend(getattr(m, "warnings", []))
        return out


def _edges_geometry(lattice, jumps=()):
    """Root-to-tip load grid (lattice strip edges) with LE/TE points there (m).

    jumps: spanwise positions of point loads; each adds two grid points (at the load and just
    outboard of it) so the shear step shows as a step in every table and plot.
    """
    c = lattice.corners
    le, te = c[:, 0, :], c[:, -1, :]
    y = le[:, 1]
    if y[0] > y[-1]:
        le, te, y = le[::-1], te[::-1], y[::-1]
    keep = y >= -1e-12  # a full-span lattice: the starboard half
    le, te, y = le[keep], te[keep], np.clip(y[keep], 0.0, None)
    tip = float(y[-1])
    eps = 1e-6 * tip
    extra = []
    for yj in jumps:
        if 0.0 < yj < tip - 2 * eps:
            extra += [yj, yj + eps]
    if extra:
        yn = np.unique(np.concatenate([y, extra]))
        yn = yn[np.concatenate([[True], np.diff(yn) > 0.5 * eps])]
        le = np.column_stack([np.interp(yn, y, le[:, k]) for k in range(3)])
        te = np.column_stack([np.interp(yn, y, te[:, k]) for k in range(3)])
        le[:, 1] = te[:, 1] = yn
        y = yn
    chord = np.hypot(te[:, 0] - le[:, 0], te[:, 2] - le[:, 2])
    return y, le, te, chord


def _to_edges(y_edges, y_strip, values, width, total=None, tip_zero=True):
    """Strip-centre values -> edge values, piecewise linear, with the integral corrected to the
    strip total. The correction is additive, in proportion to |value|, so a distribution whose net
    total is about zero (an n = 0 case: lift up inboard, down outboard) keeps its shape; for a
    one-signed distribution it is the same as scaling."""
    v = np.interp(y_edges, y_strip, values)
    if y_strip.size >= 2 and y_edges[0] < y_strip[0]:
        slope = (values[1] - values[0]) / (y_strip[1] - y_strip[0])
        v[0] = values[0] + slope * (y_edges[0] - y_strip[0])
    if tip_zero:
        v[-1] = 0.0
    strip_total = float(np.sum(values * width)) if total is None else float(total)
    h = np.diff(y_edges)
    grid_total = float(np.sum(0.5 * (v[1:] + v[:-1]) * h))
    a = np.abs(v)
    a_total = float(np.sum(0.5 * (a[1:] + a[:-1]) * h))
    if a_total > 0.0:
        v = v + (strip_total - grid_total) * a / a_total
    return v


def _stall_warning(lc, case, models, mach, CL_req, cf_req) -> str:
    """'' or a one-line warning when the case lies beyond the stall estimate.

    With an [envelope], its cl_max_pos / cl_max_neg bound the force coefficient the load factor
    is defined on (cf_req: the normal-force coefficient CN for load_factor_axis = "body", the
    lift coefficient for "flight-path"), the same coefficient its stall lines n = q S C / W use.
    Without one, the wing CL at which the first strip reaches the section cl_max (load case or
    [aircraft]) bounds CL_req. A 0.5 % margin keeps the stall-corner points, which sit on the
    line by construction, quiet.
    """
    env = case.envelope
    cl_sec = lc.cl_max if lc.cl_max is not None else case.aircraft.cl_max
    name = "CN" if getattr(case, "load_factor_axis", "body") == "body" else "CL"
    if env is not None:
        if cf_req > env.cl_max_pos * 1.005:
            return (f"required {name} {cf_req:.3f} is beyond the wing maximum of [envelope], "
                    f"{env.cl_max_pos:.3f}: the case is not attainable; it lies beyond the stall line")
        if -cf_req > env.cl_max_neg * 1.005:
            return (f"required {name} {cf_req:.3f} is beyond the negative wing maximum of "
                    f"[envelope], -{env.cl_max_neg:.3f}: the case is not attainable; it lies "
                    "beyond the stall line")
        return ""
    if CL_req > 0 and cl_sec is not None:
        st = models.stall_cl(mach, cl_sec)
        if math.isfinite(st["CL_at_onset"]) and CL_req > st["CL_at_onset"] * 1.005:
            return (f"required CL {CL_req:.3f} is beyond the stall-onset estimate (section cl_max "
                    f"{cl_sec:g} first reached at y = {st['first_station_y']:.2f} m), CL "
                    f"{st['CL_at_onset']:.3f}: the case is not attainable; it lies beyond the "
                    "stall line")
    return ""


def _trim(model, cf_req, cd0, body_axis):
    """(alpha_deg, AeroSolution, CL) at which the wing's force coefficient equals cf_req.

    body_axis: the force normal to the wing-frame x axis, CN = CL cos(a) + CD sin(a) with
    CD = CDi + cd0 (the load factor of 14 CFR 23.321(a)); otherwise the lift CL itself. A few
    fixed-point steps on CL converge to round-off (CD sin(a) is a small correction).
    """
    CL = cf_req
    alpha = model.alpha_for_cl(CL)
    sol = model.solve(alpha)
    if not body_axis:
        return alpha, sol, CL
    for _ in range(8):
        a = math.radians(alpha)
        cl_new = (cf_req - (sol.CDi + cd0) * math.sin(a)) / math.cos(a)
        if abs(cl_new - CL) <= 1e-12 * max(1.0, abs(cf_req)):
            break
        CL = cl_new
        alpha = model.alpha_for_cl(CL)
        sol = model.solve(alpha)
    return alpha, sol, CL


def solve_case(lc, case, lattice, models, stations, grid, masses_cache, atmosphere):
    """Trim one LoadCase and integrate its loads. Returns a CaseResult."""
    from geomload.case import airspeeds
    from geomload.loads.beam import (PointLoad, equilibrium_residual, integrate_loads, schrenk,
                                     spar_line)
    from geomload.loads.masses import inertia_loads, mass_distribution

    atm = atmosphere(lc.altitude_m)
    v_eas, v_tas = airspeeds(lc)
    mach = v_tas / atm.a
    if not math.isfinite(mach) or mach >= 1.0:
        raise AeroError(f"{case.path}: load_case '{lc.name}': Mach {mach:.3f} >= 1 "
                        "(speed too high for linear subsonic theory)")
    if v_tas <= 0:
        raise CaseError(f"{case.path}: load_case '{lc.name}': speed must be > 0")
    q = 0.5 * atm.rho * v_tas ** 2
    mass = case.aircraft.gross_mass_kg if lc.mass_kg is None else lc.mass_kg
    force_req = lc.lift_share * lc.load_factor * mass * G0
    model = models.get(mach)
    cd0 = lc.cd0 if lc.cd0 is not None else case.aircraft.cd0
    body_axis = getattr(case, "load_factor_axis", "body") == "body"
    cf_req = force_req / (q * lattice.s_ref)
    alpha, sol, CL_req = _trim(model, cf_req, cd0 or 0.0, body_axis)
    warn = _stall_warning(lc, case, models, mach, CL_req, cf_req)

    y, le, te, chord = grid
    keep = np.asarray(sol.y) >= 0  # a full-span lattice: the starboard strips
    ys, ws = np.asarray(sol.y)[keep], np.asarray(lattice.strip_width)[keep]
    order = np.argsort(ys)
    ys, ws = ys[order], ws[order]
    pick = lambda a: np.asarray(a)[keep][order]  # noqa: E731
    lift_s = pick(sol.lift_per_q) * q
    drag_s = pick(sol.drag_per_q) * q + (cd0 or 0.0) * q * pick(sol.chord)
    pitch_s = pick(sol.moment_per_q) * q
    lift = _to_edges(y, ys, lift_s, ws)
    drag = _to_edges(y, ys, drag_s, ws)
    pitch = _to_edges(y, ys, pitch_s, ws)

    spar = case.spar
    sx, sz = spar_line(y, le[:, 0], te[:, 0], le[:, 2], te[:, 2],
                       spar.chord_fraction if spar.chord_fraction is not None else 0.25, spar.line)
    load_x = le[:, 0] + 0.25 * (te[:, 0] - le[:, 0])
    load_z = le[:, 2] + 0.25 * (te[:, 2] - le[:, 2])
    key = float(lc.fuel_fraction)
    if key not in masses_cache:
        masses_cache[key] = mass_distribution(y, chord, le[:, 0], te[:, 0], sx, sz,
                                              case.wing_mass, case.fuel_tanks, key)
    dist = masses_cache[key]
    inertia, point_loads = inertia_loads(dist, lc.load_factor, case.point_masses)
    # inertia along the load factor: normal to the longitudinal axis (body, 14 CFR 23.321(a)),
    # or opposite the lift (flight path)
    tilt = 0.0 if body_axis else alpha
    ca, sa = math.cos(math.radians(tilt)), math.sin(math.radians(tilt))
    point_loads = tuple(PointLoad(p.name, p.position, np.array([-p.force[2] * sa, 0.0,
                                                                 p.force[2] * ca]))
                        for p in point_loads)
    # the lattice force is normal to the local (dihedral) surface: its y component per span is
    # -lift dz/dy of the lift line, so the shear normal to a dihedral spar is lift / cos(dihedral)
    side = -lift * np.gradient(load_z, y)
    half_lift = float(np.sum(0.5 * (lift[1:] + lift[:-1]) * np.diff(y)))
    loads = integrate_loads(
        y, sx, sz, lift, drag_N_per_m=drag, side_N_per_m=side, pitch_Nm_per_m=pitch,
        load_x=load_x, load_z=load_z, inertia_N_per_m=inertia, inertia_x=dist.x_m,
        inertia_z=dist.z_m, point_loads=point_loads, case=lc.name,
        ultimate_factor=case.ultimate_factor, alpha_deg=alpha, inertia_alpha_deg=tilt,
        schrenk_lift_N_per_m=schrenk(y, chord, stations.semispan, half_lift))
    res = equilibrium_residual(loads)
    loads.extras.update({"CL_required": CL_req, "q_pa": q, "load_factor_axis":
                         "body" if body_axis else "flight-path", "force_required_N": force_req,
                         "chord_m": chord, "lift_total_N": 2.0 * half_lift,
                         "mach_lattice": _mach_bin(mach), "equilibrium": res})
    return CaseResult(name=lc.name, v_eas=v_eas, v_tas=v_tas, altitude_m=lc.altitude_m,
                      mach=mach, q_pa=q, load_factor=lc.load_factor, mass_kg=mass,
                      lift_share=lc.lift_share, aero=sol, loads=loads, stall_warning=warn,
                      residual=max(res["shear_residual_rel"], res["bending_residual_rel"]))


def compute(case, progress=None):
    """Run every case of a parsed Case in memory. Returns a RunResult (nothing is written)."""
    from geomload.aero.atmosphere import isa
    from geomload.aero.lattice import build_lattice
    from geomload.case import check_against_span
    from geomload.geometry import load_wing

    progress = progress or no_progress
    timings, warnings = {}, []
    t0 = time.perf_counter()
    g = case.geometry
    mesh, frame, stations, planform = load_wing(g.file, units=g.units, body=g.body,
                                                span_axis=g.span_axis, up_axis=g.up_axis,
                                                n_stations=g.n_stations, spacing=g.spacing,
                                                progress=progress)
    timings["geometry"] = time.perf_counter() - t0
    from geomload.geometry.read import SPAN_TOO_BIG_M, SPAN_TOO_SMALL_M

    if not SPAN_TOO_SMALL_M <= planform.span <= SPAN_TOO_BIG_M:
        raise CaseError(f"{case.path}: geometry.units: the wing spans {planform.span:.4g} m when "
                        f"read in {mesh.units}; give the file's unit (units = \"mm\", \"cm\", "
                        "\"m\", \"in\" or \"ft\")")
    check_against_span(case, stations.semispan)
    t1 = time.perf_counter()
    lat = case.lattice
    lattice = build_lattice(stations, n_span=lat.n_span, n_chord=lat.n_chord,
                            spacing=lat.spacing, x_ref=case.moment_reference)
    models = _Models(lattice, progress)
    load_cases = list(case.load_cases)
    vn = None
    if case.envelope is not None:
        from geomload.loads.envelope import critical_points, points_to_load_cases, vn_diagram

        spec = case.envelope
        mean_chord = lattice.s_ref / lattice.b_ref
        atm = lambda h: (isa(h).rho, isa(h).a)  # noqa: E731
        pts = critical_points(spec, case.aircraft.gross_mass_kg, lattice.s_ref, mean_chord,
                              models.lift_slope, case.fuel_mass_kg, atm)
        zero_fuel = case.aircraft.gross_mass_kg - case.fuel_mass_kg
        if spec.min_mass_kg is not None and spec.min_mass_kg < zero_fuel - 1e-9:
            warnings.append(f"envelope.min_mass_kg {spec.min_mass_kg:g} kg is below the zero-fuel "
                            f"mass {zero_fuel:g} kg: the wing tanks are run empty and the rest is "
                            "taken as payload off the wing")
        load_cases += list(points_to_load_cases(pts, spec.lift_share, case.aircraft.cl_max,
                                                case.aircraft.cd0))
        masses = [case.aircraft.gross_mass_kg] + (
            [spec.min_mass_kg] if spec.min_mass_kg not in (None, case.aircraft.gross_mass_kg) else [])
        vn = [vn_diagram(spec, case.aircraft.gross_mass_kg, lattice.s_ref, mean_chord,
                         models.lift_slope, m, h, atm)
              for m in masses for h in spec.altitudes_m]
        for note in dict.fromkeys(n for d in vn for n in d.notes):
            warnings.append(note)
    if not load_cases:
        raise CaseError(f"{case.path}: no load_case and no [envelope]: nothing to run")
    names = [lc.name for lc in load_cases]
    dup = sorted({n for n in names if names.count(n) > 1})
    if dup:
        raise CaseError(f"{case.path}: load_case.name: duplicate case name(s) {', '.join(dup)}")
    jumps = [float(p.position[1]) for p in case.point_masses]
    jumps += [float(v) for t in case.fuel_tanks for v in (t.y_from_m, t.y_to_m)]
    grid = _edges_geometry(lattice, jumps)
    masses_cache, results = {}, []
    for i, lc in enumerate(load_cases):
        results.append(solve_case(lc, case, lattice, models, stations, grid, masses_cache, isa))
        progress("cases", i + 1, len(load_cases))
    timings["aero and loads"] = time.perf_counter() - t1
    from geomload.loads.envelope import envelope_of

    envelope = envelope_of([r.loads for r in results])
    first = models.get(results[0].mach)
    sweep = [(float(a), float(s.CL)) for a, s in
             zip(np.arange(-6.0, 16.01, 1.0), first.solve_many(np.arange(-6.0, 16.01, 1.0)))]
    warnings.extend(models.warnings)
    warnings.extend(f"{r.name}: {r.stall_warning}" for r in results if r.stall_warning)
    for note in list(mesh.notes) + list(frame.notes) + list(stations.notes):
        warnings.append(note[len("warning: "):] if note.startswith("warning: ") else f"note: {note}")
    cl_sec = case.aircraft.cl_max
    if cl_sec is not None:
        st = models.stall_cl(results[0].mach, cl_sec)
        if (case.envelope is not None and math.isfinite(st["CL_at_onset"])
                and case.envelope.cl_max_pos > st["CL_at_onset"] * 1.005):
            warnings.append(f"envelope.cl_max_pos {case.envelope.cl_max_pos:g} is above the wing CL "
                            f"{st['CL_at_onset']:.3f} at which the section cl_max {cl_sec:g} is "
                            "first reached: the stall line may be optimistic")
        if math.isfinite(st["CL_at_onset"]):
            warnings.append(f"note: stall onset: section cl_max {cl_sec:g} is first reached at y = "
                            f"{st['first_station_y']:.2f} m at wing CL {st['CL_at_onset']:.3f} "
                            f"(alpha {st['alpha_at_onset']:.1f} deg)")
    return RunResult(case_path=case.path, case_text=Path(case.path).read_text(errors="replace"),
                     case=case, mesh=mesh, frame=frame, stations=stations, planform=planform,
                     lattice=lattice, cases=results, envelope=envelope, vn=vn, alpha_sweep=sweep,
                     warnings=warnings, timings=timings, versions=_versions())


def _versions() -> dict:
    import importlib.metadata as md
    import platform

    out = {"python": platform.python_version()}
    for pkg in ("geomload", "numpy", "scipy", "trimesh", "meshio", "pyvista", "matplotlib",
                "click"):
        try:
            out[pkg] = md.version(pkg)
        except md.PackageNotFoundError:
            out[pkg] = "not installed"
    return out


def run_case_file(case_path, out_dir, force=False, render=True, progress=None):
    """Parse, compute and write a run. Returns (RunResult, list of files written)."""
    from geomload.case import load_case
    from geomload.export import write_all
    from geomload.export.atomic import OutputDir

    progress = progress or no_progress
    t0 = time.perf_counter()
    case = load_case(case_path)
    inputs = [case.path, case.geometry.file]
    od = OutputDir(out_dir, force=force, inputs=inputs)
    od.open()  # refuse a bad output folder before the heavy work
    try:
        result = compute(case, progress)
        t_exp = time.perf_counter()
        written = write_all(result, od.staging, inputs=inputs, render=render, progress=progress,
                            options={"render": render, "force": force},
                            run_time_s=time.perf_counter() - t0)
        result.timings["export"] = time.perf_counter() - t_exp
        od.commit()
    except BaseException:
        od.abort()
        raise
    finally:
        close = getattr(progress, "close", None)
        if callable(close):
            close()
    return result, written["files"]


__all__ = ["compute", "run_case_file", "solve_case", "GeomloadError"]
