"""Variants of a case file: a grid of ``--vary KEY=V1,V2,...`` overrides, or a list of case files.

A KEY is a case-file key by its dotted path: ``aircraft.gross_mass``, ``spar.chord_fraction``,
``geometry.file``; an element of an array of tables is picked by its 1-based number in brackets,
``load_case[2].load_factor``, ``point_mass[1].mass``. A key with an older spelling ending in its
unit may be given in either spelling, whichever the case file uses (``aircraft.gross_mass_kg``
or ``aircraft.gross_mass``; the varied spelling replaces the file's). Values are TOML literals
(``22.5``, ``true``, ``"mm"``, ``[0.0, 1500.0]``), or a value with its unit (``"48 lb"``) for a
key named for its quantity; an unquoted word is taken as text (``uniform``). Commas inside
brackets or quotes do not split values.

Each variant becomes a complete case file of its own (written into its run folder), in which
``geometry.file`` is an absolute path: a relative path resolves against the ORIGINAL case file's
folder, as it did in the original (a varied relative ``geometry.file`` too).

Checks, before anything runs (each a one-line error naming the --vary option, exit 1):
unknown key (with the closest known key), a value of the wrong type (the type of the value the
case file has there, else whatever the case-file reader rejects), a value the case-file reader
rejects, duplicate variant names from a list of case files.
"""

from __future__ import annotations

import itertools
import json
import re
import tempfile
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

# the parsing of --vary options and the TOML writer live in their own modules; their names are
# importable from here as before
from geomload.batch.overrides import (VaryError, _container, _typed, _unknown,  # noqa: F401
                                      apply_override, closest_key, known_keys, parse_key,
                                      parse_value, parse_vary, split_values, value_text)
from geomload.batch.toml_text import TomlWriteError, dumps
from geomload.errors import CaseError

NAME_MAX = 60  # characters of a variant name (a folder name; long enough to stay readable)


@dataclass(frozen=True)
class Variant:
    """One run of a batch.

    name: unique, file-name safe (its run folder is ``runs/<name>``); source: the original case
    file (absolute); overrides: ((dotted key, value), ...) applied to it; toml_text: the complete
    case file of the variant (geometry.file absolute); group: a key equal for variants that share
    the geometry read and cut (the [geometry] table, canonical JSON).
    """

    name: str
    source: str
    overrides: tuple
    toml_text: str
    group: str
    data: dict = field(compare=False, repr=False, default_factory=dict)


# ------------------------------------------------------------------------------ variants
def read_case_data(path) -> dict:
    """The parsed TOML of a case file, geometry.file made absolute (relative to the file)."""
    p = Path(path).resolve()
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError) as exc:
        raise CaseError(f"{path}: cannot read case file ({exc.__class__.__name__}: {exc})") from None
    except tomllib.TOMLDecodeError as exc:
        raise CaseError(f"{path}: invalid TOML: {exc}") from None
    return data


def _absolute_geometry(data: dict, base: Path) -> None:
    g = data.get("geometry")
    if isinstance(g, dict) and isinstance(g.get("file"), str):
        g["file"] = str((base / Path(g["file"]).expanduser()).resolve())


def _grid(vary: list) -> list:
    """[(key, [(raw, value), ...]), ...] -> list of override tuples, last key fastest."""
    if not vary:
        return [()]
    keys = [k for k, _ in vary]
    dup = sorted({k for k in keys if keys.count(k) > 1})
    if dup:
        raise VaryError(f"--vary {dup[0]}: given more than once (list all its values in one --vary)")
    return [tuple((k, raw, v) for k, (raw, v) in zip(keys, combo))
            for combo in itertools.product(*[vals for _, vals in vary])]


def _grid_name(i: int, n: int, combo: tuple) -> str:
    from geomload.export.atomic import safe_name

    width = max(2, len(str(n)))
    parts = [f"{k.split('.')[-1]}-{value_text(v)}" for k, v in combo]
    return safe_name("_".join([f"{i + 1:0{width}d}"] + parts))[:NAME_MAX]


