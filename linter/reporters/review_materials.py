"""The materials part of the reviewer's audit: constants as given, derived values, figures.

Reads the material entries of a :class:`linter.findings.FileReport` (``blocks`` as written, ``derived``
from the derivations, ``used_by``) and the unit facts of ``FileReport.details["units"]``. Values are shown
in the deck's units and, where the unit system is known, in SI with the unit written out.
"""
from __future__ import annotations

import math
from typing import Any, Optional

from . import visible
from . import review_figures as FIG
from .review_doc import Figure, H, Section, Table, derived, given, para, short, where

#: readable headers of derived quantities: key -> (header, quantity)
ELASTIC_COLUMNS = (
    ("E", "E", "stress"), ("nu", "nu", "dimensionless"), ("G", "G", "stress"), ("K", "K", "stress"),
    ("lambda", "lambda", "stress"), ("K_over_G", "K/G", "dimensionless"), ("rho", "rho", "density"),
    ("c0", "c0", "speed"), ("cd", "cd", "speed"), ("cs", "cs", "speed"),
)
ELASTIC_LEGEND = ("Derived isotropic constants, each row as the solver reads it: G shear modulus, K bulk modulus, "
                  "lambda Lamé's first parameter; with a density, c0 bar, cd dilatational and cs shear wave speeds")
HYPER_COLUMNS = (("mu0", "mu0", "stress"), ("K0", "K0", "stress"), ("nu0", "nu0", "dimensionless"),
                 ("K0_over_mu0", "K0/mu0", "dimensionless"))
LOCKING_GRADES = ("severe", "mild")


class Units:
    """Deck-unit labels and SI factors of one deck (from ``details["units"]``)."""

    def __init__(self, facts: Optional[dict]):
        facts = facts or {}
        self.system = facts.get("system")
        self.labels = facts.get("labels") or {}
        self.si_labels = facts.get("si_labels") or {}
        self.to_si = facts.get("to_si") or {}

    def header(self, name: str, quantity: str) -> str:
        label = self.labels.get(quantity)
        return f"{name} [{label}]" if label and quantity != "dimensionless" else name

    def cell(self, value: Any, quantity: str, fmt=derived) -> Any:
        """The value in deck units, and (when convertible) the SI value with its unit."""
        shown = fmt(value)
        factor, label = self.to_si.get(quantity), self.si_labels.get(quantity)
        if quantity == "dimensionless" or factor is None or label is None or value is None:
            return shown
        try:
            f = float(value)
        except (TypeError, ValueError):
            return shown
        if not math.isfinite(f):
            return shown
        return (shown, f"{derived(f * factor)} {label}")

    def label(self, quantity: str, fallback: str = "deck units") -> str:
        return self.labels.get(quantity) or fallback


def _temp(t: Any) -> str:
    return "-" if t is None else given(t)


def block_name(b: dict) -> str:
    """The card as written, with the property kind and form when the card name does not say them."""
    card, kind, form = visible(b.get("card") or ""), visible(b.get("kind") or ""), b.get("form")
    what = [kind] if kind and kind.lower() not in card.lower().replace("*", "") else []
    if form and form != "iso":
        what.append(visible(form))
    return f"{card} ({', '.join(what)})" if what and card else (card or ", ".join(what))


def block_table(b: dict, units: Units):
    cols, qs = b.get("columns") or [], b.get("quantities") or []
    if not b.get("rows"):
        return para(f"{block_name(b)} at {where(b.get('path'), b.get('line'))}: "
                    "no values read from it (see Not checked).")
    head = ["T", "line"] + [units.header(visible(c), q) for c, q in zip(cols, qs)]
    rows = []
    for r in b.get("rows") or ():
        vals = r.get("values") or []
        blanks = set(r.get("blanks") or ())
        cells = []
        for i, q in enumerate(qs[:len(cols)]):
            v = vals[i] if i < len(vals) else None
            c = units.cell(v, q, given) if i < len(vals) else "-"
            if i in blanks:
                c = (c if isinstance(c, str) else c[0]) + " (blank field)"
            cells.append(c)
        rows.append([_temp(r.get("T")), str(r.get("line") or "")] + cells)
    cap = f"{block_name(b)} at {where(b.get('path'), b.get('line'))}"
    return Table(head, rows, cls="constants", caption=cap)


def elastic_table(rows: list[dict], units: Units) -> Table:
    keys = [c for c in ELASTIC_COLUMNS if any(c[0] in r for r in rows)]
    head = ["T", "line"] + [units.header(h, q) for _k, h, q in keys]
    body = []
    for r in rows:
        cells = [units.cell(r.get(k), q, given if k in ("E", "nu") else derived) for k, _h, q in keys]
        body.append([_temp(r.get("T")), str(r.get("line") or "")] + cells)
    return Table(head, body, cls="derived", caption=ELASTIC_LEGEND)


