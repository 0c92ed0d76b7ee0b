"""The bundled sample without its control surfaces, tail and c.g. range: the symmetric cases
with a constant lift share (1.05 on the launch pull-up: a tail down-load carried by the wing),
for tests of the symmetric physics."""

from __future__ import annotations
from helpers.paths import ROOT

from pathlib import Path

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"


def symmetric_text(text: str | None = None) -> str:
    """The sample's text without the [[control_surface]], [rolling], [flaps], [tail] and [cg]
    sections (they stand together before the first [[load_case]]), geometry at its absolute
    path."""
    text = SAMPLE.read_text() if text is None else text
    i, j = text.index("[[control_surface]]"), text.index("[[load_case]]")
    stl = (SAMPLE.parent / "pellin_half_wing_mm.stl").as_posix()
    text = (text[:i] + text[j:]).replace('file = "pellin_half_wing_mm.stl"', f'file = "{stl}"')
    pull = 'name = "launch pull-up"'
    k = text.index("load_factor = 2.5\n", text.index(pull))
    k += len("load_factor = 2.5\n")
    return text[:k] + "lift_share = 1.05          # tail down-load carried by the wing\n" + text[k:]


def symmetric_sample(folder) -> Path:
    """Write the symmetric sample into folder; returns its path."""
    p = Path(folder) / "pellin_symmetric.toml"
    p.write_text(symmetric_text())
    return p
