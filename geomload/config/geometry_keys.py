"""Case-file keys of `[geometry]` that name CAD axes: checked here, key by key."""

from __future__ import annotations

import re

AXIS = re.compile(r"^[+-]?[xyz]$", re.IGNORECASE)  # "z", "+Y", "-y": an optionally signed CAD axis


def axis_key(t, key):
    """The value of an axis key of table reader `t` ("x", "+y", "-z"; case folded), or None.
    A bad value fails naming the key."""
    v = t.get(key, str)
    if v is None:
        return None
    s = v.strip()
    if not AXIS.match(s):
        t.fail(key, f"{v!r} is not a CAD axis: one of x, y, z, optionally signed (e.g. \"-y\": up "
                    "is the CAD's negative y)")
    return s.lower()