def _binding(row: dict) -> str:
    moduli, pairs, det = row.get("moduli") or {}, row.get("pairs") or {}, row.get("determinant")
    if moduli or pairs:
        bad = [f"{visible(k)} = {derived(v)} (must be > 0)" for k, v in moduli.items()
               if v is not None and v <= 0]
        bad += [f"{visible(k)} = {derived(v)} (must be < 1)" for k, v in pairs.items() if v is not None and v >= 1]
        if det is not None and det <= 0:
            bad.append(f"1 - sum of nu products = {derived(det)} (must be > 0)")
        if bad:
            return "violated: " + "; ".join(bad)
        cands = [(1 - v, f"{visible(k)} = {derived(v)} (< 1)") for k, v in pairs.items() if v is not None]
        if det is not None:
            cands.append((det, f"1 - sum of nu products = {derived(det)} (> 0)"))
        return "binds: " + min(cands)[1] if cands else "n/a"
    pd = row.get("positive_definite")
    return ("binds: smallest eigenvalue > 0 (met)" if pd else
            "violated: smallest eigenvalue > 0 (not positive definite)" if pd is False else "n/a")


def aniso_tables(entries: list[dict], units: Units, quantity: str = "stress", what: str = "stiffness") -> list:
    out = []
    for e in entries:
        head = ["T", "line", units.header("smallest eigenvalue", quantity),
                units.header("largest eigenvalue", quantity),
                "condition number", "positive definite", "bound"]
        rows = []
        for r in e.get("rows") or ():
            pd = r.get("positive_definite")
            rows.append([_temp(r.get("temperature")), str(r.get("line") or ""),
                         units.cell(r.get("eig_min"), quantity), units.cell(r.get("eig_max"), quantity),
                         derived(r.get("condition")), "yes" if pd else "no" if pd is False else "n/a", _binding(r)])
        part = e.get("part")
        cap = (f"Eigenvalues of the {what} ({visible(e.get('form'))}"
               + (f", {visible(part)}" if part and part != "full" else "") + f") of line {e.get('line')}")
        out.append(Table(head, rows, cls="derived", caption=cap))
    return out


def _stretches(intervals) -> str:
    return ", ".join(f"{lo:.3g} to {hi:.3g}" for lo, hi in intervals) if intervals else "none"


def hyper_table(h: dict, units: Units) -> list:
    rows = h.get("rows") or []
    head = ["T", "line"] + [units.header(hd, q) for _k, hd, q in HYPER_COLUMNS] + \
        [units.header("D used by the solver", "compliance"), "unstable stretches (UT; ET; PS)"]
    body = []
    for r in rows:
        if "mu0" not in r:
            body.append([_temp(r.get("temperature")), str(r.get("line") or "")] +
                        [visible(r.get("skipped") or r.get("invalid") or "not analysed")] + [""] * (len(head) - 3))
            continue
        d = r.get("D_used") or r.get("D") or []
        dtext = ", ".join(derived(x) for x in d) or "-"
        if r.get("D_defaulted"):
            dtext += " (solver default for a zero D)"
        st = r.get("stability") or {}
        unstable = "; ".join(f"{m} {_stretches((st.get(m) or {}).get('unstable'))}" for m in ("UT", "ET", "PS")) \
            if st else "not scanned"
        body.append([_temp(r.get("temperature")), str(r.get("line") or "")] +
                    [units.cell(r.get(k), q) for k, _h, q in HYPER_COLUMNS] + [dtext, unstable])
    return [Table(head, body, cls="derived",
                  caption=f"Initial shear and bulk moduli and Poisson's ratio of the {visible(h.get('model'))} set "
                          f"the solver uses (line {h.get('line')}), and the stretches where it loses stability")]


# --------------------------------------------------------------------------- figures of one material


