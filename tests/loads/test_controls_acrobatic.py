"""Acrobatic category rolling conditions, 14 CFR 23.349(a)(1) (pre-2017, from memory): the
simplified unsymmetric airload (100 % on one side, 60 % on the other) in conditions A and F,
condition F being the negative-maneuver corner of the 23.333(d) V-n diagram at V_C (the
negative limit maneuvering load factor; from memory)."""

from __future__ import annotations
from helpers.paths import ROOT

import dataclasses
from pathlib import Path

import numpy as np
import pytest

from geomload.config import read_case_file
from geomload.errors import CaseError
from geomload.loads.beam import integrate
from geomload.loads.rules_unsymmetric import simplified_rolling_cases
from geomload.pipeline import compute
from helpers.validation import check

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
STL = ROOT / "sample_geometry" / "pellin_half_wing_mm.stl"
R349 = "14 CFR 23.349(a)(1), pre-2017, from memory: acrobatic, 60 % on the other side"


def test_condition_f_cases_from_the_rule():
    cases = simplified_rolling_cases("acrobatic", 40.0, 6.0, v_f_neg=55.0, n_neg=-3.0)
    f = {c.name: c for c in cases if "_F_" in c.name}
    assert set(f) == {"roll_simplified_F_starboard", "roll_simplified_F_port"}
    for c in f.values():
        assert (c.speed_label, c.v_eas_m_s, c.load_factor) == ("V_C", 55.0, -3.0)
        assert sorted((c.factor_starboard, c.factor_port)) == [0.6, 1.0]
    with pytest.raises(CaseError, match="^load_factor.n_neg"):
        simplified_rolling_cases("acrobatic", 40.0, 6.0, v_f_neg=55.0, n_neg=1.0)
    with pytest.raises(CaseError, match="^rolling: acrobatic category needs condition F"):
        simplified_rolling_cases("acrobatic", 40.0, 6.0)
    # the other categories have condition A only
    assert {c.name for c in simplified_rolling_cases("utility", 40.0, 4.4)} == \
        {"roll_simplified_A_starboard", "roll_simplified_A_port"}


def _airload_root_bending(s):
    a = dataclasses.replace(s.applied, inertia_N_per_m=np.zeros_like(s.y), point_loads=())
    p = s.spar_points_m
    return float(integrate(s.y, p[:, 0], p[:, 2], a).bending_Nm[0])


def test_acrobatic_sample_runs_conditions_a_and_f(tmp_path):
    """The sample as acrobatic (simplified method only, no flaps, no tail, a coarse lattice):
    condition F at V_C and the envelope's negative limit factor, 60 % on the less loaded side
    (airload-only root bending ratio within 0.1 %)."""
    text = SAMPLE.read_text().replace('file = "pellin_half_wing_mm.stl"',
                                      f'file = "{STL.as_posix()}"')
    head, rest = text.split("[rolling]")
    rest = rest[rest.index("[[load_case]]"):]
    text = (head + '[rolling]\ncategory = "acrobatic"\naileron = "aileron"\n'
            'methods = ["simplified"]\n\n' + rest)
    text = text.replace("n_span = 40\nn_chord = 10", "n_span = 16\nn_chord = 6")
    text = text.replace('altitudes = ["0 m", "1500 m"]\nmin_mass_kg = 19.4',
                        'altitudes = ["0 m"]')
    case = tmp_path / "acro.toml"
    case.write_text(text)
    result = compute(read_case_file(case))
    env = result.vn[0]
    simp = {c.name: c for c in result.cases if c.name.startswith("roll_simplified")}
    assert set(simp) == {f"roll_simplified_{p}_{s}" for p in "AF"
                         for s in ("starboard", "port")}
    for name, c in simp.items():
        assert c.kind == "rolling"
        if "_F_" in name:
            assert c.load_factor == env.n_neg == -2.0
            assert c.v_eas == pytest.approx(env.speeds.v_cruise, rel=1e-12)
        b = {side: _airload_root_bending(s) for side, s in c.sides}
        lo, hi = sorted(b.values(), key=abs)
        check(R349, f"{name}: airload root bending ratio, less / more loaded side", 0.60,
              lo / hi, rel=1e-3)
        heavy = name.rsplit("_", 1)[1]
        assert abs(b[heavy]) == abs(hi)
    assert simp["roll_simplified_F_port"].loads.bending_Nm[0] < 0  # negative n: tip down
