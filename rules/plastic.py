"""plastic/*: sanity of hardening tables (CalculiX User's Manual *PLASTIC; Nastran MATS1/TABLES1).

Each temperature group of a table (consecutive rows with the same temperature: the normal layout
of a hardening table) is one curve. Keyword ``*PLASTIC`` rows are (Mises stress, equivalent
plastic strain); bulk MATS1/TABLES1 tables arrive as the same blocks, and when the bulk parser
marks the x axis as total strain (see :func:`strain_is_total`) the curve is checked as a total
stress-strain curve that starts at the origin. Johnson-Cook and user hardening carry constants,
not a table, and are not checked here.
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from typing import Optional

import numpy as np

from linter.physics import plastic as P
from linter.registry import rule
from ._text import short

CCX_PL = "CalculiX User's Manual *PLASTIC"
NAS_PL = "Nastran bulk data MATS1, TABLES1"
PHYS = "hardening-table conventions: true stress against plastic strain (CalculiX User's Manual *PLASTIC)"
TABLE_FORMS = ("ISOTROPIC", "KINEMATIC", "COMBINED", "")
MAX_LISTED = 5


def strain_is_total(block) -> bool:
    """True when the parser says the x axis of the table is total strain (bulk MATS1/TABLES1).

    The bulk parser sets ``x_axis_total_strain`` and keeps the raw TABLES1 points in ``points``
    (its rows then hold the plastic strain it derived with the MAT1 E). ``x_total_strain`` /
    ``total_strain`` (truthy) or ``x_axis`` equal to "total" are accepted too."""
    o = block.options
    if o.get("x_axis_total_strain") or o.get("x_total_strain") or o.get("total_strain") is True:
        return True
    v = o.get("x_axis")
    return isinstance(v, str) and v.strip().lower() in ("total", "total strain", "total-strain")


def plastic_blocks(model):
    """(material, block) for every tabulated hardening block of every material."""
    for mat in list(model.materials.values()) + list(model.duplicate_materials):
        for blk in mat.find("plastic"):
            if blk.form != "iso":
                continue
            if str(blk.options.get("HARDENING", "")).upper() not in TABLE_FORMS:
                continue
            if str(blk.options.get("TYPE", "PLASTIC")).upper() == "NLELAST":
                continue  # MATS1 nonlinear elastic: a stress-strain curve, not a hardening table
            yield mat, blk


def _number(v):
    try:
        x = float(v)
    except (TypeError, ValueError):
        return None
    return x if math.isfinite(x) else None


def mats1_slope(block):
    """H of a bulk MATS1 that gives a work-hardening slope instead of a table (None otherwise)."""
    o = block.options
    if o.get("card") != "MATS1" or o.get("points"):
        return None
    return _number(o.get("H"))


@dataclass
class Curve:
    """One hardening curve: stresses, strains, the location of each point, and whether the strains are
    total strains of a curve that starts at the origin (bulk TABLES1) rather than plastic strains."""

    temperature: Optional[float]
    stress: np.ndarray
    strain: np.ndarray
    locs: list
    total: bool = False
    table: bool = True


def curves(block):
    """Every curve of the block: one per temperature group of its rows.

    A bulk total-strain table is checked on its raw TABLES1 points (``options["points"]``, all at the
    MATS1 line); a MATS1 given by LIMIT1 and H without rows is the one-point curve (LIMIT1, 0)."""
    o = block.options
    if strain_is_total(block) and o.get("points"):
        pts = np.array([(float(x), float(y)) for x, y in o["points"]], dtype=float).reshape(-1, 2)
        yield Curve(None, pts[:, 1], pts[:, 0], [block.loc] * len(pts), total=True)
        return
    if not block.rows:
        y = _number(o.get("LIMIT1"))
        if y is not None:
            yield Curve(None, np.array([y]), np.array([0.0]), [block.loc], table=False)
        return
    stress, strain = block.column("stress"), block.column("plastic_strain")
    temps = block.temperatures()
    total = strain_is_total(block)
    for idx in P.temperature_groups(temps):
        t = temps[idx[0]]
        yield Curve(None if math.isnan(t) else float(t), stress[idx], strain[idx],
                    [block.rows[i].loc for i in idx], total=total,
                    table=not (o.get("card") == "MATS1" and not o.get("points")))


def elastic_modulus(mat, temperature=None):
    """E of the material's isotropic elastic block (the row nearest the temperature), or None."""
    blk = mat.first("elastic")
    if blk is None or blk.form != "iso" or not blk.rows:
        return None
    e = blk.column("E")
    if temperature is not None and len(blk.rows) > 1:
        t = blk.temperatures()
        if np.isfinite(t).all():
            return float(e[int(np.argmin(np.abs(t - temperature)))])
    return float(e[0])


