"""The aero stage's records: the vortex lattice (Lattice) and one solution of it (AeroSolution).

Frozen dataclasses of numpy arrays, SI units, wing frame (x aft along the root chord, y
starboard, z up). Each checks its array shapes when built and is never changed after.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from geomload.record_checks import fields, set_field, vector


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
        fields(self, "aero solution", ("gamma", "dcp"), n)
        fields(self, "aero solution", ("y", "chord", "cl_c", "lift_per_q", "drag_per_q",
                                       "moment_per_q"), ns)
        # ratios: NaN where a strip carries nothing
        fields(self, "aero solution", ("cl", "cm_c4", "cdi", "x_cp"), ns, finite=False)


__all__ = ["Lattice", "AeroSolution"]
