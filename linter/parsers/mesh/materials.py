"""The ``materials:`` section of a material file -> :class:`~linter.model.Material` objects.

Property names and constant names are those of the neutral model (``BLOCK_LAYOUTS``):

* ``elastic``, ``expansion``, ``conductivity``: a mapping of constants with ``type:`` choosing the
  form (``iso`` by default; ``engineering``/``ortho``/``aniso`` for elastic, ``ortho``/``aniso``
  for the others), or a list of such mappings, one per temperature (``T:``);
* ``density``, ``specific_heat``: a number, a mapping ``{rho: ...}``/``{c: ...}`` or a list of them;
* ``hyperelastic``, ``hyperfoam``: a mapping (or list) with ``model:`` naming the form
  (``mooney-rivlin``, ``ogden-2``, ``hyperfoam-1`` ...); omitted D constants are 0 (incompressible);
* ``plastic``: a list of ``[stress, plastic_strain]`` or ``[stress, plastic_strain, T]`` rows, or of
  mappings ``{stress, plastic_strain, T}``;
* ``deformation_plasticity``: a mapping ``{E, nu, sigma0, n, alpha}`` (or a list).

``expansion`` also takes ``reference:`` (the temperature the expansion is measured from).
"""
from __future__ import annotations

from typing import Optional

from yaml.nodes import MappingNode, Node, ScalarNode, SequenceNode

from ...model import BLOCK_LAYOUTS, Material, PropertyBlock, Row
from .yamldoc import Doc

#: property -> forms chosen by ``type:`` (the first is the default)
TYPED = {
    "elastic": ("iso", "engineering", "ortho", "aniso"),
    "expansion": ("iso", "ortho", "aniso"),
    "conductivity": ("iso", "ortho", "aniso"),
    "density": ("iso",),
    "specific_heat": ("iso",),
    "deformation_plasticity": ("iso",),
}
#: property -> forms chosen by ``model:``
MODELLED = {kind: tuple(f for k, f in BLOCK_LAYOUTS if k == kind) for kind in ("hyperelastic", "hyperfoam")}
PROPERTIES = tuple(TYPED) + tuple(MODELLED) + ("plastic",)


def read_materials(doc: Doc, node: Node) -> None:
    items = doc.mapping(node, "materials")
    if items is None:
        return
    model = doc.model
    for name, knode, vnode in items:
        mat = Material(name=name, key=name, loc=doc.loc(knode))
        props = doc.mapping(vnode, f"material {name}", PROPERTIES, material=name) if not _empty(vnode) else []
        for prop, pknode, pvnode in props or ():
            block = _block(doc, name, prop, pknode, pvnode)
            if block is not None:
                mat.blocks.append(block)
        if name in model.materials:
            model.duplicate_materials.append(mat)
        else:
            model.materials[name] = mat


def _empty(node: Node) -> bool:
    return isinstance(node, ScalarNode) and node.tag.endswith(":null")


def _block(doc: Doc, mat: str, prop: str, knode: Node, vnode: Node) -> Optional[PropertyBlock]:
    if prop == "plastic":
        return _plastic(doc, mat, knode, vnode)
    what = f"{prop} of {mat}"
    layouts = TYPED.get(prop)
    if isinstance(vnode, ScalarNode) and layouts is not None:
        layout = BLOCK_LAYOUTS[(prop, "iso")]
        if len(layout) != 1:
            doc.wrong(vnode, what, "a mapping of constants (or a list of them)", mat)
            return None
        value = doc.number(vnode, what, mat)
        if value is None:
            return None
        return PropertyBlock(prop, "iso", [Row((value,), None, doc.loc(vnode))], doc.loc(knode), card=prop)
    rows_nodes = vnode.value if isinstance(vnode, SequenceNode) else [vnode]
    if not rows_nodes:
        doc.wrong(vnode, what, "a mapping of constants or a non-empty list of them", mat)
        return None
    form, options, rows = None, {}, []
    for rnode in rows_nodes:
        got = _row(doc, mat, prop, rnode, form, options)
        if got is None:
            continue
        form, row = got
        rows.append(row)
    if not rows:
        return None
    return PropertyBlock(prop, form, rows, doc.loc(knode), card=prop, options=options)


