"""Rolling, flaps-down and tail-trimmed cases through a whole run of the sample (which has an
aileron, a flap, a tailplane and a c.g. range), and the bad inputs of their case-file keys.

Signs (geomload.aero.roll): rolling moment positive right (starboard) wing down; a positive
aileron deflection is port trailing edge down, starboard up; tail load positive up.
"""

from __future__ import annotations
from helpers.nothinglost import refused_run
from helpers.paths import ROOT

import dataclasses
import json
import math
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from geomload.config import read_case_file
from geomload.loads.beam import integrate
from geomload.pipeline import compute, write_run
from geomload.units import G0
from helpers.validation import check

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"
STL = ROOT / "sample_geometry" / "pellin_half_wing_mm.stl"


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    result = compute(read_case_file(SAMPLE))
    out = tmp_path_factory.mktemp("unsym") / "run"
    write_run(result, out, render=False)
    return result, out


def _trapz(y, f):
    return float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(y)))


def test_the_sample_has_every_kind_of_case(run):
    result, _ = run
    kinds = {c.kind for c in result.cases}
    assert kinds == {"symmetric", "rolling", "rolling_initial", "flaps"}
    assert all(c.tail_load_N is not None for c in result.cases)


def test_whole_aircraft_force_balance_with_the_tail(run):
    """n W = wing normal force (both sides, integrated from the loads of each side) + tail load,
    in every trimmed case (the simplified rolling cases scale the airload by rule instead)."""
    result, _ = run
    worst, n_cases = 0.0, 0
    for c in result.cases:
        if c.control is not None and c.control.side_factors != (1.0, 1.0):
            continue
        nw = c.load_factor * c.mass_kg * G0
        total = c.wing_normal_force_N + c.tail_load_N
        assert total == pytest.approx(nw, rel=1e-3, abs=1e-3 * c.mass_kg * G0), c.name
        worst = max(worst, abs(total - nw) / (c.mass_kg * G0))
        n_cases += 1
    assert n_cases > 80
    c = next(c for c in result.cases if c.name == "roll_V_A_right cg aft")
    check("static longitudinal equilibrium (Etkin & Reid, Dynamics of Flight): n W = wing "
          "normal force + tail load", "sample roll at V_A, aft c.g.: wing + tail (N)",
          c.load_factor * c.mass_kg * G0, c.wing_normal_force_N + c.tail_load_N, rel=1e-3)


def test_each_side_is_in_equilibrium(run):
    """Cantilever statics per side: the root reaction equals the sum of the side's loads."""
    result, _ = run
    for c in result.cases:
        for side, s in c.sides:
            assert s.equilibrium.residual < 1e-9, (c.name, side)
            assert s.case.endswith(side) or side == "semispan"


def test_rolling_moment_of_the_side_airloads_balances_in_steady_roll(run):
    """Steady roll: the rolling moment of the two sides' airloads on the load grid equals the
    aileron plus damping moments of the lattice (whose sum is zero there), within 1 % of the
    aileron moment (Etkin & Reid, steady roll: Cl_delta delta + Cl_p pb/2V = 0)."""
    result, _ = run
    rolls = [c for c in result.cases if c.kind == "rolling" and c.control is not None
             and math.isfinite(c.control.Cl_p)]
    assert len(rolls) == 12
    for c in rolls:
        k = c.control
        assert k.Cl_p < 0 and k.Cl_delta_per_rad > 0
        assert np.sign(k.pb_2V) == np.sign(dict(k.deflections_deg)["aileron"])
        check("steady roll, Etkin & Reid (Dynamics of Flight): airload rolling moment = "
              "aileron + damping moments", f"{c.name}: Cl of the side airloads",
              k.Cl_aileron + k.Cl_damping, k.Cl_airload, abs=0.01 * abs(k.Cl_aileron))


def test_initial_roll_cases_carry_the_aileron_moment_alone(run):
    """At the instant of the sudden deflection (no roll rate yet) the rolling moment of the two
    sides' airloads on the load grid is the aileron's alone, Cl_delta delta, within 1 % (linear
    lattice superposition, common practice, no source); the down-aileron side then carries
    more root bending than in the steady roll at the same speed, c.g. and deflection."""
    result, _ = run
    by_name = {c.name: c for c in result.cases}
    ini = [c for c in result.cases if c.kind == "rolling_initial"]
    assert len(ini) == 12  # 3 speeds x 2 senses x 2 c.g.
    for c in ini:
        k = c.control
        assert k.pb_2V == 0.0 and k.Cl_damping == 0.0 and k.Cl_aileron != 0.0
        check("linear lattice superposition (common practice, no source): initial roll",
              f"{c.name}: Cl of the side airloads vs Cl_delta delta", k.Cl_aileron,
              k.Cl_airload, rel=0.01)
        steady = by_name[c.name.replace("_initial", "")]
        down = "port" if dict(k.deflections_deg)["aileron"] > 0 else "starboard"
        b_ini, b_std = (dict(x.sides)[down].bending_Nm[0] for x in (c, steady))
        assert b_ini > 1.1 * b_std, c.name


