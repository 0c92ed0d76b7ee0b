"""The sample's run equals a stored run: a restructure or speed change must not move a number.

Every CSV of ``sample_geometry/pellin_case.toml`` run without renders (stations.csv, envelope.csv,
vn.csv, loads/*.csv) is compared with the copy in tests/stored_run/ (made by
tests/stored_run/regenerate.py, regenerated only in a commit of its own when a physics change is
meant to change results). Numbers agree to 1e-10 relative; since the files print ten significant
digits, a value may also differ by one unit in its last printed digit (a round-off of 1e-16 can
flip it), and values near zero by an absolute floor of 1e-12 times the column's largest value.
Comment lines and column headers are compared as text, except the equilibrium-residual line,
whose value is round-off (checked to be below 1e-12 instead).
"""

from __future__ import annotations
from helpers.paths import TESTS

import importlib.util
import math
import re
from pathlib import Path

import pytest

_SPEC = importlib.util.spec_from_file_location(
    "stored_run_regenerate", TESTS / "stored_run" / "regenerate.py")
regenerate = importlib.util.module_from_spec(_SPEC)
_SPEC.loader.exec_module(regenerate)

REL = 1e-10  # the requested agreement
FLOOR = 1e-12  # x the column's largest |value|: values that are round-off around zero
RESIDUAL = re.compile(r"^# equilibrium residual \(relative\): (\S+)$")


def _number(text):
    try:
        v = float(text)
    except ValueError:
        return None
    return v if math.isfinite(v) or text.lower() in ("nan", "inf", "-inf") else None


def _last_digit(text: str) -> float:
    """One unit in the last printed significant digit of a number written as text."""
    mant, _, exp = text.lower().partition("e")
    digits = mant.lstrip("+-").split(".")
    decimals = len(digits[1]) if len(digits) > 1 else 0
    return 10.0 ** (-decimals + (int(exp) if exp else 0))


def _compare(name, stored: str, fresh: str):
    a, b = stored.splitlines(), fresh.splitlines()
    assert len(a) == len(b), f"{name}: {len(b)} lines, stored {len(a)}"
    rows = [i for i, line in enumerate(a) if not line.startswith("#")]
    for i, (sa, fb) in enumerate(zip(a, b)):
        if sa.startswith("#") or i == rows[0]:
            ma, mb = RESIDUAL.match(sa), RESIDUAL.match(fb)
            if ma and mb:
                assert float(mb.group(1)) < 1e-12, f"{name}:{i + 1}: {fb}"
                continue
            assert fb == sa, f"{name}:{i + 1}: text differs\n stored: {sa}\n    now: {fb}"
    table_a = [a[i].split(",") for i in rows[1:]]
    table_b = [b[i].split(",") for i in rows[1:]]
    header = a[rows[0]].split(",")
    scale = {}
    for row in table_a:
        for k, cell in enumerate(row):
            v = _number(cell)
            if v is not None and math.isfinite(v):
                scale[k] = max(scale.get(k, 0.0), abs(v))
    for r, (ra, rb) in enumerate(zip(table_a, table_b)):
        assert len(ra) == len(rb), f"{name}: row {r + 1}: {len(rb)} cells, stored {len(ra)}"
        for k, (ca, cb) in enumerate(zip(ra, rb)):
            va, vb = _number(ca), _number(cb)
            where = f"{name}: row {r + 1}, column {header[k] if k < len(header) else k}"
            if va is None:
                assert cb == ca, f"{where}: {cb!r}, stored {ca!r}"
                continue
            assert vb is not None, f"{where}: {cb!r}, stored {ca!r}"
            if not math.isfinite(va):
                assert str(va) == str(vb), f"{where}: {cb}, stored {ca}"
                continue
            tol = max(REL * abs(va), _last_digit(ca), FLOOR * scale.get(k, 0.0))
            assert abs(vb - va) <= tol, f"{where}: {cb}, stored {ca} (tolerance {tol:.3g})"


@pytest.fixture(scope="module")
def fresh_run(tmp_path_factory):
    return regenerate.run_sample(tmp_path_factory.mktemp("stored_run"))


def test_sample_run_equals_stored_run(fresh_run):
    stored_dir = regenerate.HERE
    stored = regenerate.csv_files(stored_dir)
    fresh = regenerate.csv_files(fresh_run)
    assert [str(p) for p in fresh] == [str(p) for p in stored]
    assert len(stored) > 40  # stations, envelope, V-n and one table per load case
    for rel in stored:
        _compare(str(rel), (stored_dir / rel).read_text(encoding="utf-8"),
                 regenerate.normalised_text(fresh_run / rel))


def test_comparison_catches_a_change(fresh_run):
    """The comparison itself fails on a change in the 9th significant digit of one value."""
    rel = Path("envelope.csv")
    text = regenerate.normalised_text(fresh_run / rel)
    lines = text.splitlines()
    k = next(i for i, line in enumerate(lines) if line and line[0].isdigit())
    cells = lines[k + 1].split(",")
    cells[1] = repr(float(cells[1]) * (1 + 1e-8))
    lines[k + 1] = ",".join(cells)
    with pytest.raises(AssertionError):
        _compare(str(rel), (regenerate.HERE / rel).read_text(encoding="utf-8"), "\n".join(lines))
