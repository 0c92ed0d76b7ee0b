"""The `[structure]` table: what the structural hand-off (FE beam decks, mapped loads on the
analyst's own mesh, spar-sizing start) needs from the case file.

Keys (all optional; the table itself is optional and, when absent, no hand-off is written):

- ``mesh``: the analyst's structural mesh (any format meshio reads), relative to the case
  file, in the CAD frame and unit; it becomes an input of the run (never overwritten);
- ``material``: one of the sizing table's materials (e.g. "al-7075-t6"), or
- ``sigma_allow_MPa`` and ``tau_allow_MPa``: the user's own ultimate allowables (both);
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
    from geomload.export.sizing import MATERIALS

    mesh = t.get("mesh", str)
    if mesh is not None:
        if not mesh.strip():
            t.fail("mesh", "is empty (give the structural mesh file, relative to the case file)")
        p = (base / mesh) if not Path(mesh).is_absolute() else Path(mesh)
        if not p.is_file():
            t.fail("mesh", f"{p}: no such file" + (" (it is a folder)" if p.is_dir() else ""))
        mesh = str(p.resolve())
    material = t.get("material", str)
    sigma = t.positive("sigma_allow_MPa")
    tau = t.positive("tau_allow_MPa")
    if material is not None and material.lower() not in MATERIALS:
        t.fail("material", f"{material!r} is not one of {', '.join(MATERIALS)} (or give "
                           "sigma_allow_MPa and tau_allow_MPa)")
    if (sigma is None) != (tau is None):
        t.fail("sigma_allow_MPa" if sigma is None else "tau_allow_MPa",
               "give both sigma_allow_MPa and tau_allow_MPa (or a material)")
    if material is not None and sigma is not None:
        t.fail("material", "give a material or sigma_allow_MPa/tau_allow_MPa, not both")
    front = t.fraction("front_spar_fraction", FRONT_SPAR_DEFAULT)
    rear = t.fraction("rear_spar_fraction", REAR_SPAR_DEFAULT)
    if not front < rear:
        t.fail("rear_spar_fraction", f"must lie aft of front_spar_fraction ({rear:g} <= {front:g})")
    depth = t.fraction("cap_depth_factor")
    if depth is not None and depth <= 0.0:
        t.fail("cap_depth_factor", "must be > 0")
    return StructureSpec(mesh=mesh, material=None if material is None else material.lower(),
                         sigma_allow_Pa=None if sigma is None else sigma * MPA,
                         tau_allow_Pa=None if tau is None else tau * MPA,
                         front_spar_fraction=front, rear_spar_fraction=rear,
                         cap_depth_factor=depth)


__all__ = ["StructureSpec", "read_structure"]
