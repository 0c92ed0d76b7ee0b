"""Control surfaces (ailerons, plain flaps) in the vortex lattice, linear theory.

A deflection delta of a plain trailing-edge surface rotates the mean surface behind the hinge
line about that line. Linear lattice theory keeps the panels where they are and rotates only
their normals, n' = n + delta (a x n) with a the unit hinge axis (small-angle boundary
condition; Katz & Plotkin, Low-Speed Aerodynamics, 2nd ed., sec. 12.3, the flapped-plate
examples; Bertin & Cummings, Aerodynamics for Engineers, ch. 7). The tangency condition
(V + v) . n' = 0 then gains the term delta V . (a x n) on the right-hand side only, so every
deflection is one more right-hand side on the same factorised influence matrix and deflections
superpose with the angle of attack.

Sign conventions (wing frame: x aft, y starboard, z up):
- the hinge axis a points to +y on both sides; a rotation of +delta about +y moves points aft of
  the hinge down: delta > 0 is trailing edge DOWN on that side.
- `ControlSurface.mode` "symmetric": both sides trailing edge down by +delta (flaps);
  "antisymmetric": +delta is PORT trailing edge down and STARBOARD trailing edge up, which rolls
  the aircraft to starboard (right wing down): a positive aileron deflection gives a positive
  body-axis rolling moment (see `geomload.aero.roll`).
- a surface on one side only ("starboard" or "port") deflects that side with factor +1.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geomload.errors import AeroError

KINDS = ("aileron", "flap")
SIDES = ("both", "starboard", "port")
MODES = ("symmetric", "antisymmetric")
LINEAR_LIMIT_DEG = 30.0  # beyond ~30 deg a plain flap separates; linear theory overpredicts
HINGE_MIN, HINGE_MAX = 0.02, 0.98  # hinge closer than 2 % to LE/TE leaves no panel on one side
OVERLAP_TOL = 1e-9  # relative to the semispan: touching ends are not an overlap


@dataclass(frozen=True)
class ControlSurface:
    """One plain trailing-edge control surface.

    name : our label (used as the key of deflection dictionaries).
    kind : "aileron" or "flap".
    y_from_m, y_to_m : spanwise extent on the starboard side (m, 0 <= y_from < y_to <= semispan);
        the port surface (if any) is the mirror image.
    hinge_fraction : hinge line position as a fraction of the local chord from the LE (0 < h < 1).
    side : "both", "starboard" or "port".
    mode : "symmetric" or "antisymmetric" (only meaningful with side "both").
    delta_min_deg, delta_max_deg : deflection limits (deg, trailing edge down positive).
    hinge_table : optional ((y_m, fraction), ...) when the hinge fraction varies along the span
        (e.g. a constant-chord aileron on a tapered wing, as the geometry finds it per station);
        interpolated linearly at each strip, `hinge_fraction` then only places the chordwise
        panel edge (use the mean) and panels the hinge crosses count with their aft fraction.
    """

    name: str
    kind: str
    y_from_m: float
    y_to_m: float
    hinge_fraction: float
    side: str = "both"
    mode: str = "symmetric"
    delta_min_deg: float = -20.0
    delta_max_deg: float = 20.0
    hinge_table: tuple = ()

    def hinge_at(self, y_abs) -> np.ndarray:
        """Hinge chord fraction at |y| (m) (the table, or the constant hinge_fraction)."""
        y = np.abs(np.asarray(y_abs, float))
        if not self.hinge_table:
            return np.full(y.shape, float(self.hinge_fraction))
        t = np.asarray(self.hinge_table, float)
        return np.interp(y, t[:, 0], t[:, 1])


def _key(key, c, field):
    return f"{key}.{c.name}.{field}" if key else f"{c.name}.{field}"


def check_controls(controls, semispan: float, full_span: bool = True, key: str = "controls"):
    """Validate control surfaces; returns a list of warning strings, raises AeroError (one line
    naming `key.<name>.<field>`) on surfaces outside the span, hinge at 0 or 1 of the chord,
    overlapping surfaces on the same side, unknown kind/side/mode, bad limits."""
    warnings = []
    names = set()
    s = float(semispan)
    for c in controls:
        if not isinstance(c, ControlSurface):
            raise AeroError(f"{key}: expected ControlSurface records, got {type(c).__name__}")
        if c.name in names:
            raise AeroError(f"{_key(key, c, 'name')}: duplicate control-surface name")
        names.add(c.name)
        if c.kind not in KINDS:
            raise AeroError(f"{_key(key, c, 'kind')}: expected one of {KINDS}, got {c.kind!r}")
        if c.side not in SIDES:
            raise AeroError(f"{_key(key, c, 'side')}: expected one of {SIDES}, got {c.side!r}")
        if c.mode not in MODES:
            raise AeroError(f"{_key(key, c, 'mode')}: expected one of {MODES}, got {c.mode!r}")
        y0, y1 = float(c.y_from_m), float(c.y_to_m)
        if not (math.isfinite(y0) and math.isfinite(y1)) or y0 < 0.0 or y1 <= y0 \
                or y1 > s * (1 + OVERLAP_TOL):
            raise AeroError(f"{_key(key, c, 'y_from_m')}: span range {y0:g}..{y1:g} m is not "
                            f"inside 0..{s:g} m (semispan) with y_from < y_to")
        h = float(c.hinge_fraction)
        if c.hinge_table:
            t = np.asarray(c.hinge_table, float)
            if t.ndim != 2 or t.shape[1] != 2 or t.shape[0] < 1 or not np.all(np.isfinite(t)) \
                    or np.any(np.diff(t[:, 0]) <= 0):
                raise AeroError(f"{_key(key, c, 'hinge_table')}: expected (y_m, fraction) pairs "
                                "with increasing y")
            bad = t[(t[:, 1] < HINGE_MIN) | (t[:, 1] > HINGE_MAX)]
            if bad.size:
                h = float(bad[0, 1])
        if not (HINGE_MIN <= h <= HINGE_MAX):
            raise AeroError(f"{_key(key, c, 'hinge_fraction')}: {h:g} must lie in "
                            f"[{HINGE_MIN}, {HINGE_MAX}] of the chord (a hinge at the leading or "
                            "trailing edge is not a control surface)")
        lo, hi = float(c.delta_min_deg), float(c.delta_max_deg)
        if not (math.isfinite(lo) and math.isfinite(hi)) or lo > hi:
            raise AeroError(f"{_key(key, c, 'delta_max_deg')}: limits {lo:g}..{hi:g} deg must be "
                            "finite with min <= max")
        if max(abs(lo), abs(hi)) > LINEAR_LIMIT_DEG:
            warnings.append(f"{_key(key, c, 'delta_max_deg')}: deflection up to "
                            f"{max(abs(lo), abs(hi)):g} deg exceeds {LINEAR_LIMIT_DEG:g} deg; "
                            "linear lattice theory overpredicts the control load there")
        if not full_span and (c.side != "both" or c.mode != "symmetric"):
            raise AeroError(f"{_key(key, c, 'mode')}: an unsymmetric surface needs a full-span "
                            "lattice (build_lattice(..., full_span=True))")
    cs = list(controls)
    for i, a in enumerate(cs):
        for b in cs[i + 1:]:
            same_side = a.side == "both" or b.side == "both" or a.side == b.side
            tol = OVERLAP_TOL * s
            if same_side and a.y_from_m < b.y_to_m - tol and b.y_from_m < a.y_to_m - tol:
                raise AeroError(f"{_key(key, b, 'y_from_m')}: {b.kind} {b.name!r} "
                                f"({b.y_from_m:g}..{b.y_to_m:g} m) overlaps {a.kind} {a.name!r} "
                                f"({a.y_from_m:g}..{a.y_to_m:g} m)")
    return warnings


def check_deflection(c: ControlSurface, delta_deg: float, key: str = "deflection") -> list:
    """Raise AeroError when delta_deg is outside the surface's limits; warn above 30 deg."""
    d = float(delta_deg)
    if not math.isfinite(d):
        raise AeroError(f"{key}.{c.name}: deflection must be finite, got {delta_deg!r}")
    tol = 1e-9 * max(1.0, abs(d))
    if d < c.delta_min_deg - tol or d > c.delta_max_deg + tol:
        raise AeroError(f"{key}.{c.name}: {d:g} deg is outside the surface limits "
                        f"{c.delta_min_deg:g}..{c.delta_max_deg:g} deg")
    if abs(d) > LINEAR_LIMIT_DEG:
        return [f"{key}.{c.name}: {d:g} deg exceeds {LINEAR_LIMIT_DEG:g} deg; linear lattice "
                "theory overpredicts the control load there"]
    return []


