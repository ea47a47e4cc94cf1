"""``python -m linter``: the same as the ``deckwarden`` command."""
import sys

from .cli import main

if __name__ == "__main__":
    sys.exit(main())
