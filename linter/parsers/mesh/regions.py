"""The ``regions:`` section: which cells get which material, and how they are integrated.

A region is ``{cells: SELECTOR, material: NAME, formulation: WORD, section: KIND, orientation: NAME}``;
the selector is ``{physical: name-or-tag}`` (a Gmsh physical group), ``{set: NAME}`` (a meshio cell
set), ``{cell_data: NAME, value: V}`` or ``{all: true}`` (every cell of the mesh's highest dimension),
each optionally restricted by ``dim:``. Every region becomes a :class:`~linter.model.Section` on an
element set of its own; the mesh's cells become :class:`~linter.model.ElementBlock` objects, one per
meshio cell block and combination of regions that select its cells, so that sets hold whole blocks.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Optional

from yaml.nodes import Node

from ...model import Loc, MaterialRef, Section
from .yamldoc import Doc

FORMULATIONS = ("full", "reduced", "hybrid", "incompatible", "selective", "enhanced")
SECTION_KINDS = ("solid", "plane-strain", "plane-stress", "axisymmetric", "shell", "membrane", "beam", "truss")
#: section kinds that name the element family themselves (catalogue key <CELL>:<KIND>)
FAMILY_SECTIONS = ("plane-stress", "shell", "membrane", "beam", "truss")
REGION_KEYS = ("cells", "material", "formulation", "section", "orientation", "name")
SELECTOR_KEYS = ("physical", "set", "cell_data", "value", "all", "dim")


@dataclass
class Region:
    index: int
    loc: Loc
    key: str                       # element-set key
    selector: Optional[tuple]      # ("physical", name|tag) | ("set", name) | ("cell_data", name, value) | ("all",)
    sel_loc: Loc
    dim: Optional[int] = None
    material: Optional[str] = None
    material_loc: Optional[Loc] = None
    formulation: Optional[str] = None
    section: str = "solid"
    orientation: Optional[str] = None
    name: Optional[str] = None
    #: why the selector matched no cell (set when the mesh was read)
    unmatched: Optional[str] = None

    @property
    def label(self) -> str:
        if self.selector is None:
            what = "no valid cell selector"
        elif self.selector[0] == "all":
            what = "all cells"
        elif self.selector[0] == "cell_data":
            what = f"cell_data {self.selector[1]} = {self.selector[2]:g}"
        else:
            what = f"{self.selector[0]} {self.selector[1]!r}" if isinstance(self.selector[1], str) \
                else f"{self.selector[0]} {self.selector[1]}"
        if self.dim is not None:
            what += f", dim {self.dim}"
        return f"region {self.name or self.index + 1} ({what})"


def read_regions(doc: Doc, node: Node) -> list[Region]:
    items = doc.sequence(node, "regions")
    out: list[Region] = []
    for i, rnode in enumerate(items or ()):
        fields = doc.mapping(rnode, f"regions[{i + 1}]", REGION_KEYS)
        if fields is None:
            continue
        reg = Region(index=i, loc=doc.loc(rnode), key=f"REGION {i + 1}", selector=None, sel_loc=doc.loc(rnode))
        got = {k: (kn, vn) for k, kn, vn in fields}
        if "name" in got:
            reg.name = doc.text(got["name"][1], f"regions[{i + 1}].name")
        where = f"region {reg.name or i + 1}"
        if "cells" in got:
            _selector(doc, reg, got["cells"][1], where)
        else:
            doc.issue("malformed-data", f"{where} has no cells: selector", rnode, field="cells")
        if "material" in got:
            reg.material = doc.text(got["material"][1], f"{where}: material")
            reg.material_loc = doc.loc(got["material"][1])
        else:
            doc.issue("malformed-data", f"{where} names no material", rnode, field="material")
        if "formulation" in got:
            reg.formulation = doc.text(got["formulation"][1], f"{where}: formulation")
        if "section" in got:
            kind = doc.text(got["section"][1], f"{where}: section")
            if kind is not None and kind.lower() not in SECTION_KINDS:
                doc.issue("malformed-data", f"{where}: section {kind!r} is not one of {', '.join(SECTION_KINDS)}",
                          got["section"][1], field="section", value=kind)
            elif kind is not None:
                reg.section = kind.lower()
        if "orientation" in got:
            reg.orientation = doc.text(got["orientation"][1], f"{where}: orientation")
        out.append(reg)
    return out


def _selector(doc: Doc, reg: Region, node: Node, where: str) -> None:
    fields = doc.mapping(node, f"{where}: cells", SELECTOR_KEYS)
    if fields is None:
        return
    reg.sel_loc = doc.loc(node)
    got = {k: vn for k, _kn, vn in fields}
    kinds = [k for k in ("physical", "set", "cell_data", "all") if k in got]
    if len(kinds) != 1:
        doc.issue("malformed-data", f"{where}: cells needs exactly one of physical, set, cell_data, all "
                  f"(found {', '.join(kinds) or 'none'})", node, field="cells")
        return
    kind = kinds[0]
    if "dim" in got:
        dim = doc.integer(got["dim"], f"{where}: cells.dim")
        if dim is not None and not 0 <= dim <= 3:
            doc.issue("malformed-data", f"{where}: cells.dim must be 0, 1, 2 or 3", got["dim"], field="dim")
            return
        reg.dim = dim
    vnode = got[kind]
    if kind == "all":
        if doc.flag(vnode, f"{where}: cells.all"):
            reg.selector = ("all",)
        return
    if kind == "cell_data":
        name = doc.text(vnode, f"{where}: cells.cell_data")
        if "value" not in got:
            doc.issue("malformed-data", f"{where}: cells.cell_data needs value:", node, field="value")
            return
        value = doc.number(got["value"], f"{where}: cells.value")
        if name is not None and value is not None:
            reg.selector = ("cell_data", name, value)
        return
    if "value" in got:
        doc.issue("unknown-key", f"{where}: value: belongs to a cell_data selector; it is ignored", got["value"],
                  key="value", where=f"{where}: cells")
    if kind == "physical":
        tag = _scalar_int(vnode)
        if tag is not None:
            reg.selector = ("physical", tag)
            return
    name = doc.text(vnode, f"{where}: cells.{kind}")
    if name is not None:
        reg.selector = (kind, name)


def _scalar_int(node: Node) -> Optional[int]:
    from ...safe_yaml import scalar_value

    try:
        value = scalar_value(node)
    except Exception:
        return None
    return value if isinstance(value, int) and not isinstance(value, bool) else None


def section_of(reg: Region) -> Optional[Section]:
    if reg.material is None:
        return None
    role = "solid" if reg.section in ("solid", "plane-strain", "plane-stress", "axisymmetric") else reg.section
    kind = "solid" if reg.section in ("solid", "plane-strain", "axisymmetric") else reg.section
    options: dict[str, Any] = {"formulation": reg.formulation, "section": reg.section}
    label = reg.label if reg.unmatched is None else f"{reg.label} ({reg.unmatched})"
    return Section(kind=kind, card="region", elset=reg.key, elset_name=label,
                   materials=[MaterialRef(role, reg.material, reg.material, reg.material_loc or reg.loc)],
                   loc=reg.sel_loc, orientation=reg.orientation, options=options)


def element_type(cell_type: str, reg: Optional[Region], known) -> str:
    """Catalogue key of a meshio cell type in a region: ``<CELL>:<FORMULATION>`` or ``<CELL>:<KIND>``.

    The bare cell type (volumetric-locking grade unknown) when the region gives no formulation the
    catalogue knows for that cell (``known(type) -> bool``).
    """
    base = cell_type.upper()
    if reg is None:
        return base
    if reg.section in FAMILY_SECTIONS:
        cand = f"{base}:{reg.section.upper()}"
        return cand if known(cand) else base
    form = (reg.formulation or "").strip().lower()
    if form in FORMULATIONS:
        cand = f"{base}:{form.upper()}"
        if known(cand):
            return cand
    return base
