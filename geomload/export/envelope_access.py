"""Read the envelope-of-loads and V-n objects without importing their module.

Envelope: geomload.loads.envelope.Envelope (``y``; dicts ``maximum``, ``minimum``, ``max_case``,
``min_case``, ``ultimate_max``, ``ultimate_min``, ``ultimate_max_case``, ``ultimate_min_case``
keyed by SpanLoads field, e.g. "bending_Nm"), or any object with flat attributes ``y``,
``shear_max_N``, ``shear_min_N``, ``bending_max_Nm``, ... and ``shear_max_case``, ... (then
ultimate = ``ultimate_factor`` (default 1.5, 14 CFR 23.303) x limit).

V-n: geomload.loads.envelope.VnDiagram (``curves`` name -> (v_eas m/s, n); ``corners`` of
FlightPoint with ``name``, ``label``, ``v_eas``, ``n``; ``mass_kg``, ``altitude_m``), an object
with ``points`` instead of ``corners``, or a list of such diagrams (several masses/altitudes).
"""

from __future__ import annotations

import numpy as np

from geomload.errors import OutputError

QUANTITIES = (("shear", "N"), ("bending", "Nm"), ("torsion", "Nm"))
OPTIONAL = (("inplane_shear", "N"), ("inplane_bending", "Nm"))


def _get(obj, *names, default=KeyError):
    for n in names:
        if isinstance(obj, dict) and n in obj:
            return obj[n]
        if hasattr(obj, n):
            return getattr(obj, n)
    if default is KeyError:
        raise OutputError(f"envelope: missing attribute {names[0]!r}")
    return default


def _cases(c, n):
    if c is None:
        return [""] * n
    if isinstance(c, str):
        return [c] * n
    return [str(x) for x in c]


def table(envelope) -> dict:
    """Plain arrays per quantity q (shear, bending, torsion; inplane_* when given) and side:
    ``q_max``, ``q_min`` (limit), ``q_max_ult``, ``q_min_ult`` (ultimate) and the governing case
    lists ``q_max_case``, ``q_min_case``, ``q_max_ult_case``, ``q_min_ult_case``; ``y``;
    ``quantities``: the (q, unit) pairs present."""
    y = np.asarray(_get(envelope, "y", "y_m"), float)
    out = {"y": y, "quantities": []}
    dicts = isinstance(getattr(envelope, "maximum", None), dict)
    uf = float(_get(envelope, "ultimate_factor", default=1.5) or 1.5)
    for q, u in QUANTITIES + OPTIONAL:
        key = f"{q}_{u}"
        for side, big in (("max", "maximum"), ("min", "minimum")):
            if dicts:
                if key not in envelope.maximum:
                    break
                v = np.asarray(getattr(envelope, big)[key], float)
                c = _cases(getattr(envelope, f"{side}_case", {}).get(key), v.size)
                vu = np.asarray(_get(envelope, f"ultimate_{side}", default={}).get(key, uf * v), float)
                cu = _get(envelope, f"ultimate_{side}_case", default={}).get(key)
                cu = _cases(cu, v.size) if cu is not None else c
            else:
                v = _get(envelope, f"{q}_{side}_{u}", f"{q}_{side}",
                         default=None)
                if v is None:
                    if (q, u) in OPTIONAL:
                        break
                    _get(envelope, f"{q}_{side}_{u}")  # raises naming the attribute
                v = np.asarray(v, float)
                c = _cases(_get(envelope, f"{q}_{side}_case", f"{q}_{side}_cases", default=None), v.size)
                vu, cu = uf * v, c
            out[f"{q}_{side}"], out[f"{q}_{side}_case"] = v, c
            out[f"{q}_{side}_ult"], out[f"{q}_{side}_ult_case"] = vu, cu
        else:
            out["quantities"].append((q, u))
    return out


def critical_table(envelope) -> list:
    """Rows per quantity and side: root value and its case, peak value over the span, where."""
    e = table(envelope)
    rows = []
    for q, u in QUANTITIES:
        for side in ("max", "min"):
            v = e[f"{q}_{side}"]
            k = int(np.argmax(v) if side == "max" else np.argmin(v))
            rows.append({"quantity": f"{q} {side}", "unit": u.replace("Nm", "N m"),
                         "root_limit": float(v[0]), "root_ultimate": float(e[f"{q}_{side}_ult"][0]),
                         "root_case": e[f"{q}_{side}_case"][0], "peak_limit": float(v[k]),
                         "peak_y_m": float(e["y"][k]), "peak_case": e[f"{q}_{side}_case"][k]})
    return rows


def vn_diagrams(vn) -> list:
    """The V-n diagrams as a list (one object or a sequence of them)."""
    if vn is None:
        return []
    if isinstance(vn, (list, tuple)):
        return list(vn)
    return [vn]


def vn_title(d, k=0) -> str:
    """'25 kg, 0 m' for a diagram that knows its mass and altitude, else 'diagram k'."""
    m, h = getattr(d, "mass_kg", None), getattr(d, "altitude_m", None)
    return f"{m:g} kg at {h:g} m" if m is not None and h is not None else f"diagram {k + 1}"


def vn_curves(d) -> dict:
    """name -> (v_eas m/s, n) of one diagram."""
    curves = _get(d, "curves", default={}) or {}
    return {str(k): (np.asarray(v[0], float), np.asarray(v[1], float)) for k, v in dict(curves).items()}


def vn_points(d) -> list:
    """[{'name', 'label', 'v_eas' (m/s), 'n'}] of one diagram (its corner and gust points)."""
    out = []
    for p in _get(d, "corners", "points", default=[]) or []:
        if isinstance(p, (tuple, list)):
            name, v, n = str(p[0]), float(p[1]), float(p[2])
            label = name
        else:
            name = str(_get(p, "name", "label"))
            label = str(_get(p, "label", default="") or name)
            v, n = float(_get(p, "v_eas", "v_eas_m_s", "v")), float(_get(p, "n", "load_factor"))
        out.append({"name": name, "label": label, "v_eas": v, "n": n})
    return out


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
