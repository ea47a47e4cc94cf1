"""The usage graph: material -> section -> element blocks (types and counts).

Sets are resolved once per model and cached in ``model.derived["usage"]``.
A set selects whole blocks (fast path: no ids needed) and/or explicit ids, which
are matched against the blocks' lazily loaded id arrays with numpy.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional

import numpy as np

from .model import DeckModel, Section


@dataclass
class Selection:
    """Elements selected from each block: block index -> boolean mask (None = the whole block)."""

    parts: dict[int, Optional[np.ndarray]] = field(default_factory=dict)

    def add_block(self, i: int) -> None:
        self.parts[i] = None

    def add_mask(self, i: int, mask: np.ndarray) -> None:
        if i in self.parts:
            if self.parts[i] is None:
                return
            mask = self.parts[i] | mask
        if mask.all():
            self.parts[i] = None
        elif mask.any():
            self.parts[i] = mask

    def counts(self, model: DeckModel) -> dict[str, int]:
        out: dict[str, int] = {}
        for i, mask in self.parts.items():
            blk = model.element_blocks[i]
            n = blk.count if mask is None else int(mask.sum())
            if n:
                out[blk.type] = out.get(blk.type, 0) + n
        return out

    @property
    def empty(self) -> bool:
        return not self.parts


def _ids_of(model: DeckModel, i: int) -> np.ndarray:
    blk = model.element_blocks[i]
    if blk.ids is None:
        return np.zeros(0, dtype=np.int64)
    return blk.ids.get()


def _unique(a: np.ndarray) -> np.ndarray:
    """Sorted unique ids; an array that is already strictly increasing is returned as is (no sort)."""
    a = np.asarray(a)
    if a.size < 2 or bool((a[1:] > a[:-1]).all()):
        return a
    return np.unique(a)


def _members(ids: np.ndarray, wanted: np.ndarray) -> np.ndarray:
    """``np.isin(ids, wanted)`` for sorted unique ``wanted``; a block of consecutive ids is done by indexing."""
    n = ids.size
    if n and int(ids[-1]) - int(ids[0]) == n - 1 and bool((np.diff(ids) == 1).all()):
        lo = int(ids[0])
        inside = wanted[(wanted >= lo) & (wanted <= lo + n - 1)]
        mask = np.zeros(n, bool)
        mask[inside - lo] = True
        return mask
    return np.isin(ids, wanted, assume_unique=False)


def resolve_set(model: DeckModel, key: str, _seen: Optional[set] = None) -> Optional[Selection]:
    """The elements of set ``key``; None when the set does not exist."""
    cache = model.derived.setdefault("_sets", {})
    if key in cache:
        return cache[key]
    es = model.element_sets.get(key)
    if es is None:
        return None
    seen = set() if _seen is None else _seen
    if key in seen:
        return Selection()
    seen.add(key)
    sel = Selection()
    for i in es.blocks:
        sel.add_block(i)
    for sub in es.nested:
        inner = resolve_set(model, sub, seen)
        if inner:
            for i, m in inner.parts.items():
                sel.add_block(i) if m is None else sel.add_mask(i, m)
    if es.ids:
        wanted = _unique(np.concatenate(es.ids) if len(es.ids) > 1 else es.ids[0])
        for i in range(len(model.element_blocks)):
            if sel.parts.get(i, 0) is None:
                continue
            ids = _ids_of(model, i)
            if ids.size:
                sel.add_mask(i, _members(ids, wanted))
    cache[key] = sel
    return sel


@dataclass
class Use:
    section: Section
    role: str
    counts: dict[str, int]


def material_usage(model: DeckModel) -> dict[str, list[Use]]:
    """For every material key, the sections (with role) and element counts per type that use it."""
    cached = model.derived.get("usage")
    if cached is not None:
        return cached
    out: dict[str, list[Use]] = {}
    for sec in model.sections:
        sel = resolve_set(model, sec.elset)
        counts = sel.counts(model) if sel else {}
        for ref in sec.materials:
            out.setdefault(ref.key, []).append(Use(sec, ref.role, counts))
    model.derived["usage"] = out
    return out


def element_types_of(model: DeckModel, material_key: str) -> dict[str, int]:
    total: dict[str, int] = {}
    seen: set[int] = set()
    for use in material_usage(model).get(material_key, ()):
        if id(use.section) in seen:  # one section may use the material in several roles (PSHELL MID1..MID3)
            continue
        seen.add(id(use.section))
        for t, n in use.counts.items():
            total[t] = total.get(t, 0) + n
    return total


def unassigned(model: DeckModel) -> dict[int, int]:
    """Block index -> number of its elements that no section covers."""
    covered = Selection()
    for sec in model.sections:
        sel = resolve_set(model, sec.elset)
        if not sel:
            continue
        for i, m in sel.parts.items():
            covered.add_block(i) if m is None else covered.add_mask(i, m)
    out = {}
    for i, blk in enumerate(model.element_blocks):
        if i not in covered.parts:
            out[i] = blk.count
        elif covered.parts[i] is not None:
            n = int((~covered.parts[i]).sum())
            if n:
                out[i] = n
    return out
