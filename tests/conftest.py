"""Shared fixtures: NACA wings generated from the equations (see wingfactory.py)."""

import os
import sys

import pytest

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

from wingfactory import naca_wing_mesh  # noqa: E402

SAMPLES = os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))), "sample_geometry")


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
    """Write docs/validation.md from the recorded checks when GEOMLOAD_VALIDATION_MD is set."""
    out = os.environ.get("GEOMLOAD_VALIDATION_MD")
    if not out:
        return
    import validation

    with open(out, "w", encoding="utf-8") as fh:
        fh.write(validation.markdown())
