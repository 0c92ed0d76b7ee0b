"""HTML pieces of the report: escaped user text and plain tables."""

from __future__ import annotations

import html

import numpy as np

from geomload.textsafe import printable


def esc(s) -> str:
    """HTML-escaped user text; control characters (terminal escapes) shown as backslash escapes."""
    return html.escape(printable(s, keep_newlines=True), quote=True)


def fmt(v, nd=4) -> str:
    if isinstance(v, (float, np.floating)):
        return f"{float(v):.{nd}g}"
    return esc(v)


def table(header, rows, text_cols=(0,), row_class=None) -> str:
    th = "".join(f'<th class="{"t" if i in text_cols else ""}">{esc(h)}</th>' for i, h in enumerate(header))
    def tr(k, r):
        cls = row_class(k, r) if row_class else ""
        return (f'<tr{f" class={chr(34)}{cls}{chr(34)}" if cls else ""}>'
                + "".join(f'<td class="{"t" if i in text_cols else ""}">{fmt(v)}</td>'
                          for i, v in enumerate(r)) + "</tr>")

    body = "".join(tr(k, r) for k, r in enumerate(rows))
    return f"<table><tr>{th}</tr>{body}</table>"


__all__ = ["esc", "fmt", "table"]
