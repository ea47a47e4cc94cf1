"""Nastran-style bulk-data decks (MYSTRAN dialect by default).

The format's facts are declared here; the reader (``parser.py``, pieces in the sibling modules) is
imported on first use of ``sniff``, ``parse`` or ``includes_of``, so that listing the formats stays cheap.
"""
from .. import reader_attributes

FORMAT = "bulk"
EXTENSIONS = (".bdf", ".dat", ".nas", ".blk", ".bulk")
DEFAULT_DIALECT = "mystran"
#: dialects the element catalogue and the rules know for this format
DIALECTS = ("mystran", "nastran")
#: markers of a comment: ``$`` in column 1 makes the line a comment, and MYSTRAN drops everything from the
#: first ``$`` of a bulk line on (NASTRAN-95 User's Manual, ``um/EXEC.TXT`` "$ - Comment Indicator";
#: MYSTRAN source ``LOADB.f90``, ``READ_BDF_LINE``)
COMMENT_PREFIXES = ("$",)

__getattr__ = reader_attributes(__name__)
