"""Cut the stations along the semi-span and measure each airfoil section (`Stations`)."""

from __future__ import annotations

import numpy as np

from ..errors import GeometryError
from .airfoil import cosine_spacing
from .records import Stations
from .section import camber_x, section_properties
from .slicing import slice_indexed
from .spanindex import SpanIndex

INSET = 0.005  # stations inset from tip cap and root cap, fraction of the semi-span
# Not-a-wing limits (common practice, no source): no practical wing section is more than 35 %
# thick (the thickest in service are about 25 %, from memory), and no station's chord line is
# turned more than 45 deg from the root's (wing twist is a few degrees; a block or a blob cut
# across gives chord lines that swing with the cut). Low aspect ratio alone is no test: AR 2-3
# flying wings have a semi-span shorter than the root chord; only AR < 1 is refused.
MAX_THICKNESS_RATIO = 0.35
MAX_TWIST_DEG = 45.0


def _no_progress(stage, done, total):
    pass


def station_levels(y0, y1, n, spacing):
    """n station positions from y0 to y1, 'cosine' (clustered at both ends) or 'uniform'."""
    if spacing == "cosine":
        return y0 + (y1 - y0) * cosine_spacing(n)
    if spacing == "uniform":
        return np.linspace(y0, y1, n)
    raise GeometryError(f"station spacing {spacing!r} not one of cosine, uniform")


def cut_stations(mesh, frame, n=20, spacing="cosine", progress=None, index=None) -> Stations:
    """Cut n stations along the starboard semi-span and measure each airfoil section.

    Stations run from 0.5 % of the semi-span outboard of the root (of the root cap of a half
    wing, of the plane of symmetry of a full one: the same levels for both, so that a half and a
    full-span export of one wing give the same stations and loads) to 0.5 % inside the tip. Stations whose cut is not a closed loop are skipped with a
    note; fewer than 3 good stations, a median section thicker than 35 % of its chord, a station
    twisted more than 45 deg, or a semi-span under half the mean chord (AR < 1) raise
    GeometryError. Lengths m, angles deg, wing frame (see `records.Stations`).
    index: an optional `SpanIndex` over mesh.triangles (e.g. from
    `frame.detect_frame_indexed`), reused instead of a new pass over all triangles.
    """
    progress = progress or _no_progress
    if int(n) < 3:
        raise GeometryError(f"{mesh.source}: at least 3 stations are needed (got {n})")
    r1 = np.asarray(frame.rotation, float)[1]
    if index is None or index.tris is not mesh.triangles:
        index = SpanIndex(mesh.triangles, r1)  # the one pass over all triangles
    if np.array_equal(index.e, r1):
        s_max = index.s_max
    elif np.array_equal(index.e, -r1):
        s_max = -index.s_min
    else:
        s_max = float(index.extent(r1)[1])
    semispan = float(s_max - r1 @ frame.origin)
    if semispan <= 0:
        raise GeometryError(f"{mesh.source}: no geometry on the starboard side of the root plane")
    y_root = float(getattr(frame, "y_root", 0.0) or 0.0)  # an exposed wing's root off y = 0
    y0 = y_root + INSET * (semispan - y_root)  # half and full wings alike
    ys = station_levels(y0, semispan - INSET * (semispan - y_root), int(n), spacing)
    progress("cut", 0, len(ys))
    cuts = slice_indexed(index, frame.rotation, frame.origin, ys)
    cuts, joined = _join_pieces(mesh, index, frame, ys, cuts)
    rows, notes, stray = [], [], 0
    for i, (y, (loop, n_stray, is_open)) in enumerate(zip(ys, cuts)):
        stray += n_stray
        if loop is None:
            notes.append(f"station {i + 1} at y = {y:.4f} m skipped: the cut is not a closed loop "
                         f"(hole in the mesh?)")
        else:
            rows.append((y, section_properties(loop)))
        progress("cut", i + 1, len(ys))
    if stray:
        notes.append(f"{stray} stray loop(s) beside the airfoil ignored (over all stations)")
    if joined:
        notes.append(f"warning: bodies: at {joined} station(s) the cut meets touching or "
                     "overlapping pieces of the wing: their loops are joined into one airfoil "
                     "(the outer boundary of their union)")
    if len(rows) < 3:
        raise GeometryError(f"{mesh.source}: only {len(rows)} of {len(ys)} stations give a closed "
                            f"airfoil section (need 3)")
    y = np.array([r[0] for r in rows])
    g = {k: np.array([r[1][k] for r in rows]) for k in rows[0][1]}
    tc = float(np.median(g["thickness_ratio"]))
    if not tc <= MAX_THICKNESS_RATIO:
        raise GeometryError(f"{mesh.source}: does not look like a wing (sections are {100 * tc:.1f} % "
                            f"as thick as they are long; a wing section is at most "
                            f"{100 * MAX_THICKNESS_RATIO:.0f} %)")
    twist = np.abs(g["twist_deg"])
    if not np.all(twist <= MAX_TWIST_DEG):
        k = int(np.argmax(np.where(np.isfinite(twist), twist, np.inf)))
        raise GeometryError(f"{mesh.source}: does not look like a wing (the chord line at y = "
                            f"{y[k]:.4g} m is turned {g['twist_deg'][k]:+.0f} deg from the root's; "
                            f"a wing's twist is under {MAX_TWIST_DEG:.0f} deg)")
    if semispan / float(np.mean(g["chord"])) < 0.5:
        raise GeometryError(f"{mesh.source}: does not look like a wing (semi-span "
                            f"{semispan:.3g} m is under half the mean chord)")
    le, te = g["le"], g["te"]
    z_qc = le[:, 1] + 0.25 * (te[:, 1] - le[:, 1])
    dihedral = np.degrees(np.arctan(np.gradient(z_qc, y)))
    return Stations(y=y, x_le=le[:, 0], z_le=le[:, 1], x_te=te[:, 0], z_te=te[:, 1], chord=g["chord"],
                    twist_deg=g["twist_deg"], thickness_ratio=g["thickness_ratio"],
                    x_thickness=g["x_thickness"], camber_ratio=g["camber_ratio"], x_camber=g["x_camber"],
                    dihedral_deg=dihedral, camber_x=camber_x(), camber_z=g["camber"],
                    semispan=semispan, notes=tuple(notes))


