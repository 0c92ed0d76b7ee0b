"""The commented case-file template (template.toml beside this module) and a TOML value writer.

The template is a real TOML file. :func:`case_template` fills named keys of it with values
written by :func:`toml_value` (a key given as a comment, ``# units = "mm"``, is switched on), and
checks that the result parses and reads back the values given, whatever they hold.
"""

from __future__ import annotations

import math
import re
import tomllib
from importlib import resources

from geomload.errors import InputError

_LINE = re.compile(r'^(?P<off># )?(?P<key>[A-Za-z_][A-Za-z0-9_]*) = (?P<value>"[^"]*"|[^\s#]+)'
                   r'(?P<rest>\s*(#.*)?)$')
_TABLE = re.compile(r"^\[\[?(?P<name>[A-Za-z_][A-Za-z0-9_.]*)\]\]?")
_ESCAPES = {"\\": "\\\\", '"': '\\"', "\b": "\\b", "\t": "\\t", "\n": "\\n", "\f": "\\f",
            "\r": "\\r"}


def toml_value(value) -> str:
    """A TOML literal for a str, bool, int or finite float (TOML 1.0 basic strings: every
    control character escaped, the rest of Unicode written as is)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise InputError(f"case template: {value!r} is not a finite number")
        return repr(value)
    if isinstance(value, str):
        out = []
        for ch in value:
            if ch in _ESCAPES:
                out.append(_ESCAPES[ch])
            elif ord(ch) < 0x20 or ord(ch) == 0x7F:
                out.append(f"\\u{ord(ch):04X}")
            else:
                out.append(ch)
        return '"' + "".join(out) + '"'
    raise InputError(f"case template: cannot write a {type(value).__name__} as TOML")


def template_text() -> str:
    """The unfilled template (valid TOML)."""
    return resources.files("geomload.config").joinpath("template.toml").read_text(encoding="utf-8")


def fill_template(text: str, values: dict) -> str:
    """``text`` with each (table, key) of ``values`` set to its value; the template line of the
    key (set, or commented out as ``# key = ...``) is replaced, its trailing comment kept."""
    table, done, out = "", set(), []
    for line in text.splitlines(keepends=True):
        m_table = _TABLE.match(line)
        if m_table:
            table = m_table.group("name")
        m = _LINE.match(line.rstrip("\n"))
        if m and (table, m.group("key")) in values and (table, m.group("key")) not in done:
            key = (table, m.group("key"))
            new = f"{m.group('key')} = {toml_value(values[key])}"
            width = len(m.group(0)) - len(m.group("rest"))
            line = new.ljust(width) + m.group("rest") + "\n"
            done.add(key)
        out.append(line)
    missing = [f"{t}.{k}" for t, k in values if (t, k) not in done]
    if missing:
        raise InputError(f"case template: no key {', '.join(missing)} in the template")
    filled = "".join(out)
    data = tomllib.loads(filled)  # a writer fault must not reach the user as a broken file
    for (t, k), v in values.items():
        if data.get(t, {}).get(k) != v:
            raise InputError(f"case template: {t}.{k} does not read back as written")
    return filled


FRAME_LINE = "# THIS WING: "  # the template line that says where this wing's frame sits


def case_template(geometry_path, units=None, frame_lines=None) -> str:
    """The commented case-file template for ``geometry_path`` (written as given), with
    ``[geometry] units`` set when ``units`` is given; valid TOML that read_case_file accepts once
    the geometry path is right relative to the case file.

    frame_lines : lines saying where this wing's frame sits in the CAD model (origin in CAD
        coordinates and unit, axes: :func:`geomload.config.frame_text.frame_origin_lines`),
        written as comments in place of the template's pointer to `geomload inspect`."""
    values = {("geometry", "file"): str(geometry_path)}
    if units is not None:
        values[("geometry", "units")] = str(units)
    text = fill_template(template_text(), values)
    if frame_lines:
        head = [f"# THIS WING ({printable_comment(str(geometry_path))}):"]
        body = "".join(f"{c}\n" for c in head + [f"#   {printable_comment(ln.strip())}"
                                                  for ln in frame_lines])
        out = []
        for line in text.splitlines(keepends=True):
            out.append(body if line.startswith(FRAME_LINE) else line)
        text = "".join(out)
        tomllib.loads(text)  # comments only: still the same TOML
    return text


def printable_comment(text: str) -> str:
    """`text` safe inside a TOML comment: control characters (a line break would end the
    comment) written as \\uXXXX."""
    return "".join(f"\\u{ord(ch):04X}" if ord(ch) < 0x20 or ord(ch) == 0x7F else ch
                   for ch in text)
