"""hyper/penalty-bulk-modulus: the bulk modulus k of an uncoupled (deviatoric/volumetric split) material.

Uncoupled laws (FEBio's Mooney-Rivlin, Ogden, Veronda-Westmann, uncoupled mixtures ...) enforce
near-incompressibility with a penalty U(J) = k/2 (ln J)^2: k is the penalty parameter, not a measured
property. The parser writes one ("other", "uncoupled-bulk") block (k, mu0) per uncoupled law; fluids
give ("other", "fluid") with their bulk modulus k.
"""
from __future__ import annotations

import math

from linter.physics.hyper_models import nu_from_ratio
from linter.registry import rule

from ._text import short

FEBIO_UNCOUPLED = ("FEBio User's Manual 4.0, 4.1.2 'Uncoupled Materials': W = W~(C~) + U(J), U = k/2 (ln J)^2; "
                   "k is the bulk modulus acting as a penalty on volume change")
FEBIO_FLUID = "FEBio User's Manual 4.0, fluid materials: the bulk modulus k must be positive"


def _blocks(model, form):
    for mat in model.all_materials():
        for blk in mat.blocks:
            if blk.kind == "other" and blk.form == form and blk.rows:
                yield mat, blk


@rule("hyper/penalty-bulk-modulus", severity="warning",
      title="Bulk modulus of an uncoupled material not positive, too low or far too high",
      rationale="An uncoupled hyperelastic material splits the energy into a deviatoric part and a volumetric "
                "penalty k/2 (ln J)^2. k must be positive (k = 0 leaves volume changes without stiffness: an "
                "error). k/mu0 sets how incompressible the material is: below hyper.uncoupled_ratio_min the "
                "material is noticeably compressible (the equivalent small-strain Poisson's ratio "
                "nu = (3k - 2mu0)/(6k + 2mu0) is given; a note); above hyper.uncoupled_ratio_max the penalty "
                "dominates the stiffness matrix and the Newton iterations converge badly or not at all "
                "(a warning). A fluid's bulk modulus k must be positive too.",
      references=(FEBIO_UNCOUPLED, FEBIO_FLUID,
                  "nu = (3K - 2mu)/(6K + 2mu), the isotropic relation (standard)",
                  "thresholds.yaml hyper.uncoupled_ratio_min/max"),
      data="k, mu0, k_over_mu0, nu_equivalent, limit",
      thresholds=("hyper.uncoupled_ratio_min", "hyper.uncoupled_ratio_max"))
def penalty_bulk_modulus(model, ctx):
    lo = float(ctx.threshold("hyper.uncoupled_ratio_min"))
    hi = float(ctx.threshold("hyper.uncoupled_ratio_max"))
    for mat, blk in _blocks(model, "uncoupled-bulk"):
        k, mu0 = blk.rows[0].values[:2]
        where = blk.card or "uncoupled law"
        has_hyper = any(b.kind == "hyperelastic" for b in mat.blocks)
        if not k > 0:
            if k < 0 and has_hyper:
                continue            # hyper/negative-bulk reports a negative K0 = k
            given = blk.options.get("given", True)
            yield ctx.finding(f"material {mat.name} ({where}): bulk modulus k = {short(k)}"
                              + ("" if given else " (not given: the solver's default)")
                              + " is not positive: volume changes meet no stiffness and the solve fails or "
                                "drifts; give k of about 1000 mu0", blk.loc, material=mat.name,
                              severity="error", data={"k": k, "mu0": mu0, "given": given})
            continue
        if not (math.isfinite(mu0) and mu0 > 0):
            continue
        ratio = k / mu0
        nu = float(nu_from_ratio(ratio))
        data = {"k": k, "mu0": mu0, "k_over_mu0": ratio, "nu_equivalent": nu}
        if ratio < lo:
            yield ctx.finding(f"material {mat.name} ({where}): k/mu0 = {short(ratio)} (k = {short(k)}, "
                              f"mu0 = {short(mu0)}) is below {short(lo)}: the material is compressible, like an "
                              f"isotropic solid with nu = {nu:.4f}", blk.loc, material=mat.name,
                              severity="note", data={**data, "limit": lo},
                              restates=(("hyper-bulk-low", mat.key),))
        elif ratio > hi:
            yield ctx.finding(f"material {mat.name} ({where}): k/mu0 = {short(ratio)} (k = {short(k)}, "
                              f"mu0 = {short(mu0)}) is above {short(hi)}: the volumetric penalty dominates the "
                              f"stiffness and the solve is ill-conditioned (nu = {nu:.6f}); a k/mu0 of 1e3 to "
                              "1e4 is nearly incompressible already", blk.loc, material=mat.name,
                              data={**data, "limit": hi})
    for mat, blk in _blocks(model, "fluid"):
        k = blk.rows[0].values[0]
        if not k > 0:
            yield ctx.finding(f"material {mat.name}: fluid bulk modulus k = {short(k)} is not positive",
                              blk.loc, material=mat.name, severity="error", data={"k": k, "mu0": None})
