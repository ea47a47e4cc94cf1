"""``deckwarden rules`` and ``deckwarden explain``: the rule catalogue as a list, Markdown, JSON, or one rule
in full (rationale, references, the finding's data and the thresholds it reads with their current values)."""
from __future__ import annotations

import sys

from .cli import UsageError, _suggest


def rules_markdown(rules) -> str:
    """The README rule list (between ``<!-- rules:start -->`` and ``<!-- rules:end -->``)."""
    from .reporters.audit import md

    lines = ["| Rule | Severity | Other levels, and when | What it reports |", "| --- | --- | --- | --- |"]
    for r in rules:
        lines.append(f"| `{r.id}` | {r.severity} | {md(getattr(r, 'escalation', '')) or '-'} | {md(r.title)} |")
    return "\n".join(lines) + "\n"


def cmd_rules(args) -> int:
    import json

    from . import registry

    rules = registry.all_rules()
    if args.format == "markdown":
        sys.stdout.write(rules_markdown(rules))
    elif args.format == "json":
        doc = [{"id": r.id, "severity": r.severity, "title": r.title, "rationale": r.rationale,
                "references": list(r.references), "data": r.data, "pack": r.pack,
                "formats": list(r.formats) if r.formats else None,
                "dialects": list(r.dialects) if r.dialects else None, "incomplete": r.incomplete} for r in rules]
        sys.stdout.write(json.dumps(doc, indent=2, ensure_ascii=False) + "\n")
    else:
        w = max((len(r.id) for r in rules), default=10)
        for r in rules:
            sys.stdout.write(f"{r.id:<{w}}  {r.severity:<7}  {r.title}\n")
        sys.stdout.write(f"{len(rules)} rules\n")
    from . import parsers

    for kind, errors in (("rule", registry.plugin_errors()), ("parser", parsers.plugin_errors())):
        for name, detail in errors:
            print(f"deckwarden: {kind} plugin {name!r} could not be loaded: {detail}", file=sys.stderr)
    return 0


def cmd_explain(args) -> int:
    import textwrap

    from . import registry

    rules = registry.load()
    rid = args.rule.strip()
    r = rules.get(rid)
    if r is None:
        family = [x for x in registry.all_rules() if x.family == rid]
        if family:
            sys.stdout.write(f"family {rid}: {len(family)} rules\n")
            for x in family:
                sys.stdout.write(f"  {x.id}  ({x.severity})  {x.title}\n")
            return 0
        print(f"deckwarden: no rule named {rid!r}{_suggest(rid, set(rules))}", file=sys.stderr)
        return 2

    def para(label: str, text: str) -> str:
        body = textwrap.fill(text, width=88, initial_indent="  ", subsequent_indent="  ")
        return f"{label}:\n{body}\n"

    out = [f"{r.id}: {r.title}\n", f"default severity: {r.severity}\n",
           f"pack: {r.pack}" + (" (reported by the engine itself)" if r.engine else "") + "\n"]
    if r.formats:
        out.append(f"formats: {', '.join(r.formats)}\n")
    if r.dialects:
        out.append(f"dialects: {', '.join(r.dialects)}\n")
    if r.incomplete:
        out.append("a finding of this rule makes the check incomplete (exit code 2)\n")
    out.append(para("why", r.rationale or "(no rationale given)"))
    out.append("references:\n" + ("".join(f"  - {ref}\n" for ref in r.references) or "  (none)\n"))
    out.append(para("finding data", r.data or "(nothing beyond the message)"))
    if r.thresholds:
        from .config import Config, ConfigError

        try:
            cfg = Config.load(args.config)
        except ConfigError as exc:
            raise UsageError(str(exc)) from None
        where = cfg.source or "the defaults, linter/data/thresholds.yaml"
        lines = []
        for key in r.thresholds:
            try:
                value = cfg.threshold(key)
            except KeyError:
                value = "(not set)"
            lines.append(f"  {key} = {'null' if value is None else value}\n")
        out.append(f"thresholds (values from {where}; override under 'thresholds:' in a configuration):\n"
                   + "".join(lines))
    sys.stdout.write("\n".join(out))
    return 0
