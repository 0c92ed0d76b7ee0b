"""The records passed between pipeline stages (geometry -> aero -> loads -> export).

All are frozen dataclasses of numpy arrays, SI units, in the *wing frame* unless stated:
x aft along the root chord, y along the span (starboard positive, y = 0 on the symmetry plane /
root plane), z up. Stages are pure functions of these records; nothing here prints.

This single module holds every contract so that each stage can be developed and tested
against it independently (see docs/architecture.md).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable, Optional

import numpy as np

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


# ------------------------------------------------------------------------------------------ loads
# The loads stage's records live in geomload.loads.records; they are part of this contract too.
from geomload.loads.records import (AppliedLoads, Equilibrium, LoadGrid,  # noqa: E402,F401
                                    LoadsEnvelope, MassDistribution, PointLoad, PointMass,
                                    SpanLoads, TrimState, VnDiagram)


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


@dataclass(frozen=True)
class RunResult:
    """Everything `geomload run` computed, handed to the exporters.

    case_path: the case file; case_text: its text (echoed in the report); case: the Case records
    (geomload.config.schema.Case); mesh, frame, stations, planform, lattice; cases: tuple of
    CaseResult; envelope: the envelope of loads (LoadsEnvelope); vn: tuple of VnDiagram (empty
    without an [envelope]); alpha_sweep: tuple of (alpha_deg, CL) from the lattice at the first
    case's Mach; messages: tuple of Message (kind, text); timings: step -> seconds; versions:
    package -> version; error_bars: geomload.aero.convergence.ErrorBars (discretization error
    of the root loads) or None when not estimated; wing: the geometry stage's whole `Wing`
    record (bodies, control surfaces, tailplane, warnings, exposed/gross planform), or None
    when built without one.
    """

    case_path: str
    case_text: str
    case: "Case"
    mesh: WingMesh
    frame: WingFrame
    stations: Stations
    planform: Planform
    lattice: Lattice
    cases: tuple
    envelope: Optional[LoadsEnvelope] = None
    vn: Optional[tuple] = None
    alpha_sweep: tuple = ()
    messages: tuple = ()
    timings: dict = field(default_factory=dict)
    versions: dict = field(default_factory=dict)
    error_bars: Optional["ErrorBars"] = None
    wing: Optional[Wing] = None

    def __post_init__(self):
        if self.wing is not None and not isinstance(self.wing, Wing):
            raise TypeError("RunResult.wing: a geometry Wing record or None")
        object.__setattr__(self, "cases", tuple(self.cases))
        if not all(isinstance(c, CaseResult) for c in self.cases):
            raise TypeError("RunResult.cases: CaseResult records only")
        if self.envelope is not None and not isinstance(self.envelope, LoadsEnvelope):
            raise TypeError("RunResult.envelope: a LoadsEnvelope or None")
        if self.vn is not None:
            object.__setattr__(self, "vn", tuple(self.vn))
            if not all(isinstance(d, VnDiagram) for d in self.vn):
                raise TypeError("RunResult.vn: VnDiagram records only")
        object.__setattr__(self, "messages", tuple(self.messages))
        if not all(isinstance(m, Message) for m in self.messages):
            raise TypeError("RunResult.messages: Message records only")

    @property
    def warnings(self) -> list:
        """The messages in the earlier string form: "note: ..." for notes, bare text for
        warnings."""
        return [f"note: {m.text}" if m.kind == "note" else m.text for m in self.messages]


from geomload.config.schema import Case  # noqa: E402  (typing of RunResult.case)
from geomload.aero.convergence import ErrorBars  # noqa: E402  (typing of RunResult.error_bars)
