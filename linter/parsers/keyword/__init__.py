"""CalculiX-style keyword decks (``.inp``): the reader is ``parser``, its pieces the sibling modules."""
from .parser import DEFAULT_DIALECT, EXTENSIONS, FORMAT, includes_of, parse, sniff  # noqa: F401
