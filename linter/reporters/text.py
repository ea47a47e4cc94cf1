"""The terminal report (rich): per deck a header, the findings, the materials, what was not
checked; then the totals and the caution.

Colour only on a terminal, never with NO_COLOR or ``--no-color``; the severity is always
written as a word too. Deck strings go into :class:`rich.text.Text` objects after
:func:`visible`, so markup in a name (``[bold red]``) and escape sequences print literally.
"""
from __future__ import annotations

import os
from collections import defaultdict

from . import (active, as_options, key_numbers, line_of, run_exit_code, severity_counts, sorted_findings,
               state_counts, visible, where)

STYLE = {"error": "bold red", "warning": "yellow", "note": "cyan"}
LABEL = {"error": "ERROR", "warning": "WARNING", "note": "NOTE"}


def _use_color(stream, opts) -> bool:
    if opts.color is not None:
        return bool(opts.color)
    if os.environ.get("NO_COLOR"):
        return False
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError):
        return False


def _console(stream, opts):
    from rich.console import Console

    color = _use_color(stream, opts)
    width = opts.width
    if width is None and not color:
        cols = os.environ.get("COLUMNS", "").strip()
        width = int(cols) if cols.isdigit() and 20 <= int(cols) <= 1000 else 120
    return Console(file=stream, force_terminal=color, no_color=not color, color_system="auto" if color else None,
                   width=width, markup=False, emoji=False, highlight=False, soft_wrap=False,
                   force_jupyter=False, legacy_windows=False)


def _sev(sev) -> "Text":
    from rich.text import Text

    s = visible(sev)
    return Text(LABEL.get(s, s.upper()), style=STYLE.get(s, ""))


def _at(path, line, deck) -> str:
    """``line`` alone in the deck's own file, ``file:line`` elsewhere (an include)."""
    if deck is not None and path == deck:
        return str(line_of(line) or "-")
    if deck is not None and path:
        return where(os.path.basename(str(path)), line)
    return where(path, line)


def _message(f) -> str:
    """The message, led by the material when the message does not name it already."""
    msg = visible(f.message)
    mat = visible(f.material) if f.material is not None else ""
    if mat and mat not in msg:
        msg = f"[{mat}] {msg}"
    return msg


def _findings_table(findings, deck=None):
    """Findings of one deck (``deck`` = its path): the line only (``file:line`` for a finding in
    another file, an include say), level, rule, and the message taking the rest of the width."""
    from rich.table import Table
    from rich.text import Text

    table = Table(show_header=True, header_style="bold", box=None, pad_edge=False, expand=True)
    table.add_column("line" if deck is not None else "at", no_wrap=deck is not None, justify="right" if deck else "left",
                     overflow="fold")
    table.add_column("level", no_wrap=True)
    table.add_column("rule", no_wrap=True)
    table.add_column("finding", ratio=1, overflow="fold")
    for f in findings:
        table.add_row(Text(_at(f.path, f.line, deck)), _sev(f.severity), Text(visible(f.rule)), Text(_message(f)))
    return table


def _materials_table(materials, deck=None):
    from rich.table import Table
    from rich.text import Text

    materials = [m for m in materials if isinstance(m, dict)]
    usage = any(isinstance(m.get("used_by"), dict) for m in materials)
    table = Table(show_header=True, header_style="bold", box=None, pad_edge=False)
    for col in ("material", "line" if deck is not None else "defined at", "properties", "derived") + (("used by",) if usage else ()):
        table.add_column(col, overflow="fold")
    for m in materials:
        props = ", ".join(visible(p) for p in m.get("properties") or ()) or "-"
        nums = ", ".join(f"{visible(k)}={v}" for k, v in key_numbers(m.get("derived") or {})) or "-"
        row = [Text(visible(m.get("name"))), Text(_at(m.get("path"), m.get("line"), deck)), Text(props), Text(nums)]
        if usage:
            used = m.get("used_by") if isinstance(m.get("used_by"), dict) else {}
            row.append(Text(", ".join(f"{visible(k)} x{visible(v)}" for k, v in used.items()) or "unused"))
        table.add_row(*row)
    return table


def _unchecked_lines(unchecked, deck=None):
    from rich.text import Text

    groups: dict[tuple, list] = defaultdict(list)
    for u in unchecked or ():
        if isinstance(u, dict):
            groups[(visible(u.get("what", "")), visible(u.get("reason") or ""))].append(u)
    out = []
    for (what, reason), items in sorted(groups.items()):
        places = ", ".join(("line " if deck is not None and u.get("path") == deck else "")
                           + _at(u.get("path"), u.get("line"), deck) for u in items[:3])
        more = f" (+{len(items) - 3} more)" if len(items) > 3 else ""
        out.append(Text(f"  {what} x{len(items)}" + (f" - {reason}" if reason else "") + f": {places}{more}"))
    return out


def _header(fr):
    from rich.text import Text

    parts = [("format ", "dim"), (visible(fr.format or "unknown"), ""), ("  dialect ", "dim"),
             (visible(fr.dialect or "unknown"), "")]
    us = fr.unit_system
    if isinstance(us, dict) and us:
        name = visible(us.get("name") or us.get("system") or "unknown")
        conf = us.get("confidence")
        if isinstance(conf, (int, float)) and not isinstance(conf, bool):
            name += f" (confidence {conf:.2f})"
        parts += [("  units ", "dim"), (name, "")]
    if fr.incomplete:
        parts += [("  INCOMPLETE", "bold red")]
    return Text.assemble(*parts)


def report(result, stream, options=None) -> None:
    from rich.rule import Rule
    from rich.text import Text

    from .. import CAUTION

    opts = as_options(options)
    con = _console(stream, opts)
    general = sorted_findings(active(result.general))
    if general:
        con.print(Rule(Text("before any deck was read"), style="dim"))
        con.print(_findings_table(general))
        con.print()
    for fr in result.files:
        con.print(Rule(Text(visible(fr.path), style="bold"), style="dim"))
        con.print(_header(fr))
        findings = sorted_findings(active(fr.findings))
        if findings:
            con.print(_findings_table(findings, deck=fr.path))
        else:
            con.print(Text("no findings", style="green"))
        if fr.materials:
            con.print(Text(f"materials ({len(fr.materials)})", style="bold"))
            con.print(_materials_table(fr.materials, deck=fr.path))
        lines = _unchecked_lines(fr.unchecked, deck=fr.path)
        if lines:
            con.print(Text("read but not checked", style="bold"))
            for t in lines:
                con.print(t)
        con.print()
    counts = severity_counts(result.findings)
    total = Text.assemble(
        (f"{counts['error']} error(s)", STYLE["error"] if counts["error"] else ""), ", ",
        (f"{counts['warning']} warning(s)", STYLE["warning"] if counts["warning"] else ""), ", ",
        (f"{counts['note']} note(s)", STYLE["note"] if counts["note"] else ""),
        f" in {len(result.files)} deck(s); exit code {run_exit_code(result, opts)}")
    states = state_counts(result.findings)
    if states["suppressed"]:
        total.append(f"; {states['suppressed']} suppressed by comments (not counted)")
    if states["in_baseline"]:
        total.append(f"; {states['in_baseline']} in the baseline (not counted)")
    fixed = getattr(result, "fixed", None) or ()
    if fixed:
        total.append(f"; {len(fixed)} baseline entr{'y' if len(fixed) == 1 else 'ies'} fixed "
                     "(prune them with --write-baseline)")
    if result.incomplete:
        total.append("; the check is INCOMPLETE", style="bold red")
    con.print(total)
    con.print(Text(CAUTION, style="dim italic"))
