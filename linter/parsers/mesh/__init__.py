"""Open meshes (any format meshio reads) with a YAML material file: the reader is ``parser``, its pieces
the sibling modules."""
from .parser import COMMENT_PREFIXES, DEFAULT_DIALECT, EXTENSIONS, FORMAT, parse, sniff  # noqa: F401
