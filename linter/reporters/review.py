"""Assembles the reviewer's audit document (shared by the HTML and the Markdown audit).

Order: title and caution; summary (a verdict per deck, contents); per deck: the model, the
materials (admissibility map, constants, derived values, figures), the usage map, the findings
(with suppressed ones), what was not checked; findings not tied to a deck; provenance (version,
date, command line, configuration); the caution again.
"""
from __future__ import annotations

import datetime as _dt
import json
import shlex
from typing import Any

from . import as_options, run_exit_code, severity_counts, visible
from .review_doc import (Box, H, Section, Table, model_section, para, split_suppressed, summary_section,
                         unit_confident, usage_section)
from .review_findings import findings_section, rule_texts, unchecked_section


def _band_nu(cfg: Any) -> float:
    try:
        return float(cfg["thresholds"]["elastic"]["near_incompressible_nu"])
    except (KeyError, TypeError, ValueError):
        from ..config import default_thresholds

        return float(default_thresholds()["elastic"]["near_incompressible_nu"])


def _min_confidence(cfg: Any) -> float:
    try:
        return float(cfg["thresholds"]["units"]["min_confidence"])
    except (KeyError, TypeError, ValueError):
        from ..config import default_thresholds

        return float(default_thresholds()["units"]["min_confidence"])


def _flat(d: Any, prefix: str = "") -> dict[str, Any]:
    out: dict[str, Any] = {}
    if isinstance(d, dict):
        for k, v in d.items():
            out.update(_flat(v, f"{prefix}{k}."))
    else:
        out[prefix[:-1]] = d
    return out


def provenance_section(result, opts) -> Section:
    from .. import __version__
    from ..config import default_thresholds

    sec = Section("provenance", [H(2, "Provenance", "provenance")])
    now = _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    cmd = shlex.join(str(a) for a in opts.command) if opts.command else "not recorded (library call)"
    rows = [["deckwarden version", __version__], ["date", now], ["command line", visible(cmd)],
            ["fail level", visible(opts.fail_on)], ["exit code", str(run_exit_code(result, opts))]]
    cfg = opts.config if isinstance(opts.config, dict) else None
    if cfg is None:
        rows.append(["configuration", "not recorded (library call)"])
    else:
        for k, v in cfg.items():
            if k == "thresholds":
                continue
            rows.append([f"configuration: {visible(k)}", visible(json.dumps(v, ensure_ascii=False, default=str))])
        default, used = _flat(default_thresholds()), _flat(cfg.get("thresholds") or {})
        changed = {k: v for k, v in used.items() if default.get(k) != v}
        rows.append(["thresholds", "as shipped" if not changed else "changed: " + ", ".join(
            f"{visible(k)} = {visible(json.dumps(v, default=str))}" for k, v in sorted(changed.items()))])
    sec.children.append(Table(["Item", "Value"], rows, cls="provenance"))
    return sec


def build(result, options=None, figures: bool = True) -> tuple[str, list]:
    """(title, nodes) of the audit of ``result``; ``figures`` False leaves the drawings out."""
    from .. import CAUTION
    from . import review_figures
    from .review_materials import materials_part

    opts = as_options(options)
    draw = figures and review_figures.available()
    band = _band_nu(opts.config)
    texts = rule_texts()
    title = f"Material review: {len(result.files)} deck(s)"
    decks, toc = [], []
    for i, fr in enumerate(result.files, 1):
        a = f"d{i}"
        deck = Section(a, [H(2, f"Deck {i}: {visible(fr.path)}", a)], cls="deck")
        subs = [(f"{a}-model", "model")]
        sure = unit_confident(fr.unit_system, _min_confidence(opts.config))
        deck.children.append(model_section(fr, f"{a}-model", sure))
        mats, mtoc = materials_part(fr, a, draw, band, sure)
        deck.children += mats
        subs += mtoc
        deck.children.append(usage_section(fr, f"{a}-usage"))
        deck.children.append(findings_section(fr.findings, f"{a}-findings", "Findings", texts))
        deck.children.append(unchecked_section(fr, f"{a}-unchecked"))
        subs += [(f"{a}-usage", "usage map"), (f"{a}-findings", "findings"), (f"{a}-unchecked", "not checked")]
        decks.append(deck)
        toc.append((a, f"Deck {i}: {visible(fr.path)}", subs))
    nodes: list = [H(1, title), Box("caution", [("b", "Caution."), ("", " " + CAUTION)])]
    if not draw:
        why = "left out on request" if not figures else \
            "matplotlib is not installed (pip install 'deckwarden[plot]')"
        nodes.append(Box("skipped", [("b", "Figures skipped:"), ("", f" {why}.")]))
    extra = []
    if result.general:
        extra.append(findings_section(result.general, "general", "Findings not tied to a deck", texts))
        toc.append(("general", "Findings not tied to a deck", []))
    toc.append(("provenance", "Provenance", []))
    nodes.append(summary_section(result, toc))
    nodes += decks + extra
    nodes.append(provenance_section(result, opts))
    active, _silenced = split_suppressed(result.findings)
    c = severity_counts(active)
    state = "incomplete: some input could not be checked" if result.incomplete else "complete"
    nodes.append(para(f"{c['error']} error(s), {c['warning']} warning(s), {c['note']} note(s) in total; "
                      f"the check is {state}."))
    nodes.append(Box("caution", [("b", "Caution."), ("", " " + CAUTION)]))
    return title, nodes
