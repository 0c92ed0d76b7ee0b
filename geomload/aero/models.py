"""Factorised vortex-lattice models, one per Mach number, built on first use and shared.

A model (:class:`geomload.aero.solve.AeroModel`) holds the two basis solutions of its influence
matrix (solved once, the matrix then released); every angle of attack is their superposition. The pipeline asks
this cache for the model at a case's Mach; a caller running many variants passes a dict-like
``store`` so models of the same lattice and Mach are built once across runs.
"""

from __future__ import annotations

import math

from geomload.aero.records import Lattice
from geomload.messages import no_progress

MACH_BIN_LOG = 0.004  # bin width in ln(1/beta): the lattice's Prandtl-Glauert factor is at
# most exp(0.004) - 1 = 0.40 % above the case's own (below the 0.5 % aimed at), so the lift slope
# is too; a low-speed aircraft (M < 0.3) needs about a dozen models
MACH_TOP = 0.95  # above this the case's own Mach is used (one model per case; warned anyway)


def lattice_mach(mach: float) -> float:
    """The Mach number the lattice is solved at for a case at ``mach``: the top of its bin in
    ln(1/beta) (beta = sqrt(1 - M^2), the Prandtl-Glauert factor), the conservative side for
    gusts; the case's own Mach above MACH_TOP."""
    if mach <= 1e-9:
        return 0.0
    if mach >= MACH_TOP:
        return float(mach)
    u = -0.5 * math.log1p(-mach * mach)
    top = math.ceil(u / MACH_BIN_LOG - 1e-9) * MACH_BIN_LOG
    return min(math.sqrt(-math.expm1(-2.0 * top)), MACH_TOP)


def cached_lattice(spec, moment_reference, stations, wing_key, cache=None) -> tuple:
    """(key, Lattice) of a LatticeSpec on the wing's stations, from ``cache`` when it holds the
    same wing (wing_key), lattice specification and moment reference."""
    from geomload.aero.lattice import build_lattice

    ref = None if moment_reference is None else tuple(float(v) for v in moment_reference)
    key = ("lattice", wing_key, spec, ref)
    if cache is not None and key in cache:
        return key, cache[key]
    lattice = build_lattice(stations, n_span=spec.n_span, n_chord=spec.n_chord,
                            spacing=spec.spacing, x_ref=moment_reference)
    if cache is not None:
        cache[key] = lattice
    return key, lattice


class MachModels:
    """One factorised AeroModel per lattice Mach, built on first use.

    lattice: the Lattice; progress: callable(stage, done, total); store: optional dict-like
    shared between runs, keyed by (key, Mach); key: a hashable that identifies the lattice (its
    geometry and lattice specification), required with a store.
    """

    def __init__(self, lattice: Lattice, progress=no_progress, store=None, key=None):
        if store is not None and key is None:
            raise ValueError("MachModels: a shared store needs a lattice key")
        self.lattice, self.progress = lattice, progress
        self.models, self._cla, self._stall, self._drag = {}, {}, {}, {}
        self._store, self._key = store, key
        self.built = 0  # models factorised by this cache (not found in the store)
        # the LU of the first large model built here, reused by the others (`kept_factors`)
        from geomload.aero.kept_factors import KeptFactors

        self.factors = KeptFactors()

    def get(self, mach: float):
        """The model at the lattice Mach of ``mach``."""
        key = round(lattice_mach(mach), 6)
        if key not in self.models:
            shared = None if self._store is None else self._store.get(("aero", self._key, key))
            if shared is None:
                from geomload.aero.solve import AeroModel

                self.progress(f"lattice M={key:.2f}", 0, 1)
                shared = AeroModel(self.lattice, mach=key, factors=self.factors)
                self.built += 1
                self.progress(f"lattice M={key:.2f}", 1, 1)
                if self._store is not None:
                    self._store[("aero", self._key, key)] = shared
            self.models[key] = shared
        return self.models[key]

    def lift_slope(self, mach: float) -> float:
        """Wing lift slope (per rad) at the lattice Mach of ``mach``."""
        key = round(lattice_mach(mach), 6)
        if key not in self._cla:
            self._cla[key] = float(self.get(mach).solve(0.0).CL_alpha_per_rad)
        return self._cla[key]

    def stall_cl(self, mach: float, cl_max: float) -> dict:
        """The model's stall-onset estimate for section ``cl_max`` (see AeroModel.stall)."""
        key = (round(lattice_mach(mach), 6), float(cl_max))
        if key not in self._stall:
            self._stall[key] = self.get(mach).stall(cl_max)
        return self._stall[key]

    def induced_drag_form(self, mach: float) -> tuple:
        """(Q_xx, Q_xz, Q_zz): CDi(alpha) = Q_xx cos^2 + 2 Q_xz cos sin + Q_zz sin^2.

        The Trefftz-plane drag is a quadratic form of the circulation, which is the superposition
        cos(a) G_x + sin(a) G_z of the model's two basis solutions; three solves fix the form
        exactly, after which every angle costs three multiplications.
        """
        key = round(lattice_mach(mach), 6)
        if key not in self._drag:
            a = 30.0
            d0, dp, dm = (s.CDi for s in self.get(mach).solve_many([0.0, a, -a]))
            c2, cs = math.cos(math.radians(a)) ** 2, math.cos(math.radians(a)) * math.sin(math.radians(a))
            s2 = 1.0 - c2
            qxx = d0
            qzz = (0.5 * (dp + dm) - c2 * qxx) / s2
            qxz = (dp - dm) / (4.0 * cs)
            self._drag[key] = (qxx, qxz, qzz)
        return self._drag[key]

    @property
    def warnings(self) -> list:
        out = []
        for m in self.models.values():
            out.extend(getattr(m, "warnings", []))
        return out


def analyse_at_alpha(stations, alpha_deg: float, mach: float = 0.0, n_span: int = 40,
                     n_chord: int = 10, cl_max=None, convergence: bool = False) -> dict:
    """One vortex-lattice solution of a wing at an angle of attack (the `aero` command's job).

    Returns dict(lattice, solution (AeroSolution), stall (dict of the stall-onset estimate with
    the cl_max used), convergence (dict or None), messages (tuple of Message)). Without cl_max
    the solver's default is used, with a warning.
    """
    from geomload.aero.lattice import build_lattice
    from geomload.aero.refinement import check_convergence
    from geomload.aero.solve import DEFAULT_CL_MAX, AeroModel
    from geomload.errors import AeroError
    from geomload.messages import Message

    if not math.isfinite(alpha_deg):
        raise AeroError(f"--alpha: must be a finite number of degrees, got {alpha_deg}")
    if n_span < 1 or n_chord < 1:
        raise AeroError(f"--panels-span/--panels-chord: must be positive, got {n_span}/{n_chord}")
    lattice = build_lattice(stations, n_span=n_span, n_chord=n_chord)
    model = AeroModel(lattice, mach=mach)
    sol = model.solve(alpha_deg)
    messages = [Message("warning", w) for w in model.warnings]
    if cl_max is None:
        cl_max = DEFAULT_CL_MAX
        messages.append(Message("warning", f"section cl_max not given; stall onset uses a default "
                                           f"cl_max = {cl_max:g}"))
    stall = dict(model.stall(cl_max), cl_max=cl_max)
    messages += [Message("warning", w) for w in stall.pop("warnings", [])]
    conv = (check_convergence(stations, alpha_deg, mach, n_span=n_span, n_chord=n_chord)
            if convergence else None)
    return dict(lattice=lattice, solution=sol, stall=stall, convergence=conv,
                messages=tuple(messages))
