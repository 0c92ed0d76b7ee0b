"""Lattice models of one lattice at several Mach numbers sharing one LU (`kept_factors`): the
later systems, solved by iterative refinement with the first one's factors, against the direct
solve of their own matrix (numpy.linalg.solve, LAPACK gesv)."""

import numpy as np

from helpers.aero_wings import trapezoid
from helpers.validation import check
from geomload.aero import kept_factors, symmetry
from geomload.aero.controls import ControlSurface
from geomload.aero.lattice import build_lattice
from geomload.aero.roll import ControlModel
from geomload.aero.solve import AeroModel

REFINEMENT = ("iterative refinement, Golub & Van Loan, Matrix Computations, 4th ed., sec. 3.5.3 "
              "(from memory); reference: numpy.linalg.solve of each model's own matrix")
# Two direct solves of the same system by different LU codes already differ by about 1e-16 x the
# condition number (about 100 here); the refinement stops below 1e-14 relative corrections.
ROUND_OFF = 1e-13


def _wing():
    return trapezoid(8.0, 0.5, 20.0, camber="2412", twist_tip_deg=-2.0, dihedral_deg=4.0)


def _rel(a, b):
    return float(np.abs(a - b).max() / np.abs(b).max())


def _small_thresholds(monkeypatch):
    """The size thresholds lowered so that small (fast) lattices take the large ones' path."""
    monkeypatch.setattr(kept_factors, "MIN_PANELS", 100)
    monkeypatch.setattr(symmetry, "MIN_PANELS", 0)


def test_neighbouring_mach_models_share_one_lu_and_match_their_direct_solve(monkeypatch):
    _small_thresholds(monkeypatch)
    lat = build_lattice(_wing(), n_span=40, n_chord=8)
    kf = kept_factors.KeptFactors()
    for mach in (0.2, 0.22, 0.17):  # the order a run may build them in
        m = AeroModel(lat, mach, factors=kf)
        ref = AeroModel(lat, mach)  # no kept factors: numpy.linalg.solve
        check(REFINEMENT, f"basis circulations at M = {mach}, max difference / max |gamma|", 0.0,
              _rel(m._basis, ref._basis), abs=ROUND_OFF)
        a, b = m.solve(5.0), ref.solve(5.0)
        check(REFINEMENT, f"CL at 5 deg, M = {mach}", b.CL, a.CL, rel=ROUND_OFF)
        check(REFINEMENT, f"CDi at 5 deg, M = {mach}", b.CDi, a.CDi, rel=10 * ROUND_OFF)
    assert (kf.direct, kf.refined) == (1, 2)  # one LU for three models
    assert 2 <= kf.steps <= 2 * kept_factors.MAX_STEPS


def test_a_distant_mach_falls_back_to_its_own_lu(monkeypatch):
    _small_thresholds(monkeypatch)
    lat = build_lattice(_wing(), n_span=40, n_chord=8)
    kf = kept_factors.KeptFactors()
    AeroModel(lat, 0.0, factors=kf)
    m = AeroModel(lat, 0.9, factors=kf)  # 1/beta 2.3 times the first's: no convergence
    ref = AeroModel(lat, 0.9)
    assert (kf.direct, kf.refined) == (2, 0)
    check(REFINEMENT, "basis circulations at M = 0.9 after the fall-back, max difference / max",
          0.0, _rel(m._basis, ref._basis), abs=ROUND_OFF)


def test_mirror_split_control_models_keep_one_lu_per_half_system(monkeypatch):
    _small_thresholds(monkeypatch)
    st = _wing()
    s = float(st.semispan)
    surfaces = [ControlSurface("ail", "aileron", 0.62 * s, 0.93 * s, 0.75, mode="antisymmetric"),
                ControlSurface("flap", "flap", 0.07 * s, 0.5 * s, 0.7)]
    lat = build_lattice(st, n_span=60, n_chord=6, full_span=True, controls=surfaces)
    kf = kept_factors.KeptFactors()
    for mach in (0.15, 0.17):
        cm = ControlModel.build(lat, mach, surfaces, factors=kf)
        assert cm.model._split is not None  # two half systems
        ref = ControlModel.build(lat, mach, surfaces)
        check(REFINEMENT, f"control circulations (7 rhs) at M = {mach}, max difference / max",
              0.0, _rel(cm._B, ref._B), abs=ROUND_OFF)
        # the velocity at a bound vortex sums large, nearly cancelling contributions of its
        # neighbours: a circulation difference shows about 100 times larger there
        check(REFINEMENT, f"induced velocities at the bound vortices at M = {mach}, "
              "max difference / max", 0.0, _rel(cm._V, ref._V), abs=100 * ROUND_OFF)
    assert (kf.direct, kf.refined) == (2, 2)  # the symmetric and antisymmetric halves


def test_an_exactly_singular_system_is_one_aero_error_and_no_warning(monkeypatch):
    # a panel whose normal is zero (a degenerate panel) gives a zero row: a singular matrix
    # (linear algebra; the rank from numpy.linalg.matrix_rank, a general-purpose reference
    # library) on which LAPACK's LU meets an exact zero pivot. The run must say so once, as its
    # own error, with no library warning printed before it.
    import warnings

    import pytest

    from geomload.errors import AeroError

    _small_thresholds(monkeypatch)
    lat = build_lattice(_wing(), n_span=20, n_chord=6)
    m = AeroModel(lat, 0.1, factors=kept_factors.KeptFactors())
    A = m._assemble()
    A[1] = 0.0
    n = A.shape[0]
    check("numpy.linalg.matrix_rank", "rank of the influence matrix with a zero row", n - 1,
          np.linalg.matrix_rank(A), abs=0)
    fresh = kept_factors.KeptFactors()  # no factors kept: the system is factorised
    m._factors = fresh
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        with pytest.raises(AeroError, match="singular"):
            m._solve_system(A, np.ones((n, 2)), 0)
    assert [str(w.message) for w in caught] == []
    assert fresh.direct == 0  # nothing kept from the failed factorisation
