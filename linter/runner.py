"""Runs the enabled rules on one neutral model and returns their findings.

* An exception inside a rule becomes one ``internal/rule-failed`` finding; the other rules still run.
* One defect gives one finding: a finding whose ``restates`` names a defect that another finding
  reported (its ``defect``) is dropped.
* Severities may be overridden (or a rule switched off) in the configuration.
"""
from __future__ import annotations

from typing import Optional

from . import registry
from .context import Context
from .findings import Finding, raised_at
from .model import DeckModel


def enabled_rules(config, fmt: Optional[str], dialect: Optional[str]) -> list[registry.Rule]:
    out = []
    for r in registry.all_rules():
        if r.engine or r.func is None:
            continue
        if r.formats and fmt not in r.formats:
            continue
        if r.dialects and dialect not in r.dialects:
            continue
        if not config.rule_enabled(r.id):
            continue
        out.append(r)
    return out


def run_rules(model: DeckModel, config) -> list[Finding]:
    ctx = Context(model, config)
    found: list[Finding] = []
    for r in enabled_rules(config, model.format, model.dialect):
        ctx.rule = r
        try:
            for f in r.func(model, ctx) or ():
                found.append(f)
        except Exception as exc:  # contained: one failing rule must not hide the others
            where = raised_at(exc)
            found.append(Finding(
                rule="internal/rule-failed", severity="error",
                message=f"rule {r.id} failed on this deck ({type(exc).__name__}: {exc}); "
                        "its checks were not done",
                path=model.path, line=None, data={"failed_rule": r.id, "exception": type(exc).__name__,
                                                  "detail": str(exc), "where": where}))
    return finalize(found, config)


def finalize(found: list[Finding], config) -> list[Finding]:
    """Drop restatements, apply severity overrides, sort."""
    reported = {f.defect for f in found if f.defect is not None}
    kept = []
    for f in found:
        if f.restates and any(d in reported for d in f.restates if d != f.defect):
            continue
        sev = config.severity_override(f.rule)
        if sev:
            f.severity = sev
        kept.append(f)
    kept.sort(key=Finding.sort_key)
    return kept
