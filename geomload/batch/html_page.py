"""The one self-contained HTML page of the batch folder (index.html) and of a comparison
(compare.html): the same head, style, caution and footer, pictures inlined as PNG data."""

from __future__ import annotations

import base64
import html

from geomload import CAUTION, __version__

STYLE = ("body{font-family:sans-serif;margin:1.5em}table{border-collapse:collapse;font-size:12px}"
         "td,th{border:1px solid #bbb;padding:2px 6px}tr.failed{background:#fdd}"
         ".caution{border:2px solid #b00;padding:.5em;font-weight:bold}img{max-width:100%}")


def png_img(alt: str, data: bytes) -> str:
    """An <img> with the PNG `data` inlined (the page stays one file)."""
    return (f'<img alt="{html.escape(alt)}" '
            f'src="data:image/png;base64,{base64.b64encode(data).decode()}">')


def page(title: str, heading: str, body: str) -> str:
    """A complete page: `title` and `heading` are plain text (escaped here); `body` is HTML
    placed after the heading and the caution."""
    esc = html.escape
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>{esc(title)}</title>
<style>{STYLE}</style>
</head><body><h1>{esc(heading)}</h1>
<p class="caution">{esc(CAUTION)}</p>
{body}
<p>geomload {esc(__version__)}</p></body></html>
"""
