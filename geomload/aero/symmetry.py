"""A full-span lattice that is its own mirror image in y = 0, solved as two half-span systems.

Method of images (e.g. Katz & Plotkin, Low-Speed Aerodynamics, 2nd ed., the section on
symmetry; from memory): order the panels as the starboard half s and the port mirror m of each
starboard panel. A mirror-symmetric lattice has the influence matrix

    [A_ss  A_sm] [g_s]   [r_s]
    [A_sm  A_ss] [g_m] = [r_m]

(A_ss: starboard horseshoes at starboard collocation points; A_sm: the port horseshoes there,
which are the starboard ones' images), so with u = g_s + g_m and v = g_s - g_m

    (A_ss + A_sm) u = r_s + r_m,    (A_ss - A_sm) v = r_s - r_m

for every right-hand side (deflections on one side, antisymmetric ailerons, roll rate): two
LU factorisations of half the size (a quarter of the work of one of the full size) and half
the pair evaluations of the full assembly. It is the same linear system, so the solution is
the full-span one up to round-off (the starboard and the port influences are computed term
by term as for the whole span, see `MirrorSolver`).

The lattice qualifies only when its starboard and port panels are exact mirror images
(`mirror_split`): a surface on one side only moves that side's strip edges
(`controls.snap_edges`), and such a lattice is solved whole.
"""

from __future__ import annotations

import numpy as np

from geomload.aero import vortex

_FLIP_Y = np.array([1.0, -1.0, 1.0])
MIN_PANELS = 1000  # full-span panels from which the split is used. It makes mirror-image load
# cases (left and right rolls, the two sides of a flap case) exactly equal where the whole-span
# LU left them 1e-10 apart, so the envelope's governing case of such a tie is then the first in
# case order instead of the one round-off favoured. Below this size (the sample's 800-panel
# control lattice) the whole-span solve is kept, so the stored sample run keeps its case names;
# 0 uses the split everywhere (measured at 800 panels: 0.10 -> 0.05 s CPU per control model).


def mirror_split(lattice, min_panels=None):
    """(starboard, mirror) panel index arrays (H,) of a full-span lattice of at least
    `min_panels` panels whose port panels are the exact mirror images of its starboard ones
    (bound vortex ends, collocation points, normals), or None (a half lattice with images, a
    smaller lattice, an odd strip count, or any difference); min_panels None: MIN_PANELS."""
    min_panels = MIN_PANELS if min_panels is None else min_panels
    if lattice.mirrored or lattice.n_span % 2 or lattice.colloc.shape[0] < min_panels:
        return None
    ns, nc = lattice.n_span, lattice.n_chord
    h = ns // 2
    strips = np.arange(h)
    stb = ((h + strips)[:, None] * nc + np.arange(nc)).reshape(-1)
    mir = ((h - 1 - strips)[:, None] * nc + np.arange(nc)).reshape(-1)
    pairs = ((lattice.colloc, lattice.colloc), (lattice.normal, lattice.normal),
             (lattice.bound_a, lattice.bound_b), (lattice.bound_b, lattice.bound_a))
    for port, starboard in pairs:
        if not np.array_equal(port[mir] * _FLIP_Y, starboard[stb]):
            return None
    return stb, mir


class MirrorSolver:
    """Solutions and induced velocities of a mirror-symmetric full-span lattice through its two
    half-span systems (see the module docstring).

    lattice : the full-span Lattice; split : `mirror_split(lattice)`; stretch : (3,) the
    Prandtl-Glauert scaling of the coordinates; core : vortex core radius (m); beta : the
    Prandtl-Glauert factor (the x velocity is divided by it).

    The starboard and the port horseshoes are two sets with the whole span's centre, evaluated
    at the starboard points only: every term is computed as the whole-span set computes it, so
    the two solutions differ by the round-off of the two factorisations alone.
    """

    def __init__(self, lattice, split, stretch, core: float, beta: float):
        self.stb, self.mir = split
        ns, nc = lattice.n_span, lattice.n_chord
        h = ns // 2
        nodes = np.concatenate([lattice.bound_a.reshape(ns, nc, 3),
                                lattice.bound_b.reshape(ns, nc, 3)[-1:]]) * stretch
        centre = 0.5 * (nodes.reshape(-1, 3).min(0) + nodes.reshape(-1, 3).max(0))
        # port strips 0..h-1 (tip to root) are panels 0..H-1; starboard strips h..ns-1
        self.port = vortex.HorseshoeSet(nodes[:h + 1], core, x_scale=beta, centre=centre)
        self.own = vortex.HorseshoeSet(nodes[h:], core, x_scale=beta, centre=centre)
        self.colloc = lattice.colloc[self.stb] * stretch
        self.normal = lattice.normal[self.stb]
        self.mid = 0.5 * (lattice.bound_a + lattice.bound_b)[self.stb] * stretch
        self.n = lattice.colloc.shape[0]

    def solve(self, rhs, solve_dense, slotted=False) -> np.ndarray:
        """Circulations (N, k) for right-hand sides rhs (N, k); solve_dense(A, b) solves one
        dense half system (raises on a singular or non-finite one); slotted: it is called as
        solve_dense(A, b, slot), slot 0 for the symmetric and 1 for the antisymmetric system."""
        # column j of the port block: the mirror of starboard horseshoe j (panel mir[j])
        plus, minus = self.own.normalwash_sum_diff(self.port, self.colloc, self.normal,
                                                   self.mir)
        rs, rm = rhs[self.stb], rhs[self.mir]
        extra = (0,) if slotted else ()
        u = solve_dense(plus, rs + rm, *extra)
        del plus
        extra = (1,) if slotted else ()
        v = solve_dense(minus, rs - rm, *extra)
        g = np.empty((self.n,) + u.shape[1:])
        g[self.stb] = 0.5 * (u + v)
        g[self.mir] = 0.5 * (u - v)
        return g

    def velocity_at_bound(self, gammas) -> np.ndarray:
        """Velocity (N, 3, k) induced at the bound-vortex midpoints by circulations (N, k)."""
        g = np.asarray(gammas, float)
        g = g[:, None] if g.ndim == 1 else g
        k = g.shape[1]
        h = self.stb.size
        # at a starboard point: the circulations as they are; at a port point, seen in the
        # mirror from its starboard twin: the two halves' circulations swapped
        swapped = np.empty((h, k))
        swapped[self.mir] = g[self.stb]
        own = self.own.velocity(self.mid, np.hstack([g[self.stb], g[self.mir]]),
                                self_panels=True)
        port = self.port.velocity(self.mid, np.hstack([g[:h], swapped]))
        own += port
        out = np.empty((self.n, 3, k))
        out[self.stb] = own[:, :, :k]
        mirrored = own[:, :, k:]
        mirrored[:, 1] *= -1.0
        out[self.mir] = mirrored
        return out


__all__ = ["MIN_PANELS", "mirror_split", "MirrorSolver"]
