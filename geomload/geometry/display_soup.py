"""Vertex clustering of a triangle soup: the display surface's simplified mesh (CAD frame).

`decimate_soup` is pure geometry of the soup; the export stage turns its result into the
display surface (:mod:`geomload.export.display_surface`). For a large mesh the geometry stage
can build it in a worker thread while it finds the frame and cuts the stations
(`start_display_soup`), when a CPU is free: the same function on the same array, so the same
result as building it later.
"""

from __future__ import annotations

import threading

import numpy as np

DISPLAY_TRIANGLES = 100_000  # above this the display surface is decimated: a 2-D picture and a
# ParaView overview gain nothing from more, and per-case arrays stay small (common practice,
# no source)


def decimate_soup(triangles, target: int, box=None):
    """Vertex clustering of a triangle soup to about `target` triangles.

    The vertices are snapped to a cubic grid whose cell h is chosen from the surface area A so
    that about target / 2 cells are occupied (h = sqrt(2 A / target)); each occupied cell becomes
    one vertex at the mean of its members; collapsed and repeated triangles are dropped.
    Returns (points (n, 3), tri (m, 3)). Rossignac-Borrel vertex clustering (1993), the simplest
    decimation; the shape is kept to within about h. box: the soup's per-axis (min, max) when
    already known (as `readers.bounds` gives them), else measured here.
    """
    t = np.asarray(triangles, np.float64).reshape(-1, 3, 3)
    step = max(1, t.shape[0] // 200_000)  # the area from a regular sample: it only sets h
    ts = np.ascontiguousarray(t[::step])  # the same values; contiguous rows are faster
    area = 0.5 * np.linalg.norm(np.cross(ts[:, 1] - ts[:, 0], ts[:, 2] - ts[:, 0]), axis=1).sum()
    area *= t.shape[0] / ts.shape[0]
    v = t.reshape(-1, 3)
    from .readers import bounds

    lo, hi = bounds(t) if box is None else (np.asarray(box[0], float), np.asarray(box[1], float))
    h = max(float(np.sqrt(2.0 * area / max(target, 1))), 1e-12)
    dims = np.floor((hi - lo) / h).astype(np.int64) + 2
    key = _cell_keys(v, lo, 1.0 / h, dims)
    n_cells = int(np.prod(dims))
    if n_cells <= DENSE_GRID_MAX:  # a counting pass over a dense grid: no sort of the vertices
        counts = np.bincount(key, minlength=n_cells)
        occupied = counts > 0
        cnt = counts[occupied].astype(float)  # members per cell
        del counts
        n = int(occupied.sum())
        lut = np.cumsum(occupied, dtype=np.int64 if n >= 2 ** 31 else np.int32)
        del occupied
        lut -= 1
        inv = lut[key]  # the cell number of each vertex (int32 below 2**31 cells: half the size)
        del lut
    else:
        _, inv = np.unique(key, return_inverse=True)
        n = int(inv.max()) + 1
        cnt = np.zeros(n)  # members per cell; integer counts, so block sums are exact
        for a in range(0, inv.size, _KEY_BLOCK):
            cnt += np.bincount(inv[a:a + _KEY_BLOCK], minlength=n)
    del key
    pts = _cell_sums(v, inv, n)
    pts /= cnt[:, None]
    f = inv.reshape(-1, 3)
    ok = (f[:, 0] != f[:, 1]) & (f[:, 1] != f[:, 2]) & (f[:, 0] != f[:, 2])
    f = f[ok]
    del inv, ok
    s = np.sort(f, axis=1)  # int32 below 2**31 cells; the face key in int64
    if n ** 3 < 2 ** 62:
        _, first = np.unique((s[:, 0].astype(np.int64) * n + s[:, 1]) * n + s[:, 2],
                             return_index=True)
    else:
        _, first = np.unique(np.ascontiguousarray(s).view(np.dtype((np.void, 24))).ravel(),
                             return_index=True)
    return pts, f[np.sort(first)].astype(np.int64, copy=False)


def _cell_sums(v, inv, n):
    """(n, 3) sums of the vertices v (k, 3) of each cell inv (k,), added in vertex order.

    Blocks, each an unbuffered ufunc.at accumulation: the same additions, in the same order,
    as np.bincount(inv, weights=v[:, j]) (bit for bit), without its contiguous copy of a
    whole coordinate column (96 MB at 4 M triangles). x and y go through one complex
    accumulation (complex addition adds the real and the imaginary parts separately: the same
    two float64 additions), z on its own.
    """
    sxy, sz = np.zeros(n, np.complex128), np.zeros(n)
    vxy = _xy_complex(v)
    for a in range(0, v.shape[0], _KEY_BLOCK):
        blk = inv[a:a + _KEY_BLOCK]
        if vxy is None:
            np.add.at(sxy.real, blk, v[a:a + _KEY_BLOCK, 0])
            np.add.at(sxy.imag, blk, v[a:a + _KEY_BLOCK, 1])
        else:
            np.add.at(sxy, blk, vxy[a:a + _KEY_BLOCK])
        np.add.at(sz, blk, v[a:a + _KEY_BLOCK, 2])
    pts = np.empty((n, 3))
    pts[:, 0], pts[:, 1], pts[:, 2] = sxy.real, sxy.imag, sz
    return pts


def _xy_complex(v):
    """The (x, y) columns of v (n, 3) float64 as one complex128 column (a view), or None when
    v's rows do not allow the view."""
    try:
        return v[:, :2].view(np.complex128)[:, 0]
    except ValueError:
        return None


def _cell_keys(v, lo, inv_h, dims):
    """Cell key of each vertex v (n, 3): (q0 d1 + q1) d2 + q2 with q = trunc((v - lo) / h)
    (non-negative), in blocks of `_CELL_BLOCK` vertices through reused buffers.

    While the grid has under 2**53 cells every product and sum is an exact integer in float64,
    so the key is formed as q0 (d1 d2) + q1 d2 + q2 (exact), the keys of the integer formula; q comes from the flat block (x, y, z, x, ...)
    minus lo repeated per vertex (contiguous elementwise passes). int64 arithmetic above that.
    """
    n = v.shape[0]
    key = np.empty(n, np.int64)
    if float(np.prod(dims.astype(float))) >= 2.0 ** 53:
        return _cell_keys_int(v, lo, inv_h, dims, key)
    m = min(_CELL_BLOCK, n)
    lo_rep = np.tile(np.asarray(lo, float), m)  # lo per vertex of a flat block
    w0, w1 = float(dims[1]) * float(dims[2]), float(dims[2])
    f, k, t = np.empty(3 * m), np.empty(m), np.empty(m)
    for a in range(0, n, _CELL_BLOCK):
        b = min(a + _CELL_BLOCK, n)
        ff, kk, tt = f[:3 * (b - a)], k[:b - a], t[:b - a]
        np.subtract(np.ascontiguousarray(v[a:b]).reshape(-1), lo_rep[:ff.size], out=ff)
        np.multiply(ff, inv_h, out=ff)
        np.trunc(ff, out=ff)
        q = ff.reshape(-1, 3)
        np.multiply(q[:, 0], w0, out=kk)
        np.multiply(q[:, 1], w1, out=tt)
        kk += tt
        kk += q[:, 2]
        key[a:b] = kk
    return key


def _cell_keys_int(v, lo, inv_h, dims, key):
    """`_cell_keys` in int64 arithmetic (grids of 2**53 cells or more)."""
    d1, d2 = int(dims[1]), int(dims[2])
    f = np.empty((min(_CELL_BLOCK, v.shape[0]), 3))
    q = np.empty(f.shape, np.int64)
    k = np.empty(f.shape[0], np.int64)
    for a in range(0, v.shape[0], _CELL_BLOCK):
        b = min(a + _CELL_BLOCK, v.shape[0])
        ff, kk, qq = f[:b - a], k[:b - a], q[:b - a]
        np.subtract(v[a:b], lo, out=ff)
        np.multiply(ff, inv_h, out=ff)
        qq[...] = ff  # truncation, as astype(int64)
        np.multiply(qq[:, 0], d1, out=kk)
        kk += qq[:, 1]
        kk *= d2
        kk += qq[:, 2]
        key[a:b] = kk
    return key


_KEY_BLOCK = 1 << 16  # vertices per block of the count and sum passes
_CELL_BLOCK = 1 << 13  # vertices per block of the cell-key pass (cache-sized buffers)
DENSE_GRID_MAX = 40_000_000  # grid cells counted densely (320 MB of int64 at most)


class DisplaySoup:
    """`decimate_soup(tris, target)` computed in a worker thread; `result()` waits for it and
    gives (points, tri), or re-raises what stopped it."""

    def __init__(self, tris, target, box=None):
        self.tris, self.target, self.box, self._out = tris, int(target), box, None
        self._thread = threading.Thread(target=self._work, name="geomload-display-soup",
                                        daemon=True)
        self._thread.start()

    def _work(self):
        try:
            self._out = ("ok", decimate_soup(self.tris, self.target, self.box))
        except BaseException as exc:  # noqa: BLE001 - handed to result()
            self._out = ("error", exc)

    def join(self):
        self._thread.join()

    def result(self):
        self._thread.join()
        kind, value = self._out
        if kind == "error":
            raise value
        return value


def start_display_soup(tris, box=None, target=DISPLAY_TRIANGLES):
    """A `DisplaySoup` of `tris` when it is above `target` triangles and a second CPU is free
    (`forked.parallel_pays`), else None (the export stage then builds it itself). box: the
    soup's per-axis (min, max), when the read measured them."""
    if tris.shape[0] <= target:
        return None
    from geomload.forked import parallel_pays

    return DisplaySoup(tris, target, box) if parallel_pays(1) else None
