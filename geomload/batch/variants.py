"""Variants of a case file: a grid of ``--vary KEY=V1,V2,...`` overrides, or a list of case files.

A KEY is a case-file key by its dotted path: ``aircraft.gross_mass_kg``, ``spar.chord_fraction``,
``geometry.file``; an element of an array of tables is picked by its 1-based number in brackets,
``load_case[2].load_factor``, ``point_mass[1].mass_kg``. Values are TOML literals (``22.5``,
``true``, ``"mm"``, ``[0.0, 1500.0]``); an unquoted word is taken as text (``uniform``). Commas
inside brackets or quotes do not split values.

Each variant becomes a complete case file of its own (written into its run folder), in which
``geometry.file`` is an absolute path: a relative path resolves against the ORIGINAL case file's
folder, as it did in the original (a varied relative ``geometry.file`` too).

Checks, before anything runs (each a one-line error naming the --vary option, exit 1):
unknown key (with the closest known key), a value of the wrong type (the type of the value the
case file has there, else whatever the case-file reader rejects), a value the case-file reader
rejects, duplicate variant names from a list of case files.
"""

from __future__ import annotations

import difflib
import itertools
import json
import math
import re
import tempfile
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from geomload.errors import CaseError, InputError

_KEY_PART = re.compile(r"^([A-Za-z0-9_-]+)(?:\[(\d+)\])?$")
_BARE = re.compile(r"^[A-Za-z0-9_-]+$")
NAME_MAX = 60  # characters of a variant name (a folder name; long enough to stay readable)


class VaryError(InputError):
    """A --vary option or a list of case files cannot be turned into variants."""


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


# ------------------------------------------------------------------------------ parsing
def split_values(text: str) -> list:
    """Split 'a,b,[1,2],"x,y"' on the commas outside brackets and quotes."""
    out, depth, quote, cur = [], 0, None, []
    for ch in text:
        if quote:
            cur.append(ch)
            if ch == quote:
                quote = None
            continue
        if ch in "\"'":
            quote = ch
        elif ch in "[{":
            depth += 1
        elif ch in "]}":
            depth -= 1
        elif ch == "," and depth == 0:
            out.append("".join(cur).strip())
            cur = []
            continue
        cur.append(ch)
    out.append("".join(cur).strip())
    return out


def parse_value(text: str):
    """A TOML literal ('22.5', 'true', '"mm"', '[1, 2]'), else the text itself (a bare word)."""
    try:
        return tomllib.loads(f"v = {text}")["v"]
    except tomllib.TOMLDecodeError:
        return text


def parse_vary(spec: str) -> tuple:
    """'KEY=V1,V2' -> (KEY, [(raw text, value), ...]); VaryError when malformed."""
    key, sep, rest = str(spec).partition("=")
    key = key.strip()
    if not sep or not key:
        raise VaryError(f"--vary {spec!r}: expected KEY=V1,V2,... (e.g. aircraft.gross_mass_kg=20,22)")
    raws = split_values(rest)
    if any(not r for r in raws):
        raise VaryError(f"--vary {key}: empty value in {rest!r}")
    parse_key(key)
    return key, [(r, parse_value(r)) for r in raws]


def parse_key(key: str) -> list:
    """'load_case[2].load_factor' -> [('load_case', 1), ('load_factor', None)] (0-based index)."""
    parts = []
    for p in key.split("."):
        m = _KEY_PART.match(p.strip())
        if not m:
            raise VaryError(f"--vary {key}: {p!r} is not a key (letters, digits, _ and -, "
                            "optionally [N] for the N-th table of an array)")
        idx = int(m.group(2)) - 1 if m.group(2) is not None else None
        if idx is not None and idx < 0:
            raise VaryError(f"--vary {key}: tables are numbered from 1")
        parts.append((m.group(1), idx))
    return parts


def known_keys(data: dict, prefix: str = "") -> list:
    """Every dotted key path of a parsed case file (arrays of tables as NAME[i])."""
    out = []
    for k, v in data.items():
        path = f"{prefix}{k}"
        if isinstance(v, dict):
            out += known_keys(v, path + ".")
        elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
            for i, x in enumerate(v):
                out += known_keys(x, f"{path}[{i + 1}].")
        else:
            out.append(path)
    return out


def _template_keys() -> list:
    """The keys of the case-file template (every key, its commented-out options included)."""
    from geomload.case import template

    lines = []
    for line in template("x.stl").splitlines():
        s = line.lstrip("# ").rstrip()
        if s.startswith("[") or re.match(r"^[A-Za-z_][A-Za-z0-9_]*\s*=", s):
            lines.append(s.split("#")[0] if not s.startswith("[") else s)
    out = set()
    table = ""
    for s in lines:
        if s.startswith("[["):
            table = s.strip("[] ") + "[1]"
        elif s.startswith("["):
            table = s.strip("[] ")
        else:
            k = s.split("=")[0].strip()
            out.add(f"{table}.{k}" if table else k)
    return sorted(out)


def closest_key(key: str, candidates) -> str:
    """The closest candidate to `key` ('' when nothing is close): a near spelling of the last
    part in the same table first, then the same last part in another table, then the whole
    path."""
    cands = sorted(set(candidates))
    parent, _, leaf = key.rpartition(".")
    same = {c.rpartition(".")[2]: c for c in cands if c.rpartition(".")[0] == parent}
    m = difflib.get_close_matches(leaf, list(same), n=1, cutoff=0.6)
    if m:
        return same[m[0]]
    anywhere = {}
    for c in cands:
        anywhere.setdefault(c.rpartition(".")[2], c)
    m = difflib.get_close_matches(leaf, list(anywhere), n=1, cutoff=0.75)
    if m:
        return anywhere[m[0]]
    m = difflib.get_close_matches(key, cands, n=1, cutoff=0.8)
    return m[0] if m else ""


