"""deckwarden: checks the materials of finite-element input decks before the solve.

Data flows one way: file -> format parser (``linter.parsers``) -> neutral model
(``linter.model``) -> rules (``linter.rules`` + plugins) -> findings -> reporter
(``linter.reporters``). Importing this package is cheap: heavy modules load lazily.
"""
__version__ = "0.1.0"

CAUTION = (
    "deckwarden checks the plausibility of input data only. It does not verify a design: "
    "results and designs must be verified by qualified engineers under the applicable codes."
)
