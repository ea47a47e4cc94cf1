"""FEBio model files (``.feb``, XML): febio_spec 4.0, and 3.0 / 2.5 where only names differ.

The format's facts are declared here; the reader (``parser.py``, pieces in the sibling modules) is
imported on first use of ``sniff`` or ``parse``. Reading: the bytes are read once (size limit
first, ``linter.parsers.sources``); the mesh blocks are located as byte ranges (``scan.py``) and the
small rest is parsed with defusedxml (``xmltree.py``: no entity expansion, no external entities,
bounded nesting). Materials go through ``materials.py``, mesh, domains and analysis through
``model_builder.py``.

Names: FEBio matches material and part names exactly, so ``key`` is the name as written.
``DeckModel.extras["febio"]`` holds ``version``, ``module`` and ``mesh_blocks`` (tag, name, line,
count of every cut-out block).
"""
from .. import reader_attributes

FORMAT = "febio"
EXTENSIONS = (".feb",)
DEFAULT_DIALECT = "febio"
#: XML comments: ``<!-- ... -->`` (W3C XML 1.0, section 2.5)
COMMENT_PREFIXES = ("<!--",)

__getattr__ = reader_attributes(__name__)
