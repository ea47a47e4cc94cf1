"""The reviewer's audit in Markdown (``--format markdown``; ``check --format audit``).

The same document as the HTML audit (``review.py`` builds it, ``review_html.py`` renders it as HTML):
summary, the model, materials with constants as given and derived values (deck units and SI), usage
map, findings with rationale and remedy, suppressed findings, what was not checked, provenance.
Figures exist only in the HTML audit; here each is named with a pointer to it. Every deck string
is escaped (:func:`md`): it renders literally and cannot open a heading, a link, a table cell or
an HTML tag.
"""
from __future__ import annotations

import re
from typing import Any

from . import visible
from .review_doc import NUMERIC, Box, Bullets, Figure, H, P, Section, Table

#: characters that act anywhere in a line (emphasis, code, links, headings, table cells, strikethrough)
_PUNCT = re.compile(r"([\\`*_\[\]#|~])")
#: what acts only at the start of a line or list item (bullets, numbered items, setext underlines)
_LEADING = re.compile(r"^([-+=]|\d+[.)])")


def md(value: Any) -> str:
    """Deck text as literal Markdown: one line, HTML specials as entities, markup escaped."""
    s = visible(value)
    s = s.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    s = _PUNCT.sub(r"\\\1", s)
    m = _LEADING.match(s)
    if m:
        s = s[:m.end() - 1] + "\\" + s[m.end() - 1:]
    return s


def _spans(spans) -> str:
    out = []
    for style, t in spans:
        if style.startswith("link:"):
            out.append(f"[{md(t)}](#{style[5:]})")
        elif style == "b":
            out.append(f"**{md(t)}**")
        elif style == "code":
            v = visible(t)
            out.append(f"`{v}`" if "`" not in v else md(v))
        else:
            out.append(md(t))
    return "".join(out)


def _cell(c) -> str:
    if isinstance(c, tuple):
        return f"{_cell(c[0])} ({_cell(c[1])})"
    return c if isinstance(c, str) and NUMERIC.fullmatch(c) else md(c)


def render_node(n, out: list[str]) -> None:
    if isinstance(n, Section):
        for c in n.children:
            render_node(c, out)
    elif isinstance(n, H):
        anchor = f' <a id="{n.anchor}"></a>' if n.anchor else ""
        out += ["#" * n.level + " " + md(n.text) + anchor, ""]
    elif isinstance(n, P):
        out += [_spans(n.spans), ""]
    elif isinstance(n, Bullets):
        out += [f"- {_spans(i)}" for i in n.items] + [""]
    elif isinstance(n, Table):
        if n.caption:
            out += [f"*{md(n.caption)}*", ""]
        out.append("| " + " | ".join(md(h) for h in n.head) + " |")
        out.append("| " + " | ".join("---" for _ in n.head) + " |")
        out += ["| " + " | ".join(_cell(c) for c in r) + " |" for r in n.rows]
        out.append("")
    elif isinstance(n, Figure):
        out += [f"*Figure (in the HTML audit, `deckwarden audit`): {md(n.caption)}*", ""]
    elif isinstance(n, Box):
        out += ["> " + _spans(n.spans), ""]


def report(result, stream, options=None) -> None:
    from .review import build

    _title, nodes = build(result, options, figures=False)
    out: list[str] = []
    for n in nodes:
        if isinstance(n, Box) and n.kind == "skipped":
            continue  # Markdown never carries figures: nothing was skipped
        render_node(n, out)
    stream.write("\n".join(out))
