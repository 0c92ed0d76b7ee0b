"""Where the suite's files are: the repository, the tests folder, the bundled sample and the data folders beside the tests."""

from pathlib import Path

TESTS = Path(__file__).resolve().parent.parent
ROOT = TESTS.parent
SAMPLES = ROOT / "sample_geometry"
BAD_INPUTS = TESTS / "bad_inputs"
GOLDEN = TESTS / "golden"
STORED_RUN = TESTS / "stored_run"
