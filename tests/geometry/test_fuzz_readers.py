"""Fuzzing the readers: random bytes and mutated valid files must give a clean error.

"Clean" means success or a geomload.errors.GeomloadError subclass (the CLI turns those into one
line and exit 1); any other exception would reach the user as an internal error, and a crash
of the process as no message at all (issue 7: "random bytes and mutated valid files into every
reader: always a clean error, never a traceback"). The geometry files go through the whole
geometry stage (read, frame, stations), since a mutated file that reads may still break later.

The STEP/IGES reader runs the OpenCASCADE kernel in C++; a crash there would take pytest down,
so those inputs are read in a child process and its exit status is checked.
"""

from __future__ import annotations
from helpers.paths import TESTS

import json
import math
import os
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from geomload.case import load_case
from geomload.errors import GeomloadError
from geomload.geometry import load_wing
from geomload.geometry.read import read_mesh

HERE = TESTS
SAMPLES = HERE.parent / "sample_geometry"
from helpers import make_corpus  # noqa: E402

MAGIC = {".stl": b"solid fuzz\n", ".obj": b"v 0 0 0\nv 1 0 0\nf 1 2 ", ".ply": b"ply\nformat ascii 1.0\n",
         ".off": b"OFF\n3 1 0\n", ".glb": b"glTF\x02\x00\x00\x00", ".gltf": b'{"asset": {"version": "2.0"}, ',
         ".3mf": b"PK\x03\x04", ".step": b"ISO-10303-21;\nHEADER;\n", ".iges": b"S      1\n"}


def mutate(raw: bytes, rng, kind: int) -> bytes:
    """One of: truncation, random byte flips anywhere, a deleted chunk, flips in the header."""
    b = bytearray(raw)
    if kind == 0:
        return bytes(b[: int(rng.integers(0, len(b)))])
    if kind == 1:
        for i in rng.integers(0, len(b), 50):
            b[i] = int(rng.integers(0, 256))
    elif kind == 2:
        i = int(rng.integers(0, max(1, len(b) - 1000)))
        del b[i: i + int(rng.integers(1, 1000))]
    else:
        for i in rng.integers(0, min(len(b), 2000), 20):
            b[i] = int(rng.integers(0, 256))
    return bytes(b)


def _clean_geometry(path):
    """None if the whole geometry stage succeeds or raises a GeomloadError; else the exception."""
    try:
        load_wing(str(path), n_stations=6)
    except GeomloadError as exc:
        assert str(exc) and "\n" not in str(exc)  # one line for the user
    except Exception as exc:  # noqa: BLE001 - exactly what the test looks for
        return exc
    return None


@pytest.mark.parametrize("ext", [".stl", ".obj", ".ply", ".off", ".glb", ".gltf", ".3mf"])
def test_random_bytes_into_the_mesh_readers(ext, tmp_path):
    rng = np.random.default_rng(abs(hash(ext)) % 2**32)
    bad = []
    for k in range(8):
        data = rng.integers(0, 256, int(rng.integers(1, 4000))).astype(np.uint8).tobytes()
        if k % 2:
            data = MAGIC[ext] + data
        p = tmp_path / f"r{k}{ext}"
        p.write_bytes(data)
        exc = _clean_geometry(p)
        if exc is not None:
            bad.append(f"{p.name}: {exc!r}"[:200])
    assert not bad, bad


@pytest.mark.parametrize("name,count", [
    ("pellin_half_wing_mm.stl", 16),
    ("pellin_full_wing_yup.obj", 8)])
def test_mutated_samples_into_the_mesh_readers(name, count, tmp_path):
    raw = (SAMPLES / name).read_bytes()
    rng = np.random.default_rng(7)
    bad = []
    for k in range(count):
        p = tmp_path / f"m{k}{Path(name).suffix}"
        p.write_bytes(mutate(raw, rng, k % 4))
        exc = _clean_geometry(p)
        if exc is not None:
            bad.append(f"{p.name} (kind {k % 4}): {exc!r}"[:200])
    assert not bad, bad


