"""model/material-drift: reported by the run-level stage ``linter/drift.py`` (it compares decks)."""
from linter.registry import Rule, register

register(Rule(id="model/material-drift", severity="warning", func=None, engine=True, run_level=True,
              thresholds=("model.drift_rel_tol",),
              title="One material defined with different constants in different decks",
              rationale="A repository's copies of one material (the same name, in the same unit system) drift "
                        "apart when one deck is corrected and the others are not: the analyses then disagree "
                        "for a reason nobody chose. The finding is reported at each definition that differs "
                        "from the most common one, with the differing values and the decks that define the "
                        "material. Constants are compared with a relative tolerance "
                        "(thresholds.yaml model.drift_rel_tol). Bulk-data material ids (numbers) are not names "
                        "and are not compared. It needs several decks in one run; accept it with a suppression "
                        "comment at the material (or for the material or the file), the baseline or a per_path "
                        "rule setting.",
              references=("common practice",),
              data="material_key, unit_system, decks, reference {path, line}, "
                   "differences: [{property, column, row, value, reference}]"))
