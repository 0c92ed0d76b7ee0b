"""``--vary KEY=V1,V2,...`` options: parsing the key (a case-file key by its dotted path, an
element of an array of tables by its 1-based number, ``load_case[2].load_factor``) and the values
(TOML literals, an unquoted word taken as text, commas inside brackets or quotes kept), the closest
known key for a misspelt one, and setting a value into a parsed case file with the type the case
file has there. Every failure is a VaryError: one line naming the --vary option.

A key may be given in either of its spellings, whichever the case file uses: the key named for
its quantity (``aircraft.gross_mass``, taking a number in SI or a text with its unit, "48 lb")
or the older one ending in its unit (``aircraft.gross_mass_kg``, a number in that unit), and the
renamed coefficient keys (``cl_max`` / ``section_cl_max``). The varied key replaces the file's
spelling in the variant (:mod:`geomload.config.quantities` lists the spellings).
"""

from __future__ import annotations

import difflib
import math
import re
import tomllib

from geomload.batch.toml_text import dumps
from geomload.config.quantities import QUANTITY_KEYS, RENAMED, SUFFIXED, UNIT_WORD
from geomload.errors import InputError

_KEY_PART = re.compile(r"^([A-Za-z0-9_-]+)(?:\[(\d+)\])?$")


class VaryError(InputError):
    """A --vary option or a list of case files cannot be turned into variants."""


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
        raise VaryError(f"--vary {spec!r}: expected KEY=V1,V2,... (e.g. aircraft.gross_mass=20,22)")
    raws = split_values(rest)
    if any(not r for r in raws):
        raise VaryError(f"--vary {key}: empty value in {rest!r}")
    parse_key(key)
    pairs = [(r, parse_value(r)) for r in raws]
    for i, (r, v) in enumerate(pairs):  # the same value twice would run the same variant twice
        for r2, v2 in pairs[:i]:
            numbers = all(isinstance(x, (int, float)) and not isinstance(x, bool) for x in (v, v2))
            if (numbers or type(v) is type(v2)) and v == v2:
                raise VaryError(f"--vary {key}: the value {r2} is given twice ({r2!r} and "
                                f"{r!r}); each value runs once")
    return key, pairs


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
        head = re.match(r"^\[\[?([A-Za-z_][A-Za-z0-9_.]*)\]\]?", s)
        if head and s.startswith("[["):
            table = head.group(1) + "[1]"
        elif head:
            table = head.group(1)
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


# ---------------------------------------------------------------------------- applying
def _container(data: dict, key: str, parts: list, create: bool):
    node = data
    for name, idx in parts[:-1]:
        if name not in node:
            if idx is not None and f"{name}[1]" in {k.split(".")[0] for k in _template_keys()}:
                raise VaryError(f"--vary {key}: the case file has no [[{name}]] table (add it "
                                "to the case file to vary its keys)")
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
        unit = re.fullmatch(r"\s*[-+]?[\d.]+(?:[eE][-+]?\d+)?\s*(" + UNIT_WORD + r")\s*", old)
        if unit and isinstance(new, (int, float)) and not isinstance(new, bool):
            return f"{raw.strip()} {unit.group(1)}"  # a value written with its unit keeps it
        return new if isinstance(new, str) else raw
    if isinstance(old, list):
        if not isinstance(new, list):
            raise VaryError(f"--vary {key}={raw}: must be an array like [1.0, 2.0] (as in the "
                            "case file)")
        return new
    return new


def spellings(table: str, name: str) -> list:
    """The other spellings of key `name` of case-file table `table` (a table of an array by its
    name, "point_mass"): its older name ending in its unit, or the name for its quantity, or the
    earlier name of a renamed key, or its new name."""
    out = []
    for (tab, old), (new, _unit) in SUFFIXED.items():
        if tab == table and name in (old, new):
            out.append(new if name == old else old)
    for (tab, old), new in RENAMED.items():
        if tab == table and name in (old, new):
            out.append(new if name == old else old)
    return out


def _respelled(node: dict, name: str, other: str, key: str, raw: str, value):
    """Put `value` under `name` in place of the file's other spelling `other` (same place in
    the table). A number moves as it is: a key ending in its unit takes a number in that unit,
    and the key named for its quantity a number in the same unit (SI; degrees for an angle)."""
    old = node[other]
    if isinstance(value, (int, float)) and not isinstance(value, bool) and \
            isinstance(old, (int, float, str)) and not isinstance(old, bool):
        if not math.isfinite(value):
            raise VaryError(f"--vary {key}={raw}: must be a finite number")
        new = float(value)
    elif isinstance(old, (list, bool)) or isinstance(value, str):
        new = value  # a list (a c.g. range) as given; a text: the case-file reader checks it
    else:
        new = _typed(key, raw, old, value)
    items = [(name if k == other else k, new if k == other else v) for k, v in node.items()]
    node.clear()
    node.update(items)
    return new


def apply_override(data: dict, key: str, raw: str, value) -> None:
    """Set `key` (dotted path) in `data` (a parsed case file) to `value`, type-checked; a key
    the file writes in its other spelling (``gross_mass`` / ``gross_mass_kg``) replaces it."""
    parts = parse_key(key)
    node = _container(data, key, parts, create=True)
    name, idx = parts[-1]
    if idx is not None:
        raise VaryError(f"--vary {key}: vary a key inside the table, e.g. {key}.mass")
    table = parts[-2][0] if len(parts) > 1 else ""
    if name not in node:
        other = next((o for o in spellings(table, name) if o in node), None)
        if other is not None:
            return _respelled(node, name, other, key, raw, value)
        node[name] = value
    elif (isinstance(value, str) and isinstance(node[name], (int, float))
          and not isinstance(node[name], bool) and name in QUANTITY_KEYS.get(table, {})):
        node[name] = value  # a quantity written with its unit ("48 lb"): the reader checks it
    else:
        node[name] = _typed(key, raw, node[name], value)
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


__all__ = ["VaryError", "split_values", "parse_value", "parse_vary", "parse_key", "known_keys",
           "closest_key", "apply_override", "value_text", "spellings"]