def test_mutated_corpus_wing_ascii_stl(tmp_path):
    """ASCII STL with random characters replaced: the line-by-line parser names the line."""
    text = make_corpus.stl_ascii(make_corpus.wing_tris()[:60])
    rng = np.random.default_rng(3)
    bad = []
    for k in range(20):
        chars = list(text)
        for i in rng.integers(0, len(chars), 5):
            chars[i] = chr(int(rng.choice([32, 45, 46, 48, 57, 101, 110, 10, 120])))
        p = tmp_path / f"a{k}.stl"
        p.write_text("".join(chars))
        try:
            read_mesh(p)
        except GeomloadError as exc:
            msg = str(exc)
            if "\n" in msg or p.name not in msg:  # one line naming the file
                bad.append(f"{p.name}: message {msg!r}")
        except Exception as exc:  # noqa: BLE001
            bad.append(f"{p.name}: {exc!r}")
    assert not bad, bad


# ---------------------------------------------------------------------- STEP in a child
_CHILD = """
import sys
from geomload.geometry import load_wing
from geomload.errors import GeomloadError
for p in sys.argv[1:]:
    print("start", p, flush=True)
    try:
        load_wing(p, n_stations=6)
        print("ok", p, flush=True)
    except GeomloadError:
        print("clean", p, flush=True)
    except Exception as exc:
        print("UNCLEAN", p, repr(exc)[:150], flush=True)
"""


def _read_in_children(paths, workers=2):
    """Outcome per path ("ok", "clean", "UNCLEAN ...", "CRASH signal N"), the paths shared
    round-robin between `workers` children run side by side (each CAD read is slow: the reader
    starts the kernel in a process of its own); every path is still read."""
    from concurrent.futures import ThreadPoolExecutor

    groups = [list(paths)[k::workers] for k in range(workers)]
    with ThreadPoolExecutor(workers) as pool:
        parts = list(pool.map(_read_in_one_child, [g for g in groups if g]))
    out = {k: v for part in parts for k, v in part.items()}
    assert sorted(out) == sorted(map(str, paths)), (sorted(out), paths)
    return out


def _read_in_one_child(paths):
    """Outcome per path ("ok", "clean", "UNCLEAN ...", "CRASH signal N"); restarts after a crash."""
    todo, out = list(map(str, paths)), {}
    while todo:
        p = subprocess.run([sys.executable, "-c", _CHILD, *todo], capture_output=True, text=True,
                           timeout=300)
        current = None
        for line in p.stdout.splitlines():
            word, _, rest = line.partition(" ")
            if word == "start":
                current = rest
            elif word in ("ok", "clean"):
                out[rest] = word
                current = None
            elif word == "UNCLEAN":
                out[rest.split(" ")[0]] = line
                current = None
        if current is not None:  # the child died reading `current`
            out[current] = f"CRASH (exit status {p.returncode})"
        todo = [t for t in todo if t not in out]
        if p.returncode == 0 and todo:
            raise AssertionError(f"child finished without reading {todo}: {p.stderr[-500:]}")
    return out


@pytest.mark.cadkernel
def test_random_bytes_into_the_cad_kernel(tmp_path):
    rng = np.random.default_rng(11)
    paths = []
    for ext in (".step", ".iges"):
        for k in range(4):
            data = rng.integers(0, 256, int(rng.integers(1, 3000))).astype(np.uint8).tobytes()
            p = tmp_path / f"r{k}{ext}"
            p.write_bytes(MAGIC[ext] + data if k % 2 else data)
            paths.append(p)
    out = _read_in_children(paths)
    assert all(v in ("ok", "clean") for v in out.values()), out


@pytest.mark.cadkernel
def test_mutated_step_sample_into_the_cad_kernel(tmp_path):
    raw = (SAMPLES / "pellin_half_wing.step").read_bytes()
    rng = np.random.default_rng(5)
    paths = []
    for k in range(6):
        p = tmp_path / f"m{k}.step"
        p.write_bytes(mutate(raw, rng, k % 4))
        paths.append(p)
    # a chunk deleted at byte 250000 (500 bytes): found to crash the kernel
    p = tmp_path / "cut_250000.step"
    p.write_bytes(raw[:250000] + raw[250500:])
    paths.append(p)
    out = _read_in_children(paths)
    assert all(v in ("ok", "clean") for v in out.values()), out


# ------------------------------------------------------------------------------- case files
@pytest.fixture(scope="module")
def case_dir(tmp_path_factory):
    d = tmp_path_factory.mktemp("fuzzcase")
    make_corpus.build(d)
    shutil.copy(SAMPLES / "pellin_case.toml", d / "pellin_case.toml")
    os.symlink(SAMPLES / "pellin_half_wing_mm.stl", d / "pellin_half_wing_mm.stl")
    return d


