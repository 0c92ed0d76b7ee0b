"""The whole job of `geomload run`: case -> wing -> lattice -> trimmed cases -> loads ->
envelope -> outputs. Orchestration only; each stage owns its physics:

- geometry: read the CAD wing and cut its stations (:func:`geomload.geometry.read_wing`, through
  :mod:`geomload.run_geometry`, which also checks its unit against the aircraft);
- aero: lattice, factorised models per Mach (:mod:`geomload.aero.models`), trim
  (:mod:`geomload.aero.trim`);
- loads: grid (:mod:`geomload.loads.grid`), masses, one case's applied and integrated loads
  (:mod:`geomload.loads.flight_case`), the flight envelope's cases (:mod:`geomload.loads.vn`),
  the envelope of loads (:mod:`geomload.loads.envelope`);
- export: every file, written into a staging folder and moved into place whole.

One atmosphere (ISA, :func:`geomload.aero.atmosphere.density_and_sound`) serves the whole run.
"""

from __future__ import annotations

import math
import time
import dataclasses
from dataclasses import dataclass
from pathlib import Path
from typing import Optional

import numpy as np

from geomload.aero.atmosphere import density_and_sound
from geomload.aero.models import MachModels, cached_lattice
from geomload.aero.trim import stall_messages, trim_case
from geomload.config.checks import check_against_wing
from geomload.config.controls_parse import check_controls_against_wing
from geomload.config.parse import read_case_file
from geomload.errors import CaseError, GeomloadError
from geomload.loads.envelope import envelope_of
from geomload.loads.flight_case import applied_loads, case_loads
from geomload.loads.grid import load_grid
from geomload.loads.masses import mass_distribution
from geomload.loads.vn import flight_envelope_cases
from geomload.pipeline_controls import symmetric_with_tail, unsymmetric_cases
from geomload.records import CaseResult, Message, RunResult, no_progress

SWEEP_DEG = np.arange(-6.0, 16.01, 1.0)  # the alpha sweep shown in the report (deg)


def sweep_angles(trim_alphas_deg) -> np.ndarray:
    """SWEEP_DEG widened in whole degrees so it covers every trimmed angle with 1 deg to spare."""
    a = np.asarray(list(trim_alphas_deg), float)
    a = a[np.isfinite(a)]
    lo = min(SWEEP_DEG[0], np.floor(a.min()) - 1.0) if a.size else SWEEP_DEG[0]
    hi = max(SWEEP_DEG[-1], np.ceil(a.max()) + 1.0) if a.size else SWEEP_DEG[-1]
    return np.arange(lo, hi + 0.01, 1.0)


@dataclass(frozen=True)
class CaseContext:
    """What every case of a run shares: the Case, the wing's stations, the Mach models, the load
    grid, the atmosphere (h -> (rho, a)) and the mass distributions by fuel fraction."""

    case: object
    stations: object
    models: object
    grid: object
    atmosphere: object
    masses: dict
    x_le_mac: float = 0.0  # x of the MAC leading edge (m): the c.g. check of the pitch trim
    cache: Optional[dict] = None  # compute()'s cache shared between calls (None: no cache)
    lattice_key: tuple = ()  # the lattice's key in that cache

    def masses_for(self, fuel_fraction: float):
        """The MassDistribution at a fuel fraction (built once per fraction)."""
        return _masses(self, float(fuel_fraction))


def _wing(case, progress, cache):
    """(cache key, Wing) of the case's geometry: see :func:`geomload.run_geometry.case_wing`."""
    from geomload.run_geometry import case_wing

    return case_wing(case, progress, cache)


def solve_case(lc, ctx: CaseContext, wing_force_N=None) -> CaseResult:
    """Trim one LoadCase and integrate its loads. Returns a CaseResult. wing_force_N: the
    wing's force from a pitch trim with a tail (None: lift_share x n W)."""
    case, grid = ctx.case, ctx.grid
    trimmed = trim_case(lc, case, ctx.models, ctx.atmosphere, wing_force_N)
    applied = applied_loads(grid, trimmed, ctx.models.lattice.strip_width,
                            _masses(ctx, float(lc.fuel_fraction)), case.point_masses)
    loads = case_loads(grid, trimmed, applied, ctx.stations.semispan, case.ultimate_factor)
    return CaseResult(name=lc.name, v_eas=trimmed.v_eas, v_tas=trimmed.v_tas,
                      altitude_m=lc.altitude_m, mach=trimmed.mach, q_pa=trimmed.q_pa,
                      load_factor=lc.load_factor, mass_kg=trimmed.mass_kg,
                      lift_share=lc.lift_share, aero=trimmed.solution, loads=loads,
                      stall_warning=trimmed.stall_warning, residual=loads.equilibrium.residual)


