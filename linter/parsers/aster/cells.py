"""Meshes and models of a study: ``AFFE_MODELE`` formulations on the mesh cells, as element blocks.

Every model (``AFFE_MODELE``) gives each cell at most one formulation per occurrence of ``AFFE``
(a later occurrence overrides an earlier one, as in the solver). The element block type is
``MODELISATION/CELL`` (``3D/HEXA8``, ``D_PLAN_INCO_UPG/QUAD8``), prefixed by the phenomenon for
thermal and acoustic models (``THERMIQUE:3D/HEXA8``): the element catalogue
(``linter/data/elements.yaml``, dialect ``code_aster``) grades each. Cells that carry no element of
a formulation listed in the catalogue (the faces and edges of a 3D model, which carry loads only)
are left out; for a formulation the catalogue does not list, the cells of the highest dimension
in the occurrence are kept. Element ids are global cell indices (cells numbered in file order,
mesh after mesh), so groups are plain index arrays and nothing is made per cell.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from ...catalogue import Catalogue
from ...model import ElementBlock, ElementSet, Lazy, Loc, norm_key
from .evaluate import Keywords, Opaque
from .mail import Mesh, cell_dim, sorted_unique

DIALECT = "code_aster"
PHENOMENA = {"MECANIQUE": "", "THERMIQUE": "THERMIQUE:", "ACOUSTIQUE": "ACOUSTIQUE:"}


def occurrences(value) -> list[Keywords]:
    if isinstance(value, Keywords):
        return [value]
    if isinstance(value, tuple):
        return [v for v in value if isinstance(v, Keywords)]
    return []


def names(value) -> list[str]:
    if isinstance(value, str):
        return [value]
    if isinstance(value, tuple):
        return [v for v in value if isinstance(v, str)]
    return []


@dataclass
class MeshUse:
    """A mesh of the study: its cells, the groups added by commands, and where its ids start."""

    var: str
    mesh: Optional[Mesh]
    offset: int = 0
    exact: bool = True          # False once a command changed it in a way that is not followed
    why_inexact: str = ""
    extra_groups: dict[str, Optional[np.ndarray]] = field(default_factory=dict)   # key -> local indices

    def group(self, name: str) -> tuple[str, Optional[np.ndarray]]:
        """("ok"|"missing"|"unknown", local cell indices)."""
        key = norm_key(name)
        if key in self.extra_groups:
            got = self.extra_groups[key]
            return ("unknown", None) if got is None else ("ok", got)
        if self.mesh is None:
            return "unknown", None
        found = self.mesh.group_cells(_mesh_name(self.mesh, key))
        if found is None:
            return ("missing" if self.exact else "unknown"), None
        return "ok", found

    def all_cells(self) -> np.ndarray:
        return np.arange(self.mesh.cell_count if self.mesh else 0, dtype=np.int64)


def _mesh_name(mesh: Mesh, key: str) -> str:
    if key in mesh.groups:
        return key
    for g in mesh.groups:
        if norm_key(g) == key:
            return g
    return key


def select(use: MeshUse, occ: Keywords) -> tuple[str, Optional[np.ndarray], str]:
    """(state, local cell indices, description) of the cells named by TOUT / GROUP_MA / MAILLE."""
    if occ.get("TOUT") == "OUI":
        return "ok", use.all_cells(), "TOUT='OUI'"
    groups = names(occ.get("GROUP_MA"))
    if groups:
        parts, state = [], "ok"
        for g in groups:
            st, idx = use.group(g)
            if st != "ok":
                return st, None, g
            parts.append(idx)
        idx = parts[0] if len(parts) == 1 else sorted_unique(np.concatenate(parts))
        return state, idx, ", ".join(groups)
    cells = names(occ.get("MAILLE"))
    if cells and use.mesh is not None:
        idx = use.mesh.cells_named(cells)
        if idx is None:
            return "missing", None, "MAILLE " + ", ".join(cells[:3])
        return "ok", idx, "MAILLE " + ", ".join(cells[:3])
    return "unknown", None, "cells not named by TOUT or GROUP_MA"


class ModelBuilder:
    """Turns AFFE_MODELE commands into element blocks of the deck model."""

    def __init__(self, model, catalogue: Optional[Catalogue] = None):
        self.model = model
        self.cat = catalogue or Catalogue.load()
        self.known = {t.split("/")[0] for t in self.cat.types(DIALECT)}

    def add(self, use: MeshUse, cmd, notes: list) -> Optional["Formulations"]:
        """The formulation of every cell of ``use`` under one AFFE_MODELE (None without cells)."""
        mesh = use.mesh
        if mesh is None or not mesh.cells:
            return None
        codes = [np.full(c.count, -1, np.int32) for c in mesh.cells]
        kinds: list[str] = []
        for occ in occurrences(cmd.keywords.get("AFFE")):
            phen = occ.get("PHENOMENE", "MECANIQUE")
            mods = names(occ.get("MODELISATION"))
            if not isinstance(phen, str) or not mods:
                notes.append(("unchecked", "AFFE_MODELE occurrence without a literal PHENOMENE/MODELISATION",
                              occ.line))
                continue
            state, idx, what = select(use, occ)
            if state != "ok":
                notes.append(("unchecked" if state == "unknown" else "undefined-group",
                              f"AFFE_MODELE on {what}: " + ("the mesh has no such group" if state == "missing" else
                                                            "cells not followed (" + (use.why_inexact or what) + ")"),
                              occ.line_of("GROUP_MA")))
                continue
            prefix = PHENOMENA.get(phen, phen + ":")
            for mod in mods:
                self._assign(mesh, codes, kinds, prefix + mod, idx)
        return Formulations(use, cmd, codes, kinds)

    def blocks(self, f: "Formulations", base: int, cover: Optional[np.ndarray]) -> list[tuple[int, int]]:
        """Element blocks of a model, one per cell type, formulation and combination of material entries
        (``cover``: a bit per entry for every cell of the mesh). Returns (block index, cover bits) pairs."""
        out = []
        for c, code in zip(f.use.mesh.cells, f.codes):
            bits = cover[c.first:c.first + c.count] if cover is not None else np.zeros(c.count, np.int64)
            comb = bits * 1024 + (code.astype(np.int64) + 1)
            for value, mask in _groups(comb):
                k, b = int(value % 1024) - 1, int(value // 1024)
                if k < 0:
                    continue
                n = c.count if mask is None else int(mask.sum())
                first = base + f.use.offset + c.first
                ids = Lazy((lambda f0=first, n=n: np.arange(f0, f0 + n, dtype=np.int64)) if mask is None else
                           (lambda s=mask, f0=first: np.flatnonzero(s).astype(np.int64) + f0))
                etype = f"{f.kinds[k]}/{c.type}"
                self.model.element_blocks.append(ElementBlock(
                    type=etype, type_as_written=etype, count=n, loc=Loc(self.model.path, f.cmd.line),
                    elset=f.cmd.target, nodes=c.nodes, ids=ids, conn=None))
                out.append((len(self.model.element_blocks) - 1, b))
        return out

    def _assign(self, mesh: Mesh, codes, kinds, kind: str, idx: np.ndarray) -> None:
        if kind not in kinds:
            kinds.append(kind)
        k = kinds.index(kind)
        formulation = kind.split(":")[-1]
        listed = kind in self.known
        top = -1
        if not listed:
            for c in mesh.cells:
                lo, hi = np.searchsorted(idx, [c.first, c.first + c.count])
                if hi > lo:
                    top = max(top, cell_dim(c.type))
        for c, code in zip(mesh.cells, codes):
            if listed:
                if self.cat.get(f"{kind}/{c.type}", DIALECT) is None:
                    continue
            elif cell_dim(c.type) != top and not formulation.startswith(("DIS_", "2D_DIS_")):
                continue
            lo, hi = np.searchsorted(idx, [c.first, c.first + c.count])
            if hi > lo:
                a, b = int(idx[lo]) - c.first, int(idx[hi - 1]) - c.first + 1
                if b - a == hi - lo and (hi - lo < 2 or bool((idx[lo + 1:hi] > idx[lo:hi - 1]).all())):
                    code[a:b] = k           # a run of consecutive cells (TOUT, most groups): no fancy index
                else:
                    code[idx[lo:hi] - c.first] = k


@dataclass
class Formulations:
    """The formulation code of every cell (index into ``kinds``, -1: no element) under one AFFE_MODELE."""

    use: MeshUse
    cmd: object
    codes: list
    kinds: list


def _groups(values: np.ndarray):
    """(value, mask) of each distinct value (mask None when the whole array has it); few distinct values."""
    if not values.size:
        return
    first = values[0]
    if bool((values == first).all()):
        yield first, None
        return
    rest = np.ones(values.size, bool)
    while rest.any():
        v = values[np.argmax(rest)]
        mask = values == v
        rest &= ~mask
        yield v, mask


def element_set(model, key: str, name: str, loc: Loc, ids: Optional[np.ndarray] = None,
                blocks: Optional[list[int]] = None) -> str:
    es = model.element_sets.get(key)
    if es is None:
        es = model.element_sets[key] = ElementSet(name=name, key=key, loc=loc)
        if ids is not None:
            es.ids.append(ids)
        es.blocks.extend(blocks or ())
    es.defined_at.append(loc)
    return key


def group_ops(use: MeshUse, cmd, notes: list) -> None:
    """Groups made by DEFI_GROUP(CREA_GROUP_MA=...): TOUT, GROUP_MA, UNION, INTERSEC, DIFFE are followed."""
    for occ in occurrences(cmd.keywords.get("CREA_GROUP_MA")):
        name = occ.get("NOM")
        if not isinstance(name, str):
            notes.append(("unchecked", "DEFI_GROUP CREA_GROUP_MA without a literal NOM", occ.line))
            continue
        key, result = norm_key(name), None
        try:
            if occ.get("TOUT") == "OUI":
                result = use.all_cells()
            elif occ.get("GROUP_MA") is not None and occ.get("OPTION") is None:
                result = _combine(use, names(occ.get("GROUP_MA")), np.union1d)
            elif occ.get("UNION") is not None:
                result = _combine(use, names(occ.get("UNION")), np.union1d)
            elif occ.get("INTERSEC") is not None:
                result = _combine(use, names(occ.get("INTERSEC")), np.intersect1d)
            elif occ.get("DIFFE") is not None:
                result = _combine(use, names(occ.get("DIFFE")), np.setdiff1d)
        except LookupError:
            result = None
        use.extra_groups[key] = result
        if result is None:
            notes.append(("unchecked", f"DEFI_GROUP group {name}: its cells are not computed by deckwarden",
                          occ.line))
    for occ in occurrences(cmd.keywords.get("DETR_GROUP_MA")):
        for g in names(occ.get("NOM")):
            use.extra_groups[norm_key(g)] = None


def _combine(use: MeshUse, groups: list[str], op) -> Optional[np.ndarray]:
    out = None
    for g in groups:
        st, idx = use.group(g)
        if st != "ok":
            return None
        out = idx if out is None else op(out, idx)
    return out


def is_opaque(v) -> bool:
    return isinstance(v, Opaque)
