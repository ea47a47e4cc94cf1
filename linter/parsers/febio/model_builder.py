"""Assemble the neutral model of one FEBio file: version, materials, mesh, domains, analysis."""
from __future__ import annotations

import math
import re
from typing import Optional

from ...model import (DeckModel, ElementBlock, ElementSet, Issue, Lazy, Load, Loc, MaterialRef, Procedure,
                      Section, Step, Unchecked)
from ..sources import read_deck_bytes
from . import mesh as M
from .materials import MaterialReader, is_uncoupled
from .scan import scan
from .xmltree import Node, XmlRefused, parse_bytes

SUPPORTED = ("4.0", "3.0", "2.5")
#: analysis keywords -> neutral procedure kind (FEBio User's Manual 4.0, 3.3.1 "Control")
ANALYSIS = {"STATIC": "static", "STEADY-STATE": "static", "TRANSIENT": "static", "DYNAMIC": "dynamic-implicit"}
#: modules whose steps are not read as structural analyses (FEBio User's Manual 4.0, 3.2 "Module"): their
#: DYNAMIC is the fluid's time integration, and a zero density (inertia-free flow, a massless ALE mesh)
#: is valid there (the solver's own verification models use it)
FLUID_MODULES = {"fluid", "fluid-solutes", "polar fluid", "fluid-FSI", "biphasic-FSI", "multiphasic-FSI"}
HEAT_MODULES = {"heat"}
#: domain type attribute -> formulation suffix of the catalogue key (elements.yaml, febio section)
FORMULATION = {"three-field-solid": "THREE-FIELD", "three-field-shell": "THREE-FIELD", "ut4-solid": "UT4",
               "udg-hex": "UDG", "sri-solid": "SRI", "elastic-shell-eas": "EAS", "elastic-shell-ans": "ANS",
               "rigid-solid": "RIGID", "rigid-shell": "RIGID", "rigid-shell-old": "RIGID",
               "elastic-shell-old": "OLD"}
#: shapes on which the solver uses the three-field formulation for uncoupled materials by default
#: (FEBio source, FEModelBuilder: m_b3field_hex = true for hex8/penta6/pyra5, m_b3field_quad = true
#: for quad4 shells, m_b3field_tet = false; FESolidDomainFactory::CreateDomain)
THREE_FIELD_DEFAULT = {"hex8", "penta6", "pyra5", "quad4"}
#: shapes that take the three-field formulation when the domain asks for it (three_field="on")
THREE_FIELD_CAPABLE = THREE_FIELD_DEFAULT | {"tet10", "tet15", "tet20", "tri3", "quad8", "tri6"}