def chord_fractions(n_chord: int, hinges, spacing: str = "uniform") -> np.ndarray:
    """Chordwise panel edges xi (0..1, n_chord + 1 values) with an edge on every hinge fraction.

    The chord is cut at the distinct hinges into segments; each segment gets panels in
    proportion to its length (at least one), spaced uniformly or with a cosine cluster inside
    the segment. Raises AeroError when n_chord is smaller than the number of segments."""
    hs = sorted({round(float(h), 12) for h in hinges})
    cuts = np.array([0.0] + hs + [1.0])
    lengths = np.diff(cuts)
    nseg = lengths.size
    if n_chord < nseg:
        raise AeroError(f"n_chord: {n_chord} chordwise panels cannot put an edge on each of "
                        f"{len(hs)} hinge line(s); use at least {nseg}")
    counts = np.ones(nseg, int)
    for _ in range(n_chord - nseg):  # largest remaining panel length gets the next panel
        counts[np.argmax(lengths / counts)] += 1
    xi = [0.0]
    for a, b, k in zip(cuts[:-1], cuts[1:], counts):
        t = np.arange(1, k + 1) / k
        if spacing == "cosine":
            t = 0.5 * (1.0 - np.cos(np.pi * t))
        xi.extend(a + (b - a) * t)
    xi = np.array(xi)
    xi[-1] = 1.0
    return xi


