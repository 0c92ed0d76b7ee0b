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
from .geometry.records import Planform, Stations, WingFrame, WingMesh  # noqa: E402,F401


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
@dataclass(frozen=True)
class PointMass:
    """A concentrated mass (kg) at a wing-frame position (m), on the starboard side (y >= 0)."""

    name: str
    mass: float
    position: np.ndarray


@dataclass(frozen=True)
class SpanLoads:
    """Loads along one semi-span for one flight case, limit values, root to tip (wing frame).

    y: (n,) stations (m); lift_N_per_m, drag_N_per_m, pitch_Nm_per_m (about the spar axis,
    nose-up positive); inertia_N_per_m (downward weight relief n*g*m'(y), positive down);
    shear_N, bending_Nm, torsion_Nm (out-of-plane, local spar frame; signs: shear positive up,
    bending positive tip-up, torsion nose-up); inplane_shear_N, inplane_bending_Nm (chordwise);
    schrenk_lift_N_per_m: Schrenk distribution of the same total lift (cross-check).
    ultimate_factor: multiply limit values by it for ultimate loads.
    """

    case: str
    y: np.ndarray
    lift_N_per_m: np.ndarray
    drag_N_per_m: np.ndarray
    pitch_Nm_per_m: np.ndarray
    inertia_N_per_m: np.ndarray
    shear_N: np.ndarray
    bending_Nm: np.ndarray
    torsion_Nm: np.ndarray
    inplane_shear_N: np.ndarray
    inplane_bending_Nm: np.ndarray
    schrenk_lift_N_per_m: np.ndarray
    ultimate_factor: float = 1.5
    extras: dict = field(default_factory=dict)


# ------------------------------------------------------------------------------------------- run
@dataclass(frozen=True)
class CaseResult:
    """One flight case through the pipeline.

    name; v_eas, v_tas (m/s), altitude_m, mach, q_pa (dynamic pressure), load_factor, mass_kg
    (aircraft mass of the case), lift_share; aero: AeroSolution at the trimmed alpha;
    loads: SpanLoads; stall_warning: '' or a one-line warning; residual: equilibrium residual
    (relative) of the beam integration.
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


@dataclass(frozen=True)
class RunResult:
    """Everything `geomload run` computed, handed to the exporters.

    case_path: the case file; case_text: its text (echoed in the report); case: the parsed Case
    (geomload.case.Case); mesh, frame, stations, planform, lattice; cases: list of CaseResult;
    envelope: geomload.loads.envelope.Envelope or None; vn: geomload.loads.envelope.VnDiagram or
    None; alpha_sweep: list of (alpha_deg, CL) from the lattice at the first case's Mach;
    warnings: list of one-line warnings; timings: dict step -> seconds; versions: dict pkg -> str.
    """

    case_path: str
    case_text: str
    case: object
    mesh: WingMesh
    frame: WingFrame
    stations: Stations
    planform: Planform
    lattice: Lattice
    cases: list
    envelope: object = None
    vn: object = None
    alpha_sweep: list = field(default_factory=list)
    warnings: list = field(default_factory=list)
    timings: dict = field(default_factory=dict)
    versions: dict = field(default_factory=dict)
