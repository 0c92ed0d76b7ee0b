"""Vortex-lattice solution: influence matrix, two basis solutions per Mach, loads, Trefftz plane.

Method (Katz & Plotkin, Low-Speed Aerodynamics, 2nd ed., ch. 12; Bertin & Cummings, ch. 7):
horseshoe vortices (see `vortex`), flow tangency at the collocation points,
A gamma = -V_inf . n. Free stream V = (cos a, 0, sin a) per unit speed, so
gamma(a) = cos a gamma_x + sin a gamma_z: two basis solutions give every angle.

Compressibility (Prandtl-Glauert / Goethert rule; Katz & Plotkin, compressibility corrections in ch. 12;
Bertin & Cummings ch. 9): with x' = x / beta the linearised potential equation
beta^2 phi_xx + phi_yy + phi_zz = 0 becomes Laplace's. The incompressible influence of the
x-stretched lattice is used, with the physical perturbation velocity (u'/beta, v, w) in the
tangency condition on the physical normals; circulation (the potential jump) is the same in
both spaces, so forces follow from Kutta-Joukowski on the physical geometry
(dcp = 2 gamma / (V dx) on the physical chord). For 2-D this gives cl_alpha = 2 pi / beta.

Forces: Kutta-Joukowski on each bound segment, F = rho Gamma (V_inf + v_ind) x l, with v_ind
the velocity induced at the segment midpoint by all horseshoes (a segment does not act on
itself). The local-velocity force is normal to the local flow and, like every discrete-vortex
near-field force, carries no leading-edge suction: at angle a the wing lift of a flat wing is
about CL_lin cos^2 a. CL_alpha and the aerodynamic centre are therefore taken at zero lift,
where they equal the linear-theory values. Induced drag from the Trefftz plane (Katz & Plotkin sec. 8.3, 12.2):
D = -(rho/2) sum G_k w_n,k ds_k with the trailing vortices as 2-D point vortices at the
trailing-edge strip edges.
"""

from __future__ import annotations

import math

import numpy as np

from geomload.errors import AeroError
from geomload.aero.records import AeroSolution, Lattice
from geomload.aero import vortex

MACH_WARN = 0.7
DEFAULT_CL_MAX = 1.4  # common practice for a plain section at low speed, no source
# step (rad) of the central difference for dCL/dalpha and dCm/dCL: CL(alpha) is smooth (two
# basis solutions), half a degree keeps the difference well above round-off
_SLOPE_STEP = math.radians(0.5)


def _alpha_rad(alpha_deg) -> float:
    try:
        a = float(alpha_deg)
    except (TypeError, ValueError):
        raise AeroError(f"alpha: expected degrees, got {alpha_deg!r}") from None
    if not math.isfinite(a):
        raise AeroError(f"alpha: angle of attack must be finite, got {alpha_deg!r}")
    return math.radians(a)


