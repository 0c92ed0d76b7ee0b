"""summary.json's fast encoder writes the standard library's text byte for byte.

Reference: Python's own json module (a general-purpose reference library),
json.dumps(textsafe.json_safe(obj), indent=N, allow_nan=False, ensure_ascii=False), on data
chosen to reach every branch: non-finite numbers, signed zero, subnormal and extreme floats,
huge ints, numpy scalars and arrays, non-str keys, Unicode and control characters in names
and keys, nested empty containers. No timing is asserted (benchmarks/ measure speed).
"""

import json
import math
from collections import OrderedDict
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from geomload import textsafe
from geomload.export import tables
from geomload.export.json_text import dumps_safe

from helpers import fakerun
from helpers.validation import check

REFERENCE = "Python json module (json.dumps, indent, allow_nan=False, ensure_ascii=False)"


def _reference(obj, indent=1):
    return json.dumps(textsafe.json_safe(obj), indent=indent, allow_nan=False,
                      ensure_ascii=False)


def _first_difference(a: str, b: str) -> int:
    """Index of the first differing character (-1: none; lengths compared too)."""
    for i, (x, y) in enumerate(zip(a, b)):
        if x != y:
            return i
    return -1 if len(a) == len(b) else min(len(a), len(b))


AWKWARD = {
    "nan": float("nan"), "inf": math.inf, "-inf": -math.inf, "neg_zero": -0.0,
    "tiny": 1e-300, "subnormal": 5e-324, "huge_float": 1.7976931348623157e308,
    "big_exp": 1e16, "small_exp": 1e-5, "plain": 0.1, "third": 1 / 3, "int_float": 2.0,
    "huge_int": 10 ** 40, "neg_int": -(2 ** 63), "true": True, "false": False, "none": None,
    "names": ["banked turn 60°", "Überziehen", "tab\there", "quote\"back\\slash",
              "\x1b[2J\x07", "a\u202eevil", "line\u2028sep", "emoji \U0001F6E9", ""],
    "Ünïcode key \u00e9 \"q\"": {"nested": [[], {}, [[]], [{}], {"e": []}]},
    "column": [1.0, 2.5, -0.0, 1e-300, 3e300],
    "column_with_gap": [1.0, float("nan"), -math.inf, 4.0],
    "mixed": [1, 2.0, None, True, "x", [1.5], {"k": 0.25}],
    "numpy": {"f64": np.float64(0.1), "f32": np.float32(0.1), "nan64": np.float64("nan"),
              "inf32": np.float32("inf"), "i64": np.int64(-7), "u8": np.uint8(200),
              "bool": np.bool_(True), "str": np.str_("np text"),
              "arr": np.array([[1.0, np.nan], [np.inf, -0.0]]), "iarr": np.arange(3),
              "barr": np.array([True, False]), "scalar_arr": np.array(2.5),
              "empty_arr": np.zeros((0,))},
    "tuple": (1.0, (2, "three"), ()),
    "non_str_keys": {1: "one", 2.5: "two and a half", None: "none", True: "true"},
    "duplicate_after_str": {1: "int one", "1": "str one", "2": "str two"},
    "ordered": OrderedDict([("b", 1.0), ("a", [float("inf")])]),
    "other": Path("/tmp/some where/ü.csv"),
    "empty_list": [], "empty_dict": {},
}


@pytest.mark.parametrize("indent", [0, 1, 2, 4])
def test_awkward_data_same_text_as_the_json_module(indent):
    ours, ref = dumps_safe(AWKWARD, indent=indent), _reference(AWKWARD, indent)
    # Python json module: the reference text, byte for byte
    check(REFERENCE, f"first differing character of the awkward document, indent {indent} "
          "(-1: none)", expected=-1, measured=_first_difference(ours, ref))
    assert ours == ref
    assert json.loads(ours)["nan"] is None and json.loads(ours)["neg_zero"] == 0.0


@pytest.mark.parametrize("obj", [float("nan"), -0.0, 1e-300, 10 ** 30, "ü\n", None, True,
                                 np.float32(3.3), [], {}, [[[]]], {"a": {}}, np.array([]),
                                 [float("inf")] * 3, [0.5] * 3])
def test_top_level_values_same_text_as_the_json_module(obj):
    assert dumps_safe(obj) == _reference(obj)  # Python json module


def test_summary_of_a_run_same_text_as_the_json_module():
    run = fakerun.make_run(["=HYPERLINK(\"x\")", "banked turn 60°", "Überziehen", "a\u202eb"])
    data = tables.summary(run)
    ours, ref = dumps_safe(data, indent=1), _reference(data, 1)
    check(REFERENCE, "first differing character of a run's summary.json text (-1: none)",
          expected=-1, measured=_first_difference(ours, ref))
    assert ours == ref


_scalars = (st.floats(allow_nan=True, allow_infinity=True) | st.integers() | st.booleans()
            | st.none() | st.text(max_size=8))
_data = st.recursive(_scalars, lambda kids: st.lists(kids, max_size=4)
                     | st.dictionaries(st.text(max_size=6) | st.integers(), kids, max_size=4),
                     max_leaves=30)


@settings(max_examples=150, deadline=None)
@given(_data, st.integers(min_value=0, max_value=3))
def test_random_documents_same_text_as_the_json_module(obj, indent):
    assert dumps_safe(obj, indent=indent) == _reference(obj, indent)  # Python json module


def test_indent_must_be_a_count_of_spaces():
    with pytest.raises(ValueError):
        dumps_safe({}, indent="\t")
    with pytest.raises(ValueError):
        dumps_safe({}, indent=-1)
