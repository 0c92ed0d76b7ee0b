"""The geometry stage's records: what the reader, the frame, the stations and the planform give.

Frozen dataclasses of numpy arrays, SI units (metres, degrees), in the *wing frame* unless
stated: x aft along the root chord, y starboard along the span (0 on the symmetry plane), z up.
`geomload.records` re-exports the four original ones, so old imports keep working. Every field
added after the first release has a default, so older constructors keep working.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional

import numpy as np


@dataclass(frozen=True)
class GeometryWarning:
    """One decision of the reader that can change a number (a guessed unit, side, up, body).

    kind: a short key ("units", "side", "up", "bodies", "control_surface", "exposed", "frame");
    text: one line for the user (the CLI prints it, prefixed "warning: ").
    """

    kind: str
    text: str


@dataclass(frozen=True)
class WingMesh:
    """A triangle soup in metres, in the CAD frame (before any axis change).

    triangles: (m, 3, 3) float64, metres. No vertex welding is required for cutting.
    source: path of the file it came from.
    units: the unit the file was read in ("m", "mm", ... or "file" when the file carried it).
    notes: human-readable remarks (bodies left out, unit warnings...), for the CLI to print;
        those that can change a number start with "warning: ".
    units_assumed: True when a unit-less format (STL, OBJ, PLY, OFF) was read with no unit given
        (metres assumed).
    body_sizes: triangles per body, in the order they are stored in `triangles` (one entry per
        body the reader kept; empty when not known).
    unit_scale_m: metres per CAD unit of the file (the unit it was read in, or the file's own
        unit when it carried one), so outputs in the CAD frame can be written in the CAD unit.
    """

    triangles: np.ndarray
    source: str
    units: str
    notes: tuple = ()
    units_assumed: bool = False
    body_sizes: tuple = ()
    unit_scale_m: float = 1.0

    @property
    def n_triangles(self) -> int:
        return int(self.triangles.shape[0])


@dataclass(frozen=True)
class WingFrame:
    """The transform from the CAD frame to the wing frame: p_wing = rotation @ (p_cad - origin).

    rotation: (3, 3) orthogonal; its rows are the wing x, y, z axes in CAD coordinates. Its
        determinant is +1, or -1 when `mirrored` (a port half wing in a right-handed CAD frame,
        or a starboard one in a left-handed frame, is reflected onto the starboard side): the
        transform then still maps back to the CAD points exactly (`to_cad`).
    origin: (3,) CAD point that maps to the wing-frame origin (on the root / symmetry plane).
    full_span: True when the mesh holds both sides of the symmetry plane.
    span_axis, up_axis: labels of the CAD axes chosen, e.g. "+Y", "-Z" (for printing).
    asymmetry: for a full wing, max |starboard - port| station difference / semi-span (0 for half).
    notes: remarks on how the frame was chosen.
    mirrored: True when the rotation is a reflection (det -1).
    side: "starboard", "port" (a half wing, as found in the file) or "full".
    y_root: wing-frame y of the root of the geometry (0 unless the file is an exposed wing whose
        root lies off the CAD's plane of symmetry, which is kept as y = 0).
    """

    rotation: np.ndarray
    origin: np.ndarray
    full_span: bool
    span_axis: str
    up_axis: str
    asymmetry: float = 0.0
    notes: tuple = ()
    mirrored: bool = False
    side: str = ""
    y_root: float = 0.0

    def to_wing(self, p_cad: np.ndarray) -> np.ndarray:
        return (np.asarray(p_cad, float) - self.origin) @ self.rotation.T

    def to_cad(self, p_wing: np.ndarray) -> np.ndarray:
        return np.asarray(p_wing, float) @ self.rotation + self.origin


@dataclass(frozen=True)
class Stations:
    """Airfoil sections cut from the mesh along one semi-span (starboard, y >= 0), root to tip.

    Arrays of length n (stations), wing frame, metres / degrees:
    y, x_le, z_le, x_te, z_te, chord, twist_deg (chord-line angle, nose-up positive: LE above TE
    gives positive twist), thickness_ratio (t/c), x_thickness (x/c of max t), camber_ratio (f/c),
    x_camber (x/c of max camber), dihedral_deg (local slope of the quarter-chord line in y-z).
    camber_x: (k,) chordwise stations 0..1 shared by all sections; camber_z: (n, k) mean camber
    line height / chord, measured normal to the local chord line (positive up), 0 at both ends.
    semispan: the tip y (m) of the geometry itself (stations are inset slightly from the tip cap).
    notes: skipped stations, stray loops ignored, etc.
    s_m: arc length (m) along the quarter-chord span line in the y-z plane, measured from y = 0
        (the root plane); equals y for a flat wing. Filled from y and z_qc when not given.
    s_tip_m: arc length of the span line to the geometric tip (None: take the tip at semispan
        along the last station's direction).
    """

    y: np.ndarray
    x_le: np.ndarray
    z_le: np.ndarray
    x_te: np.ndarray
    z_te: np.ndarray
    chord: np.ndarray
    twist_deg: np.ndarray
    thickness_ratio: np.ndarray
    x_thickness: np.ndarray
    camber_ratio: np.ndarray
    x_camber: np.ndarray
    dihedral_deg: np.ndarray
    camber_x: np.ndarray
    camber_z: np.ndarray
    semispan: float
    notes: tuple = ()
    s_m: Optional[np.ndarray] = None
    s_tip_m: Optional[float] = None

    def __post_init__(self):
        if self.s_m is None:
            y = np.asarray(self.y, float)
            z = np.asarray(self.z_qc, float)
            if y.size:
                ds = np.hypot(np.diff(y), np.diff(z))
                s = float(y[0]) + np.concatenate([[0.0], np.cumsum(ds)])
            else:
                s = y.copy()
            object.__setattr__(self, "s_m", s)

    @property
    def n(self) -> int:
        return int(self.y.size)

    @property
    def x_qc(self) -> np.ndarray:
        return self.x_le + 0.25 * (self.x_te - self.x_le)

    @property
    def z_qc(self) -> np.ndarray:
        return self.z_le + 0.25 * (self.z_te - self.z_le)


@dataclass(frozen=True)
class Planform:
    """Planform summary of the whole wing (both sides), metres / degrees.

    area: projected area S on the x-y plane (both sides); span: b (tip to tip);
    aspect_ratio b^2/S; taper: c_tip / c_root; mac: mean aerodynamic chord length;
    x_mac_le, y_mac: leading-edge x and spanwise position of the MAC; x_mac_qc = x_mac_le + mac/4;
    sweep_le_deg, sweep_qc_deg: from a least-squares line through the LE / c/4 points;
    dihedral_deg: from a least-squares line through the c/4 points in y-z;
    washout_deg: root twist minus tip twist (positive = tip nose-down).
    The gross planform is carried through to y = 0 by extending the leading and trailing edges.
    span_surface: span measured along the quarter-chord line (both sides; equals span for a
        flat wing; larger with winglets or dihedral), None when not computed.
    exposed_area, exposed_span: planform outside the root of the geometry (both sides); equal to
        area and span unless the file is an exposed wing with its root off y = 0.
    """

    area: float
    span: float
    aspect_ratio: float
    taper: float
    root_chord: float
    tip_chord: float
    mac: float
    x_mac_le: float
    y_mac: float
    sweep_le_deg: float
    sweep_qc_deg: float
    dihedral_deg: float
    washout_deg: float
    span_surface: Optional[float] = None
    exposed_area: Optional[float] = None
    exposed_span: Optional[float] = None

    @property
    def x_mac_qc(self) -> float:
        return self.x_mac_le + 0.25 * self.mac


@dataclass(frozen=True)
class ControlSurfaceGeometry:
    """A control surface (aileron / flap) found as a separate body behind the wing.

    y_from_m, y_to_m: its spanwise range (wing frame, m); stations: indices of the `Stations`
    whose section carries it; hinge_x_over_c: (len(stations),) hinge position as a fraction of
    the local chord from the leading edge (the leading edge of the control-surface body);
    hinge_xz_m: (len(stations), 2) hinge point (x, z) in the wing frame at those stations;
    body: 1-based body number in the file.
    """

    y_from_m: float
    y_to_m: float
    stations: tuple
    hinge_x_over_c: np.ndarray
    hinge_xz_m: np.ndarray
    body: int = 0


@dataclass(frozen=True)
class BodyInfo:
    """One body of the file and what the reader took it to be.

    index: 1-based body number (file order); kind: "wing", "wing part", "wing (other half)"
    (the mirror image of the analysed half across a fuselage), "control surface", "fuselage",
    "tailplane", "fin", "other lifting surface", "other", or "aircraft (one fused shell)" (the
    wing, fuselage and tail surfaces in one shell; `text` lists what it holds); n_triangles;
    span_m: its extent normal to its chord and thickness; length_m: its largest extent;
    text: one line.
    """

    index: int
    kind: str
    n_triangles: int
    span_m: float
    length_m: float
    text: str


@dataclass(frozen=True)
class TailPlanform:
    """Planform of a horizontal tail surface, in the wing frame (m, m^2).

    area, span: both sides; x_qc_mac: x of the quarter-chord of its mean aerodynamic chord;
    mac; z_m: height of its quarter-chord line at the root.
    """

    area: float
    span: float
    x_qc_mac: float
    mac: float
    z_m: float = 0.0


@dataclass(frozen=True)
class Wing:
    """Everything the geometry stage found in one file (`geometry.read_wing`).

    mesh, frame, stations, planform: as `load_wing` returns them (the analysed wing);
    control_surfaces: tuple of ControlSurfaceGeometry; bodies: tuple of BodyInfo, one per body
    of the file; tailplane: TailPlanform or None; warnings: tuple of GeometryWarning (every
    decision that can change a number); notes: facts that cannot change a number;
    fuselage_side_y_m: wing-frame y of the fuselage's side at the wing root chord (the station
    where the exposed wing meets the fuselage; the wing is carried through inside), or None.
    display_soup: (target, points (n, 3) CAD m, tri (m, 3)) = `display_soup.decimate_soup` of
    `mesh.triangles` to about `target` triangles when the geometry stage built it alongside
    (a large mesh, a free CPU), else None; the export's display surface uses it.
    """

    mesh: WingMesh
    frame: WingFrame
    stations: Stations
    planform: Planform
    control_surfaces: tuple = ()
    bodies: tuple = ()
    tailplane: Optional[TailPlanform] = None
    warnings: tuple = ()
    notes: tuple = ()
    fuselage_side_y_m: Optional[float] = None
    display_soup: Optional[tuple] = field(default=None, compare=False, repr=False)
