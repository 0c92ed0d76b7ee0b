"""The lift each display-surface cell carries (Pa of plan area), one flight case at a time.

Split rule: each lattice panel's share of its strip lift is spread over the cells nearest that
panel in proportion to their plan area, so a closed wing's upper and lower skins carry about
half each, and sum(pressure_jump_Pa * plan_area_m2) over the surface equals the lift of the
wing in the file (one semi-span for a half wing, both for a full one).
"""

from __future__ import annotations

import numpy as np

from geomload.export.display_surface import Surface, nearest_centre, panel_centres


def panel_forces(run, case_result) -> np.ndarray:
    """(N,) force (N) of each lattice panel such that each strip's panels sum to the strip's lift
    (lift_per_q x q x width: the lift the loads integrate); the shape within a strip follows
    dcp x area, corrected additively in proportion to |dcp x area| (exact for a one-signed strip,
    and it keeps the shape of a strip whose net lift is about zero)."""
    lat, a = run.lattice, case_result.aero
    ns, nc = int(lat.n_span), int(lat.n_chord)
    q = float(case_result.q_pa)
    f = (np.asarray(a.dcp, float) * np.asarray(lat.area, float) * q).reshape(ns, nc)
    target = np.asarray(a.lift_per_q, float) * q * np.asarray(lat.strip_width, float)
    w = np.abs(f)
    wsum = w.sum(axis=1, keepdims=True)
    share = np.where(wsum > 0, w / np.where(wsum > 0, wsum, 1.0), 1.0 / nc)
    return (f + (target - f.sum(axis=1))[:, None] * share).ravel()


def jump_map(run, surface: Surface) -> tuple:
    """The case-independent part of `pressure_jump`: (bins (m,) cell -> panel bin, area (2N,)
    plan area per bin, [(slice, dest)] per side: the panel each panel's force goes to)."""
    n_pan = int(np.asarray(run.lattice.area).size)
    bins = surface.panel + n_pan * (surface.side < 0)
    sides = (1, -1) if np.any(surface.side < 0) else (1,)
    area = np.bincount(bins, weights=surface.plan_area_m2, minlength=2 * n_pan)
    cen = panel_centres(run.lattice)[:, :2]
    routes = []
    for k, sgn in enumerate(sides):
        sl = slice(k * n_pan, (k + 1) * n_pan)
        have = area[sl] > 0
        if not have.any():
            continue
        dest = np.arange(n_pan)
        if not have.all():
            idx = np.flatnonzero(have)
            dest[~have] = idx[nearest_centre(cen[idx], cen[~have])]
        routes.append((sl, dest))
    return bins, area, routes


def pressure_jump(run, surface: Surface, case_result, _map=None) -> np.ndarray:
    """(m,) lift per unit plan area (Pa) each surface cell carries for one case (split rule in the
    module docstring). Panels nearest to no cell hand their force to the nearest panel that has
    cells (same side), so the surface total equals the lattice lift of the wing in the file."""
    bins, area, routes = jump_map(run, surface) if _map is None else _map
    n_pan = area.size // 2
    fp = panel_forces(run, case_result)
    force = np.zeros(2 * n_pan)
    for sl, dest in routes:
        force[sl] = np.bincount(dest, weights=fp, minlength=n_pan)
    with np.errstate(divide="ignore", invalid="ignore"):
        per_area = np.where(area > 0, force / np.where(area > 0, area, 1.0), 0.0)
    return per_area[bins]


_jump_map = jump_map  # the earlier name
