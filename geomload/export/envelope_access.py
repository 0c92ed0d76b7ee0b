"""Plain tables drawn from the loads envelope and the V-n diagrams, for the exporters.

Envelope: :class:`geomload.loads.records.LoadsEnvelope`; V-n: a tuple of
:class:`geomload.loads.records.VnDiagram`. Both are typed records; nothing here guesses a shape.
"""

from __future__ import annotations

import numpy as np

from geomload.errors import OutputError
from geomload.loads.records import LoadsEnvelope, VnDiagram

QUANTITIES = (("shear", "N"), ("bending", "Nm"), ("torsion", "Nm"))
OPTIONAL = (("inplane_shear", "N"), ("inplane_bending", "Nm"))


def table(envelope: LoadsEnvelope) -> dict:
    """Plain arrays per quantity q (shear, bending, torsion, inplane_shear, inplane_bending) and
    side: ``q_max``, ``q_min`` (limit), ``q_max_ult``, ``q_min_ult`` (ultimate) and the governing
    case lists ``q_max_case``, ``q_min_case``, ``q_max_ult_case``, ``q_min_ult_case``; ``y``;
    ``quantities``: the (q, unit) pairs; ``rows``: the boolean mask of the rows to report."""
    if not isinstance(envelope, LoadsEnvelope):
        raise OutputError(f"envelope: expected a LoadsEnvelope, got {type(envelope).__name__}")
    out = {"y": np.asarray(envelope.y, float), "quantities": [], "rows": envelope.rows}
    for q, u in QUANTITIES + OPTIONAL:
        key = f"{q}_{u}"
        for side in ("max", "min"):
            out[f"{q}_{side}"] = envelope.maximum[key] if side == "max" else envelope.minimum[key]
            out[f"{q}_{side}_case"] = list(getattr(envelope, f"{side}_case")[key])
            out[f"{q}_{side}_ult"] = getattr(envelope, f"ultimate_{side}")[key]
            out[f"{q}_{side}_ult_case"] = list(getattr(envelope, f"ultimate_{side}_case")[key])
        out["quantities"].append((q, u))
    return out


def critical_table(envelope: LoadsEnvelope) -> list:
    """Rows per quantity and side: root value and its case, peak value over the span, where
    (see geomload.loads.envelope.critical_rows)."""
    from geomload.loads.envelope import critical_rows

    return critical_rows(envelope)


def vn_diagrams(vn) -> list:
    """The V-n diagrams as a list (None, one VnDiagram or a sequence of them)."""
    if vn is None:
        return []
    diagrams = [vn] if isinstance(vn, VnDiagram) else list(vn)
    for d in diagrams:
        if not isinstance(d, VnDiagram):
            raise OutputError(f"V-n: expected VnDiagram records, got {type(d).__name__}")
    return diagrams


def vn_title(d: VnDiagram, k=0) -> str:
    """'25 kg at 0 m': the flying mass and altitude of the diagram."""
    return d.title


def vn_curves(d: VnDiagram) -> dict:
    """name -> (v_eas m/s, n) of one diagram."""
    return {str(k): (np.asarray(v[0], float), np.asarray(v[1], float)) for k, v in d.curves.items()}


def vn_points(d: VnDiagram) -> list:
    """[{'name', 'label', 'v_eas' (m/s), 'n'}] of one diagram (its corner and gust points)."""
    return [{"name": p.name, "label": p.label or p.name, "v_eas": float(p.v_eas), "n": float(p.n)}
            for p in d.corners]


def critical_case(run):
    """The CaseResult with the largest root |bending moment| (the case painted in 3D)."""
    if not run.cases:
        raise OutputError(f"{run.case_path}: no flight case to export")
    return max(run.cases, key=lambda c: abs(float(c.loads.bending_Nm[0])))


def find_case(run, name):
    """The CaseResult named `name` (None -> the critical case)."""
    if name is None:
        return critical_case(run)
    for c in run.cases:
        if c.name == name:
            return c
    raise OutputError(f"case {name!r} not found; cases: {', '.join(c.name for c in run.cases)}")
