"""The aero models of the cases with control surfaces: the full-span lattice with the case's
surfaces and one ControlModel per lattice Mach (:class:`ControlModels`, the counterpart of
:class:`geomload.aero.models.MachModels` for the symmetric wing), and the wing's force
coefficient on the load-factor axis that a pitch trim balances (:func:`axis_coefficients`).
"""

from __future__ import annotations

import math

from .models import lattice_mach


class ControlModels:
    """The full-span lattice with the case's control surfaces and one ControlModel per lattice
    Mach, built on first use; kept in ``cache`` (the dict compute() shares between calls) under
    the symmetric lattice's key and the surfaces, so a batch of variants builds them once.
    ``warnings``: the models' warnings (strings), each once."""

    def __init__(self, case, stations, progress, cache=None, lattice_key=()):
        from .lattice import build_lattice

        spec = case.lattice
        self.cache, self.key = cache, ("control lattice", lattice_key, case.controls.surfaces)
        lat = None if cache is None else cache.get(self.key)
        if lat is None:
            lat = build_lattice(stations, n_span=spec.n_span, n_chord=spec.n_chord,
                                spacing=spec.spacing, full_span=True,
                                x_ref=case.moment_reference, controls=case.controls.surfaces)
            if cache is not None:
                cache[self.key] = lat
        self.lattice = lat
        self.controls, self.progress, self.models = case.controls.surfaces, progress, {}
        self.warnings = []
        from .kept_factors import KeptFactors

        self.factors = KeptFactors()  # the first large model's LU, reused by the others

    def get(self, mach: float):
        """The ControlModel at the lattice Mach of ``mach`` (built once)."""
        from .roll import ControlModel

        key = round(lattice_mach(mach), 6)
        if key not in self.models:
            ck = ("control aero", self.key, key)
            m = None if self.cache is None else self.cache.get(ck)
            if m is None:
                self.progress(f"control lattice M={key:.2f}", 0, 1)
                # one LU for every RHS (or refinement with the first model's, `kept_factors`)
                m = ControlModel.build(self.lattice, key, self.controls, factors=self.factors)
                self.progress(f"control lattice M={key:.2f}", 1, 1)
                if self.cache is not None:
                    self.cache[ck] = m
            self.warnings += [w for w in m.warnings if w not in self.warnings]
            self.models[key] = m
        return self.models[key]


def axis_coefficients(coefficients, drag_form=None, cd0: float = 0.0):
    """alpha_deg -> (CF, Cm): the wing's force coefficient on the load-factor axis and its
    pitching moment coefficient, from ``coefficients`` (alpha_deg -> (CL, Cm)).

    drag_form: (Q_xx, Q_xz, Q_zz) of CDi(alpha) (MachModels.induced_drag_form) for the body
    axis, CF = CL cos(a) + (CDi + cd0) sin(a) (14 CFR 23.321(a)); None for the flight path,
    CF = CL.
    """
    if drag_form is None:
        return coefficients
    from .solve import AeroModel

    if getattr(coefficients, "__func__", None) is AeroModel.coefficients:
        return coefficients.__self__.axis_coefficients(drag_form, cd0)  # the same, in one call
    qxx, qxz, qzz = drag_form

    def on_axis(alpha_deg):
        CL, Cm = coefficients(alpha_deg)
        ca, sa = math.cos(math.radians(alpha_deg)), math.sin(math.radians(alpha_deg))
        cdi = qxx * ca * ca + 2.0 * qxz * ca * sa + qzz * sa * sa
        return CL * ca + (cdi + cd0) * sa, Cm

    return on_axis


__all__ = ["ControlModels", "axis_coefficients"]