class AeroModel:
    """Vortex-lattice model of `lattice` at Mach `mach`: assembled and solved once for the two
    basis right-hand sides (every angle of attack is their superposition).

    Parameters
    ----------
    lattice : Lattice from `build_lattice` (half wing with images, or full span).
    mach : free-stream Mach number, 0 <= M < 1. From M = 0.7 a warning is added to
        `self.warnings` (linear theory leaves its range); M >= 1 raises AeroError.

    extra_rhs : optional (N, k) right-hand sides solved with the two basis ones in the same
        LAPACK call (one LU instead of a second assembly and LU in `solve_rhs`), e.g. the
        control deflections and roll rate of `roll.ControlModel.build`; their solutions are kept
        as `extra_solutions` (N, k) beside `extra_rhs`, and the velocities they induce at the
        bound-vortex midpoints (`induced_at_bound`) as `extra_velocity` (N, 3, k).

    factors : optional `kept_factors.KeptFactors` shared by the models of one lattice at other
        Mach numbers: from `kept_factors.MIN_PANELS` equations on, a system is solved by
        iterative refinement with the LU factors of the first one solved (the same solution to
        round-off, measured within 4e-15; see `kept_factors`); None: a new LU for each model.

    Attributes: lattice, mach, beta, warnings (list of str), extra_rhs, extra_solutions,
    extra_velocity (None without extra_rhs).
    """

    def __init__(self, lattice: Lattice, mach: float = 0.0, extra_rhs=None, factors=None):
        try:
            m = float(mach)
        except (TypeError, ValueError):
            raise AeroError(f"mach: expected a number, got {mach!r}") from None
        if not math.isfinite(m) or m < 0.0:
            raise AeroError(f"mach: Mach number must be finite and >= 0, got {mach!r}")
        if m >= 1.0:
            raise AeroError(f"mach: M = {m:g} >= 1; Prandtl-Glauert linear theory needs M < 1")
        self.warnings: list[str] = []
        if m >= MACH_WARN:
            self.warnings.append(
                f"mach: M = {m:g} >= {MACH_WARN}: linear (Prandtl-Glauert) theory is leaving its "
                "range; transonic effects are not modelled")
        if lattice.n_chord < 4:
            self.warnings.append(
                f"lattice: {lattice.n_chord} chordwise panel(s): camber and section pitching "
                "moments (torsion) are not resolved below 4; use 8 or more for loads")
        self.lattice, self.mach = lattice, m
        self._factors = factors
        self.beta = beta = math.sqrt(1.0 - m * m)
        lat = lattice
        self._fac = 2.0 if lat.mirrored else 1.0
        self._core = 1e-6 * lat.b_ref
        stretch = np.array([1.0 / beta, 1.0, 1.0])
        ns, nc = lat.n_span, lat.n_chord
        nodes = np.concatenate([lat.bound_a.reshape(ns, nc, 3),
                                lat.bound_b.reshape(ns, nc, 3)[-1:]]) * stretch
        if not np.allclose(lat.bound_b.reshape(ns, nc, 3)[:-1] * stretch, nodes[1:-1]):
            raise AeroError("lattice: bound vortices of neighbouring strips do not share ends")
        hs = vortex.HorseshoeSet(nodes, self._core, x_scale=beta, mirror=lat.mirrored)
        self._hs, self._colloc_s = hs, lat.colloc * stretch
        # a full span that is its own mirror image is solved as two half-span systems
        self._split = None
        if not lat.mirrored:
            from geomload.aero.symmetry import MirrorSolver, mirror_split

            split = mirror_split(lat)
            if split is not None:
                self._split = MirrorSolver(lat, split, stretch, self._core, beta)
        # Every angle of attack is the superposition cos(a) G_x + sin(a) G_z of two basis
        # solutions, so they are the only right-hand sides a model needs: one LAPACK solve
        # (LU + back-substitution) of the assembled matrix, which is then released (a kept LU
        # is 8 N^2 bytes: 69 MB at 3000 panels). Other right-hand sides (control surfaces,
        # roll) reassemble it in `solve_rhs`.
        basis_rhs = np.column_stack([-lat.normal[:, 0], -lat.normal[:, 2]])
        self.extra_rhs = self.extra_solutions = self.extra_velocity = None
        self._mid_s = 0.5 * (lat.bound_a + lat.bound_b) * stretch
        if extra_rhs is None:
            self._basis = self._solve_assembled(basis_rhs)
            self._vind = self.induced_at_bound(self._basis)
        else:
            X = self._checked_rhs(extra_rhs)
            sol = self._solve_assembled(np.hstack([basis_rhs, X]))
            self._basis = np.ascontiguousarray(sol[:, :2])
            self.extra_rhs, self.extra_solutions = X, np.ascontiguousarray(sol[:, 2:])
            if self._split is not None:
                # the induced velocities of every solution in one pass over the horseshoe pairs
                vel = self.induced_at_bound(sol)
                self._vind = np.ascontiguousarray(vel[:, :, :2])
                self.extra_velocity = np.ascontiguousarray(vel[:, :, 2:])
            else:  # two passes: the whole-span results stay the same to the bit
                self._vind = self.induced_at_bound(self._basis)
                self.extra_velocity = self.induced_at_bound(self.extra_solutions)
        self._prepare_geometry()
        self._check_lift_slope()

    # --------------------------------------------------------------------------- internals
    def _check_lift_slope(self):
        """A lattice whose lift slope is not in (0, 2 pi / beta] (the 2-D thin-airfoil slope
        with Prandtl-Glauert, the upper bound of any finite wing) is numerically broken: refuse it
        rather than return loads from it."""
        try:
            cla = self._linear()[1]
        except AeroError:
            cla = float("nan")
        bound = 1.05 * 2.0 * math.pi / self.beta
        if not (0.0 < cla <= bound):
            lat = self.lattice
            raise AeroError(
                f"lattice: {lat.n_span} x {lat.n_chord} panels give a lift slope of {cla:.4g} /rad, "
                f"outside (0, {bound:.3g}]: the lattice is ill-conditioned; use fewer spanwise or "
                "more chordwise panels (lattice.n_span / lattice.n_chord, --panels-span / "
                "--panels-chord)")

    def _assemble(self) -> np.ndarray:
        """The influence matrix (N, N) of the whole lattice (images included when mirrored)."""
        return self._hs.normalwash(self._colloc_s, self.lattice.normal)

    def _solve_assembled(self, rhs) -> np.ndarray:
        """Solutions (N, k) of the influence matrix, assembled for this call and released after;
        a mirror-symmetric full span through its two half-span systems (`symmetry`)."""
        if self._split is not None:
            return self._split.solve(rhs, self._solve_system, slotted=True)
        return self._solve_system(self._assemble(), rhs, 0)

    def _solve_system(self, A, rhs, slot=0) -> np.ndarray:
        """One dense system: with kept factors (`factors`, from kept_factors.MIN_PANELS
        equations) by refinement or a kept LU, else `_solve_dense`. slot: which of a lattice's
        systems it is (the two halves of a mirror split have their own factors)."""
        from geomload.aero import kept_factors

        if self._factors is None or A.shape[0] < kept_factors.MIN_PANELS:
            return self._solve_dense(A, rhs)
        if not np.all(np.isfinite(A)):
            raise AeroError("lattice: influence matrix is not finite (degenerate panels)")
        try:
            with vortex._single_blas_thread():  # one BLAS thread, as in `_solve_dense`
                g = self._factors.solve(A, rhs, slot)
        except np.linalg.LinAlgError:
            raise AeroError("lattice: influence matrix is singular (degenerate panels)") from None
        if not np.all(np.isfinite(g)):
            raise AeroError("lattice: influence matrix is singular (degenerate panels)")
        return g

    @staticmethod
    def _solve_dense(A, rhs) -> np.ndarray:
        """numpy.linalg.solve (LAPACK gesv, the LU with partial pivoting and its
        back-substitution) of one assembled matrix, refused when not finite or singular."""
        if not np.all(np.isfinite(A)):
            raise AeroError("lattice: influence matrix is not finite (degenerate panels)")
        try:
            # one BLAS thread at every size: on 2 shared cores the threaded LU of 3000 panels
            # took more wall time (1.26 against 0.86 s) and 1.5 x the CPU, and of 400 panels 5 x
            # the wall time (56 against 10 ms at load 6: the threads wait for each other); one
            # thread does the same operations on any machine and in batch workers
            with vortex._single_blas_thread():
                g = np.linalg.solve(A, rhs)
        except np.linalg.LinAlgError:
            raise AeroError("lattice: influence matrix is singular (degenerate panels)") from None
        if not np.all(np.isfinite(g)):
            raise AeroError("lattice: influence matrix is singular (degenerate panels)")
        return g

    def _solve_rhs(self, rhs):
        return self._solve_assembled(rhs)

    def _gamma(self, alphas) -> np.ndarray:
        """Circulations (N, k) at angles `alphas` (rad): the superposition of the basis."""
        a = np.asarray(alphas, float)
        return self._basis @ np.vstack([np.cos(a), np.sin(a)])

    def _prepare_geometry(self):
        lat = self.lattice
        ns, nc = lat.n_span, lat.n_chord
        c = lat.corners
        le = 0.5 * (c[:-1, 0] + c[1:, 0])
        te = 0.5 * (c[:-1, -1] + c[1:, -1])
        self._qc = le + 0.25 * (te - le)  # (ns, 3) strip quarter-chord points
        self._l = lat.bound_b - lat.bound_a
        mid = 0.5 * (lat.bound_a + lat.bound_b)
        self._arm_strip = (mid.reshape(ns, nc, 3) - self._qc[:, None, :]).reshape(-1, 3)
        self._arm_ref = mid - lat.x_ref
        # force / q per panel as a quadratic form in (cos a, sin a): F = sum_k w_k(a) Fq[k]
        gx, gz = self._basis[:, 0:1], self._basis[:, 1:2]
        ux = self._vind[:, :, 0].copy()
        uz = self._vind[:, :, 1].copy()
        ux[:, 0] += 1.0
        uz[:, 2] += 1.0
        cx, cz = np.cross(ux, self._l), np.cross(uz, self._l)
        self._Fq = 2.0 * np.stack([gx * cx, gx * cz + gz * cx, gz * cz])
        Fs = self._Fq.reshape(3, ns, nc, 3)
        self._Fq_strip = Fs.sum(axis=2)
        self._Fq_tot = self._Fq.sum(axis=1)
        self._My_ref = self._moment(self._Fq, self._arm_ref).sum(axis=1)
        self._Fq_tot_xz = tuple((float(f[0]), float(f[2])) for f in self._Fq_tot)
        self._My_ref_f = tuple(float(m) for m in self._My_ref)
        # Trefftz plane: nodes at the trailing-edge strip edges; wash at strip midpoints
        ny, nz = c[:, -1, 1], c[:, -1, 2]
        dy, dz = np.diff(ny), np.diff(nz)
        ds = np.hypot(dy, dz)
        ym, zm = 0.5 * (ny[:-1] + ny[1:]), 0.5 * (nz[:-1] + nz[1:])
        D = np.zeros((ns + 1, ns))
        D[1:] += np.eye(ns)
        D[:-1] -= np.eye(ns)  # node strength = G_(e-1) - G_e, positive along +x
        W = vortex.trefftz_wash_matrix(ny, nz, ym, zm, -dz / ds, dy / ds) @ D
        if lat.mirrored:
            W -= vortex.trefftz_wash_matrix(-ny, nz, ym, zm, -dz / ds, dy / ds) @ D
        self._W_trefftz, self._ds = W, ds
        self._lin = None

    @staticmethod
    def _moment(F, arm):
        """Nose-up pitching moment (y component of arm x F), last axis xyz."""
        return arm[..., 2] * F[..., 0] - arm[..., 0] * F[..., 2]

    @staticmethod
    def _w(alpha):
        ca, sa = math.cos(alpha), math.sin(alpha)
        return np.array([ca * ca, ca * sa, sa * sa]), ca, sa

    def _cl_cm_consts(self) -> tuple:
        """The scalars of :meth:`_cl_cm`, gathered on first use: (x0, z0, x1, z1, x2, z2, m0,
        m1, m2, fac, S, S c_ref), the force and moment forms' coefficients and the references."""
        k = self.__dict__.get("_clcm_k")
        if k is None:
            (x0, z0), (x1, z1), (x2, z2) = self._Fq_tot_xz
            m0, m1, m2 = self._My_ref_f
            S = self.lattice.s_ref
            k = (x0, z0, x1, z1, x2, z2, m0, m1, m2, self._fac, S, S * self.lattice.c_ref)
            self._clcm_k = k
        return k

    def _cl_cm(self, alpha: float):
        # scalar arithmetic: the trim calls this a few dozen times per load case
        k = self.__dict__.get("_clcm_k") or self._cl_cm_consts()
        x0, z0, x1, z1, x2, z2, m0, m1, m2, fac, S, Sc = k
        ca, sa = math.cos(alpha), math.sin(alpha)
        w0, w1, w2 = ca * ca, ca * sa, sa * sa
        lift = -sa * (w0 * x0 + w1 * x1 + w2 * x2) + ca * (w0 * z0 + w1 * z1 + w2 * z2)
        return fac * lift / S, fac * (w0 * m0 + w1 * m1 + w2 * m2) / Sc

    def _zero_lift(self, alpha: float, cla: float) -> float:
        a = alpha
        for _ in range(6):
            a -= self._cl_cm(a)[0] / cla
        return a

    def _derivatives(self, alpha: float):
        h = _SLOPE_STEP
        cl_p, cm_p = self._cl_cm(alpha + h)
        cl_m, cm_m = self._cl_cm(alpha - h)
        cla = (cl_p - cl_m) / (2 * h)
        if not abs(cla) > 1e-12:
            raise AeroError("lattice: lift slope is zero; the wing produces no lift")
        return cla, (cm_p - cm_m) / (cl_p - cl_m)

    def _linear(self):
        """(alpha_zero_lift rad, CL_alpha /rad, dCm/dCL) at zero lift, computed once."""
        if self._lin is None:
            a0 = self._zero_lift(0.0, self._derivatives(0.0)[0])
            a0 = self._zero_lift(a0, self._derivatives(a0)[0])
            self._lin = (a0,) + self._derivatives(a0)
        return self._lin

    def _rhs(self, alphas):
        n = self.lattice.normal
        a = np.asarray(alphas, float)
        return -(np.cos(a)[None, :] * n[:, 0:1] + np.sin(a)[None, :] * n[:, 2:3])

    # ------------------------------------------------------------------------------ public
    def solve_rhs(self, rhs) -> np.ndarray:
        """Circulations (N, k) per unit free-stream speed for right-hand sides rhs (N, k) (the
        negative free-stream normal velocity at each collocation point): the influence matrix is
        reassembled and solved for them (one LAPACK solve; pass every column at once)."""
        return self._solve_rhs(self._checked_rhs(rhs))

    def _checked_rhs(self, rhs) -> np.ndarray:
        r = np.asarray(rhs, float)
        n = self.lattice.colloc.shape[0]
        if r.shape[0] != n or not np.all(np.isfinite(r)):
            raise AeroError(f"rhs: expected {n} finite rows, got shape {r.shape}")
        return r

    def induced_at_bound(self, gammas) -> np.ndarray:
        """Velocity (N, 3, k) induced at the bound-vortex midpoints by circulations (N, k)
        (a segment does not act on itself; physical velocities per unit free-stream speed)."""
        if self._split is not None:
            return self._split.velocity_at_bound(gammas)
        return self._hs.velocity(self._mid_s, gammas, self_panels=True)

    def coefficients(self, alpha_deg: float) -> tuple:
        """(CL, Cm about lattice.x_ref) at `alpha_deg` (deg) by superposition (cheap)."""
        return self._cl_cm(_alpha_rad(alpha_deg))

    def axis_coefficients(self, drag_form, cd0: float = 0.0):
        """alpha_deg -> (CF, Cm): :func:`geomload.aero.control_models.axis_coefficients` of
        :meth:`coefficients` (CF = CL cos a + (CDi + cd0) sin a, CDi from ``drag_form``
        (Q_xx, Q_xz, Q_zz)) in one function: the same arithmetic, the cosine and sine of alpha
        taken once (the pitch trim calls it a dozen times per case)."""
        qxx, qxz, qzz = drag_form
        x0, z0, x1, z1, x2, z2, m0, m1, m2, fac, S, Sc = self._cl_cm_consts()
        cos, sin, rad = math.cos, math.sin, _alpha_rad

        def on_axis(alpha_deg):
            a = rad(alpha_deg)
            ca, sa = cos(a), sin(a)
            w0, w1, w2 = ca * ca, ca * sa, sa * sa
            lift = -sa * (w0 * x0 + w1 * x1 + w2 * x2) + ca * (w0 * z0 + w1 * z1 + w2 * z2)
            CL, Cm = fac * lift / S, fac * (w0 * m0 + w1 * m1 + w2 * m2) / Sc
            cdi = qxx * ca * ca + 2.0 * qxz * ca * sa + qzz * sa * sa
            return CL * ca + (cdi + cd0) * sa, Cm

        return on_axis

    def solve(self, alpha_deg: float) -> AeroSolution:
        """Loads at angle of attack `alpha_deg` (deg), per unit dynamic pressure q where the
        field says so (see records.AeroSolution); circulation per unit free-stream speed."""
        alpha = _alpha_rad(alpha_deg)
        gamma = self._gamma([alpha])[:, 0]
        return self._solution(float(alpha_deg), alpha, gamma)

    def solve_many(self, alphas_deg) -> list:
        """`solve` at each angle (deg), by superposition of the two basis solutions."""
        degs = [float(a) for a in np.atleast_1d(alphas_deg)]
        rads = [_alpha_rad(a) for a in degs]
        G = self._gamma(rads)
        return [self._solution(d, r, G[:, k]) for k, (d, r) in enumerate(zip(degs, rads))]

    def _vind_rows(self) -> np.ndarray:
        """The basis velocities at the bound midpoints (N, 3, 2) as a (3N, 2) matrix (kept)."""
        hit = self.__dict__.get("_vind_2d")
        if hit is None or hit[0] is not self._vind:
            hit = (self._vind, self._vind.reshape(-1, 2))
            self._vind_2d = hit
        return hit[1]

    def _strip_sums(self, alpha: float, g) -> tuple:
        """(F (N, 3) force / q per panel, lift, pitching moment and induced drag per strip, all
        per q) at `alpha` (rad) with circulations g (N,): the strip part of :meth:`_solution`."""
        lat = self.lattice
        ns, nc = lat.n_span, lat.n_chord
        ca, sa = math.cos(alpha), math.sin(alpha)
        # the (N, 3, 2) basis velocities as one (3N, 2) matrix: one matrix-vector product
        # instead of N small ones (the same row products, the same bits)
        vt = (self._vind_rows() @ np.array([ca, sa])).reshape(-1, 3)
        vt[:, 0] += ca
        vt[:, 2] += sa
        F = 2.0 * g[:, None] * vortex.cross(vt, self._l)  # force / q per panel (m^2)
        lift = F @ np.array([-sa, 0.0, ca])
        lift_s = lift.reshape(ns, nc).sum(axis=1)
        my_s = self._moment(F, self._arm_strip).reshape(ns, nc).sum(axis=1)
        G = g.reshape(ns, nc).sum(axis=1)
        drag_s = -G * (self._W_trefftz @ G) * self._ds
        return F, lift_s, my_s, drag_s

    def strip_loads(self, alpha_deg: float) -> tuple:
        """(lift_per_q, drag_per_q, moment_per_q) per strip (m, m, m^2) at `alpha_deg` (deg):
        the three strip series of :meth:`solve`'s AeroSolution (the same arithmetic, the same
        bits) without the rest of the record."""
        alpha = _alpha_rad(alpha_deg)
        _F, lift_s, my_s, drag_s = self._strip_sums(alpha, self._gamma([alpha])[:, 0])
        w = self.lattice.strip_width
        return lift_s / w, drag_s / w, my_s / w

    def _solution(self, alpha_deg: float, alpha: float, g) -> AeroSolution:
        lat = self.lattice
        F, lift_s, my_s, drag_s = self._strip_sums(alpha, g)
        S, fac = lat.s_ref, self._fac
        CL = fac * lift_s.sum() / S
        CDi = fac * drag_s.sum() / S
        Cm = fac * self._moment(F, self._arm_ref).sum() / (S * lat.c_ref)
        a0, cla, dcm_dcl = self._linear()
        w, c = lat.strip_width, lat.strip_chord
        lift_pq, mom_pq = lift_s / w, my_s / w
        with np.errstate(divide="ignore", invalid="ignore"):
            cl = np.where(c > 0, lift_pq / c, 0.0)
            cm = np.where(c > 0, mom_pq / c**2, 0.0)
            cdi = np.where(c > 0, drag_s / w / c, 0.0)
            small = np.abs(lift_pq) <= 1e-12 * max(1e-300, np.abs(lift_pq).max())
            x_cp = np.where(small, self._qc[:, 0], self._qc[:, 0] - mom_pq / lift_pq)
        dcp = (F * lat.normal).sum(axis=1) / lat.area
        A = lat.b_ref**2 / lat.s_ref
        e = CL * CL / (math.pi * A * CDi) if CDi > 1e-14 else float("nan")
        return AeroSolution(
            alpha_deg=alpha_deg, mach=self.mach, gamma=g, y=lat.strip_y.copy(),
            chord=c.copy(), cl=cl, cl_c=lift_pq, cm_c4=cm, cdi=cdi, lift_per_q=lift_pq,
            drag_per_q=drag_s / w, moment_per_q=mom_pq, x_cp=x_cp, dcp=dcp,
            CL=float(CL), CDi=float(CDi), e=float(e), Cm=float(Cm),
            CL_alpha_per_rad=float(cla), alpha_zero_lift_deg=math.degrees(a0),
            x_ac_m=float(lat.x_ref[0] - lat.c_ref * dcm_dcl),
        )

    def _strip_cl(self, alpha):
        """Section cl of every strip at `alpha` (rad), by superposition (cheap)."""
        w, ca, sa = self._w(alpha)
        T = np.tensordot(w, self._Fq_strip, axes=1)
        lat = self.lattice
        with np.errstate(divide="ignore", invalid="ignore"):
            return (-sa * T[:, 0] + ca * T[:, 2]) / lat.strip_width / lat.strip_chord

    def alpha_for_cl(self, CL: float) -> float:
        """Angle of attack (deg) at which the wing CL equals `CL` (superposition of the two basis
        solutions, Newton iteration on the exact CL(alpha))."""
        try:
            target = float(CL)
        except (TypeError, ValueError):
            raise AeroError(f"CL: expected a number, got {CL!r}") from None
        if not math.isfinite(target):
            raise AeroError(f"CL: target lift coefficient must be finite, got {CL!r}")
        a0, cla, _ = self._linear()
        a = a0 + target / cla
        # Newton on CL(alpha) with the central-difference slope of _derivatives, CL alone and
        # inline (the same arithmetic: the same iterates to the bit)
        x0, z0, x1, z1, x2, z2, _m0, _m1, _m2, fac, S, _Sc = (self.__dict__.get("_clcm_k")
                                                               or self._cl_cm_consts())
        cos, sin, h = math.cos, math.sin, _SLOPE_STEP
        tol = 1e-12 * max(1.0, abs(target))

        def cl_at(x):
            ca, sa = cos(x), sin(x)
            w0, w1, w2 = ca * ca, ca * sa, sa * sa
            return fac * (-sa * (w0 * x0 + w1 * x1 + w2 * x2)
                          + ca * (w0 * z0 + w1 * z1 + w2 * z2)) / S

        for _ in range(20):
            cl = cl_at(a)
            if abs(cl - target) <= tol:
                break
            slope = (cl_at(a + h) - cl_at(a - h)) / (2 * h)
            if not abs(slope) > 1e-12:
                raise AeroError("lattice: lift slope is zero; the wing produces no lift")
            a -= (cl - target) / slope
        if abs(a) > math.radians(60.0):
            raise AeroError(f"CL: {target:g} needs |alpha| > 60 deg; outside linear theory")
        return math.degrees(a)

    def stall(self, cl_max=None) -> dict:
        """Stall onset: the first strip whose section cl reaches `cl_max` as alpha rises.

        cl_max: scalar or per-strip array; None uses DEFAULT_CL_MAX (1.4, common practice,
        no source) and says so in the returned `warnings`. Returns dict(first_station_y (m),
        CL_at_onset, alpha_at_onset (deg), warnings).
        """
        lat = self.lattice
        warnings = []
        if cl_max is None:
            cl_max = DEFAULT_CL_MAX
            warnings.append(f"cl_max: not given; using the default section cl_max {cl_max}")
        try:
            clm = np.broadcast_to(np.asarray(cl_max, float), lat.strip_y.shape)
        except ValueError:
            raise AeroError(f"cl_max: expected a number or one value per strip "
                            f"({lat.n_span}), got shape {np.shape(cl_max)}") from None
        if not np.all(np.isfinite(clm)) or np.any(clm <= 0):
            raise AeroError(f"cl_max: section cl_max must be finite and > 0, got {cl_max!r}")
        c = lat.strip_chord
        ok = c > 1e-6 * lat.c_ref

        def excess(a):
            return np.max(self._strip_cl(a)[ok] - clm[ok])

        a0 = self._linear()[0]
        lo, step = a0, math.radians(0.25)
        hi = lo + step
        while excess(hi) < 0.0:
            lo, hi = hi, hi + step
            if hi > a0 + math.radians(45.0):
                warnings.append("stall: cl_max not reached within 45 deg of zero lift")
                nan = float("nan")
                return dict(first_station_y=nan, CL_at_onset=nan, alpha_at_onset=nan,
                            warnings=warnings)
        for _ in range(60):
            mid = 0.5 * (lo + hi)
            lo, hi = (mid, hi) if excess(mid) < 0.0 else (lo, mid)
        cl = np.full(c.shape, -np.inf)
        cl[ok] = self._strip_cl(hi)[ok] - clm[ok]
        cand = np.nonzero(cl >= cl.max() - 1e-9)[0]
        k = cand[np.argmax(lat.strip_y[cand])]
        CL_on = self._cl_cm(hi)[0]
        return dict(first_station_y=float(lat.strip_y[k]), CL_at_onset=float(CL_on),
                    alpha_at_onset=math.degrees(hi), warnings=warnings)


__all__ = ["AeroModel", "MACH_WARN", "DEFAULT_CL_MAX"]
