"""A parsed TOML document back to TOML text, for the variant case files of a batch
(``tomllib.loads(dumps(d)) == d`` for the plain data tomllib returns)."""

from __future__ import annotations

import json
import math
import re

from geomload.errors import InputError

_BARE = re.compile(r"^[A-Za-z0-9_-]+$")


class TomlWriteError(InputError):
    """A value that has no TOML form here (e.g. a TOML date given to --vary)."""


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
    raise TomlWriteError(f"cannot write a value of type {type(v).__name__} to a case file")


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


__all__ = ["dumps", "TomlWriteError"]
