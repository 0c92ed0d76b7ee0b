"""TEST DATA ONLY: a synthetic but physically plausible RunResult built from analytic formulas.

Nothing here comes from the geomload solvers; it lets the exporters be tested alone. The invented
aircraft is the Quillmoor Aerial Works QM-36 Pellin survey UAV.

- Wing: straight-tapered semi-span with a NACA 2412 section (NACA Report 824 equations),
  linear washout and dihedral; the CAD frame is rotated against the wing frame on purpose.
- Aero: lift slope from Helmbold's equation a = 2 pi A / (2 + sqrt(A^2 + 4)); spanwise cl*c as a
  blend of the planform shape and the ellipse of the same total lift (integrates to CL*S);
  induced drag CL^2/(pi A e); chordwise load sqrt((1 - xi)/xi) (flat-plate thin-airfoil shape).
- Loads: cantilever statics by the trapezoid rule from tip to root (V = int w, M = int V).
- Atmosphere: ISA troposphere T = 288.15 - 0.0065 h, p = 101325 (T/288.15)^5.2559.
"""

from __future__ import annotations


import numpy as np

from geomload.records import (AeroSolution, CaseResult, Lattice, Message, Planform, RunResult, SpanLoads,
                              Stations, WingFrame, WingMesh)

G = 9.80665  # standard gravity (CGPM 1901)
# invented QM-36 Pellin planform and masses (synthetic test values, no source)
SEMISPAN, C_ROOT, C_TIP = 1.8, 0.42, 0.21
SWEEP_LE_DEG, DIHEDRAL_DEG, WASHOUT_DEG = 3.0, 3.0, 2.0
# alpha_L0 of the NACA 2412 mean line by thin-airfoil theory (VALIDATION.md 4); its cm about
# c/4 (thin-airfoil, from memory); span efficiency invented (synthetic)
ALPHA0_DEG, CM_C4, E_SPAN = -2.08, -0.053, 0.97
MASS_KG, WING_MASS_KG = 25.0, 3.0

CASE_TEXT = """# Quillmoor Aerial Works QM-36 Pellin - synthetic test case
[geometry]
file = "pellin_wing.stl"
units = "mm"
[aircraft]
mass_kg = 25.0
"""


def chord(y):
    return C_ROOT + (C_TIP - C_ROOT) * np.asarray(y) / SEMISPAN


def _cumtrapz_from_tip(y, w):
    """integral of w from y to the last station (trapezoid rule)."""
    seg = 0.5 * (w[1:] + w[:-1]) * np.diff(y)
    out = np.zeros_like(w)
    out[:-1] = np.cumsum(seg[::-1])[::-1]
    return out


def naca2412_camber(x):
    m, p = 0.02, 0.4
    return np.where(x < p, m / p**2 * (2 * p * x - x**2), m / (1 - p) ** 2 * ((1 - 2 * p) + 2 * p * x - x**2))


def make_stations(n=12):
    y = SEMISPAN * 0.98 * (1 - np.cos(np.linspace(0, np.pi / 2, n)))
    c = chord(y)
    tw = -WASHOUT_DEG * y / SEMISPAN
    x_le = np.tan(np.radians(SWEEP_LE_DEG)) * y
    z_le = np.tan(np.radians(DIHEDRAL_DEG)) * y
    x_te = x_le + c * np.cos(np.radians(tw))
    z_te = z_le - c * np.sin(np.radians(tw))
    cx = np.linspace(0, 1, 21)
    cz = np.tile(naca2412_camber(cx), (n, 1))
    f = np.full(n, 1.0)
    return Stations(y=y, x_le=x_le, z_le=z_le, x_te=x_te, z_te=z_te, chord=c, twist_deg=tw,
                    thickness_ratio=0.12 * f, x_thickness=0.30 * f, camber_ratio=0.02 * f,
                    x_camber=0.4 * f, dihedral_deg=DIHEDRAL_DEG * f, camber_x=cx, camber_z=cz,
                    semispan=SEMISPAN, notes=("synthetic test stations",))