def snap_edges(ye: np.ndarray, controls) -> np.ndarray:
    """Strip edges with the edge nearest each control-surface end moved onto that end (on the
    side(s) the surface lies on). Ends at the root or tip already are edges. An edge is not
    moved twice, and a move that would make a strip narrower than a quarter of its old width
    is skipped (the end then falls inside a strip and is resolved to half a strip)."""
    ye = np.array(ye, float)
    moved = {0, ye.size - 1}
    targets = []
    for c in controls:
        for y in (c.y_from_m, c.y_to_m):
            if c.side in ("both", "starboard"):
                targets.append(float(y))
            if c.side in ("both", "port") and ye[0] < 0.0:
                targets.append(-float(y))
    for t in targets:
        i = int(np.argmin(np.abs(ye - t)))
        if abs(ye[i] - t) <= 1e-12 * max(1.0, abs(t)) or i in moved:
            continue
        new = ye.copy()
        new[i] = t
        old_w = np.diff(ye)
        if np.all(np.diff(new) > 0.25 * old_w):
            ye = new
            moved.add(i)
    return ye


def panel_fractions(lattice, c: ControlSurface):
    """Per panel (N,): the signed fraction of the panel on the deflected surface (chordwise part
    aft of the hinge, times +1 / -1 for the side's deflection sign, 0 outside the span range)."""
    ns, nc = lattice.n_span, lattice.n_chord
    cor = lattice.corners
    le, te = cor[:, 0], cor[:, -1]
    d = te - le
    xi = np.einsum("sjk,sk->sj", cor - le[:, None, :], d) / np.einsum("sk,sk->s", d, d)[:, None]
    xi = 0.5 * (xi[:-1] + xi[1:])  # (ns, nc + 1) at strip centres
    a, b = xi[:, :-1], xi[:, 1:]
    h = c.hinge_at(0.5 * (cor[:-1, 0, 1] + cor[1:, 0, 1]))[:, None]
    aft = np.clip((b - h) / np.maximum(b - a, 1e-15), 0.0, 1.0)
    # spanwise: the overlap of each strip with the surface's y range, on each side
    ye = cor[:, 0, 1]
    y0, y1 = ye[:-1], ye[1:]
    width = np.maximum(y1 - y0, 1e-300)
    sign = np.zeros(ns)
    for side, lo, hi in (("starboard", c.y_from_m, c.y_to_m), ("port", -c.y_to_m, -c.y_from_m)):
        if c.side not in ("both", side):
            continue
        if side == "port" and lattice.mirrored:
            continue  # images carry the port side of a symmetric surface
        ov = np.clip(np.minimum(y1, hi) - np.maximum(y0, lo), 0.0, None) / width
        f = 1.0
        if c.side == "both" and c.mode == "antisymmetric":
            f = -1.0 if side == "starboard" else 1.0
        sign += f * ov
    return (sign[:, None] * aft).reshape(-1)


def hinge_axes(lattice, c: ControlSurface) -> np.ndarray:
    """Unit hinge axis per strip (ns, 3), pointing to +y: the line through the hinge points
    (LE + h (TE - LE)) at the strip's two edges."""
    cor = lattice.corners
    p = cor[:, 0] + c.hinge_at(cor[:, 0, 1])[:, None] * (cor[:, -1] - cor[:, 0])
    a = p[1:] - p[:-1]
    return a / np.linalg.norm(a, axis=1, keepdims=True)


def deflection_rhs(lattice, c: ControlSurface) -> np.ndarray:
    """Right-hand sides (N, 2) per radian of deflection: columns for the free-stream x and z
    components, so the tangency term is -(cos a, sin a) . (a x n) * fraction."""
    nc = lattice.n_chord
    frac = panel_fractions(lattice, c)
    axis = np.repeat(hinge_axes(lattice, c), nc, axis=0)
    axn = np.cross(axis, lattice.normal)
    return -frac[:, None] * axn[:, [0, 2]]