def _unknown(key: str, data: dict) -> VaryError:
    hint = closest_key(key, known_keys(data) + _template_keys())
    return VaryError(f"--vary {key}: unknown case-file key"
                     + (f" (did you mean {hint!r}?)" if hint else ""))


# ----------------------------------------------------------------------------- applying
def _container(data: dict, key: str, parts: list, create: bool):
    node = data
    for name, idx in parts[:-1]:
        if name not in node:
            if not create or idx is not None:
                raise _unknown(key, data)
            node[name] = {}
        node = node[name]
        if idx is not None:
            if not isinstance(node, list) or idx >= len(node):
                n = len(node) if isinstance(node, list) else 0
                raise VaryError(f"--vary {key}: the case file has {n} [[{name}]] table(s)")
            node = node[idx]
        if not isinstance(node, dict):
            raise VaryError(f"--vary {key}: {name!r} is not a table")
    return node


def _typed(key: str, raw: str, old, new):
    """`new` converted to the type of the case file's `old` value, or VaryError."""
    if isinstance(old, dict) or (isinstance(old, list) and old and isinstance(old[0], dict)):
        raise VaryError(f"--vary {key}: is a table; vary the keys inside it")
    if isinstance(old, bool):
        if not isinstance(new, bool):
            raise VaryError(f"--vary {key}={raw}: must be true or false (as in the case file)")
        return new
    if isinstance(old, int):
        if isinstance(new, bool) or not isinstance(new, int):
            raise VaryError(f"--vary {key}={raw}: must be an integer (as in the case file)")
        return new
    if isinstance(old, float):
        if isinstance(new, bool) or not isinstance(new, (int, float)) or not math.isfinite(new):
            raise VaryError(f"--vary {key}={raw}: must be a number (as in the case file)")
        return float(new)
    if isinstance(old, str):
        import re

        unit = re.fullmatch(r"\s*[-+]?[\d.]+(?:[eE][-+]?\d+)?\s*([A-Za-z/]+)\s*", old)
        if unit and isinstance(new, (int, float)) and not isinstance(new, bool):
            return f"{raw.strip()} {unit.group(1)}"  # a value written with its unit keeps it
        return new if isinstance(new, str) else raw
    if isinstance(old, list):
        if not isinstance(new, list):
            raise VaryError(f"--vary {key}={raw}: must be an array like [1.0, 2.0] (as in the "
                            "case file)")
        return new
    return new


def apply_override(data: dict, key: str, raw: str, value) -> None:
    """Set `key` (dotted path) in `data` (a parsed case file) to `value`, type-checked."""
    parts = parse_key(key)
    node = _container(data, key, parts, create=True)
    name, idx = parts[-1]
    if idx is not None:
        raise VaryError(f"--vary {key}: vary a key inside the table, e.g. {key}.mass_kg")
    node[name] = _typed(key, raw, node[name], value) if name in node else value
    return node[name]


def value_text(v) -> str:
    """A value as written in the batch table and variant names (floats round-trip exactly)."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, float):
        return repr(v)
    if isinstance(v, str):
        return v
    return dumps({"v": v}).split("=", 1)[1].strip()


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

    fd, name = tempfile.mkstemp(suffix=".toml", dir=check_dir)
    p = Path(name)
    with open(fd, "w", encoding="utf-8") as fh:
        fh.write(dumps(variant_data))
    try:
        _api.load_case(p)
    except CaseError as exc:
        msg = str(exc)
        msg = msg[len(str(p)) + 2:] if msg.startswith(str(p)) else msg
        if key and re.match(r"^([A-Za-z0-9_.\[\]-]+): unknown key", msg):
            raise _unknown(key, base_data) from None
        raise VaryError(f"--vary {key}={raw}: {msg}" if key else msg) from None


def _override(data: dict, key: str, raw: str, value, src: Path):
    if key == "geometry.file" and isinstance(value, str):
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


# -------------------------------------------------------------------------- TOML writer
def _key(k: str) -> str:
    return k if _BARE.match(k) else json.dumps(k)


def _scalar(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if not math.isfinite(v):
            return "nan" if math.isnan(v) else ("inf" if v > 0 else "-inf")
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, list):
        return "[" + ", ".join(_scalar(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_key(k)} = {_scalar(x)}" for k, x in v.items()) + "}"
    raise VaryError(f"cannot write a value of type {type(v).__name__} to a case file")


def _is_table_array(v) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def dumps(data: dict, prefix: str = "") -> str:
    """A parsed TOML document back to TOML text (tomllib.loads(dumps(d)) == d)."""
    lines = []
    for k, v in data.items():
        if not isinstance(v, dict) and not _is_table_array(v):
            lines.append(f"{_key(k)} = {_scalar(v)}")
    for k, v in data.items():
        name = f"{prefix}{_key(k)}"
        if isinstance(v, dict):
            lines += ["", f"[{name}]", dumps(v, name + ".").rstrip("\n")]
        elif _is_table_array(v):
            for item in v:
                lines += ["", f"[[{name}]]", dumps(item, name + ".").rstrip("\n")]
    return "\n".join(x for x in lines if x is not None).lstrip("\n") + "\n"
