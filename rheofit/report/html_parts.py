"""Small HTML building blocks for the report: lists, figures, the page (and, from
:mod:`rheofit.markup`, escaping, tags and tables).

Every piece of text goes through :func:`esc` (``html.escape``) unless it is
wrapped in :class:`Raw`, which marks HTML built here.  The page carries its
CSS inline and refers to nothing outside itself.

>>> str(bullets(["a <b>"]))
'<ul><li>a &lt;b&gt;</li></ul>'
"""

from __future__ import annotations

import math

from rheofit.markup import Raw, esc, join, key_values, table, tag

__all__ = ["Raw", "esc", "join", "tag", "table", "key_values", "bullets", "figure", "percent", "CSS", "page"]


def bullets(items, *, empty: str = "None.") -> Raw:
    """A bullet list, or a paragraph saying ``empty``.

    An item that is a (text, [sub-items]) pair gets a nested list.
    """
    items = list(items)
    if not items:
        return tag("p", empty, class_="quiet")
    return Raw("<ul>" + "".join(_item(i) for i in items) + "</ul>")


def _item(item) -> str:
    if isinstance(item, tuple):
        text, inner = item
        return f"<li>{esc(text)}{bullets(inner)}</li>"
    return f"<li>{esc(item)}</li>"


def figure(svg: str, caption: str, key: str) -> Raw:
    """An inline SVG figure with its caption (``svg`` comes from rheofit.report.plots)."""
    return Raw(f'<figure id="{esc(key)}">{svg}<figcaption>{esc(caption)}</figcaption></figure>')


def percent(x, digits: int = 1) -> str:
    """A fraction as a signed percentage ('+12.3 %'), '—' when missing."""
    if x is None or not math.isfinite(float(x)):
        return "—"
    return f"{100.0 * float(x):+.{digits}f} %"


CSS = """
:root { --ink:#1d1d1d; --muted:#5f6368; --line:#d5d9de; --soft:#f4f6f8; --accent:#0b3c6f;
        --warn:#8a4b08; --warnbg:#fff6e6; }
* { box-sizing: border-box; }
body { font: 15px/1.5 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial, sans-serif;
       color: var(--ink); margin: 0; background: #fff; }
main { max-width: 1120px; margin: 0 auto; padding: 1.5rem 1.5rem 3rem; }
h1 { font-size: 1.7rem; margin: 0 0 .2rem; color: var(--accent); }
h2 { font-size: 1.3rem; margin: 2.4rem 0 .6rem; padding-top: .6rem; border-top: 2px solid var(--accent); }
h3 { font-size: 1.08rem; margin: 1.6rem 0 .4rem; }
p { margin: .4rem 0 .7rem; }
code { font-family: ui-monospace, "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: .92em;
       background: var(--soft); padding: 0 .25em; border-radius: 3px; }
.quiet, .meta { color: var(--muted); }
.notice { border: 2px solid var(--warn); background: var(--warnbg); padding: .6rem .9rem;
          border-radius: 6px; font-weight: 600; }
.caution { border-left: 6px solid var(--warn); background: var(--warnbg); padding: .7rem 1rem;
           margin: 1.2rem 0; border-radius: 4px; }
.verdict-ok { color: #0b5d1e; font-weight: 600; }
.verdict-bad { color: #8a1c1c; font-weight: 600; }
table { border-collapse: collapse; margin: .5rem 0 1rem; font-size: .9rem; }
th, td { border-bottom: 1px solid var(--line); padding: .3rem .6rem; text-align: left; vertical-align: top; }
thead th { background: var(--soft); border-bottom: 2px solid var(--line); white-space: nowrap; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
table.kv th { font-weight: normal; color: var(--muted); background: none; white-space: nowrap; }
caption { caption-side: bottom; text-align: left; color: var(--muted); font-size: .82rem; padding-top: .3rem; }
.scroll { overflow-x: auto; }
.nowrap { white-space: nowrap; }
.figures { display: grid; grid-template-columns: repeat(auto-fill, minmax(440px, 1fr)); gap: 1.2rem; }
figure { margin: .5rem 0; }
figure svg { width: 100%; height: auto; display: block; }
figcaption { font-size: .85rem; color: var(--muted); margin-top: .2rem; }
nav ul { columns: 2; padding-left: 1.2rem; }
footer { margin-top: 3rem; color: var(--muted); font-size: .85rem; }
@media print {
  body { font-size: 11pt; }
  main { max-width: none; padding: 0; }
  h2 { break-before: page; }
  figure, table { break-inside: avoid; }
  .figures { display: block; }
  nav { display: none; }
}
"""


def page(title: str, body: str, *, generator: str = "rheofit") -> str:
    """A whole HTML document with inline CSS and no outside references."""
    return (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        f'<meta name="generator" content="{esc(generator)}">\n'
        f"<title>{esc(title)}</title>\n<style>{CSS}</style>\n</head>\n"
        f"<body>\n<main>\n{body}\n</main>\n</body>\n</html>\n"
    )
