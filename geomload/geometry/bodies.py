"""Several bodies in one file: find them, say what each is, and pick the wing.

Shapes (common practice, no source): a body's principal extents L1 >= L2 >= L3 (area-weighted
principal axes of its surface). A *lifting surface* is thin (L3 at most THIN of L2); its span is
L1 and its up axis the thin one; it is a *fin* when its up axis is horizontal relative to the
wing's. A *slender body* (a fuselage, a boom) is long (L1 at least SLENDER x L2) and round-ish.
Two lifting surfaces whose surfaces come within TOUCH of each other and share a plane are parts
of one wing; a small lifting surface within GAP of a wing's trailing edge is a control surface.

The whole-soup check `looks_single` costs one bounds pass (the same pass the frame detection
makes) and a few cuts, so a single-body wing pays almost nothing; only files that show several
loops in a cut are split into connected shells (vertices welded by exact coordinates).
"""

from __future__ import annotations

import numpy as np

from .readers import triangle_areas

THIN = 0.35  # thickness / chord above this is no wing section (as stations.MAX_THICKNESS_RATIO)
SLENDER = 3.0  # a fuselage is at least 3 times as long as it is wide (from memory: 5-10 typical)
TOUCH = 1e-3  # surfaces closer than 0.1 % of the chord touch (a joint, a shared face)
GAP = 0.03  # a control surface's gap to the wing is under 3 % of the local chord (0.5-1 % usual)
SMALL = 0.35  # a control surface has under 35 % of the wing's surface area
SIMILAR_SPAN = 0.6  # two separate lifting surfaces within this span ratio: a biplane / ambiguous
AMBIGUOUS = 1.6  # the two largest extents within this factor: the long axis is in doubt
MIRROR_FIT = 0.01  # mirror-image halves: reflected vertices within 1 % of the chord of the other

_CHECK_LEVELS = np.linspace(0.1, 0.9, 7)