def _airload_root_bending(s):
    """Root bending of one side from its airloads alone (inertia and point loads removed)."""
    a = dataclasses.replace(s.applied, inertia_N_per_m=np.zeros_like(s.y), point_loads=())
    p = s.spar_points_m
    return float(integrate(s.y, p[:, 0], p[:, 2], a).bending_Nm[0])


def test_simplified_rolling_side_factor(run):
    """14 CFR 23.349(a)(1) (pre-2017, from memory): 100 % of the semispan airload on one side,
    75 % on the other (normal category): the airload-only root bending ratio."""
    result, _ = run
    simp = [c for c in result.cases if c.control is not None
            and c.control.side_factors != (1.0, 1.0)]
    assert len(simp) == 4
    for c in simp:
        b = {side: _airload_root_bending(s) for side, s in c.sides}
        lo, hi = sorted(b.values())
        check("14 CFR 23.349(a)(1), pre-2017, from memory: less loaded side 75 %",
              f"{c.name}: airload root bending ratio", 0.75, lo / hi, rel=1e-3)


def test_flaps_down_cases_follow_the_rule(run):
    """23.345(a) (pre-2017, from memory): n = 2.0 at V_F with the flaps down; the flapped wing
    carries more lift inboard than the clean wing at the same load factor."""
    from geomload.aero.lattice import build_lattice
    from geomload.aero.solve import AeroModel

    result, _ = run
    man = [c for c in result.cases if c.kind == "flaps" and c.name.startswith("flaps_maneuver")]
    assert len(man) == 2
    spec = read_case_file(SAMPLE).lattice
    lat = build_lattice(result.stations, n_span=spec.n_span, n_chord=spec.n_chord,
                        spacing=spec.spacing)
    for c in man:
        assert c.load_factor == 2.0 and c.v_eas == pytest.approx(25.0)
        st, po = c.sides[0][1], c.sides[1][1]
        assert st.bending_Nm[0] == pytest.approx(po.bending_Nm[0], rel=1e-9)  # symmetric flap
        inboard = st.y < 1.1
        share_in = _trapz(st.y[inboard], st.lift_N_per_m[inboard]) / _trapz(st.y, st.lift_N_per_m)
        # the clean wing at the same wing CL (the case's aero is the flapped state's)
        model = AeroModel(lat, mach=c.mach)
        sol = model.solve(model.alpha_for_cl(c.aero.CL))
        assert c.aero.CL == pytest.approx(c.control.CL, rel=1e-12)
        clean, y = sol.lift_per_q, np.asarray(sol.y)
        w = np.diff(np.concatenate([[0.0], 0.5 * (y[1:] + y[:-1]), [y[-1]]]))
        share_clean = float(np.sum((clean * w)[y < 1.1]) / np.sum(clean * w))
        assert share_in > share_clean + 0.01


def test_outputs_contract(run):
    result, out = run
    summary = json.loads((out / "summary.json").read_text())
    # the structural hand-off's warnings (sizing) are listed with the run's
    assert any(w.startswith("sizing: ") for w in summary["warnings"]), summary["warnings"]
    keys = {"root_shear_N", "root_bending_Nm", "root_torsion_Nm", "root_shear_ult_N",
            "root_bending_ult_Nm", "root_torsion_ult_Nm", "equilibrium_residual"}
    for c in summary["cases"]:
        assert c["kind"] in ("symmetric", "rolling", "rolling_initial", "flaps")
        assert "tail_load_N" in c and "wing_normal_force_N" in c
        if c["kind"] != "symmetric":
            assert set(c["sides"]) == {"starboard", "port"}
            for s in c["sides"].values():
                assert keys <= set(s)
    ctl = next(c for c in summary["cases"] if c["name"] == "roll_V_C_left cg fwd")["control"]
    assert ctl["Cl_delta_a_per_rad"] > 0 and ctl["Cl_p"] < 0 and ctl["pb_2V"] < 0
    files = {p.name for p in (out / "loads").glob("*.csv")}
    assert {"roll_V_D_right_cg_aft__starboard.csv", "roll_V_D_right_cg_aft__port.csv",
            "roll_V_A_left_initial_cg_fwd__port.csv", "flaps_gust_up_cg_fwd__port.csv"} <= files
    kinds = {c["name"]: c["kind"] for c in summary["cases"]}
    assert kinds["roll_V_A_left_initial cg fwd"] == "rolling_initial"
    assert kinds["roll_V_A_left cg fwd"] == "rolling"
    env = result.envelope
    for c in result.cases:
        for _, s in c.sides:
            for q in ("shear_N", "bending_Nm", "torsion_Nm"):
                assert np.all(env.maximum[q] >= getattr(s, q) - 1e-12)
                assert np.all(env.minimum[q] <= getattr(s, q) + 1e-12)
    governing = {n for q in env.max_case for n in env.max_case[q]}
    assert any(n.endswith("__port") for n in governing) or any(
        n.endswith("__starboard") for n in governing)
    assert "Kind of case governing each station" in (out / "report.html").read_text()


