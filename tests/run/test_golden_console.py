"""Golden console text of `aero` and `run` on the sample wing (tests/golden/, rebuilt by
tests/golden/regenerate.py), and what the text must say whatever the numbers."""

import importlib.util
import re
from pathlib import Path

import pytest
from helpers.paths import GOLDEN
from helpers.validation import check

_SPEC = importlib.util.spec_from_file_location("golden_regenerate", GOLDEN / "regenerate.py")
regenerate = importlib.util.module_from_spec(_SPEC)
_SPEC.loader.exec_module(regenerate)


@pytest.fixture(scope="module")
def texts(tmp_path_factory):
    return {name: regenerate.console_text(args, tmp_path_factory.mktemp("g"))
            for name, args in regenerate.COMMANDS.items()}


@pytest.mark.parametrize("name", sorted(regenerate.COMMANDS))
def test_console_text_matches_golden(texts, name):
    expected = (GOLDEN / name).read_text(encoding="utf-8")
    assert texts[name] == expected, (
        f"console text of {name} changed; if intended, run tests/golden/regenerate.py and "
        "review the diff")


def test_aero_table_results_first_reference_last(texts):
    out = texts["aero_sample.txt"]
    rows = [ln.strip() for ln in out.splitlines() if ln.startswith("  ")]
    i_cl = next(i for i, r in enumerate(rows) if r.startswith("lift coefficient CL"))
    i_sref = next(i for i, r in enumerate(rows) if r.startswith("reference area S_ref"))
    assert i_cl < i_sref
    assert rows[0].split() == ["quantity", "value", "unit"]
    assert "Cm reference point" in out and "normal-force coefficient CN" in out
    assert "lift per q (N/m/Pa)" in out  # the dimensional running load comes first
    # CN = CL cos(a) + CDi sin(a) at alpha = 4 deg (definition of the force normal to the chord
    # line; common practice, no source)
    import math
    cl = float(re.search(r"lift coefficient CL\s+(-?[\d.]+)", out).group(1))
    cdi = float(re.search(r"induced drag coefficient CDi \(Trefftz plane\)\s+(-?[\d.]+)", out).group(1))
    cn = float(re.search(r"normal-force coefficient CN \(CL cos a \+ CDi sin a\)\s+(-?[\d.]+)", out).group(1))
    a = math.radians(4.0)
    check("definition: CN = CL cos(alpha) + CD sin(alpha)", "aero CN at 4 deg (-)",
          expected=cl * math.cos(a) + cdi * math.sin(a), measured=cn, rel=2e-4)


def test_run_text_groups_warnings_and_flags_stall(texts):
    out = texts["run_sample.txt"]
    err = out.split("=== stderr\n", 1)[1]
    # one line per kind of gust warning, not one per altitude
    assert err.count("envelope.gust_cruise") == 1 and "at 0 / 1500 m" in err
    assert all(not ln.startswith("geomload: note") for ln in err.splitlines())
    head = next(ln for ln in out.splitlines() if ln.startswith("case "))
    for col in ("n", "V_EAS", "mass", "CL", "CN"):
        assert re.search(rf"\s{col}\s", head + " "), col
    # at the positive stall corner of the V-n diagram the wing flies at its maximum normal-force
    # coefficient (14 CFR 23.333(b): the line OA is n = CN_max q S / W); the sample's is 1.35.
    # With the sample's tail the wing carries n W minus the balancing tail load, so the check runs
    # on the sample without its tail (the lift share case) ...
    import tempfile

    from helpers.sample_variants import symmetric_sample

    with tempfile.TemporaryDirectory() as tmp:
        sym = regenerate.console_text(["run", str(symmetric_sample(tmp)), "--out",
                                       regenerate.OUT_TOKEN, "--no-render"], tmp)
    row = next(ln for ln in sym.splitlines() if ln.startswith("pos-stall-corner-22kg-0m "))
    cn = float(row.split()[6])
    check("14 CFR 23.333(b): V-n stall corner at CN_max", "CN at the positive stall corner (-)",
          expected=1.35, measured=cn, rel=1e-3)
    # ... and with the tail the forward c.g. (tail down-load) needs a wing CN above it: flagged
    fwd = next(ln for ln in out.splitlines() if ln.startswith("pos-stall-corner-22kg-0m cg f"))
    assert "*" in fwd[:34] and float(fwd[34:].split()[5]) > 1.35
    crit = out.split("Critical cases", 1)[1]
    assert re.search(r"bending max\s+N·m\s", crit)