def density(mat):
    blk = mat.first("density")
    if blk is None or not blk.rows:
        return None
    rho = float(blk.column("rho")[0])
    return rho if rho > 0 else None


#: the classes ``plastic/yield-vs-modulus`` tells apart, with their yield-strain threshold
YIELD_CLASSES = ("metal", "polymer")


@functools.cache
def class_data():
    """(stress scales, density scales, class bands) from ``linter/data/units.yaml``: the unit systems and
    material-class bands of the unit inference, one source for both."""
    from linter.derived.units.infer import load_data

    data = load_data()
    bands = {c: {q: data.band(c, q) for q in ("E", "rho")} for c in YIELD_CLASSES}
    return data.scales("stress"), data.scales("density"), bands


def material_class(E, rho) -> str:
    return P.material_class(E, rho, *class_data())


def _where(mat, t) -> str:
    return f"material {mat.name}" + (f", curve at T = {short(t)}" if t is not None else "")


def _listed(items: list[str]) -> str:
    more = len(items) - MAX_LISTED
    return "; ".join(items[:MAX_LISTED]) + (f"; and {more} more" if more > 0 else "")


@rule("plastic/first-strain-not-zero", severity="error",
      title="The first point of a hardening curve must be at zero plastic strain",
      rationale="The first point of each curve is the initial yield stress, at plastic strain 0; "
                "a table that starts elsewhere has no defined yield point (a total-strain curve must "
                "start at the origin).",
      references=(CCX_PL, NAS_PL, PHYS), data="temperature, line, first_strain, total_strain")
def first_strain_not_zero(model, ctx):
    for mat, blk in plastic_blocks(model):
        for c in curves(blk):
            s, e, t, total = c.stress, c.strain, c.temperature, c.total
            if not c.table or not (e[0] != 0 or (total and s[0] != 0)):
                continue
            loc = c.locs[0]
            if total:
                msg = (f"{_where(mat, t)}: the total stress-strain curve starts at (strain {short(e[0])}, "
                       f"stress {short(s[0])}) on line {loc.line}, not at the origin")
            else:
                msg = (f"{_where(mat, t)}: the first point has plastic strain {short(e[0])} on line "
                       f"{loc.line}; it must be 0 (the first point is the initial yield stress)")
            yield ctx.finding(msg, loc, material=mat.name,
                              data={"temperature": t, "line": loc.line, "first_strain": float(e[0]),
                                    "total_strain": total},
                              defect=("plastic-start", mat.key, blk.loc.line, t))


@rule("plastic/strain-not-increasing", severity="error",
      title="Plastic strain must increase strictly along a hardening curve",
      rationale="The solver looks the yield stress up by plastic strain; a repeated or falling strain "
                "makes the curve ambiguous or is rejected.",
      references=(CCX_PL, NAS_PL, PHYS), data="temperature, points: [{line, strain, previous}]")
