"""hyper/*: initial moduli, compressibility and Drucker stability of hyperelastic and hyperfoam materials.

The rules read ``Material.derived["hyper"]`` (``linter.derived.hyper``). One finding per block;
temperature tables list the failing rows.
"""
from __future__ import annotations

import math

from linter.model import Loc
from linter.physics.hyper_stability import MODE_NAMES
from linter.registry import rule
from ._text import row_label, rows_text, short

CCX_HYP = "CalculiX User's Manual *HYPERELASTIC, *HYPERFOAM; ccx hyperelastics.f"
ENERGIES = ("CalculiX User's Manual *HYPERELASTIC (D-convention energies); initial moduli mu0 = 2(C10 + C01), "
            "K0 = 2/D1 (standard)")
HILL = "Drucker/Hill stability of incompressible isotropic hyperelasticity (arXiv:2511.13792)"


def _entries(model):
    for mat in list(model.materials.values()) + list(model.duplicate_materials):
        entry = mat.derived.get("hyper")
        if entry:
            block = next((b for b in reversed(mat.blocks) if b.kind == entry["kind"]), None)
            yield mat, entry, Loc(block.loc.path if block else mat.loc.path, entry["line"])


def _mu_defect(mat, entry) -> tuple:
    return ("hyper-mu0", mat.key, entry["line"])


def _default_defect(mat, entry) -> tuple:
    return ("hyper-d-default", mat.key, entry["line"])


@rule("hyper/negative-initial-shear", severity="error",
      title="Hyperelastic initial shear modulus not positive",
      rationale="The initial shear modulus mu0 (neo-Hooke 2 C10, Mooney-Rivlin and polynomial 2(C10 + C01), "
                "Ogden and hyperfoam sum mu_i in the solver's convention) must be positive, or the material "
                "is unstable at the undeformed state. A negative or zero mu0 usually means a sign error or "
                "Ogden constants written in another convention.",
      references=(ENERGIES, CCX_HYP),
      data="model; rows: [{line, temperature, mu0}]")
def negative_initial_shear(model, ctx):
    for mat, entry, loc in _entries(model):
        rows = [r for r in entry["rows"] if "mu0" in r and not (r["mu0"] > 0)]
        if rows:
            text = rows_text([f"{row_label(r)}: " + (f"{r['invalid']}, mu0 is undefined" if r.get("invalid")
                                                     else f"mu0 = {short(r['mu0'])}") for r in rows])
            yield ctx.finding(f"material {mat.name} ({entry['model']}): initial shear modulus is not positive: {text}",
                              loc, material=mat.name, defect=_mu_defect(mat, entry),
                              data={"model": entry["model"], "rows": [{"line": r["line"], "temperature":
                                                                      r["temperature"], "mu0": r["mu0"]} for r in rows]})


@rule("hyper/negative-bulk", severity="error",
      title="Hyperelastic compressibility negative",
      rationale="K0 = 2/D1 must be positive: a negative D_i gives a negative bulk modulus (hyperfoam: a negative "
                "sum of 2 mu_i (1/3 + beta_i)); the material collapses under pressure.",
      references=(ENERGIES, CCX_HYP),
      data="model; rows: [{line, temperature, D, K0}]")
def negative_bulk(model, ctx):
    for mat, entry, loc in _entries(model):
        rows = [r for r in entry["rows"] if "mu0" in r and
                (any(d < 0 for d in r.get("D", ())) or (r.get("K0") is not None and r["K0"] < 0))]
        if rows:
            items = []
            for r in rows:
                neg = [f"D{i + 1} = {short(d)}" for i, d in enumerate(r.get("D", ())) if d < 0]
                items.append(f"{row_label(r)}: " + (", ".join(neg) + ", " if neg else "") + f"K0 = {short(r['K0'])}")
            yield ctx.finding(f"material {mat.name} ({entry['model']}): negative bulk modulus: {rows_text(items)}",
                              loc, material=mat.name,
                              data={"model": entry["model"], "rows": [{"line": r["line"], "temperature":
                                    r["temperature"], "D": r.get("D"), "K0": r["K0"]} for r in rows]})


