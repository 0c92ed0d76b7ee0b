"""One flight case through the pipeline: CaseResult (the trimmed aero solution and the span
loads of each side) and ControlState (the control surfaces' state of a rolling or flaps-down
case). Built by :func:`geomload.loads.cases.solve_case` and the unsymmetric cases'
orchestration; frozen, checked when built, never changed after.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple, Optional

from geomload.aero.records import AeroSolution
from geomload.record_checks import check_type, set_field

from .records import SpanLoads


CASE_KINDS = ("symmetric", "rolling", "rolling_initial", "flaps")
"""The kinds of flight case (CaseResult.kind)."""


@dataclass(frozen=True)
class CaseResult:
    """One flight case through the pipeline.

    name; v_eas, v_tas (m/s), altitude_m, mach, q_pa (dynamic pressure), load_factor, mass_kg
    (aircraft mass of the case), lift_share; aero: AeroSolution at the trimmed alpha;
    loads: SpanLoads; stall_warning: '' or a one-line warning; residual: equilibrium residual
    (relative) of the beam integration.
    kind: "symmetric", "rolling" (steady roll), "rolling_initial" (ailerons deflected at zero
    roll rate) or "flaps"; port_loads: the port SpanLoads of an unsymmetric case (`loads` is
    then the starboard side); tail_load_N (positive up) and wing_normal_force_N (both sides)
    when the case is trimmed in pitch with a tail, at the c.g. x_cg_m; control: the
    ControlState of a rolling or flaps-down case.
    """

    name: str
    v_eas: float
    v_tas: float
    altitude_m: float
    mach: float
    q_pa: float
    load_factor: float
    mass_kg: float
    lift_share: float
    aero: AeroSolution
    loads: SpanLoads
    stall_warning: str = ""
    residual: float = 0.0
    kind: str = "symmetric"
    port_loads: Optional[SpanLoads] = None
    tail_load_N: Optional[float] = None
    wing_normal_force_N: Optional[float] = None
    x_cg_m: Optional[float] = None
    control: Optional["ControlState"] = None

    def __post_init__(self):
        if self.kind not in CASE_KINDS:
            raise ValueError(f"case {self.name!r}: kind must be one of {CASE_KINDS}, "
                             f"got {self.kind!r}")
        check_type(f"case {self.name!r} aero", self.aero, AeroSolution)
        check_type(f"case {self.name!r} loads", self.loads, SpanLoads)
        check_type(f"case {self.name!r} port_loads", self.port_loads, SpanLoads, optional=True)
        check_type(f"case {self.name!r} control", self.control, ControlState, optional=True)

    @property
    def sides(self) -> tuple:
        """((side, SpanLoads), ...): ("starboard", loads), ("port", port_loads) for an
        unsymmetric case; (("semispan", loads),) for a symmetric one."""
        if self.port_loads is None:
            return (("semispan", self.loads),)
        return (("starboard", self.loads), ("port", self.port_loads))


@dataclass(frozen=True)
class ControlState:
    """The control state of a rolling or flaps-down case.

    rule: the paragraph the case follows; deflections_deg: ((surface, deg), ...) in each
    surface's positive sense (aero.controls); pb_2V: steady roll rate p b / (2 V) (0 without
    roll); CL: wing lift coefficient (both sides); Cl_delta_per_rad, Cl_p: rolling derivatives
    of the aileron at this state (NaN when no aileron is deflected); Cl_aileron, Cl_damping:
    their moments Cl_delta delta and Cl_p pb_2V; Cl_airload: the rolling moment coefficient of
    the two sides' airloads on the load grid (right wing down positive); side_factors: the
    23.349 simplified (starboard, port) airload factors, (1, 1) otherwise;
    aileron_torsion_rule_Nm: the section pitching moment increment over the aileron span of the
    down-aileron side by the rule's delta_cm = -0.01 delta (23.349, from memory), integrated;
    aileron_torsion_lattice_Nm: the same increment from the lattice (half the difference of the
    two sides' section moments over the aileron span, the antisymmetric part), as its cross-check.
    """

    rule: str
    deflections_deg: tuple = ()
    pb_2V: float = 0.0
    CL: float = float("nan")
    Cl_delta_per_rad: float = float("nan")
    Cl_p: float = float("nan")
    Cl_aileron: float = float("nan")
    Cl_damping: float = float("nan")
    Cl_airload: float = float("nan")
    side_factors: tuple = (1.0, 1.0)
    aileron_torsion_rule_Nm: float = float("nan")
    aileron_torsion_lattice_Nm: float = float("nan")

    def __post_init__(self):
        pairs = tuple((str(name), float(deg)) for name, deg in self.deflections_deg)
        set_field(self, "deflections_deg", pairs)
        factors = tuple(float(f) for f in self.side_factors)
        if len(factors) != 2:
            raise ValueError(f"control state: side_factors must be (starboard, port), "
                             f"got {factors}")
        set_field(self, "side_factors", factors)


class RootLoads(NamedTuple):
    """The root resultants of one side of a case, for a run that needs nothing else (the error
    estimate's coarser lattices): shear_N, bending_Nm, torsion_Nm, each a one-item tuple (the
    root row of the SpanLoads series of the same name: ``loads.shear_N[0]`` reads both)."""

    shear_N: tuple
    bending_Nm: tuple
    torsion_Nm: tuple


class CaseRoots(NamedTuple):
    """One case's name and its starboard RootLoads (port_loads None: a symmetric case), read
    like a CaseResult's ``name``, ``loads`` and ``port_loads``."""

    name: str
    loads: RootLoads
    port_loads: Optional[RootLoads] = None


__all__ = ["CASE_KINDS", "CaseResult", "ControlState", "RootLoads", "CaseRoots"]
