"""The run's flight cases on the load grid: what every case shares (:class:`CaseContext`), the
grid a case file asks for (:func:`case_grid`), one case trimmed and integrated into a
CaseResult (:func:`solve_case`), and the rule that case names are unique.

The aero stage trims (:func:`geomload.aero.trim.trim_case`); this stage puts the trimmed strip
loads and the inertia on the grid (:mod:`geomload.loads.flight_case`) and integrates them.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Optional

from geomload.aero.models import MachModels
from geomload.aero.trim import trim_case
from geomload.config.schema import Case
from geomload.errors import CaseError
from geomload.aero.records import Lattice
from geomload.geometry.records import Stations
from geomload.loads.case_records import CaseResult

from .flight_case import applied_loads, case_loads
from .grid import load_grid
from .masses import mass_distribution
from .records import LoadGrid, MassDistribution
from .side_loads import symmetric_normal_force

# the spar at the quarter chord when the case gives no spar: thin-airfoil theory's aerodynamic
# centre (Abbott & von Doenhoff, Theory of Wing Sections, ch. 4; from memory)
DEFAULT_SPAR_CHORD_FRACTION = 0.25


@dataclass(frozen=True)
class CaseContext:
    """What every case of a run shares: the Case, the wing's stations, the Mach models, the load
    grid, the atmosphere (h -> (rho, a)) and the mass distributions by fuel fraction (filled on
    first use: the one mutable member, a cache)."""

    case: Case
    stations: Stations
    models: MachModels
    grid: LoadGrid
    atmosphere: Callable
    masses: dict
    x_le_mac: float = 0.0  # x of the MAC leading edge (m): the c.g. check of the pitch trim
    cache: Optional[dict] = None  # compute()'s cache shared between calls (None: no cache)
    lattice_key: tuple = ()  # the lattice's key in that cache
    detail: bool = True  # False: loads without their cross-checks (flight_case.case_loads)

    def masses_for(self, fuel_fraction: float) -> MassDistribution:
        """The MassDistribution on the grid at a fuel fraction (built once per fraction)."""
        f, g = float(fuel_fraction), self.grid
        if f not in self.masses:
            self.masses[f] = mass_distribution(
                g.y, g.chord, g.le[:, 0], g.te[:, 0], g.spar_x, g.spar_z, self.case.wing_mass,
                self.case.fuel_tanks, f)
        return self.masses[f]


def case_grid(case: Case, lattice: Lattice) -> LoadGrid:
    """The load grid of a case: the lattice strips plus a point at each point mass and at each
    fuel tank's ends (where the distributed loads jump), the spar line and the rib stations."""
    jumps = [float(p.position[1]) for p in case.point_masses]
    jumps += [float(t.y_from_m) for t in case.fuel_tanks]
    fraction = case.spar.chord_fraction
    return load_grid(lattice, jumps,
                     DEFAULT_SPAR_CHORD_FRACTION if fraction is None else fraction,
                     case.spar.line, case.spar.rib_y_m,
                     ends=[float(t.y_to_m) for t in case.fuel_tanks])


def solve_case(lc, ctx: CaseContext, wing_force_N=None, *, name=None,
               tail=None) -> CaseResult:
    """Trim one LoadCase and integrate its loads. Returns a CaseResult.

    wing_force_N: the wing's force from a pitch trim with a tail (N; None: lift_share x n W).
    name: the result's name when not lc.name (one c.g. of a case trimmed in pitch).
    tail: (tail_load_N, x_cg_m, lift_share) of a case trimmed in pitch with a tail, stored in
    the result with the wing's normal force (both sides, :func:`side_loads.normal_force`).
    """
    case, grid = ctx.case, ctx.grid
    name = lc.name if name is None else name
    trimmed = trim_case(lc, case, ctx.models, ctx.atmosphere, wing_force_N, name=name)
    applied = applied_loads(grid, trimmed, ctx.models.lattice.strip_width,
                            ctx.masses_for(lc.fuel_fraction), case.point_masses)
    loads = case_loads(grid, trimmed, applied, ctx.stations.semispan, case.ultimate_factor,
                       detail=ctx.detail)
    extra = {"lift_share": lc.lift_share}
    if tail is not None:
        extra = {"tail_load_N": tail[0], "x_cg_m": tail[1], "lift_share": tail[2],
                 "wing_normal_force_N": symmetric_normal_force(loads, case.body_axis)}
    return CaseResult(name=name, v_eas=trimmed.v_eas, v_tas=trimmed.v_tas,
                      altitude_m=lc.altitude_m, mach=trimmed.mach, q_pa=trimmed.q_pa,
                      load_factor=lc.load_factor, mass_kg=trimmed.mass_kg,
                      aero=trimmed.solution, loads=loads,
                      stall_warning=trimmed.stall_warning,
                      residual=(float("nan") if loads.equilibrium is None
                                else loads.equilibrium.residual), **extra)


def check_case_names(case_path, cases) -> None:
    """Raise CaseError naming the case file when two cases (LoadCase or CaseResult: anything
    with a ``name``) share a name: every output file and table row is keyed by it."""
    seen, dup = set(), []
    for c in cases:
        (dup.append if c.name in seen else seen.add)(c.name)
    if dup:
        raise CaseError(f"{case_path}: load_case.name: duplicate case name(s) "
                        f"{', '.join(sorted(set(dup)))}")


__all__ = ["CaseContext", "case_grid", "solve_case", "check_case_names"]
