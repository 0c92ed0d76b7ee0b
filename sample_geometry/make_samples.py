"""Build the sample wings of the Quillmoor Aerial Works QM-36 Pellin survey UAV (invented).

The design: 3.6 m span, straight taper 0.36 m -> 0.18 m, NACA 2412 at the root blending
linearly to NACA 2410 at the tip (camber 2 % at 40 % chord kept), 3 deg linear washout (twist
about the local leading edge), 3 deg dihedral and 4 deg sweep of the leading-edge line. Sections
are the NACA 4-digit equations (NACA Report 824) laid in planes parallel to the symmetry plane.

Writes, beside this script:
- pellin_half_wing_mm.stl   starboard half, binary STL in millimetres, root and tip caps;
- pellin_full_wing_yup.obj  full span, metres, Y-up CAD frame (span along CAD Z, chord along
                            CAD X, up along CAD Y, starboard = CAD -Z);
- pellin_half_wing.step     the half wing as a B-rep loft through spline sections, in mm
                            (needs the dev-only CAD kernel: pip install cadquery-ocp);
- pellin_design.json        the exact design, per station and as planform figures.

Run: python sample_geometry/make_samples.py
"""

from __future__ import annotations

import json
import os
import sys

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.dirname(HERE))

from geomload.geometry.airfoil import farthest_point_chord, loft_wing, naca4_surface  # noqa: E402

NAME = "Quillmoor Aerial Works QM-36 Pellin"
SEMISPAN, C_ROOT, TAPER = 1.8, 0.36, 0.5
SWEEP_LE, DIHEDRAL, WASHOUT = 4.0, 3.0, 3.0
T_ROOT, T_TIP, CODE = 0.12, 0.10, "2412"
N_CHORD, N_SPAN = 100, 60


def chord(y):
    return C_ROOT * (1 - (1 - TAPER) * np.abs(y) / SEMISPAN)


def x_le(y):
    return np.abs(y) * np.tan(np.radians(SWEEP_LE))


def z_le(y):
    return np.abs(y) * np.tan(np.radians(DIHEDRAL))


def twist(y):
    return -WASHOUT * np.abs(y) / SEMISPAN


def thickness(y):
    return T_ROOT + (T_TIP - T_ROOT) * np.abs(y) / SEMISPAN


def span_stations(n=N_SPAN):
    return SEMISPAN * np.sin(np.linspace(0.0, np.pi / 2, n))  # denser towards the tip


def half_wing(n_chord=N_CHORD, n_span=N_SPAN):
    y = span_stations(n_span)
    return loft_wing(y, chord(y), x_le(y), z_le(y), twist(y), thickness(y), CODE, n_chord, True)


def full_wing(n_chord=80, n_span=N_SPAN):
    y = span_stations(n_span)
    y = np.concatenate([-y[:0:-1], y])
    return loft_wing(y, chord(y), x_le(y), z_le(y), twist(y), thickness(y), CODE, n_chord, True)


def write_binary_stl(path, tris):
    rec = np.zeros(tris.shape[0], dtype=[("n", "<f4", (3,)), ("v", "<f4", (3, 3)), ("attr", "<u2")])
    n = np.cross(tris[:, 1] - tris[:, 0], tris[:, 2] - tris[:, 0])
    n /= np.maximum(np.linalg.norm(n, axis=1), 1e-300)[:, None]
    rec["n"], rec["v"] = n, tris
    with open(path, "wb") as f:
        f.write(f"{NAME} starboard wing, mm".encode().ljust(80, b" ")[:80])
        f.write(np.uint32(tris.shape[0]).tobytes())
        rec.tofile(f)


def write_obj(path, tris):
    """OBJ with welded vertices (exact duplicates merged)."""
    v, inv = np.unique(tris.reshape(-1, 3), axis=0, return_inverse=True)
    faces = inv.reshape(-1, 3) + 1
    with open(path, "w") as f:
        f.write(f"# {NAME} full wing, metres, Y-up (span along Z, chord along X)\no pellin_wing\n")
        np.savetxt(f, v, fmt="v %.6f %.6f %.6f")
        np.savetxt(f, faces, fmt="f %d %d %d")