def _hyper_figure(m: dict, units: Units) -> Optional[Figure]:
    from ..physics import hyper_models as HM

    h = (m.get("derived") or {}).get("hyper") or {}
    if h.get("kind") != "hyperelastic":
        return None
    block = next((b for b in reversed(m.get("blocks") or []) if b.get("kind") == "hyperelastic"), None)
    if block is None:
        return None
    stab = {r.get("line"): r.get("stability") for r in h.get("rows") or ()}
    rows, seen = [], set()
    for r in block.get("rows") or ():
        vals = tuple(r.get("values") or ())
        if vals in seen or any(v is None for v in vals):
            continue
        seen.add(vals)
        hr = HM.from_row(block.get("form"), vals)
        if hr is None or hr.model is None:
            continue
        st = stab.get(r.get("line")) or {}
        rows.append({"model": hr.model, "label": f"T = {_temp(r.get('T'))}",
                     "unstable": {k: v.get("unstable") for k, v in st.items()}})
    svg = FIG.hyper_curves(rows, units.label("stress"))
    if not svg:
        return None
    return Figure(svg, "Nominal stress against stretch (incompressible) in uniaxial, equibiaxial and planar "
                       "tension; shaded: stretches where the material is not stable (Drucker).")


def _offending_lines(findings) -> set:
    lines = set()
    for f in findings:
        if not f.rule.startswith("plastic/"):
            continue
        d = f.data if isinstance(f.data, dict) else {}
        if line := d.get("line"):
            lines.add(line)
        for p in d.get("points") or ():
            if isinstance(p, dict) and p.get("line"):
                lines.add(p["line"])
        if not d.get("line") and not d.get("points") and f.line:
            lines.add(f.line)
    return lines


def _plastic_figure(m: dict, units: Units, findings) -> Optional[Figure]:
    bad_lines = _offending_lines(findings)
    curves = []
    for b in m.get("blocks") or ():
        if b.get("kind") != "plastic":
            continue
        groups: dict = {}
        for r in b.get("rows") or ():
            vals = r.get("values") or []
            if len(vals) < 2 or vals[0] is None or vals[1] is None:
                continue
            groups.setdefault(r.get("T"), []).append((vals[1], vals[0], r.get("line") in bad_lines))
        for t, pts in groups.items():
            curves.append({"label": f"T = {_temp(t)}", "strain": [p[0] for p in pts], "stress": [p[1] for p in pts],
                           "bad": [p[2] for p in pts]})
    svg = FIG.hardening(curves, units.label("stress"))
    if not svg:
        return None
    return Figure(svg, "Hardening curves per temperature, as given; circled: points a finding names.")


def _temperature_figure(m: dict, units: Units) -> Optional[Figure]:
    rows = (m.get("derived") or {}).get("elastic") or []
    temps = [r.get("T") for r in rows]
    if len({t for t in temps if t is not None}) >= 2:
        series = [{"label": f"E [{units.label('stress')}]", "T": temps, "values": [r.get("E") for r in rows]},
                  {"label": "nu", "T": temps, "values": [r.get("nu") for r in rows]}]
    else:
        series = []
        for b in m.get("blocks") or ():
            if b.get("kind") != "elastic" or b.get("form") == "iso":
                continue
            rs = [r for r in b.get("rows") or () if r.get("T") is not None]
            if len({r["T"] for r in rs}) < 2:
                continue
            for i, (c, q) in enumerate(list(zip(b.get("columns") or [], b.get("quantities") or []))[:3]):
                series.append({"label": units.header(visible(c), q), "T": [r["T"] for r in rs],
                               "values": [(r.get("values") or [None] * 9)[i] for r in rs]})
            break
    svg = FIG.against_temperature(series)
    return Figure(svg, "Elastic constants against temperature, as given.") if svg else None


# --------------------------------------------------------------------------- sections


def locking_materials(fr) -> set:
    d = fr.details or {}
    grades = {t.get("type"): t.get("locking") for t in d.get("element_types") or ()}
    out = set()
    for u in d.get("usage") or ():
        for s in u.get("sections") or ():
            if any(grades.get(t) in LOCKING_GRADES for t in (s.get("counts") or {})):
                out.add(u.get("material"))
    return out


def material_section(m: dict, fr, anchor: str, units: Units, figures: bool) -> Section:
    name = m.get("name")
    sec = Section(anchor, [H(3, f"Material {short(name)}", anchor)], cls="material")
    used = m.get("used_by") or {}
    use_text = ", ".join(f"{visible(k)} x {v}" for k, v in used.items()) if used else "no elements (unused)"
    mus = (m.get("derived") or {}).get("unit_system") or {}
    own = ""
    if mus.get("name") and mus.get("name") != units.system:
        own = (f" Taken alone, its values fit {visible(mus['name'])} best (confidence "
               f"{derived(mus.get('confidence'))}), not the deck's {visible(units.system or 'undetermined')} system.")
    full = [("", "Full name: "), ("code", visible(name)), ("", ". ")] if short(name) != visible(name) else []
    sec.children.append(para(*full, f"Defined at {where(m.get('path'), m.get('line'))}; used by {use_text}." + own))
    if not m.get("blocks"):
        sec.children.append(para("No property was read for this material."))
    for b in m.get("blocks") or ():
        sec.children.append(block_table(b, units))
    dv = m.get("derived") or {}
    if dv.get("elastic"):
        sec.children.append(elastic_table(dv["elastic"], units))
    if dv.get("aniso"):
        sec.children += aniso_tables(dv["aniso"], units)
    if dv.get("conductivity"):
        sec.children += aniso_tables(dv["conductivity"], units, "conductivity", "conductivity")
    if dv.get("hyper"):
        sec.children += hyper_table(dv["hyper"], units)
    if figures:
        mine = [f for f in fr.findings if f.material is not None and str(f.material) == str(name)]
        for fig in (_hyper_figure(m, units), _plastic_figure(m, units, mine), _temperature_figure(m, units)):
            if fig is not None:
                sec.children.append(fig)
    return sec


