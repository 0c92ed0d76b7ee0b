"""Beam load deck of the spar for a general FE solver (CalculiX's open input syntax), and the
root reaction read back from the solver's output.

Model: one node per load station on the spar line (the nodal loads of
:mod:`geomload.export.fe_nodes`), two-node beam elements (B31) between them, the root held, and
per node a force and a moment (DOF 1-6, *CLOAD) statically equivalent to the case's distributed
and point loads. Because a cantilever is statically determinate the reactions and the internal
forces do not depend on the section or the material: the deck's section and material are
nominal, stated as such, and only displacements depend on them.

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

import numpy as np

from geomload import CAUTION
from geomload.errors import InputError
from geomload.record_checks import kept
from geomload.export.fe_nodes import NodalLoads, to_cad

# Nominal beam section and material: they change displacements only, never the reactions or
# internal forces of this statically determinate model (stated in the deck).
NOMINAL_SECTION_M = (0.05, 0.02)   # rectangle width x height (m), nominal
NOMINAL_E_PA = 70.0e9              # aluminium-like Young's modulus (Pa), nominal, from memory
NOMINAL_NU = 0.33                  # Poisson's ratio, nominal, from memory
SUPPORT_ARM_FRACTION = 0.05        # support arm length / spar length (any positive value works)

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


def _cross3(u, v) -> np.ndarray:
    """u x v of two 3-vectors (numpy.cross's arithmetic, without its per-call axis handling)."""
    return np.array([u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2],
                     u[0] * v[1] - u[1] * v[0]])


def _xyz(v) -> str:
    """Three numbers of a deck line at DECK_DIGITS significant digits ("x, y, z")."""
    return "%.14g, %.14g, %.14g" % (v[0], v[1], v[2])  # DECK_DIGITS


_XYZ = "%.14g, %.14g, %.14g"  # DECK_DIGITS


_SAME_BLOCKS: dict = {}   # (row format, shape, bytes of the table) -> its text (see _block)
SAME_BLOCKS_KEPT = 64     # texts kept: the few geometry blocks one run's decks share


def _block(row_format: str, table, same: bool = False) -> str:
    """Deck lines of a table in one %-format: `row_format` (one or more lines, no trailing
    newline) repeated once per row of `table` (2-D float64; integers as exact floats, which
    '%d' prints as integers), applied to its values in row order. The same text as formatting
    each row on its own.

    same : the table is one that many decks of a run share (node coordinates, section axes:
    the geometry, not the loads); its text is kept, keyed by the table's exact bytes, and
    reused when the same bytes come again. Formatting is a function of those bytes alone, so a
    kept text is the text formatting would give.
    """
    t = np.ascontiguousarray(table, dtype=float)

    def text():
        return ((row_format + "\n") * t.shape[0] % tuple(t.ravel().tolist()))[:-1]

    if same:
        return kept(_SAME_BLOCKS, (row_format, t.shape, t.tobytes()), text, SAME_BLOCKS_KEPT)
    return text()


_GEOMETRY: dict = {}  # (exact bytes of the spar points, frame, unit scale, lever nodes) -> part
GEOMETRY_KEPT = 16    # parts kept: the cases of one run share one or a few spar geometries


def _geometry_part(pts, R, s: float, lever_nodes: tuple) -> tuple:
    """The case-independent part of a beam deck, from "*NODE, NSET=NALL" to "*CLOAD": the
    nodes, elements, levers, sections and supports of the spar on `pts` (CAD frame and unit),
    with the values the loads part needs. A function of its arguments' exact values alone, so
    a part kept for the same bytes is the part building it again would give. Returns (lines,
    (a, b, c, arm, ea, eb, ec), (na, nb, nc), (pa, pb, pc))."""
    return kept(_GEOMETRY, (pts.shape, pts.tobytes(), R.tobytes(), s, lever_nodes),
                lambda: _build_geometry_part(pts, R, s, lever_nodes), GEOMETRY_KEPT)


