"""A deliberately faulty plugin rule: deckwarden must contain its exception."""
from linter.registry import rule


@rule("acme/always-fails", severity="warning", title="A rule with a bug",
      rationale="Raises on every deck, to show that one faulty rule does not stop the others.")
def always_fails(model, ctx):
    raise ZeroDivisionError("division by zero in a plugin rule")
    yield  # pragma: no cover - makes this a generator like the other rules