def _check(variant_data: dict, base_data: dict, key: str, raw: str, check_dir: Path) -> None:
    """Run the case-file reader over a variant; its errors are re-worded to name the --vary."""
    from geomload.batch import _api

    try:
        text = dumps(variant_data)
    except TomlWriteError as exc:
        raise VaryError(f"--vary {key}={raw}: {exc}" if key else str(exc)) from None
    fd, name = tempfile.mkstemp(suffix=".toml", dir=check_dir)
    p = Path(name)
    with open(fd, "w", encoding="utf-8") as fh:
        fh.write(text)
    try:
        _api.load_case(p)
    except CaseError as exc:
        msg = str(exc)
        msg = msg[len(str(p)) + 2:] if msg.startswith(str(p)) else msg
        if key and re.match(r"^([A-Za-z0-9_.\[\]-]+): unknown key", msg):
            raise _unknown(key, base_data) from None
        raise VaryError(f"--vary {key}={raw}: {msg}" if key else msg) from None


def _override(data: dict, key: str, raw: str, value, src: Path):
    if key == "geometry.file":
        if not isinstance(value, str):  # 42 or true would be read as a name in a scratch folder
            raise VaryError(f"--vary {key}={raw}: a file name is needed, got "
                            f"{type(value).__name__} {value!r} (write it as \"{raw}\" if it "
                            "really is the name)")
        value = str((src.parent / Path(value).expanduser()).resolve())
    return apply_override(data, key, raw, value)


def make_variants(case_paths, vary_specs=()) -> list:
    """The variants of a batch: every case file x the grid of --vary values.

    Parameters
    ----------
    case_paths : one or more case files.
    vary_specs : strings 'KEY=V1,V2,...' (dotted case-file key paths).

    Returns
    -------
    list of Variant, in grid order (the last --vary changes fastest). Raises VaryError or
    CaseError (one line) before anything runs.
    """
    from geomload.export.atomic import safe_name

    paths = [Path(p) for p in case_paths]
    if not paths:
        raise VaryError("batch: give at least one case file")
    vary = [parse_vary(s) for s in vary_specs]
    combos = _grid(vary)
    out, seen = [], {}
    with tempfile.TemporaryDirectory(prefix="geomload-vary-") as tmp:
        for path in paths:
            src = path.resolve()
            base_data = read_case_data(path)
            _absolute_geometry(base_data, src.parent)
            if not combos[0]:
                _check(base_data, base_data, "", "", Path(tmp))
            checked = set()
            for key, vals in vary:  # each value alone first: the error names its --vary
                for raw, value in vals:
                    one = json.loads(json.dumps(base_data))  # a deep copy of plain TOML data
                    _override(one, key, raw, value, src)
                    _check(one, base_data, key, raw, Path(tmp))
                    checked.add((key, raw))
            for i, combo in enumerate(combos):
                data = json.loads(json.dumps(base_data))
                typed = tuple((key, _override(data, key, raw, value, src))
                              for key, raw, value in combo)
                if len(combo) > 1:
                    _check(data, base_data, " ".join(k for k, _r, _v in combo),
                           ",".join(r for _k, r, _v in combo), Path(tmp))
                if not combo:
                    name = safe_name(path.stem)[:NAME_MAX]
                elif len(paths) == 1:
                    name = _grid_name(i, len(combos), typed)
                else:
                    name = safe_name(f"{path.stem}_{_grid_name(i, len(combos), typed)}")[:NAME_MAX]
                if name.lower() in seen:
                    raise VaryError(f"batch: duplicate variant name {name!r} from "
                                    f"{seen[name.lower()]} and {src} (rename one case file)")
                seen[name.lower()] = str(src)
                head = [f"# geomload batch variant {name} of {src}"]
                head += [f"# varied: {k} = {value_text(v)}" for k, v in typed]
                text = "\n".join(head) + "\n" + dumps(data)
                group = json.dumps(data.get("geometry", {}), sort_keys=True)
                out.append(Variant(name=name, source=str(src), overrides=typed,
                                   toml_text=text, group=group, data=data))
    return out
