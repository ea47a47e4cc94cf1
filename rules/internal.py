"""internal/*: failures of deckwarden itself. The engine emits these; they make the check incomplete (exit 2)."""
from linter.registry import engine_rule

engine_rule(
    "internal/rule-failed", severity="error",
    title="A rule failed with an exception",
    rationale="An exception inside one rule is contained: the other rules and files still run, but this "
              "rule's checks were not done on the deck, so the check is incomplete (exit code 2).",
    data="failed_rule: the id of the rule; exception: the exception type; detail: its message; where: file:line",
    incomplete=True,
)
engine_rule(
    "internal/parser-failed", severity="error",
    title="A parser failed with an exception",
    rationale="The deck could not be read because of a defect in deckwarden, not in the deck. Nothing in it "
              "was checked; the check is incomplete (exit code 2). Please report it with the deck.",
    data="exception, detail, where",
    incomplete=True,
)
engine_rule(
    "internal/derive-failed", severity="error",
    title="Deriving model quantities failed",
    rationale="A derivation step (derived constants, unit inference, ...) raised an exception; rules that "
              "depend on it may be incomplete.",
    data="step, exception, detail",
    incomplete=True,
)
engine_rule(
    "internal/plugin-failed", severity="error",
    title="A rule or parser plugin could not be loaded",
    rationale="A third-party rule pack (entry-point group deckwarden.rules) or format parser (group "
              "deckwarden.parsers) failed to import, or a parser module lacks FORMAT, EXTENSIONS, sniff or "
              "parse: its rules did not run, or decks of its format were not recognised.",
    data="plugin, detail",
    incomplete=True,
)
