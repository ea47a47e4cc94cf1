"""Shared wording helpers for the built-in rules (numbers, temperatures, row lists, restatements)."""
from __future__ import annotations

import math
from typing import Any, Iterable, Optional

MAX_LISTED = 6


def num(x: Any) -> str:
    """A number in plain engineering form: 0.5, 210000, 7.85e-09; 'infinite' / 'undefined'."""
    if x is None:
        return "undefined"
    try:
        x = float(x)
    except (TypeError, ValueError):
        return str(x)
    if math.isnan(x):
        return "undefined"
    if math.isinf(x):
        return "infinite" if x > 0 else "-infinite"
    if x == 0:
        return "0"
    if 1e-3 <= abs(x) < 1e7:
        return f"{x:.6g}"
    return f"{x:.4g}"


def short(x: Any) -> str:
    """A number with 4 significant digits ('inf', '-inf', 'None' for the non-numbers)."""
    if x is None:
        return "None"
    x = float(x)
    return f"{x:.4g}" if math.isfinite(x) else str(x)


def row_label(row: dict) -> str:
    """'T = 20 (line 12)' or 'line 12' for a derived row with ``temperature`` and ``line``."""
    t = row.get("temperature")
    return f"T = {short(t)} (line {row['line']})" if t is not None else f"line {row['line']}"


def rows_text(items: list[str], limit: int = 5) -> str:
    more = len(items) - limit
    return "; ".join(items[:limit]) + (f"; and {more} more row(s)" if more > 0 else "")


def at_t(t: Optional[float]) -> str:
    return "" if t is None or (isinstance(t, float) and math.isnan(t)) else f" at T = {num(t)}"


def listing(parts: Iterable[str], limit: int = MAX_LISTED) -> str:
    parts = list(parts)
    if len(parts) <= limit:
        return "; ".join(parts)
    return "; ".join(parts[:limit]) + f"; and {len(parts) - limit} more"


def plural(n: int, word: str, many: Optional[str] = None) -> str:
    return f"{n} {word if n == 1 else (many or word + 's')}"


def finite(x: Any) -> bool:
    try:
        return math.isfinite(float(x))
    except (TypeError, ValueError):
        return False


def include_restates(model) -> tuple:
    """Defects of every include that could not be read: a finding that may follow from one restates them."""
    return tuple(("include", inc.path) for inc in model.includes if inc.status != "ok")


def empty_field_at(model, ctx, loc) -> Optional[tuple]:
    """The restated defect key when the parser recorded an empty field on this line, else None.

    ``parse/empty-field`` findings carry no defect key of their own, so a rule checks
    here whether that finding will be reported (issue present and rule enabled).
    """
    for iss in model.issues:
        if iss.code == "empty-field" and iss.loc.line == loc.line and iss.loc.path == loc.path:
            if ctx.config.rule_enabled("parse/empty-field"):
                return ("empty-field", loc.path, loc.line)
    return None