def make_planform():
    lam = C_TIP / C_ROOT
    s = SEMISPAN
    area = s * (C_ROOT + C_TIP)
    mac = 2 / 3 * C_ROOT * (1 + lam + lam**2) / (1 + lam)
    y_mac = s / 3 * (1 + 2 * lam) / (1 + lam)
    tl = np.tan(np.radians(SWEEP_LE_DEG))
    sweep_qc = np.degrees(np.arctan(tl + 0.25 * (C_TIP - C_ROOT) / s))
    return Planform(area=area, span=2 * s, aspect_ratio=(2 * s) ** 2 / area, taper=lam,
                    root_chord=C_ROOT, tip_chord=C_TIP, mac=mac, x_mac_le=tl * y_mac, y_mac=y_mac,
                    sweep_le_deg=SWEEP_LE_DEG, sweep_qc_deg=float(sweep_qc),
                    dihedral_deg=DIHEDRAL_DEG, washout_deg=WASHOUT_DEG)


def make_frame():
    # CAD: x aft, z along the span, y down  ->  wing rows (x, y, z) in CAD coordinates.
    rot = np.array([[1.0, 0, 0], [0, 0, 1.0], [0, -1.0, 0]])
    return WingFrame(rotation=rot, origin=np.array([0.1, 0.0, 0.05]), full_span=False,
                     span_axis="+Z", up_axis="-Y", notes=("synthetic frame",))


def make_mesh(frame, n_sec=10, n_pts=12):
    """NACA 2412 lofted surface (no tip cap), triangles in the CAD frame."""
    th = np.linspace(0, np.pi, n_pts)
    xc = 0.5 * (1 - np.cos(th))
    yt = 5 * 0.12 * (0.2969 * np.sqrt(xc) - 0.1260 * xc - 0.3516 * xc**2 + 0.2843 * xc**3 - 0.1036 * xc**4)
    zc = naca2412_camber(xc)
    loop_x = np.concatenate([xc[::-1], xc[1:]])
    loop_z = np.concatenate([(zc + yt)[::-1], (zc - yt)[1:]])
    rings = []
    for y in np.linspace(0, SEMISPAN, n_sec):
        c, tw = chord(y), np.radians(-WASHOUT_DEG * y / SEMISPAN)
        x0, z0 = np.tan(np.radians(SWEEP_LE_DEG)) * y, np.tan(np.radians(DIHEDRAL_DEG)) * y
        px = x0 + c * (loop_x * np.cos(tw) + loop_z * np.sin(tw))
        pz = z0 + c * (loop_z * np.cos(tw) - loop_x * np.sin(tw))
        rings.append(np.column_stack([px, np.full_like(px, y), pz]))
    tris = []
    for a, b in zip(rings[:-1], rings[1:]):
        for k in range(len(a) - 1):
            tris.append([a[k], b[k], b[k + 1]])
            tris.append([a[k], b[k + 1], a[k + 1]])
    tris = np.array(tris)
    cad = frame.to_cad(tris.reshape(-1, 3)).reshape(tris.shape)
    return WingMesh(triangles=cad, source="/nonexistent/pellin_wing.stl", units="mm",
                    notes=("synthetic test mesh",))


def make_lattice(planform, ns=8, nc=4):
    ye = np.linspace(0, SEMISPAN, ns + 1)
    xi = np.linspace(0, 1, nc + 1)
    x_le = np.tan(np.radians(SWEEP_LE_DEG)) * ye
    z = np.tan(np.radians(DIHEDRAL_DEG)) * ye
    corners = np.zeros((ns + 1, nc + 1, 3))
    corners[..., 0] = x_le[:, None] + chord(ye)[:, None] * xi[None, :]
    corners[..., 1] = ye[:, None]
    corners[..., 2] = z[:, None]
    p00, p10 = corners[:-1, :-1], corners[1:, :-1]
    p01, p11 = corners[:-1, 1:], corners[1:, 1:]
    ba = (p00 + 0.25 * (p01 - p00)).reshape(-1, 3)
    bb = (p10 + 0.25 * (p11 - p10)).reshape(-1, 3)
    mid0, mid1 = 0.5 * (p00 + p10), 0.5 * (p01 + p11)
    colloc = (mid0 + 0.75 * (mid1 - mid0)).reshape(-1, 3)
    d1, d2 = p11 - p00, p10 - p01
    nrm = np.cross(d1, d2)
    area = 0.5 * np.linalg.norm(nrm, axis=-1).reshape(-1)
    nrm = (nrm / np.linalg.norm(nrm, axis=-1, keepdims=True)).reshape(-1, 3)
    nrm *= np.sign(nrm[:, 2:3])
    sy = 0.5 * (ye[1:] + ye[:-1])
    return Lattice(corners=corners, bound_a=ba, bound_b=bb, colloc=colloc, normal=nrm, area=area,
                   n_span=ns, n_chord=nc, mirrored=True, strip_y=sy, strip_chord=chord(sy),
                   strip_width=np.diff(ye), s_ref=planform.area, c_ref=planform.mac,
                   b_ref=planform.span, x_ref=np.array([planform.x_mac_qc, 0.0, 0.0]))