def strain_not_increasing(model, ctx):
    for mat, blk in plastic_blocks(model):
        for c in curves(blk):
            e, t = c.strain, c.temperature
            bad = P.not_increasing(e)
            if not bad.size:
                continue
            pts = [{"line": c.locs[k].line, "strain": float(e[k]), "previous": float(e[k - 1])} for k in bad]
            text = _listed([f"{short(p['previous'])} then {short(p['strain'])} (line {p['line']})" for p in pts])
            yield ctx.finding(f"{_where(mat, t)}: the strain does not increase: {text}",
                              c.locs[bad[0]], material=mat.name,
                              data={"temperature": t, "points": pts})


@rule("plastic/softening", severity="warning",
      title="The yield stress falls along a hardening curve",
      rationale="Softening makes the response mesh dependent and the solution unstable. An engineering "
                "stress-strain curve past its maximum (necking) looks like this: convert to true stress "
                "and true plastic strain, and stop at the ultimate load.",
      references=(PHYS,), data="temperature, points: [{line, stress, previous, slope}]")
def softening(model, ctx):
    for mat, blk in plastic_blocks(model):
        for c in curves(blk):
            s, e, t = c.stress, c.strain, c.temperature
            bad = P.softening(s)
            if not bad.size:
                continue  # (a MATS1 with a negative H is reported below)
            slopes = P.hardening_slopes(s, e)
            pts = [{"line": c.locs[k].line, "stress": float(s[k]), "previous": float(s[k - 1]),
                    "slope": float(slopes[k - 1])} for k in bad]
            text = _listed([f"{short(p['previous'])} to {short(p['stress'])} (line {p['line']})" for p in pts])
            yield ctx.finding(
                f"{_where(mat, t)}: the stress falls: {text}. An engineering stress-strain curve past its "
                "maximum looks like this; use true stress against true plastic strain up to necking",
                c.locs[bad[0]], material=mat.name, data={"temperature": t, "points": pts})
        h = mats1_slope(blk)
        if h is not None and h < 0:
            yield ctx.finding(f"material {mat.name}: MATS1 hardening slope H = {short(h)} is negative "
                              "(softening)", blk.loc, material=mat.name,
                              data={"temperature": None, "points": [], "H": h})


@rule("plastic/total-strain-given", severity="warning",
      title="The strain column looks like total strain or percent",
      rationale="A hardening table takes plastic strain eps_p = eps - sigma/E as a fraction. A point whose "
                "strain equals sigma/E is the elastic part of a total-strain curve; strains above 2 are "
                "probably percent.",
      references=(PHYS, CCX_PL), data="temperature, line, strain, elastic_strain, reason",
      thresholds=("plastic.total_strain_rel_tol",))
def total_strain_given(model, ctx):
    tol = float(ctx.threshold("plastic.total_strain_rel_tol"))
    for mat, blk in plastic_blocks(model):
        if strain_is_total(blk):
            continue
        for c in curves(blk):
            s, e, t = c.stress, c.strain, c.temperature
            if not c.table or not (s > 0).any():
                continue  # no table (MATS1 by slope), or no curve at all (zero yield, creep only: zero-yield tells)
            E = elastic_modulus(mat, t)
            head = slice(0, min(2, len(s)))
            hit = None
            if E and E > 0:
                match = np.flatnonzero(P.elastic_strain_match(s[head], e[head], E, tol))
                if match.size:
                    k = int(match[0])
                    hit = (k, f"the strain {short(e[k])} equals the elastic strain sigma/E = {short(s[k] / E)} "
                              f"(E = {short(E)}): the column is probably total strain; use eps_p = eps - sigma/E",
                           "elastic-strain")
            if hit is None and np.nanmax(e) > P.PERCENT_STRAIN_LIMIT:
                k = int(np.nanargmax(e))
                hit = (k, f"the largest strain is {short(e[k])}: strains look like percent, not a fraction",
                       "percent")
            if hit is None:
                continue
            k, text, reason = hit
            loc = c.locs[k]
            yield ctx.finding(f"{_where(mat, t)}, line {loc.line}: {text}", loc, material=mat.name,
                              data={"temperature": t, "line": loc.line, "strain": float(e[k]),
                                    "elastic_strain": float(s[k] / E) if E else None, "reason": reason})