def _clean_case(path):
    try:
        load_case(path)
    except GeomloadError as exc:
        assert str(exc) and "\n" not in str(exc)
    except Exception as exc:  # noqa: BLE001
        return exc
    return None


def test_random_bytes_and_mutated_sample_into_the_case_reader(case_dir):
    raw = (case_dir / "pellin_case.toml").read_bytes()
    rng = np.random.default_rng(13)
    bad = []
    for k in range(60):
        if k < 10:
            data = rng.integers(0, 256, int(rng.integers(0, 600))).astype(np.uint8).tobytes()
        elif k < 20:  # printable noise that often still parses as TOML fragments
            data = bytes(rng.choice(list(b"abc_=[]{}.,\"'#\n 0123456789-+e"), int(rng.integers(0, 300))))
        elif k < 40:
            data = mutate(raw, rng, k % 4)
        else:  # whole lines deleted
            lines = raw.split(b"\n")
            keep = rng.random(len(lines)) > 0.15
            data = b"\n".join(ln for ln, kk in zip(lines, keep) if kk)
        p = case_dir / f"fuzz_{k}.toml"
        p.write_bytes(data)
        exc = _clean_case(p)
        if exc is not None:
            bad.append(f"{p.name}: {exc!r}"[:200])
    assert not bad, bad


# values of every TOML type, including the awkward ones
TOML_VALUES = st.one_of(
    st.integers(-10**6, 10**6), st.floats(allow_nan=True, allow_infinity=True), st.booleans(),
    st.text(max_size=8), st.lists(st.integers(-5, 5), max_size=3),
    st.lists(st.lists(st.floats(-5, 5), min_size=2, max_size=3), max_size=3),
    st.dictionaries(st.sampled_from(["a", "name", "mass_kg"]), st.integers(0, 3), max_size=2),
    st.just(0), st.just(-1.0), st.just(1e300))


def _toml(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        return "nan" if math.isnan(v) else ("inf" if v > 0 else "-inf") if math.isinf(v) else repr(v)
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)  # a JSON string is a TOML basic string
    if isinstance(v, list):
        return "[" + ", ".join(_toml(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{k} = {_toml(x)}" for k, x in v.items()) + "}"
    raise TypeError(v)


def dump_toml(data: dict) -> str:
    """A minimal TOML writer for the case-file shape: top keys, tables, arrays of tables."""
    out = [f"{k} = {_toml(v)}" for k, v in data.items() if not isinstance(v, (dict, list)) or
           (isinstance(v, list) and not (v and all(isinstance(x, dict) for x in v)))]
    for k, v in data.items():
        if isinstance(v, dict):
            out.append(f"\n[{k}]")
            out += [f"{kk} = {_toml(vv)}" for kk, vv in v.items()]
        elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
            for item in v:
                out.append(f"\n[[{k}]]")
                out += [f"{kk} = {_toml(vv)}" for kk, vv in item.items()]
    return "\n".join(out) + "\n"


def _leaves(data, prefix=()):
    for k, v in data.items():
        if isinstance(v, dict):
            yield from _leaves(v, prefix + (k,))
        elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
            for i, item in enumerate(v):
                yield from _leaves(item, prefix + (k, i))
        else:
            yield prefix + (k,)


BASE = tomllib.loads(make_corpus.BASE_CASE + make_corpus.ENVELOPE)
LEAVES = sorted(_leaves(BASE), key=str)


@settings(max_examples=40, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(path=st.sampled_from(LEAVES), value=TOML_VALUES)
def test_any_value_at_any_key_is_accepted_or_named(case_dir, path, value):
    """Replace one value of the corpus case by a value of any type: load_case accepts it or
    raises a CaseError naming that key. Accepted cases must also run (compute) cleanly."""
    import copy

    data = copy.deepcopy(BASE)
    node = data
    for k in path[:-1]:
        node = node[k]
    node[path[-1]] = value
    p = case_dir / "value_fuzz.toml"
    p.write_text(dump_toml(data))
    try:
        case = load_case(p)
    except GeomloadError as exc:
        msg = str(exc)
        assert "\n" not in msg and str(path[-1]) in msg, (path, value, msg)
        return
    except Exception as exc:  # noqa: BLE001
        raise AssertionError(f"{path} = {value!r}: {exc!r}") from exc
    from geomload.pipeline import compute

    try:
        compute(case)
    except GeomloadError as exc:
        assert "\n" not in str(exc)
    except Exception as exc:  # noqa: BLE001
        raise AssertionError(f"compute with {path} = {value!r}: {exc!r}") from exc
