"""The element-technology catalogue: what each element type is, and how it behaves as nu -> 0.5.

The data lives in ``linter/data/elements.yaml`` (read once, cached). Every entry
gives the element family, node count, interpolation order, integration scheme and
a volumetric-locking grade (``none``, ``mild``, ``severe``, ``unknown``) with the
source of that grade. Integration and order decide the grade, not the family.

API::

    cat = Catalogue.load()
    tech = cat.get("C3D8", "calculix")        # ElementTech or None
    cat.known("C3D8H", "calculix")            # False: no hybrid elements in ccx
    cat.alternatives(tech)                    # ["C3D20R", "C3D8I", "C3D8R"]

Heat-transfer twins (``DC3D8``, ``DCAX4``, ``DS4`` ...) are generated from the
entries marked ``heat_twin`` (ccx accepts a leading ``D`` on its continuum and
shell names); user elements (``U...``) are matched by a pattern.
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Iterable, Optional

from .safe_yaml import load_package_yaml

DATA = Path(__file__).resolve().parent / "data" / "elements.yaml"

FAMILIES = ("solid-3d", "plane-stress", "plane-strain", "axisymmetric", "shell", "membrane", "beam",
            "truss", "shear-panel", "spring-other", "mass", "heat", "fluid", "network", "user")
ORDERS = ("linear", "quadratic", "none")
INTEGRATIONS = ("full", "reduced", "incompatible-modes", "mixed", "one-point-full", "per-property", "none")
GRADES = ("none", "mild", "severe", "unknown")
#: families whose elements take their properties from their own cards, not from a material
NO_MATERIAL_FAMILIES = ("spring-other", "mass")
#: which catalogue section each dialect is listed under by default
_SECTION_DIALECTS = {"calculix": ("calculix",), "bulk": ("mystran", "nastran")}


@dataclass(frozen=True)
class ElementTech:
    type: str
    family: str
    nodes: int
    order: str
    integration: str
    locking: str
    source: str
    note: str
    dialects: tuple[str, ...]

    @property
    def takes_material(self) -> bool:
        return self.family not in NO_MATERIAL_FAMILIES


class CatalogueError(ValueError):
    pass


def _entries(raw: dict) -> Iterable[tuple[str, dict]]:
    for section, items in (raw or {}).items():
        for item in items or ():
            yield section, item


def _techs_of(section: str, item: dict) -> list[ElementTech]:
    dialects = tuple(item.get("dialects") or _SECTION_DIALECTS.get(section, (section,)))
    types = item.get("types") or {}
    if isinstance(types, list):
        types = {t: {} for t in types}
    out = []
    for name, over in types.items():
        fields = {k: item.get(k) for k in ("family", "nodes", "order", "integration", "locking", "source", "note")}
        fields.update(over or {})
        out.append(ElementTech(type=str(name).upper(), family=fields["family"], nodes=int(fields["nodes"] or 0),
                               order=fields["order"], integration=fields["integration"],
                               locking=fields["locking"], source=fields["source"] or "",
                               note=fields["note"] or "", dialects=dialects))
    return out


def _validate(t: ElementTech) -> None:
    for value, allowed, what in ((t.family, FAMILIES, "family"), (t.order, ORDERS, "order"),
                                 (t.integration, INTEGRATIONS, "integration"), (t.locking, GRADES, "locking")):
        if value not in allowed:
            raise CatalogueError(f"elements.yaml: {t.type}: {what} {value!r} is not one of {allowed}")
    if not t.source:
        raise CatalogueError(f"elements.yaml: {t.type}: the locking grade has no source")


def _heat_twin(t: ElementTech) -> ElementTech:
    return ElementTech(type="D" + t.type, family="heat", nodes=t.nodes, order=t.order, integration=t.integration,
                       locking="none", source="heat-transfer element: no mechanical stiffness (CCX-UM Element Types)",
                       note=f"heat-transfer twin of {t.type}", dialects=t.dialects)


class Catalogue:
    """Element types by (dialect, type); patterns for user elements."""

    def __init__(self, techs: list[ElementTech], patterns: list[tuple[re.Pattern, ElementTech]]):
        self._order = techs
        self._by: dict[tuple[str, str], ElementTech] = {}
        for t in techs:
            for d in t.dialects:
                if (d, t.type) in self._by:
                    raise CatalogueError(f"elements.yaml: {t.type} listed twice for dialect {d}")
                self._by[(d, t.type)] = t
        self._patterns = patterns
        self.dialects = tuple(sorted({d for t in techs for d in t.dialects}))

    @classmethod
    def from_mapping(cls, raw: dict) -> "Catalogue":
        techs, patterns = [], []
        for section, item in _entries(raw):
            if "pattern" in item:
                proto = _techs_of(section, {**item, "types": ["(" + item["pattern"] + ")"]})[0]
                _validate(proto)
                patterns.append((re.compile(item["pattern"] + r"\Z", re.IGNORECASE), proto))
                continue
            for t in _techs_of(section, item):
                _validate(t)
                techs.append(t)
                if item.get("heat_twin"):
                    techs.append(_heat_twin(t))
        return cls(techs, patterns)

    @staticmethod
    @lru_cache(maxsize=1)
    def load() -> "Catalogue":
        with open(DATA, encoding="utf-8") as fh:
            return Catalogue.from_mapping(load_package_yaml(fh.read()))

    # ----------------------------------------------------------------------------- look-ups

    def get(self, type: str, dialect: Optional[str] = None) -> Optional[ElementTech]:
        """The entry for ``type`` in ``dialect``; with no (or an unlisted) dialect, the first dialect that has it."""
        key = "".join(str(type).split()).upper()
        if dialect is not None and dialect in self.dialects:
            found = self._by.get((dialect, key))
            if found is None:
                found = self._match_pattern(key, dialect)
            return found
        for d in self.dialects:
            if (d, key) in self._by:
                return self._by[(d, key)]
        return self._match_pattern(key, None)

    def _match_pattern(self, key: str, dialect: Optional[str]) -> Optional[ElementTech]:
        for rx, proto in self._patterns:
            if (dialect is None or dialect in proto.dialects) and rx.match(key):
                return ElementTech(type=key, family=proto.family, nodes=proto.nodes, order=proto.order,
                                   integration=proto.integration, locking=proto.locking, source=proto.source,
                                   note=proto.note, dialects=proto.dialects)
        return None

    def known(self, type: str, dialect: Optional[str] = None) -> bool:
        return self.get(type, dialect) is not None

    def alternatives(self, tech: ElementTech, dialect: Optional[str] = None) -> list[str]:
        """Types of the same family and dialect whose locking grade is ``none`` (catalogue order)."""
        dialects = (dialect,) if dialect else tech.dialects
        out = []
        for t in self._order:
            if (t.family == tech.family and t.locking == "none" and t.type != tech.type
                    and any(d in t.dialects for d in dialects) and t.type not in out):
                out.append(t.type)
        if "/" in tech.type:   # code_aster FORMULATION/CELL: the formulations for the same cell come first
            cell = tech.type.rsplit("/", 1)[1]
            same = [t for t in out if t.endswith("/" + cell)]
            return same or out
        return out

    def types(self, dialect: Optional[str] = None) -> list[str]:
        return [t.type for t in self._order if dialect is None or dialect in t.dialects]
