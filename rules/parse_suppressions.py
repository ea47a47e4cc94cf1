"""parse/*: findings about the suppression comments themselves (emitted by ``linter/suppressions.py``)."""
from linter.registry import engine_rule

SYNTAX = "deckwarden accept RULES [for next | for material NAME | for file] [because REASON]"

engine_rule("parse/bad-suppression", severity="warning", title="A suppression comment that cannot be used",
            rationale="A comment of the form '" + SYNTAX + "' names a rule or family that does not exist "
                      "(often a misspelling: the message gives the closest id), a rule no comment may accept "
                      "(internal failures, the suppression rules themselves), or a scope that is not one of "
                      "next, file, material NAME. The misspelt part accepts nothing, so the finding it meant "
                      "to accept is still reported.",
            references=("common practice",), data="rules (the usable ones), problem")
engine_rule("parse/unused-suppression", severity="note", title="A suppression comment that accepts nothing",
            rationale="The comment accepts rules for a scope in which none of them reports a finding: the "
                      "problem was fixed, the card moved, or the rule id names something else. A stale "
                      "suppression would silently accept a new problem later; remove it.",
            references=("common practice",), data="rules, scope")
