"""User text made safe: console escapes, CSV formula cells, matplotlib '$', strict JSON."""

import dataclasses
import json
import math
import unicodedata

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from geomload import textsafe
from geomload.export import plots, tables
from geomload.export.tables import read_csv_table

from helpers import fakerun

HOSTILE = ("=HYPERLINK(\"http://x\")", "+1g pull", "-1.5g push", "@SUM(A1)", "cost $5 $",
           "banked turn 60°", "Überziehen", "\x1b]0;owned\x07\x1b[2Jname", "a\u202eevil")


def test_printable_escapes_controls_and_keeps_unicode():
    assert textsafe.printable("banked turn 60°") == "banked turn 60°"
    assert textsafe.printable("Überziehen") == "Überziehen"
    s = textsafe.printable("\x1b[31mred\x07\r\nx\u202e")
    # ECMA-48: ESC (0x1b), BEL (0x07), CR, LF are C0 controls; U+202E is a bidi override (Cf)
    assert "\x1b" not in s and "\x07" not in s and "\r" not in s and "\n" not in s
    assert s == "\\x1b[31mred\\x07\\x0d\\x0ax\\u202e"
    assert textsafe.printable("a\nb", keep_newlines=True) == "a\nb"
    assert textsafe.printable("\x9b2J") == "\\x9b2J"  # the C1 CSI


@pytest.mark.parametrize("cell, expect", [("=1+1", "'=1+1"), ("+1g", "'+1g"), ("-2g", "'-2g"),
                                          ("@A1", "'@A1"), ("pull-up", "pull-up"), ("", "-"),
                                          ("a,b#c\"d", "a;b_c'd"), ("\tx", "x")])
def test_csv_text_cell(cell, expect):
    assert textsafe.csv_text_cell(cell) == expect


def test_json_safe_replaces_non_finite():
    data = {"a": float("nan"), "b": [1.0, float("inf"), np.float64("-inf")], "c": np.arange(2),
            "d": np.int64(3), "e": np.bool_(True), "f": "x"}
    out = json.dumps(textsafe.json_safe(data), allow_nan=False)
    assert json.loads(out) == {"a": None, "b": [1.0, None, None], "c": [0, 1], "d": 3, "e": True,
                               "f": "x"}


def test_mpl_text_escapes_dollar():
    assert textsafe.mpl_text("cost $5 $") == r"cost \$5 \$"


@pytest.fixture(scope="module")
def hostile_run():
    return fakerun.make_run(HOSTILE)


def test_csv_cells_never_start_a_formula_and_numbers_stay_numbers(hostile_run, tmp_path):
    p = tables.write_envelope_csv(tmp_path / "envelope.csv", hostile_run.envelope)
    text = p.read_text(encoding="utf-8")
    assert "spreadsheets show them as text" in text       # the header says so
    t = read_csv_table(p)
    for col, v in t.items():
        if v.dtype.kind in "US":
            for cell in v:
                assert not str(cell).startswith(("=", "+", "-", "@")), (col, cell)
        else:  # numeric columns parse as numbers, negative ones included
            assert np.all(np.isfinite(v))
    assert (t["shear_min_N"] < 0).any() or (t["bending_min_Nm"] < 0).any()
    # the escape is visible, the name recoverable: "'-1.5g push" is the case "-1.5g push"
    cases = set(t["bending_min_case"]) | set(t["bending_max_case"])
    assert cases <= {textsafe.csv_text_cell(n) for n in HOSTILE}
    assert "\x1b" not in text and "\x07" not in text


def test_loads_csv_header_has_no_terminal_escape(hostile_run, tmp_path):
    cr = hostile_run.cases[7]
    text = tables.write_loads_csv(tmp_path / "l.csv", cr).read_text(encoding="utf-8")
    assert "\x1b" not in text and "\\x1b" in text


def test_summary_json_is_strict_with_null_for_non_finite(hostile_run, tmp_path):
    run = hostile_run
    bad_aero = dataclasses.replace(run.cases[0].aero, e=float("nan"), CDi=float("inf"))
    cases = [dataclasses.replace(run.cases[0], aero=bad_aero)] + list(run.cases[1:])
    run2 = dataclasses.replace(run, cases=cases, timings={"x": float("nan")})
    p = tables.write_summary_json(tmp_path / "summary.json", run2)

    def refuse(name):
        raise AssertionError(f"non-standard JSON constant {name}")

    data = json.loads(p.read_text(encoding="utf-8"), parse_constant=refuse)  # RFC 8259: no NaN
    assert data["cases"][0]["e"] is None and data["cases"][0]["CDi"] is None
    assert data["timings_s"]["x"] is None and "null" in data["null_means"]
    assert [c["name"] for c in data["cases"]] == list(HOSTILE)


def test_plots_draw_names_with_dollar_signs(hostile_run, tmp_path):
    out = plots.make_plots(hostile_run, tmp_path)
    failed = {k: v for k, v in out.items() if isinstance(v, Exception)}
    assert not failed
    for v in out.values():
        assert v.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_loads_plot_uses_one_collection_for_many_cases():
    run = fakerun.make_run(tuple(f"case {k}" for k in range(plots.MAX_CASE_LINES + 4)))
    fig = plots.plot_loads(run)
    ax = fig.axes[0]
    from matplotlib.collections import LineCollection

    cols = [c for c in ax.collections if isinstance(c, LineCollection)]
    assert len(cols) == 1 and len(cols[0].get_segments()) == len(run.cases)
    # the y range covers every case's shear (autoscale after the collection)
    lo, hi = ax.get_ylim()
    allv = np.concatenate([c.loads.shear_N for c in run.cases])
    assert lo <= allv.min() and hi >= allv.max()
    assert not math.isnan(lo)


def test_printable_leaves_exactly_the_characters_outside_the_escaped_categories():
    # Unicode Character Database (Python's unicodedata): a character is escaped when its
    # general category is Cc, Cf, Zl, Zp, Cs, Co or Cn; every other character stays as it is
    escaped = {"Cc", "Cf", "Zl", "Zp", "Cs", "Co", "Cn"}
    wrong = [o for o in range(0x110000)
             if (textsafe.printable(chr(o)) != chr(o))
             != (unicodedata.category(chr(o)) in escaped)]
    assert wrong == []
    assert textsafe.printable("Überziehen — 60° ·") == "Überziehen — 60° ·"
    assert textsafe.printable("a\u2029b\u00a0c") == "a\\u2029b\u00a0c"  # Zp escaped, Zs kept


@settings(max_examples=300, deadline=None)
@given(st.text(alphabet=st.sampled_from(["a", "\n", "\t", "\r", "\x1b", "é", "\u202e", "\u2028",
                                         "\u00a0", " ", "\ue000", "\U0001F6E9", "\x85", "\\"]),
               max_size=16), st.booleans())
def test_printable_applies_the_character_rule_to_every_character(s, keep_newlines):
    # the rule is per character (Unicode Character Database categories, checked above for
    # every code point): the text's result is the characters' results side by side
    ref = "".join(ch if keep_newlines and ch in "\n\t" else textsafe.printable(ch) for ch in s)
    assert textsafe.printable(s, keep_newlines=keep_newlines) == ref
