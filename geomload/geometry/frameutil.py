"""Small vector helpers of the frame detection (unit vectors, snapping to CAD axes, bases)."""

from __future__ import annotations

import numpy as np

# A surface normal within this of the span axis counts as part of a flat root cap (a cap is
# planar; 10 deg lets a finely faceted cap with rounding at its rim count, common practice).
CAP_NORMAL_DEG = 10.0


def snap(v, deg):
    i = int(np.argmax(np.abs(v)))
    if abs(v[i]) >= np.cos(np.radians(deg)):
        e = np.zeros(3)
        e[i] = np.sign(v[i])
        return e, True
    return v / np.linalg.norm(v), False


def unit(v):
    return v / np.linalg.norm(v)


def basis(y, hint):
    """Rotation with rows (x, y, z): y given, x = hint made normal to y, z = x cross y."""
    x = unit(hint - (hint @ y) * y)
    return np.vstack([x, y, np.cross(x, y)])


def root_cap_normal(tris, y_hat, tol, with_area=False, rows=None):
    """Area-weighted normal (oriented root -> tip) of the flat cap at the root end, or None.

    tris: triangles near the root end (or, with `rows`, a soup and the indices of those
    triangles in it); the cap is made of those within tol of the root plane.
    with_area: return (normal, cap area) instead (None when there is no cap).
    """
    if (tris.shape[0] if rows is None else rows.size) == 0:
        return None
    i = int(np.argmax(np.abs(y_hat)))
    axis = abs(y_hat[i]) == 1.0 and np.count_nonzero(y_hat) == 1
    if not axis and rows is not None:  # a tilted axis: the rows' triangles themselves
        tris, rows = tris[rows], None
    if axis:  # a CAD axis: the coordinate itself (the product's value)
        col = tris[:, :, i] if rows is None else tris[rows, :, i]
        yv = col if y_hat[i] > 0 else -col
    else:
        yv = tris @ y_hat  # (m, 3)
    level = float(yv.min())
    # yv >= level, so |yv - level| of a triangle's farthest vertex is max(yv) - level (rounding
    # is monotonic: the same comparison as the largest of the three differences)
    top = np.maximum(np.maximum(yv[:, 0], yv[:, 1]), yv[:, 2])
    near = np.nonzero(top - level < tol)[0]
    if near.size == 0:
        return None
    if rows is not None:
        near = rows[near]
    t = tris[near]
    if axis:  # only the triangles that can face along the axis (a superset of `good` below)
        t = t[_may_face_axis(t, i)]
    n = np.cross(t[:, 1] - t[:, 0], t[:, 2] - t[:, 0])
    n = n * np.sign(n @ y_hat)[:, None]
    a = np.linalg.norm(n, axis=1)
    good = (n @ y_hat) > np.cos(np.radians(CAP_NORMAL_DEG)) * a
    if not good.any():
        return None
    return (unit(n[good].sum(0)), 0.5 * float(a[good].sum())) if with_area else unit(n[good].sum(0))


_FACE_SLACK = 1e-6  # relative widening of the pre-selection below, far above round-off (1e-16)


def _may_face_axis(t, i):
    """Mask of the triangles t (k, 3, 3) whose normal can lie within CAP_NORMAL_DEG of CAD axis
    i: n_i^2 >= cos^2 (1 - slack) |n|^2, n the cross product of the edges (coordinate by
    coordinate, as np.cross forms it). A wide superset of `root_cap_normal`'s own test, which
    then runs unchanged, row by row, on the triangles kept."""
    e1 = [t[:, 1, k] - t[:, 0, k] for k in range(3)]
    e2 = [t[:, 2, k] - t[:, 0, k] for k in range(3)]
    n = [e1[1] * e2[2] - e1[2] * e2[1], e1[2] * e2[0] - e1[0] * e2[2],
         e1[0] * e2[1] - e1[1] * e2[0]]
    sq = [c * c for c in n]
    c2 = np.cos(np.radians(CAP_NORMAL_DEG)) ** 2 * (1.0 - _FACE_SLACK)
    return ~(sq[i] < c2 * (sq[0] + sq[1] + sq[2]))  # NaN rows kept: the exact test decides
