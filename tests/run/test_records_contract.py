"""The records between stages: frozen, typed, checked when built (the contract of
geomload.records; a software contract, no external source needed for these checks)."""

import dataclasses

import numpy as np
import pytest

from geomload.errors import InputError
from geomload.records import (AeroSolution, CaseResult, ControlState, Lattice, LoadsEnvelope,
                              RunResult, SpanLoads, TrimState)
from helpers import fakerun


@pytest.fixture(scope="module")
def run():
    return fakerun.make_run(("cruise 1g", "pull-up +3.8g"))


def test_old_and_new_import_paths_name_the_same_records():
    from geomload.aero import records as aero_records
    from geomload.loads import case_records, envelope_records
    from geomload.loads import records as loads_records
    from geomload.run_result import RunResult as run_result

    assert Lattice is aero_records.Lattice and AeroSolution is aero_records.AeroSolution
    assert CaseResult is case_records.CaseResult and ControlState is case_records.ControlState
    assert LoadsEnvelope is envelope_records.LoadsEnvelope is loads_records.LoadsEnvelope
    assert RunResult is run_result


def test_records_are_frozen(run):
    with pytest.raises(dataclasses.FrozenInstanceError):
        run.cases[0].loads.case = "other"
    with pytest.raises(TypeError):  # a read-only mapping
        run.timings["export"] = 1.0


def test_a_record_refuses_a_field_of_the_wrong_type(run):
    cr = run.cases[0]
    with pytest.raises(TypeError, match="loads"):
        dataclasses.replace(cr, loads=object())
    with pytest.raises(TypeError, match="trim"):
        dataclasses.replace(cr.loads, trim=object())
    with pytest.raises(ValueError, match="kind"):
        dataclasses.replace(cr, kind="sideways")
    with pytest.raises(TypeError, match="cases"):
        dataclasses.replace(run, cases=(cr, "not a case"))
    with pytest.raises(InputError, match="load_factor_axis"):
        TrimState(1.0, 100.0, "sideways", 10.0, 10.0, 0.1)


def test_a_record_refuses_arrays_of_the_wrong_shape(run):
    lat, cr = run.lattice, run.cases[0]
    with pytest.raises(InputError, match="lattice area"):
        dataclasses.replace(lat, area=lat.area[:-1])
    with pytest.raises(InputError, match="aero solution lift_per_q"):
        dataclasses.replace(cr.aero, lift_per_q=np.append(cr.aero.lift_per_q, 0.0))
    with pytest.raises(InputError, match="must be finite"):
        dataclasses.replace(cr.aero, gamma=np.full_like(cr.aero.gamma, np.nan))
    env = run.envelope
    with pytest.raises(InputError, match="output_rows"):
        dataclasses.replace(env, output_rows=np.ones(env.y.size + 1, bool))


def test_span_loads_keep_their_values_when_checked(run):
    loads = run.cases[1].loads
    again = SpanLoads(**{f.name: getattr(loads, f.name) for f in dataclasses.fields(loads)})
    for name in ("y", "shear_N", "bending_Nm", "torsion_Nm"):
        np.testing.assert_array_equal(getattr(again, name), getattr(loads, name))
