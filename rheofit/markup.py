"""HTML building blocks: escaping, tags and small tables (for the report and for notebooks).

Every piece of text goes through :func:`esc` (``html.escape``) unless it is
wrapped in :class:`Raw`, which marks HTML built here.  The result objects'
``_repr_html_`` (fits, predictions, comparisons) and the HTML report
(:mod:`rheofit.report.html_parts`) use these, so that user strings (a sample
named ``<script>``) are escaped in one place.

>>> str(table(["a <b>"], [["x & y"]]))
'<table><thead><tr><th>a &lt;b&gt;</th></tr></thead><tbody><tr><td>x &amp; y</td></tr></tbody></table>'
"""

from __future__ import annotations

import html

__all__ = ["Raw", "esc", "join", "tag", "table", "key_values"]


class Raw(str):
    """HTML built here (already escaped); any other str is escaped when used."""


def esc(value) -> str:
    """Text made safe for HTML (``<``, ``>``, ``&``, quotes escaped)."""
    return value if isinstance(value, Raw) else html.escape(str(value), quote=True)


def join(*parts) -> Raw:
    """Concatenate pieces, escaping the plain ones."""
    return Raw("".join(esc(p) for p in parts if p is not None))


def tag(name: str, content="", **attributes) -> Raw:
    """``<name attr="...">content</name>``; attribute values escaped (``class_`` for class)."""
    attrs = "".join(f' {key.rstrip("_").replace("_", "-")}="{esc(value)}"'
                    for key, value in attributes.items() if value is not None)
    return Raw(f"<{name}{attrs}>{esc(content)}</{name}>")


def table(headers, rows, *, caption=None, class_=None) -> Raw:
    """A table; cells are escaped unless Raw."""
    head = "".join(f"<th>{esc(h)}</th>" for h in headers)
    body = "".join("<tr>" + "".join(f"<td>{esc(c)}</td>" for c in row) + "</tr>" for row in rows)
    cap = f"<caption>{esc(caption)}</caption>" if caption else ""
    cls = f' class="{esc(class_)}"' if class_ else ""
    return Raw(f"<table{cls}>{cap}<thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>")


def key_values(pairs) -> Raw:
    """A two-column table of (name, value) without a header."""
    rows = "".join(f"<tr><th>{esc(k)}</th><td>{esc(v)}</td></tr>" for k, v in pairs)
    return Raw(f'<table class="kv"><tbody>{rows}</tbody></table>')
