"""Units of CAD formats: IGES honours its unit flag, `units=` overrides a file's own unit.

The IGES files are written by tests/igeswriter.py from the IGES 5.3 specification (global
parameter 14 is the unit flag: 1 inch, 2 millimetre, 6 metre) through the surface of a NACA
wing (NACA Report 460 / 824 equations, tests/wingfactory.py); each is read by the real CAD
kernel. Unit factors exact: 1 in = 25.4 mm (international yard and pound agreement, 1959).
"""

from helpers.paths import ROOT
import os
import signal
import subprocess
import sys
import time

import numpy as np
import pytest

from geomload.geometry import read_wing
from geomload.geometry.readers.brep import iges_unit
from helpers.igeswriter import write_iges
from helpers.validation import check
from helpers.wingfactory import design, expected_stations

NACA = "NACA Report 460 / 824 equations, farthest-point chord line"


def _wing_grids(d, unit_scale, n_span=4):
    """Two (nv, nu, 3) point grids, upper and lower surface (the lower one closed by the blunt
    trailing-edge face), spanwise rows, in the given unit (metres / unit_scale)."""
    from helpers.aircraftfactory import section_ring

    ys = d["semispan"] * np.linspace(0.0, 1.0, n_span)
    rings = np.asarray([section_ring(d, y, n=14) for y in ys]) / unit_scale
    h = (rings.shape[1] + 1) // 2  # upper TE -> LE, then LE -> lower TE -> upper TE
    return [rings[:, :h], np.concatenate([rings[:, h - 1:], rings[:, :1]], axis=1)]


@pytest.mark.parametrize("unit,scale", [("mm", 1e-3), ("in", 0.0254)])
def test_iges_unit_flag_is_honoured(tmp_path, unit, scale):
    d = design(sweep_le_deg=4.0, dihedral_deg=3.0, washout_deg=3.0)
    p = tmp_path / f"wing_{unit}.igs"
    write_iges(p, _wing_grids(d, scale), unit)
    assert iges_unit(p) == pytest.approx(scale, rel=1e-12)
    w = read_wing(p, n_stations=11)
    assert w.mesh.units == "file"
    st, pf = w.stations, w.planform
    ex = expected_stations(d, st.y)
    k = int(np.argmax(np.abs(st.chord / ex["chord"] - 1)))
    check(NACA, f"IGES in {unit}: chord (m), worst station", ex["chord"][k], st.chord[k], rel=0.01)
    tw = (st.twist_deg - st.twist_deg[0]) - (ex["twist"] - ex["twist"][0])
    k = int(np.argmax(np.abs(tw)))
    check(NACA, f"IGES in {unit}: twist relative to the root (deg), worst station",
          ex["twist"][k] - ex["twist"][0], st.twist_deg[k] - st.twist_deg[0], abs=0.25)
    check("design span", f"IGES in {unit}: span (m)", d["span"], pf.span, rel=0.005)
    check("design dihedral", f"IGES in {unit}: dihedral (deg)", d["dihedral_deg"],
          pf.dihedral_deg, abs=0.3)


def test_units_override_the_iges_unit_and_say_so(tmp_path):
    d = design()
    p = tmp_path / "wing_mm.igs"
    write_iges(p, _wing_grids(d, 1e-3), "mm")
    w = read_wing(p, units="cm", n_stations=7)
    assert any(x.kind == "units" and "overrides" in x.text for x in w.warnings)
    # the numbers in the file read as cm instead of mm: ten times the span (SI prefixes)
    check("SI prefixes (cm = 10 mm)", "span read in cm (m)", 10 * d["span"], w.planform.span, rel=0.005)


def test_cad_kernel_child_ends_with_its_parent(tmp_path):
    # a parent process reading a STEP file is killed by SIGTERM while its kernel child runs;
    # the child must not outlive it (it asks for SIGKILL on its parent's death)
    big = tmp_path / "slow.step"
    src = os.path.join(str(ROOT), "sample_geometry",
                       "pellin_half_wing.step")
    big.write_bytes(open(src, "rb").read())
    code = ("import sys; sys.path.insert(0, %r)\n"
            "import geomload.geometry.readers.brep as b\n"
            "b._CHILD = 'import time\\n' + b._CHILD.replace('try:\\n    import cascadio', "
            "'time.sleep(60)\\ntry:\\n    import cascadio', 1)\n"
            "b.brep_to_glb(%r, '.step')\n") % (os.getcwd(), str(big))
    parent = subprocess.Popen([sys.executable, "-c", code])
    child = None
    for _ in range(200):
        time.sleep(0.05)
        out = subprocess.run(["pgrep", "-P", str(parent.pid)], capture_output=True, text=True).stdout.split()
        if out:
            child = int(out[0])
            break
    assert child is not None, "the kernel child did not start"
    parent.send_signal(signal.SIGTERM)
    parent.wait(timeout=10)
    for _ in range(100):
        if not os.path.exists(f"/proc/{child}") or open(f"/proc/{child}/stat").read().split()[2] == "Z":
            break
        time.sleep(0.05)
    alive = os.path.exists(f"/proc/{child}") and open(f"/proc/{child}/stat").read().split()[2] != "Z"
    if alive:
        os.kill(child, signal.SIGKILL)
    assert not alive, "the CAD-kernel child outlived its parent"
