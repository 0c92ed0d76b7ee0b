"""Variants of a case file: dotted keys, value parsing, the grid, the TOML writer, paths."""

from __future__ import annotations

import tomllib

import pytest
from helpers.batch_helpers import SAMPLE, small_case

from geomload.batch.runner import plan_tasks
from geomload.batch.variants import (VaryError, closest_key, dumps, make_variants, parse_vary,
                                     read_case_data, split_values)


def test_split_values_keeps_brackets_and_quotes():
    assert split_values('20,22.5,[0.0, 1500.0],"a,b"') == ["20", "22.5", "[0.0, 1500.0]", '"a,b"']
    key, vals = parse_vary("envelope.altitudes=[0.0, 1500.0],[0.0]")
    assert key == "envelope.altitudes" and [v for _, v in vals] == [[0.0, 1500.0], [0.0]]
    assert [v for _, v in parse_vary("geometry.spacing=uniform,\"cosine\"")[1]] == ["uniform",
                                                                                   "cosine"]


def test_writer_round_trips_the_sample():
    # reference: Python's own TOML reader (tomllib, PEP 680) reads back what was written
    data = read_case_data(SAMPLE)
    assert tomllib.loads(dumps(data)) == data
    odd = {"a b": "quote \" and \\ and é", "x": 0.1 + 0.2, "t": {"u": [[1, 2], [3]]},
           "arr": [{"k": True}, {"k": False, "s": {"z": -1.5e-300}}]}
    assert tomllib.loads(dumps(odd)) == odd


def test_grid_order_names_and_types(tmp_path):
    case = small_case(tmp_path)
    vs = make_variants([case], ["aircraft.gross_mass_kg=20,22", "spar.chord_fraction=0.25,0.3"])
    assert [v.name for v in vs] == ["01_gross_mass_kg-20.0_chord_fraction-0.25",
                                    "02_gross_mass_kg-20.0_chord_fraction-0.3",
                                    "03_gross_mass_kg-22.0_chord_fraction-0.25",
                                    "04_gross_mass_kg-22.0_chord_fraction-0.3"]
    # an integer given for a number key becomes a float, as the case file has it
    assert vs[0].overrides == (("aircraft.gross_mass_kg", 20.0), ("spar.chord_fraction", 0.25))
    assert isinstance(vs[0].overrides[0][1], float)
    assert len({v.group for v in vs}) == 1  # one geometry: one group
    back = tomllib.loads(vs[3].toml_text)
    assert back["aircraft"]["gross_mass_kg"] == 22.0 and back["spar"]["chord_fraction"] == 0.3


def test_relative_geometry_resolves_against_the_original_folder(tmp_path, monkeypatch):
    case = small_case(tmp_path)
    monkeypatch.chdir("/")
    vs = make_variants([case], ["geometry.stations=10,12"])
    stl = str((SAMPLE.parent / "pellin_half_wing_mm.stl").resolve())
    assert all(tomllib.loads(v.toml_text)["geometry"]["file"] == stl for v in vs)
    assert len({v.group for v in vs}) == 2  # different stations: two geometry groups
    # a varied relative geometry.file is relative to the case file's folder as well
    vs = make_variants([case], [f"geometry.file={tomllib.loads(case.read_text())['geometry']['file']}"])
    assert tomllib.loads(vs[0].toml_text)["geometry"]["file"] == stl


def test_array_of_tables_by_number(tmp_path):
    case = small_case(tmp_path)
    vs = make_variants([case], ["load_case[2].load_factor=1.0,1.5", "point_mass[1].mass_kg=0.2"])
    assert [tomllib.loads(v.toml_text)["load_case"][1]["load_factor"] for v in vs] == [1.0, 1.5]
    with pytest.raises(VaryError, match=r"has 2 \[\[load_case\]\] table"):
        make_variants([case], ["load_case[3].speed=30"])


@pytest.mark.parametrize("spec, words", [
    ("aircraft.gross_mas_kg=20", "did you mean 'aircraft.gross_mass_kg'"),
    ("gross_mass_kg=20", "did you mean 'aircraft.gross_mass_kg'"),
    ("lattice.nspan=8", "did you mean 'lattice.n_span'"),
    ("geometry.stations=12.5", "must be an integer"),
    ("spar.chord_fraction=1.5", "between 0 and 1"),
    ("aircraft=3", "is a table"),
    ("aircraft.gross_mass_kg", "expected KEY=V1,V2"),
    ("aircraft.gross_mass_kg=20,,22", "empty value"),
    ("aircraft.first_flight=1979-05-27", "cannot write a value of type date"),
    ("geometry.file=42", "a file name is needed, got int 42"),
    ("aircraft.gross_mass_kg=20,22,20.0", "the value 20 is given twice"),
])
def test_bad_vary(tmp_path, spec, words):
    case = small_case(tmp_path)
    with pytest.raises(VaryError) as info:
        make_variants([case], [spec])
    assert words in str(info.value) and "\n" not in str(info.value)