def admissibility_figure(fr, units: Units, band_nu: float) -> tuple[Optional[Figure], Optional[Table]]:
    """The whole deck's isotropic rows (and hyperelastic initial values) in one map, with the key table."""
    locking = locking_materials(fr)
    points, key = [], []
    factor = units.to_si.get("stress") if units.system else None
    for m in fr.materials or ():
        dv = m.get("derived") or {}
        rows = [(r.get("E"), r.get("nu"), r.get("T"), "elastic") for r in dv.get("elastic") or ()]
        h = dv.get("hyper") or {}
        for r in h.get("rows") or ():
            if "mu0" in r and r.get("nu0") is not None:
                E0 = 2 * r["mu0"] * (1 + r["nu0"]) if r.get("mu0") is not None else None
                rows.append((E0, r["nu0"], r.get("temperature"), "hyper"))
        for E, nu, T, kind in rows:
            if E is None or nu is None:
                continue
            n = len(points) + 1
            on_lock = m.get("name") in locking
            points.append({"n": n, "E": E * factor if factor else E, "nu": nu, "kind": kind, "locking": on_lock})
            key.append([str(n), short(m.get("name")), _temp(T), "initial values (hyperelastic)" if kind == "hyper"
                        else "isotropic elastic", units.cell(E, "stress"), given(nu) if kind == "elastic"
                        else derived(nu), "yes" if on_lock else "no"])
    if not points:
        return None, None
    svg = FIG.admissibility_map(points, units.si_labels.get("stress", "Pa") if factor else "deck units", band_nu)
    table = Table(["#", "Material", "T", "Kind", units.header("E", "stress"), "nu", "on elements prone to locking"],
                  key,
                  caption="Key to the admissibility map")
    if not svg:
        return None, table
    return Figure(svg, "Admissibility map: every isotropic row (circles) and hyperelastic initial values "
                       "(diamonds). Green: admissible (K > 0, G > 0, -1 < nu < 1/2); orange: nearly "
                       "incompressible band; red strips: not admissible. A red ring marks a material on element "
                       "types prone to volumetric locking (severe or mild grade), where a nearly incompressible "
                       "material makes them lock."), table


def materials_part(fr, deck_anchor: str, figures: bool, band_nu: float, sure: bool = True) -> tuple[list, list]:
    """Sections of the materials of one deck and their (anchor, title) for the contents."""
    units = Units((fr.details or {}).get("units"))
    out, toc = [], []
    head = Section(f"{deck_anchor}-materials", [H(3, "Materials", f"{deck_anchor}-materials")])
    named = (fr.unit_system or {}).get("name") if isinstance(fr.unit_system, dict) else None
    if units.system and units.to_si and sure:
        head.children.append(para(f"Values are shown as given, in the deck's units ({visible(units.system)}); "
                                  "below each, in smaller type, the same value in SI."))
    elif units.system and units.to_si:
        head.children.append(para(f"Values are shown as given; below each, in smaller type, the value in SI "
                                  f"if the deck's units are {visible(units.system)}, which is only a guess (see "
                                  "the unit system above)."))
    elif named:
        head.children.append(para(f"Values are shown as given, in the deck's units ({visible(named)})."))
    else:
        head.children.append(para("The unit system was not determined: values are shown in the deck's units only."))
    if figures:
        fig, key = admissibility_figure(fr, units, band_nu)
        if fig is not None:
            head.children.append(fig)
        if key is not None:
            head.children.append(key)
    out.append(head)
    toc.append((head.anchor, "materials"))
    for j, m in enumerate(fr.materials or ()):
        if isinstance(m, dict):
            a = f"{deck_anchor}-m{j + 1}"
            out.append(material_section(m, fr, a, units, figures))
    return out, toc

