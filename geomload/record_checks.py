"""Construction checks shared by the records between stages (frozen dataclasses).

A record checks its fields once, in ``__post_init__``, and is never changed after: these
helpers coerce an array field to float, check its shape and finiteness, and set a field of a
frozen instance during that check. A failed check raises :class:`geomload.errors.InputError`
naming the record and the field.
"""

from __future__ import annotations

from typing import Any, Callable, Hashable, Optional

import numpy as np

from geomload.errors import InputError


def vector(name: str, a, n: int, *, finite: bool = True, width: Optional[int] = None):
    """``a`` as a float array of shape (n,) (or (n, width)); InputError naming ``name`` when the
    shape differs or, with ``finite``, when a value is NaN or infinite."""
    a = np.asarray(a, dtype=float)
    shape = (n,) if width is None else (n, width)
    if a.shape != shape:
        raise InputError(f"{name}: expected shape {shape}, got {a.shape}")
    if finite and not np.isfinite(a).all():  # the method: no dispatch overhead per call
        raise InputError(f"{name}: must be finite")
    return a


_F64 = np.dtype(np.float64)


def fields(obj, prefix: str, names, n: int, *, finite: bool = True,
           width: Optional[int] = None) -> None:
    """:func:`vector` on each field ``names`` of ``obj`` (set back as float arrays), the
    finiteness of all of them checked in one pass: the records built per case hold a dozen
    short arrays, where one check per array costs more than the arithmetic. The message on a
    failure is :func:`vector`'s, naming ``prefix`` and the first bad field."""
    shape = (n,) if width is None else (n, width)
    arrays = []
    for k in names:
        a = getattr(obj, k)
        if type(a) is not np.ndarray or a.dtype is not _F64:  # (an equal dtype: no copy)
            a = np.asarray(a, dtype=float)
            object.__setattr__(obj, k, a)
        if a.shape != shape:
            raise InputError(f"{prefix} {k}: expected shape {shape}, got {a.shape}")
        arrays.append(a)
    if finite and arrays and not np.isfinite(np.concatenate(arrays, axis=None)).all():
        bad = next(k for k, a in zip(names, arrays) if not np.isfinite(a).all())
        raise InputError(f"{prefix} {bad}: must be finite")


def set_field(obj, name: str, value) -> None:
    """Set a field of a frozen dataclass instance (only inside its ``__post_init__``)."""
    object.__setattr__(obj, name, value)


def check_type(name: str, value, kind, *, optional: bool = False) -> None:
    """TypeError naming ``name`` unless ``value`` is an instance of ``kind`` (or None when
    ``optional``): a record between stages holds records of the types it names."""
    if value is None and optional:
        return
    if not isinstance(value, kind):
        want = kind.__name__ if isinstance(kind, type) else " or ".join(k.__name__ for k in kind)
        raise TypeError(f"{name}: expected {want}{' or None' if optional else ''}, "
                        f"got {type(value).__name__}")


def check_items(name: str, items, kind) -> tuple:
    """``items`` as a tuple; TypeError naming ``name`` when one item is not a ``kind``."""
    items = tuple(items)
    bad = [type(i).__name__ for i in items if not isinstance(i, kind)]
    if bad:
        raise TypeError(f"{name}: {kind.__name__} records only, got {bad[0]}")
    return items


def _frozen(value):
    """``value`` with every numpy array in it (itself, or the items of a tuple or list, one
    level) made read-only; returned as is."""
    if isinstance(value, np.ndarray):
        value.setflags(write=False)
    elif isinstance(value, (tuple, list)):
        for v in value:
            if isinstance(v, np.ndarray):
                v.setflags(write=False)
    return value


def kept(cache: dict, key: Hashable, build: Callable[[], Any], keep: int):
    """``cache[key]``, or ``build()`` stored under ``key`` and returned: a bounded, read-only
    memo of what every case of a run shares (a grid's spar frame, a lattice's strips).

    The numpy arrays of a built value (the value itself, or the items of a tuple or list) are
    made read-only, since every caller shares them. The dict is cleared before it would hold
    more than ``keep`` entries (a long batch process does not grow it without bound; a run
    uses one or two entries). ``key`` must be exact (e.g. the arrays' bytes), not an ``id``:
    an equal key must mean an equal value.
    """
    try:
        return cache[key]
    except KeyError:
        pass
    value = _frozen(build())
    if len(cache) >= keep:
        cache.clear()
    cache[key] = value
    return value
