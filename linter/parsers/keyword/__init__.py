"""CalculiX-style keyword decks (``.inp``).

The format's facts are declared here; the reader (``parser.py``, pieces in the sibling modules) is
imported on first use of ``sniff``, ``parse`` or ``includes_of``, so that listing the formats stays cheap.
"""
from .. import reader_attributes

FORMAT = "keyword"
EXTENSIONS = (".inp",)
DEFAULT_DIALECT = "calculix"
#: dialects the element catalogue and the rules know for this format
DIALECTS = ("calculix",)
#: markers of a comment line: ``**`` in columns 1-2, the whole line is skipped; no end-of-line comments
#: (CalculiX CrunchiX User's Manual, section "Cantilever beam"; ccx source ``readinput.c``)
COMMENT_PREFIXES = ("**",)

__getattr__ = reader_attributes(__name__)