def test_duplicate_names_differing_only_in_case(tmp_path):
    # two folders on a case-insensitive file system could not hold both run folders
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    one = small_case(tmp_path / "a")
    two = small_case(tmp_path / "b").rename(tmp_path / "b" / "SMALL.toml")
    with pytest.raises(VaryError, match="duplicate variant name 'SMALL'"):
        make_variants([one, two])


def test_closest_key_needs_a_near_spelling():
    assert closest_key("aircraft.weight", ["aircraft.cd0", "aircraft.cl_max"]) == ""


def test_plan_tasks_keeps_groups_whole_unless_workers_idle(tmp_path):
    case = small_case(tmp_path)
    vs = make_variants([case], ["geometry.stations=10,12", "aircraft.gross_mass_kg=20,21,22"])
    tasks = plan_tasks(vs, 2)
    assert sorted(map(sorted, tasks)) == [[0, 1, 2], [3, 4, 5]]  # one task per geometry
    tasks = plan_tasks(vs, 4)
    assert len(tasks) == 4 and sorted(i for t in tasks for i in t) == list(range(6))
    assert all(len({vs[i].group for i in t}) == 1 for t in tasks)


def test_progress_over_variants_and_one_line_errors(tmp_path):
    from geomload.batch.runner import run_variants

    case = small_case(tmp_path)
    # both supersonic at sea level (Mach > 1): each fails quickly with its own one-line error
    vs = make_variants([case], ["load_case[1].speed=400,450"])
    calls = []
    outs = run_variants(vs, [tmp_path / v.name / "case.toml" for v in vs], workers=1,
                        progress=lambda *a: calls.append(a))
    assert calls == [("variants", 0, 2), ("variants", 1, 2), ("variants", 2, 2)]
    assert [o.ok for o in outs] == [False, False]
    assert all("Mach" in o.error and "\n" not in o.error and o.files == {} for o in outs)
    assert "variant 01_speed-400.0" in outs[0].error  # the temporary path is not shown


def test_run_folder_written_in_place_without_a_ram_disk(tmp_path, monkeypatch):
    """Without a RAM-backed scratch folder a variant is exported straight into the batch's
    folder; the tables are the same bytes as through the scratch folder, and nothing hidden
    (no unfinished .part folder) is left."""
    from helpers.batch_helpers import csv_files

    from geomload.batch import runner

    case = small_case(tmp_path)
    vs = make_variants([case], ["aircraft.gross_mass_kg=21"])
    outs = {}
    for mode in ("scratch", "in place"):
        dest = tmp_path / mode.replace(" ", "_")
        dest.mkdir()
        if mode == "in place":
            monkeypatch.setattr(runner, "SCRATCH_DIR", str(tmp_path / "no such folder"))
        outs[mode] = runner.run_variants(vs, [dest / v.name / "case.toml" for v in vs],
                                         workers=1, dest=dest)[0]
        assert outs[mode].ok and outs[mode].files == {}, outs[mode].error
        assert [x.name for x in dest.iterdir()] == [vs[0].name]
    a, b = csv_files(tmp_path / "scratch"), csv_files(tmp_path / "in_place")
    assert len(a) > 10 and a == b
    assert outs["scratch"].paths == outs["in place"].paths


# -------------------------------------------------------------------- either spelling of a key
def test_vary_a_key_in_its_other_spelling(tmp_path):
    """The small case writes gross_mass_kg and point_mass y_m: --vary may name them so, or by
    their quantity (a number in SI or a text with its unit); the varied spelling replaces the
    file's. 1 lb = 0.45359237 kg exactly (NIST SP 811 App. B; 1959 yard and pound agreement)."""
    from helpers.validation import check

    from geomload.batch import _api

    case = small_case(tmp_path)
    vs = make_variants([case], ['aircraft.gross_mass="48 lb",21', 'point_mass[1].y="1200 mm"'])
    first = tomllib.loads(vs[0].toml_text)
    assert first["aircraft"]["gross_mass"] == "48 lb" and "gross_mass_kg" not in first["aircraft"]
    assert first["point_mass"][0]["y"] == "1200 mm" and "y_m" not in first["point_mass"][0]
    assert tomllib.loads(vs[1].toml_text)["aircraft"]["gross_mass"] == 21.0
    p = tmp_path / "v.toml"
    p.write_text(vs[0].toml_text)
    c = _api.load_case(p)
    check("NIST SP 811 App. B (1959 yard and pound, exact)", "varied gross mass 48 lb (kg)",
          48 * 0.45359237, c.aircraft.gross_mass_kg, rel=1e-15)
    check("SI: 1 mm = 1e-3 m (exact)", "varied point-mass y 1200 mm (m)", 1.2,
          c.point_masses[0].position[1], rel=1e-15)
    assert [k for k, _ in vs[0].overrides] == ["aircraft.gross_mass", "point_mass[1].y"]


