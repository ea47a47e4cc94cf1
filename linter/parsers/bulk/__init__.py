"""Nastran-style bulk data decks (MYSTRAN dialect): the reader is ``parser``, its pieces the sibling modules."""
from .parser import DEFAULT_DIALECT, EXTENSIONS, FORMAT, includes_of, parse, sniff  # noqa: F401
