"""Neutral models built directly for the units tests (no parser needed)."""
from __future__ import annotations

from linter.model import DeckModel, Load, Loc, Material, Procedure, PropertyBlock, Row, Step, norm_key

PATH = "demo.inp"


def block(kind, form, *rows, line=1, **options):
    return PropertyBlock(kind=kind, form=form, rows=[Row(tuple(r), None, Loc(PATH, line)) for r in rows],
                         loc=Loc(PATH, line), card=kind.upper(), options=dict(options))


def material(name, *, E=None, nu=0.3, rho=None, k=None, c=None, alpha=None, yield_=None, hyper=None,
             line=10, wtmass=None):
    blocks = []
    if E is not None:
        blocks.append(block("elastic", "iso", (E, nu), line=line + 1))
    if hyper is not None:
        form, vals = hyper
        blocks.append(block("hyperelastic", form, vals, line=line + 1))
    if rho is not None:
        opts = {"RHO": rho / wtmass, "WTMASS": wtmass} if wtmass else {}
        blocks.append(block("density", "iso", (rho,), line=line + 2, **opts))
    if k is not None:
        blocks.append(block("conductivity", "iso", (k,), line=line + 3))
    if c is not None:
        blocks.append(block("specific_heat", "iso", (c,), line=line + 4))
    if alpha is not None:
        blocks.append(block("expansion", "iso", (alpha,), line=line + 5))
    if yield_ is not None:
        blocks.append(block("plastic", "iso", (yield_, 0.0), (yield_ * 1.3, 0.1), line=line + 6))
    return Material(name=name, key=norm_key(name), loc=Loc(PATH, line), blocks=blocks)


def model(*materials, steps=("static",), gravity=None, params=None):
    m = DeckModel(path=PATH, format="keyword", dialect="calculix")
    for mat in materials:
        m.materials[mat.key] = mat
    for i, kind in enumerate(steps):
        st = Step(name=f"step{i}", loc=Loc(PATH, 100 + i), procedures=[Procedure(kind, kind.upper(), Loc(PATH, 101))])
        if gravity is not None and i == 0:
            st.loads.append(Load("gravity", gravity, Loc(PATH, 102)))
        m.steps.append(st)
    m.params.update(params or {})
    return m


def run(m, units=None):
    """Derive and run the units rules; return the findings."""
    from linter.config import Config
    from linter.derived.units import derive_units
    from linter.runner import run_rules

    cfg = Config.from_mapping({"select": ["units"]})
    cfg.units = units     # set directly: a configuration file refuses an unknown system before any check
    derive_units(m, cfg)
    return run_rules(m, cfg)
