"""Small builders of neutral models for rule tests (no parser involved).

    m = Deck()                                    # keyword / calculix
    m.material("STEEL", elastic=[(210000, 0.3)], density=[(7.85e-9,)])
    m.elements("C3D8", 10, elset="PART")
    m.section("solid", "PART", "STEEL")
    m.step("static")
    found = m.run("elastic/poisson-out-of-range")  # derivations + rules, restatements dropped
"""
from __future__ import annotations

from typing import Iterable, Optional, Sequence

import numpy as np

from linter.config import Config
from linter.derived import derive_all
from linter.model import (DeckModel, ElementBlock, ElementSet, Include, Issue, Lazy, Load, Loc, Material,
                          MaterialRef, Procedure, PropertyBlock, Row, Section, Step, norm_key)
from linter.runner import run_rules

ROLE = {"solid": "solid", "shell": "shell", "membrane": "membrane", "beam": "beam", "truss": "truss"}


class Deck:
    def __init__(self, fmt: str = "keyword", dialect: str = "calculix", path: str = "deck.inp"):
        self.model = DeckModel(path=path, format=fmt, dialect=dialect)
        self.line = 1
        self._next_id = 1

    def loc(self) -> Loc:
        self.line += 1
        return Loc(self.model.path, self.line)

    # ------------------------------------------------------------------ materials
    def block(self, mat: Material, kind: str, form: str, rows: Iterable[Sequence[float]], *,
              temps: Optional[Sequence[Optional[float]]] = None, card: str = "", blanks=None,
              options: Optional[dict] = None) -> PropertyBlock:
        """Rows are value tuples in the layout of (kind, form); a trailing temperature is given
        with ``temps`` or as one extra value beyond the layout length."""
        from linter.model import BLOCK_LAYOUTS

        n = len(BLOCK_LAYOUTS.get((kind, form), ()))
        blk = PropertyBlock(kind=kind, form=form, rows=[], loc=self.loc(), card=card or f"*{kind.upper()}",
                            options=dict(options or {}))
        for i, vals in enumerate(rows):
            vals = tuple(float(v) for v in vals)
            t = None
            if temps is not None:
                t = temps[i]
            elif n and len(vals) > n:
                vals, t = vals[:n], vals[n]
            b = tuple(blanks[i]) if blanks else ()
            blk.rows.append(Row(values=vals, temperature=t, loc=self.loc(), blanks=b))
        mat.blocks.append(blk)
        return blk

    def material(self, name: str, *, elastic=None, density=None, plastic=None, hyper=None,
                 conductivity=None, specific_heat=None, expansion=None, after_step: bool = False,
                 duplicate: bool = False) -> Material:
        mat = Material(name=name, key=norm_key(name), loc=self.loc(), after_step=after_step)
        if elastic is not None:
            self.block(mat, "elastic", "iso", elastic)
        if density is not None:
            self.block(mat, "density", "iso", density)
        if expansion is not None:
            self.block(mat, "expansion", "iso", expansion)
        if conductivity is not None:
            self.block(mat, "conductivity", "iso", conductivity)
        if specific_heat is not None:
            self.block(mat, "specific_heat", "iso", specific_heat)
        if plastic is not None:
            self.block(mat, "plastic", "iso", plastic)
        if hyper is not None:  # (form, rows)
            self.block(mat, "hyperelastic", hyper[0], hyper[1])
        if duplicate:
            self.model.duplicate_materials.append(mat)
        else:
            self.model.materials[mat.key] = mat
        return mat

    # ------------------------------------------------------------------ mesh
    def elements(self, etype: str, count: int, elset: Optional[str] = None, nodes: int = 0) -> ElementBlock:
        ids = np.arange(self._next_id, self._next_id + count, dtype=np.int64)
        self._next_id += count
        blk = ElementBlock(type=etype.upper(), type_as_written=etype, count=count, loc=self.loc(),
                           elset=norm_key(elset) if elset else None, nodes=nodes, ids=Lazy.of(ids))
        self.model.element_blocks.append(blk)
        if elset:
            es = self.elset(elset)
            es.blocks.append(len(self.model.element_blocks) - 1)
        return blk

    def elset(self, name: str, ids: Optional[Sequence[int]] = None, nested: Sequence[str] = ()) -> ElementSet:
        key = norm_key(name)
        es = self.model.element_sets.get(key)
        if es is None:
            es = ElementSet(name=name, key=key, loc=self.loc())
            self.model.element_sets[key] = es
        es.defined_at.append(self.loc())
        if ids is not None:
            es.ids.append(np.asarray(ids, dtype=np.int64))
        es.nested.extend(norm_key(n) for n in nested)
        return es

    def section(self, kind: str, elset: str, *materials: str, role: Optional[str] = None,
                card: Optional[str] = None) -> Section:
        loc = self.loc()
        refs = [MaterialRef(role=role or ROLE.get(kind, kind), name=m, key=norm_key(m), loc=loc) for m in materials]
        sec = Section(kind=kind, card=card or f"*{kind.upper()} SECTION", elset=norm_key(elset), elset_name=elset,
                      materials=refs, loc=loc)
        self.model.sections.append(sec)
        return sec

    # ------------------------------------------------------------------ analysis and misc
    def step(self, kind: str = "static", loads: Sequence[Load] = ()) -> Step:
        loc = self.loc()
        st = Step(name=f"step-{len(self.model.steps) + 1}", loc=loc,
                  procedures=[Procedure(kind=kind, card=f"*{kind.upper()}", loc=loc)], loads=list(loads))
        self.model.steps.append(st)
        if self.model.first_step is None:
            self.model.first_step = loc
        return st

    def include(self, path: str, status: str = "missing") -> Include:
        inc = Include(path=path, resolved=None, loc=self.loc(), status=status)
        self.model.includes.append(inc)
        return inc

    def issue(self, code: str, loc: Loc, message: str = "issue", **data) -> Issue:
        iss = Issue(code=code, message=message, loc=loc, data=dict(data))
        self.model.issues.append(iss)
        return iss

    # ------------------------------------------------------------------ running
    def run(self, *rule_ids: str, config: Optional[Config] = None, thresholds: Optional[dict] = None):
        """Derivations + rules; returns the findings of ``rule_ids`` (all when none given)."""
        cfg = config or Config()
        if thresholds:
            cfg = Config.from_mapping({"thresholds": thresholds})
        self.model.derived.clear()
        for mat in self.model.all_materials():
            mat.derived.clear()
        found = derive_all(self.model, cfg)
        found += run_rules(self.model, cfg)
        if rule_ids:
            found = [f for f in found if f.rule in rule_ids]
        return found


def rules_of(found) -> list[str]:
    return sorted(f.rule for f in found)
