"""House rules of the (invented) ACME analysis group, as a deckwarden plugin.

Importing this module registers its rules; the entry point ``acme = "acme_rules"`` in the
group ``deckwarden.rules`` makes deckwarden import it.
"""
from linter.registry import rule


@rule("acme/density-missing-note", severity="note",
      title="A material has no density (house rule)",
      rationale="ACME's model reviews want every material to carry a density, even in static analyses, "
                "so that the mass report of the model is complete.",
      references=("ACME modelling guide (invented for this example)",),
      data="properties: the property kinds the material has")
def density_missing(model, ctx):
    for mat in model.materials.values():
        if not mat.has("density"):
            yield ctx.finding(f"material {mat.name} has no density", mat.loc, material=mat.name,
                              data={"properties": sorted({b.kind for b in mat.blocks})})
