"""The case-file table reader: typed keys, values with their unit, renamed keys, leftovers.

Every problem raises :class:`geomload.errors.CaseError` with one line naming the file and the
key as the user wrote it.
"""

from __future__ import annotations

import difflib
import math

import numpy as np

from geomload.errors import CaseError

from . import quantities as qty

MAX_COUNT = 100_000  # no count in a case file (stations, panels, bodies) is sensibly larger


class Table:
    """Reads keys of one TOML table, remembering which were used, so leftovers are reported."""

    def __init__(self, data, where: str, path: str, warnings: list | None = None,
                 spelled: dict | None = None):
        self.path, self.where = path, where
        self.warnings = [] if warnings is None else warnings
        if not isinstance(data, dict):
            self.fail("", f"must be a table, got {type(data).__name__}")
        self.data, self.used = dict(data), set()
        before = set(self.data)
        both = qty.rename_keys(self.data, where, self.warnings)
        # an error names the key as the user wrote it
        self.written = {qty.new_name(where, o): o for o in before - set(self.data)}
        self.spelled = spelled
        if spelled is not None:  # the same for the checks made once the wing is read
            spelled.update({f"{where}.{k}": f"{where}.{o}" for k, o in self.written.items()})
        if both:
            self.fail(both, f"give either {both} or {qty.new_name(where, both)}, not both")
        bad = qty.suffix_conflict(self.data, where)
        if bad:
            self.fail(*bad)
        self.text_units = {}  # key -> its value was written with its unit ("52 kt")

    def key(self, k: str) -> str:
        k = getattr(self, "written", {}).get(k, k)
        return f"{self.where}.{k}" if self.where and k else (self.where or k)

    def fail(self, k: str, msg: str):
        raise CaseError(f"{self.path}: {self.key(k)}: {msg}")

    def get(self, k, kind, default=None, required=False):
        self.used.add(k)
        if k not in self.data:
            if required:  # a misspelling of the missing key is the likelier mistake
                names = self._spellings(k)
                unused = [d for d in self.data if d not in self.used]
                close = [c for n in names for c in difflib.get_close_matches(n, unused, n=1)]
                if close:
                    best = difflib.get_close_matches(close[0], names, n=1, cutoff=0.0)[0]
                    self.fail(close[0], f"unknown key (did you mean {best!r}?)")
                self.fail(k, "missing (required)")
            return default
        v = self.data[k]
        if kind is str and k in qty.UNIT_KEYS and isinstance(v, str):
            own = [q for q in qty.UNIT_KEYS[k] if isinstance(self.data.get(q), str)]
            if own:
                self.fail(k, f"{own[0]} already carries its unit; drop {k}")
            kinds = qty.QUANTITY_KEYS.get(qty.table_kind(self.where), {})
            ex = next((q for q in qty.UNIT_KEYS[k] if q in kinds), qty.UNIT_KEYS[k][0])
            self.warnings.append(f"{self.key(k)}: write the unit in the value instead, e.g. "
                                 f"{ex} = \"{qty.example(kinds.get(ex, 'speed'))}\" "
                                 f"({k} still works)")
        kinds = qty.QUANTITY_KEYS.get(qty.table_kind(self.where), {})
        if kind is float and k in kinds and kinds[k] in qty.UNIT_REQUIRED and \
                not isinstance(v, str):
            self.fail(k, f"write the value with its unit, e.g. {k} = \"{qty.example(kinds[k])}\" "
                         f"(units: {qty.shown_units(kinds[k])})")
        if kind is float and isinstance(v, str) and k in kinds:
            try:
                v = qty.parse_quantity(v, kinds[k])
            except ValueError as exc:
                self.fail(k, str(exc))
            self.text_units[k] = True
            return v
        if kind is float:
            if isinstance(v, bool) or not isinstance(v, (int, float)):
                self.fail(k, f"must be a number, got {v!r}")
            try:
                v = float(v)
            except OverflowError:
                self.fail(k, "must be a number, got an integer too large to be one")
            if not math.isfinite(v):
                self.fail(k, f"must be a number, got {v!r} (only finite values are allowed)")
            return v
        if kind is int:
            if isinstance(v, bool) or not isinstance(v, int):
                self.fail(k, f"must be an integer, got {v!r}")
            if abs(v) > MAX_COUNT:
                self.fail(k, f"{v} is too large (at most {MAX_COUNT})")
            return v
        if not isinstance(v, kind):
            self.fail(k, f"must be of type {kind.__name__}, got {v!r}")
        return v

    def positive(self, k, default=None, required=False, allow_zero=False):
        v = self.get(k, float, default, required)
        if v is not None and (v < 0 or (v == 0 and not allow_zero)):
            shown = self.data[k] if self.text_units.get(k) else f"{v:g}"  # as written
            self.fail(k, f"must be {'>= 0' if allow_zero else '> 0'}, got {shown}")
        return v

    def choice(self, k, options, default=None, required=False, fold=str.lower):
        v = self.get(k, str, default, required)
        if v is not None and fold(v) not in options:
            self.fail(k, f"{v!r} is not one of {', '.join(repr(o) for o in options)}")
        return None if v is None else fold(v)

    def fraction(self, k, default=None):
        v = self.get(k, float, default)
        if v is not None and not 0.0 <= v <= 1.0:
            self.fail(k, f"must be between 0 and 1, got {v:g}")
        return v

    def done(self):
        extra = [k for k in self.data if k not in self.used]
        if extra:
            k = extra[0]
            close = difflib.get_close_matches(k, sorted({n for u in self.used
                                                         for n in self._spellings(u)}), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            self.fail(k, f"unknown key{hint}")



    def _spellings(self, k: str) -> list:
        """k and its older spellings ending in a unit (for "did you mean")."""
        kind = qty.table_kind(self.where)
        return [k] + [old for (tab, old), (new, _) in qty.SUFFIXED.items()
                      if tab == kind and new == k]

    def measured(self, k, kind, required=False):
        """(value, written with its unit) of key k, or None when absent: a number as written (its
        unit is the caller's: SI, or the CAD unit of a CAD-frame position), a text such as
        "350 mm" in SI."""
        if k not in self.data:
            self.get(k, float, None, required)  # the missing-key error when required
            return None
        self.used.add(k)
        try:
            return qty.number_or_quantity(self.data[k], kind)
        except ValueError as exc:
            self.fail(k, str(exc))

    def rows(self, k, width: int, kind: str, what: str, min_rows=1):
        """(values, with_unit) arrays of shape (m, width) of a list of rows (a list of numbers
        when width is 1), each entry a number or a text with its unit; None when absent.
        `what` describes a row in the error ("[x, y, z] points")."""
        v = self.get(k, list)
        if v is None:
            return None
        rows = v if width > 1 else [[e] for e in v]
        if self.written.get(k, k) != k and any(isinstance(e, str) for r in rows
                                                if isinstance(r, list) for e in r):
            unit = qty.SUFFIXED.get((qty.table_kind(self.where), self.written[k]), ("", "?"))[1]
            self.fail(k, f"its name fixes the unit ({unit}): give numbers, or write the values "
                         f"with their unit as {k} = [...]")
        if len(rows) < min_rows or not all(isinstance(r, list) and len(r) == width for r in rows):
            self.fail(k, f"must be a list of at least {min_rows} {what}")
        vals, units = [], []
        for r in rows:
            for e in r:
                try:
                    val, has = qty.number_or_quantity(e, kind)
                except ValueError as exc:
                    self.fail(k, f"{what}: {exc}")
                vals.append(val)
                units.append(has)
        shape = (len(rows), width)
        return np.array(vals, float).reshape(shape), np.array(units, bool).reshape(shape)
