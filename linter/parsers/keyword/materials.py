"""Material cards of keyword decks (order of constants: CalculiX CrunchiX User's Manual, material keywords)."""
from __future__ import annotations

from typing import Optional

from ...model import BLOCK_LAYOUTS, Material, PropertyBlock, Row, Unchecked
from .lex import KeywordLine, Reader

#: keyword -> property kind; every keyword listed here continues an open *MATERIAL block
MATERIAL_CARDS = {
    "ELASTIC": "elastic", "DENSITY": "density", "EXPANSION": "expansion", "CONDUCTIVITY": "conductivity",
    "SPECIFICHEAT": "specific_heat", "PLASTIC": "plastic", "DEFORMATIONPLASTICITY": "deformation_plasticity",
    "CREEP": "creep", "HYPERELASTIC": "hyperelastic", "HYPERFOAM": "hyperfoam", "USERMATERIAL": "user",
    "DAMPING": "damping",
    # read by ccx as material data, not checked here
    "CYCLICHARDENING": "other", "DEPVAR": "other", "ELECTRICALCONDUCTIVITY": "other",
    "FLUIDCONSTANTS": "other", "MAGNETICPERMEABILITY": "other", "SPECIFICGASCONSTANT": "other",
    "COMPRESSIBLE": "other", "VISCOSITY": "other",
}
#: kinds whose content no rule checks
UNCHECKED_KINDS = {"creep": "creep law not checked", "user": "user material constants not checked",
                   "other": "material card not checked", "damping": "damping not checked"}

_ELASTIC_TYPES = (("ENGINEERINGCONSTANTS", "engineering"), ("ORTHO", "ortho"), ("ANISO", "aniso"),
                  ("ISO", "iso"))
_THERMAL_TYPES = (("ORTHO", "ortho"), ("ANISO", "aniso"), ("ISO", "iso"))
_HARDENING = ("ISOTROPIC", "KINEMATIC", "COMBINED", "USER", "JOHNSONCOOK")
#: hyperelastic model name (no blanks) -> form prefix; polynomial forms take N
_HYPER = {"ARRUDA-BOYCE": "arruda-boyce", "MOONEY-RIVLIN": "mooney-rivlin", "NEOHOOKE": "neo-hooke",
          "OGDEN": "ogden", "POLYNOMIAL": "polynomial", "REDUCEDPOLYNOMIAL": "reduced-polynomial",
          "YEOH": "yeoh", "VANDERWAALS": "van-der-waals"}
_HYPER_N = {"ogden", "polynomial", "reduced-polynomial"}


def _by_prefix(value: str, table) -> Optional[str]:
    for prefix, form in table:
        if value.startswith(prefix):
            return form
    return None


def _form(rd: Reader, kw: KeywordLine, mat: Material) -> tuple[str, str, dict]:
    """(kind, form, options) for a material card."""
    kind = MATERIAL_CARDS[kw.key]
    opts: dict = {}
    form = "iso"
    if kind in ("elastic", "expansion", "conductivity"):
        t = kw.upper("TYPE", "ISO")
        if "TYPE" in kw.params:
            opts["TYPE"] = t
        found = _by_prefix(t, _ELASTIC_TYPES if kind == "elastic" else _THERMAL_TYPES)
        if found is None:
            rd.issue("unknown-option", f"{kw.written}, TYPE={kw.get('TYPE')} is not a type CalculiX knows; it is "
                     "read as isotropic", kw.loc.line, material=mat.name, option="TYPE", value=t)
            found = "iso"
        form = found
        if kind == "expansion" and "ZERO" in kw.params:
            z = rd.real(kw.upper("ZERO"), _fake(kw), "ZERO", mat.name, empty_is_issue=False)
            opts["ZERO"] = z if z is not None else 0.0
    elif kind == "plastic":
        h = kw.upper("HARDENING", "ISOTROPIC")
        opts["HARDENING"] = h
        if h not in _HARDENING:
            rd.issue("unknown-option", f"*PLASTIC, HARDENING={kw.get('HARDENING')} is not known; CalculiX uses "
                     "isotropic hardening", kw.loc.line, material=mat.name, option="HARDENING", value=h)
            opts["HARDENING"] = "ISOTROPIC"
    elif kind == "hyperelastic":
        form, opts = _hyper_form(rd, kw, mat)
    elif kind == "hyperfoam":
        n = _n_param(rd, kw, mat, (1, 2, 3))
        opts["N"] = n
        form = f"hyperfoam-{n}"
    elif kind == "user":
        for k in ("CONSTANTS", "TYPE"):
            if k in kw.params:
                opts[k] = kw.upper(k)
    elif kind == "creep":
        opts["LAW"] = kw.upper("LAW", "NORTON")
    for k in kw.order:
        opts.setdefault(k, kw.params[k])
    return kind, form, opts


def _fake(kw: KeywordLine):
    from .lex import DataLine

    return DataLine(kw.loc, [], "")


def _n_param(rd: Reader, kw: KeywordLine, mat: Material, allowed) -> int:
    raw = kw.upper("N", "1")
    if raw.isdigit() and int(raw) in allowed:
        return int(raw)
    rd.issue("unknown-option", f"{kw.written}, N={kw.get('N')} is not allowed here (allowed: "
             f"{', '.join(map(str, allowed))}); N=1 is assumed", kw.loc.line, material=mat.name, option="N", value=raw)
    return 1