def test_schrenk_with_twist_close_to_the_lattice(run):
    """Schrenk's method with the basic loading (NACA TM 948, 1940) against the lattice: the
    semispan lift's first moment (root bending of the airload) of the 1 g cruise, within the
    method's few per cent (Schrenk's own comparisons; from memory)."""
    result, _ = run
    c = next(c for c in result.cases if c.name == "cruise 1g survey cg aft")
    L = c.loads
    check("Schrenk with twist, NACA TM 948 (1940): few per cent of lifting-surface theory",
          "cruise 1 g: first moment of the semispan lift, Schrenk vs lattice (N m)",
          _trapz(L.y, L.lift_N_per_m * L.y), _trapz(L.y, L.schrenk_lift_N_per_m * L.y), rel=0.03)


# ------------------------------------------------------------------------------- bad input
BAD = {
    "surface outside the span": (("y_to_m = 1.70", "y_to_m = 2.50"), "control_surface"),
    "aileron overlaps flap": (("y_to_m = 1.10", "y_to_m = 1.30"), "control_surface"),
    "hinge at the trailing edge": (("hinge_fraction = 0.75\ndelta_min_deg = -18.0",
                                    "hinge_fraction = 1.0\ndelta_min_deg = -18.0"),
                                   "hinge_fraction"),
    "c.g. far outside the MAC": (("x_m = [0.10, 0.14]", "x_m = [0.10, 0.60]"), "cg.x_m"),
    "tail arm zero": (("x_ac_m = 1.25", "x_ac_m = 0.14"), "tail.x_ac_m"),
    "unknown aileron": (('aileron = "aileron"\nmethods', 'aileron = "elevon"\nmethods'),
                        "rolling.aileron"),
}


@pytest.mark.parametrize("label", sorted(BAD))
def test_bad_control_inputs_one_line_exit_1_nothing_written(label, tmp_path):
    (old, new), key = BAD[label]
    text = SAMPLE.read_text()
    assert old in text
    case = tmp_path / "bad.toml"
    case.write_text(text.replace(old, new).replace('file = "pellin_half_wing_mm.stl"',
                                                   f'file = "{STL.as_posix()}"'))
    out = tmp_path / "out"
    lines = [refused_run(case, out)]  # exit 1, one line, no traceback
    assert key in lines[0] and str(case) in lines[0], lines[0]
    assert not out.exists()


def test_deflection_beyond_linear_theory_warns(tmp_path):
    text = SAMPLE.read_text().replace("delta_max_deg = 25.0", "delta_max_deg = 35.0")
    case = tmp_path / "warn.toml"
    case.write_text(text.replace('file = "pellin_half_wing_mm.stl"', f'file = "{STL.as_posix()}"')
                    .replace("[rolling]", "[rolling_off]").replace("[flaps]", "[flaps_off]"))
    text2 = case.read_text()
    # keep only the surfaces and the tail: the warning comes from the surface limits
    text2 = text2.split("[rolling_off]")[0] + "[tail]" + text2.split("[tail]")[1]
    case.write_text(text2)
    from geomload.config.controls_parse import check_controls_against_wing

    c = read_case_file(case)
    warns = check_controls_against_wing(c.controls, 1.8, 0.28, 0.056)
    assert len(warns) == 1 and "35 deg exceeds 30 deg" in warns[0] and "flap" in warns[0]