def initial_yield(c: Curve) -> tuple[float, int]:
    """(initial yield stress, index in the curve): the second point of a total-strain curve from the origin."""
    s, e = c.stress, c.strain
    if c.total and len(s) > 1 and s[0] == 0 and e[0] == 0:
        return float(s[1]), 1
    return float(s[0]), 0


@rule("plastic/zero-yield", severity="error",
      title="The initial yield stress is zero or negative",
      rationale="The first stress of a hardening curve is the initial yield stress; zero or less means the "
                "material flows at once. Together with *CREEP a zero yield surface is how CalculiX models "
                "pure creep, so that case is a warning.",
      references=(CCX_PL, "CalculiX User's Manual *CREEP", PHYS),
      data="temperature, line, yield_stress, with_creep")
def zero_yield(model, ctx):
    for mat, blk in plastic_blocks(model):
        creep = mat.has("creep")
        for c in curves(blk):
            t = c.temperature
            y, k = initial_yield(c)
            if y > 0 or math.isnan(y):
                continue
            loc = c.locs[k]
            extra = ("; with *CREEP this is the usual way to model creep without a yield surface"
                     if creep and y == 0 else "")
            yield ctx.finding(f"{_where(mat, t)}: the initial yield stress is {short(y)} on line {loc.line}"
                              f"{extra}", loc, material=mat.name,
                              severity="warning" if creep and y == 0 else None,
                              data={"temperature": t, "line": loc.line, "yield_stress": y, "with_creep": creep},
                              defect=("plastic-yield", mat.key, blk.loc.line, t))


@rule("plastic/yield-vs-modulus", severity="warning",
      title="Initial yield strain sigma_y/E is implausible for the material",
      rationale="sigma_y/E is about 1e-3 to 1e-2 for metals and up to a few percent for polymers; far "
                "outside, the yield stress and E are probably in different units (e.g. Pa against MPa).",
      references=(PHYS, "yield and modulus: EN 1993-1-1 Table 3.1, ASM Handbook data sheets"),
      data="temperature, line, yield_stress, E, yield_strain, material_class, band",
      thresholds=("plastic.yield_strain_metal", "plastic.yield_strain_polymer"))
def yield_vs_modulus(model, ctx):
    metal = tuple(float(x) for x in ctx.threshold("plastic.yield_strain_metal"))
    polymer = tuple(float(x) for x in ctx.threshold("plastic.yield_strain_polymer"))
    for mat, blk in plastic_blocks(model):
        for c in curves(blk):
            t = c.temperature
            y, k = initial_yield(c)
            E = elastic_modulus(mat, t)
            if not (y > 0) or not E or not (E > 0):
                continue
            cls = material_class(E, density(mat))
            band = metal if cls == "metal" else polymer
            ratio = y / E
            if band[0] <= ratio <= band[1]:
                continue
            loc = c.locs[k]
            judged = {"metal": "a metal", "polymer": "a polymer"}.get(cls, "a metal or polymer (class not clear)")
            hint = (" (a yield stress in Pa with E in MPa, or similar unit mix-up?)" if ratio > 1
                    else " (the yield stress in MPa with E in Pa, or similar?)" if ratio < band[0] / 100 else "")
            yield ctx.finding(
                f"{_where(mat, t)}: initial yield strain sigma_y/E = {short(y)}/{short(E)} = {short(ratio)} is outside "
                f"{short(band[0])}..{short(band[1])} expected for {judged}{hint}",
                loc, material=mat.name,
                data={"temperature": t, "line": loc.line, "yield_stress": y, "E": E, "yield_strain": ratio,
                      "material_class": cls, "band": list(band)},
                # the units rule names the same slip with the value to write: it wins (one defect, one finding)
                restates=(("plastic-yield", mat.key, blk.loc.line, t), ("units", mat.name, ("yield",))))
