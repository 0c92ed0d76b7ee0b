"""Beam load decks of the spar for a general FE solver (CalculiX's open input syntax).

Model: one node per load station on the spar line, two-node beam elements (B31) between them,
the root held, and per node a force and a moment (DOF 1-6, *CLOAD) statically equivalent to the
case's distributed and point loads.

Lumping (exact statics, node by node). Station i carries the spar point P_i; geomload's
resultant of everything outboard of station i about P_i is (F_i, M_i) (loads/beam.py; a point
load at exactly y_i counts as outboard of y_i). Node i receives the integral of every load in
[y_i, y_{i+1}) -- the element outboard of it and the point loads in it -- and that load's moment
about P_i:

    f_i = F_i - F_{i+1},   m_i = M_i - M_{i+1} - (P_{i+1} - P_i) x F_{i+1},   F_n = M_n = 0.

Then the internal loads just inboard of node i, sum_{k>=i} f_k and
sum_{k>=i} [m_k + (P_k - P_i) x f_k], equal F_i and M_i exactly at every node (not only at the
root), and the root reaction is -(F_0, M_0). Because a cantilever is statically determinate the
reactions and the internal forces do not depend on the section or the material: the deck's
section and material are nominal, stated as such, and only displacements depend on them.

Root support. The solver prints reaction forces (not moments) at held nodes, and leaves out of
them a load applied at a held node, so the root node stays free and is clamped through three
short arms (along the two CAD axes most normal to the spar) to held nodes: C (behind the root,
along axis a) in x, y, z; A (ahead along a) in the two DOFs normal to a; B (along b) in the DOF
along the spar. These six supports are statically determinate, so the root reaction force is
the sum of their RF and the root moment sum (r - r_root) x RF -- exactly a clamp's reaction,
whatever the arms' stiffness.

Nodal moments. The solver does not carry a moment applied at a node of a beam that is not
parallel to a global axis correctly (a swept spar), so the deck applies every nodal moment as
force couples on two short lever arms from the node (along CAD axes a and b): force g at the
lever's end and -g at the node, d e x g = the moment's share. Forces reach the support exactly.
The nodal-loads CSV carries the plain force and moment per node (DOF 1-6).

Frames and units: the deck and the nodal-loads CSV are in the CAD frame and the CAD unit the
user chose (the stored WingFrame transform applied back); forces in N, moments in N*unit.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from geomload import CAUTION
from geomload.errors import InputError

# Nominal beam section and material: they change displacements only, never the reactions or
# internal forces of this statically determinate model (stated in the deck).
NOMINAL_SECTION_M = (0.05, 0.02)   # rectangle width x height (m), nominal
NOMINAL_E_PA = 70.0e9              # aluminium-like Young's modulus (Pa), nominal, from memory
NOMINAL_NU = 0.33                  # Poisson's ratio, nominal, from memory
SUPPORT_ARM_FRACTION = 0.05        # support arm length / spar length (any positive value works)
SAME_NODE_M = 1e-9                 # floor of the span used for merging (m)
MERGE_FRACTION = 1e-3              # stations closer than this x span share one node: the
                                   # solver's expanded beam elements fail at extreme aspect
                                   # ratios (a 2 um element beside a 20 mm section)


@dataclass(frozen=True)
class NodalLoads:
    """Statically equivalent nodal loads of one case on the spar line (wing frame, SI).

    case; y_m (n,); points_m (n, 3) spar points; force_N (n, 3); moment_Nm (n, 3) about the
    node; axis_s, axis_b, axis_n (n, 3) local spar frame at the nodes (loads/beam.py);
    station_index (n,) the SpanLoads row of each node.
    """

    case: str
    y_m: np.ndarray
    points_m: np.ndarray
    force_N: np.ndarray
    moment_Nm: np.ndarray
    axis_s: np.ndarray
    axis_b: np.ndarray
    axis_n: np.ndarray
    station_index: np.ndarray = None


def nodal_loads(loads, rows=None) -> NodalLoads:
    """Lump one SpanLoads onto its stations (see the module docstring for the scheme).

    rows : boolean mask of the stations that get a node (default ``loads.rows``: the
    structure's rib stations when given, else every station). The root station always gets a
    node (the clamp). The scheme is exact for any subset: each node takes everything between
    it and the next node outboard, the last node everything outboard of it.

    Uses ``loads.force_N``, ``loads.moment_Nm`` (outboard resultants about the spar points)
    and ``loads.spar_points_m``, as written by the beam integration. Stations at the same y
    closer than MERGE_FRACTION x span (both sides of a point-load step) share the inboard one's node;
    the loads moved there carry their transfer moment, so the statics stay exact.
    """
    for name in ("force_N", "moment_Nm", "spar_points_m"):
        if getattr(loads, name) is None:
            raise InputError(f"FE deck of case '{loads.case}': the loads carry no {name} "
                             "(made by the beam integration)")
    if rows is None:
        rows = getattr(loads, "rows", None)
    n_all = np.asarray(loads.y).size
    sel = np.ones(n_all, bool) if rows is None else np.array(rows, bool)
    if sel.shape != (n_all,):
        raise InputError(f"FE deck of case '{loads.case}': rows must be ({n_all},) booleans")
    sel[0] = True  # the root is always a node (the clamp)
    idx = np.flatnonzero(sel)
    F = np.asarray(loads.force_N, float)[idx]
    M = np.asarray(loads.moment_Nm, float)[idx]
    P = np.asarray(loads.spar_points_m, float)[idx]
    n = P.shape[0]
    if n < 2 or F.shape != (n, 3) or M.shape != (n, 3) or not np.all(np.isfinite(F)) \
            or not np.all(np.isfinite(M)):
        raise InputError(f"FE deck of case '{loads.case}': need >= 2 stations with finite loads")
    Fn = np.vstack([F[1:], np.zeros((1, 3))])
    Mn = np.vstack([M[1:], np.zeros((1, 3))])
    Pn = np.vstack([P[1:], P[-1:]])
    f = F - Fn
    m = M - Mn - np.cross(Pn - P, Fn)
    # stations closer than MERGE_FRACTION x span share the inboard one's node; a moved load
    # takes its transfer moment along, so the statics stay exact
    y = np.asarray(loads.y, float)[idx]
    gap = MERGE_FRACTION * max(float(y[-1] - y[0]), SAME_NODE_M)
    keep = np.ones(n, bool)
    last = y[0]
    for i in range(1, n):
        keep[i] = y[i] - last > gap
        if keep[i]:
            last = y[i]
    group = np.cumsum(keep) - 1
    k = int(group[-1]) + 1
    anchor = P[keep][group]
    fs, ms = np.zeros((k, 3)), np.zeros((k, 3))
    np.add.at(fs, group, f)
    np.add.at(ms, group, m + np.cross(P - anchor, f))
    ax = {a: np.asarray(getattr(loads, a), float)[idx][keep] if getattr(loads, a) is not None
          else None
          for a in ("axis_s", "axis_b", "axis_n")}
    if any(v is None for v in ax.values()):
        from geomload.loads.beam import spar_frame

        ax["axis_s"], ax["axis_b"], ax["axis_n"] = spar_frame(y[keep], P[keep, 0], P[keep, 2])
    return NodalLoads(case=str(loads.case), y_m=y[keep], points_m=P[keep], force_N=fs,
                      moment_Nm=ms, station_index=idx[keep], **ax)


def internal_loads(nl: NodalLoads) -> dict:
    """Internal loads recovered node by node from the nodal loads alone (tip to root statics).

    At node i: force F_i = sum_{k>=i} f_k and moment M_i = sum_{k>=i} [m_k + (P_k - P_i) x f_k]
    (wing frame, about P_i; the value just inboard of the node), and their components in the
    local spar frame: shear_N = F.n, bending_Nm = M.b, torsion_Nm = M.s, inplane_shear_N = F.b,
    inplane_bending_Nm = -M.n (the sign convention of loads/beam.py).
    """
    P, f, m = nl.points_m, nl.force_N, nl.moment_Nm
    n = P.shape[0]
    F, M = np.zeros((n, 3)), np.zeros((n, 3))
    F[-1], M[-1] = f[-1], m[-1]
    for i in range(n - 2, -1, -1):
        F[i] = F[i + 1] + f[i]
        M[i] = M[i + 1] + m[i] + np.cross(P[i + 1] - P[i], F[i + 1])
    dot = lambda a, e: np.einsum("ij,ij->i", a, e)  # noqa: E731
    return {"y_m": nl.y_m, "force_N": F, "moment_Nm": M, "shear_N": dot(F, nl.axis_n),
            "bending_Nm": dot(M, nl.axis_b), "torsion_Nm": dot(M, nl.axis_s),
            "inplane_shear_N": dot(F, nl.axis_b), "inplane_bending_Nm": -dot(M, nl.axis_n)}


# ------------------------------------------------------------------------------ CAD frame, deck
def to_cad(nl: NodalLoads, frame=None, unit_scale_m: float = 1.0):
    """(points in CAD unit, forces N, moments N*unit), CAD axes. unit_scale_m: metres per unit."""
    s = float(unit_scale_m)
    if not np.isfinite(s) or s <= 0:
        raise InputError(f"FE deck: CAD unit scale must be > 0 m per unit, got {unit_scale_m!r}")
    R = np.eye(3) if frame is None else np.asarray(frame.rotation, float)
    pts = nl.points_m if frame is None else frame.to_cad(nl.points_m)
    return pts / s, nl.force_N @ R, (nl.moment_Nm @ R) / s


DECK_DIGITS = 14  # significant digits of a number in the deck: the solver reads fields of at
                  # most 20 characters (sign, 14 digits, point, 4-character exponent)


def _caution_lines(prefix: str) -> list:
    return [f"{prefix} {CAUTION}"]


@dataclass(frozen=True)
class BeamDeck:
    """A written beam deck: text; node ids of the spar (root first); support node ids and CAD
    coordinates (for the root reaction from the solver's RF output); unit label and scale."""

    text: str
    spar_nodes: tuple
    support_nodes: dict
    root_cad: np.ndarray
    unit: str
    unit_scale_m: float


def beam_deck(nl: NodalLoads, frame=None, unit_scale_m: float = 1.0, unit: str = "m",
              title: str = "") -> BeamDeck:
    """The CalculiX input deck (text) of the spar beam of one case, in the CAD frame and unit."""
    pts, F, Mo = to_cad(nl, frame, unit_scale_m)
    s = float(unit_scale_m)
    n = pts.shape[0]
    length = float(np.sum(np.linalg.norm(np.diff(pts, axis=0), axis=1)))
    if n < 2 or length <= 0:
        raise InputError(f"FE deck of case '{nl.case}': the spar line has zero length")
    R = np.eye(3) if frame is None else np.asarray(frame.rotation, float)
    chordwise = R[0]  # wing x axis in CAD coordinates: normal to the spar, beam 1-direction
    tangent = pts[1] - pts[0]
    tangent /= np.linalg.norm(tangent)
    a, b = [int(k) for k in np.argsort(np.abs(tangent))[:2]]  # CAD axes most normal to the spar
    c = 3 - a - b
    arm = SUPPORT_ARM_FRACTION * length
    ea, eb = np.eye(3)[a], np.eye(3)[b]
    na, nb, nc = n + 1, n + 2, n + 3
    pa, pb, pc = pts[0] + arm * ea, pts[0] + arm * eb, pts[0] - arm * ea
    w, h = (d / s for d in NOMINAL_SECTION_M)
    e_mod = NOMINAL_E_PA * s * s  # N / unit^2
    g = lambda v: f"{v[0]:.14g}, {v[1]:.14g}, {v[2]:.14g}"  # noqa: E731 (DECK_DIGITS)
    sections = []
    L = _caution_lines("**")
    L += [f"** geomload beam load deck: case '{nl.case}'" + (f" - {title}" if title else "")]
    L += ["** Spar beam on the load stations (node 1 = root). The root is clamped through three",
          "** short arms to held nodes (6 single-DOF supports, statically determinate): equal to",
          "** a clamp for reactions; root reaction = sum RF, moment = sum r x RF (r from node 1).",
          "** Nodal forces/moments: the integral of the loads over the element",
          "** outboard of each node and its moment about the node (exact internal loads at",
          "** every node). Limit loads (multiply by the case's ultimate factor for ultimate).",
          f"** Frame: CAD axes; lengths in {unit} (1 {unit} = {s:g} m); forces N; moments N*{unit}.",
          "** Nodal moments enter as force couples on two short lever arms per node (NSET=LEVERS,",
          "** numbered after the spar and support nodes); the CSV beside this deck lists the plain nodal",
          "** forces and moments (DOF 1-6) for a model of your own.",
          "** Section and material are NOMINAL: the model is statically determinate, so the",
          "** reactions and internal forces do not depend on them (displacements do).",
          "*NODE, NSET=NALL"]
    L += [f"{i + 1}, {g(p)}" for i, p in enumerate(pts)]
    L += [f"{na}, {g(pa)}", f"{nb}, {g(pb)}", f"{nc}, {g(pc)}"]
    # one section per element, its 1-direction the wing's chordwise axis made exactly normal
    # to the element (the section's axes must be normal to the beam)
    t = np.diff(pts, axis=0)
    t /= np.linalg.norm(t, axis=1)[:, None]
    d1 = chordwise[None, :] - (t @ chordwise)[:, None] * t
    d1 /= np.linalg.norm(d1, axis=1)[:, None]
    for i in range(n - 1):
        L += [f"*ELEMENT, TYPE=B31, ELSET=E{i + 1}", f"{i + 1}, {i + 1}, {i + 2}"]
        sections.append((f"E{i + 1}", d1[i]))
    L += ["*ELEMENT, TYPE=B31, ELSET=ARMA", f"{n}, 1, {na}", f"{n + 2}, {nc}, 1",
          "*ELEMENT, TYPE=B31, ELSET=ARMB", f"{n + 1}, 1, {nb}"]
    # moment levers: nodal moments enter as force couples on two short arms per node
    lev = np.linalg.solve(arm * np.column_stack([np.cross(ea, eb), np.cross(ea, np.eye(3)[c]),
                                                 np.cross(eb, np.eye(3)[c])]), Mo.T).T
    ec = np.eye(3)[c]
    gA = lev[:, :1] * eb + lev[:, 1:2] * ec   # force at lever node A_i (and minus it at node i)
    gB = lev[:, 2:3] * ec                     # force at lever node B_i (and minus it at node i)
    lever_a = {i: n + 4 + 2 * i for i in range(n) if np.any(Mo[i] != 0)}
    if lever_a:
        L += ["*NODE, NSET=LEVERS"]
        for i, k in lever_a.items():
            L += [f"{k}, {g(pts[i] + arm * ea)}", f"{k + 1}, {g(pts[i] + arm * eb)}"]
        L += ["*ELEMENT, TYPE=B31, ELSET=LEVA"] + [f"{n + 2 + 2 * i + 1}, {i + 1}, {k}"
                                                   for i, k in lever_a.items()]
        L += ["*ELEMENT, TYPE=B31, ELSET=LEVB"] + [f"{n + 2 + 2 * i + 2}, {i + 1}, {k + 1}"
                                                   for i, k in lever_a.items()]
    L += ["*NSET, NSET=ROOT", "1", "*NSET, NSET=SUPPORT", f"{na}, {nb}, {nc}",
          "*MATERIAL, NAME=NOMINAL", "*ELASTIC", f"{e_mod:.10g}, {NOMINAL_NU:g}"]
    L += ["*ELSET, ELSET=SPAR"] + [f"E{i + 1}," for i in range(n - 1)]
    for elset, d in (*sections, ("ARMA", eb), ("ARMB", ea), ("LEVA", eb), ("LEVB", ea)):
        if elset.startswith("LEV") and not lever_a:
            continue
        L += [f"*BEAM SECTION, ELSET={elset}, MATERIAL=NOMINAL, SECTION=RECT",
              f"{w:.10g}, {h:.10g}", g(d)]
    L += ["*BOUNDARY", f"{nc}, 1, 3", f"{na}, {b + 1}, {b + 1}", f"{na}, {c + 1}, {c + 1}",
          f"{nb}, {c + 1}, {c + 1}", "*STEP", "*STATIC", "*CLOAD"]
    node_f = F - gA - gB  # every node with a moment has levers (gA = gB = 0 elsewhere)
    for i in range(n):
        rows = [(i + 1, node_f[i])]
        if i in lever_a:
            rows += [(lever_a[i], gA[i]), (lever_a[i] + 1, gB[i])]
        for node, vec in rows:
            L += [f"{node}, {dof + 1}, {v:.14g}" for dof, v in enumerate(vec.tolist()) if v != 0.0]
    L += ["*NODE PRINT, NSET=SUPPORT", "RF", "*NODE FILE, NSET=NALL", "U", "*END STEP"]
    return BeamDeck(text="\n".join(L) + "\n", spar_nodes=tuple(range(1, n + 1)),
                    support_nodes={na: pa, nb: pb, nc: pc}, root_cad=pts[0], unit=unit,
                    unit_scale_m=s)


def nodal_loads_csv(nl: NodalLoads, frame=None, unit_scale_m: float = 1.0, unit: str = "m") -> str:
    """CSV text: node, x, y, z (CAD unit), Fx, Fy, Fz (N), Mx, My, Mz (N*unit), CAD frame."""
    pts, F, Mo = to_cad(nl, frame, unit_scale_m)
    u = unit
    lines = ["# " + CAUTION,
             f"# geomload nodal loads of the spar beam deck, case '{nl.case}' (limit loads)",
             f"# CAD frame; coordinates in {u} (1 {u} = {float(unit_scale_m):g} m); forces N; "
             f"moments N*{u} about the node",
             f"node,x_{u},y_{u},z_{u},Fx_N,Fy_N,Fz_N,Mx_N{u},My_N{u},Mz_N{u}"]
    rows = np.column_stack([pts, F, Mo]).tolist()
    lines += [f"{i + 1}," + ",".join(map(repr, r)) for i, r in enumerate(rows)]
    return "\n".join(lines) + "\n"


def write_fe_decks(folder, loads_list, frame=None, unit_scale_m: float = 1.0, unit: str = "m",
                   inputs=(), title: str = "") -> list:
    """Write fe/<case>.inp and fe/<case>_nodal_loads.csv for each SpanLoads of loads_list.

    folder : the run folder; files go to folder/fe/. Returns the list of paths written. All
    decks are built before the first file is written, so a bad case writes nothing.
    """
    from geomload.export.atomic import safe_name, write_text_atomic

    out, taken = [], set()
    for loads in loads_list:
        nl = nodal_loads(loads)
        name = safe_name(loads.case, taken)
        out.append((name, beam_deck(nl, frame, unit_scale_m, unit, title).text,
                    nodal_loads_csv(nl, frame, unit_scale_m, unit)))
    paths = []
    for name, deck, csv in out:
        d = Path(folder) / "fe"
        paths.append(write_text_atomic(d / f"{name}.inp", deck, inputs))
        paths.append(write_text_atomic(d / f"{name}_nodal_loads.csv", csv, inputs))
    return paths


# ------------------------------------------------------------------------ reading solver output
def read_reactions(dat_text: str) -> dict:
    """Node id -> (3,) reaction force from a CalculiX .dat file (the last 'forces' block)."""
    out: dict = {}
    block = False
    for line in dat_text.splitlines():
        t = line.strip()
        if t.startswith("forces (fx,fy,fz)"):
            block, out = True, {}
            continue
        if block:
            parts = t.split()
            if len(parts) == 4:
                try:
                    out[int(parts[0])] = np.array([float(v) for v in parts[1:]])
                    continue
                except ValueError:
                    pass
            if t:
                block = False
    return out


def root_reaction(deck: BeamDeck, dat_text: str, frame=None):
    """The solver's root reaction as (force N, moment N*m about the root node), wing frame.

    The support's reaction forces RF (CAD frame) give force = sum RF and moment about the root
    node = sum (r - r_root) x RF (lengths converted to metres).
    """
    rf = read_reactions(dat_text)
    missing = [k for k in deck.support_nodes if k not in rf]
    if missing:
        raise InputError(f"solver output holds no reaction at support nodes {missing}")
    force = sum(rf[k] for k in deck.support_nodes)
    moment = sum(np.cross((deck.support_nodes[k] - deck.root_cad) * deck.unit_scale_m, rf[k])
                 for k in deck.support_nodes)
    R = np.eye(3) if frame is None else np.asarray(frame.rotation, float)
    return R @ force, R @ moment


# --------------------------------------------------------------------------- one call per run
def cad_unit(run):
    """(unit label, metres per unit) of the run's CAD file. A file that carried its own unit
    (STEP, ...) keeps it: its scale is stored on the mesh when read; the label is the length
    unit of that scale when it is one of ours, else "cad" (with the scale in the files)."""
    from geomload.geometry.read import UNITS

    u = getattr(run.mesh, "units", "m")
    if u in UNITS:
        return u, UNITS[u]
    scale = float(getattr(run.mesh, "unit_scale_m", 1.0) or 1.0)
    for name, s in UNITS.items():
        if abs(s - scale) <= 1e-12 * s:
            return name, s
    return "cad", scale


def write_structural_handoff(run, folder, inputs=(), structural_mesh=None, material=None,
                             sigma_allow_Pa=None, tau_allow_Pa=None, front_spar_fraction=0.15,
                             rear_spar_fraction=0.65, cap_depth_factor=None, plot=True) -> dict:
    """Every structural hand-off output of a RunResult, into folder:

    fe/<case>.inp and fe/<case>_nodal_loads.csv for every case (the envelope's governing cases
    are cases of the run); with structural_mesh (a path meshio reads, CAD frame and unit) the
    mapped loads fe/mesh_<case>_*; sizing.csv (+ sizing.png when plot).
    Returns {"files": [paths], "warnings": [one-line warnings]}. Everything that can fail on
    bad input (mesh, material, fractions) is checked before the first file is written.
    """
    from geomload.export import mesh_map, sizing

    unit, scale = cad_unit(run)
    mat = sizing.material(material or (None if sigma_allow_Pa is not None else "al-2024-t3"),
                          sigma_allow_Pa, tau_allow_Pa)
    siz = sizing.size_from_run(run, front_spar_fraction, rear_spar_fraction, mat=mat,
                               depth_factor=cap_depth_factor or sizing.DEPTH_FACTOR)
    loads = [c.loads for c in run.cases]
    warnings = [f"sizing: {w}" for w in siz.warnings]
    if material is None and sigma_allow_Pa is None:
        warnings.append(f"sizing: no material given; {mat.name} used ({mat.source})")
    if structural_mesh is not None:  # read and map first: a bad mesh writes nothing
        smesh = mesh_map.read_structural_mesh(structural_mesh)
        for L in loads:
            mesh_map.map_loads(smesh, L, run.frame, scale, run.stations)
    files = write_fe_decks(folder, loads, run.frame, scale, unit, inputs)
    if structural_mesh is not None:
        paths, w = mesh_map.write_mesh_loads(folder, structural_mesh, loads, run.frame, scale,
                                             unit, run.stations, inputs)
        files += paths
        warnings += w
    files += sizing.write_sizing(folder, siz, inputs, plot=plot)
    return {"files": files, "warnings": warnings}