def _build_geometry_part(pts, R, s: float, lever_nodes: tuple) -> tuple:
    """`_geometry_part` built afresh."""
    n = pts.shape[0]
    length = float(np.sum(np.linalg.norm(np.diff(pts, axis=0), axis=1)))
    chordwise = R[0]  # wing x axis in CAD coordinates: normal to the spar, beam 1-direction
    tangent = pts[1] - pts[0]
    tangent /= np.linalg.norm(tangent)
    a, b = [int(k) for k in np.argsort(np.abs(tangent))[:2]]  # CAD axes most normal to the spar
    c = 3 - a - b
    arm = SUPPORT_ARM_FRACTION * length
    eye = np.eye(3)
    ea, eb, ec = eye[a], eye[b], eye[c]
    na, nb, nc = n + 1, n + 2, n + 3
    pa, pb, pc = pts[0] + arm * ea, pts[0] + arm * eb, pts[0] - arm * ea
    w, h = (d / s for d in NOMINAL_SECTION_M)
    e_mod = NOMINAL_E_PA * s * s  # N / unit^2
    g = lambda v: _xyz(v.tolist())  # noqa: E731 (DECK_DIGITS)
    L = ["*NODE, NSET=NALL"]
    one_to_n = np.arange(1.0, n + 1.0)  # node numbers 1..n (exact floats, printed by '%d')
    L.append(_block("%d, " + _XYZ, np.column_stack([one_to_n, pts])))
    L += [f"{na}, {g(pa)}", f"{nb}, {g(pb)}", f"{nc}, {g(pc)}"]
    # one section per element, its 1-direction the wing's chordwise axis made exactly normal
    # to the element (the section's axes must be normal to the beam)
    t = np.diff(pts, axis=0)
    t /= np.linalg.norm(t, axis=1)[:, None]
    d1 = chordwise[None, :] - (t @ chordwise)[:, None] * t
    d1 /= np.linalg.norm(d1, axis=1)[:, None]
    e = one_to_n[:-1]  # element numbers 1..n-1, element i from node i to node i + 1
    L.append(_block("*ELEMENT, TYPE=B31, ELSET=E%d\n%d, %d, %d",
                    np.column_stack([e, e, e, e + 1])))
    L += ["*ELEMENT, TYPE=B31, ELSET=ARMA", f"{n}, 1, {na}", f"{n + 2}, {nc}, 1",
          "*ELEMENT, TYPE=B31, ELSET=ARMB", f"{n + 1}, 1, {nb}"]
    # moment levers: nodal moments enter as force couples on two short arms per node
    if lever_nodes:
        li = np.array(lever_nodes, float)  # nodes with levers (index i, ascending)
        k = n + 4 + 2 * li                 # lever node A of node i (B is k + 1)
        L += ["*NODE, NSET=LEVERS"]
        L.append(_block("%d, " + _XYZ + "\n%d, " + _XYZ, np.column_stack(
            [k, pts[li.astype(int)] + arm * ea, k + 1, pts[li.astype(int)] + arm * eb])))
        L += ["*ELEMENT, TYPE=B31, ELSET=LEVA"]
        L.append(_block("%d, %d, %d", np.column_stack([n + 3 + 2 * li, li + 1, k])))
        L += ["*ELEMENT, TYPE=B31, ELSET=LEVB"]
        L.append(_block("%d, %d, %d", np.column_stack([n + 4 + 2 * li, li + 1, k + 1])))
    L += ["*NSET, NSET=ROOT", "1", "*NSET, NSET=SUPPORT", f"{na}, {nb}, {nc}",
          "*MATERIAL, NAME=NOMINAL", "*ELASTIC", f"{e_mod:.10g}, {NOMINAL_NU:g}"]
    L += ["*ELSET, ELSET=SPAR", _block("E%d,", e[:, None])]
    wh = f"{w:.10g}, {h:.10g}"
    L.append(_block("*BEAM SECTION, ELSET=E%d, MATERIAL=NOMINAL, SECTION=RECT\n"
                    + wh.replace("%", "%%") + "\n" + _XYZ, np.column_stack([e, d1])))
    for elset, d in (("ARMA", eb.tolist()), ("ARMB", ea.tolist()),
                     ("LEVA", eb.tolist()), ("LEVB", ea.tolist())):
        if elset.startswith("LEV") and not lever_nodes:
            continue
        L += [f"*BEAM SECTION, ELSET={elset}, MATERIAL=NOMINAL, SECTION=RECT",
              wh, _xyz(d)]
    L += ["*BOUNDARY", f"{nc}, 1, 3", f"{na}, {b + 1}, {b + 1}", f"{na}, {c + 1}, {c + 1}",
          f"{nb}, {c + 1}, {c + 1}", "*STEP", "*STATIC", "*CLOAD"]
    return ("\n".join(L), (a, b, c, arm, ea, eb, ec), (na, nb, nc), (pa, pb, pc))


_LEVER_MATRICES: dict = {}  # (exact bytes of the lever axes and arm) -> their 3 x 3 matrix


def _lever_matrix(ea, eb, ec, arm) -> np.ndarray:
    """arm [ea x eb, ea x ec, eb x ec] (columns): a nodal moment's force couples on the two
    lever arms solve this matrix. Kept per geometry (the same for every deck of a run)."""
    return kept(_LEVER_MATRICES, (ea.tobytes(), eb.tobytes(), ec.tobytes(), float(arm)),
                lambda: arm * np.column_stack([_cross3(ea, eb), _cross3(ea, ec),
                                               _cross3(eb, ec)]), GEOMETRY_KEPT)


_CLOAD_STARTS: dict = {}  # n -> (n, 3, 3) "node, dof, " texts of the *CLOAD lines


