"""Biot-Savart kernels for horseshoe vortices, vectorised with numpy and evaluated in chunks.

A horseshoe vortex of unit circulation runs from +infinity (downstream) along +x to its bound
end A, along the bound segment A -> B, and back to +infinity along +x from B. The trailing legs
are parallel to the body x axis (not to the free stream): the influence matrix is then
independent of the angle of attack and is factorised once (Katz & Plotkin, Low-Speed
Aerodynamics, 2nd ed., sec. 12.1 and 10.4.5; Bertin & Cummings, Aerodynamics for Engineers,
ch. 7, "vortex lattice method").

Straight segment A -> B of circulation G at point P (Katz & Plotkin eq. 2.68 / 10.115):
    V = G/(4 pi) (r1 x r2)/|r1 x r2|^2 [r0 . (r1/|r1| - r2/|r2|)],  r1 = P-A, r2 = P-B, r0 = B-A.
With r2 = r1 - r0 we use r1 x r2 = r0 x r1 and |r0 x r1|^2 = |r0|^2 |r1|^2 - (r0 . r1)^2.
Semi-infinite leg from A to +infinity along +x (the limit B = A + L e_x, L -> infinity):
    V = G/(4 pi) (0, -dz, dy) (1 + dx/|r|)/(dy^2 + dz^2),  (dx, dy, dz) = P - A.
Points closer than `core` (m) to a vortex line get no velocity from it (cut-off core).
"""

from __future__ import annotations

import contextlib
import os
import threading
from concurrent.futures import ThreadPoolExecutor

import numpy as np

from geomload.threads import one_blas_thread

FOUR_PI = 4.0 * np.pi


def cross(a, b) -> np.ndarray:
    """a x b over the last axis (length 3; shapes broadcast): numpy.cross's arithmetic
    (a1 b2 - a2 b1, ...), the same result to the bit, without its per-call axis handling (the
    trim, the steady roll and the beam integration call it for every state they try)."""
    a, b = np.asarray(a, float), np.asarray(b, float)
    out = np.empty(a.shape if a.shape == b.shape else np.broadcast_shapes(a.shape, b.shape))
    a0, a1, a2 = a[..., 0], a[..., 1], a[..., 2]
    b0, b1, b2 = b[..., 0], b[..., 1], b[..., 2]
    out[..., 0] = a1 * b2 - a2 * b1
    out[..., 1] = a2 * b0 - a0 * b2
    out[..., 2] = a0 * b1 - a1 * b0
    return out


def _split(points):
    p = np.asarray(points, dtype=float)
    return p[:, 0:1], p[:, 1:2], p[:, 2:3]


def horseshoe_velocity_block(points, bound_a, bound_b, core):
    """Velocities (u, v, w), each (m, n), induced at `points` (m, 3) by n unit horseshoes.

    bound_a, bound_b: (n, 3) bound-vortex ends (m); core: cut-off radius (m).
    Returns three (m, n) arrays in m/s per unit circulation (1/m).
    """
    px, py, pz = _split(points)
    a = np.asarray(bound_a, float)
    b = np.asarray(bound_b, float)
    ax, ay, az = a[:, 0], a[:, 1], a[:, 2]
    r0 = b - a
    r0x, r0y, r0z = r0[:, 0], r0[:, 1], r0[:, 2]
    r0sq = np.einsum("ij,ij->i", r0, r0)
    # bound segment A -> B
    r1x = px - ax
    r1y = py - ay
    r1z = pz - az
    t = r1x * r0x + r1y * r0y + r1z * r0z
    r1sq = r1x * r1x + r1y * r1y + r1z * r1z
    r2sq = r1sq - 2.0 * t + r0sq
    c2 = r0sq * r1sq - t * t
    with np.errstate(divide="ignore", invalid="ignore"):
        k = (t / np.sqrt(r1sq) - (t - r0sq) / np.sqrt(r2sq)) / (FOUR_PI * c2)
    k[c2 <= core * core * r0sq] = 0.0
    u = k * (r0y * r1z - r0z * r1y)
    v = k * (r0z * r1x - r0x * r1z)
    w = k * (r0x * r1y - r0y * r1x)
    # leg from B to +infinity (+G) and leg from +infinity to A (-G)
    for ex, ey, ez, sign in ((b[:, 0], b[:, 1], b[:, 2], 1.0), (ax, ay, az, -1.0)):
        dx = px - ex
        dy = py - ey
        dz = pz - ez
        rho2 = dy * dy + dz * dz
        with np.errstate(divide="ignore", invalid="ignore"):
            f = (1.0 + dx / np.sqrt(dx * dx + rho2)) / (FOUR_PI * rho2)
        f[rho2 <= core * core] = 0.0
        f *= sign
        v -= f * dz
        w += f * dy
    return u, v, w


