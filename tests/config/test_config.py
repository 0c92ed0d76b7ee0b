"""The case file: how it is read (encodings, line ends, hostile values), the template writer,
and the typed records it becomes. Expected behaviour is the TOML 1.0 specification
(toml.io/en/v1.0.0: strings, escapes, integers) and Python's tomllib as the reference reader."""

from __future__ import annotations
from helpers.paths import ROOT

import tomllib
from pathlib import Path

import pytest

from geomload.config import case_template, read_case_file, toml_value
from geomload.config.schema import LoadCase
from geomload.errors import CaseError

SAMPLE = ROOT / "sample_geometry" / "pellin_case.toml"


def _case_text(tmp_path):
    """The sample case, its geometry path made absolute so it reads from tmp_path."""
    text = SAMPLE.read_text(encoding="utf-8")
    geo = tomllib.loads(text)["geometry"]["file"]
    return text.replace(f'"{geo}"', toml_value(str((SAMPLE.parent / geo).resolve())), 1)


def _write(tmp_path, data: bytes, name="case.toml"):
    p = tmp_path / name
    p.write_bytes(data)
    return p


def test_byte_order_mark_and_crlf_read_as_usual(tmp_path):
    text = _case_text(tmp_path)
    plain = read_case_file(_write(tmp_path, text.encode("utf-8"), "plain.toml"))
    windows = read_case_file(_write(tmp_path, b"\xef\xbb\xbf" + text.replace("\n", "\r\n")
                                    .encode("utf-8"), "windows.toml"))
    assert windows.load_cases == plain.load_cases
    assert windows.aircraft == plain.aircraft and windows.title == plain.title


@pytest.mark.parametrize("edit, key, fragment", [
    (('speed = "30 m/s"', "speed = inf"), "load_case[1].speed", "must be a number"),
    (('speed = "30 m/s"', "speed = nan"), "load_case[1].speed", "must be a number"),
    (("gross_mass_kg = 22.0", "gross_mass_kg = 1" + "0" * 400), "aircraft.gross_mass_kg",
     "too large"),
    (("n_span = 40", "n_span = 1" + "0" * 30), "lattice.n_span", "too large"),
    (("stations = 24", "stations = 1" + "0" * 30), "geometry.stations", "too large"),
])
def test_hostile_numbers_name_the_key(tmp_path, edit, key, fragment):
    text = _case_text(tmp_path)
    assert edit[0] in text, edit[0]
    p = _write(tmp_path, text.replace(edit[0], edit[1], 1).encode())
    with pytest.raises(CaseError) as err:
        read_case_file(p)
    msg = str(err.value)
    assert msg.startswith(str(p)) and f"{key}:" in msg and fragment in msg
    assert "\n" not in msg


def test_deep_nesting_is_a_case_error(tmp_path):
    text = _case_text(tmp_path) + "\n[deep]\nvalue = " + "[" * 5000 + "]" * 5000 + "\n"
    with pytest.raises(CaseError) as err:
        read_case_file(_write(tmp_path, text.encode()))
    assert "value: invalid TOML: tables or arrays nested too deeply" in str(err.value)


@pytest.mark.parametrize("name", ['wing "A".stl', "back\\slash.stl", "line\nbreak.stl",
                                  "tab\tand\x7fdel\x01.stl", "Überziehen 60°.stl", "'quote'.stl",
                                  "# not a comment.stl", "a = b [c].stl"])
def test_template_is_valid_toml_whatever_the_file_name(name):
    # TOML 1.0: basic strings escape ", \ and every control character; tomllib reads it back
    text = case_template(name, units="mm")
    data = tomllib.loads(text)
    assert data["geometry"]["file"] == name
    assert data["geometry"]["units"] == "mm"


def test_template_reads_back_as_a_case(tmp_path):
    (tmp_path / "wing.stl").write_bytes(b"solid x\nendsolid x\n")
    p = tmp_path / "case.toml"
    p.write_text(case_template("wing.stl"), encoding="utf-8")
    case = read_case_file(p)
    assert case.geometry.file == str((tmp_path / "wing.stl").resolve())
    assert case.geometry.units is None  # left commented out when not given
    assert case.load_cases[0].name == "pull-up"


def test_records_check_themselves():
    with pytest.raises(CaseError, match="speed_type"):
        LoadCase("x", 20.0, "IAS", 0.0, 1.0)
    with pytest.raises(CaseError, match="finite"):
        LoadCase("x", float("nan"), "EAS", 0.0, 1.0)
