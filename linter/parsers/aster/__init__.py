"""code_aster studies: run profile (``.export``), command file (``.comm``) and native mesh (``.mail``).

The format's facts are declared here; the reader (``parser.py``: the study; ``commands.py`` and
``evaluate.py``: the command file read as data with :mod:`ast`, never run; ``materials.py``, ``study.py``,
``cells.py``: the neutral model; ``mail.py``: the mesh) is imported on first use of ``sniff``, ``parse``
or ``includes_of``.
"""
from .. import reader_attributes

FORMAT = "aster"
EXTENSIONS = (".export", ".comm")
DEFAULT_DIALECT = "code_aster"
#: a command file is Python: ``#`` starts a comment (to the end of the line)
COMMENT_PREFIXES = ("#",)

__getattr__ = reader_attributes(__name__)