def test_aileron_torsion_increment_against_the_rule(run):
    """23.349 (pre-2017, from memory): the aileron's effect on wing torsion may be taken as a
    section moment increment delta_cm = -0.01 delta (deg) over the aileron span; the lattice's
    own increment on the down-aileron side (antisymmetric part of the two sides' section
    moments) agrees within the rule's rough accuracy (5 %, common practice, no source)."""
    result, _ = run
    rolls = [c for c in result.cases if c.control is not None and math.isfinite(c.control.Cl_p)]
    for c in rolls:
        k = c.control
        assert k.aileron_torsion_rule_Nm < 0  # nose-down on the down-aileron side
        check("14 CFR 23.349, pre-2017, from memory: delta_cm = -0.01 delta over the aileron",
              f"{c.name}: aileron torsion increment, lattice vs rule (N m)",
              k.aileron_torsion_rule_Nm, k.aileron_torsion_lattice_Nm, rel=0.05)


def test_unsymmetric_case_aero_is_the_deflected_state(run):
    """The CL, CDi, e, Cm and strip loads a rolling or flaps-down case reports are those of its
    own lattice state (deflections and roll rate), not of the clean wing: the starboard strips'
    lift equals the starboard loads' airload (the same solution moved onto the load grid;
    trapezoidal integration on both, common practice, no source)."""
    result, _ = run
    lattice_cases = [c for c in result.cases if c.kind in ("rolling", "rolling_initial", "flaps")
                     and c.control is not None and c.control.side_factors == (1.0, 1.0)]
    assert len(lattice_cases) >= 20
    for c in lattice_cases:
        assert c.aero.CL == pytest.approx(c.control.CL, rel=1e-12), c.name
        y = np.asarray(c.aero.y)
        w = np.diff(np.concatenate([[0.0], 0.5 * (y[1:] + y[:-1]), [result.stations.semispan]]))
        strips = float(np.sum(c.aero.lift_per_q * w)) * c.q_pa
        loads = _trapz(c.loads.y, c.loads.applied.lift_N_per_m)
        assert strips == pytest.approx(loads, rel=2e-3, abs=0.5), c.name


def test_lift_share_is_the_share_carried_with_a_tail(run, tmp_path):
    """With [tail] and [cg] the wing force comes from the pitch trim, so each case reports the
    share of n W it carries (wing force / n W; rigid-body statics, common practice, no
    source), and a lift_share written in the file is named as not used."""
    from geomload.pipeline_controls import unused_lift_shares

    result, _ = run
    trimmed = [c for c in result.cases if c.tail_load_N is not None and c.kind == "symmetric"]
    assert len(trimmed) > 20
    for c in trimmed:
        nw = c.load_factor * c.mass_kg * G0
        if c.load_factor == 0.0:  # no share of zero: the wing carries the tail's balance
            assert math.isnan(c.lift_share), c.name
            continue
        assert c.lift_share * nw == pytest.approx(c.wing_normal_force_N, rel=2e-3), c.name
    assert any(abs(c.lift_share - 1.0) > 0.01 for c in trimmed)  # the tail load is not zero
    text = SAMPLE.read_text().replace('name = "launch pull-up"',
                                      'name = "launch pull-up"\nlift_share = 1.05', 1)
    p = tmp_path / "share.toml"
    p.write_text(text.replace('file = "pellin_half_wing_mm.stl"', f'file = "{STL.as_posix()}"'))
    case = read_case_file(p)
    (w,) = unused_lift_shares(case, case.load_cases)
    assert "'launch pull-up' (1.05) is not used" in w and "[tail]" in w


def test_flap_speed_and_cg_messages_name_the_keys_of_the_file(tmp_path):
    """A V_F below the 23.345(b) minimum (pre-2017, from memory: max(1.4 V_S, 1.8 V_SF)) is
    refused naming flaps.v_f and the file; a c.g. aft of the MAC is accepted with a warning
    (common practice, no source: usual c.g. ranges lie within the MAC)."""
    from geomload.config.controls_parse import check_controls_against_wing
    from geomload.errors import CaseError

    text = SAMPLE.read_text().replace('file = "pellin_half_wing_mm.stl"',
                                      f'file = "{STL.as_posix()}"')
    assert "v_f = " in text
    bad = tmp_path / "vf.toml"
    bad.write_text(re.sub(r"(?m)^v_f = .*$", 'v_f = "5 m/s"', text, count=1))
    with pytest.raises(CaseError, match=r"vf\.toml: flaps\.v_f: 5 m/s is below the 23\.345"):
        compute(read_case_file(bad))
    case = read_case_file(SAMPLE)
    spec = dataclasses.replace(case.controls, cg_x_m=(case.controls.cg_x_m[0], 0.40))
    warns = check_controls_against_wing(spec, 1.8, 0.28, 0.0559, "c.toml")
    assert any("(aft): c.g. at 0.4 m is 123 % MAC, outside the MAC" in w for w in warns)
