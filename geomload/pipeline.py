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

import dataclasses
import time
from pathlib import Path
from typing import NamedTuple

from geomload.aero.atmosphere import density_and_sound
from geomload.aero.convergence import coarse_roots, coarser_lattices
from geomload.aero.convergence import error_bars as estimate_error_bars
from geomload.aero.models import MachModels, cached_lattice
from geomload.aero.sweep import lift_curve
from geomload.aero.trim import stall_messages
from geomload.config.checks import check_against_wing
from geomload.config.controls_parse import check_controls_against_wing
from geomload.config.parse import read_case_file
from geomload.config.positions import resolve_positions
from geomload.errors import CaseError, GeomloadError
from geomload.export.run_folder import fill_run_folder, open_run_folder, run_inputs
from geomload.export.run_marker import software_versions
from geomload.loads.cases import CaseContext, case_grid, check_case_names, solve_case
from geomload.loads.envelope import envelope_of
from geomload.loads.roots import RootsBatch
from geomload.loads.vn import flight_envelope_cases
from geomload.pipeline_controls import (case_with_geometry_controls, symmetric_with_tail,
                                        unsymmetric_cases, unused_lift_shares)
from geomload.messages import Message, no_progress
from geomload.run_result import RunResult
from geomload.run_geometry import case_wing, wing_messages


ROOTS = "roots"  # compute(detail=ROOTS): the cases' root loads only (the error estimate)


class RootsRun(NamedTuple):
    """What compute(detail=ROOTS) returns: ``cases``, a tuple with one CaseRoots per symmetric
    case (its root loads) and one CaseResult per unsymmetric case (detail=False), run order."""

    cases: tuple


def _warnings(texts) -> list:
    return [Message("warning", t) for t in texts]


def compute(case, progress=None, cache=None, error_bars=False, detail=True,
            parallel=False) -> RunResult:
    """Run every case of a Case in memory. Returns a RunResult (nothing is written).

    error_bars: also estimate the discretization error of every case's root loads and of the
    envelope's (:mod:`geomload.aero.convergence`: two coarser lattices through this function,
    sharing the cache) into ``RunResult.error_bars``, with one warning per quantity that does
    not converge monotonically.

    cache: an optional dict-like shared between calls (batch runs): the wing read and cut is
    kept under its geometry specification and file state, the lattice under that and its
    lattice specification, each factorised aero model under the lattice and its Mach. A second
    compute of the same geometry and lattice with the same cache reads and factorises nothing.

    detail=False: every case's loads without their cross-checks (equilibrium, Schrenk) and no
    envelope, lift curve or stall summary. detail=ROOTS ("roots"): less still, what the error
    estimate reads on each coarser lattice: a RootsRun (not a RunResult) whose symmetric cases
    carry only their root shear, bending and torsion (:class:`geomload.loads.roots.RootsBatch`,
    the full integration's root values to the bit).

    parallel: with error_bars, compute the coarser lattices in a forked child process while this
    one computes the run's own lattice, when a CPU is free (:func:`geomload.forked.
    parallel_pays`); the same numbers (the same code on a copy of this process), done here
    instead when the child fails. Only for a process that may fork (the CLI's run, not a batch
    worker).
    """
    progress = progress or no_progress
    if error_bars and cache is None:
        cache = {}  # the coarse lattices reuse the wing read and cut
    timings, messages = {}, _warnings(case.warnings)
    t0 = time.perf_counter()
    wing_key, wing = case_wing(case, progress, cache)
    timings["geometry"] = time.perf_counter() - t0
    case, position_notes = resolve_positions(case, wing)
    messages += position_notes
    case, more = case_with_geometry_controls(case, wing)
    messages += _warnings(more)
    job = _coarse_job(case, cache) if error_bars and parallel else None
    try:
        result = _compute_cases(case, progress, cache, detail, wing_key, wing, messages,
                                timings)
        return _with_error_bars(result, cache, job) if error_bars else result
    finally:
        if job is not None:
            job.stop()


def _run_atmosphere():
    """The run's atmosphere: :func:`density_and_sound` (h -> (rho, a)) remembered per altitude
    for one run (a pure function: the same tuples; a run's cases share a few altitudes, each
    asking for it several times)."""
    memo = {}

    def atmosphere(h_m):
        try:
            return memo[h_m]
        except KeyError:
            memo[h_m] = got = density_and_sound(h_m)
            return got
        except TypeError:  # not hashable: not remembered
            return density_and_sound(h_m)

    return atmosphere