class Builder:
    def __init__(self, path: str, options):
        self.display = getattr(options, "display_path", None) or path
        self.path = path
        self.options = options
        self.model = DeckModel(path=self.display, format="febio",
                               dialect=getattr(options, "dialect", None) or "febio")
        self.model.files = [self.display]
        self.data = b""
        self.last_line = 1 << 62
        self.mat_types: dict[str, str] = {}
        self.axes: dict[str, str] = {}
        self._raw_elements: list = []
        self.module = "solid"

    def loc(self, line: int) -> Loc:
        return Loc(self.display, min(max(1, int(line)), self.last_line))

    def issue(self, code: str, message: str, line: int, material: Optional[str] = None, **data) -> None:
        self.model.issues.append(Issue(code, message, self.loc(line), material=material, data=data))

    # ------------------------------------------------------------------ top level

    def run(self) -> DeckModel:
        src = read_deck_bytes(self.path, self.options.max_file_size)
        self.data = src.data
        if src.encoding.startswith("utf-16"):
            # the bytes were converted to UTF-8: the declaration must say so for the XML parser
            self.data = re.sub(rb'^(\s*<\?xml[^>]*?encoding\s*=\s*)["\'][^"\']*["\']', rb'\1"UTF-8"', self.data,
                               count=1)
        self.last_line = max(1, self.data.count(b"\n") + (0 if self.data.endswith(b"\n") else 1))
        sc = scan(self.data)
        extras = self.model.extras.setdefault("febio", {})
        extras["mesh_blocks"] = [{"tag": b.tag, "name": b.attrib.get("name"), "line": b.line, "count": b.count}
                                 for b in sc.blocks]
        try:
            root = parse_bytes(sc.skeleton)
        except XmlRefused as exc:
            self.issue(exc.code, f"{self.display}: {exc.message}; nothing in this file was checked", exc.line)
            return self.model
        if root.tag != "febio_spec":
            self.issue("unsupported-version", f"the root element is <{root.tag[:40]}>, not <febio_spec>: not an "
                                              "FEBio model; nothing was checked", root.line)
            return self.model
        version = root.get("version", "")
        extras["version"] = version
        if version not in SUPPORTED:
            self.issue("unsupported-version", f"febio_spec version {version[:20]!r} is not read (supported: "
                                              f"{', '.join(SUPPORTED)}); nothing in this file was checked",
                       root.line, version=version[:20])
            return self.model
        module = root.find("Module")
        self.module = (module.get("type") if module is not None else None) or "solid"
        extras["module"] = self.module
        ids = self.materials(root)
        blocks = [b for b in sc.blocks if b.tag == "Elements"]
        self.elements(blocks)
        if version == "2.5":
            self.sections_25(ids)
        else:
            self.domains(root)
        self.formulations()
        self.geometry([b for b in sc.blocks if b.tag == "Nodes"])
        self.analysis(root, version)
        return self.model

    # ------------------------------------------------------------------ materials

    def materials(self, root: Node) -> dict[str, str]:
        ids: dict[str, str] = {}
        section = root.find("Material")
        if section is None:
            return ids
        issues: list = []
        reader = MaterialReader(self.display, self.model.unchecked, issues)
        for node in section.findall("material"):
            mid = node.get("id", "")
            name = (node.get("name") or "").strip() or f"material {mid[:20]}"
            mat = reader.read(node, name)
            self.mat_types[mat.key] = node.get("type", "")
            axis = next((n for n in node.iter() if n.tag in ("mat_axis", "fiber")), None)
            if axis is not None:
                self.axes[mat.key] = f"{axis.tag} (line {axis.line})"
            if mid:
                ids[mid] = mat.name
            if mat.key in self.model.materials:
                self.model.duplicate_materials.append(mat)
            else:
                self.model.materials[mat.key] = mat
        for code, msg, line, mat_name in issues:
            self.issue(code, msg, line, mat_name)
        return ids

    # ------------------------------------------------------------------ mesh and domains

    def elements(self, blocks) -> None:
        self._raw_elements = list(blocks)
        for i, blk in enumerate(blocks):
            written = blk.attrib.get("type", "")
            shape, variant = M.base_type(written)
            nodes = M.NODES.get(shape, 0)
            name = blk.attrib.get("name") or blk.attrib.get("elset") or f"Elements {i + 1}"
            eb = ElementBlock(type=(shape + variant).upper(), type_as_written=written, count=blk.count,
                              loc=self.loc(blk.line), elset=name, nodes=nodes)
            if nodes:
                arrays = Lazy(lambda b=blk, n=nodes: M.element_arrays(self.data, b, n))
                eb.ids = Lazy(lambda a=arrays: a.get()[0])
                eb.conn = Lazy(lambda a=arrays: a.get()[1])
            else:
                self.issue("unknown-element-type", f"element type {written[:40]!r} of part {name[:80]} is not an "
                                                   "FEBio element type", blk.line, type=written[:40])
            self.model.element_blocks.append(eb)
            es = self.model.element_sets.get(name)
            if es is None:
                es = self.model.element_sets[name] = ElementSet(name, name, self.loc(blk.line))
            es.blocks.append(len(self.model.element_blocks) - 1)
            es.defined_at.append(self.loc(blk.line))

    def domains(self, root: Node) -> None:
        section = root.find("MeshDomains")
        if section is None:
            return
        for dom in section.children:
            if "Domain" not in dom.tag:
                continue
            name = dom.get("name", "")
            mat = dom.get("mat", "")
            kind = {"SolidDomain": "solid", "ShellDomain": "shell", "BeamDomain": "beam"}.get(dom.tag, "other")
            opts = {"formulation": dom.get("type"), "three_field": dom.get("three_field"),
                    "elem_type": dom.get("elem_type")}
            thick = dom.find("shell_thickness")
            if thick is not None:
                try:
                    opts["thickness"] = float(thick.text)
                except ValueError:
                    self.model.unchecked.append(Unchecked("shell_thickness", self.loc(thick.line),
                                                          "not a plain number: not checked"))
            refs = [MaterialRef(kind, mat, mat.strip(), self.loc(dom.line))] if mat else []
            if not mat:
                self.issue("malformed-data", f"{dom.tag} {name[:80]} names no material (mat= is required)",
                           dom.line)
            orient = self._orientation(mat.strip())
            self.model.sections.append(Section(kind, dom.tag, name, name, refs, self.loc(dom.line),
                                               orientation=orient, options=opts))

    def sections_25(self, ids: dict[str, str]) -> None:
        """febio_spec 2.5: each <Elements> names its material by id (mat=)."""
        for i, eb in enumerate(self.model.element_blocks):
            mid = self._attr_of_block(i, "mat")
            if mid is None:
                continue
            name = ids.get(mid, f"material id {mid[:20]}")
            shape, _v = M.base_type(eb.type_as_written)
            kind = "shell" if shape in M.SHELLS else "solid"
            self.model.sections.append(Section(kind, "Elements", eb.elset, eb.elset,
                                               [MaterialRef(kind, name, name, eb.loc)], eb.loc,
                                               orientation=self._orientation(name), options={}))

    def _attr_of_block(self, i: int, key: str) -> Optional[str]:
        raw = self._raw_elements
        return raw[i].attrib.get(key) if i < len(raw) else None

    def _orientation(self, key: str) -> Optional[str]:
        """The material's own axes (mat_axis or fibre direction), which FEBio applies to every domain."""
        return self.axes.get(key)

    def formulations(self) -> None:
        """Catalogue key of every block: shape plus the formulation its domain gives it."""
        by_set = {}
        for sec in self.model.sections:
            by_set.setdefault(sec.elset, sec)
        for eb in self.model.element_blocks:
            shape, variant = M.base_type(eb.type_as_written)
            if shape not in M.NODES:
                continue
            sec = by_set.get(eb.elset)
            suffix = ""
            if sec is not None:
                o = sec.options
                form = (o.get("formulation") or "").strip()
                elem_type = (o.get("elem_type") or "").strip().upper()
                mat_type = self.mat_types.get(sec.materials[0].key, "") if sec.materials else ""
                if form:
                    suffix = FORMULATION.get(form, "")
                elif elem_type == "UT4" or elem_type.startswith("UT4"):
                    suffix = "UT4"
                elif mat_type == "rigid body":
                    suffix = "RIGID"
                elif is_uncoupled(mat_type) and o.get("three_field") != "off" and (
                        shape in THREE_FIELD_DEFAULT or (o.get("three_field") == "on" and shape in THREE_FIELD_CAPABLE)):
                    suffix = "THREE-FIELD"
            eb.type = (shape + variant).upper() + ("/" + suffix if suffix else "")

    def geometry(self, node_blocks) -> None:
        g = self.model.geometry
        g.node_count = sum(b.count for b in node_blocks)
        if not node_blocks:
            return
        lo, hi, exact = M.bounding_box(self.data, node_blocks)
        g.bbox_min, g.bbox_max, g.exact = lo, hi, exact
        if not exact:
            g.note = "bounding box estimated from a sample of the node lines"
        g.nodes = Lazy(lambda: M.node_arrays(self.data, node_blocks))

    # ------------------------------------------------------------------ analysis

    def _procedure(self, control: Optional[Node], fallback_line: int) -> Procedure:
        text, line = "STATIC", fallback_line
        if control is not None:
            an = control.find("analysis")
            line = control.line
            if an is not None:
                text = (an.text or an.get("type") or "STATIC").strip().upper()
                line = an.line
        if self.module in FLUID_MODULES:
            kind = "other"
        elif self.module in HEAT_MODULES:
            kind = "heat-transient" if text in ("TRANSIENT", "DYNAMIC") else "heat-steady"
        else:
            kind = ANALYSIS.get(text)
            if kind is None:
                self.issue("unknown-option", f"analysis {text[:40]!r} is not an FEBio analysis type", line)
                kind = "static"
        return Procedure(kind, text, self.loc(line), options={"module": self.module})

    def _loads(self, section: Optional[Node], step: Step) -> None:
        if section is None:
            return
        for bl in section.findall("body_load"):
            btype = bl.get("type", "")
            if btype in ("const", "body force"):
                comps, scaled = [], False
                for axis in ("x", "y", "z"):
                    c = bl.find(axis)
                    if c is None:
                        comps.append(0.0)
                        continue
                    scaled = scaled or "lc" in c.attrib
                    try:
                        comps.append(float(c.text))
                    except ValueError:
                        comps.append(math.nan)
                        scaled = True
                value = None if scaled or not all(map(math.isfinite, comps)) else math.sqrt(sum(v * v for v in comps))
                if scaled:
                    self.model.unchecked.append(Unchecked("body_load", self.loc(bl.line), "scaled by a load "
                                                          "controller: the magnitude is not checked"))
                step.loads.append(Load("gravity", value, self.loc(bl.line), vector=tuple(comps)))
            elif btype == "centrifugal":
                step.loads.append(Load("centrifugal", None, self.loc(bl.line)))
            else:
                self.model.unchecked.append(Unchecked(f"body_load {btype[:40]}", self.loc(bl.line),
                                                      "body load type not read"))

    def analysis(self, root: Node, version: str) -> None:
        control = root.find("Control")
        steps: list[tuple[str, Node, Optional[Node]]] = []
        if version == "2.5":
            for i, st in enumerate(root.findall("Step")):
                steps.append((st.get("name") or f"Step {i + 1}", st, st.find("Control")))
        else:
            sec = root.find("Step")
            for i, st in enumerate(sec.findall("step") if sec is not None else ()):
                steps.append((st.get("name") or f"step {st.get('id', i + 1)}", st, st.find("Control")))
        if control is not None or not steps:
            node = control if control is not None else root
            first = Step("model", self.loc(node.line))
            first.procedures.append(self._procedure(control, node.line))
            self._loads(root.find("Loads"), first)
            self.model.steps.append(first)
        for name, st, ctl in steps:
            step = Step(name, self.loc(st.line))
            step.procedures.append(self._procedure(ctl, st.line))
            self._loads(st.find("Loads"), step)
            self.model.steps.append(step)
        if self.model.steps and root.find("Loads") is not None and control is None:
            self._loads(root.find("Loads"), self.model.steps[0])
        consts = root.find("Globals")
        consts = consts.find("Constants") if consts is not None else None
        if consts is not None and consts.find("T") is not None:
            try:
                self.model.params["T"] = float(consts.find("T").text)
            except ValueError:
                pass


def build(path: str, options) -> DeckModel:
    return Builder(path, options).run()
