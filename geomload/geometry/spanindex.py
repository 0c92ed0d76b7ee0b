"""A bucket index of triangle bounds along one axis, to find the triangles a plane can cut.

One chunked pass over the soup gives each triangle's [lo, hi] interval along a unit axis e
(elementwise products, so the values do not depend on the chunking) and the CAD bounding box of
all vertices. Triangles are bucketed by lo (a 16-bit radix sort); a query for an interval of e
then touches only the buckets that can hold a triangle reaching it (lo >= A - the largest
triangle extent). A plane of any normal n that is not nearly normal to e meets the box inside
a slab of e, found from the box corners, so the same index serves cuts along tilted normals:
the candidates are a superset of the triangles that the plane crosses, which the cut then
filters exactly. Pure numpy, no state kept between calls.
"""

from __future__ import annotations

import numpy as np

_CHUNK = 1 << 13  # triangles per block of the bounds pass (stays in cache)
_KEY_CHUNK = 1 << 16  # triangles per block of the bucket-key pass
_MAX_BUCKETS = 8192
_MIN_COS = 1e-3  # |n . e| below this: treat the plane as parallel to the axis (take everything)


def coord(p, n):
    """n . p for points p (..., 3), elementwise (bit-reproducible whatever the array shape)."""
    return p[..., 0] * n[0] + p[..., 1] * n[1] + p[..., 2] * n[2]