def _join_pieces(mesh, index, frame, ys, cuts):
    """(cuts, number of stations joined): where a station meets several loops that are pieces
    of one airfoil (touching or overlapping bodies), those loops joined into one (`joinloops`).

    A mesh of several bodies is cut body by body (two bodies may share points on a joint face,
    which would chain their loops into one); a single body only where its cut has stray loops.
    """
    from .joinloops import join_loops
    from .slicing import slice_all

    sizes = tuple(getattr(mesh, "body_sizes", ()) or ())
    ys = np.asarray(ys, float)
    if len(sizes) > 1 and sum(sizes) == mesh.triangles.shape[0]:
        several = list(range(ys.size))
        alls = [[] for _ in several]
        start = 0
        for n in sizes:
            part = mesh.triangles[start:start + n]
            start += n
            for k, loops in enumerate(slice_all(part, frame.rotation, frame.origin, ys)):
                alls[k] += loops
    else:
        several = [i for i, (loop, n_stray, _) in enumerate(cuts) if loop is not None and n_stray]
        if not several:
            return cuts, 0
        alls = slice_indexed(index, frame.rotation, frame.origin, ys[several], all_loops=True)
    cuts = list(cuts)
    joined = 0
    for i, loops in zip(several, alls):
        if len(loops) < 2:
            continue
        loop, n = join_loops(loops)
        if n > 1:
            joined += 1
            cuts[i] = (loop, len(loops) - n, False)
    return cuts, joined
