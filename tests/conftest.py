"""Shared fixtures: NACA wings generated from the equations (see helpers/wingfactory.py).

The tests sit in one folder per stage (geometry, aero, loads, config, export, batch, run); the
helpers they share are the package tests/helpers (on the path by pytest's ``pythonpath``)."""

import os
import sys

import pytest
from helpers.paths import SAMPLES as _SAMPLES
from helpers.wingfactory import naca_wing_mesh

SAMPLES = str(_SAMPLES)


@pytest.fixture(scope="session")
def sample_dir():
    """Folder of the bundled QM-36 Pellin sample files."""
    return SAMPLES


@pytest.fixture(scope="session")
def naca_wing():
    """A tapered, swept, washed-out NACA 2412->2410 half wing: (WingMesh, design dict)."""
    return naca_wing_mesh()


@pytest.fixture()
def wing_factory():
    """The `naca_wing_mesh(...)` builder, for tests that need their own variant."""
    return naca_wing_mesh


def pytest_sessionfinish(session, exitstatus):
    """Fail the session if any test left a hidden staging folder anywhere under pytest's
    temporary root; write docs/validation.md when GEOMLOAD_VALIDATION_MD is set."""
    left = _session_leftovers(session)
    if left:
        session.exitstatus = 1
        print(f"\nERROR: hidden staging left behind: {left}", file=sys.stderr)
    out = os.environ.get("GEOMLOAD_VALIDATION_MD")
    if not out:
        return
    from helpers import validation

    with open(out, "w", encoding="utf-8") as fh:
        fh.write(validation.markdown())


# ----------------------------------------------------------------- nothing left behind, ever
def _staging_leftovers(folder) -> list:
    from geomload.export.run_folder import leftovers

    return leftovers(folder)


@pytest.fixture(autouse=True)
def no_hidden_staging_left(request):
    """Suite-wide: after every test that used tmp_path, no hidden staging/old folder, lock file or
    temporary file of geomload's atomic writers is left there (on success, failure or signal)."""
    yield
    tmp = request.node.funcargs.get("tmp_path") if hasattr(request.node, "funcargs") else None
    if tmp is not None and os.path.isdir(tmp):
        left = _staging_leftovers(tmp)
        assert not left, f"hidden staging left behind: {left}"


def _session_leftovers(session):  # called from pytest_sessionfinish
    base = getattr(session.config, "_tmp_path_factory", None)
    if base is None:
        return []
    try:
        root = base.getbasetemp()
    except Exception:  # noqa: BLE001 - no temporary folder was made
        return []
    return _staging_leftovers(root)


@pytest.fixture()
def small_tmpfs(tmp_path):
    """mount(size) -> a folder on a fresh tmpfs of that size (bytes), unmounted afterwards; the
    test is skipped with the reason where mounting is not allowed (no root / no CAP_SYS_ADMIN)."""
    import subprocess

    mounted = []

    def mount(size: int, readonly: bool = False):
        d = tmp_path / f"tmpfs{len(mounted)}"
        d.mkdir()
        opts = f"size={int(size)}" + (",ro" if readonly else "")
        p = subprocess.run(["mount", "-t", "tmpfs", "-o", opts, "tmpfs", str(d)],
                           capture_output=True, text=True)
        if p.returncode != 0:
            d.rmdir()
            pytest.skip(f"cannot mount a small tmpfs here ({p.stderr.strip() or p.returncode})")
        mounted.append(d)
        return d

    yield mount
    for d in reversed(mounted):
        subprocess.run(["umount", "-l", str(d)], capture_output=True)