class SpanIndex:
    """Per-triangle bounds of an (m, 3, 3) soup along unit axis `axis`, bucketed for queries.

    Attributes: e (3,), lo / hi (m,) triangle bounds along e, s_min / s_max their extremes,
    box: CAD bounding box of all vertices (computed on first use; units of the coordinates).
    """

    def __init__(self, tris, axis):
        self.tris = tris
        e = np.asarray(axis, float)
        self.e = e / np.linalg.norm(e)
        m = tris.shape[0]
        self.lo, self.hi = lo, hi = np.empty(m), np.empty(m)
        axis_i = int(np.argmax(np.abs(self.e)))
        exact = abs(self.e[axis_i]) == 1.0  # a CAD axis: no products needed
        flip = exact and self.e[axis_i] < 0
        for a in range(0, m, _CHUNK):
            b = min(a + _CHUNK, m)
            s = tris[a:b, :, axis_i] if exact else coord(tris[a:b], self.e)
            mn, mx = (hi[a:b], lo[a:b]) if flip else (lo[a:b], hi[a:b])
            np.minimum(s[:, 0], s[:, 1], out=mn)
            np.minimum(mn, s[:, 2], out=mn)
            np.maximum(s[:, 0], s[:, 1], out=mx)
            np.maximum(mx, s[:, 2], out=mx)
            if flip:
                np.negative(mn, out=mn)
                np.negative(mx, out=mx)
        self._box = None
        self.s_min = float(lo.min()) if m else 0.0
        self.s_max = float(hi.max()) if m else 0.0
        nb = int(min(_MAX_BUCKETS, max(1, m // 64)))
        self.width = max(self.s_max - self.s_min, 1e-300) / nb
        self.nb = nb
        # bucket keys, counts and the largest extent in blocks (no full-size temporaries); the
        # same elementwise operations as `_bucket`, and exact integer counts and maxima
        key = np.empty(m, np.int16)
        counts = np.zeros(nb, np.int64)
        h_max = 0.0
        t = np.empty(min(m, _KEY_CHUNK))
        for a in range(0, m, _KEY_CHUNK):
            b = min(a + _KEY_CHUNK, m)
            u = t[:b - a]
            np.subtract(hi[a:b], lo[a:b], out=u)
            h_max = max(h_max, float(u.max()))
            np.subtract(lo[a:b], self.s_min, out=u)
            np.divide(u, self.width, out=u)
            np.floor(u, out=u)
            np.clip(u, 0, nb - 1, out=u)
            k = key[a:b]
            k[...] = u
            counts += np.bincount(k, minlength=nb)
        self.h_max = h_max
        self.order = np.argsort(key, kind="stable")  # radix sort for 16-bit keys
        self.starts = np.concatenate([[0], np.cumsum(counts)])

    @property
    def box(self):
        """(min (3,), max (3,)) CAD bounding box of all vertices (one pass, on first use)."""
        if self._box is None:
            bmin, bmax = np.full(3, np.inf), np.full(3, -np.inf)
            for a in range(0, self.lo.size, _CHUNK):
                c = self.tris[a:a + _CHUNK]
                for i in range(3):  # per axis: a reduction over all axes of a view is fast
                    bmin[i] = np.minimum(bmin[i], c[:, :, i].min())
                    bmax[i] = np.maximum(bmax[i], c[:, :, i].max())
            self._box = (bmin, bmax)
        return self._box

    def _bucket(self, s):
        return np.clip(np.floor((np.asarray(s, float) - self.s_min) / self.width), 0, self.nb - 1)

    def query(self, a, b):
        """Sorted indices of the triangles whose [lo, hi] meets every interval [a_i, b_i]."""
        a, b = np.atleast_1d(np.asarray(a, float)), np.atleast_1d(np.asarray(b, float))
        k = np.argsort(a)
        a, b = a[k], b[k]
        merged = []  # disjoint sorted intervals
        for ai, bi in zip(a.tolist(), b.tolist()):
            if merged and ai <= merged[-1][1]:
                merged[-1][1] = max(merged[-1][1], bi)
            else:
                merged.append([ai, bi])
        out = []
        for ai, bi in merged:
            if bi < self.s_min or ai > self.s_max:
                continue
            b0 = int(self._bucket(ai - self.h_max))
            b1 = int(self._bucket(bi))
            cand = self.order[self.starts[b0]:self.starts[b1 + 1]]
            out.append(cand[(self.lo[cand] <= bi) & (self.hi[cand] >= ai)])
        if not out:
            return np.zeros(0, np.int64)
        idx = np.sort(np.concatenate(out)) if len(out) > 1 else np.sort(out[0])
        if idx.size > 1 and len(out) > 1:  # one triangle may reach two intervals
            idx = idx[np.concatenate([[True], idx[1:] != idx[:-1]])]
        return idx

    def _slab(self, n):
        """(cos, lo, hi): n . p = cos * (e . p) + t with t in [lo, hi] over the bounding box."""
        n = np.asarray(n, float)
        cos = float(n @ self.e)
        perp = n - cos * self.e
        if not perp.any():
            return cos, 0.0, 0.0
        (x0, y0, z0), (x1, y1, z1) = self.box
        corners = np.array([[x, y, z] for x in (x0, x1) for y in (y0, y1) for z in (z0, z1)])
        t = corners @ perp
        return cos, float(t.min()), float(t.max())

    def near_planes(self, n, values, margin):
        """Sorted indices of every triangle that can meet a plane n . p = value (+- margin)."""
        values = np.atleast_1d(np.asarray(values, float))
        cos, t0, t1 = self._slab(n)
        if abs(cos) < _MIN_COS:
            return np.arange(self.lo.size)
        s1, s2 = (values - t1) / cos, (values - t0) / cos
        pad = abs(margin / cos)
        return self.query(np.minimum(s1, s2) - pad, np.maximum(s1, s2) + pad)

    def extent(self, n):
        """Exact (min, max) of n . p over all vertices (elementwise products)."""
        if self.lo.size == 0:
            return 0.0, 0.0
        cos, t0, t1 = self._slab(n)
        if abs(cos) < _MIN_COS:
            v = coord(self.tris, np.asarray(n, float))
            return float(v.min()), float(v.max())
        w = (t1 - t0) / abs(cos) * (1 + 1e-9) + 1e-12 * (self.s_max - self.s_min + 1.0)
        ends = [self.query(self.s_min, self.s_min + w), self.query(self.s_max - w, self.s_max)]
        vals = [coord(self.tris[i], np.asarray(n, float)) for i in ends]
        lo_end, hi_end = (vals[0], vals[1]) if cos > 0 else (vals[1], vals[0])
        return float(lo_end.min()), float(hi_end.max())