def _mirror(p):
    q = np.array(p, dtype=float)
    q[:, 1] *= -1.0
    return q


def _chunk_rows(m: int, n: int, budget: int) -> int:
    return max(1, min(m, budget // max(n, 1)))


def _workers() -> int:
    return max(1, min(4, os.cpu_count() or 1))


COMPACT_VELOCITY_MIN = 1000  # horseshoes from which `velocity` sums the bound vortices as
# k @ [g r0, g (r0 x A)] (6 columns per circulation) instead of the 4-slot form (12, three of
# them zero): the same sums in another order, so the velocities differ by round-off (up to 1e-14
# of the largest), which a trim's Newton stop can carry to 1e-9 of a load. Below it (the sample's
# lattices: 400 and 800 horseshoes) the 4-slot form keeps their outputs the same to the bit;
# measured at 3000 horseshoes and 7 circulations: 1.1 -> 0.87 s CPU for a control model's pass.


QUADRATIC_C2_MIN = 1000  # horseshoes from which `_common` finds c2 = |r0 x (P - A)|^2 +
# |r0|^2 core^2 as one matrix product [P P^T terms, P, 1] @ c2_op (a quadratic form in P, 10 terms)
# instead of four passes over the (rows x horseshoes) arrays (|P - A|^2 |r0|^2 - t^2 + ...):
# the same value, other round-off (1e-16 of |r0|^2 |P|^2, the cancellation of either form), so
# smaller sets (the sample's 400 and 800 horseshoes) keep the four passes and their results to
# the bit. Measured at 3000 horseshoes: c2 about 5 -> 0.7 ns per pair (one thread).


BLAS_LIMIT_PAIRS = 0  # point-horseshoe pairs from which the BLAS threads are limited to one
# while the chunks run (0: always): the chunks' matrix products are thin (inner dimension 3-5)
# and run on this module's own threads, so BLAS threads only compete with them (measured at
# 3000 panels on 2 cores: 2.5 x less CPU for the assembly with one BLAS thread). The limit
# costs about 0.07 ms with the library lookup kept (`geomload.threads`), so it pays at any size.
def _single_blas_thread(pairs: int = BLAS_LIMIT_PAIRS):
    """One BLAS thread for the block (threadpoolctl), from BLAS_LIMIT_PAIRS pairs on; a
    context manager (nothing when threadpoolctl is missing)."""
    return one_blas_thread() if pairs >= BLAS_LIMIT_PAIRS else contextlib.nullcontext()


class _Workspace:
    """Named scratch arrays of one thread, reused chunk after chunk: each (rows, cols) buffer
    is made once and handed out as its first m rows. A fresh array per operation of a chunk
    (half a megabyte each) is new memory from the system every time (page faults): measured at
    3000 panels, about 130 000-240 000 faults and 35-45 % of the assembly's CPU time."""

    def __init__(self, rows: int):
        self.rows, self._bufs = rows, {}

    def get(self, name: str, m: int, cols: int) -> np.ndarray:
        """A C-contiguous (m, cols) array (contents undefined), m <= rows."""
        b = self._bufs.get(name)
        if b is None or b.shape[1] != cols:
            b = self._bufs[name] = np.empty((self.rows, cols))
        return b[:m]


class HorseshoeSet:
    """Horseshoes of a strip-structured lattice, prepared for fast chunked evaluation.

    nodes: (ns + 1, nc, 3) bound-vortex end points; horseshoe (s, j) (index s * nc + j) runs
    from +inf to nodes[s, j], to nodes[s + 1, j], back to +inf, so each trailing leg is shared
    by the two neighbouring strips. x_scale divides the induced x velocity (Prandtl-Glauert);
    mirror adds the images in y = 0; core (m) is the vortex core radius: distances d enter as
    d^2 + core^2 (the velocity differs from the singular one by a relative core^2 / d^2).

    The pair terms are written as small matrix products (r0 . (P - A) = P . r0 - A . r0,
    |P - A|^2 = |P|^2 - 2 P . A + |A|^2, (r0 x (P - A)) . n = r0 . (P x n) - n . (r0 x A))
    after shifting the origin to the lattice centre (or to `centre`, (3,) m: the expanded
    distances lose digits with the shift, so sets whose results are added use the same one);
    rows are done in chunks on a few threads.
    """

    def __init__(self, nodes, core, x_scale=1.0, mirror=False, budget=1 << 16, centre=None):
        nodes = np.asarray(nodes, float)
        if centre is None:
            centre = 0.5 * (nodes.reshape(-1, 3).min(0) + nodes.reshape(-1, 3).max(0))
        self.centre = np.asarray(centre, float).reshape(3)
        q = nodes - self.centre
        self.ns, self.nc = q.shape[0] - 1, q.shape[1]
        a = q[:-1].reshape(-1, 3)
        b = q[1:].reshape(-1, 3)
        r0 = b - a
        r0sq = np.einsum("ij,ij->i", r0, r0)
        self.r0sq, self.core2 = r0sq, float(core) ** 2
        self.r0sq_core = r0sq * self.core2
        qf = q.reshape(-1, 3)
        self.q = qf
        # [P, 1] @ t_op -> r0 . (P - A);  [P, |P|^2, 1] @ d_op -> |P - Q|^2 to every node Q
        self.t_op = np.vstack([r0.T, -np.einsum("ij,ij->i", r0, a)])
        self.d_op = np.vstack([-2 * qf.T, np.ones(len(qf)), np.einsum("ij,ij->i", qf, qf)])
        # [P x n, -n] @ cn_op -> (r0 x (P - A)) . n / (4 pi)
        self.cn_op = np.vstack([r0.T, np.cross(r0, a).T]) / FOUR_PI
        self.r0, self.r0xa = r0, np.cross(r0, a)
        # [Py, Pz, Py^2 + Pz^2 + core^2, 1] @ rho_op -> dy^2 + dz^2 + core^2 to every node
        self.rho_op = np.vstack([-2 * qf[:, 1], -2 * qf[:, 2], np.ones(len(qf)),
                                 qf[:, 1] ** 2 + qf[:, 2] ** 2])
        self.x_scale, self.mirror, self.budget = float(x_scale), bool(mirror), budget
        self._vel_ops = np.zeros((3, 4, len(r0sq)))
        for c, (i1, i2) in enumerate(((1, 2), (2, 0), (0, 1))):
            # (r0 x (P - A))_c = r0_i1 P_i2 - r0_i2 P_i1 - (r0 x A)_c
            self._vel_ops[c, i2] = r0[:, i1]
            self._vel_ops[c, i1] = -r0[:, i2]
            self._vel_ops[c, 3] = -self.r0xa[:, c]
        # the same as sums over horseshoes of k g r0 and k g (r0 x A) (`_vel_chunk`)
        self._vel_ops6 = np.hstack([r0, self.r0xa])  # (n, 6)
        self._proj_op = np.vstack([np.ones(len(qf)), qf[:, 2], qf[:, 1]]) / FOUR_PI
        self._c2_op = self._quadratic_c2_op(r0, a, r0sq) if len(r0sq) >= QUADRATIC_C2_MIN else None

    def _quadratic_c2_op(self, r0, a, r0sq):
        """(10, n) operator of c2 = |r0 x (P - A)|^2 + |r0|^2 core^2 as a quadratic form in P:
        with M = |r0|^2 I - r0 r0^T, |r0 x u|^2 = u^T M u (Lagrange's identity), so for u = P - A
        c2 = P^T M P - 2 (M A) . P + A^T M A + |r0|^2 core^2, i.e.
        [Px^2, Py^2, Pz^2, Px Py, Px Pz, Py Pz, Px, Py, Pz, 1] @ op."""
        M = r0sq[:, None, None] * np.eye(3) - r0[:, :, None] * r0[:, None, :]  # (n, 3, 3)
        Ma = np.einsum("nij,nj->ni", M, a)
        rxa = np.cross(r0, a)
        return np.vstack([M[:, 0, 0], M[:, 1, 1], M[:, 2, 2], 2.0 * M[:, 0, 1],
                          2.0 * M[:, 0, 2], 2.0 * M[:, 1, 2], -2.0 * Ma.T,
                          np.einsum("ij,ij->i", rxa, rxa) + r0sq * self.core2])

    @property
    def n(self) -> int:
        return self.ns * self.nc

    def _features(self, p, nrm=None) -> dict:
        """The left factors of the chunks' matrix products for centred points p (m, 3) (and unit
        normals nrm (m, 3) for the normal wash), made once per call for every row (a chunk takes
        its rows: the same values as made per chunk, without about 0.2 ms of small-array work
        per chunk)."""
        m = p.shape[0]
        one = np.ones((m, 1))
        psq = np.einsum("ij,ij->i", p, p)[:, None]
        py, pz = p[:, 1:2], p[:, 2:3]
        feats = {"p": p, "d": np.hstack([p, psq, one]), "t": np.hstack([p, one]),
                 "yz": np.hstack([py, pz, py ** 2 + pz ** 2 + self.core2, one])}
        if self._c2_op is not None:
            px = p[:, 0:1]
            feats["quad"] = np.hstack([p * p, px * py, px * pz, py * pz, p, one])
        if nrm is not None:
            ns_ = nrm * np.array([1.0 / self.x_scale, 1.0, 1.0])
            feats["cn"] = np.hstack([np.cross(p, ns_), -ns_])
            feats["proj"] = np.hstack([(-p[:, 2] * ns_[:, 1] + p[:, 1] * ns_[:, 2])[:, None],
                                       ns_[:, 1:2], -ns_[:, 2:3]])
        return feats

    @staticmethod
    def _chunk(feats, i0, i1) -> dict:
        return {key: v[i0:i1] for key, v in feats.items()}

    def _common(self, feats, ws, k_out=None):
        """Per-chunk pair quantities for a chunk's `_features` (centred points p (m, 3)): bound
        factor k (m, n) with V_bound = k (r0 x r1), and leg factor f (m, nodes) with
        V_leg = f (0, -dz, dy).
        Distances to the nodes serve both the bound segments (|r1|, |r2|) and the legs.
        ws: the calling thread's `_Workspace` (every (m, n) array lives in it: fresh arrays of
        this size cost more in page faults than their arithmetic); k_out: (m, n) array for k
        (a workspace buffer when None). f is the workspace's "f" buffer; "d" and "c" are free
        again on return."""
        p = feats["p"]
        m, ns, nc = p.shape[0], self.ns, self.nc
        nn, n = (ns + 1) * nc, ns * nc
        dsq = np.matmul(feats["d"], self.d_op, out=ws.get("d", m, nn))
        r = np.sqrt(dsq, out=ws.get("r", m, nn))  # |P - Q|, (m, nodes)
        shape = (m, ns + 1, nc)
        r3, d3 = r.reshape(shape), dsq.reshape(shape)
        t = np.matmul(feats["t"], self.t_op, out=ws.get("t", m, n)).reshape(m, ns, nc)
        r0sq = self.r0sq.reshape(ns, nc)
        if self._c2_op is None:
            c2 = np.multiply(d3[:, :-1], r0sq, out=ws.get("c2", m, n).reshape(m, ns, nc))
            c2 -= np.multiply(t, t, out=ws.get("c", m, n).reshape(m, ns, nc))
            c2 += self.r0sq_core.reshape(ns, nc)
        else:
            c2 = np.matmul(feats["quad"], self._c2_op, out=ws.get("c2", m, n)).reshape(m, ns, nc)
        k = ws.get("k", m, n) if k_out is None else k_out
        k3 = np.divide(t, r3[:, :-1], out=k.reshape(m, ns, nc))
        t -= r0sq
        t /= r3[:, 1:]
        k3 -= t
        k3 /= c2
        rho2 = np.matmul(feats["yz"], self.rho_op, out=dsq)
        f = np.subtract(p[:, 0:1], self.q[:, 0], out=ws.get("f", m, nn))
        f /= r
        f += 1.0
        f /= rho2
        return k, f

    def _legs_to_panels(self, leg, out):
        """out (m, n) += leg(B) - leg(A) for node values leg (m, nodes)."""
        m = leg.shape[0]
        lg = leg.reshape(m, self.ns + 1, self.nc)
        o = out.reshape(m, self.ns, self.nc)
        o += lg[:, 1:]
        o -= lg[:, :-1]

    def _wash_chunk(self, feats, ws, out=None):
        """Normal wash (m, n) for a chunk's `_features` (centred points with unit normals), in
        `out` (m, n) or a workspace buffer."""
        k, f = self._common(feats, ws, out)
        m = k.shape[0]
        k *= np.matmul(feats["cn"], self.cn_op, out=ws.get("c", m, k.shape[1]))
        proj = np.matmul(feats["proj"], self._proj_op, out=ws.get("d", m, f.shape[1]))
        f *= proj
        self._legs_to_panels(f, k)
        return k

    def _rows(self, m, fn):
        """fn(i0, i1, ws) over chunks of rows [i0, i1) of m, on a few threads; ws: the thread's
        `_Workspace` for this call (released with it)."""
        step = _chunk_rows(m, self.n, self.budget)
        chunks = [(i, min(m, i + step)) for i in range(0, m, step)]
        w = _workers()
        local = threading.local()

        def run(c):
            ws = getattr(local, "ws", None)
            if ws is None:
                ws = local.ws = _Workspace(step)
            fn(c[0], c[1], ws)

        with _single_blas_thread(m * self.n):
            if w == 1 or len(chunks) == 1:
                for c in chunks:
                    run(c)
                return
            with ThreadPoolExecutor(max_workers=w) as ex:
                list(ex.map(run, chunks))

    def normalwash(self, points, normals):
        """Influence matrix (m, n): normal velocity at points (m, 3) with unit normals (m, 3)
        per unit circulation of each horseshoe (images included when mirror)."""
        pts = np.asarray(points, float) - self.centre
        nrm = np.asarray(normals, float)
        m = pts.shape[0]
        A = np.empty((m, self.n))
        feats = self._features(pts, nrm)
        if self.mirror:
            images = self._features(_mirror(pts + self.centre) - self.centre, _mirror(nrm))

        def job(i0, i1, ws):
            self._wash_chunk(self._chunk(feats, i0, i1), ws, A[i0:i1])
            if self.mirror:
                A[i0:i1] += self._wash_chunk(self._chunk(images, i0, i1), ws)

        self._rows(m, job)
        return A

    def normalwash_sum_diff(self, other, points, normals, columns):
        """(A + B[:, columns], A - B[:, columns]), each (m, n), with A = self.normalwash and
        B = other.normalwash at the same points (m, 3) and unit normals (m, 3), evaluated chunk
        by chunk (neither A nor B is held whole). Both sets need the same centre and no
        images; columns: (n,) indices into other's horseshoes."""
        if self.mirror or other.mirror or not np.array_equal(self.centre, other.centre):
            raise ValueError("normalwash_sum_diff: two sets without images, one centre")
        pts = np.asarray(points, float) - self.centre
        nrm = np.asarray(normals, float)
        m = pts.shape[0]
        plus, minus = np.empty((m, self.n)), np.empty((m, self.n))
        own_f, other_f = self._features(pts, nrm), other._features(pts, nrm)

        def job(i0, i1, ws):
            a = self._wash_chunk(self._chunk(own_f, i0, i1), ws, ws.get("a", i1 - i0, self.n))
            b = np.take(other._wash_chunk(self._chunk(other_f, i0, i1), ws), columns, axis=1,
                        out=ws.get("b", i1 - i0, self.n))
            np.add(a, b, out=plus[i0:i1])
            np.subtract(a, b, out=minus[i0:i1])

        self._rows(m, job)
        return plus, minus

    def _vel_chunk(self, feats, ops, exclude, ws):
        """Velocity (m, 3, kg) at centred points p. With (r0 x (P - A))_c = [P, 1] . op_c,j the
        sums over horseshoes j become one matrix product k @ (op * g) per chunk, and the legs
        f @ [g, g Qz, g Qy] (V_leg = f (0, -(Pz - Qz), Py - Qy))."""
        bound_op, leg_op, kg = ops
        p = feats["p"]
        k, f = self._common(feats, ws)
        if exclude is not None:
            k[exclude[0], exclude[1]] = 0.0
        m = p.shape[0]
        if bound_op.shape[1] == 12 * kg:  # the 4-slot form [P, 1] . op_c (fewer horseshoes)
            rb = (k @ bound_op).reshape(m, 3, 4, kg)
            out = np.einsum("md,mcdk->mck", feats["t"], rb)
        else:
            out = self._bound_compact(p, k @ bound_op, kg)
        rl = (f @ leg_op).reshape(m, 3, kg)
        out[:, 1] -= p[:, 2:3] * rl[:, 0] - rl[:, 1]
        out[:, 2] += p[:, 1:2] * rl[:, 0] - rl[:, 2]
        out *= 1.0 / FOUR_PI
        out[:, 0] /= self.x_scale
        return out

    @staticmethod
    def _bound_compact(p, st, kg):
        """Bound-vortex velocities (m, 3, kg) at centred points p from st = k @ [g r0,
        g (r0 x A)] (m, 6 kg): V = S x P - T with S = sum_j k g r0, T = sum_j k g (r0 x A)
        (before the 1 / (4 pi) and x scaling of `_vel_chunk`)."""
        m = p.shape[0]
        st = st.reshape(m, 6, kg)
        s0, s1, s2 = st[:, 0], st[:, 1], st[:, 2]
        px, py, pz = p[:, 0:1], p[:, 1:2], p[:, 2:3]
        out = np.empty((m, 3, kg))
        o = out[:, 0]
        np.multiply(py, s2, out=o)
        np.subtract(pz * s1, o, out=o)
        o -= st[:, 3]
        o = out[:, 1]
        np.multiply(px, s2, out=o)
        o -= pz * s0
        o -= st[:, 4]
        o = out[:, 2]
        np.multiply(py, s0, out=o)
        o -= px * s1
        o -= st[:, 5]
        return out

    def velocity(self, points, gammas, self_panels=False):
        """Velocity (m, 3, k) at points (m, 3) from circulations gammas (n, k) (matrix-free).
        self_panels: the points are the bound midpoints, point i on segment i (whose own
        bound contribution is dropped)."""
        pts = np.asarray(points, float) - self.centre
        g = np.asarray(gammas, float)
        g = g[:, None] if g.ndim == 1 else g
        gs = g.reshape(self.ns, self.nc, -1)
        gnode = np.zeros((self.ns + 1, self.nc, g.shape[1]))
        gnode[1:] += gs
        gnode[:-1] -= gs
        gnode = gnode.reshape(-1, g.shape[1])
        kg = g.shape[1]
        if self.n >= COMPACT_VELOCITY_MIN:
            bound_op = (self._vel_ops6[:, :, None] * g[:, None, :]).reshape(self.n, -1)
        else:
            bound_op = (self._vel_ops.transpose(2, 0, 1)[:, :, :, None] * g[:, None, None, :])
            bound_op = bound_op.reshape(self.n, -1)
        q = self.q
        leg_op = np.stack([gnode, gnode * q[:, 2:3], gnode * q[:, 1:2]], axis=1).reshape(
            len(q), -1)
        ops = (bound_op, leg_op, kg)
        m = pts.shape[0]
        out = np.empty((m, 3, kg))
        feats = self._features(pts)
        if self.mirror:
            images = self._features(_mirror(pts + self.centre) - self.centre)

        def job(i0, i1, ws):
            ex = None
            if self_panels:
                r = np.arange(i1 - i0)
                ex = (r, r + i0)
            out[i0:i1] = self._vel_chunk(self._chunk(feats, i0, i1), ops, ex, ws)
            if self.mirror:
                v = self._vel_chunk(self._chunk(images, i0, i1), ops, None, ws)
                v[:, 1] *= -1.0
                out[i0:i1] += v

        self._rows(m, job)
        return out


def trefftz_wash_matrix(y_nodes, z_nodes, y_eval, z_eval, ny_eval, nz_eval):
    """Normal wash (m, q) in the Trefftz plane per unit strength of 2-D point vortices.

    Trailing vortices far downstream act as 2-D point vortices (strength positive along +x) at
    (y_nodes, z_nodes); the velocity at (y, z) is g/(2 pi r^2) (-(z - z_n), y - y_n); the
    returned entry is v ny + w nz with the unit normal (ny, nz) at each evaluation point
    (Katz & Plotkin, Low-Speed Aerodynamics, Trefftz-plane induced drag, ch. 8 and 12).
    """
    dy = np.asarray(y_eval)[:, None] - np.asarray(y_nodes)[None, :]
    dz = np.asarray(z_eval)[:, None] - np.asarray(z_nodes)[None, :]
    r2 = dy * dy + dz * dz
    with np.errstate(divide="ignore", invalid="ignore"):
        f = np.where(r2 > 0.0, 1.0 / (2.0 * np.pi * r2), 0.0)
    return f * (-dz * np.asarray(ny_eval)[:, None] + dy * np.asarray(nz_eval)[:, None])