def test_vary_the_older_spelling_of_a_key_the_file_writes_with_its_unit(tmp_path):
    case = small_case(tmp_path)
    case.write_text(case.read_text().replace("gross_mass_kg = 22.0", 'gross_mass = "22 kg"'))
    vs = make_variants([case], ["aircraft.gross_mass_kg=20,21"])
    data = [tomllib.loads(v.toml_text)["aircraft"] for v in vs]
    assert [d.get("gross_mass_kg") for d in data] == [20.0, 21.0]
    assert all("gross_mass" not in d for d in data)
    # the same spelling as the file keeps the file's unit for a plain number, takes a text
    vs = make_variants([case], ['aircraft.gross_mass=20,"46 lb"'])
    assert [tomllib.loads(v.toml_text)["aircraft"]["gross_mass"] for v in vs] == ["20 kg",
                                                                                 "46 lb"]
    # a key ending in its unit takes no other unit: the reader's one line, naming the --vary
    with pytest.raises(VaryError, match=r"aircraft.gross_mass_kg=\"46 lb\": aircraft"
                                        r"\.gross_mass_kg: its name fixes the unit \(kg\)"):
        make_variants([case], ['aircraft.gross_mass_kg="46 lb"'])


@pytest.mark.parametrize("spec, words", [
    ("aircraft.gross_mas=20", "did you mean 'aircraft.gross_mass"),
    ("point_mass[1].yy=0.5", "did you mean 'point_mass[1].y"),
    ("tail.are=0.2", "did you mean 'tail.area'"),
    ("control_surface[1].delta_max=15", "the case file has no [[control_surface]] table"),
])
def test_vary_an_unknown_key_in_either_spelling_suggests_the_closest(tmp_path, spec, words):
    case = small_case(tmp_path)
    with pytest.raises(VaryError) as info:
        make_variants([case], [spec])
    assert words in str(info.value) and "\n" not in str(info.value), str(info.value)


def test_vary_a_control_key_in_either_spelling(tmp_path):
    """The sample writes delta_max_deg and area_m2: --vary by the unit-text names replaces
    them; a value with its unit reads in degrees and m^2 (1 rad = 180/pi deg, SI Brochure 9th
    ed. Table 8; 1 ft^2 = 0.09290304 m^2, NIST SP 811 App. B)."""
    import math

    from helpers.validation import check

    from geomload.batch import _api

    case = tmp_path / "sample.toml"
    case.write_text(SAMPLE.read_text().replace(
        'file = "pellin_half_wing_mm.stl"',
        f'file = "{(SAMPLE.parent / "pellin_half_wing_mm.stl").as_posix()}"'))
    vs = make_variants([case], ['control_surface[2].delta_max="0.4 rad"',
                                'tail.area="1.5 ft2",0.2'])
    data = tomllib.loads(vs[0].toml_text)
    assert "delta_max_deg" not in data["control_surface"][1] and "area_m2" not in data["tail"]
    p = tmp_path / "v.toml"
    p.write_text(vs[0].toml_text)
    c = _api.load_case(p).controls
    check("SI Brochure 9th ed., Table 8 (exact)", "varied flap limit 0.4 rad (deg)",
          0.4 * 180 / math.pi, c.surface("flap").delta_max_deg, rel=1e-15)
    check("NIST SP 811 App. B (exact)", "varied tail area 1.5 ft^2 (m^2)", 1.5 * 0.09290304,
          c.tail.area_m2, rel=1e-15)
    assert tomllib.loads(vs[1].toml_text)["tail"]["area"] == 0.2
    # the older spelling, as the file writes it: a number in its unit
    vs = make_variants([case], ["tail.area_m2=0.2"])
    assert tomllib.loads(vs[0].toml_text)["tail"]["area_m2"] == 0.2