@rule("hyper/compressibility-defaulted", severity="warning",
      title="Zero compressibility replaced by the solver's default",
      rationale="CalculiX has no hybrid (pressure) elements: when |D_i| < 1e-10 it replaces D_i by (0.1/mu0)^i "
                "and only prints a warning. For D1 that gives K0/mu0 = 20 (nu0 about 0.475), far more "
                "compressible than a rubber (K0/mu0 of 1e3 to 1e4): volume changes and stresses under "
                "confinement are wrong. Give D1 = 2/K0 explicitly. (A zero D2 or D3 is defaulted too, but only "
                "D1 sets K0, so only a defaulted D1 is reported.)",
      references=(CCX_HYP, ENERGIES),
      data="model; rows: [{line, temperature, D, D_used, K0_over_mu0, nu0}]",
      dialects=("calculix",))
def compressibility_defaulted(model, ctx):
    for mat, entry, loc in _entries(model):
        # only a defaulted D1 changes K0; ccx also fills a zero D2/D3 (checked with ccx 2.x: "default value
        # was used for compressibility coefficients  D2 = ..."), which only stiffens large volume changes
        rows = [r for r in entry["rows"] if r.get("D_defaulted") and r.get("D") and abs(r["D"][0]) < 1e-10]
        if not rows:
            continue
        items = []
        for r in rows:
            items.append(f"{row_label(r)}: D1 = {short(r['D'][0])} -> K0/mu0 = {short(r['K0_over_mu0'])}, "
                         f"nu0 = {r['nu0']:.4f}")
        mu0 = rows[0]["mu0"]
        hint = f" (for K0/mu0 = 1000: D1 = {2 / (1000 * mu0):.3g})" if mu0 and mu0 > 0 else ""
        yield ctx.finding(
            f"material {mat.name} ({entry['model']}): zero compressibility is replaced by the solver's default "
            f"D_i = (0.1/mu0)^i: {rows_text(items)}; give D1 = 2/K0 explicitly{hint}",
            loc, material=mat.name, defect=_default_defect(mat, entry), restates=(_mu_defect(mat, entry),),
            data={"model": entry["model"], "rows": [{k: r.get(k) for k in ("line", "temperature", "D", "D_used",
                                                                            "K0_over_mu0", "nu0")} for r in rows]})


@rule("hyper/too-compressible", severity="note",
      title="Elastomer-like hyperelastic material with a low bulk modulus",
      rationale="Solid rubbers have K0/mu0 of about 1e3 to 1e4 (nu0 above 0.4995). An elastomer-like set "
                "(small mu0) with K0/mu0 below the threshold (nu0 under about 0.475) is usually a D given in "
                "the wrong convention, or a bulk modulus typed where D belongs.",
      references=("K0/mu0 < ~20 suspicious for a solid rubber (common practice, from memory)", CCX_HYP),
      data="model; rows: [{line, temperature, mu0, K0_over_mu0, nu0}]; min_bulk_ratio; elastomer_mu0; unit_note",
      thresholds=("hyper.min_bulk_ratio", "hyper.elastomer_mu0_mpa", "hyper.unit_min_confidence"))
def too_compressible(model, ctx):
    ratio_min = float(ctx.threshold("hyper.min_bulk_ratio"))
    mu_mpa = float(ctx.threshold("hyper.elastomer_mu0_mpa"))
    us = model.derived.get("unit_system") or {}
    scale = us.get("stress_scale_to_pa")
    trusted = us.get("declared") or (us.get("confidence") or 0.0) >= float(ctx.threshold("hyper.unit_min_confidence"))
    if scale and trusted:
        how = "declared" if us.get("declared") else "inferred"
        limit, unit_note = mu_mpa * 1e6 / float(scale), f"in the {how} unit system {us.get('name') or ''}".strip()
    else:
        limit, unit_note = mu_mpa, "unit system unknown: the MPa threshold is compared with the deck's own unit"
    for mat, entry, loc in _entries(model):
        if entry["kind"] != "hyperelastic":
            continue
        rows = [r for r in entry["rows"] if "mu0" in r and 0 < r["mu0"] < limit and r.get("K0", 0) > 0
                and r["K0_over_mu0"] < ratio_min]
        if rows:
            text = rows_text([f"{row_label(r)}: K0/mu0 = {short(r['K0_over_mu0'])}, nu0 = {r['nu0']:.4f}"
                               for r in rows])
            defaulted = any(r.get("D_defaulted") for r in rows)
            yield ctx.finding(
                f"material {mat.name} ({entry['model']}) looks like an elastomer (mu0 below {mu_mpa:g} MPa, "
                f"{unit_note}) but is quite compressible, K0/mu0 below {ratio_min:g}: {text}",
                loc, material=mat.name, defect=("hyper-bulk-low", mat.key),
                restates=(_default_defect(mat, entry), _mu_defect(mat, entry)) if defaulted else (),
                data={"model": entry["model"], "min_bulk_ratio": ratio_min, "elastomer_mu0": limit,
                      "unit_note": unit_note,
                      "rows": [{k: r.get(k) for k in ("line", "temperature", "mu0", "K0_over_mu0", "nu0")}
                               for r in rows]})