def principal(tris, stride_target=40_000):
    """(mean (3,), axes (3, 3) rows L1, L2, L3 directions, extents (3,)) of a soup, from an
    evenly strided sample of about `stride_target` triangles (plenty for three axes)."""
    sub = np.ascontiguousarray(tris[:: max(1, tris.shape[0] // stride_target)])
    w = triangle_areas(sub)
    cen = sub.mean(1)
    mean = (w[:, None] * cen).sum(0) / max(w.sum(), 1e-300)
    dev = cen - mean
    _, v = np.linalg.eigh((dev.T * w) @ dev / max(w.sum(), 1e-300))
    axes = v[:, ::-1].T
    pts = sub.reshape(-1, 3) - mean
    # einsum, not `pts @ axes.T`: a threaded BLAS product of a tall (n, 3) by a (3, 3) costs
    # several times more CPU than the plain loop on a shared machine (measured: 0.045 against
    # 0.009 s for 120 000 points)
    ext = np.ptp(np.einsum("ij,kj->ik", pts, axes), axis=0)
    return mean, axes, ext


def looks_single(tris):
    """True when cuts across the largest extent each give one closed loop and no stray piece."""
    from .frameutil import snap
    from .slicing import slice_indexed
    from .spanindex import SpanIndex

    _, axes, ext = principal(tris)
    if ext[0] < AMBIGUOUS * ext[1]:  # no clear long axis (a cross, a low-AR wing): look closer
        return False, None
    e = snap(axes[0], 5.0)[0]
    index = SpanIndex(tris, e)
    hint = axes[1] - (axes[1] @ e) * e
    x = hint / np.linalg.norm(hint)
    R = np.vstack([x, e, np.cross(x, e)])
    lo, hi = index.s_min, index.s_max
    cuts = slice_indexed(index, R, e * lo, (hi - lo) * _CHECK_LEVELS)
    return all(loop is not None and n_stray == 0 for loop, n_stray, _ in cuts), index


def components(tris):
    """Connected shells of a soup: list of index arrays (triangles sharing a vertex connect).

    Vertices are welded by exact coordinates (a CAD export writes a shared vertex identically
    in every triangle that uses it).
    """
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    m = tris.shape[0]
    v = np.ascontiguousarray(tris.reshape(-1, 3), dtype=np.float64)
    _, vid = np.unique(v.view(np.dtype((np.void, 24))).ravel(), return_inverse=True)
    vid = vid.ravel()
    nv = int(vid.max()) + 1
    rows = np.repeat(np.arange(m), 3)
    g = coo_matrix((np.ones(3 * m, np.int8), (rows, m + vid)), shape=(m + nv, m + nv))
    n, lab = connected_components(g, directed=False)
    lab = lab[:m]
    order = np.argsort(lab, kind="stable")
    cuts = np.nonzero(np.diff(lab[order]))[0] + 1
    return [np.sort(g_) for g_ in np.split(order, cuts)]


class Body:
    """One shell: its triangles, shape and kind (filled by `classify`)."""

    def __init__(self, index, tris):
        self.index = index
        self.tris = tris
        self.mean, self.axes, self.ext = principal(tris)
        self.area = float(triangle_areas(tris).sum())
        self.lo = tris.reshape(-1, 3).min(0)
        self.hi = tris.reshape(-1, 3).max(0)
        self.kind = "other"
        self.parts = [self]

    @property
    def lifting(self):
        return self.ext[2] <= THIN * self.ext[1]

    @property
    def slender(self):
        return self.ext[0] >= SLENDER * self.ext[1] and self.ext[1] <= 2.0 * self.ext[2]

    @property
    def span(self):
        return float(self.ext[0])

    def describe(self):
        if self.kind in ("fuselage", "slender body"):
            return f"a slender body {self.span:.3g} m long"
        if self.lifting:
            return f"a lifting surface of {self.span:.3g} m span"
        return f"a body {self.ext[0]:.3g} x {self.ext[1]:.3g} x {self.ext[2]:.3g} m"


def gap(a, b, sample=4000):
    """Smallest distance between the vertices of two bodies (a vertex sample of the larger)."""
    from scipy.spatial import cKDTree

    pa, pb = a.tris.reshape(-1, 3), b.tris.reshape(-1, 3)
    if pa.shape[0] < pb.shape[0]:
        pa, pb = pb, pa
    # only the vertices of the larger body inside the smaller one's box (grown) matter
    grow = 0.05 * float(np.ptp(pb, 0).max()) + 1e-12
    near = np.all((pa >= pb.min(0) - grow) & (pa <= pb.max(0) + grow), axis=1)
    if not near.any():
        lo = np.maximum(a.lo, b.lo)
        hi = np.minimum(a.hi, b.hi)
        return float(np.linalg.norm(np.maximum(lo - hi, 0.0)))
    d, _ = cKDTree(pa[near]).query(pb[:: max(1, pb.shape[0] // sample)])
    return float(d.min())


def classify(bodies, path):
    """Kinds for every body, the wing's parts and the others. Returns dict(wing=[Body...],
    controls=[Body...], tail=Body or None, fin=[...], fuselage=[...], others=[...]).

    Raises GeometryError (one line, naming the file and what was found) when no wing can be
    chosen without the user: no lifting surface, two separate surfaces of similar span (biplane,
    two solids, crossing wings).
    """
    from ..errors import GeometryError

    lifting = [b for b in bodies if b.lifting and not b.slender]
    for b in bodies:
        if b.slender:
            b.kind = "fuselage"

    def found():
        return (f"{len(bodies)} bodies: " + ", ".join(b.describe() for b in bodies)
                + "; give --body N")

    if not lifting:
        raise GeometryError(f"{path}: no lifting surface found ({found()})")
    # touching, coplanar lifting surfaces are parts of one surface (joined transitively)
    group = list(range(len(lifting)))

    def root(i):
        while group[i] != i:
            i = group[i]
        return i

    for i in range(len(lifting)):
        for j in range(i + 1, len(lifting)):
            a, b = lifting[i], lifting[j]
            if abs(a.axes[2] @ b.axes[2]) < np.cos(np.radians(30.0)):
                continue
            dist = gap(a, b)
            chord = min(a.ext[1], b.ext[1])
            if dist <= TOUCH * chord:
                group[root(j)] = root(i)
    groups = {}
    for i, b in enumerate(lifting):
        groups.setdefault(root(i), []).append(b)
    # pieces of one wing split by a missing strip continue each other along the span
    keys = list(groups)
    for i in range(len(keys)):
        for j in range(i + 1, len(keys)):
            ga, gb = groups.get(keys[i]), groups.get(keys[j])
            if (ga is not None and gb is not None and _end_to_end(ga, gb)
                    and not _mirror_pair(max(ga, key=lambda p: p.area),
                                         max(gb, key=lambda p: p.area))):
                groups[keys[i]] = ga + gb
                del groups[keys[j]]
    surfaces = []
    for parts in groups.values():
        pts = np.concatenate([p.tris.reshape(-1, 3)[::7] for p in parts])
        big = max(parts, key=lambda p: p.area)
        span = float(np.ptp(pts @ big.axes[0])) if len(parts) > 1 else big.span
        surfaces.append((span, parts))
    surfaces.sort(key=lambda t: -t[0])
    ref_span, wing = surfaces[0]
    main = max(wing, key=lambda p: p.area)
    span_dir = main.axes[0]
    for span_b, parts in surfaces[1:]:
        parallel = abs(max(parts, key=lambda p: p.area).axes[0] @ span_dir) > np.cos(np.radians(30.0))
        if (not parallel and span_b >= SIMILAR_SPAN * ref_span
                and any(gap(p, q) <= TOUCH * min(p.ext[1], q.ext[1]) for p in parts for q in wing)):
            raise GeometryError(f"{path}: two crossing lifting surfaces: {found()}")
    rest = [p for _, parts in surfaces[1:] for p in parts]
    controls, tail, fins, others, mirror = kinds_beside(wing, main, rest, ref_span, found, path)
    for p in wing:
        p.kind = "wing" if p is main else "wing part"
    others += [b for b in bodies if b.kind == "other"]
    return dict(wing=wing, controls=controls, tail=tail, fins=fins,
                fuselage=[b for b in bodies if b.kind == "fuselage"], others=others,
                mirror=mirror)


def kinds_beside(wing, main, rest, ref_span, found, path, mirrors=True):
    """(controls, tailplane or None, fins, others, mirror half or None): the kinds of the
    lifting bodies `rest` beside the wing (its parts `wing`, the largest `main`, its span
    `ref_span`); sets each body's `kind`. found(): the "what was found" text of the error.
    mirrors: look for the wing's other half among them."""
    from ..errors import GeometryError

    up = main.axes[2]
    span_dir = main.axes[0]
    controls, tail, fins, others, mirror = [], None, [], [], None
    wing_area = sum(p.area for p in wing)
    for b in rest:
        d = min(gap(p, b) for p in wing)
        chord = min(main.ext[1], b.ext[1] / 0.2)  # the wing's chord near the surface
        horizontal = abs(b.axes[2] @ up) > np.cos(np.radians(45.0))
        if b.area < SMALL * wing_area and d <= GAP * chord and horizontal:
            b.kind = "control surface"
            controls.append(b)
        elif not horizontal:
            b.kind = "fin"
            fins.append(b)
        elif mirrors and _mirror_pair(main, b) and len(wing) == 1 and mirror is None:
            b.kind = "wing (other half)"
            others.append(b)
            mirror = b
        elif b.span >= SIMILAR_SPAN * ref_span:
            parallel = abs(b.axes[0] @ span_dir) > np.cos(np.radians(30.0))
            what = ("two separate lifting surfaces of similar span (a biplane or two solids)"
                    if parallel else "two crossing lifting surfaces")
            raise GeometryError(f"{path}: {what}: {found()}")
        else:
            b.kind = "tailplane" if tail is None else "other lifting surface"
            if tail is None:
                tail = b
            else:
                others.append(b)
    return controls, tail, fins, others, mirror


def _mirror_pair(a, b):
    """True when b is a's mirror image across the plane midway between their centroids (the
    two halves of a wing either side of a fuselage): same area and extents within 2 %,
    centroids apart by more than half a span roughly along a's span (within 30 deg), and a's
    vertices reflected across that plane lie on b's surface (median distance to b's nearest
    vertex under MIRROR_FIT of the chord)."""
    from scipy.spatial import cKDTree

    if abs(b.area / a.area - 1) > 0.02 or np.any(np.abs(b.ext / a.ext - 1) > 0.02):
        return False
    d = b.mean - a.mean
    dist = float(np.linalg.norm(d))
    if dist <= 0.5 * a.span or abs(d @ a.axes[0]) < np.cos(np.radians(30.0)) * dist:
        return False
    n = d / dist
    pa = a.tris.reshape(-1, 3)[:: max(1, a.tris.shape[0] // 2000)]
    mid = 0.5 * (a.mean + b.mean)
    refl = pa - 2.0 * ((pa - mid) @ n)[:, None] * n
    gap_, _ = cKDTree(b.tris.reshape(-1, 3)).query(refl)
    return float(np.median(gap_)) < MIRROR_FIT * a.ext[1]


def _end_to_end(ga, gb):
    """True when group gb continues group ga along its span (parallel spans within 10 deg,
    gb's centre within half a chord of ga's span line, span ranges overlapping by under 10 %
    of the shorter): two pieces of one wing split by a missing strip, not a control surface
    (which lies beside the wing over its own span) nor a second wing above it."""
    a = max(ga, key=lambda p: p.area)
    b = max(gb, key=lambda p: p.area)
    e = a.axes[0]
    if abs(b.axes[0] @ e) < np.cos(np.radians(10.0)):
        return False
    d = b.mean - a.mean
    if np.linalg.norm(d - (d @ e) * e) > 0.5 * a.ext[1] + abs(d @ e) * np.tan(np.radians(10.0)):
        return False
    ra = np.concatenate([p.tris.reshape(-1, 3)[::5] @ e for p in ga])
    rb = np.concatenate([p.tris.reshape(-1, 3)[::5] @ e for p in gb])
    lo, hi = max(ra.min(), rb.min()), min(ra.max(), rb.max())
    return (hi - lo) < 0.1 * min(np.ptp(ra), np.ptp(rb))