def _compute_cases(case, progress, cache, detail, wing_key, wing, messages,
                   timings) -> RunResult:
    """compute() from the resolved case and its wing on: lattice, models, cases, envelope."""
    stations, planform = wing.stations, wing.planform
    check_against_wing(case, stations)
    messages += _warnings(check_controls_against_wing(
        case.controls, stations.semispan, planform.mac, planform.x_mac_le, case.path))
    t1 = time.perf_counter()
    lattice_key, lattice = cached_lattice(case.lattice, case.moment_reference, stations,
                                          wing_key, cache)
    models = MachModels(lattice, progress, store=cache, key=lattice_key)
    atmosphere = _run_atmosphere()  # the one atmosphere of the run
    load_cases, vn = list(case.load_cases), None
    if case.envelope is not None:
        extra, vn, notes = flight_envelope_cases(case, lattice.s_ref, lattice.s_ref / lattice.b_ref,
                                                 models.lift_slope, atmosphere)
        load_cases += extra
        messages += _warnings(notes)
    if not load_cases:
        raise CaseError(f"{case.path}: no load_case and no [envelope]: nothing to run")
    check_case_names(case.path, load_cases)
    ctx = CaseContext(case, stations, models, case_grid(case, lattice), atmosphere, {},
                      float(planform.x_mac_le), cache, lattice_key,
                      bool(detail) and detail != ROOTS)
    results = []
    tail = case.controls is not None and case.controls.tail is not None
    messages += _warnings(unused_lift_shares(case, load_cases))
    batch = RootsBatch(ctx) if detail == ROOTS else None  # root loads integrated together
    solve = solve_case if batch is None else batch.solve
    for i, lc in enumerate(load_cases):
        if tail:
            results += symmetric_with_tail(lc, ctx, solve)
        else:
            results.append(solve(lc, ctx))
        progress("cases", i + 1, len(load_cases))
    if case.controls is not None and vn:
        more, notes = unsymmetric_cases(ctx, vn, solve_case, progress)
        results += more
        messages += _warnings(notes)
    if batch is not None:  # the symmetric cases' root loads, the others' full loads
        results = batch.results(results)
    check_case_names(case.path, results)
    timings["aero and loads"] = time.perf_counter() - t1
    if batch is not None:
        return RootsRun(cases=tuple(results))
    if not detail:
        return RunResult(case_path=case.path, case_text="", case=case, wing=wing,
                         mesh=wing.mesh, frame=wing.frame, stations=stations,
                         planform=planform, lattice=lattice, cases=tuple(results), vn=vn,
                         messages=tuple(messages), timings=timings)
    envelope = envelope_of([s for r in results for _, s in r.sides])
    sweep = lift_curve(models.get(results[0].mach), [r.aero.alpha_deg for r in results])
    messages += _warnings(models.warnings)
    messages += _warnings(f"{r.name}: {r.stall_warning}" for r in results if r.stall_warning)
    messages += wing_messages(wing)
    messages += stall_messages(case, models, results[0].mach)
    result = RunResult(case_path=case.path, case_text=Path(case.path).read_text(errors="replace"),
                       case=case, wing=wing, mesh=wing.mesh, frame=wing.frame, stations=stations,
                       planform=planform, lattice=lattice, cases=tuple(results),
                       envelope=envelope, vn=vn, alpha_sweep=sweep, messages=tuple(messages),
                       timings=timings, versions=software_versions())
    return result


def _compute_roots(case, cache=None, detail=False) -> RootsRun:
    """The error estimate's run of a coarser lattice (its ``compute(case, cache=...,
    detail=False)``) with only the root loads it reads: compute(detail=ROOTS)."""
    return compute(case, cache=cache, detail=ROOTS)


def _coarse_levels(case, cache) -> dict:
    """In the forked child: the coarse lattices' root loads (plain floats), warnings silenced
    (the parent reports the run's own)."""
    import warnings

    warnings.simplefilter("ignore")
    t = time.perf_counter()
    levels = coarse_roots(case, _compute_roots, cache)
    return {"levels": levels, "seconds": time.perf_counter() - t}


def _coarse_job(case, cache):
    """A ForkedJob computing the error estimate's coarse lattices, or None when no CPU is free
    (or fork is unavailable): they are then computed after the run's own lattice, here."""
    from geomload.forked import ForkedJob, parallel_pays

    if not coarser_lattices(case.lattice) or not parallel_pays(1):
        return None
    return ForkedJob.start(_coarse_levels, (case, cache), names=("levels",),
                           what="error estimate")


def _with_error_bars(result, cache, job=None):
    """The RunResult with its error bars (geomload.aero.convergence) and their warnings; the
    coarse lattices from `job` (a ForkedJob) when it delivers them, else computed here."""
    t = time.perf_counter()
    levels, child = None, {}
    if job is not None:
        got = job.result()
        if isinstance(got.get("levels"), list):  # else an Exception: the child failed
            levels = got["levels"]
            # the child's own time: the run's "error estimate" is then only what it waited
            child = {"error estimate, coarse lattices in a child process": got["seconds"]}
    bars, warnings = estimate_error_bars(result.case, result, _compute_roots, cache, levels)
    return dataclasses.replace(
        result, error_bars=bars, messages=result.messages + tuple(_warnings(warnings)),
        timings={**result.timings, "error estimate": time.perf_counter() - t, **child})


def write_run(result: RunResult, out_dir, *, force=False, render=True, progress=None) -> list:
    """Write every output of a computed run into ``out_dir``, whole or not at all (a staging
    folder moved into place at the end). Returns the list of files written."""
    inputs = run_inputs(result.case_path, result.case)
    od = open_run_folder(out_dir, inputs, force)
    return fill_run_folder(od, inputs, result, force=force, render=render,
                           progress=progress)[1]


def run_case_file(case_path, out_dir, force=False, render=True, progress=None):
    """Read, compute and write a run. Returns (RunResult, list of files written)."""
    progress = progress or no_progress
    t0 = time.perf_counter()
    case = read_case_file(case_path)
    inputs = run_inputs(case.path, case)
    od = open_run_folder(out_dir, inputs, force)
    return fill_run_folder(od, inputs, compute=lambda: compute(case, progress, error_bars=True,
                                                          parallel=True),
                           force=force, render=render, progress=progress, t0=t0)


__all__ = ["compute", "write_run", "run_case_file", "solve_case", "CaseContext", "GeomloadError"]
