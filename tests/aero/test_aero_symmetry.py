"""A mirror-symmetric full-span lattice solved as two half-span systems against the direct
solve of its whole influence matrix (numpy.linalg.solve)."""

import math

import numpy as np

from helpers.aero_wings import trapezoid
from helpers.validation import check
from geomload.aero import symmetry, vortex
from geomload.aero.controls import ControlSurface
from geomload.aero.lattice import build_lattice
from geomload.aero.roll import ControlModel, control_rhs
from geomload.aero.solve import AeroModel

IMAGES = ("method of images, e.g. Katz & Plotkin, Low-Speed Aerodynamics, 2nd ed., sec. on "
          "symmetry (from memory); reference: numpy.linalg.solve of the full-span matrix")
MACH = 0.3
# The whole-span matrix's port rows are the mirror of its starboard rows only to round-off of
# the kernels (about 1e-12 of the largest entry at these sizes), and the split solves the exact
# mirror: the two solutions may differ by that much, amplified by the condition number (~100).
ROUND_OFF = 1e-11


def _wing():
    return trapezoid(8.0, 0.5, 20.0, camber="2412", twist_tip_deg=-2.0, dihedral_deg=4.0)


def _surfaces(semispan, side="both"):
    s = semispan
    if side != "both":
        return [ControlSurface("ail", "aileron", 0.62 * s, 0.93 * s, 0.75, side=side)]
    return [ControlSurface("ail", "aileron", 0.62 * s, 0.93 * s, 0.75, mode="antisymmetric"),
            ControlSurface("flap", "flap", 0.07 * s, 0.5 * s, 0.7)]


def _direct(lat, rhs):
    """Circulations and bound-midpoint velocities from the whole-span matrix, assembled here
    from the horseshoe kernels and solved with numpy.linalg.solve."""
    beta = math.sqrt(1.0 - MACH ** 2)
    stretch = np.array([1.0 / beta, 1.0, 1.0])
    ns, nc = lat.n_span, lat.n_chord
    nodes = np.concatenate([lat.bound_a.reshape(ns, nc, 3),
                            lat.bound_b.reshape(ns, nc, 3)[-1:]]) * stretch
    hs = vortex.HorseshoeSet(nodes, 1e-6 * lat.b_ref, x_scale=beta)
    A = hs.normalwash(lat.colloc * stretch, lat.normal)
    g = np.linalg.solve(A, rhs)
    mid = 0.5 * (lat.bound_a + lat.bound_b) * stretch
    return g, hs.velocity(mid, g, self_panels=True)


def _rhs(lat, surfaces):
    n = lat.normal
    return np.hstack([-n[:, [0, 2]], control_rhs(lat, surfaces)])


def test_split_solve_equals_the_full_span_solve():
    st = _wing()
    surfaces = _surfaces(float(st.semispan))
    lat = build_lattice(st, n_span=12, n_chord=6, full_span=True, controls=surfaces)
    split = symmetry.mirror_split(lat, min_panels=0)
    assert split is not None  # surfaces on both sides keep the panels mirror images
    beta = math.sqrt(1.0 - MACH ** 2)
    solver = symmetry.MirrorSolver(lat, split, np.array([1.0 / beta, 1.0, 1.0]),
                                   1e-6 * lat.b_ref, beta)
    R = _rhs(lat, surfaces)
    g_ref, v_ref = _direct(lat, R)
    g = solver.solve(R, np.linalg.solve)
    v = solver.velocity_at_bound(g_ref)
    check(IMAGES, "circulations, max difference / max |gamma| (144 panels, 7 rhs)", 0.0,
          float(np.abs(g - g_ref).max() / np.abs(g_ref).max()), abs=ROUND_OFF)
    check(IMAGES, "induced velocity at the bound vortices, max difference / max |v|", 0.0,
          float(np.abs(v - v_ref).max() / np.abs(v_ref).max()), abs=ROUND_OFF)
    stb, mir = split
    # the free stream is symmetric: both halves carry the same circulation, to the bit
    assert np.array_equal(g[stb, :2], g[mir, :2])
    # the antisymmetric aileron (columns 2, 3): opposite circulation on the two halves
    assert np.array_equal(g[stb, 2:4], -g[mir, 2:4])
    assert np.abs(g[stb, 2:4]).max() > 0.01 * np.abs(g[:, :2]).max()


def test_control_model_above_the_size_threshold_uses_the_split():
    st = _wing()
    surfaces = _surfaces(float(st.semispan))
    n_span = -(-symmetry.MIN_PANELS // (2 * 8))  # panels per half: the threshold or just above
    lat = build_lattice(st, n_span=n_span, n_chord=8, full_span=True, controls=surfaces)
    assert lat.colloc.shape[0] >= symmetry.MIN_PANELS
    cm = ControlModel.build(lat, MACH, surfaces)
    assert cm.model._split is not None
    g_ref, v_ref = _direct(lat, _rhs(lat, surfaces))
    check(IMAGES, f"control model circulations, {lat.colloc.shape[0]} panels", 0.0,
          float(np.abs(cm._B - g_ref).max() / np.abs(g_ref).max()), abs=ROUND_OFF)
    check(IMAGES, "control model bound velocities", 0.0,
          float(np.abs(cm._V - v_ref).max() / np.abs(v_ref).max()), abs=ROUND_OFF)
    state = cm.solve(5.0, {"ail": 8.0, "flap": 10.0}, 0.03)
    assert 0.2 < state.CL < 1.5 and state.Cl_roll != 0.0


def test_one_sided_surface_keeps_the_full_span_solve():
    st = _wing()
    surfaces = _surfaces(float(st.semispan), side="starboard")
    lat = build_lattice(st, n_span=12, n_chord=6, full_span=True, controls=surfaces)
    # the surface's end is snapped onto a strip edge on its own side only: not mirror images
    assert symmetry.mirror_split(lat, min_panels=0) is None
    assert symmetry.mirror_split(build_lattice(st, n_span=12, n_chord=6)) is None  # images
