"""The lift curve of a run: CL at whole degrees of angle of attack, wide enough to show every
trimmed case (the report's CL-alpha plot and summary.json)."""

from __future__ import annotations

import numpy as np

SWEEP_DEG = np.arange(-6.0, 16.01, 1.0)  # the alpha sweep shown in the report (deg)
SWEEP_MARGIN_DEG = 1.0  # the sweep reaches this far past the lowest and highest trimmed angle


def sweep_angles(trim_alphas_deg) -> np.ndarray:
    """SWEEP_DEG widened in whole degrees so that it covers every finite trimmed angle (deg)
    with SWEEP_MARGIN_DEG to spare."""
    a = np.asarray(list(trim_alphas_deg), float)
    a = a[np.isfinite(a)]
    lo = min(SWEEP_DEG[0], np.floor(a.min()) - SWEEP_MARGIN_DEG) if a.size else SWEEP_DEG[0]
    hi = max(SWEEP_DEG[-1], np.ceil(a.max()) + SWEEP_MARGIN_DEG) if a.size else SWEEP_DEG[-1]
    return np.arange(lo, hi + 0.01, 1.0)


def lift_curve(model, trim_alphas_deg) -> tuple:
    """((alpha deg, CL), ...) of an AeroModel over :func:`sweep_angles` of the trimmed angles."""
    alphas = sweep_angles(trim_alphas_deg)
    return tuple((float(a), float(s.CL)) for a, s in zip(alphas, model.solve_many(alphas)))


__all__ = ["SWEEP_DEG", "sweep_angles", "lift_curve"]