def write_step(path, n_sections=7, n_chord=60):
    """Half wing as a loft through B-spline sections, written in millimetres."""
    from OCP.BRepBuilderAPI import (BRepBuilderAPI_MakeEdge, BRepBuilderAPI_MakeFace, BRepBuilderAPI_MakeSolid,
                                    BRepBuilderAPI_MakeWire, BRepBuilderAPI_Sewing)
    from OCP.TopoDS import TopoDS
    from OCP.BRepOffsetAPI import BRepOffsetAPI_ThruSections
    from OCP.GeomAPI import GeomAPI_PointsToBSpline
    from OCP.gp import gp_Pnt
    from OCP.IFSelect import IFSelect_RetDone
    from OCP.Interface import Interface_Static
    from OCP.STEPControl import STEPControl_AsIs, STEPControl_Writer
    from OCP.collections import Array1_gp_Pnt
    from OCP.GeomAbs import GeomAbs_C2

    loft = BRepOffsetAPI_ThruSections(False, True, 1e-6)  # skin, ruled between sections
    wires = []
    for y in np.linspace(0.0, SEMISPAN, n_sections):
        c2 = naca4_surface(CODE, n_chord, True, float(thickness(y)))
        a = np.radians(twist(y))
        xs = x_le(y) + chord(y) * (c2[:, 0] * np.cos(a) + c2[:, 1] * np.sin(a))
        zs = z_le(y) - chord(y) * (c2[:, 0] * np.sin(a) - c2[:, 1] * np.cos(a))
        pts = np.column_stack([xs, np.full(xs.size, y), zs]) * 1000.0  # mm
        arr = Array1_gp_Pnt(1, pts.shape[0])
        for i, p in enumerate(pts):
            arr.SetValue(i + 1, gp_Pnt(*map(float, p)))
        curve = GeomAPI_PointsToBSpline(arr, 3, 8, GeomAbs_C2, 1e-4).Curve()  # tol 0.1 um (mm units)
        wire = BRepBuilderAPI_MakeWire(BRepBuilderAPI_MakeEdge(curve).Edge(),
                                       BRepBuilderAPI_MakeEdge(gp_Pnt(*map(float, pts[-1])),
                                                               gp_Pnt(*map(float, pts[0]))).Edge()).Wire()
        loft.AddWire(wire)
        wires.append(wire)
    loft.Build()
    sew = BRepBuilderAPI_Sewing(1e-3)  # mm
    sew.Add(loft.Shape())
    for wire in (wires[0], wires[-1]):  # flat root and tip caps
        sew.Add(BRepBuilderAPI_MakeFace(wire, True).Face())
    sew.Perform()
    solid = BRepBuilderAPI_MakeSolid(TopoDS.Shell(sew.SewedShape())).Solid()
    Interface_Static.SetCVal_s("write.step.unit", "MM")
    Interface_Static.SetCVal_s("write.step.schema", "AP214")
    w = STEPControl_Writer()
    w.Transfer(solid, STEPControl_AsIs)
    if w.Write(path) != IFSelect_RetDone:
        raise RuntimeError(f"writing {path} failed")


def design_json():
    y = span_stations(21)
    st = []
    for yi in y:
        le, cl, ang = farthest_point_chord(CODE, True, float(thickness(yi)))
        st.append(dict(y_m=yi, chord_m=chord(yi), x_le_m=x_le(yi), z_le_m=z_le(yi), twist_deg=twist(yi),
                       thickness_ratio=thickness(yi), camber_ratio=0.02, x_camber=0.4,
                       farthest_point_le_offset_per_chord=[float(le[0]), float(le[1])],
                       farthest_point_chord_factor=cl, farthest_point_twist_offset_deg=ang))
    ct = C_ROOT * TAPER
    area = SEMISPAN * (C_ROOT + ct)
    # straight-tapered wing formulas (e.g. Raymer, Aircraft Design, ch. 4)
    mac = 2.0 / 3.0 * C_ROOT * (1 + TAPER + TAPER**2) / (1 + TAPER)
    y_mac = SEMISPAN / 3.0 * (1 + 2 * TAPER) / (1 + TAPER)
    ar = (2 * SEMISPAN) ** 2 / area
    sweep_qc = np.degrees(np.arctan(np.tan(np.radians(SWEEP_LE)) - (1 - TAPER) / (ar * (1 + TAPER))))
    return dict(
        aircraft=NAME, note="invented aircraft; sections NACA 4-digit (NACA Report 824)",
        frame="design frame: x aft, y starboard, z up, origin at the nominal root LE; twist about the local LE",
        semispan_m=SEMISPAN, span_m=2 * SEMISPAN, root_chord_m=C_ROOT, tip_chord_m=ct, taper=TAPER,
        area_m2=area, aspect_ratio=ar, mac_m=mac, y_mac_m=y_mac,
        x_mac_le_m=y_mac * np.tan(np.radians(SWEEP_LE)), sweep_le_deg=SWEEP_LE,
        sweep_qc_deg_untwisted=float(sweep_qc), dihedral_le_deg=DIHEDRAL, washout_deg=WASHOUT,
        root_section="NACA 2412", tip_section="NACA 2410", blunt_te=True, stations=st,
        files={"pellin_half_wing_mm.stl": "starboard half, binary STL, mm, design frame",
               "pellin_full_wing_yup.obj": "full span, m; CAD (X, Y, Z) = (x, z, -y) of the design frame",
               "pellin_half_wing.step": "starboard half, B-rep loft through 7 spline sections, mm"})


def main():
    half = half_wing()
    write_binary_stl(os.path.join(HERE, "pellin_half_wing_mm.stl"), half * 1000.0)
    full = full_wing()
    cad = np.stack([full[..., 0], full[..., 2], -full[..., 1]], -1)  # Y-up: CAD = (x, z, -y)
    write_obj(os.path.join(HERE, "pellin_full_wing_yup.obj"), cad)
    with open(os.path.join(HERE, "pellin_design.json"), "w") as f:
        json.dump(design_json(), f, indent=1, default=float)
    try:
        write_step(os.path.join(HERE, "pellin_half_wing.step"))
    except ImportError:
        print("cadquery-ocp not installed: STEP sample not rewritten")
    for name in sorted(os.listdir(HERE)):
        if name.startswith("pellin_"):
            print(f"{name:28s} {os.path.getsize(os.path.join(HERE, name)) / 1e6:6.2f} MB")


if __name__ == "__main__":
    main()