def _intervals(ivs) -> str:
    return ", ".join(f"{a:.4g}-{b:.4g}" for a, b in ivs) if ivs else "none"


@rule("hyper/unstable", severity="warning",
      title="Hyperelastic material loses Drucker stability",
      rationale="Fitted hyperelastic constants (negative C01, C20, Ogden terms) can make the material unstable "
                "at moderate strains: the tangent relating Kirchhoff stress and logarithmic strain stops being "
                "positive definite, and implicit solutions diverge or localise. The check scans uniaxial, "
                "equibiaxial and planar tension/compression with the 2x2 Hill criterion (the nominal-stress "
                "slope alone is only a necessary condition). Loss inside the working stretch range is an error.",
      references=(HILL, "Ogden 1972, Proc. R. Soc. Lond. A 326"),
      data="model; criterion; stretch_range; working_range; rows: [{line, temperature, modes: {UT|ET|PS: "
           "{stable, unstable}}, in_working_range}]",
      thresholds=("hyper.stretch_range", "hyper.stretch_points", "hyper.working_range"))
def unstable(model, ctx):
    srange = [float(x) for x in ctx.threshold("hyper.stretch_range")]
    wrange = [float(x) for x in ctx.threshold("hyper.working_range")]
    for mat, entry, loc in _entries(model):
        bad, error = [], False
        for r in entry["rows"]:
            st = r.get("stability")
            if not st or not (r.get("mu0", 0) > 0):
                continue
            if not any(m["unstable"] for m in st.values()):
                continue
            inside = any(min(b, wrange[1]) > max(a, wrange[0]) for m in st.values() for a, b in m["unstable"])
            error = error or inside
            bad.append((r, st, inside))
        if not bad:
            continue
        items = []
        for r, st, _inside in bad:
            modes = "; ".join(f"{MODE_NAMES[m]} unstable at stretch {_intervals(v['unstable'])} "
                              f"(stable {_intervals(v['stable'])})" for m, v in st.items() if v["unstable"])
            items.append(f"{row_label(r)}: {modes}")
        where = (f"inside the working range {wrange[0]:g}-{wrange[1]:g}" if error
                 else f"only outside the working range {wrange[0]:g}-{wrange[1]:g}")
        yield ctx.finding(
            f"material {mat.name} ({entry['model']}) loses stability {where} "
            f"(criterion: {bad[0][0].get('criterion', HILL)}, scanned {srange[0]:g}-{srange[1]:g}): {rows_text(items)}",
            loc, material=mat.name, severity="error" if error else None, restates=(_mu_defect(mat, entry),),
            data={"model": entry["model"], "criterion": bad[0][0].get("criterion"), "stretch_range": srange,
                  "working_range": wrange,
                  "rows": [{"line": r["line"], "temperature": r["temperature"], "modes": st,
                            "in_working_range": inside} for r, st, inside in bad]})


@rule("hyper/foam-poisson-singular", severity="error",
      title="Hyperfoam Poisson ratio of 0.5",
      rationale="The hyperfoam energy uses beta_i = nu_i/(1 - 2 nu_i): nu_i = 0.5 makes beta_i infinite, and the "
                "volumetric term cannot be evaluated. A foam is compressible by nature; nu_i is typically 0 to 0.3.",
      references=(CCX_HYP,),
      data="rows: [{line, temperature, nu}]")
def foam_poisson_singular(model, ctx):
    for mat, entry, loc in _entries(model):
        if entry["kind"] != "hyperfoam":
            continue
        rows = [r for r in entry["rows"] if any(not math.isfinite(b) for b in r.get("beta", ()))]
        if rows:
            text = rows_text([f"{row_label(r)}: " + ", ".join(
                f"nu{i + 1} = 0.5" for i, b in enumerate(r["beta"]) if not math.isfinite(b)) for r in rows])
            yield ctx.finding(f"material {mat.name} ({entry['model']}): a Poisson ratio of 0.5 makes "
                              f"beta = nu/(1 - 2 nu) infinite: {text}", loc, material=mat.name,
                              data={"rows": [{"line": r["line"], "temperature": r["temperature"]} for r in rows]})
