"""Allowables of the spar-sizing starting point: a small table of typical materials, every value
from memory (not a handbook look-up): the user must verify them. Plain data, read by the case
file's [structure] check and by the sizing (geomload.export.sizing)."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Material:
    """An allowable set: sigma_allow_Pa for the caps (ultimate, the lower of tension and
    compression), tau_allow_Pa (ultimate shear) for web and skins, and where the values are from."""

    name: str
    sigma_allow_Pa: float
    tau_allow_Pa: float
    source: str


# Typical ultimate allowables; every value from memory (not a handbook look-up): verify.
MATERIALS = {
    "al-2024-t3": Material("al-2024-t3", 430e6, 270e6, "from memory: aluminium 2024-T3 sheet, "
                           "Ftu about 430 MPa, Fsu about 270 MPa"),
    "al-7075-t6": Material("al-7075-t6", 520e6, 315e6, "from memory: aluminium 7075-T6, "
                           "Ftu about 520 MPa, Fsu about 315 MPa"),
    "al-6061-t6": Material("al-6061-t6", 290e6, 185e6, "from memory: aluminium 6061-T6, "
                           "Ftu about 290 MPa, Fsu about 185 MPa"),
    "ti-6al-4v": Material("ti-6al-4v", 900e6, 550e6, "from memory: titanium Ti-6Al-4V annealed, "
                          "Ftu about 900 MPa, Fsu about 550 MPa"),
    "cfrp-ud": Material("cfrp-ud", 600e6, 150e6, "from memory: carbon/epoxy, unidirectional caps "
                        "(compression-limited) about 600 MPa, +-45 web shear about 150 MPa"),
    "spruce": Material("spruce", 65e6, 7.5e6, "from memory: Sitka spruce, modulus of rupture "
                       "about 65 MPa, shear parallel to grain about 7.5 MPa"),
}


__all__ = ["Material", "MATERIALS"]
