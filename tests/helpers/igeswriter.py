"""A small IGES writer for tests: one untrimmed rational B-spline surface (entity 128) per patch.

Written from the IGES 5.3 specification (US PRO, 1996): fixed 80-column records, sections Start
(S), Global (G, section 2.2.4.3: parameter 14 is the unit flag, 1 inch, 2 mm, 6 m), Directory
Entry (D, two 8-column-field records per entity) and Parameter Data (P, columns 1-64 data,
66-72 the back pointer to the entity's first D record), then Terminate (T). Entity 128
(section 4.24): K1, K2, M1, M2, PROP1-5, the two knot sequences, the weights and the control
points with the first index varying fastest, then the parameter ranges.
"""

from __future__ import annotations

import numpy as np

_FLAGS = {"in": (1, "IN"), "mm": (2, "MM"), "m": (6, "M"), "ft": (4, "FT"), "cm": (10, "CM")}


def _holl(s):
    return f"{len(s)}H{s}"


def _wrap(params, width):
    """Free-format parameters cut into records of at most `width` characters."""
    lines, cur = [], ""
    for i, p in enumerate(params):
        tok = p + (";" if i == len(params) - 1 else ",")
        if len(cur) + len(tok) > width:
            lines.append(cur)
            cur = ""
        cur += tok
    if cur:
        lines.append(cur)
    return lines


def _num(v):
    return repr(float(v)).replace("e", "D") if "e" in repr(float(v)) else repr(float(v))


def bilinear_grid_surface(grid):
    """Parameters of a degree-1 x degree-1 entity 128 through an (nv, nu, 3) point grid."""
    nv, nu, _ = grid.shape
    k1, k2 = nu - 1, nv - 1
    knots_u = [0.0] + list(range(0, k1 + 1)) + [float(k1)]
    knots_v = [0.0] + list(range(0, k2 + 1)) + [float(k2)]
    p = ["128", str(k1), str(k2), "1", "1", "0", "0", "1", "0", "0"]
    p += [_num(k) for k in knots_u] + [_num(k) for k in knots_v]
    p += ["1.0"] * (nu * nv)
    for j in range(nv):
        for i in range(nu):
            p += [_num(c) for c in grid[j, i]]
    p += ["0.0", _num(k1), "0.0", _num(k2)]
    return p


def write_iges(path, grids, unit="mm"):
    """Write IGES surfaces through the given (nv, nu, 3) grids (coordinates in `unit`)."""
    flag, name = _FLAGS[unit]
    start = ["geomload test surfaces"]
    glob = [_holl(","), _holl(";"), _holl("geomload-test"), _holl("wing.igs"), _holl("geomload"),
            _holl("test"), "32", "38", "6", "308", "15", _holl("geomload-test"), "1.0", str(flag),
            _holl(name), "1", "0.01", _holl("20260101.000000"), "1.0D-6", "1.0D4", _holl("t"),
            _holl("t"), "11", "0", _holl("20260101.000000")]
    d_lines, p_lines = [], []
    for e, grid in enumerate(grids):
        de_seq = 2 * e + 1
        body = _wrap(bilinear_grid_surface(np.asarray(grid, float)), 64)
        p_start = len(p_lines) + 1
        for b in body:
            p_lines.append(f"{b:<64} {de_seq:>7}")
        fields1 = [128, p_start, 0, 0, 0, 0, 0, 0]
        d_lines.append("".join(f"{v:>8}" for v in fields1) + "00000000")
        fields2 = [128, 0, 0, len(body), 0, "", "", "", 0]
        d_lines.append("".join(f"{v:>8}" for v in fields2))
    out = []
    for sec, lines in (("S", start), ("G", _wrap(glob, 72)), ("D", d_lines), ("P", p_lines)):
        for i, line in enumerate(lines, 1):
            out.append(f"{line:<72}{sec}{i:>7}")
    counts = (len(start), len(_wrap(glob, 72)), len(d_lines), len(p_lines))
    term = "S{:>7}G{:>7}D{:>7}P{:>7}".format(*counts)
    out.append(f"{term:<72}T{1:>7}")
    with open(path, "w", newline="\n") as f:
        f.write("\n".join(out) + "\n")
