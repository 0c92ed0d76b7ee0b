"""Case values checked against the wing they load (nothing silently wrong): positions beyond the
span, a spar outside the section, a mass table short of the tip, flying masses lighter than the
structure they carry, and the structure's own rib stations as the reported rows.

Each refusal is one line naming the case file and key (the project's bad-input rule). The rib
rows are checked against the definition of the grid: every rib is a row, and a point load on a
rib shows both sides of its shear step (statics: the shear jumps by the load there)."""

from __future__ import annotations
from helpers.paths import ROOT

import tomllib
from pathlib import Path

import numpy as np
import pytest

from geomload.config import read_case_file, toml_value
from geomload.errors import CaseError
from geomload.pipeline import compute

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
CACHE = {}  # the sample wing is read and cut once for the whole module


def _case(tmp_path, *edits, append=""):
    text = SAMPLE.read_text(encoding="utf-8")
    geo = tomllib.loads(text)["geometry"]["file"]
    text = text.replace(f'"{geo}"', toml_value(str((SAMPLE.parent / geo).resolve())), 1)
    for old, new in edits:
        assert old in text, old
        text = text.replace(old, new, 1)
    p = tmp_path / "case.toml"
    p.write_text(text + append, encoding="utf-8")
    return p


def _only_envelope_off(tmp_path, *edits, append=""):
    """The sample without its [envelope] (fewer cases: the checks are what is tested), nor the
    control surfaces and tail whose rolling and flaps-down cases need the envelope."""
    text = SAMPLE.read_text(encoding="utf-8")
    start = text.index("[envelope]")
    end = text.index("\n[", start + 1)
    controls = text[text.index("[[control_surface]]"):text.index("[[load_case]]")]
    return _case(tmp_path, (text[start:end], ""), (controls, ""), *edits, append=append)


def _refused(path, key, fragment):
    with pytest.raises(CaseError) as err:
        compute(read_case_file(path), cache=CACHE)
    msg = str(err.value)
    assert msg.startswith(str(path)) and f"{key}:" in msg and fragment in msg, msg
    assert "\n" not in msg


@pytest.fixture(scope="module")
def semispan(tmp_path_factory):
    p = _only_envelope_off(tmp_path_factory.mktemp("sample"))
    return compute(read_case_file(p), cache=CACHE).stations.semispan


def test_point_mass_exactly_at_the_tip_is_valid(tmp_path, semispan):
    p = _only_envelope_off(tmp_path, ("y_m = 1.25", f"y_m = {semispan!r}"))
    r = compute(read_case_file(p), cache=CACHE)
    assert r.cases[0].loads.y[-1] == pytest.approx(semispan, rel=1e-6)


def test_point_mass_beyond_the_tip_is_refused(tmp_path, semispan):
    p = _only_envelope_off(tmp_path, ("y_m = 1.25", f"y_m = {semispan * 1.001!r}"))
    _refused(p, "point_mass[1].y_m", "beyond the tip")


def test_spar_line_behind_the_wing_is_refused(tmp_path):
    p = _only_envelope_off(tmp_path, ("chord_fraction = 0.28",
                                      "line = [[0.0, 2.3, 0.0], [1.8, 2.3, 0.0]]"))
    _refused(p, "spar.line", "outside the section")


def test_wing_mass_table_short_of_the_tip_is_refused(tmp_path):
    p = _only_envelope_off(tmp_path, ('total_kg = 3.4             # both sides\n'
                                      'distribution = "chord"',
                                      'distribution = "table"\ntable = [[0.0, 1.2], [1.0, 0.6]]'))
    _refused(p, "wing_mass.table", "short of the tip")


def test_flying_mass_below_the_structure_is_refused(tmp_path):
    # wing 3.4 kg + 2 x (0.12 + 0.85) kg of point masses = 5.34 kg
    p = _case(tmp_path, ("min_mass_kg = 19.4", "min_mass_kg = 5.0"))
    with pytest.raises(CaseError, match=r"envelope\.min_mass_kg: 5 kg is less than the wing "
                                        r"structure and point masses .* \(5\.34 kg\)"):
        read_case_file(p)


def test_rib_outside_the_span_is_refused(tmp_path, semispan):
    p = _only_envelope_off(tmp_path, ("chord_fraction = 0.28",
                                      f"chord_fraction = 0.28\nrib_y_m = [0.0, {semispan + 0.2!r}]"))
    _refused(p, "spar.rib_y_m", "outside the span")


def test_rib_stations_are_the_reported_rows(tmp_path, semispan):
    ribs = [0.0, 0.3, 0.55, 0.9, 1.4, semispan]  # 0.55: the camera pod sits on this rib
    p = _only_envelope_off(tmp_path, ("chord_fraction = 0.28",
                                      f"chord_fraction = 0.28\nrib_y_m = {ribs!r}"))
    r = compute(read_case_file(p), cache=CACHE)
    loads = r.cases[0].loads
    y = loads.y[loads.rows]
    # every rib is a row; the pod's rib twice (its step), nothing else
    assert len(y) == len(ribs) + 1
    for rib in ribs:
        assert np.min(np.abs(y - rib)) <= 1e-6 * semispan
    k = int(np.argmin(np.abs(y - 0.55)))
    pod = 0.85 * 9.80665 * r.cases[0].load_factor  # inertia of the pod, N (statics)
    assert y[k + 1] - y[k] <= 2e-6 * semispan
    # the shear is normal to the (dihedral) spar: the step is the pod's inertia along that
    # normal; the distributed loads over the 2e-6 semi-span gap add less than 1e-4 of it
    normal_z = loads.axis_n[loads.rows][k, 2]
    assert loads.shear_N[loads.rows][k] - loads.shear_N[loads.rows][k + 1] == pytest.approx(
        -pod * normal_z, rel=1e-4)
    assert np.array_equal(r.envelope.rows, loads.rows)