def _hyper_form(rd: Reader, kw: KeywordLine, mat: Material) -> tuple[str, dict]:
    model, n, n_pos, model_pos = "polynomial", 1, None, None
    for i, name in enumerate(kw.order):
        if name in _HYPER:
            model, model_pos = _HYPER[name], i
        elif name == "N":
            n_pos = i
        else:
            rd.issue("unknown-option", f"*HYPERELASTIC: parameter {name} is not recognised (CalculiX warns and "
                     "ignores it)", kw.loc.line, material=mat.name, option=name, value=kw.params[name])
    opts = {"MODEL": model}
    if n_pos is not None:
        raw = kw.upper("N", "1")
        if model_pos is not None and n_pos < model_pos:
            rd.issue("unknown-option", f"*HYPERELASTIC: N={kw.get('N')} comes before the model name; CalculiX "
                     "applies it to the default model (POLYNOMIAL) and reads the model with N=1",
                     kw.loc.line, material=mat.name, option="N", value=raw)
        elif model in _HYPER_N:
            n = _n_param(rd, kw, mat, (1, 2, 3))
        elif raw != "1":
            rd.issue("unknown-option", f"*HYPERELASTIC: N={kw.get('N')} is not allowed with this model; N=1 is "
                     "used", kw.loc.line, material=mat.name, option="N", value=raw)
        opts["N"] = n
    form = f"{model}-{n}" if model in _HYPER_N else model
    if model == "polynomial" and n == 1 and model_pos is None:
        opts["MODEL"] = "POLYNOMIAL (default)"
    return form, opts


def _row_length(kind: str, form: str, opts: dict) -> int:
    """Constants per row (temperature excluded); 0 = as many as written."""
    layout = BLOCK_LAYOUTS.get((kind, form))
    if layout:
        return len(layout)
    if kind == "user":
        try:
            return int(opts.get("CONSTANTS", 0))
        except ValueError:
            return 0
    if kind == "creep":
        return 3
    return 0


def read_material_card(rd: Reader, kw: KeywordLine, start: int, end: int, first_line: int, mat: Material,
                       model) -> None:
    kind, form, opts = _form(rd, kw, mat)
    block = PropertyBlock(kind=kind, form=form, rows=[], loc=kw.loc, card=kw.written, options=opts)
    mat.blocks.append(block)
    if kind in UNCHECKED_KINDS:
        model.unchecked.append(Unchecked(what=kw.written, loc=kw.loc, reason=UNCHECKED_KINDS[kind],
                                         material=mat.name))
    n = _row_length(kind, form, opts)
    layout = BLOCK_LAYOUTS.get((kind, form), ())
    per_line = 8
    # rows spanning several lines: collect until n constants (+ T) are read
    pending: list[str] = []
    pending_blanks: list[int] = []
    pending_loc = None
    lines = list(rd.lines(start, end, first_line))
    user_law = opts.get("LAW") == "USER" or opts.get("HARDENING") == "USER"
    if not lines and kind not in ("user", "other", "damping") and not user_law:
        rd.issue("malformed-data", f"{kw.written} has no data line", kw.loc.line, material=mat.name)
        return
    for line in lines:
        if pending_loc is None:
            pending_loc = line.loc
        fields = line.fields
        for i, f in enumerate(fields):
            if f == "" and len(fields) > 1:
                pending_blanks.append(len(pending) + i)
        pending.extend(fields)
        if n >= per_line and len(pending) < n + 1 and len(fields) >= per_line:
            continue                                   # the row goes on on the next line
        _finish_row(rd, block, pending, pending_blanks, pending_loc, n, layout, mat, line)
        pending, pending_blanks, pending_loc = [], [], None
    if pending:
        rd.issue("truncated", f"{kw.written}: the file ends inside a row of {n} constants", lines[-1].loc.line,
                 material=mat.name)
        _finish_row(rd, block, pending, pending_blanks, pending_loc, n, layout, mat, lines[-1])


def _finish_row(rd: Reader, block: PropertyBlock, fields: list[str], blanks: list[int], loc, n: int,
                layout, mat: Material, line) -> None:
    if block.kind in ("other", "damping") or (block.kind == "user" and n == 0):
        return
    count = n if n else len(fields)
    if n > 8 and len(fields) < n:
        rd.issue("malformed-data", f"{block.card}: a row needs {n} constants over {(n + 1 + 7) // 8} lines, only "
                 f"{len(fields)} given (CalculiX: the definition is not complete)", loc.line, material=mat.name,
                 expected=n, given=len(fields))
    vals: list[float] = []
    blank_idx: list[int] = []
    for i in range(count):
        f = fields[i] if i < len(fields) else ""
        what = layout[i] if i < len(layout) else f"constant {i + 1}"
        if i in blanks:
            blank_idx.append(i)
        v = rd.real(f, line, what, mat.name, empty_is_issue=(i in blanks))
        if v is None:
            return
        vals.append(v)
    temp = None
    tpos = count
    if tpos < len(fields):
        t = rd.real(fields[tpos], line, "temperature", mat.name, empty_is_issue=False)
        if t is None:
            return
        temp = t
        if len(fields) > tpos + 1 and any(fields[tpos + 1:]):
            rd.issue("malformed-data", f"{block.card}: {len(fields) - tpos - 1} value(s) after the temperature "
                     "are not read by the solver", loc.line, material=mat.name, severity="warning")
    block.rows.append(Row(values=tuple(vals), temperature=temp, loc=loc, blanks=tuple(blank_idx)))
