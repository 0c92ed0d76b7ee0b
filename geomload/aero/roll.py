"""Control deflections and steady roll on one factorised vortex lattice; loads per wing side.

Basis solutions (one LU factorisation, `AeroModel`): free stream x and z components (the angle
of attack, gamma = cos a g_x + sin a g_z), each control surface per radian of deflection (two
columns, free stream x and z, see `controls.deflection_rhs`) and the roll rate per unit
p b / (2 V). Every state (alpha, deflections, roll rate) is a weighted sum of them.

Roll rate (Etkin & Reid, Dynamics of Flight, body axes; Katz & Plotkin sec. 12.3 for the
rotational velocity in the boundary condition): the aircraft rolls about the wing-frame x axis
(through y = 0, z = 0) with body rate p, positive RIGHT (starboard) WING DOWN. In the wing frame
(x aft, y starboard, z up) a point r moves with (0, p z, -p y), so the air meets it with
(0, -p z, p y): up-wash on the descending starboard wing. Per unit free-stream speed that is
p_hat (2 / b) (0, -z, y) with p_hat = p b / (2 V). The trailing legs stay straight along x
(no helical wake), as in the rest of the lattice.

Rolling moment: body axes, positive right wing down, C_l = L / (q S b); with lift up on the
port wing (y < 0) it is positive: L = -sum y F_z + z F_y (wing-frame moment about +x, negated).
Aileron deflection positive = port trailing edge down, starboard up (see `controls`), so
Cl_delta_a > 0, Cl_p < 0 and a positive deflection gives a positive steady roll rate
p b / (2 V) = -Cl_delta_a delta / Cl_p.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geomload.errors import AeroError
from geomload.aero.controls import check_controls, check_deflection, deflection_rhs
from geomload.aero.vortex import cross

DIFF_STEP = math.radians(1.0)  # central differences of quadratic forces are exact; any step


@dataclass(frozen=True)
class SideStrips:
    """Strip loads of one wing side, root to tip, per unit dynamic pressure.

    y_m : (k,) distance of the strip centre from the symmetry plane (m, >= 0).
    chord_m, width_m : (k,) strip chord and spanwise width (m).
    lift_per_q : (k,) lift per unit span / q (N/m per Pa = m), normal to the free stream, up.
    drag_per_q : (k,) Trefftz-plane induced drag per unit span / q (m).
    moment_per_q : (k,) pitching moment per span about the strip quarter chord / q (m^2),
        nose-up positive. cl : (k,) section lift coefficient.
    """

    y_m: np.ndarray
    chord_m: np.ndarray
    width_m: np.ndarray
    lift_per_q: np.ndarray
    drag_per_q: np.ndarray
    moment_per_q: np.ndarray
    cl: np.ndarray


@dataclass(frozen=True)
class ControlledSolution:
    """A lattice state with deflections and roll rate; loads per side per unit q.

    alpha_deg; deflections_deg: tuple of (surface name, deg); roll_rate_pb2v: p b / (2 V);
    starboard, port: SideStrips; CL (both sides), CDi, Cm (about lattice.x_ref, nose-up),
    Cl_roll (body-axis rolling moment coefficient, right wing down positive, from the panel
    forces); Cl_airload (the same from the strip lift of the two sides, sum of -y l dy / (S b)).
    """

    alpha_deg: float
    deflections_deg: tuple
    roll_rate_pb2v: float
    starboard: SideStrips
    port: SideStrips
    CL: float
    CDi: float
    Cm: float
    Cl_roll: float
    Cl_airload: float


@dataclass(frozen=True)
class SteadyRoll:
    """Steady roll where the aileron and damping rolling moments balance.

    aileron: surface name; delta_deg: its deflection; alpha_deg; pb_2V: p b / (2 V) (-);
    Cl_delta_per_rad, Cl_p: derivatives at this state (Cl_p per unit p b / (2 V));
    Cl_aileron = Cl_delta delta, Cl_damping = Cl_p pb_2V (their sum is ~0); solution: the state.
    """

    aileron: str
    delta_deg: float
    alpha_deg: float
    pb_2V: float
    Cl_delta_per_rad: float
    Cl_p: float
    Cl_aileron: float
    Cl_damping: float
    solution: ControlledSolution


def roll_rhs(lattice) -> np.ndarray:
    """Right-hand side (N,) per unit p b / (2 V): -(2/b) (0, -z, y) . n at the collocation points."""
    p, n = lattice.colloc, lattice.normal
    return -(2.0 / lattice.b_ref) * (-p[:, 2] * n[:, 1] + p[:, 1] * n[:, 2])


def control_rhs(lattice, controls) -> np.ndarray:
    """Right-hand sides (N, K) of a ControlModel beyond the free stream: two columns per control
    surface (`controls.deflection_rhs`), then the roll rate's (`roll_rhs`) on a full-span
    lattice."""
    cols = [deflection_rhs(lattice, c) for c in controls]
    if not lattice.mirrored:
        cols.append(roll_rhs(lattice)[:, None])
    return np.hstack(cols) if cols else np.zeros((lattice.colloc.shape[0], 0))


class ControlModel:
    """Angle of attack, control deflections and roll rate on one factorised `AeroModel`.

    model : AeroModel of a lattice built with `controls` (build_lattice(..., controls=...)),
        full span (`full_span=True`) for antisymmetric deflections, one-side surfaces or roll;
        a half lattice with images accepts symmetric surfaces on both sides only.
    controls : the ControlSurface records. Warnings in `self.warnings`.
    """

    def __init__(self, model, controls=()):
        self.model = model
        lat = self.lattice = model.lattice
        self.controls = tuple(controls)
        self.warnings = list(check_controls(self.controls, 0.5 * lat.b_ref,
                                            full_span=not lat.mirrored))
        self.names = [c.name for c in self.controls]
        R = control_rhs(lat, self.controls)
        X = getattr(model, "extra_rhs", None)
        if not R.shape[1]:
            G, V = R, np.zeros((R.shape[0], 3, 0))
        elif X is not None and X.shape == R.shape and np.array_equal(X, R):
            # solved with the model's basis, their velocities with its own (`build`)
            G, V = model.extra_solutions, model.extra_velocity
        else:
            G = model.solve_rhs(R)  # the influence matrix assembled and solved again
            V = model.induced_at_bound(G)
        self._B = np.hstack([model._basis, G])  # (N, K)
        self._V = np.concatenate([model._vind, V], axis=2)  # (N, 3, K)
        self._mid = 0.5 * (lat.bound_a + lat.bound_b)
        self._fac = 2.0 if lat.mirrored else 1.0
        self._quadratic_forms()

    @classmethod
    def build(cls, lattice, mach: float = 0.0, controls=(), factors=None):
        """The ControlModel of `lattice` at `mach` with its AeroModel, every right-hand side
        (free stream, deflections, roll rate) solved in one LAPACK call: one assembly and one
        LU, where ``ControlModel(AeroModel(lattice, mach), controls)`` needs two of each.
        factors: optional KeptFactors shared with the lattice's models at other Machs (see
        `AeroModel`)."""
        from geomload.aero.solve import AeroModel

        controls = tuple(controls)
        check_controls(controls, 0.5 * lattice.b_ref, full_span=not lattice.mirrored)
        R = control_rhs(lattice, controls)
        return cls(AeroModel(lattice, mach=mach, extra_rhs=R if R.shape[1] else None,
                             factors=factors), controls)

    def _quadratic_forms(self):
        """The total forces, rolling and pitching moments as quadratic forms of the weights w.

        With w = (cos a, sin a, cos a d_1, sin a d_1, ..., p_hat) the circulation B w, the
        velocity at the bound vortices (induced V w, free stream (cos a, 0, sin a) and the roll
        rate's (0, -z, y) 2 p_hat / b) are linear in w, so every panel force
        F = 2 (B w) ((V~ w) x l) and every sum of them is w^T M w: the Newton loops of the trim
        and the steady roll then cost K^2 per step instead of a pass over the panels."""
        lat = self.lattice
        vt = self._V.copy()
        vt[:, 0, 0] += 1.0
        vt[:, 2, 1] += 1.0
        if not lat.mirrored:
            k = 2.0 / lat.b_ref
            vt[:, 1, -1] -= k * self._mid[:, 2]
            vt[:, 2, -1] += k * self._mid[:, 1]
        C = np.cross(np.swapaxes(vt, 1, 2), self.model._l[:, None, :])  # (N, K, 3)
        Bt2 = 2.0 * self._B.T
        m, arm = self._mid, self.model._arm_ref
        self._Mx = Bt2 @ C[:, :, 0]
        self._Mz = Bt2 @ C[:, :, 2]
        self._Mroll = Bt2 @ (m[:, 1, None] * C[:, :, 2] - m[:, 2, None] * C[:, :, 1])
        self._Mpitch = Bt2 @ (arm[:, 2, None] * C[:, :, 0] - arm[:, 0, None] * C[:, :, 2])

    def _index(self, name):
        try:
            return self.names.index(name)
        except ValueError:
            raise AeroError(f"deflection: no control surface named {name!r} "
                            f"(known: {', '.join(self.names) or 'none'})") from None

    def _weights(self, alpha, defl, p_hat):
        ca, sa = math.cos(alpha), math.sin(alpha)
        w = np.zeros(self._B.shape[1])
        w[0], w[1] = ca, sa
        for name, d in defl.items():
            i = self._index(name)
            w[2 + 2 * i] += ca * d
            w[3 + 2 * i] += sa * d
        if p_hat:
            if self.lattice.mirrored:
                raise AeroError("roll_rate: a roll rate needs a full-span lattice")
            w[-1] = p_hat
        return w, ca, sa

    def _forces(self, alpha, defl, p_hat):
        w, ca, sa = self._weights(alpha, defl, p_hat)
        g = self._B @ w
        vt = self._V @ w
        vt[:, 0] += ca
        vt[:, 2] += sa
        if p_hat:
            k = p_hat * 2.0 / self.lattice.b_ref
            vt[:, 1] -= k * self._mid[:, 2]
            vt[:, 2] += k * self._mid[:, 1]
        return g, 2.0 * g[:, None] * cross(vt, self.model._l), ca, sa

    def _rolling(self, F):
        m = self._mid
        return -float(np.sum(m[:, 1] * F[:, 2] - m[:, 2] * F[:, 1])) / (
            self.lattice.s_ref * self.lattice.b_ref)

    def _cl_roll(self, alpha, defl, p_hat):
        """Body-axis rolling moment coefficient (the quadratic form of `_rolling`)."""
        if self.lattice.mirrored:
            return 0.0  # images: symmetric by construction
        w = self._weights(alpha, defl, p_hat)[0]
        return -float(w @ self._Mroll @ w) / (self.lattice.s_ref * self.lattice.b_ref)

    def _CL(self, alpha, defl, p_hat=0.0):
        w, ca, sa = self._weights(alpha, defl, p_hat)
        lift = -sa * float(w @ self._Mx @ w) + ca * float(w @ self._Mz @ w)
        return self._fac * lift / self.lattice.s_ref

    def _defl_rad(self, deflections_deg, key="deflection"):
        out, warns = {}, []
        for name, d in dict(deflections_deg or {}).items():
            c = self.controls[self._index(name)]
            warns += check_deflection(c, d, key)
            out[name] = math.radians(float(d))
        return out, warns

    # -------------------------------------------------------------------------------- public
    def solve(self, alpha_deg: float, deflections_deg=None, roll_rate_pb2v: float = 0.0):
        """ControlledSolution at alpha (deg), deflections {name: deg} and p b / (2 V)."""
        defl, warns = self._defl_rad(deflections_deg)
        self.warnings.extend(w for w in warns if w not in self.warnings)
        alpha = math.radians(float(alpha_deg))
        g, F, ca, sa = self._forces(alpha, defl, float(roll_rate_pb2v))
        lat, m = self.lattice, self.model
        ns, nc = lat.n_span, lat.n_chord
        lift_s = (F @ np.array([-sa, 0.0, ca])).reshape(ns, nc).sum(axis=1)
        my_s = m._moment(F, m._arm_strip).reshape(ns, nc).sum(axis=1)
        G = g.reshape(ns, nc).sum(axis=1)
        drag_s = -G * (m._W_trefftz @ G) * m._ds
        if roll_rate_pb2v:
            # the roll rate's up-wash p y / V tilts each strip's lift forward on the descending
            # wing (backward on the rising one): a force along the free stream the Trefftz-plane
            # drag does not hold (kinematic, not induced; Etkin & Reid, the roll-damping strip
            # analysis)
            drag_s = drag_s - lift_s * float(roll_rate_pb2v) * (2.0 / lat.b_ref) * lat.strip_y
        w, c, y = lat.strip_width, lat.strip_chord, lat.strip_y

        def side(sel, flip):
            idx = np.nonzero(sel)[0]
            idx = idx[::-1] if flip else idx
            lq = lift_s[idx] / w[idx]
            with np.errstate(divide="ignore", invalid="ignore"):
                cl = np.where(c[idx] > 0, lq / c[idx], 0.0)
            return SideStrips(y_m=np.abs(y[idx]), chord_m=c[idx].copy(), width_m=w[idx].copy(),
                              lift_per_q=lq, drag_per_q=drag_s[idx] / w[idx],
                              moment_per_q=my_s[idx] / w[idx], cl=cl)

        stb = side(y > 0, False)
        port = stb if lat.mirrored else side(y < 0, True)
        S = lat.s_ref
        air = 0.0 if lat.mirrored else -float(np.sum(y * lift_s)) / (S * lat.b_ref)
        return ControlledSolution(
            alpha_deg=float(alpha_deg),
            deflections_deg=tuple((k, float(v)) for k, v in dict(deflections_deg or {}).items()),
            roll_rate_pb2v=float(roll_rate_pb2v), starboard=stb, port=port,
            CL=self._fac * float(lift_s.sum()) / S, CDi=self._fac * float(drag_s.sum()) / S,
            Cm=self._fac * float(m._moment(F, m._arm_ref).sum()) / (S * lat.c_ref),
            Cl_roll=0.0 if lat.mirrored else self._rolling(F), Cl_airload=air)

    def roll_derivatives(self, aileron: str, alpha_deg: float = 0.0, delta_deg: float = 0.0,
                         roll_rate_pb2v: float = 0.0) -> tuple:
        """(Cl_delta per rad, Cl_p per unit p b/(2V)) of surface `aileron` at the given state,
        by central differences (exact for the quadratic near-field forces)."""
        if self.lattice.mirrored:
            raise AeroError("roll: rolling derivatives need a full-span lattice")
        self._index(aileron)
        a, d, p, h = math.radians(float(alpha_deg)), math.radians(float(delta_deg)), \
            float(roll_rate_pb2v), DIFF_STEP
        cld = (self._cl_roll(a, {aileron: d + h}, p) - self._cl_roll(a, {aileron: d - h}, p)) / (
            2 * h)
        clp = (self._cl_roll(a, {aileron: d}, p + h) - self._cl_roll(a, {aileron: d}, p - h)) / (
            2 * h)
        return cld, clp

    def steady_roll(self, aileron: str, delta_deg: float, alpha_deg: float = 0.0,
                    other_deflections_deg=None) -> SteadyRoll:
        """Roll rate p b / (2 V) at which the total rolling moment vanishes (Newton on the
        rolling moment, which is linear in p up to the small quadratic force terms)."""
        defl, warns = self._defl_rad({**dict(other_deflections_deg or {}), aileron: delta_deg})
        self.warnings.extend(w for w in warns if w not in self.warnings)
        a = math.radians(float(alpha_deg))
        p = 0.0
        for _ in range(8):
            f = self._cl_roll(a, defl, p)
            dfdp = (self._cl_roll(a, defl, p + DIFF_STEP) - self._cl_roll(a, defl, p - DIFF_STEP)
                    ) / (2 * DIFF_STEP)
            if not dfdp < 0.0:
                raise AeroError("roll: the roll-damping derivative is not negative; the lattice "
                                "cannot give a steady roll")
            step = f / dfdp
            p -= step
            if abs(step) <= 1e-13:
                break
        cld, clp = self.roll_derivatives(aileron, alpha_deg, delta_deg, p)
        d = math.radians(float(delta_deg))
        sol = self.solve(alpha_deg, {**dict(other_deflections_deg or {}), aileron: delta_deg}, p)
        return SteadyRoll(aileron=aileron, delta_deg=float(delta_deg), alpha_deg=float(alpha_deg),
                          pb_2V=float(p), Cl_delta_per_rad=cld, Cl_p=clp,
                          Cl_aileron=cld * d, Cl_damping=clp * p, solution=sol)

    def alpha_for_cl(self, CL: float, deflections_deg=None,
                     roll_rate_pb2v: float = 0.0) -> float:
        """Angle of attack (deg) giving wing CL with the deflections {name: deg} and roll rate
        p b / (2 V) (Newton)."""
        target = float(CL)
        if not math.isfinite(target):
            raise AeroError(f"CL: target lift coefficient must be finite, got {CL!r}")
        defl, _ = self._defl_rad(deflections_deg)
        p = float(roll_rate_pb2v)
        if p and self.lattice.mirrored:
            raise AeroError("roll_rate: a roll rate needs a full-span lattice")
        a0, cla, _ = self.model._linear()
        a = a0 + target / cla
        for _ in range(30):
            f = self._CL(a, defl, p) - target
            if abs(f) <= 1e-12 * max(1.0, abs(target)):
                break
            h = 1e-4
            a -= f / ((self._CL(a + h, defl, p) - self._CL(a - h, defl, p)) / (2 * h))
        if abs(a) > math.radians(60.0):
            raise AeroError(f"CL: {target:g} needs |alpha| > 60 deg; outside linear theory")
        return math.degrees(a)

    def half_solution(self, state, clean):
        """The `records.AeroSolution` of a controlled state on the starboard half lattice.

        state : a ControlledSolution of this model (`solve`).
        clean : the clean wing's AeroSolution on the half lattice (same stations, spacing and
            Mach), for the wing's linear properties (CL_alpha, alpha_L0, x_ac).

        Totals (CL, CDi, e, Cm) are those of the whole wing in the state (deflections and roll
        rate); strips, circulation and pressure jump are the starboard side's, on the panels of
        the half lattice (the full-span lattice's starboard panels are the half lattice's, in
        the same order). The pressure jump is taken on the undeflected panel normals (linear
        theory deflects the boundary condition, not the geometry).
        """
        from .records import AeroSolution

        lat, m = self.lattice, self.model
        if lat.mirrored:
            raise AeroError("half_solution: needs a full-span lattice")
        defl = {k: math.radians(v) for k, v in state.deflections_deg}
        g, F, _ca, _sa = self._forces(math.radians(state.alpha_deg), defl, state.roll_rate_pb2v)
        n_half = clean.gamma.shape[0]
        ns_half = clean.y.shape[0]
        if n_half * 2 != g.shape[0] or ns_half * 2 != lat.n_span:
            raise AeroError("half_solution: the full-span lattice does not mirror the half one")
        panels = slice(g.shape[0] - n_half, None)
        sb = state.starboard
        c = sb.chord_m
        with np.errstate(divide="ignore", invalid="ignore"):
            cm = np.where(c > 0, sb.moment_per_q / c**2, 0.0)
            cdi = np.where(c > 0, sb.drag_per_q / c, 0.0)
            lq = sb.lift_per_q
            small = np.abs(lq) <= 1e-12 * max(1e-300, np.abs(lq).max())
            qc_x = m._qc[lat.n_span - ns_half:, 0]
            x_cp = np.where(small, qc_x, qc_x - sb.moment_per_q / lq)
        dcp = (F[panels] * lat.normal[panels]).sum(axis=1) / lat.area[panels]
        A = lat.b_ref ** 2 / lat.s_ref
        e = state.CL ** 2 / (math.pi * A * state.CDi) if state.CDi > 1e-14 else float("nan")
        return AeroSolution(
            alpha_deg=float(state.alpha_deg), mach=clean.mach, gamma=g[panels].copy(),
            y=sb.y_m.copy(), chord=c.copy(), cl=sb.cl.copy(), cl_c=lq.copy(), cm_c4=cm,
            cdi=cdi, lift_per_q=lq.copy(), drag_per_q=sb.drag_per_q.copy(),
            moment_per_q=sb.moment_per_q.copy(), x_cp=x_cp, dcp=dcp, CL=float(state.CL),
            CDi=float(state.CDi), e=float(e), Cm=float(state.Cm),
            CL_alpha_per_rad=clean.CL_alpha_per_rad,
            alpha_zero_lift_deg=clean.alpha_zero_lift_deg, x_ac_m=clean.x_ac_m)

    def coefficients(self, alpha_deg: float, deflections_deg=None) -> tuple:
        """(CL, Cm about lattice.x_ref) at alpha (deg) with deflections {name: deg}."""
        defl, _ = self._defl_rad(deflections_deg)
        a = math.radians(float(alpha_deg))
        w = self._weights(a, defl, 0.0)[0]
        lat = self.lattice
        Cm = self._fac * float(w @ self._Mpitch @ w) / (lat.s_ref * lat.c_ref)
        return self._CL(a, defl, 0.0), Cm


def side_strip_loads(model: ControlModel, alpha_deg: float, deflections_deg=None,
                     roll_rate_pb2v: float = 0.0) -> tuple:
    """(starboard, port) SideStrips per unit q for one state of a factorised ControlModel."""
    sol = model.solve(alpha_deg, deflections_deg, roll_rate_pb2v)
    return sol.starboard, sol.port
