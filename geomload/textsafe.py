"""Text from users made safe for where it is shown: the console, CSV cells, plot labels, JSON.

Names of cases, tanks and masses (and paths) come from the user and may hold any Unicode, terminal
control sequences, spreadsheet formula starters or matplotlib maths markers. Each function here
leaves ordinary text (``banked turn 60°``, ``Überziehen``) exactly as it is and changes only what
would be run or misread:

- `printable(s)`: control and invisible formatting characters (ESC, BEL, CR, bidi overrides...)
  shown as ``\\x1b``/``\\u202e`` escapes, so a name cannot move the cursor, recolour or rewrite
  the terminal.
- `csv_text_cell(s)`: a CSV text cell that a spreadsheet shows as text: a cell starting with
  ``=``, ``+``, ``-``, ``@`` (or TAB / CR, which some programs strip first) gets a leading single
  quote. Only text cells pass through it; numbers are written as numbers and never changed.
- `mpl_text(s)`: a label for matplotlib with every ``$`` escaped (no maths-text parsing of names).
- `json_safe(obj)`: a copy with every non-finite float (NaN, +-inf) replaced by None (JSON null),
  so ``json.dumps(..., allow_nan=False)`` always succeeds and the file is strict JSON.
- `ascii_key(s)`: an ASCII-only identifier part (file names, VTK array names); accents are
  dropped from their letters (``Überziehen`` -> ``Uberziehen``), anything else becomes ``_``.
"""

from __future__ import annotations

import math
import re
import unicodedata

FORMULA_START = ("=", "+", "-", "@", "\t", "\r")  # cells a spreadsheet may evaluate (common
# practice for CSV formula injection, no source): a leading single quote makes them text

CSV_HEADER_NOTE = ("text cells that begin with = + - or @ are written with a leading ' so that "
                   "spreadsheets show them as text instead of running them as formulas; numbers "
                   "are never changed")


def _escape_char(ch: str) -> str:
    o = ord(ch)
    if o < 0x100:
        return f"\\x{o:02x}"
    if o < 0x10000:
        return f"\\u{o:04x}"
    return f"\\U{o:08x}"


def _unsafe(ch: str) -> bool:
    # Cc: C0/C1 controls (ESC, BEL, CR, DEL, CSI 0x9b); Cf: invisible formatting (bidi overrides,
    # zero-width joiners); Zl/Zp: line/paragraph separators; Cs/Co/Cn: surrogates, private, unassigned
    return unicodedata.category(ch) in ("Cc", "Cf", "Zl", "Zp", "Cs", "Co", "Cn")


def printable(s, keep_newlines: bool = False) -> str:
    """`s` with every control / invisible formatting character shown as a backslash escape.

    keep_newlines: leave "\\n" and TAB as they are (for multi-line text such as a case file);
    otherwise they are escaped too, so one name stays on one line. A backslash itself is left alone (paths on
    Windows).
    """
    s = str(s)
    if s.isprintable():  # nothing to escape: str.isprintable() is False for every character
        return s         # of category C* or Z* but the ASCII space (the same Unicode database)
    if keep_newlines:  # the rule is per character: each piece between newlines and TABs alone
        return "".join(p if p in ("\n", "\t") else printable(p)
                       for p in _KEPT_SPACE.split(s))
    out = []
    for ch in s:
        if _unsafe(ch):
            out.append(_escape_char(ch))
        else:
            out.append(ch)
    return "".join(out)


_KEPT_SPACE = re.compile(r"([\n\t])")  # split keeping the separators


def csv_text_cell(s) -> str:
    """A CSV text cell shown as text by spreadsheets (see module docstring); '' -> '-'.

    The cell is also kept on one line and free of the CSV and comment metacharacters geomload's
    tables do not quote (',' -> ';', '"' -> "'", '#' -> '_').
    """
    t = " ".join(printable(" ".join(str(s).split())).split())
    t = t.replace(",", ";").replace('"', "'").replace("#", "_")
    if not t:
        return "-"  # an empty name: a visible placeholder
    if t.startswith(FORMULA_START):
        t = "'" + t
    return t


def mpl_text(s) -> str:
    """`s` for a matplotlib label or title: '$' escaped so no maths text is parsed."""
    return printable(s).replace("$", r"\$")


def json_safe(obj):
    """A copy of `obj` (dicts, lists, tuples, numbers, numpy scalars/arrays, strings) with NaN and
    infinities replaced by None."""
    try:
        import numpy as np
    except ImportError:  # pragma: no cover - numpy is a dependency
        np = None
    if isinstance(obj, dict):
        return {str(k): json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_safe(v) for v in obj]
    if np is not None and isinstance(obj, np.ndarray):
        return json_safe(obj.tolist())
    if isinstance(obj, bool) or obj is None or isinstance(obj, str):
        return obj
    if np is not None and isinstance(obj, np.bool_):
        return bool(obj)
    if np is not None and isinstance(obj, np.integer):
        return int(obj)
    if isinstance(obj, int):
        return obj
    if isinstance(obj, float) or (np is not None and isinstance(obj, np.floating)):
        x = float(obj)
        return x if math.isfinite(x) else None
    return str(obj)


_NON_KEY = re.compile(r"[^A-Za-z0-9_.+-]+")


def ascii_key(s) -> str:
    """An ASCII identifier part of `s` (may be '' when nothing ASCII remains)."""
    t = str(s)
    if not t.isascii():  # ASCII is its own NFKD form and holds no combining marks
        t = unicodedata.normalize("NFKD", t)
        t = "".join(ch for ch in t if not unicodedata.combining(ch))
    return _NON_KEY.sub("_", t).strip("._")
