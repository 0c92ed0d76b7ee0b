"""A spar-sizing starting point from the ultimate loads: cap area, web and skin thickness.

A STARTING POINT for the structural analyst, not a design: a two-cap spar with a shear web and
a single-cell torsion box, each sized on its own at every station for the case that governs it.
Per station (ultimate = ultimate factor x limit, absolute values):

- cap area (each cap)   A_cap = M_ult / (h_eff sigma_allow),  h_eff = depth_factor x h
  (simple beam theory: the bending moment as a couple of cap forces; h = the wing's depth at
  the spar; h_eff the distance between cap centroids),
- web thickness         t_web = V_ult / (h tau_allow)  (mean shear stress over the web),
- skin thickness        t_skin = q / tau_allow,  q = T_ult / (2 A_box)  (Bredt-Batho,
  thin-walled closed section: constant shear flow q), A_box the area enclosed between the front
  and rear spar chord fractions, taken as the trapezoid 0.5 (h_front + h_rear) x box width.

The allowables are a small table of common materials whose values are recalled "from memory"
(check them against your own allowables data) or a value the user gives.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from geomload import CAUTION
from geomload.errors import InputError
from geomload.export.atomic import atomic_path, write_text_atomic
from geomload.geometry.airfoil import naca4_thickness
from geomload.loads.envelope import governing_rows

DEPTH_FACTOR = 0.9  # h_eff / h: cap centroids inside the outer mould line (common practice,
                    # no source; the user can change it)
STARTING_POINT = ("spar-sizing STARTING POINT from ultimate loads (simple beam theory for the "
                  "caps, mean web shear, Bredt-Batho for the skins); not a design: stability "
                  "(buckling), joints, fatigue, cut-outs and the actual section are not checked")


from geomload.materials import MATERIALS, Material  # noqa: E402,F401  (re-exported)


def material(name: str | None = None, sigma_allow_Pa: float | None = None,
             tau_allow_Pa: float | None = None, key: str = "sizing") -> Material:
    """A table material by name, or a user material from both allowables (Pa)."""
    if sigma_allow_Pa is not None or tau_allow_Pa is not None:
        vals = (sigma_allow_Pa, tau_allow_Pa)
        if any(v is None or not np.isfinite(v) or v <= 0 for v in vals):
            raise InputError(f"{key}: give both allowables > 0 (sigma and tau), got {vals}")
        return Material(name or "user", float(sigma_allow_Pa), float(tau_allow_Pa),
                        "user value")
    if name is None or str(name).lower() not in MATERIALS:
        raise InputError(f"{key}.material {name!r} not one of {', '.join(MATERIALS)} "
                         "(or give sigma and tau allowables)")
    return MATERIALS[str(name).lower()]


def depth_from_thickness_shape(chord, thickness_ratio, fraction):
    """Wing depth (m) at a chord fraction, from the NACA 4-digit thickness shape (NACA Report
    824) scaled to each station's t/c: an estimate when the section's own shape is not at hand.
    chord, thickness_ratio : (n,) arrays; fraction : chord fraction 0..1."""
    f = float(fraction)
    if not 0.0 < f < 1.0:
        raise InputError(f"sizing: chord fraction {fraction!r} must lie strictly between 0 and 1")
    tc = np.asarray(thickness_ratio, float)
    return 2.0 * np.asarray(chord, float) * naca4_thickness(np.array(f), 1.0) * tc


@dataclass(frozen=True)
class Sizing:
    """The sizing table: station arrays (n,) and the governing case name per quantity."""

    y_m: np.ndarray
    chord_m: np.ndarray
    spar_depth_m: np.ndarray
    box_width_m: np.ndarray
    box_area_m2: np.ndarray
    bending_ult_Nm: np.ndarray
    shear_ult_N: np.ndarray
    torsion_ult_Nm: np.ndarray
    cap_area_m2: np.ndarray
    web_thickness_m: np.ndarray
    skin_thickness_m: np.ndarray
    case_bending: tuple
    case_shear: tuple
    case_torsion: tuple
    material: Material
    depth_factor: float
    warnings: tuple = field(default_factory=tuple)


def size_spar(y, chord, spar_depth_m, front_depth_m, rear_depth_m, front_fraction,
              rear_fraction, loads_list, mat: Material, depth_factor: float = DEPTH_FACTOR,
              warnings=()) -> Sizing:
    """Size caps, web and skins at the stations y (m) of the geometry arrays.

    y, chord, spar_depth_m, front_depth_m, rear_depth_m : (n,) per station (m), y increasing;
    front_fraction, rear_fraction : the torsion box between these chord fractions;
    loads_list : SpanLoads of every case (limit; their own stations, interpolated onto y);
    mat : Material; depth_factor : h_eff / h.
    """
    y = np.asarray(y, float)
    arr = {k: np.asarray(v, float) for k, v in (("chord", chord), ("spar depth", spar_depth_m),
                                                ("front depth", front_depth_m),
                                                ("rear depth", rear_depth_m))}
    for k, v in arr.items():
        if v.shape != y.shape or not np.all(np.isfinite(v)) or np.any(v <= 0):
            raise InputError(f"sizing: {k} must be {y.size} positive values")
    if not 0 < front_fraction < rear_fraction < 1:
        raise InputError(f"sizing: spar chord fractions must satisfy 0 < front < rear < 1, got "
                         f"{front_fraction}, {rear_fraction}")
    if not 0 < depth_factor <= 1:
        raise InputError(f"sizing: depth factor must lie in (0, 1], got {depth_factor}")
    if not loads_list:
        raise InputError("sizing: no load case")
    h = arr["spar depth"]
    width = (rear_fraction - front_fraction) * arr["chord"]
    area = 0.5 * (arr["front depth"] + arr["rear depth"]) * width
    names = [str(L.case) for L in loads_list]

    def ult(L, col):
        return np.abs(np.interp(y, L.y, float(L.ultimate_factor) * getattr(L, col)))

    out = {}
    for col in ("bending_Nm", "shear_N", "torsion_Nm"):
        table = np.array([ult(L, col) for L in loads_list])
        k = governing_rows(table)  # ties to round-off: the first case (loads.envelope)
        out[col] = (table.max(axis=0), tuple(names[i] for i in k))
    M, V, T = out["bending_Nm"][0], out["shear_N"][0], out["torsion_Nm"][0]
    return Sizing(y_m=y, chord_m=arr["chord"], spar_depth_m=h, box_width_m=width,
                  box_area_m2=area, bending_ult_Nm=M, shear_ult_N=V, torsion_ult_Nm=T,
                  cap_area_m2=M / (depth_factor * h * mat.sigma_allow_Pa),
                  web_thickness_m=V / (h * mat.tau_allow_Pa),
                  skin_thickness_m=T / (2.0 * area) / mat.tau_allow_Pa,
                  case_bending=out["bending_Nm"][1], case_shear=out["shear_N"][1],
                  case_torsion=out["torsion_Nm"][1], material=mat,
                  depth_factor=float(depth_factor), warnings=tuple(warnings))


def sizing_csv(s: Sizing) -> str:
    """The sizing table as CSV text (caution and starting-point lines first)."""
    clean = lambda t: str(t).replace(",", ";").replace("#", "_")  # noqa: E731
    head = [CAUTION, STARTING_POINT,
            f"material {s.material.name}: sigma_allow {s.material.sigma_allow_Pa / 1e6:g} MPa, "
            f"tau_allow {s.material.tau_allow_Pa / 1e6:g} MPa ({s.material.source})",
            f"h_eff = {s.depth_factor:g} x spar depth; ultimate loads (limit x ultimate factor)",
            *(f"warning: {w}" for w in s.warnings)]
    cols = ["y_m", "chord_m", "spar_depth_m", "box_width_m", "box_area_m2", "bending_ult_Nm",
            "case_bending", "cap_area_mm2", "shear_ult_N", "case_shear", "web_thickness_mm",
            "torsion_ult_Nm", "case_torsion", "skin_thickness_mm"]
    lines = [f"# {' '.join(str(h).split())}" for h in head] + [",".join(cols)]
    g = lambda v: f"{float(v):.8g}"  # noqa: E731
    for i in range(s.y_m.size):
        lines.append(",".join([
            g(s.y_m[i]), g(s.chord_m[i]), g(s.spar_depth_m[i]), g(s.box_width_m[i]),
            g(s.box_area_m2[i]), g(s.bending_ult_Nm[i]), clean(s.case_bending[i]),
            g(s.cap_area_m2[i] * 1e6), g(s.shear_ult_N[i]), clean(s.case_shear[i]),
            g(s.web_thickness_m[i] * 1e3), g(s.torsion_ult_Nm[i]), clean(s.case_torsion[i]),
            g(s.skin_thickness_m[i] * 1e3)]))
    return "\n".join(lines) + "\n"


def write_sizing(folder, s: Sizing, inputs=(), plot: bool = True) -> list:
    """Write sizing.csv (and sizing.png when plot) into folder; returns the paths."""
    f = Path(folder)
    paths = [write_text_atomic(f / "sizing.csv", sizing_csv(s), inputs)]
    if plot:
        from matplotlib.figure import Figure

        from geomload.export.plots import PNG_COMPRESS_LEVEL

        fig = Figure(figsize=(7.5, 7.5))
        axes = fig.subplots(3, 1, sharex=True)
        for ax, (v, lab) in zip(axes, ((s.cap_area_m2 * 1e6, "cap area (mm²), each cap"),
                                       (s.web_thickness_m * 1e3, "web thickness (mm)"),
                                       (s.skin_thickness_m * 1e3, "skin thickness (mm)"))):
            ax.plot(s.y_m, v, "-o", ms=3)
            ax.set_ylabel(lab, fontsize=8)
            ax.grid(alpha=0.3)
        axes[-1].set_xlabel("y (m)")
        fig.suptitle(f"Spar-sizing starting point, {s.material.name} (ultimate loads)\n"
                     "CAUTION: preliminary estimate, not a design; see sizing.csv", fontsize=9)
        with atomic_path(f / "sizing.png", inputs) as tmp:
            fig.savefig(tmp, dpi=110, format="png",
                        pil_kwargs={"compress_level": PNG_COMPRESS_LEVEL})
        paths.append(f / "sizing.png")
    return paths


def size_from_run(run, front_fraction: float = 0.15, rear_fraction: float = 0.65,
                  spar_fraction: float | None = None, mat: Material | None = None,
                  depth_factor: float = DEPTH_FACTOR) -> Sizing:
    """Sizing from a RunResult: geometry stations (depths from the thickness shape, see
    depth_from_thickness_shape, stated as a warning) and every case's loads."""
    st = run.stations
    spar = spar_fraction
    if spar is None:
        spar = getattr(getattr(run.case, "spar", None), "chord_fraction", None) or 0.25
    mat = mat or MATERIALS["al-2024-t3"]
    # rows at the loads' reported stations (the rib stations when given; both sides of
    # point-load steps), geometry interpolated
    first = run.cases[0].loads
    y = np.unique(np.asarray(first.y, float)[first.rows])
    chord = np.interp(y, st.y, st.chord)
    tc = np.interp(y, st.y, st.thickness_ratio)
    d = lambda f: depth_from_thickness_shape(chord, tc, f)  # noqa: E731
    note = ("depths: NACA 4-digit thickness shape scaled to each station's measured t/c (the "
            "section's own shape is not stored): replace with measured depths when known")
    return size_spar(y, chord, d(spar), d(front_fraction), d(rear_fraction), front_fraction,
                     rear_fraction, [c.loads for c in run.cases], mat, depth_factor, (note,))