def _row(doc: Doc, mat: str, prop: str, rnode: Node, form: Optional[str], options: dict):
    """(form, Row) of one row mapping, or None (with an issue)."""
    what = f"{prop} of {mat}"
    selector = "model" if prop in MODELLED else "type"
    forms = MODELLED.get(prop) or TYPED[prop]
    if not isinstance(rnode, MappingNode):
        doc.wrong(rnode, what, "a mapping of constants", mat)
        return None
    pairs = {k.value: (k, v) for k, v in rnode.value if isinstance(k, ScalarNode)}
    chosen = forms[0] if selector == "type" else None
    if selector in pairs:
        chosen = doc.text(pairs[selector][1], f"{what}: {selector}", mat)
        if chosen is None:
            return None
        chosen = chosen.lower()
        if chosen not in forms:
            doc.issue("malformed-data", f"{what}: {selector} {chosen!r} is not one of {', '.join(forms)}",
                      pairs[selector][1], material=mat, field=selector, value=chosen)
            return None
    elif chosen is None:
        doc.issue("malformed-data", f"{what}: {selector}: is required (one of {', '.join(forms)})", rnode,
                  material=mat, field=selector)
        return None
    if form is not None and chosen != form:
        doc.issue("malformed-data", f"{what}: every row must have the same {selector} ({form}), this one is "
                  f"{chosen}", rnode, material=mat, field=selector)
        return None
    layout = BLOCK_LAYOUTS[(prop, chosen)]
    extra = ("reference",) if prop == "expansion" else ()
    items = doc.mapping(rnode, what, (selector, "T") + extra + layout, material=mat) or []
    given = {k: (kn, vn) for k, kn, vn in items}
    values, blanks, missing = [], [], []
    for i, name in enumerate(layout):
        if name in given:
            v = doc.number(given[name][1], f"{what}: {name}", mat)
            if v is None:
                return None
            values.append(v)
        elif prop in MODELLED and name.startswith("D"):
            values.append(0.0)   # an omitted compressibility constant: incompressible
            blanks.append(i)
        else:
            missing.append(name)
    if missing:
        doc.issue("malformed-data", f"{what} ({chosen}) lacks {', '.join(missing)}; the row is ignored", rnode,
                  material=mat, missing=missing)
        return None
    temp = None
    if "T" in given:
        temp = doc.number(given["T"][1], f"{what}: T", mat)
        if temp is None:
            return None
    if "reference" in given and "ZERO" not in options:
        ref = doc.number(given["reference"][1], f"{what}: reference", mat)
        if ref is not None:
            options["ZERO"] = ref
    return chosen, Row(tuple(values), temp, doc.loc(rnode), tuple(blanks))


def _plastic(doc: Doc, mat: str, knode: Node, vnode: Node) -> Optional[PropertyBlock]:
    what = f"plastic of {mat}"
    items = doc.sequence(vnode, what, mat)
    if not items:
        if items is not None:
            doc.wrong(vnode, what, "a non-empty list of [stress, plastic_strain] rows", mat)
        return None
    rows = []
    for rnode in items:
        if isinstance(rnode, SequenceNode):
            parts = rnode.value
            if len(parts) not in (2, 3):
                doc.issue("malformed-data", f"{what}: a row is [stress, plastic_strain] or [stress, "
                          f"plastic_strain, T], not {len(parts)} values", rnode, material=mat)
                continue
            nums = [doc.number(p, f"{what}: {n}", mat) for p, n in zip(parts, ("stress", "plastic_strain", "T"))]
        elif isinstance(rnode, MappingNode):
            got = {k: v for k, _kn, v in doc.mapping(rnode, what, ("stress", "plastic_strain", "T"), mat) or ()}
            if "stress" not in got or "plastic_strain" not in got:
                doc.issue("malformed-data", f"{what}: a row needs stress and plastic_strain", rnode, material=mat)
                continue
            nums = [doc.number(got[n], f"{what}: {n}", mat) for n in ("stress", "plastic_strain", "T") if n in got]
        else:
            doc.wrong(rnode, f"{what}: a row", "[stress, plastic_strain] or a mapping", mat)
            continue
        if any(v is None for v in nums):
            continue
        rows.append(Row((nums[0], nums[1]), nums[2] if len(nums) > 2 else None, doc.loc(rnode)))
    if not rows:
        return None
    return PropertyBlock("plastic", "iso", rows, doc.loc(knode), card="plastic", options={"HARDENING": "ISOTROPIC"})
