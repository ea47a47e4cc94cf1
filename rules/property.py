"""property/*: scalar material properties (density, conductivity, specific heat) and temperature tables."""
from __future__ import annotations

import math

from linter.registry import rule

from ._text import at_t, empty_field_at, listing, num

CCX_MAT = "CalculiX User's Manual, *MATERIAL"

#: kind -> (column names checked for positivity, words)
POSITIVE = {
    "density": {"iso": ("rho",), "_word": "density"},
    "conductivity": {"iso": ("k",), "ortho": ("k11", "k22", "k33"), "aniso": ("k11", "k22", "k33"),
                     "_word": "conductivity"},
    "specific_heat": {"iso": ("c",), "_word": "specific heat"},
}
#: bulk cards default these fields to 0 when blank, so 0 written out means "not given" (MAT1 RHO: MYSTRAN User Manual
#: MAT1; MAT4 CP: from memory);
#: whether the analysis needs them is the analysis/* rules' question
BULK_ZERO_MEANS_NONE = ("density", "specific_heat")
TABLE_KINDS = ("elastic", "expansion", "conductivity", "specific_heat", "density")


@rule("property/nonpositive", severity="error",
      title="Density, conductivity or specific heat not positive",
      rationale="Mass density, thermal conductivity and specific heat are positive for every real material. "
                "Zero or a negative value gives no (or negative) mass or heat capacity, a singular mass matrix or "
                "heat flowing from cold to hot. For orthotropic and anisotropic conductivity the diagonal terms "
                "are checked here; whether the whole tensor is positive definite is aniso/conductivity-not-"
                "positive-definite. A zero that only comes from an empty field is reported once, as "
                "parse/empty-field. On bulk cards an empty field means the property is not given, and RHO or CP = 0 "
                "(the card's default) means no mass or heat capacity: only negative values are reported there. code_aster "
                "command files write RHO = 0 the same way (ELAS accepts it) for analyses without mass.",
      references=(CCX_MAT, "handbook properties: EN 1993-1-1 3.2.6, EN 1992-1-1 Table 3.1, ASM Handbook, CRC Handbook"),
      data="kind; rows: list of {T, line, values: {column: value}} of the rows concerned")
def nonpositive(model, ctx):
    for mat in model.all_materials():
        for blk in mat.blocks:
            spec = POSITIVE.get(blk.kind)
            if not spec or blk.form not in spec:
                continue
            cols = spec[blk.form]
            idx = [blk.layout.index(c) for c in cols if c in blk.layout]
            bad, restated = [], []
            for row in blk.rows:
                vals = {blk.layout[i]: row.values[i] for i in idx if i < len(row.values)}
                low = {c: v for c, v in vals.items() if math.isfinite(v) and v <= 0}
                if not low:
                    continue
                blank = [c for c in low if blk.layout.index(c) in row.blanks]
                if blank and model.format == "bulk":
                    continue  # an empty bulk field: the property is simply not given
                if model.format in ("bulk", "aster") and blk.kind in BULK_ZERO_MEANS_NONE:
                    low = {c: v for c, v in low.items() if v < 0}
                    if not low:
                        continue  # RHO/CP = 0 is the card's default: no mass / no heat capacity
                if blank and all(v == 0 for v in low.values()):
                    key = empty_field_at(model, ctx, row.loc)
                    if key is not None:
                        restated.append(key)
                        continue
                bad.append((row, low))
            if not bad:
                continue
            word = spec["_word"]
            parts = [", ".join(f"{c} = {num(v)}" for c, v in low.items()) + f"{at_t(row.temperature)} on line "
                     f"{row.loc.line}" for row, low in bad]
            yield ctx.finding(f"material {mat.name}: {word} not positive ({listing(parts)})", bad[0][0].loc,
                              material=mat.name, defect=("nonpositive", blk.kind, mat.key, blk.loc.line),
                              data={"kind": blk.kind, "rows": [{"T": r.temperature, "line": r.loc.line,
                                                               "values": low} for r, low in bad]})


def _order_problems(temps: list[float]):
    """(index, kind) of every row whose temperature is not above the previous one."""
    out = []
    for i in range(1, len(temps)):
        a, b = temps[i - 1], temps[i]
        if math.isnan(a) or math.isnan(b):
            continue
        if b == a:
            out.append((i, "repeated"))
        elif b < a:
            out.append((i, "decreasing"))
    return out


@rule("property/temperature-order", severity="error",
      title="Temperature table not strictly increasing",
      rationale="CalculiX looks properties up in a temperature table with a sorted search: the temperatures must "
                "increase from row to row. A repeated or decreasing temperature (often a missing or mistyped "
                "temperature column, which is read as 0) makes the lookup return the wrong row. Error for "
                "CalculiX, warning for other dialects. Plastic hardening tables are not checked: there "
                "consecutive rows share a temperature by design.",
      references=(CCX_MAT + "; ccx source materialdata_me.f (ident2); 'a missing temperature column is read as 0'",),
      data="kind; rows: list of {line, T, previous_T, problem: repeated | decreasing}")
def temperature_order(model, ctx):
    calculix = model.dialect == "calculix"
    severity = "error" if calculix else "warning"
    for mat in model.all_materials():
        for blk in mat.blocks:
            if blk.kind not in TABLE_KINDS or len(blk.rows) < 2:
                continue
            # ccx reads a missing temperature as 0 (ccx source, the material readers)
            temps = [(0.0 if calculix else math.nan) if r.temperature is None else float(r.temperature)
                     for r in blk.rows]
            probs = _order_problems(temps)
            if not probs:
                continue
            parts, rows = [], []
            for i, what in probs:
                row = blk.rows[i]
                missing = " (no temperature given: read as 0)" if calculix and row.temperature is None else ""
                parts.append(f"T = {num(temps[i])} on line {row.loc.line} after T = {num(temps[i - 1])}{missing}")
                rows.append({"line": row.loc.line, "T": temps[i], "previous_T": temps[i - 1], "problem": what})
            card = blk.card or blk.kind
            yield ctx.finding(f"material {mat.name}: the temperatures of {card} do not increase strictly: "
                              f"{listing(parts)}", blk.rows[probs[0][0]].loc, material=mat.name,
                              severity=severity, data={"kind": blk.kind, "rows": rows})
