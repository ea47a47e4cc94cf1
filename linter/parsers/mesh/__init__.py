"""Open meshes (any format meshio reads) with a YAML material file (``deckwarden: 1``).

The format's facts are declared here; the reader (``parser.py``, pieces in the sibling modules) is
imported on first use of ``sniff`` or ``parse``, so that listing the formats stays cheap.
"""
from .. import reader_attributes

FORMAT = "mesh"
#: the material file; the mesh itself is named in it or given with --materials
EXTENSIONS = (".yaml", ".yml")
#: the element catalogue of this route is meshio's cell types (section ``meshio`` of elements.yaml)
DEFAULT_DIALECT = "meshio"
#: YAML comments start with ``#`` (the YAML specification, "Comments")
COMMENT_PREFIXES = ("#",)

__getattr__ = reader_attributes(__name__)