def cl_c_shape(y, planform):
    """cl*c / CL (m): 0.3 planform + 0.7 ellipse, each integrating to S over both sides."""
    ell = 4 * planform.area / (np.pi * planform.span) * np.sqrt(np.clip(1 - (y / SEMISPAN) ** 2, 0, 1))
    return 0.3 * chord(y) + 0.7 * ell


def lift_slope(planform):
    A = planform.aspect_ratio
    return 2 * np.pi * A / (2 + np.sqrt(A**2 + 4))  # Helmbold


def make_aero(alpha_deg, lattice, planform):
    a = lift_slope(planform)
    CL = a * np.radians(alpha_deg - ALPHA0_DEG)
    y, c = lattice.strip_y, lattice.strip_chord
    cl_c = CL * cl_c_shape(y, planform)
    cl = cl_c / c
    A = planform.aspect_ratio
    CDi = CL**2 / (np.pi * A * E_SPAN)
    cdi = cl * CL / (np.pi * A * E_SPAN)
    nc = lattice.n_chord
    xi = (np.arange(nc) + 0.5) / nc
    wgt = np.sqrt((1 - xi) / xi)
    wgt /= wgt.sum()
    gamma = (0.5 * cl_c[:, None] * wgt[None, :]).reshape(-1)
    dx = np.diff(lattice.corners[:, :, 0], axis=1)
    dx = 0.5 * (dx[1:] + dx[:-1]).reshape(-1)
    dcp = 2 * gamma / dx
    cl_safe = np.where(np.abs(cl) > 1e-9, cl, 1e-9)
    x_le = np.tan(np.radians(SWEEP_LE_DEG)) * y
    return AeroSolution(alpha_deg=float(alpha_deg), mach=0.08, gamma=gamma, y=y, chord=c, cl=cl,
                        cl_c=cl_c, cm_c4=np.full_like(y, CM_C4), cdi=cdi, lift_per_q=cl_c,
                        drag_per_q=cdi * c, moment_per_q=CM_C4 * c**2,
                        x_cp=x_le + c * (0.25 - CM_C4 / cl_safe), dcp=dcp, CL=float(CL),
                        CDi=float(CDi), e=E_SPAN, Cm=-0.02, CL_alpha_per_rad=float(a),
                        alpha_zero_lift_deg=ALPHA0_DEG, x_ac_m=planform.x_mac_qc)


def isa_rho(h):
    """ISA troposphere density (kg/m^3), R = 287.053 J/(kg K) (U.S. Standard Atmosphere 1976)."""
    T = 288.15 - 0.0065 * h
    return 101325 * (T / 288.15) ** 5.2559 / (287.053 * T)


