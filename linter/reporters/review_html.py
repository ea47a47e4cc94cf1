"""The reviewer's audit as one self-contained HTML file (inline CSS, figures as inline SVG, no script).

Every string from a deck goes through :func:`esc` (``&``, ``<``, ``>``, quotes; control characters and
bidirectional marks are made visible before that by ``reporters.visible``). The document is written
XHTML-style (void elements closed, only the XML entities), so a strict XML parser reads it as well as a
browser; a Content-Security-Policy meta tag forbids scripts and outside resources in any case. The
print stylesheet starts every material on a new page.
"""
from __future__ import annotations

import html

from .review_doc import NUMERIC, Box, Bullets, Figure, H, P, Section, Table

CSS = """
:root { --ink: #1d1d1f; --muted: #5a5a60; --line: #d0d0d6; --band: #f4f5f8; --err: #b00020; --warn: #8a5300;
        --note: #1f4e79; }
* { box-sizing: border-box; }
body { font: 14px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", sans-serif; color: var(--ink);
       margin: 0; background: #fff; }
main { max-width: 1100px; margin: 0 auto; padding: 24px 28px 60px; }
h1 { font-size: 26px; margin: 0 0 12px; }
h2 { font-size: 21px; margin: 34px 0 10px; padding-bottom: 4px; border-bottom: 2px solid var(--ink); }
h3 { font-size: 17px; margin: 26px 0 8px; padding-bottom: 2px; border-bottom: 1px solid var(--line); }
h4 { font-size: 14.5px; margin: 18px 0 6px; }
h1, h2, h3, h4, p, td, li { overflow-wrap: anywhere; }
th { overflow-wrap: normal; }
.box { border-left: 5px solid var(--warn); background: #fff6e5; padding: 8px 12px; margin: 12px 0; }
.box.skipped { border-color: var(--muted); background: var(--band); }
table { border-collapse: collapse; margin: 8px 0 14px; font-size: 13px; width: auto; max-width: 100%; }
p.caption { font-weight: 600; margin: 14px 0 0; color: var(--muted); font-size: 13px; }
p.caption + table { margin-top: 4px; }
th, td { border: 1px solid var(--line); padding: 3px 7px; vertical-align: top; text-align: left; }
th { background: var(--band); font-weight: 600; }
td.num { white-space: nowrap; overflow-wrap: normal; }
td .si { display: block; color: var(--muted); font-size: 11.5px; }
table.files td:last-child { font-family: ui-monospace, "DejaVu Sans Mono", monospace; font-size: 11.5px; }
code { font-family: ui-monospace, "DejaVu Sans Mono", monospace; background: var(--band); padding: 0 3px;
       border-radius: 3px; }
p.finding { margin: 8px 0 2px; padding-left: 8px; border-left: 4px solid var(--line); }
p.finding.error { border-color: var(--err); }
p.finding.warning { border-color: var(--warn); }
p.finding.note { border-color: var(--note); }
ul { margin: 4px 0 10px; padding-left: 22px; }
figure { margin: 12px 0 18px; }
figure svg { max-width: 100%; height: auto; display: block; }
figcaption { color: var(--muted); font-size: 12.5px; margin-top: 4px; }
a { color: var(--note); }
@media print {
  body { font-size: 10.5pt; }
  main { max-width: none; padding: 0; }
  section.material { break-before: page; }
  section.deck { break-before: page; }
  table, figure, p.finding { break-inside: avoid; }
  p.caption { break-after: avoid; }
  h2, h3, h4 { break-after: avoid; }
  a { color: inherit; text-decoration: none; }
}
@page { margin: 14mm 12mm; }
"""

_CSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:"


def esc(s) -> str:
    return html.escape(str(s), quote=True)


def _spans(spans) -> str:
    out = []
    for style, t in spans:
        if style.startswith("link:"):
            out.append(f'<a href="#{esc(style[5:])}">{esc(t)}</a>')
        elif style == "b":
            out.append(f"<strong>{esc(t)}</strong>")
        elif style == "code":
            out.append(f"<code>{esc(t)}</code>")
        elif style == "muted":
            out.append(f'<span class="muted">{esc(t)}</span>')
        else:
            out.append(esc(t))
    return "".join(out)


def _cell(c) -> str:
    if isinstance(c, tuple):
        return f'<td class="num">{esc(c[0])}<span class="si">{esc(c[1])}</span></td>'
    if isinstance(c, str) and NUMERIC.fullmatch(c):
        return f'<td class="num">{esc(c)}</td>'
    return f"<td>{esc(c)}</td>"


def render_node(n, out: list[str]) -> None:
    if isinstance(n, Section):
        cls = f' class="{esc(n.cls)}"' if n.cls else ""
        out.append(f'<section id="sec-{esc(n.anchor)}"{cls}>')
        for c in n.children:
            render_node(c, out)
        out.append("</section>")
    elif isinstance(n, H):
        anchor = f' id="{esc(n.anchor)}"' if n.anchor else ""
        out.append(f"<h{n.level}{anchor}>{esc(n.text)}</h{n.level}>")
    elif isinstance(n, P):
        cls = f' class="{esc(n.cls)}"' if n.cls else ""
        out.append(f"<p{cls}>{_spans(n.spans)}</p>")
    elif isinstance(n, Bullets):
        out.append("<ul>" + "".join(f"<li>{_spans(i)}</li>" for i in n.items) + "</ul>")
    elif isinstance(n, Table):
        cls = f' class="{esc(n.cls)}"' if n.cls else ""
        if n.caption:
            out.append(f'<p class="caption">{esc(n.caption)}</p>')
        out.append(f"<table{cls}>")
        out.append("<thead><tr>" + "".join(f"<th>{esc(h)}</th>" for h in n.head) + "</tr></thead><tbody>")
        for r in n.rows:
            out.append("<tr>" + "".join(_cell(c) for c in r) + "</tr>")
        out.append("</tbody></table>")
    elif isinstance(n, Figure):
        out.append(f"<figure>{n.svg}<figcaption>{esc(n.caption)}</figcaption></figure>")
    elif isinstance(n, Box):
        out.append(f'<div class="box {esc(n.kind)}">{_spans(n.spans)}</div>')


def render(title: str, nodes: list) -> str:
    out = ['<!DOCTYPE html>', '<html lang="en">', "<head>", '<meta charset="utf-8"/>',
           f'<meta http-equiv="Content-Security-Policy" content="{esc(_CSP)}"/>',
           '<meta name="viewport" content="width=device-width, initial-scale=1"/>',
           '<meta name="generator" content="deckwarden"/>',
           f"<title>{esc(title)}</title>", f"<style>{CSS}</style>", "</head>", "<body>", "<main>"]
    for n in nodes:
        render_node(n, out)
    out += ["</main>", "</body>", "</html>", ""]
    return "\n".join(out)


def report(result, stream, options=None) -> None:
    from .review import build

    title, nodes = build(result, options)
    stream.write(render(title, nodes))
