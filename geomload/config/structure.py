"""The `[structure]` table: what the structural hand-off (FE beam decks, mapped loads on the
analyst's own mesh, spar-sizing start) needs from the case file.

Keys (all optional; the table itself is optional and, when absent, no hand-off is written):

- ``mesh``: the analyst's structural mesh (any format meshio reads), relative to the case
  file, in the CAD frame and unit; it becomes an input of the run (never overwritten);
- ``material``: one of the sizing table's materials (e.g. "al-7075-t6"), or
- ``sigma_allow`` and ``tau_allow``: the user's own ultimate allowables (both), each written
  with its unit ("480 MPa", "70 ksi"; Pa, kPa, MPa, GPa, psi, ksi), or as the older keys
  ``sigma_allow_MPa`` and ``tau_allow_MPa`` (a number in MPa);
- ``front_spar_fraction``, ``rear_spar_fraction``: the box between the spars (chord fractions);
- ``cap_depth_factor``: effective cap depth / wing depth at the spar (0 < f <= 1).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Optional

from geomload.errors import CaseError

MPA = 1.0e6  # Pa per MPa
FRONT_SPAR_DEFAULT, REAR_SPAR_DEFAULT = 0.15, 0.65  # a common light-aircraft box (common
# practice, no source): the user sets their own


@dataclass(frozen=True)
class StructureSpec:
    """The `[structure]` table in SI. mesh: absolute path or None; material: a table name or
    None (then sigma_allow_Pa and tau_allow_Pa hold the user's values, or the sizing default)."""

    mesh: Optional[str] = None
    material: Optional[str] = None
    sigma_allow_Pa: Optional[float] = None
    tau_allow_Pa: Optional[float] = None
    front_spar_fraction: float = FRONT_SPAR_DEFAULT
    rear_spar_fraction: float = REAR_SPAR_DEFAULT
    cap_depth_factor: Optional[float] = None

    def __post_init__(self):
        if not 0.0 <= self.front_spar_fraction < self.rear_spar_fraction <= 1.0:
            raise CaseError("structure.rear_spar_fraction: must lie aft of front_spar_fraction, "
                            f"both in 0..1 (got {self.front_spar_fraction:g}, "
                            f"{self.rear_spar_fraction:g})")

    def handoff_options(self) -> dict:
        """Keyword arguments of geomload.export.fe.write_structural_handoff."""
        return {"structural_mesh": self.mesh, "material": self.material,
                "sigma_allow_Pa": self.sigma_allow_Pa, "tau_allow_Pa": self.tau_allow_Pa,
                "front_spar_fraction": self.front_spar_fraction,
                "rear_spar_fraction": self.rear_spar_fraction,
                "cap_depth_factor": self.cap_depth_factor}


def read_structure(t, base: Path) -> StructureSpec:
    """A StructureSpec from the case file's `[structure]` table reader `t` (config.parse._Table);
    paths relative to `base` (the case file's folder). Every error names the key."""
    from geomload.materials import MATERIALS

    mesh = t.get("mesh", str)
    if mesh is not None:
        if not mesh.strip():
            t.fail("mesh", "is empty (give the structural mesh file, relative to the case file)")
        p = (base / mesh) if not Path(mesh).is_absolute() else Path(mesh)
        if not p.is_file():
            t.fail("mesh", f"{p}: no such file" + (" (it is a folder)" if p.is_dir() else ""))
        mesh = str(p.resolve())
    material = t.get("material", str)
    sigma = t.positive("sigma_allow")  # Pa
    tau = t.positive("tau_allow")
    # each named as written; a missing one in the style of the other (older keys end in MPa)
    old = any(k in t.written for k in ("sigma_allow", "tau_allow"))
    s_key, t_key = (t.written.get(k, f"{k}_MPa" if old else k) for k in ("sigma_allow",
                                                                            "tau_allow"))
    if material is not None and material.lower() not in MATERIALS:
        t.fail("material", f"{material!r} is not one of {', '.join(MATERIALS)} (or give "
                           "sigma_allow and tau_allow)")
    if (sigma is None) != (tau is None):
        missing = s_key if sigma is None else t_key
        raise CaseError(f"{t.path}: structure.{missing}: missing: give both {s_key} and "
                        f"{t_key} (or a material)")
    if material is not None and sigma is not None:
        t.fail("material", f"give a material or {s_key}/{t_key}, not both")
    front = t.fraction("front_spar_fraction", FRONT_SPAR_DEFAULT)
    rear = t.fraction("rear_spar_fraction", REAR_SPAR_DEFAULT)
    if not front < rear:
        t.fail("rear_spar_fraction", f"must lie aft of front_spar_fraction ({rear:g} <= {front:g})")
    depth = t.fraction("cap_depth_factor")
    if depth is not None and depth <= 0.0:
        t.fail("cap_depth_factor", "must be > 0")
    return StructureSpec(mesh=mesh, material=None if material is None else material.lower(),
                         sigma_allow_Pa=sigma, tau_allow_Pa=tau,
                         front_spar_fraction=front, rear_spar_fraction=rear,
                         cap_depth_factor=depth)


__all__ = ["StructureSpec", "read_structure"]
