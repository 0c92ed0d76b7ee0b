"""Indented strict-JSON text of plain run data, fast, byte for byte the standard library's.

`dumps_safe(obj, indent)` returns exactly the text of::

    json.dumps(textsafe.json_safe(obj), indent=indent, allow_nan=False, ensure_ascii=False)

(every non-finite number as null, numpy scalars and arrays as plain numbers and lists, dict keys
as str, any other object as its str), in one pass and without the standard library's indented
encoder, which is pure Python and passes every value up through one generator per nesting
level. Numbers are written by the same functions json uses (``float.__repr__``,
``int.__repr__``), strings by json's own ``encode_basestring`` and the layout is json's: one
item per line, ``indent`` spaces per level, ``","`` after an item and ``": "`` after a key,
``[]`` and ``{}`` for empty containers. Keys repeat across a run's cases, so each key's encoded
line start is kept per nesting level.
"""

from __future__ import annotations

import json
import math
from json.encoder import encode_basestring

import numpy as np

_FLOAT_REPR = float.__repr__
_INT_REPR = int.__repr__


def dumps_safe(obj, indent: int = 1) -> str:
    """The text of json.dumps(textsafe.json_safe(obj), indent=indent, allow_nan=False,
    ensure_ascii=False) (see the module docstring); indent: spaces per level (int >= 0)."""
    if not isinstance(indent, int) or isinstance(indent, bool) or indent < 0:
        raise ValueError("dumps_safe: indent must be an int >= 0")
    out: list = []
    _Encoder(" " * indent, out).value(obj, 0)
    return "".join(out)


class _Encoder:
    """Appends the pieces of the text to `out`; `value(v, level)` writes one value whose
    opening line is already written (a key or a list separator before it)."""

    def __init__(self, unit: str, out: list):
        self.unit = unit
        self.out = out
        self.keys: dict = {}   # (level, key) -> ',\n' + indent + '"key": ' (first: no comma)
        self.breaks: dict = {}  # level -> '\n' + indent of that level

    def _break(self, level: int) -> str:
        b = self.breaks.get(level)
        if b is None:
            b = self.breaks[level] = "\n" + self.unit * level
        return b

    def value(self, v, level: int) -> None:
        t = type(v)
        if t is float:
            self.out.append(_FLOAT_REPR(v) if v - v == 0.0 else "null")
        elif t is str:
            self.out.append(encode_basestring(v))
        elif t is dict:
            self.dict(v, level)
        elif t is list or t is tuple:
            self.list(v, level)
        elif v is None:
            self.out.append("null")
        elif t is bool:
            self.out.append("true" if v else "false")
        elif t is int:
            self.out.append(_INT_REPR(v))
        else:
            self.other(v, level)

    def other(self, v, level: int) -> None:
        """Every type but the exact plain ones, in textsafe.json_safe's order of checks."""
        if isinstance(v, dict):
            self.dict(v, level)
        elif isinstance(v, (list, tuple)):
            self.list(v, level)
        elif isinstance(v, np.ndarray):
            self.value(v.tolist(), level)
        elif isinstance(v, str):
            self.out.append(encode_basestring(v))
        elif isinstance(v, bool):
            self.out.append("true" if v else "false")
        elif isinstance(v, np.bool_):
            self.out.append("true" if bool(v) else "false")
        elif isinstance(v, np.integer):
            self.out.append(_INT_REPR(int(v)))
        elif isinstance(v, int):
            self.out.append(_INT_REPR(v))
        elif isinstance(v, (float, np.floating)):
            x = float(v)
            self.out.append(_FLOAT_REPR(x) if math.isfinite(x) else "null")
        else:
            self.out.append(encode_basestring(str(v)))

    def dict(self, d, level: int) -> None:
        if not d:
            self.out.append("{}")
            return
        if not all(type(k) is str for k in d):  # json_safe: str(key), a later duplicate wins
            d = {str(k): v for k, v in d.items()}
        inner = level + 1
        keys, out, value = self.keys, self.out, self.value
        first = True
        for k, v in d.items():
            head = keys.get((inner, k))
            if head is None:
                head = keys[(inner, k)] = ",\n" + self.unit * inner + encode_basestring(k) + ": "
            out.append("{" + head[1:] if first else head)
            first = False
            t = type(v)
            if t is float and v - v == 0.0:
                out.append(_FLOAT_REPR(v))
            else:
                value(v, inner)
        out.append(self._break(level) + "}")

    def list(self, a, level: int) -> None:
        if not a:
            self.out.append("[]")
            return
        inner = level + 1
        sep = "," + self._break(inner)
        out = self.out
        if all(type(x) is float for x in a):  # a numeric column: one join
            text = sep.join(map(_FLOAT_REPR, a))
            if "n" not in text:  # no 'nan' or 'inf': every number finite
                out.append("[" + sep[1:] + text + self._break(level) + "]")
                return
        first = True
        for x in a:
            out.append("[" + sep[1:] if first else sep)
            first = False
            self.value(x, inner)
        out.append(self._break(level) + "]")


def reference_dumps(obj, indent: int = 1) -> str:
    """The standard library's text that `dumps_safe` reproduces (slower; for checks)."""
    from geomload import textsafe

    return json.dumps(textsafe.json_safe(obj), indent=indent, allow_nan=False,
                      ensure_ascii=False)


__all__ = ["dumps_safe", "reference_dumps"]