def _cload_starts(n: int) -> np.ndarray:
    """The starts "node, dof, " of every possible *CLOAD line of a deck with n spar nodes, as
    an (n, 3, 3) object array: per node i its own node (i + 1) and its two lever nodes
    (n + 4 + 2 i and n + 5 + 2 i), each with DOF 1, 2, 3 (beam_deck's line order)."""
    def build():
        out = np.empty((n, 3, 3), dtype=object)
        for i in range(n):
            for r, node in enumerate((i + 1, n + 4 + 2 * i, n + 5 + 2 * i)):
                for d in range(3):
                    out[i, r, d] = f"{node}, {d + 1}, "
        return out

    return kept(_CLOAD_STARTS, n, build, GEOMETRY_KEPT)


def beam_deck(nl: NodalLoads, frame=None, unit_scale_m: float = 1.0, unit: str = "m",
              title: str = "", cad=None) -> BeamDeck:
    """The CalculiX input deck (text) of the spar beam of one case, in the CAD frame and unit.

    The spar's nodes, elements, sections and supports (`_geometry_part`) are the same for
    every case on one load grid and are built once; each deck adds its title and its loads.
    cad : `to_cad(nl, frame, unit_scale_m)` when the caller has it already."""
    pts, F, Mo = to_cad(nl, frame, unit_scale_m) if cad is None else cad
    s = float(unit_scale_m)
    n = pts.shape[0]
    if n < 2 or not float(np.sum(np.linalg.norm(np.diff(pts, axis=0), axis=1))) > 0:
        raise InputError(f"FE deck of case '{nl.case}': the spar line has zero length")
    R = np.eye(3) if frame is None else np.asarray(frame.rotation, float)
    lever_nodes = tuple(int(i) for i in np.flatnonzero(np.any(Mo != 0, axis=1)))
    geometry, (a, b, c, arm, ea, eb, ec), (na, nb, nc), (pa, pb, pc) = _geometry_part(
        np.ascontiguousarray(pts, dtype=float), np.ascontiguousarray(R), s, lever_nodes)
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
          geometry]
    lev = np.linalg.solve(_lever_matrix(ea, eb, ec, arm), Mo.T).T
    gA = lev[:, :1] * eb + lev[:, 1:2] * ec   # force at lever node A_i (and minus it at node i)
    gB = lev[:, 2:3] * ec                     # force at lever node B_i (and minus it at node i)
    # every node with a moment has levers (gA = gB = 0 elsewhere). Per node i, in order: its
    # own force, then lever A's and lever B's (nodes with levers only); each DOF 1-3 whose
    # value is not zero gets a line "node, dof, value"
    node_f = F - gA - gB
    has_lev = np.zeros(n, bool)
    has_lev[list(lever_nodes)] = True
    value = np.stack([node_f, gA, gB], axis=1)                           # (n, 3 rows, 3 DOFs)
    used = np.column_stack([np.ones(n, bool), has_lev, has_lev])[:, :, None] & (value != 0.0)
    if used.any():
        # the lines "node, dof, value" in one %-format: the "node, dof, " starts of the used
        # lines (the same for every deck with n nodes) joined by the value's '%.14g'
        starts = _cload_starts(n)[used].tolist()
        L.append(("%.14g\n".join(starts) + "%.14g") % tuple(value[used].tolist()))
    L += ["*NODE PRINT, NSET=SUPPORT", "RF", "*NODE FILE, NSET=NALL", "U", "*END STEP"]
    return BeamDeck(text="\n".join(L) + "\n", spar_nodes=tuple(range(1, n + 1)),
                    support_nodes={na: pa, nb: pb, nc: pc}, root_cad=pts[0], unit=unit,
                    unit_scale_m=s)


def nodal_loads_csv(nl: NodalLoads, frame=None, unit_scale_m: float = 1.0, unit: str = "m",
                    cad=None) -> str:
    """CSV text: node, x, y, z (CAD unit), Fx, Fy, Fz (N), Mx, My, Mz (N*unit), CAD frame.
    cad : `to_cad(nl, frame, unit_scale_m)` when the caller has it already."""
    pts, F, Mo = to_cad(nl, frame, unit_scale_m) if cad is None else cad
    u = unit
    lines = ["# " + CAUTION,
             f"# geomload nodal loads of the spar beam deck, case '{nl.case}' (limit loads)",
             f"# CAD frame; coordinates in {u} (1 {u} = {float(unit_scale_m):g} m); forces N; "
             f"moments N*{u} about the node",
             f"node,x_{u},y_{u},z_{u},Fx_N,Fy_N,Fz_N,Mx_N{u},My_N{u},Mz_N{u}"]
    # the whole table in one %-format of repr ('%r') of each force and moment, into rows whose
    # node number and coordinates (repr) are already written: those are the same for every
    # case of a run (see _block)
    rows = _block("%d,%r,%r,%r," + ",".join(["%%r"] * 6),
                  np.column_stack([np.arange(1.0, pts.shape[0] + 1.0), pts]), same=True)
    return ("\n".join(lines) + "\n" + rows % tuple(np.column_stack([F, Mo]).ravel().tolist())
            + "\n")


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


__all__ = ["BeamDeck", "beam_deck", "nodal_loads_csv", "read_reactions", "root_reaction"]
