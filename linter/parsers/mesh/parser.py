"""Open meshes with a material file: a YAML file (``deckwarden: 1``) plus any mesh meshio reads.

The material file names the mesh (``mesh:``, relative to the file) or the mesh is given on the
command line (``deckwarden check mesh.msh --materials mats.yaml``). The file is composed into YAML
nodes by the guarded loader, so every value keeps its line; unknown keys, wrong types and a mesh that
cannot be read are issues with file and line. Sections: ``materials`` (``materials.py``), ``regions``
(``regions.py``, cells by ``cells.py``), ``analysis`` (``steps.py``); the mesh is read by
``meshfile.py``. The file format is documented in the README and as a JSON Schema
(``linter/data/material-file.schema.json``).
"""
from __future__ import annotations

import os
import re
from typing import Optional

from . import DEFAULT_DIALECT, FORMAT
from ..includes import IncludeTracker
from ...model import DeckModel, Include, Issue, Loc, Unchecked
from ...safe_yaml import YamlRefused, compose_yaml_text, scalar_value
from ..sources import read_deck_bytes

VERSION = 1
TOP_KEYS = ("deckwarden", "units", "mesh", "materials", "regions", "analysis", "title", "description")

_MARK = re.compile(rb"^deckwarden[ \t]*:[ \t]*['\"]?([0-9]+)", re.MULTILINE)


def sniff(head: bytes) -> float:
    """1.0 for a YAML document with a top-level ``deckwarden: <version>`` line; 0 otherwise."""
    m = _MARK.search(head)
    if not m:
        return 0.0
    return 1.0 if int(m.group(1)) == VERSION else 0.9


def parse(path: str, options) -> DeckModel:
    from ...safe_yaml import MAX_YAML_BYTES
    from .yamldoc import Doc

    materials_file: Optional[str] = getattr(options, "materials", None)
    yaml_path = materials_file or path
    display = options.display_path or path
    yaml_display = materials_file or display
    # the element catalogue of this route is meshio's cell types, whatever --dialect says
    model = DeckModel(path=display, format=FORMAT, dialect=DEFAULT_DIALECT)
    model.files.append(yaml_display)
    model.extras["commented_files"] = [yaml_display]   # the mesh is data: no suppression comments in it
    src = read_deck_bytes(yaml_path, MAX_YAML_BYTES)   # SourceError: too large, binary, unreadable
    doc = Doc(yaml_display, model)
    text = src.data.decode("utf-8" if src.encoding != "latin-1" else "latin-1")
    if src.encoding == "latin-1":
        model.issues.append(Issue("encoding", f"{yaml_display} is not UTF-8; read as latin-1", Loc(yaml_display, 1)))
    n_lines = max(1, text.count("\n") + (0 if text.endswith("\n") else 1))
    try:
        root = compose_yaml_text(text, yaml_display)
    except YamlRefused as exc:
        m = re.search(r"line (\d+)", str(exc))
        model.issues.append(Issue("malformed-data", f"the material file cannot be read as YAML: {exc}",
                                  Loc(yaml_display, min(int(m.group(1)), n_lines) if m else 1)))
        return model
    if root is None:
        model.issues.append(Issue("empty-file", f"{yaml_display} is empty", Loc(yaml_display, 1)))
        return model
    items = doc.mapping(root, "the material file", TOP_KEYS)
    if items is None:
        return model
    got = {k: (kn, vn) for k, kn, vn in items}
    _version(doc, got, root)
    if "units" in got:
        units = doc.text(got["units"][1], "units")
        if units:
            model.extras["declared_units"] = units
            model.extras["declared_units_loc"] = doc.loc(got["units"][1])
    from .materials import read_materials
    from .regions import read_regions, section_of
    from .steps import read_analysis

    if "materials" in got:
        read_materials(doc, got["materials"][1])
    regions = read_regions(doc, got["regions"][1]) if "regions" in got else []
    if "analysis" in got:
        read_analysis(doc, got["analysis"][1])
    mesh = _mesh(doc, got, path if materials_file else None, yaml_path, options)
    if mesh is not None:
        from ...catalogue import Catalogue
        from .cells import assign

        cat = Catalogue.load()
        mesh_obj, mesh_loc, mesh_name, fmt, messages = mesh
        summary = assign(doc, mesh_obj, regions, mesh_loc, mesh_name, lambda t: cat.known(t, DEFAULT_DIALECT))
        summary.update({"path": mesh_name, "format": fmt})
        if messages:
            summary["meshio_messages"] = messages[:2000]
        model.extras["mesh"] = summary
        model.sections.extend(s for s in map(section_of, regions) if s is not None)
    elif regions:
        model.unchecked.append(Unchecked("regions (material assignment, elements)", regions[0].loc,
                                         "no mesh was read"))
    return model


def _version(doc, got: dict, root) -> None:
    if "deckwarden" not in got:
        doc.issue("malformed-data", "the material file has no 'deckwarden: 1' line", root, field="deckwarden")
        return
    node = got["deckwarden"][1]
    value = scalar_value(node) if hasattr(node, "style") else None
    if value != VERSION:
        doc.issue("malformed-data", f"material-file version {node.value if hasattr(node, 'value') else '?'} is "
                  f"not supported (this deckwarden reads version {VERSION}); read as version {VERSION}", node,
                  field="deckwarden")


def _mesh(doc, got: dict, given: Optional[str], yaml_path: str, options):
    """(meshio.Mesh, loc, display name, format, messages) or None (issues recorded)."""
    from .meshfile import MeshReadError, read_mesh

    model = doc.model
    if given is not None:
        loc, written, display = Loc(given, 1), given, given
        resolved = given
        model.includes.append(Include(written, resolved, loc, "ok"))
    elif "mesh" in got:
        node = got["mesh"][1]
        loc = doc.loc(node)
        written = doc.text(node, "mesh")
        if written is None:
            return None
        tracker = IncludeTracker(options.include, [os.path.realpath(yaml_path)])
        res = tracker.resolve(written, os.path.dirname(doc.path))
        status = "ok" if res.status == "ok" else res.status
        model.includes.append(Include(written, res.path, loc, status))
        if res.status != "ok":
            code = {"missing": "missing-include", "refused": "include-refused",
                    "directory": "include-directory"}.get(res.status, "include-unreadable")
            text = {"missing": f"mesh file '{written}' not found (looked for {res.path})",
                    "refused": f"mesh '{written}' resolves outside the include root {options.include.root}; "
                               "refused (allow it with --allow-include-outside or include_root)",
                    "directory": f"mesh '{written}' names a directory, not a file"}.get(res.status, res.message)
            model.issues.append(Issue(code, text, loc, data={"include": written}))
            return None
        display = resolved = res.path
    else:
        return None
    try:
        mesh, fmt, messages = read_mesh(resolved, options.max_file_size)
    except MeshReadError as exc:
        if model.includes:
            model.includes[-1].status = "unreadable"
        model.issues.append(Issue(exc.code, exc.message, loc, data={"include": written}))
        return None
    model.files.append(display)
    return mesh, loc, display, fmt, messages