def _check_names(case, load_cases):
    seen, dup = set(), []
    for lc in load_cases:
        (dup.append if lc.name in seen else seen.add)(lc.name)
    if dup:
        raise CaseError(f"{case.path}: load_case.name: duplicate case name(s) "
                        f"{', '.join(sorted(set(dup)))}")


def compute(case, progress=None, cache=None, error_bars=False) -> RunResult:
    """Run every case of a Case in memory. Returns a RunResult (nothing is written).

    error_bars: also estimate the discretization error of every case's root loads and of the
    envelope's (:mod:`geomload.aero.convergence`: two coarser lattices through this function,
    sharing the cache) into ``RunResult.error_bars``, with one warning per quantity that does
    not converge monotonically.

    cache: an optional dict-like shared between calls (batch runs): the wing read and cut is
    kept under its geometry specification and file state, the lattice under that and its
    lattice specification, each factorised aero model under the lattice and its Mach. A second
    compute of the same geometry and lattice with the same cache reads and factorises nothing.
    """
    from geomload.run_geometry import wing_messages

    progress = progress or no_progress
    if error_bars and cache is None:
        cache = {}  # the coarse lattices reuse the wing read and cut
    timings, messages = {}, [Message("warning", w) for w in case.warnings]
    t0 = time.perf_counter()
    wing_key, wing = _wing(case, progress, cache)
    mesh, frame, stations, planform = wing.mesh, wing.frame, wing.stations, wing.planform
    timings["geometry"] = time.perf_counter() - t0
    check_against_wing(case, stations)
    messages += [Message("warning", w) for w in check_controls_against_wing(
        case.controls, stations.semispan, planform.mac, planform.x_mac_le, case.path)]
    t1 = time.perf_counter()
    lattice_key, lattice = cached_lattice(case.lattice, case.moment_reference, stations,
                                          wing_key, cache)
    models = MachModels(lattice, progress, store=cache, key=lattice_key)
    atmosphere = density_and_sound  # the one atmosphere of the run
    load_cases, vn = list(case.load_cases), None
    if case.envelope is not None:
        extra, vn, notes = flight_envelope_cases(case, lattice.s_ref, lattice.s_ref / lattice.b_ref,
                                                 models.lift_slope, atmosphere)
        load_cases += extra
        messages += [Message("warning", n) for n in notes]
    if not load_cases:
        raise CaseError(f"{case.path}: no load_case and no [envelope]: nothing to run")
    _check_names(case, load_cases)
    jumps = [float(p.position[1]) for p in case.point_masses]
    jumps += [float(t.y_from_m) for t in case.fuel_tanks]
    grid = load_grid(lattice, jumps, case.spar.chord_fraction if case.spar.chord_fraction
                     is not None else 0.25, case.spar.line, case.spar.rib_y_m,
                     ends=[float(t.y_to_m) for t in case.fuel_tanks])
    ctx = CaseContext(case, stations, models, grid, atmosphere, {}, float(planform.x_mac_le),
                      cache, lattice_key)
    results = []
    tail = case.controls is not None and case.controls.tail is not None
    for i, lc in enumerate(load_cases):
        if tail:
            results += symmetric_with_tail(lc, ctx, solve_case)
        else:
            results.append(solve_case(lc, ctx))
        progress("cases", i + 1, len(load_cases))
    if case.controls is not None and vn:
        more, notes = unsymmetric_cases(ctx, vn, solve_case, progress)
        results += more
        messages += [Message("warning", n) for n in notes]
    _check_names(case, results)
    timings["aero and loads"] = time.perf_counter() - t1
    envelope = envelope_of([s for r in results for _, s in r.sides])
    sweep_deg = sweep_angles([r.aero.alpha_deg for r in results])
    sweep = tuple((float(a), float(s.CL)) for a, s in
                  zip(sweep_deg, models.get(results[0].mach).solve_many(sweep_deg)))
    messages += [Message("warning", w) for w in models.warnings]
    messages += [Message("warning", f"{r.name}: {r.stall_warning}") for r in results
                 if r.stall_warning]
    messages += wing_messages(wing)
    messages += stall_messages(case, models, results[0].mach)
    result = RunResult(case_path=case.path, case_text=Path(case.path).read_text(errors="replace"),
                       case=case, wing=wing, mesh=mesh, frame=frame, stations=stations, planform=planform,
                       lattice=lattice, cases=tuple(results), envelope=envelope, vn=vn,
                       alpha_sweep=sweep, messages=tuple(messages), timings=timings,
                       versions=_versions())
    return _with_error_bars(result, cache) if error_bars else result


