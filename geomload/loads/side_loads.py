"""The two sides of an unsymmetric flight case: the wing's force on the load-factor axis and
the airload's rolling moment from both sides' applied loads, the aileron's torsion increment,
and the trim view a side built from another case is integrated with.

Each side is one semi-span's AppliedLoads / SpanLoads (wing frame, limit loads), integrated by
:func:`geomload.loads.flight_case.case_loads` like a symmetric case.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .records import SpanLoads, TrimState


def _trapezoid(f, y) -> float:
    return float((0.5 * (f[1:] + f[:-1]) * (y[1:] - y[:-1])).sum())  # np.diff's arithmetic


def normal_force(stb: SpanLoads, port: SpanLoads, body_axis: bool) -> float:
    """Wing force of both sides (N) on the load-factor axis from the applied loads of each
    side: lift cos a + drag sin a (body axis) or the lift (flight path)."""
    tot = 0.0
    for s in (stb, port):
        tot += _side_normal_force(s, body_axis)
    return tot


def symmetric_normal_force(loads: SpanLoads, body_axis: bool) -> float:
    """normal_force(loads, loads, body_axis) of a symmetric case: the side's integral taken
    once (the same sum, 0 + F + F)."""
    f = _side_normal_force(loads, body_axis)
    tot = 0.0
    tot += f
    tot += f
    return tot


def _side_normal_force(s: SpanLoads, body_axis: bool) -> float:
    a, y = s.applied, s.y
    f = a.lift_N_per_m
    if body_axis:
        al = math.radians(a.alpha_deg)
        f = f * math.cos(al) + a.drag_N_per_m * math.sin(al)
    return _trapezoid(f, y)


def airload_rolling_moment(stb: SpanLoads, port: SpanLoads, lattice) -> float:
    """Rolling moment coefficient (right wing down positive, about the wing-frame x axis) of
    the two sides' applied airloads on the load grid: the force normal to the x axis
    (lift cos a + drag sin a) times y, less the side force times its height z, port minus
    starboard, over q S b (the lattice's reference area and span)."""
    q = stb.trim.q_pa

    def mx(s):
        a = s.applied
        al = math.radians(a.alpha_deg)
        fz = a.lift_N_per_m * math.cos(al) + a.drag_N_per_m * math.sin(al)
        return _trapezoid(s.y * fz - a.load_z_m * a.side_N_per_m, s.y)

    return (mx(port) - mx(stb)) / (q * lattice.s_ref * lattice.b_ref)


def aileron_torsion(down, up, y_from_m: float, y_to_m: float, delta_deg: float,
                    q: float) -> dict:
    """The aileron's section pitching-moment increment on the down-aileron side over its span
    (N m, nose-up +), by the 23.349 rule (delta_cm = -0.01 deg^-1 x delta, on q c^2) and from
    the lattice (half the difference of the two sides' strip moments, the antisymmetric part).

    down, up: the side strips (y_m, chord_m, width_m, moment_per_q) of the down- and the
    up-aileron side; returns the ControlState fields aileron_torsion_rule_Nm and
    aileron_torsion_lattice_Nm.
    """
    from .rules_unsymmetric import aileron_torsion_increment

    inside = (down.y_m >= y_from_m) & (down.y_m <= y_to_m)
    rule = aileron_torsion_increment(down.y_m, down.chord_m, q, y_from_m, y_to_m, abs(delta_deg))
    dm = 0.5 * (down.moment_per_q - np.interp(down.y_m, up.y_m, up.moment_per_q)) * q
    return {"aileron_torsion_rule_Nm": float(np.sum((rule * down.width_m)[inside])),
            "aileron_torsion_lattice_Nm": float(np.sum((dm * down.width_m)[inside]))}


@dataclass(frozen=True)
class SideSolution:
    """One side's strip loads in the form `loads.flight_case.applied_loads` reads (y, chord,
    lift/drag/moment per unit q per span), root to tip."""

    y: np.ndarray
    chord: np.ndarray
    lift_per_q: np.ndarray
    drag_per_q: np.ndarray
    moment_per_q: np.ndarray


@dataclass(frozen=True)
class TrimView:
    """The fields `flight_case.case_loads` reads of a trimmed case, for a side whose applied
    loads are built from another case's (its TrimState): name, CL_required, q_pa, body_axis,
    force_required_N, mach_lattice."""

    name: str
    trim: TrimState

    def __post_init__(self):
        if not isinstance(self.trim, TrimState):
            raise TypeError(f"trim view {self.name!r}: trim must be a TrimState")

    @property
    def CL_required(self) -> float:
        return self.trim.CL_required

    @property
    def q_pa(self) -> float:
        return self.trim.q_pa

    @property
    def body_axis(self) -> bool:
        return self.trim.load_factor_axis == "body"

    @property
    def force_required_N(self) -> float:
        return self.trim.force_required_N

    @property
    def mach_lattice(self) -> float:
        return self.trim.mach_lattice


__all__ = ["normal_force", "airload_rolling_moment", "aileron_torsion", "SideSolution",
           "TrimView"]