def make_case(name, v_eas, n, stations, lattice, planform, altitude=1000.0):
    q = 0.5 * 1.225 * v_eas**2
    v_tas = v_eas * np.sqrt(1.225 / isa_rho(altitude))
    CL = n * MASS_KG * G / (q * planform.area)
    alpha = ALPHA0_DEG + np.degrees(CL / lift_slope(planform))
    aero = make_aero(alpha, lattice, planform)
    y, c = stations.y, stations.chord
    lift = q * CL * cl_c_shape(y, planform)
    ell = 4 * planform.area / (np.pi * planform.span) * np.sqrt(np.clip(1 - (y / SEMISPAN) ** 2, 0, 1))
    schrenk = q * CL * 0.5 * (c + ell)
    drag = lift * CL / (np.pi * planform.aspect_ratio * E_SPAN)
    pitch = q * CM_C4 * c**2
    inertia = n * G * (WING_MASS_KG / 2) * c / (planform.area / 2)
    shear = _cumtrapz_from_tip(y, lift - inertia)
    bend = _cumtrapz_from_tip(y, shear)
    tors = _cumtrapz_from_tip(y, pitch)
    ips = _cumtrapz_from_tip(y, drag)
    loads = SpanLoads(case=name, y=y, lift_N_per_m=lift, drag_N_per_m=drag, pitch_Nm_per_m=pitch,
                      inertia_N_per_m=inertia, shear_N=shear, bending_Nm=bend, torsion_Nm=tors,
                      inplane_shear_N=ips, inplane_bending_Nm=_cumtrapz_from_tip(y, ips),
                      schrenk_lift_N_per_m=schrenk, ultimate_factor=1.5,
                      spar_points_m=np.column_stack([stations.x_qc, y, stations.z_qc]))
    total = np.sum(0.5 * ((lift - inertia)[1:] + (lift - inertia)[:-1]) * np.diff(y))
    resid = abs(shear[0] - total) / max(abs(total), 1e-12)
    warn = "required CL beyond the stall estimate" if CL > 1.4 else ""
    return CaseResult(name=name, v_eas=v_eas, v_tas=float(v_tas), altitude_m=altitude,
                      mach=float(v_tas / 336.4),  # 336.4 m/s: ISA a at 1000 m, from memory
                      q_pa=q, load_factor=n, mass_kg=MASS_KG,
                      lift_share=1.0, aero=aero, loads=loads, stall_warning=warn,
                      residual=float(resid))


def make_envelope(cases):
    """The loads stage's Envelope of the cases (geomload.loads.envelope.envelope_of)."""
    from geomload.loads.envelope import envelope_of

    return envelope_of([c.loads for c in cases])


def make_vn(planform):
    """Two V-n diagrams (design and a lighter mass) of the loads stage (14 CFR 23 normal)."""
    from geomload.case import EnvelopeSpec
    from geomload.loads.envelope import vn_diagram

    spec = EnvelopeSpec("normal", cl_max_pos=1.4, cl_max_neg=0.8)
    return [vn_diagram(spec, MASS_KG, planform.area, planform.area / planform.span,
                       lift_slope(planform), mass_kg=m) for m in (MASS_KG, 18.0)]


def make_run(case_names=("cruise 1g", "pull-up +3.8g", "push -1.5g"), n_stations=12):
    """The whole synthetic RunResult; case_names may include hostile strings."""
    frame = make_frame()
    st = make_stations(n_stations)
    pf = make_planform()
    lat = make_lattice(pf)
    mesh = make_mesh(frame)
    specs = [(30.0, 1.0), (32.0, 3.8), (26.0, -1.5), (40.0, 2.5), (45.0, 1.2)]
    cases = [make_case(nm, v, n, st, lat, pf) for nm, (v, n) in zip(case_names, specs * 10)]
    sweep = [(a, make_aero(a, lat, pf).CL) for a in np.linspace(-4, 12, 9)]
    from geomload.config.schema import (AircraftSpec, Case, GeometrySpec, LatticeSpec,
                                        SparSpec)

    case = Case(path="/nonexistent/pellin_case.toml", title="QM-36 Pellin test",
                geometry=GeometrySpec(file=mesh.source, units="mm", n_stations=n_stations),
                aircraft=AircraftSpec(MASS_KG), wing_mass=None, point_masses=(), fuel_tanks=(),
                spar=SparSpec(0.25), moment_reference=None, load_cases=(), envelope=None,
                lattice=LatticeSpec())
    return RunResult(case_path="/nonexistent/pellin_case.toml", case_text=CASE_TEXT, case=case,
                     mesh=mesh, frame=frame, stations=st, planform=pf, lattice=lat, cases=cases,
                     envelope=make_envelope(cases), vn=make_vn(pf), alpha_sweep=sweep,
                     messages=(Message("warning", "synthetic data: not a real analysis"),),
                     timings={"geometry": 0.12, "aero": 0.30, "loads": 0.05},
                     versions={"geomload": "0.1.0", "numpy": np.__version__})
