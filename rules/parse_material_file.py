"""parse/* codes of the material-file route (a mesh read by meshio plus a YAML material file).

The mesh itself is reported with the include codes of ``parse.py`` (``missing-include``,
``include-unreadable``, ``include-refused``): a material file names its mesh as a deck names an
include, and findings that only follow from a missing mesh are not repeated.
"""
from linter.rules.parse import _make

MATERIAL_FILE = "deckwarden material file, version 1 (README: the material file; linter/data/material-file.schema.json)"

ISSUE_RULES = {
    "unknown-key": ("warning", "A key the material file does not define",
                    "The material file has a fixed vocabulary (the property and constant names of the neutral "
                    "model); a key outside it, usually a misspelling, is ignored, so the value it carries is "
                    "not checked and not used.", (MATERIAL_FILE,)),
    "region-overlap": ("warning", "Cells selected by two regions with different materials",
                       "When two regions of a material file select the same cells with different materials or "
                       "formulations, which one applies depends on the program that builds the model; the "
                       "check counts the cells for both.", (MATERIAL_FILE,)),
}

for _code, (_sev, _title, _why, _refs) in ISSUE_RULES.items():
    _make(_code, _sev, _title, _why, _refs)