def _with_error_bars(result, cache):
    """The RunResult with its error bars (geomload.aero.convergence) and their warnings."""
    from geomload.aero.convergence import error_bars

    t = time.perf_counter()
    bars, warnings = error_bars(result.case, result, compute, cache)
    return dataclasses.replace(
        result, error_bars=bars, messages=result.messages + tuple(Message("warning", w)
                                                                  for w in warnings),
        timings={**result.timings, "error estimate": time.perf_counter() - t})


def _masses(ctx, fuel_fraction):

    g = ctx.grid
    if fuel_fraction not in ctx.masses:
        ctx.masses[fuel_fraction] = mass_distribution(
            g.y, g.chord, g.le[:, 0], g.te[:, 0], g.spar_x, g.spar_z, ctx.case.wing_mass,
            ctx.case.fuel_tanks, fuel_fraction)
    return ctx.masses[fuel_fraction]


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


def write_run(result: RunResult, out_dir, *, force=False, render=True, progress=None) -> list:
    """Write every output of a computed run into ``out_dir``, whole or not at all (a staging
    folder moved into place at the end). Returns the list of files written."""
    out = _output_dir(result.case_path, result.case.geometry.file, out_dir, force,
                      _structure_inputs(result.case))
    return _write(result, out, force, render, progress or no_progress, time.perf_counter())[1]


def _structure_inputs(case) -> list:
    """The structural mesh of [structure] (an input: never overwritten), if any."""
    s = getattr(case, "structure", None)
    return [s.mesh] if s is not None and s.mesh else []


def _output_dir(case_path, geometry_file, out_dir, force, extra_inputs=()):
    from geomload.export.atomic import OutputDir

    inputs = [case_path, geometry_file, *extra_inputs]
    od = OutputDir(out_dir, force=force, inputs=inputs)
    od.open()  # refuse a bad output folder before the heavy work
    return od, inputs


def _write(result, out, force, render, progress, t0, compute_first=None) -> tuple:
    """(RunResult, files written) into the opened output folder ``out`` = (OutputDir, inputs);
    compute_first: a callable computing the result inside the folder's cleanup."""
    from geomload.export import write_all

    od, inputs = out
    try:
        if compute_first is not None:
            result = compute_first()
        t_exp = time.perf_counter()
        written = write_all(result, od.staging, inputs=inputs, render=render,
                            progress=progress, options={"render": render, "force": force},
                            run_time_s=time.perf_counter() - t0)
        od.commit()
        result = dataclasses.replace(  # a record is never changed: a new one with the timing
            result, timings={**result.timings, "export": time.perf_counter() - t_exp},
            messages=result.messages + tuple(Message("warning", w)
                                             for w in written.get("warnings", ())))
    except BaseException:
        od.abort()
        raise
    finally:
        close = getattr(progress, "close", None)
        if callable(close):
            close()
    return result, written["files"]


def run_case_file(case_path, out_dir, force=False, render=True, progress=None):
    """Read, compute and write a run. Returns (RunResult, list of files written)."""

    progress = progress or no_progress
    t0 = time.perf_counter()
    case = read_case_file(case_path)
    od = _output_dir(case.path, case.geometry.file, out_dir, force, _structure_inputs(case))
    return _write(None, od, force, render, progress, t0,
                  lambda: compute(case, progress, error_bars=True))


__all__ = ["compute", "write_run", "run_case_file", "solve_case", "CaseContext", "GeomloadError"]
