"""The records passed between pipeline stages (geometry -> aero -> loads -> export).

All are frozen dataclasses of numpy arrays, SI units, in the *wing frame* unless stated:
x aft along the root chord, y along the span (starboard positive, y = 0 on the symmetry plane /
root plane), z up. Stages are pure functions of these records; nothing here prints.

Here: the aero stage's records (Lattice, AeroSolution), the messages the library returns,
one case's result (CaseResult, ControlState) and the progress callback; the geometry stage's
records (:mod:`geomload.geometry.records`) and the loads stage's
(:mod:`geomload.loads.records`, :mod:`geomload.loads.envelope_records`) are re-exported, so
this one module names every contract. The whole run's record, RunResult, holds the case file's
records too and so sits above the stages, in :mod:`geomload.run_result` (see
docs/architecture.md). Each record checks its fields when built and is never changed after.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Optional

import numpy as np

from geomload.record_checks import check_type, set_field, vector

# progress(stage_name, done, total) - the CLI fills it with a progress bar; library code calls it.
Progress = Optional[Callable[[str, int, int], None]]


def no_progress(stage: str, done: int, total: int) -> None:  # noqa: D401 - trivial
    """A progress callback that does nothing."""


# --------------------------------------------------------------------------------------- geometry
# The geometry records live with their stage; re-exported here so every old import keeps working.
from .geometry.records import (GeometryWarning, Planform, Stations, Wing,  # noqa: E402,F401
                               WingFrame, WingMesh)


# ------------------------------------------------------------------------------------------- aero
@dataclass(frozen=True)
class Lattice:
    """A vortex lattice on the mean surface, wing frame.

    corners: (ns + 1, nc + 1, 3) panel corner grid; index 0 spanwise = root (or port tip for a
    full-span lattice), index 0 chordwise = leading edge.
    bound_a, bound_b: (N, 3) ends of each bound vortex (panel quarter chord), N = ns * nc, ordered
    strip-major (panel k = strip k // nc, chordwise k % nc).
    colloc: (N, 3) collocation points (panel three-quarter chord); normal: (N, 3) unit normals.
    area: (N,) panel areas; mirrored: True when images in y = 0 are implied (half wing).
    strip_y, strip_chord: (ns,) strip centre y and chord; strip_width: (ns,) strip width along y.
    s_ref, c_ref, b_ref: reference area (both sides), chord (MAC) and span.
    x_ref: (3,) moment reference point (default MAC quarter chord).
    """

    corners: np.ndarray
    bound_a: np.ndarray
    bound_b: np.ndarray
    colloc: np.ndarray
    normal: np.ndarray
    area: np.ndarray
    n_span: int
    n_chord: int
    mirrored: bool
    strip_y: np.ndarray
    strip_chord: np.ndarray
    strip_width: np.ndarray
    s_ref: float
    c_ref: float
    b_ref: float
    x_ref: np.ndarray

    def __post_init__(self):
        ns, nc = int(self.n_span), int(self.n_chord)
        corners = np.asarray(self.corners, dtype=float)
        if ns < 1 or nc < 1 or corners.shape != (ns + 1, nc + 1, 3):
            raise ValueError(f"lattice corners: expected shape {(ns + 1, nc + 1, 3)}, "
                             f"got {corners.shape}")
        set_field(self, "corners", corners)
        n = ns * nc
        for k in ("bound_a", "bound_b", "colloc", "normal"):
            set_field(self, k, vector(f"lattice {k}", getattr(self, k), n, width=3))
        set_field(self, "area", vector("lattice area", self.area, n))
        for k in ("strip_y", "strip_chord", "strip_width"):
            set_field(self, k, vector(f"lattice {k}", getattr(self, k), ns))
        set_field(self, "x_ref", vector("lattice x_ref", self.x_ref, 3))


@dataclass(frozen=True)
class AeroSolution:
    """Vortex-lattice result at one angle of attack and Mach, per unit dynamic pressure where noted.

    alpha_deg, mach; gamma: (N,) circulation per unit free-stream speed (m);
    strip arrays (ns,): y, chord, cl (section lift coefficient), cl_c (m), cm_c4 (section moment
    about its own quarter chord, nose-up positive), cdi (section induced drag coefficient),
    lift_per_q (N/m per Pa: lift per span / q), drag_per_q, moment_per_q (N m / m per Pa, about
    the strip quarter chord, nose-up positive), x_cp (m, chordwise centre of pressure x);
    panel dcp: (N,) pressure-coefficient jump (lower minus upper).
    totals: CL, CDi (Trefftz plane), e, Cm (about lattice.x_ref), CL_alpha_per_rad,
    alpha_zero_lift_deg, x_ac_m.
    """

    alpha_deg: float
    mach: float
    gamma: np.ndarray
    y: np.ndarray
    chord: np.ndarray
    cl: np.ndarray
    cl_c: np.ndarray
    cm_c4: np.ndarray
    cdi: np.ndarray
    lift_per_q: np.ndarray
    drag_per_q: np.ndarray
    moment_per_q: np.ndarray
    x_cp: np.ndarray
    dcp: np.ndarray
    CL: float
    CDi: float
    e: float
    Cm: float
    CL_alpha_per_rad: float
    alpha_zero_lift_deg: float
    x_ac_m: float

    def __post_init__(self):
        n, ns = np.asarray(self.gamma).size, np.asarray(self.y).size
        for k in ("gamma", "dcp"):
            set_field(self, k, vector(f"aero solution {k}", getattr(self, k), n))
        for k in ("y", "chord", "cl_c", "lift_per_q", "drag_per_q", "moment_per_q"):
            set_field(self, k, vector(f"aero solution {k}", getattr(self, k), ns))
        for k in ("cl", "cm_c4", "cdi", "x_cp"):  # ratios: NaN where a strip carries nothing
            set_field(self, k, vector(f"aero solution {k}", getattr(self, k), ns, finite=False))


# ------------------------------------------------------------------------------------------ loads
# The loads stage's records live in geomload.loads.records; they are part of this contract too.
from geomload.loads.envelope_records import (DesignSpeeds, FlightPoint,  # noqa: E402,F401
                                             GustPoint, LoadsEnvelope, VnDiagram)
from geomload.loads.records import (AppliedLoads, Equilibrium, LoadGrid,  # noqa: E402,F401
                                    MassDistribution, PointLoad, PointMass, SpanLoads,
                                    TrimState)


@dataclass(frozen=True)
class Message:
    """A message for the user: kind "warning" (something that can change a number: a guessed
    unit, a case beyond stall, an extrapolated table) or "note" (a fact that cannot); text: one
    line, without a prefix. The library returns these; the CLI prints them."""

    kind: str
    text: str

    def __post_init__(self):
        if self.kind not in ("warning", "note"):
            raise ValueError(f"warning kind must be 'warning' or 'note', got {self.kind!r}")

    def __str__(self) -> str:
        return f"{self.kind}: {self.text}"

    @classmethod
    def from_prefixed(cls, text: str) -> "Message":
        """From the prefixed form ("warning: ...", "note: ..."; bare text is a note) that the
        geometry stage still returns: the one place such prefixes are read."""
        for kind in ("warning", "note"):
            if text.startswith(kind + ": "):
                return cls(kind, text[len(kind) + 2:])
        return cls("note", text)


# ------------------------------------------------------------------------------------------- run
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


def __getattr__(name):
    """RunResult moved to geomload.run_result (it holds the case file's records); the old
    import path keeps working."""
    if name == "RunResult":
        from geomload.run_result import RunResult

        return RunResult
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
